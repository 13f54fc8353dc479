// Run-time checks of the messages a webview posts to the host (src/shared/protocol.ts WebviewToHost). The webview's
// script is ours, but what it posts is derived from a report built from someone else's spec and data, so the host
// accepts only messages of a known type whose fields have the right types and bounded sizes, and rebuilds each one
// from its known fields (anything else on the object is left behind). A message that fails is dropped by the caller
// with one logged line (the reason below). A new WebviewToHost message needs an entry in CHECKS: the mapped type
// makes the compiler say so. Pure: no vscode, Node or DOM.
import type { ExportFormat, WebviewToHost } from './protocol';

/** Size limits of webview → host messages (characters). An export's data may be a whole report as JSON. */
export const MESSAGE_LIMITS = {
  exportData: 256 * 1024 * 1024,
  exportName: 200,
  modelName: 1000,
  logMessage: 64 * 1024,
  snapshotText: 1024 * 1024,
  revealPath: 64,
  pathKey: 1000,
} as const;

export type MessageCheck = { ok: true; message: WebviewToHost } | { ok: false; reason: string };

type Obj = Record<string, unknown>;
type Checker<T> = (m: Obj) => T | string;

const isInt = (v: unknown, min = 0): v is number => typeof v === 'number' && Number.isSafeInteger(v) && v >= min;
const isStr = (v: unknown, max: number): v is string => typeof v === 'string' && v.length <= max;
const FORMATS: readonly ExportFormat[] = ['png', 'svg', 'csv', 'json'];

// Windows device names are refused as a file name with any extension (common practice)
const DEVICE = /^(con|prn|aux|nul|com[0-9]|lpt[0-9])(\..*)?$/i;

/**
 * Why `name` is not an acceptable suggested export file name for `format`, or null when it is: a plain file name
 * (no folder separators, no "." or ".." and no leading dot, no drive or stream colon, no control characters, no
 * Windows device name, no trailing dot or space), at most MESSAGE_LIMITS.exportName characters, ending in the
 * format's extension (.png, .svg, .csv, .json).
 */
export function exportNameProblem(name: string, format: ExportFormat): string | null {
  if (name.length === 0) return 'the name is empty';
  if (name.length > MESSAGE_LIMITS.exportName) return `the name is longer than ${MESSAGE_LIMITS.exportName} characters`;
  if (/[/\\]/.test(name)) return 'the name contains a folder separator';
  if (name.startsWith('.')) return 'the name starts with a dot';
  if (/[:*?"<>|]/.test(name)) return 'the name contains one of : * ? " < > |';
  if (/[\u0000-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/.test(name)) return 'the name contains a control character';
  if (/[. ]$/.test(name)) return 'the name ends with a dot or a space';
  if (DEVICE.test(name)) return 'the name is a reserved device name';
  if (!name.toLowerCase().endsWith('.' + format)) return `the name does not end in .${format}`;
  return null;
}

/** A safe file name from text that may hold anything (e.g. a spec's model name): unsafe characters become "_". */
export function plainFileName(stem: string, ext: string): string {
  let s = stem.replace(/[/\\:*?"<>|\u0000-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/g, '_').replace(/^[.\s]+/, '').slice(0, MESSAGE_LIMITS.exportName - ext.length - 1);
  if (!s || DEVICE.test(s)) s = 'curvewright-' + s;
  return `${s}.${ext}`;
}

const CHECKS: { [K in WebviewToHost['type']]: Checker<Extract<WebviewToHost, { type: K }>> } = {
  ready: m => (isInt(m.version) ? { type: 'ready', version: m.version } : 'version is not a whole number'),
  reveal: m => {
    const p = m.path;
    if (!Array.isArray(p) || p.length > MESSAGE_LIMITS.revealPath) return `path is not a list of at most ${MESSAGE_LIMITS.revealPath} keys`;
    for (const k of p) if (!isStr(k, MESSAGE_LIMITS.pathKey) && !isInt(k)) return 'path holds something other than keys and indices';
    if (m.line !== undefined && !isInt(m.line, 1)) return 'line is not a line number (1, 2, …)';
    if (m.column !== undefined && !isInt(m.column, 1)) return 'column is not a column number (1, 2, …)';
    return {
      type: 'reveal', path: [...(p as (string | number)[])],
      ...(m.line !== undefined ? { line: m.line as number } : {}),
      ...(m.column !== undefined ? { column: m.column as number } : {}),
    };
  },
  revealRow: m => (isInt(m.row, 1) ? { type: 'revealRow', row: m.row } : 'row is not a data row number (1, 2, …)'),
  export: m => {
    if (!isInt(m.id)) return 'id is not a whole number';
    if (!FORMATS.includes(m.format as ExportFormat)) return `format is not one of ${FORMATS.join(', ')}`;
    const format = m.format as ExportFormat;
    if (m.data !== undefined && !isStr(m.data, MESSAGE_LIMITS.exportData)) return 'data is not text of a bounded size';
    if (m.model !== undefined && !isStr(m.model, MESSAGE_LIMITS.modelName)) return 'model is not a model name';
    if (m.suggestedName !== undefined) {
      if (typeof m.suggestedName !== 'string') return 'suggestedName is not text';
      const why = exportNameProblem(m.suggestedName, format);
      if (why) return `suggestedName is not a plain .${format} file name: ${why}`;
    }
    return {
      type: 'export', id: m.id, format,
      ...(m.data !== undefined ? { data: m.data as string } : {}),
      ...(m.model !== undefined ? { model: m.model as string } : {}),
      ...(m.suggestedName !== undefined ? { suggestedName: m.suggestedName as string } : {}),
    };
  },
  refit: () => ({ type: 'refit' }),
  log: m => {
    if (m.level !== 'info' && m.level !== 'warn' && m.level !== 'error') return 'level is not info, warn or error';
    if (!isStr(m.message, MESSAGE_LIMITS.logMessage)) return `message is not text of at most ${MESSAGE_LIMITS.logMessage} characters`;
    return { type: 'log', level: m.level, message: m.message };
  },
  snapshot: m => {
    if (!isInt(m.inReplyTo)) return 'inReplyTo is not a whole number';
    if (m.version !== null && !isInt(m.version)) return 'version is neither null nor a whole number';
    if (!isInt(m.canvases)) return 'canvases is not a whole number';
    if (!isStr(m.text, MESSAGE_LIMITS.snapshotText)) return 'text is not text of a bounded size';
    return { type: 'snapshot', inReplyTo: m.inReplyTo, version: m.version as number | null, canvases: m.canvases, text: m.text };
  },
};

/** Check a message posted by a webview; on success a fresh copy holding only the known fields. */
export function checkWebviewMessage(raw: unknown): MessageCheck {
  if (!raw || typeof raw !== 'object' || Array.isArray(raw)) return { ok: false, reason: 'not an object' };
  const m = raw as Obj;
  const type = m.type;
  if (typeof type !== 'string' || !Object.prototype.hasOwnProperty.call(CHECKS, type)) {
    const shown = typeof type === 'string' ? JSON.stringify(type.slice(0, 40)) : typeof type;
    return { ok: false, reason: `unknown message type ${shown}` };
  }
  const out = (CHECKS[type as WebviewToHost['type']] as Checker<WebviewToHost>)(m);
  return typeof out === 'string' ? { ok: false, reason: `${type}: ${out}` } : { ok: true, message: out };
}

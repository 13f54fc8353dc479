// Paths in what the host posts to the panel: relative to the workspace, never this machine's absolute paths (people
// share screenshots of the panel). Pure string work, no vscode import, so it is unit-tested directly.
import * as path from 'path';

/** An absolute POSIX path of two or more segments, or a Windows drive path, inside running text. */
const ABSOLUTE = /(?<![\w.~/\\:])(?:\/(?:[^\s/'"`()<>,;]+\/)+[^\s/'"`()<>,;]*|[A-Za-z]:\\(?:[^\s\\'"`()<>,;]+\\)*[^\s\\'"`()<>,;]*)/g;

/**
 * `text` with every path under one of `roots` written relative to it (forward slashes) and any other absolute path
 * shortened to …/its-file-name; file:// URIs are treated like their paths.
 */
export function relativeText(text: string, roots: string[]): string {
  if (!text.includes('/') && !text.includes('\\')) return text;
  let s = text.replace(/file:\/\/(\/[^\s'"`()<>,;]*)/g, (_m, p: string) => decodeURIComponentSafe(p));
  for (const root of [...roots].sort((a, b) => b.length - a.length)) {
    for (const r of variants(root)) {
      s = s.split(r + '/').join('').split(r + '\\').join('');
      if (s.endsWith(r)) s = s.slice(0, -r.length) + '.';
    }
  }
  return s.replace(ABSOLUTE, m => `\u2026/${path.basename(m.replace(/\\/g, '/')) || m}`);
}

function variants(root: string): string[] {
  const trimmed = root.replace(/[\\/]+$/, '');
  const fwd = trimmed.replace(/\\/g, '/');
  return [...new Set([trimmed, fwd])].filter(r => r.length > 1);
}

function decodeURIComponentSafe(s: string): string {
  try { return decodeURIComponent(s); } catch { return s; }
}

/**
 * A copy of `value` with relativeText applied to every string (keys stay). Unchanged parts are shared, typed arrays
 * are kept as they are (points of large reports), so a report without paths is returned as the same object.
 */
export function relativePaths<T>(value: T, roots: string[]): T {
  const walk = (v: unknown): unknown => {
    if (typeof v === 'string') return relativeText(v, roots);
    if (v === null || typeof v !== 'object' || ArrayBuffer.isView(v)) return v;
    if (Array.isArray(v)) {
      let out: unknown[] | null = null;
      for (let i = 0; i < v.length; i++) {
        const x = v[i];
        if (typeof x === 'number') continue;
        const y = walk(x);
        if (y !== x) (out ??= v.slice())[i] = y;
      }
      return out ?? v;
    }
    let out: Record<string, unknown> | null = null;
    for (const [k, x] of Object.entries(v as Record<string, unknown>)) {
      const y = walk(x);
      if (y !== x) (out ??= { ...(v as Record<string, unknown>) })[k] = y;
    }
    return out ?? v;
  };
  return walk(value) as T;
}

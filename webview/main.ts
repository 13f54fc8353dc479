// Entry of the browser code (bundled to dist/webview.js as an IIFE). Two modes:
// - inside a VS Code webview (acquireVsCodeApi exists): Ready handshake, report messages, state persistence,
//   exports and reveals sent to the host (protocol in src/shared/protocol.ts);
// - a standalone HTML report: reads the reports embedded in <script type="application/json" id="curvewright-data">,
//   draws one section per spec, and exports by download links in the page.
import type { FileLocation, FitReport, JsonPath, RunResult } from '../src/engine/report';
import type { ExportRequest, HostToWebview, WebviewState, WebviewToHost } from '../src/shared/protocol';
import { PROTOCOL_VERSION } from '../src/shared/protocol';
import { renderReport, type ExportPayload, type ReportView, type ViewState } from './render';
import { readTheme, watchTheme } from './theme';
import { DATA_ELEMENT_ID, ROOT_ID } from '../src/shared/ids';

interface VsCodeApi {
  postMessage(msg: WebviewToHost): void;
  getState(): unknown;
  setState(state: unknown): void;
}
declare const acquireVsCodeApi: undefined | (() => VsCodeApi);

/** What the panel persists (the protocol's WebviewState plus the view's choices and the last report). */
export type PanelState = WebviewState & Partial<ViewState> & { specName?: string; version?: number; dirty?: boolean; report?: RunResult; lastGood?: FitReport };

/** Largest number of points kept in the persisted state; above it the points are dropped (the host refits anyway). */
const MAX_PERSISTED_POINTS = 20000;

function plain(result: RunResult): RunResult {
  // Typed arrays (points may arrive as such) do not survive setState's JSON; make plain arrays, and drop huge point sets.
  let total = 0;
  if ('models' in result) for (const m of result.models) total += m.points?.row.length ?? 0;
  const drop = total > MAX_PERSISTED_POINTS;
  return JSON.parse(JSON.stringify(result, (k, v) => {
    if (drop && k === 'points') return undefined;
    if (ArrayBuffer.isView(v) && !(v instanceof DataView)) return Array.from(v as unknown as ArrayLike<number>);
    return v;
  })) as RunResult;
}

function rootElement(): HTMLElement {
  let root = document.getElementById(ROOT_ID);
  if (!root) {
    root = document.createElement('div');
    root.id = ROOT_ID;
    document.body.append(root);
  }
  return root;
}

function describeError(e: unknown): string {
  return e instanceof Error ? e.message : String(e);
}

function showFailure(root: HTMLElement, message: string): void {
  const box = document.createElement('div');
  box.className = 'cw-error';
  const t = document.createElement('div');
  t.className = 'cw-error-title';
  t.textContent = '\u2716 The report could not be drawn';
  const p = document.createElement('p');
  p.className = 'cw-error-msg';
  p.textContent = message;
  box.append(t, p);
  root.replaceChildren(box);
}

// ------------------------------------------------------------------ VS Code panel

function startPanel(vscode: VsCodeApi): void {
  const root = rootElement();
  let theme = readTheme();
  let state: PanelState = (vscode.getState() as PanelState | undefined) ?? { specUri: '' };
  let view: ReportView | null = null;
  let shownVersion: number | null = null;
  let nextId = 1;

  const save = () => vscode.setState(state);
  const post = (m: WebviewToHost) => vscode.postMessage(m);
  const log = (level: 'info' | 'warn' | 'error', message: string) => post({ type: 'log', level, message });

  const draw = (report: RunResult) => {
    try {
      const first = !view;
      view = renderReport(root, report, {
        theme,
        selected: state.selectedModel ?? state.selected,
        logX: state.logX,
        logY: state.logY,
        residual: state.residual,
        onReveal: (path: JsonPath, loc?: FileLocation) => post(loc?.line !== undefined ? { type: 'reveal', path, line: loc.line, ...(typeof loc.column === 'number' ? { column: loc.column } : {}) } : { type: 'reveal', path }),
        onRevealRow: (row: number) => post({ type: 'revealRow', row }),
        onExport: (p: ExportPayload) => {
          const req: ExportRequest = { type: 'export', id: nextId++, format: p.format, data: p.data, suggestedName: p.suggestedName };
          if (p.model) req.model = p.model;
          post(req);
        },
        onRefit: () => post({ type: 'refit' }),
        readouts: true,
        note: state.dirty ? 'unsaved edits' : undefined,
        specLabel: state.specName,
        onStateChange: (s: ViewState) => {
          state = { ...state, ...s, selectedModel: s.selected };
          save();
        },
      });
      if (first) drawn.push(view);
    } catch (e) {
      log('error', `webview render failed: ${describeError(e)}`);
      showFailure(root, describeError(e));
    }
  };

  window.addEventListener('message', (ev: MessageEvent) => {
    const msg = ev.data as HostToWebview | undefined;
    if (!msg || typeof msg !== 'object') return;
    switch (msg.type) {
      case 'report': {
        if (shownVersion !== null && msg.specUri === state.specUri && msg.version < shownVersion) return;
        shownVersion = msg.version;
        const isFit = !('error' in msg.report);
        // a broken spec keeps the last good result (dimmed) across a reload too; a good one replaces it
        const lastGood = isFit ? undefined : state.lastGood ?? (view?.lastGood() ? (plain(view.lastGood()!) as FitReport) : undefined);
        state = { ...state, specUri: msg.specUri, specName: msg.specName, version: msg.version, dirty: !!msg.dirty, report: plain(msg.report), lastGood };
        save();
        draw(msg.report);
        view?.setBusy(false);
        break;
      }
      case 'busy':
        view?.setBusy(msg.busy, msg.message);
        break;
      case 'theme':
        // The body classes change too (the MutationObserver also catches it); re-read after the styles apply.
        requestAnimationFrame(() => { theme = readTheme(); view?.setTheme(theme); });
        break;
      case 'exported':
        if (msg.error) log('warn', `export failed: ${msg.error}`);
        break;
      case 'snapshot?': {
        const text = (root.innerText || root.textContent || '').replace(/\s+\n/g, '\n').trim();
        post({ type: 'snapshot', inReplyTo: msg.id, version: shownVersion, canvases: root.querySelectorAll('canvas').length, text: text.slice(0, 20000) });
        break;
      }
    }
  });
  watchTheme(t => { theme = t; view?.setTheme(t); });

  // Draw what the panel showed before a reload while the host refits.
  if (state.lastGood && state.report && 'error' in state.report) { draw(state.lastGood); (view as ReportView | null)?.update(state.report); }
  else if (state.report) draw(state.report);
  post({ type: 'ready', version: PROTOCOL_VERSION });
}

// ------------------------------------------------------------------ standalone HTML report

function download(name: string, data: string, mime: string): void {
  const a = document.createElement('a');
  a.download = name;
  let url: string;
  if (data.startsWith('data:')) url = data;
  else url = URL.createObjectURL(new Blob([data], { type: mime }));
  a.href = url;
  a.rel = 'noopener';
  document.body.append(a);
  a.click();
  a.remove();
  if (!data.startsWith('data:')) setTimeout(() => URL.revokeObjectURL(url), 10000);
}

function startStandalone(): void {
  const root = rootElement();
  const el = document.getElementById(DATA_ELEMENT_ID);
  let reports: RunResult[] = [];
  try {
    const parsed = JSON.parse(el?.textContent || '[]') as unknown;
    reports = Array.isArray(parsed) ? (parsed as RunResult[]) : [parsed as RunResult];
  } catch (e) {
    showFailure(root, `The embedded report data could not be read: ${describeError(e)}`);
    return;
  }
  let theme = readTheme();
  const views: ReportView[] = [];
  const sections: HTMLElement[] = [];
  const mimes = { png: 'image/png', svg: 'image/svg+xml', csv: 'text/csv', json: 'application/json' } as const;
  if (reports.length > 1) {
    const nav = document.createElement('nav');
    nav.className = 'cw-toc';
    const h = document.createElement('strong');
    h.textContent = `${reports.length} specs: `;
    nav.append(h);
    reports.forEach((r, i) => {
      const a = document.createElement('a');
      a.href = `#cw-spec-${i + 1}`;
      a.textContent = ('title' in r && r.title) || r.spec;
      nav.append(a);
    });
    sections.push(nav);
  }
  const holders = reports.map((_r, i) => {
    const s = document.createElement('section');
    s.className = 'cw-spec';
    s.id = `cw-spec-${i + 1}`;
    sections.push(s);
    return s;
  });
  root.replaceChildren(...sections);
  reports.forEach((r, i) => {
    try {
      const v = renderReport(holders[i]!, r, {
        theme,
        onExport: p => download(p.suggestedName, p.data, mimes[p.format]),
      });
      views.push(v);
      drawn.push(v);
    } catch (e) {
      showFailure(holders[i]!, describeError(e));
    }
  });
  if (reports.length === 0) showFailure(root, 'This report contains no results.');
  watchTheme(t => { theme = t; for (const v of views) v.setTheme(t); });
}

// ------------------------------------------------------------------ start

/** The views drawn on this page, by root element; a handle for tests and for debugging in the webview devtools. */
const drawn: ReportView[] = [];
Object.defineProperty(window, 'curvewrightViews', { value: drawn, enumerable: false });

function start(): void {
  if (typeof acquireVsCodeApi === 'function') startPanel(acquireVsCodeApi());
  else startStandalone();
}

if (document.readyState === 'loading') document.addEventListener('DOMContentLoaded', start);
else start();

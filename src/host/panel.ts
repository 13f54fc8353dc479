// The fit panel: one WebviewPanel per spec, strict CSP with a nonce, loads dist/webview.js, posts the report after the
// webview's 'ready' and again on every refit (in place), handles 'reveal' and 'export', restores after a reload
// (WebviewPanelSerializer) and tells the webview when the colour theme changes.
import * as vscode from 'vscode';
import * as path from 'path';
import * as fs from 'fs';
import * as crypto from 'crypto';
import { Disposable } from './disposable';
import type { FitEvent, FitService } from './fitService';
import { locateInText } from './jsonText';
import { log } from './log';
import { dataFileOf } from './diagnostics';
import type { ExportRequest, HostToWebview, SnapshotMessage, ThemeKind, WebviewState, WebviewToHost } from '../shared/protocol';
import { PROTOCOL_VERSION } from '../shared/protocol';
import { checkWebviewMessage, plainFileName } from '../shared/protocolCheck';
import { panelHtml } from '../shared/html';
import type { FitReport, RunResult } from '../engine/report';
import { isErrorReport } from '../engine/report';
import { relativePaths } from './panelPaths';

export const PANEL_VIEW_TYPE = 'curvewright.panel';

interface PanelEntry {
  specUri: vscode.Uri;
  panel: vscode.WebviewPanel;
  ready: boolean;
  /** version of the report last posted, or null */
  posted: number | null;
  readyCount: number;
  snapshots: Map<number, (s: SnapshotMessage) => void>;
  disposables: vscode.Disposable[];
  /** the last messages posted to the webview, newest last (for tests: no absolute path may be among them) */
  sent: HostToWebview[];
}

export interface PanelState { open: boolean; ready: boolean; postedVersion: number | null; readyCount: number; visible: boolean }

export class PanelController extends Disposable implements vscode.WebviewPanelSerializer<WebviewState> {
  private readonly panels = new Map<string, PanelEntry>();
  private nextId = 1;
  private readonly _onDidClosePanel = this._register(new vscode.EventEmitter<vscode.Uri>());
  /** a spec's panel was closed */
  readonly onDidClosePanel = this._onDidClosePanel.event;

  constructor(private readonly extensionUri: vscode.Uri, private readonly fits: FitService) {
    super();
    this._register(fits.onDidReport(ev => this.onReport(ev)));
    this._register(fits.onDidChangeState(e => {
      const p = this.panels.get(e.uri.toString());
      if (p?.ready) this.post(p, { type: 'busy', busy: e.state === 'fitting', message: e.message });
    }));
    this._register(vscode.window.onDidChangeActiveColorTheme(t => {
      for (const p of this.panels.values()) if (p.ready) this.post(p, { type: 'theme', kind: themeKind(t.kind) });
    }));
    this._register(vscode.window.registerWebviewPanelSerializer(PANEL_VIEW_TYPE, this));
  }

  /** Show (or create) the panel of a spec and make sure it has a fit. */
  show(specUri: vscode.Uri, column = vscode.ViewColumn.Beside, preserveFocus = true): vscode.WebviewPanel {
    const key = specUri.toString();
    const existing = this.panels.get(key);
    if (existing) { existing.panel.reveal(undefined, preserveFocus); return existing.panel; }
    const panel = vscode.window.createWebviewPanel(PANEL_VIEW_TYPE, title(specUri), { viewColumn: column, preserveFocus }, this.options());
    this.adopt(panel, specUri);
    return panel;
  }

  async deserializeWebviewPanel(panel: vscode.WebviewPanel, state: WebviewState | undefined): Promise<void> {
    if (!state?.specUri) { panel.dispose(); return; }
    const uri = specFromKey(state.specUri);
    if (!uri) { panel.dispose(); return; }
    try { await vscode.workspace.fs.stat(uri); } catch { panel.dispose(); return; }
    if (this.panels.has(uri.toString())) { panel.dispose(); return; }
    panel.webview.options = this.options();
    this.adopt(panel, uri);
  }

  state(specUri: vscode.Uri): PanelState {
    const p = this.panels.get(specUri.toString());
    return p ? { open: true, ready: p.ready, postedVersion: p.posted, readyCount: p.readyCount, visible: p.panel.visible }
      : { open: false, ready: false, postedVersion: null, readyCount: 0, visible: false };
  }

  /** Ask the webview what it shows (for tests). Rejects after `timeoutMs`. */
  snapshot(specUri: vscode.Uri, timeoutMs = 5000): Promise<SnapshotMessage> {
    const p = this.panels.get(specUri.toString());
    if (!p) return Promise.reject(new Error('no panel for ' + specUri.toString()));
    const id = this.nextId++;
    return new Promise((resolve, reject) => {
      const t = setTimeout(() => { p.snapshots.delete(id); reject(new Error('the webview did not answer a snapshot request')); }, timeoutMs);
      p.snapshots.set(id, s => { clearTimeout(t); resolve(s); });
      this.post(p, { type: 'snapshot?', id });
    });
  }

  close(specUri: vscode.Uri): void { this.panels.get(specUri.toString())?.panel.dispose(); }

  get openSpecs(): vscode.Uri[] { return [...this.panels.values()].map(p => p.specUri); }

  private options(): vscode.WebviewPanelOptions & vscode.WebviewOptions {
    return {
      enableScripts: true,
      retainContextWhenHidden: false,
      enableFindWidget: true,
      localResourceRoots: [vscode.Uri.joinPath(this.extensionUri, 'dist'), vscode.Uri.joinPath(this.extensionUri, 'media')],
    };
  }

  private adopt(panel: vscode.WebviewPanel, specUri: vscode.Uri): void {
    const entry: PanelEntry = { specUri, panel, ready: false, posted: null, readyCount: 0, snapshots: new Map(), disposables: [], sent: [] };
    this.panels.set(specUri.toString(), entry);
    const icon = vscode.Uri.joinPath(this.extensionUri, 'media', 'icon.svg');
    if (fs.existsSync(icon.fsPath)) panel.iconPath = icon;
    panel.webview.html = this.html(panel.webview);
    entry.disposables.push(
      panel.webview.onDidReceiveMessage((raw: unknown) => {
        // every message is checked at run time (type, fields, sizes, export name); a malformed one is dropped
        const c = checkWebviewMessage(raw);
        if (c.ok) return this.onMessage(entry, c.message);
        log.warn(`dropped a message from the panel of ${path.basename(specUri.fsPath)}: ${c.reason}`);
      }),
      panel.onDidDispose(() => {
        entry.disposables.forEach(d => d.dispose());
        if (this.panels.get(specUri.toString()) === entry) this.panels.delete(specUri.toString());
        this._onDidClosePanel.fire(specUri);
      }),
    );
    if (!this.fits.last(specUri)) this.fits.schedule(specUri, 0);
  }

  /** One template with the standalone report (src/shared/html.ts): nonce CSP, no inline style or script without it. */
  private html(webview: vscode.Webview): string {
    const uri = (...p: string[]) => webview.asWebviewUri(vscode.Uri.joinPath(this.extensionUri, ...p)).toString();
    return panelHtml({
      scriptUri: uri('dist', 'webview.js'),
      cssUri: uri('media', 'panel.css'),
      nonce: crypto.randomBytes(16).toString('base64'),
      cspSource: webview.cspSource,
    });
  }

  /** Every message goes through here: paths in it become relative to the workspace (relativePaths). */
  private post(p: PanelEntry, m: HostToWebview): void {
    const folders = (vscode.workspace.workspaceFolders ?? []).map(f => f.uri.fsPath);
    const roots = folders.length ? folders : [path.dirname(p.specUri.fsPath)]; // no folder open: the spec's own
    const safe = relativePaths(m, roots);
    p.sent.push(safe);
    if (p.sent.length > 20) p.sent.shift();
    void p.panel.webview.postMessage(safe).then(undefined, e => log.warn(`could not post to the panel: ${e}`));
  }

  /** The last messages posted to a spec's panel (for tests). */
  sentMessages(specUri: vscode.Uri): HostToWebview[] {
    return [...(this.panels.get(specUri.toString())?.sent ?? [])];
  }

  private postReport(p: PanelEntry, ev: FitEvent): void {
    this.post(p, { type: 'report', report: ev.result, specUri: specKey(ev.uri), specName: vscode.workspace.asRelativePath(ev.uri), version: ev.version, dirty: ev.dirty });
    p.posted = ev.version;
  }

  private onReport(ev: FitEvent): void {
    const p = this.panels.get(ev.uri.toString());
    if (p?.ready) this.postReport(p, ev);
  }

  private async onMessage(p: PanelEntry, m: WebviewToHost): Promise<void> {
    switch (m.type) {
      case 'ready': {
        if (m.version !== PROTOCOL_VERSION) log.warn(`the panel speaks protocol ${m.version}, the host ${PROTOCOL_VERSION}`);
        p.ready = true;
        p.readyCount++;
        this.post(p, { type: 'theme', kind: themeKind(vscode.window.activeColorTheme.kind) });
        const last = this.fits.last(p.specUri);
        if (last) this.postReport(p, last);
        else this.post(p, { type: 'busy', busy: true, message: 'fitting' });
        return;
      }
      case 'reveal': return this.reveal(p.specUri, m.path, m.line, m.column);
      case 'revealRow': return this.revealRow(p.specUri, m.row);
      case 'export': return this.export(p, m);
      case 'refit': this.fits.schedule(p.specUri, 0); return;
      case 'log': log[m.level === 'warn' ? 'warn' : m.level === 'error' ? 'error' : 'info'](`panel: ${m.message}`); return;
      case 'snapshot': { const cb = p.snapshots.get(m.inReplyTo); p.snapshots.delete(m.inReplyTo); cb?.(m); return; }
    }
  }

  /** Select the JSON path's range in the spec editor (opening it beside the panel if needed). */
  async reveal(specUri: vscode.Uri, jsonPath: (string | number)[], line?: number, column?: number): Promise<void> {
    const doc = await vscode.workspace.openTextDocument(specUri);
    // a place by line (a JSON syntax error) when the path does not name one
    const atLine = line !== undefined && jsonPath.length === 0 && line >= 1 && line <= doc.lineCount
      ? { offset: doc.offsetAt(new vscode.Position(line - 1, Math.max(0, (column ?? 1) - 1))), length: 1 } : undefined;
    const spot = atLine ?? locateInText(doc.getText(), jsonPath);
    const visible = vscode.window.visibleTextEditors.find(e => e.document.uri.toString() === specUri.toString());
    const editor = await vscode.window.showTextDocument(doc, { viewColumn: visible?.viewColumn ?? vscode.ViewColumn.One, preserveFocus: false });
    if (!spot) return;
    const range = new vscode.Range(doc.positionAt(spot.offset), doc.positionAt(spot.offset + spot.length));
    editor.selection = new vscode.Selection(range.start, range.end);
    editor.revealRange(range, vscode.TextEditorRevealType.InCenterIfOutsideViewport);
  }

  private async revealRow(specUri: vscode.Uri, row: number): Promise<void> {
    const last = this.fits.last(specUri)?.result;
    const file = last && dataFileOf(last, path.dirname(specUri.fsPath));
    if (!file) return;
    const doc = await vscode.workspace.openTextDocument(vscode.Uri.file(file));
    const line = Math.min(doc.lineCount - 1, Math.max(0, row)); // header is line 0, data row r is line r (no blank lines)
    const editor = await vscode.window.showTextDocument(doc, { viewColumn: vscode.ViewColumn.One });
    editor.selection = new vscode.Selection(line, 0, line, doc.lineAt(line).text.length);
    editor.revealRange(editor.selection, vscode.TextEditorRevealType.InCenter);
  }

  private async export(p: PanelEntry, m: ExportRequest): Promise<void> {
    const last = this.fits.last(p.specUri)?.result;
    const base = path.basename(p.specUri.fsPath).replace(/\.fitspec\.json$/i, '');
    const name = m.suggestedName || plainFileName(`${base}${m.model ? '-' + m.model : ''}${m.format === 'json' ? '.fitresult' : ''}`, m.format);
    try {
      let bytes: Uint8Array;
      if (m.format === 'svg' && !/^<svg[\s>]/.test(m.data ?? '')) throw new Error('the panel sent no SVG image');
      if (m.format === 'png') {
        const match = /^data:image\/png;base64,(.*)$/s.exec(m.data ?? '');
        if (!match) throw new Error('the panel sent no PNG image');
        bytes = Buffer.from(match[1], 'base64');
      } else if (m.data !== undefined) bytes = Buffer.from(m.data, 'utf8');
      else if (!last) throw new Error('there is no fit to export yet');
      else bytes = Buffer.from(m.format === 'csv' ? resultsCsv(last, m.model) : JSON.stringify(last, plainArrays, 2) + '\n', 'utf8');
      const filters: Record<string, string[]> = m.format === 'png' ? { 'PNG image': ['png'] } : m.format === 'svg' ? { 'SVG image': ['svg'] } : m.format === 'csv' ? { CSV: ['csv'] } : { JSON: ['json'] };
      const target = await vscode.window.showSaveDialog({ defaultUri: vscode.Uri.joinPath(p.specUri, '..', name), filters, title: 'Export from Curvewright' });
      if (!target) { this.post(p, { type: 'exported', inReplyTo: m.id, path: null }); return; }
      if (isDataFile(target, last, p.specUri)) throw new Error('that is the data file of this spec; Curvewright never overwrites data files — choose another name');
      await vscode.workspace.fs.writeFile(target, bytes);
      log.info(`exported ${m.format} to ${target.fsPath}`);
      this.post(p, { type: 'exported', inReplyTo: m.id, path: vscode.workspace.asRelativePath(target) });
    } catch (e) {
      const msg = (e as Error).message;
      void vscode.window.showErrorMessage(`Curvewright could not export: ${msg}`);
      this.post(p, { type: 'exported', inReplyTo: m.id, path: null, error: msg });
    }
  }

  override dispose(): void {
    for (const p of [...this.panels.values()]) p.panel.dispose();
    super.dispose();
  }
}

function isDataFile(target: vscode.Uri, r: RunResult | undefined, specUri: vscode.Uri): boolean {
  const f = r && dataFileOf(r, path.dirname(specUri.fsPath));
  return (!!f && path.normalize(f) === path.normalize(target.fsPath)) || target.fsPath.toLowerCase().endsWith('.fitspec.json');
}

/** What the webview keeps to find its spec after a reload: the path relative to the workspace (with the folder's
 *  name first in a multi-root workspace), so that no absolute path reaches the panel. */
export function specKey(uri: vscode.Uri): string {
  return vscode.workspace.asRelativePath(uri);
}

/** The spec a key names: a workspace-relative path (specKey) or, from panels saved by earlier versions, a URI. */
export function specFromKey(key: string): vscode.Uri | undefined {
  if (/^[a-z][\w+.-]*:\/\//i.test(key)) return vscode.Uri.parse(key);
  const folders = vscode.workspace.workspaceFolders ?? [];
  if (path.isAbsolute(key)) return vscode.Uri.file(key);
  if (folders.length > 1) {
    const f = folders.find(x => key.startsWith(x.name + '/'));
    if (f) return vscode.Uri.joinPath(f.uri, key.slice(f.name.length + 1));
  }
  return folders[0] ? vscode.Uri.joinPath(folders[0].uri, key) : undefined;
}

function title(specUri: vscode.Uri): string {
  return `Fit: ${path.basename(specUri.fsPath).replace(/\.fitspec\.json$/i, '')}`;
}

export function themeKind(k: vscode.ColorThemeKind): ThemeKind {
  switch (k) {
    case vscode.ColorThemeKind.Light: return 'light';
    case vscode.ColorThemeKind.HighContrast: return 'high-contrast';
    case vscode.ColorThemeKind.HighContrastLight: return 'high-contrast-light';
    default: return 'dark';
  }
}

/** One row per parameter of each model (or of `model`): the results as a table. */
export function resultsCsv(r: RunResult, model?: string): string {
  if (isErrorReport(r)) return `error\n${csvCell(r.error.message)}\n`;
  const rows = ['model,status,parameter,value,se,ci_low,ci_high,p,fixed,r2,aicc'];
  for (const m of (r as FitReport).models) {
    if (model && m.name !== model) continue;
    for (const name of m.paramOrder) {
      const p = m.params[name];
      rows.push([m.name, m.status, name, p.value, p.se, p.ci?.[0], p.ci?.[1], p.p, p.fixed, m.stats.r2, m.stats.aicc].map(csvCell).join(','));
    }
  }
  return rows.join('\n') + '\n';
}

/** JSON replacer: typed arrays (points of large reports) as plain arrays. */
export function plainArrays(_k: string, v: unknown): unknown {
  return ArrayBuffer.isView(v) && !(v instanceof DataView) ? Array.from(v as unknown as ArrayLike<number>) : v;
}

function csvCell(v: unknown): string {
  if (v === null || v === undefined) return '';
  // spreadsheet formula injection (common practice): a text cell starting with = + - @ tab or CR gets a leading '
  // so that a spreadsheet shows it as text; numbers (also negative ones) stay numbers
  const s = typeof v === 'number' ? String(v) : /^[=+\-@\t\r]/.test(String(v)) ? `'${String(v)}` : String(v);
  return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

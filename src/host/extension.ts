// Extension entry: wires the worker pool, fit service, diagnostics, panel, status bar and edit help together.
// Everything is registered in context.subscriptions and disposed on deactivate. Returns a small API for tests.
import * as vscode from 'vscode';
import { initLog, log } from './log';
import { settings } from './settings';
import { WorkerPool } from './workerPool';
import { OwnWrites } from './ownWrites';
import { FitService, boundaryFiles, isSpecUri, type FitEvent } from './fitService';
import { OutsideConsent, type OutsideVerdict } from './outsideConsent';
import type { OutsidePermission } from './trust';
import { DiagnosticsController } from './diagnostics';
import { FitStatusBar } from './statusBar';
import { PanelController, type PanelState } from './panel';
import { FitCodeActions } from './codeActions';
import { ModelLenses, ParamHover } from './editHelp';
import { FitCsvCommand, type FitCsvResult } from './fitCsvCommand';
import type { RunResult } from '../engine/report';
import type { HostToWebview, SnapshotMessage } from '../shared/protocol';

export interface CurvewrightApi {
  /** the last run result of a spec, if any */
  getLastReport(spec: vscode.Uri | string): RunResult | undefined;
  /** resolves with the next result of a spec whose version is above `afterVersion` (default: any result) */
  waitForReport(spec: vscode.Uri | string, opts?: { afterVersion?: number; timeoutMs?: number }): Promise<{ result: RunResult; version: number; dirty: boolean }>;
  /** fit a spec now */
  refit(spec: vscode.Uri | string): Promise<{ result: RunResult; version: number } | undefined>;
  panelState(spec: vscode.Uri | string): PanelState;
  /** ask the webview what it shows */
  panelSnapshot(spec: vscode.Uri | string): Promise<SnapshotMessage>;
  /** the last messages the host posted to a spec's panel (as posted: paths already relative) */
  panelMessages(spec: vscode.Uri | string): HostToWebview[];
  statusText(): string;
  poolStats(): { started: number; terminated: number; runs: number; cancelled: number; size: number };
  fitCsv(options: import('./fitCsvCommand').FitCsvOptions): Promise<FitCsvResult[]>;
  /** what the fit service decides for a spec's files outside the workspace (the function it calls before each run);
   *  `trusted` defaults to vscode.workspace.isTrusted */
  outsideVerdict(spec: vscode.Uri | string, opts?: { trusted?: boolean }): Promise<OutsideVerdict>;
  /** the remembered answer to the outside-the-workspace question (workspace state) */
  outsidePermission(): OutsidePermission | undefined;
  /** set the remembered answer, as the modal question's buttons do (tests cannot press a modal's buttons) */
  setOutsidePermission(p: OutsidePermission | undefined): Promise<void>;
}

const SPEC_SELECTOR: vscode.DocumentSelector = [{ scheme: 'file', pattern: '**/*.fitspec.json' }];

export function activate(context: vscode.ExtensionContext): CurvewrightApi {
  const channel = initLog();
  context.subscriptions.push(channel);
  log.info(`Curvewright activated (workspace trusted: ${vscode.workspace.isTrusted})`);
  const pool = new WorkerPool({
    workerPath: vscode.Uri.joinPath(context.extensionUri, 'dist', 'worker.js').fsPath,
    size: () => settings().workers,
    cancelTimeoutMs: () => settings().cancelTimeoutMs,
    log,
  });
  context.subscriptions.push({ dispose: () => pool.dispose() });
  const ownWrites = new OwnWrites();
  const consent = new OutsideConsent(context.workspaceState);
  const fits = new FitService(pool, ownWrites, consent);
  const docsUri = vscode.Uri.joinPath(context.extensionUri, 'docs', 'problems.md');
  const diagnostics = new DiagnosticsController(docsUri);
  const panels = new PanelController(context.extensionUri, fits);
  const status = new FitStatusBar(fits);
  const lenses = new ModelLenses(fits);
  const fitCsv = new FitCsvCommand(pool, ownWrites, panels, fits);
  context.subscriptions.push(fits, diagnostics, panels, status, lenses);

  /** Stop fitting a spec and drop its diagnostics once no editor tab and no panel shows it. */
  const releaseIfUnused = (uri: vscode.Uri) => {
    const key = uri.toString();
    if (panels.openSpecs.some(u => u.toString() === key)) return;
    const inTab = vscode.window.tabGroups.all.some(g => g.tabs.some(t => t.input instanceof vscode.TabInputText && t.input.uri.toString() === key));
    if (inTab) return;
    fits.forget(uri);
    diagnostics.clear(uri);
  };
  context.subscriptions.push(
    fits.onDidReport(ev => { diagnostics.update(ev); lenses.refresh(); }),
    fits.onDidChangeState(() => lenses.refresh()),
    vscode.workspace.onDidCloseTextDocument(d => { if (isSpecUri(d.uri)) releaseIfUnused(d.uri); }),
    // documents outlive their editors for a while; a spec whose last tab closed is released right away
    vscode.window.tabGroups.onDidChangeTabs(e => {
      for (const t of e.closed) if (t.input instanceof vscode.TabInputText && isSpecUri(t.input.uri)) releaseIfUnused(t.input.uri);
    }),
    panels.onDidClosePanel(uri => releaseIfUnused(uri)),
    vscode.languages.registerCodeActionsProvider(SPEC_SELECTOR, new FitCodeActions(fits), { providedCodeActionKinds: FitCodeActions.kinds }),
    vscode.languages.registerHoverProvider(SPEC_SELECTOR, new ParamHover(fits)),
    vscode.languages.registerCodeLensProvider(SPEC_SELECTOR, lenses),
    vscode.commands.registerCommand('curvewright.fitCsv', (a?: unknown, b?: unknown, c?: unknown) => fitCsv.run(a, b, c)),
    vscode.commands.registerCommand('curvewright.showPanel', (uri?: vscode.Uri) => {
      const spec = specArg(uri) ?? fits.specs[fits.specs.length - 1];
      if (!spec) { void vscode.window.showInformationMessage('Open a *.fitspec.json file to show its fit, or right-click a CSV and choose "Fit a curve to this CSV…".'); return; }
      panels.show(spec);
    }),
    vscode.commands.registerCommand('curvewright.refit', async (uri?: vscode.Uri) => {
      const spec = specArg(uri);
      if (!spec) { void vscode.window.showInformationMessage('Open a *.fitspec.json file to refit it.'); return; }
      return fits.runNow(spec, { force: true });
    }),
    vscode.commands.registerCommand('curvewright.cancelFit', (uri?: vscode.Uri) => {
      const spec = specArg(uri);
      if (spec) fits.cancel(spec); else for (const s of fits.specs) fits.cancel(s);
    }),
    vscode.commands.registerCommand('curvewright.showLog', () => log.show()),
    vscode.commands.registerCommand('curvewright.forgetOutsideAnswer', async () => {
      await consent.setPermission(undefined);
      void vscode.window.showInformationMessage('Curvewright will ask again before a spec uses files outside this workspace.');
      for (const s of fits.specs) fits.schedule(s, 0);
    }),
  );

  const toUri = (u: vscode.Uri | string) => (typeof u === 'string' ? (/^[a-z][a-z0-9+.-]+:/i.test(u) && !/^[a-z]:\\/i.test(u) ? vscode.Uri.parse(u) : vscode.Uri.file(u)) : u);
  return {
    getLastReport: u => fits.last(toUri(u))?.result,
    waitForReport: (u, opts = {}) => {
      const uri = toUri(u);
      const after = opts.afterVersion ?? -1;
      const last = fits.last(uri);
      if (last && last.version > after) return Promise.resolve(pick(last));
      return new Promise((resolve, reject) => {
        const t = setTimeout(() => { sub.dispose(); reject(new Error(`no fit result for ${uri.fsPath} within ${opts.timeoutMs ?? 30000} ms`)); }, opts.timeoutMs ?? 30000);
        const sub = fits.onDidReport(ev => {
          if (ev.uri.toString() === uri.toString() && ev.version > after) { clearTimeout(t); sub.dispose(); resolve(pick(ev)); }
        });
      });
    },
    refit: async u => { const ev = await fits.runNow(toUri(u)); return ev && pick(ev); },
    panelState: u => panels.state(toUri(u)),
    panelSnapshot: u => panels.snapshot(toUri(u)),
    panelMessages: u => panels.sentMessages(toUri(u)),
    statusText: () => status.text,
    poolStats: () => ({ ...pool.stats, size: pool.size }),
    fitCsv: o => fitCsv.run(o),
    outsideVerdict: async (u, opts = {}) => {
      const uri = toUri(u);
      const doc = vscode.workspace.textDocuments.find(d => d.uri.toString() === uri.toString() && !d.isClosed);
      const text = doc ? doc.getText() : Buffer.from(await vscode.workspace.fs.readFile(uri)).toString('utf8');
      const files = boundaryFiles(uri, text);
      return consent.verdict(files.root, files, opts.trusted ?? vscode.workspace.isTrusted);
    },
    outsidePermission: () => consent.permission,
    setOutsidePermission: p => consent.setPermission(p),
  };
}

function pick(ev: FitEvent) { return { result: ev.result, version: ev.version, dirty: ev.dirty }; }

function specArg(uri?: vscode.Uri): vscode.Uri | undefined {
  if (uri instanceof vscode.Uri && isSpecUri(uri)) return uri;
  const active = vscode.window.activeTextEditor?.document.uri;
  return active && isSpecUri(active) ? active : undefined;
}

export function deactivate(): void {
  log.dispose();
}

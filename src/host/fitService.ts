// Keeps every live spec fitted: debounced refits on editor changes (live, unsaved text), on saves, and on CSV
// changes on disk; latest-wins cancellation through the worker pool; progress with cancel for long fits.
import { mayWriteResults } from './trust';
import type { OutsideConsent } from './outsideConsent';
import * as vscode from 'vscode';
import * as path from 'path';
import { Disposable } from './disposable';
import { WorkerPool } from './workerPool';
import { OwnWrites } from './ownWrites';
import { settings } from './settings';
import { specFiles } from './jsonText';
import { log } from './log';
import type { RunResult } from '../engine/report';
import { isErrorReport } from '../engine/report';

export type FitState = 'idle' | 'fitting' | 'fitted' | 'problems' | 'error';

export interface FitEvent {
  uri: vscode.Uri;
  result: RunResult;
  /** increases with every result of this spec */
  version: number;
  /** the spec text the result was computed from */
  text: string;
  dirty: boolean;
}

interface Entry {
  uri: vscode.Uri;
  version: number;
  timer?: NodeJS.Timeout;
  running: boolean;
  last?: FitEvent;
  dataFile?: string;
  output?: string;
  /** the user said "not now" to a large data file (kept until the data file changes name) */
  largeDeclined?: string;
}

export const isSpecUri = (uri: vscode.Uri) => uri.scheme === 'file' && /\.fitspec\.json$/i.test(uri.path);

export class FitService extends Disposable {
  private readonly entries = new Map<string, Entry>();
  private readonly _onDidReport = this._register(new vscode.EventEmitter<FitEvent>());
  readonly onDidReport = this._onDidReport.event;
  private readonly _onDidChangeState = this._register(new vscode.EventEmitter<{ uri: vscode.Uri; state: FitState; message?: string }>());
  readonly onDidChangeState = this._onDidChangeState.event;
  private readonly largeApproved = new Set<string>();

  constructor(readonly pool: WorkerPool, readonly ownWrites: OwnWrites, readonly consent?: OutsideConsent) {
    super();
    this._register(vscode.workspace.onDidOpenTextDocument(d => { if (isSpecUri(d.uri)) this.schedule(d.uri, 0); }));
    this._register(vscode.workspace.onDidChangeTextDocument(e => {
      if (isSpecUri(e.document.uri) && e.contentChanges.length) this.schedule(e.document.uri);
    }));
    this._register(vscode.workspace.onDidSaveTextDocument(d => { if (isSpecUri(d.uri)) this.schedule(d.uri, 0); }));
    const csvWatcher = this._register(vscode.workspace.createFileSystemWatcher('**/*.csv'));
    const onCsv = (uri: vscode.Uri) => this.onDataChanged(uri);
    this._register(csvWatcher.onDidChange(onCsv));
    this._register(csvWatcher.onDidCreate(onCsv));
    this._register(csvWatcher.onDidDelete(onCsv));
    const specWatcher = this._register(vscode.workspace.createFileSystemWatcher('**/*.fitspec.json'));
    const onSpecDisk = (uri: vscode.Uri) => {
      if (this.ownWrites.isOwn(uri.fsPath)) return;
      // open documents refit from their change events; a spec changed on disk that is only shown in a panel refits here
      if (this.entries.has(uri.toString()) && !this.openDocument(uri)) this.schedule(uri);
    };
    this._register(specWatcher.onDidChange(onSpecDisk));
    this._register(specWatcher.onDidCreate(onSpecDisk));
    // a spec released when its tab closed may come back in an editor before VS Code disposes its document
    this._register(vscode.window.onDidChangeVisibleTextEditors(editors => {
      for (const ed of editors) if (isSpecUri(ed.document.uri) && !this.entries.has(ed.document.uri.toString())) this.schedule(ed.document.uri, 0);
    }));
    for (const d of vscode.workspace.textDocuments) if (isSpecUri(d.uri)) this.schedule(d.uri, 0);
  }

  /** Known specs (open, shown in a panel, or fitted once). */
  get specs(): vscode.Uri[] { return [...this.entries.values()].map(e => e.uri); }

  last(uri: vscode.Uri): FitEvent | undefined { return this.entries.get(uri.toString())?.last; }

  state(uri: vscode.Uri): FitState {
    const e = this.entries.get(uri.toString());
    if (!e) return 'idle';
    if (e.running || e.timer) return 'fitting';
    if (!e.last) return 'idle';
    return stateOf(e.last.result);
  }

  private entry(uri: vscode.Uri): Entry {
    const key = uri.toString();
    let e = this.entries.get(key);
    if (!e) { e = { uri, version: 0, running: false }; this.entries.set(key, e); }
    return e;
  }

  /** Refit after the debounce (or after `delayMs`). */
  schedule(uri: vscode.Uri, delayMs?: number): void {
    if (this._isDisposed) return;
    const e = this.entry(uri);
    if (e.timer) clearTimeout(e.timer);
    const ms = delayMs ?? settings(uri).debounceMs;
    e.timer = setTimeout(() => { e.timer = undefined; void this.runNow(uri); }, ms);
    this._onDidChangeState.fire({ uri, state: 'fitting' });
  }

  /** Refit now; resolves with the result (undefined when cancelled by a newer edit or declined). */
  async runNow(uri: vscode.Uri, opts: { force?: boolean } = {}): Promise<FitEvent | undefined> {
    const e = this.entry(uri);
    if (opts.force) e.largeDeclined = undefined;
    if (e.timer) { clearTimeout(e.timer); e.timer = undefined; }
    const doc = this.openDocument(uri);
    let text: string;
    try { text = doc ? doc.getText() : Buffer.from(await vscode.workspace.fs.readFile(uri)).toString('utf8'); }
    catch (err) { log.warn(`cannot read ${uri.fsPath}: ${(err as Error).message}`); return undefined; }
    const files = boundaryFiles(uri, text);
    e.dataFile = files.dataFile;
    e.output = files.output;
    if (e.dataFile && !(await this.largeFileOk(e))) { this._onDidChangeState.fire({ uri, state: this.state(uri) }); return undefined; }
    const cfg = settings(uri);
    const folder = vscode.workspace.getWorkspaceFolder(uri);
    // files outside the workspace: used only when the user allowed it for this (trusted) workspace; asks once
    const boundary = this.consent
      ? await this.consent.resolve(uri, files.root, files, opts)
      : { trustPaths: false, trustHint: undefined };
    if (this.entries.get(uri.toString()) !== e) return undefined; // forgotten while the question was open
    if (e.output && cfg.writeResults) this.ownWrites.mark(e.output);
    e.running = true;
    this._onDidChangeState.fire({ uri, state: 'fitting', message: 'fitting' });
    const started = Date.now();
    let progressReport: ((m: string) => void) | undefined;
    let finish!: () => void;
    const finished = new Promise<void>(r => (finish = r));
    const progressTimer = setTimeout(() => {
      void vscode.window.withProgress(
        { location: vscode.ProgressLocation.Notification, title: `Curvewright: fitting ${path.basename(uri.fsPath)}`, cancellable: true },
        (progress, token) => {
          progressReport = m => progress.report({ message: m });
          token.onCancellationRequested(() => { this.pool.cancel(uri.toString()); log.info(`fit of ${uri.fsPath} cancelled by the user`); });
          return finished;
        });
    }, 1500);
    const outcome = await this.pool.run(uri.toString(), {
      specPath: uri.fsPath,
      specText: doc ? text : undefined,
      workspaceRoot: folder?.uri.fsPath,
      trustPaths: boundary.trustPaths,
      trustHint: boundary.trustHint,
      writeResults: mayWriteResults({ trusted: vscode.workspace.isTrusted, setting: cfg.writeResults, dirty: !!doc?.isDirty }),
    }, m => { progressReport?.(m); this._onDidChangeState.fire({ uri, state: 'fitting', message: m }); });
    clearTimeout(progressTimer);
    finish();
    if (this.entries.get(uri.toString()) !== e) return undefined; // forgotten meanwhile (closed)
    if (outcome.kind === 'cancelled') {
      if (!this.pool.isRunning(uri.toString()) && !e.timer) { e.running = false; this._onDidChangeState.fire({ uri, state: this.state(uri) }); }
      return undefined;
    }
    e.running = this.pool.isRunning(uri.toString());
    let result: RunResult;
    if (outcome.kind === 'failed') {
      log.error(`fit of ${uri.fsPath} failed: ${outcome.message}`);
      result = { version: 1, spec: path.basename(uri.fsPath), error: { message: 'The fitting engine failed unexpectedly on this spec. This is a bug in Curvewright; the Curvewright log has details.' } };
    } else {
      result = outcome.message.result;
      if (outcome.message.written) { this.ownWrites.mark(outcome.message.written); log.info(`wrote ${outcome.message.written}`); }
      if (outcome.message.writeError) {
        log.warn(`could not write the results file of ${uri.fsPath}: ${outcome.message.writeError}`);
        void vscode.window.showWarningMessage(`Curvewright could not write the results file of ${path.basename(uri.fsPath)}: ${outcome.message.writeError}`);
      }
    }
    e.version++;
    const ev: FitEvent = { uri, result, version: e.version, text, dirty: !!doc?.isDirty };
    e.last = ev;
    log.info(`fitted ${path.basename(uri.fsPath)} in ${Date.now() - started} ms: ${summary(result)}`);
    this._onDidReport.fire(ev);
    this._onDidChangeState.fire({ uri, state: this.state(uri) });
    return ev;
  }

  /** Cancel the fit of `uri` (running or debounced). */
  cancel(uri: vscode.Uri): void {
    const e = this.entries.get(uri.toString());
    if (e?.timer) { clearTimeout(e.timer); e.timer = undefined; }
    this.pool.cancel(uri.toString());
    if (e) { e.running = false; this._onDidChangeState.fire({ uri, state: this.state(uri) }); }
  }

  /** Forget a spec (document closed, no panel). */
  forget(uri: vscode.Uri): void {
    this.cancel(uri);
    this.entries.delete(uri.toString());
  }

  private onDataChanged(csv: vscode.Uri): void {
    if (this.ownWrites.isOwn(csv.fsPath)) return;
    for (const e of this.entries.values()) {
      if (e.dataFile && path.normalize(e.dataFile) === path.normalize(csv.fsPath)) {
        log.info(`${path.basename(csv.fsPath)} changed on disk; refitting ${path.basename(e.uri.fsPath)}`);
        this.schedule(e.uri);
      }
    }
  }

  private async largeFileOk(e: Entry): Promise<boolean> {
    const file = e.dataFile!;
    if (this.largeApproved.has(file)) return true;
    let size: number;
    try { size = (await vscode.workspace.fs.stat(vscode.Uri.file(file))).size; } catch { return true; /* the engine reports the missing file */ }
    const limit = settings(e.uri).largeFileBytes;
    if (!(limit > 0) || size <= limit) return true;
    if (e.largeDeclined === file) return false;
    const mb = (size / 1e6).toFixed(1);
    const pick = await vscode.window.showWarningMessage(
      `${path.basename(file)} is ${mb} MB (above curvewright.largeFileBytes). Fitting it may take a while and use memory. Fit it anyway?`,
      'Fit Anyway', 'Not Now');
    if (pick === 'Fit Anyway') { this.largeApproved.add(file); return true; }
    e.largeDeclined = file;
    return false;
  }

  private openDocument(uri: vscode.Uri): vscode.TextDocument | undefined {
    const key = uri.toString();
    return vscode.workspace.textDocuments.find(d => d.uri.toString() === key && !d.isClosed);
  }

  override dispose(): void {
    for (const e of this.entries.values()) if (e.timer) clearTimeout(e.timer);
    super.dispose();
  }
}

/** The workspace root of a spec (its workspace folder, else its own folder) and its data file and output as absolute
 *  paths (from the live text), as the fit service checks them against the boundary. */
export function boundaryFiles(uri: vscode.Uri, text: string): { root: string; dataFile?: string; output?: string } {
  const files = specFiles(text);
  const dir = path.dirname(uri.fsPath);
  return {
    root: vscode.workspace.getWorkspaceFolder(uri)?.uri.fsPath ?? dir,
    dataFile: files.dataFile ? path.resolve(dir, files.dataFile) : undefined,
    output: files.output ? path.resolve(dir, files.output) : undefined,
  };
}

export function stateOf(r: RunResult): FitState {
  if (isErrorReport(r)) return 'error';
  const problems = r.problems.length + r.models.reduce((n, m) => n + m.problems.length, 0);
  const failed = r.models.some(m => m.status !== 'converged');
  return failed || problems ? 'problems' : 'fitted';
}

export function summary(r: RunResult): string {
  if (isErrorReport(r)) return `error: ${r.error.message}`;
  const conv = r.models.filter(m => m.status === 'converged').length;
  const problems = r.problems.length + r.models.reduce((n, m) => n + m.problems.length, 0);
  return `${conv}/${r.models.length} models converged, ${problems} problem(s)${r.best ? `, best ${r.best}` : ''}`;
}

// "Fit a curve to this CSV…": quick picks for x, y and candidate models (the engine's suggestion, computed in the
// worker), writes <name>.fitspec.json beside the CSV without silently overwriting, opens it and the panel.
// Tests drive it without quick picks by passing an options object.
import * as vscode from 'vscode';
import * as path from 'path';
import { starterSpecText } from '../engine/starterText';
import type { ModelSpec } from '../engine/report';
import type { SpecSuggestion } from '../shared/protocol';
import type { WorkerPool } from './workerPool';
import type { OwnWrites } from './ownWrites';
import type { PanelController } from './panel';
import type { FitService } from './fitService';
import { log } from './log';

/** The delimited-text files the command fits (the explorer menu's `when` clause in package.json lists the same). */
const DATA_FILE = /\.(csv|tsv|txt)$/i;

export interface FitCsvOptions {
  /** the CSV (or several); defaults to the explorer selection or the active editor */
  csv?: vscode.Uri | string;
  csvs?: (vscode.Uri | string)[];
  /** column for x; skips the quick pick */
  x?: string;
  /** column for y; skips the quick pick */
  y?: string;
  /** candidate ids (from the suggestion), built-in ids, or full model specs; skips the quick pick */
  models?: (string | ModelSpec)[];
  /** when <name>.fitspec.json exists: true overwrites, false/'rename' picks a new name, 'ask' asks (default when interactive) */
  overwrite?: boolean | 'rename' | 'ask';
  /** open the spec and the panel (default true) */
  open?: boolean;
}

export interface FitCsvResult { csv: string; spec: string | null; created: boolean; reason?: string }

export class FitCsvCommand {
  constructor(private readonly pool: WorkerPool, private readonly ownWrites: OwnWrites, private readonly panels: PanelController, private readonly fits: FitService) {}

  /** Command entry: (uri, selectedUris) from menus, or (options) / (uri, undefined, options) from code. */
  async run(a?: unknown, b?: unknown, c?: unknown): Promise<FitCsvResult[]> {
    const options: FitCsvOptions = [a, b, c].find(isOptions) as FitCsvOptions | undefined ?? {};
    const interactive = !(options.x || options.y || options.models || options.overwrite !== undefined);
    let csvs: vscode.Uri[] = [];
    if (options.csvs?.length) csvs = options.csvs.map(toUri);
    else if (options.csv) csvs = [toUri(options.csv)];
    else if (Array.isArray(b) && b.length && b.every(u => u instanceof vscode.Uri)) csvs = b as vscode.Uri[];
    else if (a instanceof vscode.Uri) csvs = [a];
    else {
      const active = vscode.window.activeTextEditor?.document.uri;
      if (active && DATA_FILE.test(active.path)) csvs = [active];
      else {
        const picked = await vscode.window.showOpenDialog({ canSelectMany: true, filters: { 'Data files': ['csv', 'tsv', 'txt'] }, title: 'Choose CSV files to fit' });
        csvs = picked ?? [];
      }
    }
    csvs = csvs.filter(u => DATA_FILE.test(u.path));
    const results: FitCsvResult[] = [];
    for (const [i, csv] of csvs.entries()) {
      const r = await this.one(csv, options, interactive, csvs.length > 1 ? ` (${i + 1}/${csvs.length})` : '');
      results.push(r);
      if (r.reason && interactive && r.spec === null && r.reason !== 'cancelled') void vscode.window.showErrorMessage(r.reason);
    }
    const created = results.filter(r => r.spec);
    if (options.open !== false) {
      for (const [i, r] of created.entries()) {
        const uri = vscode.Uri.file(r.spec!);
        const doc = await vscode.workspace.openTextDocument(uri);
        await vscode.window.showTextDocument(doc, { preview: false, viewColumn: vscode.ViewColumn.One, preserveFocus: i < created.length - 1 });
        this.panels.show(uri, vscode.ViewColumn.Beside, true);
        this.fits.schedule(uri, 0);
      }
    }
    return results;
  }

  private async one(csv: vscode.Uri, o: FitCsvOptions, interactive: boolean, step: string): Promise<FitCsvResult> {
    const name = path.basename(csv.fsPath);
    let s: SpecSuggestion;
    try { s = await this.pool.suggest(csv.fsPath); }
    catch (e) { return { csv: csv.fsPath, spec: null, created: false, reason: `Curvewright could not read ${name}: ${(e as Error).message}` }; }
    const title = `Fit a curve to ${name}${step}`;
    const x = o.x ?? (interactive ? await pickColumn(s.columns, s.x, `${title}: column for x`) : s.x);
    if (!x) return cancelled(csv);
    const yDefault = s.y !== x ? s.y : s.columns.find(col => col !== x) ?? s.y;
    const y = o.y ?? (interactive ? await pickColumn(s.columns.filter(col => col !== x), yDefault, `${title}: column for y`) : yDefault);
    if (!y) return cancelled(csv);
    for (const col of [x, y]) if (!s.columns.includes(col)) return { csv: csv.fsPath, spec: null, created: false, reason: `${name} has no column '${col}'; its columns are ${s.columns.join(', ')}.` };
    let models: ModelSpec[];
    if (o.models) models = o.models.map(m => resolveModel(m, s));
    else if (interactive) {
      const picked = await vscode.window.showQuickPick(
        s.candidates.map(c => ({ label: c.label, description: c.id, picked: c.recommended, model: c.model })),
        { canPickMany: true, title: `${title}: candidate models`, placeHolder: 'The recommended models are checked; the fit compares every model you keep' });
      if (!picked?.length) return cancelled(csv);
      models = picked.map(p => p.model);
    } else models = s.candidates.filter(c => c.recommended).map(c => c.model);
    if (!models.length) return { csv: csv.fsPath, spec: null, created: false, reason: 'choose at least one model' };
    const base = name.replace(DATA_FILE, '');
    const dir = path.dirname(csv.fsPath);
    let specPath = path.join(dir, `${base}.fitspec.json`);
    if (await exists(specPath)) {
      const mode = o.overwrite ?? (interactive ? 'ask' : 'rename');
      if (mode === 'ask') {
        const fresh = await freeName(dir, base);
        const pick = await vscode.window.showWarningMessage(
          `${path.basename(specPath)} already exists beside ${name}.`, { modal: true },
          'Overwrite', `Create ${path.basename(fresh)}`, 'Open Existing');
        if (!pick) return cancelled(csv);
        if (pick === 'Open Existing') return { csv: csv.fsPath, spec: specPath, created: false };
        if (pick !== 'Overwrite') specPath = fresh;
      } else if (mode !== true) specPath = await freeName(dir, base);
    }
    const text = starterSpecText({ csvPath: csv.fsPath, specPath, x, y, models, ...(s.decimal ? { decimal: s.decimal } : {}) });
    this.ownWrites.mark(specPath);
    await vscode.workspace.fs.writeFile(vscode.Uri.file(specPath), Buffer.from(text, 'utf8'));
    log.info(`wrote ${specPath} (x = ${x}, y = ${y}, models: ${models.map(m => m.name).join(', ')})`);
    return { csv: csv.fsPath, spec: specPath, created: true };
  }
}

function cancelled(csv: vscode.Uri): FitCsvResult { return { csv: csv.fsPath, spec: null, created: false, reason: 'cancelled' }; }

function isOptions(v: unknown): boolean {
  return !!v && typeof v === 'object' && !(v instanceof vscode.Uri) && !Array.isArray(v);
}

function toUri(u: vscode.Uri | string): vscode.Uri {
  return u instanceof vscode.Uri ? u : /^[a-z][a-z0-9+.-]+:\/\//i.test(u) ? vscode.Uri.parse(u) : vscode.Uri.file(u);
}

function resolveModel(m: string | ModelSpec, s: SpecSuggestion): ModelSpec {
  if (typeof m !== 'string') return m;
  const c = s.candidates.find(c => c.id === m || c.model.name === m || c.model.builtin === m);
  if (c) return c.model;
  const poly = /^poly(?:nomial)?(\d+)$/i.exec(m);
  if (poly) return { name: m, polynomial: +poly[1] };
  return { name: m, builtin: m };
}

async function pickColumn(columns: string[], preferred: string, title: string): Promise<string | undefined> {
  const ordered = [preferred, ...columns.filter(c => c !== preferred)].filter(c => columns.includes(c));
  const pick = await vscode.window.showQuickPick(ordered.map((c, i) => ({ label: c, description: i === 0 ? 'suggested' : undefined })), { title, placeHolder: 'Choose a column' });
  return pick?.label;
}

async function exists(p: string): Promise<boolean> {
  try { await vscode.workspace.fs.stat(vscode.Uri.file(p)); return true; } catch { return false; }
}

async function freeName(dir: string, base: string): Promise<string> {
  for (let k = 2; ; k++) {
    const p = path.join(dir, `${base}-${k}.fitspec.json`);
    if (!(await exists(p))) return p;
  }
}

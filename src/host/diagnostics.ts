// Problems of a run result -> diagnostics on the exact JSON ranges of the live spec text (jsonc-parser), plus CSV
// problems on the data file's lines, with related information pointing at the CSV rows concerned.
import * as vscode from 'vscode';
import { allProblems as reportProblems, type ReportProblem } from '../shared/reportText';
import * as path from 'path';
import * as fs from 'fs';
import { Disposable } from './disposable';
import { LineIndex, locateInText } from './jsonText';
import type { FitEvent } from './fitService';
import type { FileLocation, Problem, RunResult, Severity } from '../engine/report';
import { isErrorReport } from '../engine/report';

export const DIAGNOSTIC_SOURCE = 'curvewright';
/** most diagnostics put on one data file, and most related rows listed per diagnostic */
const MAX_CSV_DIAGNOSTICS = 200;
const MAX_RELATED = 20;

/** A diagnostic that remembers the problem it came from (code actions read it back). */
export class FitDiagnostic extends vscode.Diagnostic {
  problem?: Problem;
  /** index of the model the problem belongs to, or -1 for report-level problems */
  modelIndex = -1;
}

export type PlacedProblem = ReportProblem;

/** Every problem of a result: report-level, each model's, and an ErrorReport's error (+ its problems). */
export function allProblems(r: RunResult): PlacedProblem[] {
  if (isErrorReport(r)) {
    const out: PlacedProblem[] = [];
    const inner = r.error.problems ?? [];
    if (!inner.length || !inner.some(p => p.message === r.error.message)) {
      out.push({ problem: { code: 'spec-error', severity: 'error', message: r.error.message, path: r.error.path ?? [], location: r.error.location }, modelIndex: -1 });
    }
    for (const p of inner) out.push({ problem: p, modelIndex: modelIndexOf(p) });
    return out;
  }
  return reportProblems(r);
}

function modelIndexOf(p: Problem): number {
  return p.path[0] === 'models' && typeof p.path[1] === 'number' ? p.path[1] : -1;
}

export function toSeverity(s: Severity): vscode.DiagnosticSeverity {
  return s === 'error' ? vscode.DiagnosticSeverity.Error : s === 'warning' ? vscode.DiagnosticSeverity.Warning : vscode.DiagnosticSeverity.Information;
}

export class DiagnosticsController extends Disposable {
  readonly collection = this._register(vscode.languages.createDiagnosticCollection('curvewright'));
  /** CSV files each spec put diagnostics on (so they can be cleared when the spec's problems go away) */
  private readonly csvOf = new Map<string, Set<string>>();
  private readonly csvDiags = new Map<string, Map<string, vscode.Diagnostic[]>>();

  constructor(private readonly docsUri: vscode.Uri) { super(); }

  update(ev: FitEvent): void {
    const specDir = path.dirname(ev.uri.fsPath);
    const index = new LineIndex(ev.text);
    const range = (off: number, len: number) => {
      const a = index.positionAt(off), b = index.positionAt(off + len);
      return new vscode.Range(a.line, a.character, b.line, b.character);
    };
    const dataFile = dataFileOf(ev.result, specDir);
    const rowLines = rowToLine(ev.result);
    const specDiags: vscode.Diagnostic[] = [];
    const perCsv = new Map<string, vscode.Diagnostic[]>();
    for (const { problem, modelIndex } of allProblems(ev.result)) {
      const locFile = problem.location?.file ? resolveFile(problem.location.file, specDir, dataFile) : undefined;
      const locIsSpec = locFile && path.normalize(locFile) === path.normalize(ev.uri.fsPath);
      let r: vscode.Range;
      const spot = problem.path.length || !problem.location?.line || !locIsSpec ? locateInText(ev.text, problem.path) : null;
      if (problem.location?.line && locIsSpec && !problem.path.length) {
        const line = problem.location.line - 1;
        const col = typeof problem.location.column === 'number' ? problem.location.column - 1 : 0;
        const off = index.offsetAt(line, col);
        r = range(off, Math.max(1, wordLength(ev.text, off)));
      } else if (spot) r = range(spot.offset, spot.length);
      else r = new vscode.Range(0, 0, 0, 1);
      const d = new FitDiagnostic(r, problem.message, toSeverity(problem.severity));
      d.source = DIAGNOSTIC_SOURCE;
      d.code = { value: problem.code, target: this.docsUri.with({ fragment: problem.code }) };
      d.problem = problem;
      d.modelIndex = modelIndex;
      const related: vscode.DiagnosticRelatedInformation[] = [];
      if (locFile && !locIsSpec && problem.location?.line) {
        related.push(new vscode.DiagnosticRelatedInformation(
          new vscode.Location(vscode.Uri.file(locFile), lineRange(problem.location.line)), describeLocation(problem.location)));
      }
      const rowsFile = locFile && !locIsSpec ? locFile : dataFile;
      if (rowsFile && problem.rows?.length) {
        for (const row of problem.rows.slice(0, MAX_RELATED)) {
          const line = rowLines.get(row) ?? row + 1;
          if (rowsFile === locFile && line === problem.location?.line) continue; // already listed
          related.push(new vscode.DiagnosticRelatedInformation(
            new vscode.Location(vscode.Uri.file(rowsFile), lineRange(line)), `data row ${row} (line ${line})`));
        }
      }
      if (related.length) d.relatedInformation = related;
      specDiags.push(d);
      // CSV problems also show on the CSV itself
      if (locFile && !locIsSpec && problem.location?.line) {
        const list = perCsv.get(locFile) ?? [];
        if (list.length < MAX_CSV_DIAGNOSTICS) {
          const c = new vscode.Diagnostic(lineRange(problem.location.line), `${problem.message} (from ${path.basename(ev.uri.fsPath)})`, toSeverity(problem.severity));
          c.source = DIAGNOSTIC_SOURCE;
          c.code = d.code;
          c.relatedInformation = [new vscode.DiagnosticRelatedInformation(new vscode.Location(ev.uri, r), 'spec')];
          list.push(c);
        }
        perCsv.set(locFile, list);
      }
    }
    this.collection.set(ev.uri, specDiags);
    this.setCsv(ev.uri.toString(), perCsv);
  }

  clear(uri: vscode.Uri): void {
    this.collection.delete(uri);
    this.setCsv(uri.toString(), new Map());
  }

  private setCsv(specKey: string, perCsv: Map<string, vscode.Diagnostic[]>): void {
    const before = this.csvOf.get(specKey) ?? new Set<string>();
    this.csvDiags.set(specKey, perCsv);
    const files = new Set([...before, ...perCsv.keys()]);
    for (const f of files) {
      const merged: vscode.Diagnostic[] = [];
      for (const m of this.csvDiags.values()) merged.push(...(m.get(f) ?? []));
      this.collection.set(vscode.Uri.file(f), merged);
    }
    this.csvOf.set(specKey, new Set(perCsv.keys()));
  }
}

function lineRange(line1: number): vscode.Range {
  const l = Math.max(0, line1 - 1);
  return new vscode.Range(l, 0, l, 10_000);
}

function wordLength(text: string, off: number): number {
  const m = /^("[^"\n]*"|[^\s,:{}[\]]+)/.exec(text.slice(off, off + 200));
  return m ? m[0].length : 1;
}

function describeLocation(l: FileLocation): string {
  const parts = [path.basename(l.file)];
  if (l.line) parts.push(`line ${l.line}`);
  if (l.row) parts.push(`data row ${l.row}`);
  if (l.column !== undefined) parts.push(typeof l.column === 'string' ? `column '${l.column}'` : `column ${l.column}`);
  return parts.join(', ');
}

export function dataFileOf(r: RunResult, specDir: string): string | undefined {
  if (isErrorReport(r) || !r.data?.file) return undefined;
  return resolveFile(r.data.file, specDir);
}

/** A file named in a report: absolute, relative to the spec's folder, or (fallback) the data file by base name. */
export function resolveFile(file: string, specDir: string, dataFile?: string): string {
  if (path.isAbsolute(file)) return file;
  const p = path.resolve(specDir, file);
  if (dataFile && !fs.existsSync(p) && path.basename(dataFile) === path.basename(file)) return dataFile;
  return p;
}

function rowToLine(r: RunResult): Map<number, number> {
  const m = new Map<number, number>();
  if (isErrorReport(r)) return m;
  for (const d of r.data?.dropped ?? []) m.set(d.row, d.line);
  return m;
}

// Quick fixes for the problems of a fit: a misspelled column or function name (from the message's "did you mean"),
// bounds for a parameter at or through a bound, removing an overfitting model, raising solver.maxIterations.
import * as vscode from 'vscode';
import * as jsonc from 'jsonc-parser';
import { DIAGNOSTIC_SOURCE } from './diagnostics';
import type { FitService } from './fitService';
import type { JsonPath, ModelReport } from '../engine/report';
import { isErrorReport } from '../engine/report';
import { fmtLabel as fmt } from '../shared/numberFormat';

const DID_YOU_MEAN = /'([^']+)'[^']*?did you mean '([^']+)'/i;

export class FitCodeActions implements vscode.CodeActionProvider {
  static readonly kinds = [vscode.CodeActionKind.QuickFix];
  constructor(private readonly fits: FitService) {}

  provideCodeActions(doc: vscode.TextDocument, _range: vscode.Range, context: vscode.CodeActionContext): vscode.CodeAction[] {
    const out: vscode.CodeAction[] = [];
    const text = doc.getText();
    const last = this.fits.last(doc.uri)?.result;
    const report = last && !isErrorReport(last) ? last : undefined;
    for (const d of context.diagnostics) {
      if (d.source !== DIAGNOSTIC_SOURCE) continue;
      const code = typeof d.code === 'object' ? String(d.code.value) : String(d.code ?? '');
      const path = jsonc.getLocation(text, doc.offsetAt(d.range.start) + 1).path;
      // 1. did you mean
      const m = DID_YOU_MEAN.exec(d.message);
      if (m) {
        const [, wrong, right] = m;
        const slice = doc.getText(d.range);
        const re = new RegExp(`(?<![A-Za-z0-9_])${escapeRe(wrong)}(?![A-Za-z0-9_])`, 'g');
        if (re.test(slice)) {
          const a = new vscode.CodeAction(`Change '${wrong}' to '${right}'`, vscode.CodeActionKind.QuickFix);
          a.edit = new vscode.WorkspaceEdit();
          a.edit.replace(doc.uri, d.range, slice.replace(re, right));
          a.diagnostics = [d];
          a.isPreferred = true;
          out.push(a);
        }
      }
      const modelIndex = modelIndexAt(path);
      const model = report && modelIndex >= 0 ? report.models[modelIndex] : undefined;
      // 2. bounds: relax a bound the estimate sits on; bound parameters whose values broke the formula
      const param = paramAt(path) ?? quotedParam(d.message, model);
      const specParams = specParamsOf(text, modelIndex);
      if (model && param && (code === 'param-at-bound' || /at-bound/.test(code))) {
        const key = model.params[param]?.atBound;
        if (key && specParams[param]?.[key] !== undefined) {
          out.push(this.edit(doc, d, `Remove the ${key} bound of '${param}' (the best fit may lie beyond it)`, ['models', modelIndex, 'params', param, key], undefined));
        }
      } else if (model && (code === 'non-finite-values' || /through-bound|crossed-bound|negative/.test(code))) {
        const names = param ? [param] : model.paramOrder.filter(n => !model.params[n]?.fixed);
        for (const n of names.slice(0, 6)) {
          if (specParams[n]?.min !== undefined || specParams[n]?.max !== undefined) continue;
          const v = model.params[n]?.value;
          const key = typeof v === 'number' && v < 0 ? 'max' : 'min';
          out.push(this.edit(doc, d, `Add bounds to '${n}' (${key} 0) to keep it in the valid region`, ['models', modelIndex, 'params', n, key], 0));
        }
      }
      // 3. overfitting model
      if (model && /overfit/i.test(code)) {
        out.push(this.edit(doc, d, `Remove model '${model.name}' from the spec`, ['models', modelIndex], undefined));
      }
      // 4. iteration limit
      if (model && model.termination === 'time-limit' && /converge|time/i.test(code)) {
        const cur = currentSolver(text, modelIndex, 'seconds') ?? 10;
        out.push(this.edit(doc, d, `Raise solver.seconds of '${model.name}' to ${cur * 4}`, ['models', modelIndex, 'solver', 'seconds'], cur * 4));
      }
      if (model && (/iteration/i.test(code) || model.termination === 'iteration-limit') && /iteration|converge/i.test(code + d.message)) {
        const cur = currentSolver(text, modelIndex, 'maxIterations') ?? Math.max(model.iterations, 100);
        const next = Math.max(1000, cur * 4);
        out.push(this.edit(doc, d, `Raise solver.maxIterations of '${model.name}' to ${next}`, ['models', modelIndex, 'solver', 'maxIterations'], next));
      }
    }
    return out;
  }

  private edit(doc: vscode.TextDocument, d: vscode.Diagnostic, title: string, path: JsonPath, value: unknown): vscode.CodeAction {
    const a = new vscode.CodeAction(title, vscode.CodeActionKind.QuickFix);
    a.edit = jsonEdit(doc, path, value);
    a.diagnostics = [d];
    return a;
  }
}

/** A WorkspaceEdit setting (or, with value undefined, removing) the value at `path` of a JSON document. */
export function jsonEdit(doc: vscode.TextDocument, path: JsonPath, value: unknown): vscode.WorkspaceEdit {
  const edits = jsonc.modify(doc.getText(), path, value, { formattingOptions: { insertSpaces: true, tabSize: 2, eol: doc.eol === vscode.EndOfLine.CRLF ? '\r\n' : '\n' } });
  const we = new vscode.WorkspaceEdit();
  for (const e of edits) we.replace(doc.uri, new vscode.Range(doc.positionAt(e.offset), doc.positionAt(e.offset + e.length)), e.content);
  return we;
}

function modelIndexAt(path: JsonPath): number {
  return path[0] === 'models' && typeof path[1] === 'number' ? path[1] : -1;
}

function paramAt(path: JsonPath): string | undefined {
  return path[0] === 'models' && path[2] === 'params' && typeof path[3] === 'string' ? path[3] : undefined;
}

function quotedParam(message: string, model: ModelReport | undefined): string | undefined {
  if (!model) return undefined;
  for (const m of message.matchAll(/'([^']+)'/g)) if (model.params[m[1]]) return m[1];
  return undefined;
}

function currentSolver(text: string, i: number, key: 'maxIterations' | 'seconds'): number | undefined {
  const raw = jsonc.parse(text, [], { allowTrailingComma: true }) as { models?: { solver?: Record<string, unknown> }[] };
  const v = raw?.models?.[i]?.solver?.[key];
  return typeof v === 'number' ? v : undefined;
}

function specParamsOf(text: string, i: number): Record<string, { min?: unknown; max?: unknown } | undefined> {
  if (i < 0) return {};
  const raw = jsonc.parse(text, [], { allowTrailingComma: true }) as { models?: { params?: Record<string, { min?: unknown; max?: unknown }> }[] };
  const p = raw?.models?.[i]?.params;
  return p && typeof p === 'object' ? p : {};
}

function escapeRe(s: string): string { return s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&'); }

export { fmt };

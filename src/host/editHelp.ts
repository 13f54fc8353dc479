// Edit help in a spec: hover on a parameter (name in `params` or in the formula) shows its current estimate ± SE;
// a CodeLens above each model shows its status and key figures (R², AICc) and opens the panel.
import { escapeMarkdown } from './markdownText';
import * as vscode from 'vscode';
import * as jsonc from 'jsonc-parser';
import type { FitService } from './fitService';
import type { FitReport, ModelReport } from '../engine/report';
import { isErrorReport } from '../engine/report';
import { fmtLabel as fmt } from '../shared/numberFormat';

export class ParamHover implements vscode.HoverProvider {
  constructor(private readonly fits: FitService) {}

  provideHover(doc: vscode.TextDocument, pos: vscode.Position): vscode.Hover | undefined {
    const last = this.fits.last(doc.uri)?.result;
    if (!last || isErrorReport(last)) return undefined;
    const text = doc.getText();
    const loc = jsonc.getLocation(text, doc.offsetAt(pos));
    const p = loc.path;
    if (p[0] !== 'models' || typeof p[1] !== 'number') return undefined;
    const model = modelFor(last, text, p[1]);
    if (!model) return undefined;
    let name: string | undefined;
    if (p[2] === 'params' && typeof p[3] === 'string' && (p.length === 4 || loc.isAtPropertyKey)) name = p[3];
    const wordRange = doc.getWordRangeAtPosition(pos, /[A-Za-z_][A-Za-z0-9_]*/);
    if (!name && p[2] === 'formula' && wordRange) name = doc.getText(wordRange);
    if (!name || !model.params[name]) return undefined;
    return new vscode.Hover(paramMarkdown(model, name, last.confidence), wordRange);
  }
}

export function paramMarkdown(model: ModelReport, name: string, confidence: number): vscode.MarkdownString {
  const pr = model.params[name];
  const md = new vscode.MarkdownString();
  md.appendMarkdown(`**${escapeMarkdown(name)}** = ${fmt(pr.value, 6)}`);
  if (pr.fixed) md.appendMarkdown(' (fixed)');
  else if (pr.se !== null) md.appendMarkdown(` ± ${fmt(pr.se)} (standard error)`);
  md.appendMarkdown('\n\n');
  if (pr.ci) md.appendMarkdown(`${Math.round(confidence * 100)}% CI [${fmt(pr.ci[0])}, ${fmt(pr.ci[1])}]`);
  if (pr.profileCi) md.appendMarkdown(` · profile [${fmt(pr.profileCi[0])}, ${fmt(pr.profileCi[1])}]`);
  if (pr.p !== null) md.appendMarkdown(` · p = ${fmt(pr.p, 2)}`);
  if (pr.atBound) md.appendMarkdown(`\n\n$(warning) at its ${pr.atBound} bound`);
  md.appendMarkdown(`\n\nmodel ${escapeMarkdown(model.name)}: ${model.status}${model.status !== 'converged' ? ` (${model.termination})` : ''}`);
  md.supportThemeIcons = true;
  return md;
}

/** The report's model for the spec's i-th model: by name when the spec names it, else by index. */
function modelFor(r: FitReport, text: string, i: number): ModelReport | undefined {
  const raw = jsonc.parse(text, [], { allowTrailingComma: true }) as { models?: { name?: unknown }[] };
  const name = raw?.models?.[i]?.name;
  return (typeof name === 'string' ? r.models.find(m => m.name === name) : undefined) ?? r.models[i];
}

export class ModelLenses implements vscode.CodeLensProvider {
  private readonly _onDidChange = new vscode.EventEmitter<void>();
  readonly onDidChangeCodeLenses = this._onDidChange.event;
  constructor(private readonly fits: FitService) {}

  refresh(): void { this._onDidChange.fire(); }

  provideCodeLenses(doc: vscode.TextDocument): vscode.CodeLens[] {
    const ev = this.fits.last(doc.uri);
    const text = doc.getText();
    const root = jsonc.parseTree(text, [], { allowTrailingComma: true });
    const models = root && jsonc.findNodeAtLocation(root, ['models']);
    if (!models || models.type !== 'array' || !models.children) return [];
    const lenses: vscode.CodeLens[] = [];
    models.children.forEach((node, i) => {
      const pos = doc.positionAt(node.offset);
      const range = new vscode.Range(pos, pos);
      let title: string;
      const r = ev?.result;
      if (!r) title = this.fits.state(doc.uri) === 'fitting' ? '$(sync~spin) fitting…' : 'not fitted yet';
      else if (isErrorReport(r)) title = '$(error) not fitted: the spec has an error';
      else {
        const m = modelFor(r, text, i);
        title = m ? lensTitle(m, r) : 'not in the last fit';
      }
      lenses.push(new vscode.CodeLens(range, { title, command: 'curvewright.showPanel', arguments: [doc.uri], tooltip: 'Open the Curvewright panel' }));
    });
    return lenses;
  }

  dispose(): void { this._onDidChange.dispose(); }
}

export function lensTitle(m: ModelReport, r: FitReport): string {
  if (m.status !== 'converged') return `$(error) ${m.name}: did not converge (${m.termination}, ${m.iterations} iterations)`;
  const parts = [`$(check) ${m.name}: converged`, `R² ${fmt(m.stats.r2)}`, `AICc ${fmt(m.stats.aicc)}`];
  if (m.stats.cvRmse !== null) parts.push(`CV RMSE ${fmt(m.stats.cvRmse, 3)}`);
  if (m.problems.length) parts.push(`${m.problems.length} problem${m.problems.length > 1 ? 's' : ''}`);
  if (r.best === m.name) parts.push('★ best');
  return parts.join(' · ');
}

// The problem list: report-level and per-model problems, most severe first, folded when long, each a button that
// reveals its place in the spec (and a link to its data row); and the error box of a spec that could not be run.
import type { ErrorReport, FitReport, JsonPath, Problem } from '../src/engine/report';
import { h, type Child } from './dom';
import type { ViewContext } from './state';

/** A problem and the model it belongs to (none: the report's own). */
export interface ProblemItem { p: Problem; model?: string }

/** ["models", 0, "params", "K"] -> "models[0].params.K" */
export function formatPath(path: JsonPath | undefined): string {
  if (!path || path.length === 0) return '(spec)';
  let s = '';
  for (const p of path) s += typeof p === 'number' ? `[${p}]` : s ? `.${p}` : p;
  return s;
}

export function locationText(loc: Problem['location']): string {
  if (!loc) return '';
  let s = loc.file;
  if (loc.line !== undefined) s += `:${loc.line}`;
  if (typeof loc.column === 'number') s += `:${loc.column}`;
  else if (typeof loc.column === 'string') s += ` (column ${loc.column})`;
  if (loc.row !== undefined) s += `, row ${loc.row}`;
  return s;
}

export const SEVERITY_ICON: Record<Problem['severity'], string> = { error: '\u2716', warning: '\u25b2', info: '\u2139' };
export const SEVERITY_RANK: Record<Problem['severity'], number> = { error: 0, warning: 1, info: 2 };

export function errorBox(ctx: ViewContext, r: ErrorReport): Child[] {
  const e = r.error;
  const where = e.location ? locationText(e.location) : e.path ? formatPath(e.path) : '';
  const out: Child[] = [
    h('div', { class: 'cw-error-title' }, h('span', { class: 'cw-sev-icon', 'aria-hidden': 'true' }, SEVERITY_ICON.error), ' This spec could not be run'),
    h('p', { class: 'cw-error-msg' }, e.message),
  ];
  if (where) {
    const reveal = ctx.opts.onReveal;
    out.push(h('p', { class: 'cw-error-where' }, 'at ',
      reveal && e.path ? h('button', { class: 'cw-link', type: 'button', onclick: () => reveal(e.path!) }, where) : h('code', null, where)));
  }
  if (e.problems?.length) out.push(problemList(ctx, e.problems.map(p => ({ p }))));
  return out;
}

/** The problems section of a fit report; remembers whether the user unfolded the whole list. */
export class ProblemsView {
  private allProblems = false;
  constructor(private readonly ctx: ViewContext, readonly el: HTMLElement) {}

  draw(r: FitReport): void {
    const all: ProblemItem[] = r.problems.map(p => ({ p }));
    for (const m of r.models) for (const p of m.problems) all.push({ p, model: m.name });
    all.sort((a, b) => SEVERITY_RANK[a.p.severity] - SEVERITY_RANK[b.p.severity]);
    const el = this.el;
    if (all.length === 0) {
      el.hidden = false;
      el.replaceChildren(h('div', { class: 'cw-ok' }, h('span', { class: 'cw-ok-icon', 'aria-hidden': 'true' }, '\u2714'), ' No problems found'));
      return;
    }
    const counts = { error: 0, warning: 0, info: 0 };
    for (const x of all) counts[x.p.severity]++;
    const summary = (['error', 'warning', 'info'] as const).filter(s => counts[s]).map(s => `${counts[s]} ${s}${counts[s] > 1 ? 's' : ''}`).join(', ');
    el.hidden = false;
    // A long list would push the plot out of sight: show the most severe first and fold the rest (report-level
    // problems and the selected model's come before other models' at the same severity).
    const sel = this.ctx.selectedModel(r)?.name;
    const weight = (x: ProblemItem) => SEVERITY_RANK[x.p.severity] * 3 + (x.model === undefined ? 0 : x.model === sel ? 1 : 2);
    all.sort((a, b) => weight(a) - weight(b));
    // Errors and warnings show first (at most LIMIT); information notes fold behind the button unless they are all
    // there is, so hints do not push the plot out of sight.
    const LIMIT = 6;
    const primary = all.filter(x => x.p.severity !== 'info').length;
    const cap = primary > 0 ? Math.min(LIMIT, primary) : Math.min(2, all.length);
    const foldable = all.length > cap + (primary > LIMIT || primary === 0 ? 1 : 0);
    const folded = !this.allProblems && foldable;
    const shown = folded ? all.slice(0, cap) : all;
    const toggle = foldable
      ? h('button', { class: 'cw-link cw-more', type: 'button', 'aria-expanded': folded ? 'false' : 'true', onclick: () => { this.allProblems = !this.allProblems; this.draw(r); } },
        folded ? `Show all ${all.length} problems` : 'Show fewer')
      : null;
    el.replaceChildren(h('h2', { class: 'cw-h2' }, 'Problems ', h('span', { class: 'cw-count' }, summary)), problemList(this.ctx, shown));
    if (toggle) el.append(toggle);
  }
}

export function problemList(ctx: ViewContext, items: ProblemItem[]): HTMLElement {
  const reveal = ctx.opts.onReveal;
  const revealRow = ctx.opts.onRevealRow;
  return h('ul', { class: 'cw-problem-list' }, items.map(({ p, model }) => {
    const where = p.location ? locationText(p.location) : formatPath(p.path);
    const body: Child[] = [
      h('span', { class: `cw-sev cw-sev-${p.severity}` }, h('span', { class: 'cw-sev-icon', 'aria-hidden': 'true' }, SEVERITY_ICON[p.severity]), ` ${p.severity}`),
      h('span', { class: 'cw-problem-msg' }, p.message),
      h('span', { class: 'cw-problem-meta' }, model ? h('span', { class: 'cw-tag' }, model) : null, h('code', null, p.code), ' ', where),
    ];
    const row = p.location?.row ?? (p.rows && p.rows.length === 1 ? p.rows[0] : undefined);
    const li = h('li', { class: `cw-problem cw-problem-${p.severity}` });
    if (reveal) {
      li.append(h('button', { class: 'cw-problem-btn', type: 'button', title: `Show ${formatPath(p.path)} in the spec`, onclick: () => reveal(p.path) }, body));
    } else {
      li.append(h('div', { class: 'cw-problem-btn' }, body));
    }
    if (revealRow && row !== undefined) {
      li.append(h('button', { class: 'cw-link cw-row-link', type: 'button', title: 'Open the data file at this row', onclick: () => revealRow(row) }, `row ${row}`));
    }
    return li;
  }));
}

// The problem list: problems grouped by code and severity across models ("extrapolation — 4 models, predictions at
// 800 and 1000"), one expandable line each, worst first; inside, each problem is a button that reveals its place in
// the spec (and a link to its data row). Also the error box of a spec that could not be run.
import type { ErrorReport, FitReport, JsonPath, Problem } from '../src/engine/report';
import { fmtNum } from '../src/shared/numberFormat';
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

export function errorBox(ctx: ViewContext, r: ErrorReport, stale = false): Child[] {
  const e = r.error;
  const where = e.location ? locationText(e.location) : e.path ? formatPath(e.path) : '';
  const out: Child[] = [
    h('div', { class: 'cw-error-title' }, h('span', { class: 'cw-sev-icon', 'aria-hidden': 'true' }, SEVERITY_ICON.error),
      stale ? ' This spec cannot be run as it stands \u2014 below, dimmed, the last result that could' : ' This spec could not be run'),
    h('p', { class: 'cw-error-msg' }, e.message),
  ];
  if (where) {
    const reveal = ctx.opts.onReveal;
    const canReveal = reveal && ((e.path && e.path.length > 0) || e.location?.line !== undefined);
    out.push(h('p', { class: 'cw-error-where' }, 'at ',
      canReveal ? h('button', { class: 'cw-link', type: 'button', title: 'Show this place in the spec', onclick: () => reveal!(e.path ?? [], e.location) }, where) : h('code', null, where)));
  }
  // the other problems of the spec (the one in the message is not repeated)
  const more = (e.problems ?? []).filter(p => p.message !== e.message);
  if (more.length) out.push(problemList(ctx, more.map(p => ({ p }))));
  return out;
}

/** One line of the problem list: every problem with the same code and severity, across models. */
export interface ProblemGroup {
  key: string;
  code: string;
  severity: Problem['severity'];
  items: ProblemItem[];
  /** the models it concerns, in report order (empty: the spec or the data) */
  models: string[];
  /** what it concerns, in words: "predictions at 800 and 1000", "rows 1, 14, 15", "parameters A1, c8" ('' if nothing common) */
  subject: string;
}

function listText(xs: string[], max = 6): string {
  const shown = xs.slice(0, max);
  const more = xs.length - shown.length;
  if (more > 0) return `${shown.join(', ')} and ${more} more`;
  return shown.length <= 1 ? shown.join('') : `${shown.slice(0, -1).join(', ')} and ${shown[shown.length - 1]}`;
}

function uniq<T>(xs: T[]): T[] {
  return [...new Set(xs)];
}

/** What the problems of one group concern, read from their paths and rows (the same for every model). */
function subjectOf(r: FitReport, items: ProblemItem[]): string {
  const paths = items.map(x => x.p.path);
  const model = (name?: string) => r.models.find(m => m.name === name);
  if (paths.every(q => q[0] === 'predict' && typeof q[1] === 'number')) {
    const xs = uniq(items.map(({ p, model: name }) => {
      const x = model(name)?.predictions[p.path[1] as number]?.x;
      return x === undefined ? null : typeof x === 'number' ? fmtNum(x, 6) : Object.entries(x).map(([k, v]) => `${k} = ${fmtNum(v, 6)}`).join(', ');
    }).filter((s): s is string => s !== null));
    return xs.length ? `${xs.length === 1 ? 'prediction' : 'predictions'} at ${listText(xs)}` : '';
  }
  if (paths.every(q => q[0] === 'solveFor' && typeof q[1] === 'number')) {
    const ys = uniq(items.map(({ p, model: name }) => model(name)?.inverse[p.path[1] as number]?.y).filter((v): v is number => typeof v === 'number').map(v => fmtNum(v, 6)));
    return ys.length ? `inverse ${ys.length === 1 ? 'prediction' : 'predictions'} at y = ${listText(ys)}` : '';
  }
  const params = items.map(x => x.p.path).filter(q => q[0] === 'models' && q[2] === 'params' && typeof q[3] === 'string');
  if (params.length === items.length) {
    const names = uniq(params.map(q => String(q[3])));
    return `${names.length === 1 ? 'parameter' : 'parameters'} ${listText(names)}`;
  }
  const rows = uniq(items.flatMap(x => x.p.rows ?? (x.p.location?.row !== undefined ? [x.p.location.row] : []))).sort((a, b) => a - b);
  if (rows.length) return `${rows.length === 1 ? 'row' : 'rows'} ${listText(rows.map(String), 8)}`;
  return '';
}

/**
 * The problems of a report grouped by code and severity, worst first: errors, warnings, notes; at the same severity
 * the spec's and data's own problems, then those that touch the selected model, then those touching more models.
 */
export function groupProblems(r: FitReport, selected?: string): ProblemGroup[] {
  const groups = new Map<string, ProblemGroup>();
  const add = (p: Problem, model?: string) => {
    const key = `${p.severity}:${p.code}`;
    let g = groups.get(key);
    if (!g) groups.set(key, (g = { key, code: p.code, severity: p.severity, items: [], models: [], subject: '' }));
    g.items.push({ p, model });
    if (model !== undefined && !g.models.includes(model)) g.models.push(model);
  };
  for (const p of r.problems) add(p);
  for (const m of r.models) for (const p of m.problems) add(p, m.name);
  const out = [...groups.values()];
  for (const g of out) g.subject = subjectOf(r, g.items);
  const own = (g: ProblemGroup) => (g.items.some(x => x.model === undefined) ? 0 : selected !== undefined && g.models.includes(selected) ? 1 : 2);
  out.sort((a, b) => SEVERITY_RANK[a.severity] - SEVERITY_RANK[b.severity] || own(a) - own(b) || b.models.length - a.models.length || a.code.localeCompare(b.code));
  return out;
}

/** Counts per severity: of groups (facts; what the header's chips show) and of single problems. */
export function severityCounts(groups: ProblemGroup[]): Record<Problem['severity'], { groups: number; problems: number }> {
  const c = { error: { groups: 0, problems: 0 }, warning: { groups: 0, problems: 0 }, info: { groups: 0, problems: 0 } };
  for (const g of groups) { c[g.severity].groups++; c[g.severity].problems += g.items.length; }
  return c;
}

/** "extrapolation — 4 models, predictions at 800 and 1000" */
export function groupLine(g: ProblemGroup): string {
  const title = g.code.replace(/-/g, ' ');
  const who = g.models.length === 0 ? '' : g.models.length === 1 ? g.models[0]! : g.models.length === 2 ? `${g.models[0]} and ${g.models[1]}` : `${g.models.length} models`;
  const what = [who, g.subject].filter(Boolean).join(', ');
  return what ? `${title} \u2014 ${what}` : title;
}

export const SEVERITY_WORD: Record<Problem['severity'], [string, string]> = { error: ['error', 'errors'], warning: ['warning', 'warnings'], info: ['note', 'notes'] };

/** The problems section of a fit report: one expandable line per group; remembers which lines the user opened. */
export class ProblemsView {
  private open = new Set<string>();
  constructor(private readonly ctx: ViewContext, readonly el: HTMLElement) {}

  draw(groups: ProblemGroup[]): void {
    const el = this.el;
    for (const d of Array.from(el.querySelectorAll<HTMLDetailsElement>('details[data-group]'))) {
      if (d.open) this.open.add(d.dataset.group!); else this.open.delete(d.dataset.group!);
    }
    el.hidden = false;
    if (groups.length === 0) {
      el.replaceChildren(h('h2', { class: 'cw-h2' }, 'Problems'), h('div', { class: 'cw-ok' }, h('span', { class: 'cw-ok-icon', 'aria-hidden': 'true' }, '\u2714'), ' No problems found'));
      return;
    }
    const total = groups.reduce((s, g) => s + g.items.length, 0);
    const lines = groups.map(g => {
      const word = SEVERITY_WORD[g.severity][0];
      const summary = h('summary', { class: 'cw-group-sum' },
        h('span', { class: `cw-sev cw-sev-${g.severity}` }, h('span', { class: 'cw-sev-icon', 'aria-hidden': 'true' }, SEVERITY_ICON[g.severity]), h('span', { class: 'cw-sr' }, `${word}: `)),
        h('span', { class: 'cw-group-line' }, groupLine(g)),
        g.items.length > 1 ? h('span', { class: 'cw-count', title: `${g.items.length} problems with code ${g.code}` }, `\u00d7${g.items.length}`) : null);
      return h('li', { class: `cw-group cw-problem-${g.severity}` },
        h('details', { 'data-group': g.key, 'data-severity': g.severity, open: this.open.has(g.key) }, summary, problemList(this.ctx, g.items)));
    });
    el.replaceChildren(
      h('h2', { class: 'cw-h2', id: 'cw-problems-title' }, 'Problems ', h('span', { class: 'cw-count' }, total === groups.length ? `${total}` : `${total} in ${groups.length} groups`)),
      h('ul', { class: 'cw-group-list', 'aria-labelledby': 'cw-problems-title' }, lines));
  }

  /** Open the first line of this severity, scroll to it and focus it (the header's chips call this). */
  focus(severity: Problem['severity']): void {
    const d = this.el.querySelector<HTMLDetailsElement>(`details[data-severity="${severity}"]`);
    if (!d) return;
    d.open = true;
    const s = d.querySelector('summary');
    s?.scrollIntoView({ block: 'start' });
    s?.focus();
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

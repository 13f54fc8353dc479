// The tables and cards under the plot: model comparison (with the nested-model F-tests), one card per model
// (parameters, fit statistics, residual tests, predictions, inverse predictions, correlation), expectations, data.
// They only format what the report holds (numbers through src/shared/numberFormat.ts).
import type { FitReport, ModelReport } from '../src/engine/report';
import { MISSING, fmtEstimate, fmtInt, fmtInterval, fmtNum, fmtP, fmtPct, fmtR2 } from '../src/shared/numberFormat';
import { h, lineSwatch, type Child } from './dom';
import type { ViewContext } from './state';
import { dashFor } from './theme';

/** The cards under the plot: `tables` (comparison, one card per model, open or folded as `isOpen` says) come before
 *  the problem list, `rest` (expectations, data, provenance) after it. */
export function reportBody(ctx: ViewContext, r: FitReport, sel: ModelReport | undefined, isOpen: (m: ModelReport, selected: boolean) => boolean): { tables: Node[]; rest: Node[] } {
  const tables: Node[] = [];
  if (r.models.length > 1 || r.comparison) tables.push(comparisonCard(ctx, r, sel));
  tables.push(h('div', { class: 'cw-models' }, r.models.map((m, i) => modelCard(ctx, r, m, i, m.name === sel?.name, isOpen(m, m.name === sel?.name)))));
  const rest: Node[] = [];
  if (r.expect.length) rest.push(expectCard(r));
  rest.push(dataCard(ctx, r));
  rest.push(h('footer', { class: 'cw-foot' }, `${r.meta.engine} \u00b7 spec ${r.meta.specHash.slice(0, 15)} \u00b7 data ${r.meta.dataHash.slice(0, 15)} \u00b7 seed ${r.meta.seed}`));
  return { tables, rest };
}

export function comparisonCard(ctx: ViewContext, r: FitReport, sel: ModelReport | undefined): HTMLElement {
  const c = r.comparison;
  const byName = new Map(r.models.map(m => [m.name, m] as const));
  const ranking = c?.ranking.length ? c.ranking : r.models.map(m => ({ name: m.name, aicc: m.stats.aicc, deltaAicc: null, weight: null, cvRmse: m.stats.cvRmse }));
  const rows = ranking.map((row, k) => {
    const m = byName.get(row.name);
    const free = m ? m.paramOrder.filter(p => !m.params[p]?.fixed).length : null;
    const best = r.best === row.name;
    const w = row.weight;
    const weightCell = w === null ? MISSING : h('span', { class: 'cw-weight' },
      h('span', { class: 'cw-bar' }, h('meter', { min: 0, max: 1, value: Math.max(0, Math.min(1, w)), class: 'cw-meter' })), ' ', fmtPct(w));
    const tr = h('tr', { class: `${best ? 'cw-best ' : ''}${row.name === sel?.name ? 'cw-selected' : ''}`, 'data-model': row.name, title: 'Show this model in the plot' },
      h('td', { class: 'num' }, String(k + 1)),
      h('td', null, lineSwatch(ctx.modelColor(r, row.name), dashFor(ctx.modelIndex(r, row.name)), ctx.theme.lineWidth), ' ', h('span', { class: 'cw-model-name' }, row.name),
        best ? h('span', { class: 'cw-badge cw-badge-best' }, '\u2605 best') : null,
        m?.status === 'failed' ? h('span', { class: 'cw-badge cw-badge-bad' }, 'failed') : null),
      h('td', { class: 'num' }, free === null ? MISSING : String(free)),
      h('td', { class: 'num' }, fmtNum(row.aicc, 5)),
      h('td', { class: 'num' }, fmtNum(row.deltaAicc, 3)),
      h('td', { class: 'num' }, weightCell),
      h('td', { class: 'num' }, fmtNum(row.cvRmse, 4)),
      h('td', { class: 'num' }, fmtR2(m?.stats.r2)),
    );
    tr.tabIndex = 0;
    tr.addEventListener('click', () => ctx.select(row.name));
    tr.addEventListener('keydown', ev => {
      if (ev.key === 'Enter' || ev.key === ' ') { ev.preventDefault(); ctx.select(row.name); }
    });
    return tr;
  });
  const parts: Child[] = [
    h('h2', { class: 'cw-h2' }, 'Model comparison'),
    h('div', { class: 'cw-table-wrap', role: 'region', tabindex: 0, 'aria-label': 'Model comparison' }, h('table', { class: 'cw-table cw-compare' },
      h('thead', null, h('tr', null, th('#'), th('model', 'l'), th('k', undefined, 'free parameters'), th('AICc', undefined, 'corrected Akaike information criterion (lower is better)'),
        th('\u0394AICc', undefined, 'difference to the lowest AICc'), th('Akaike weight'), th('CV RMSE', undefined, 'cross-validated root mean square error'), th('R\u00b2'))),
      h('tbody', null, rows))),
  ];
  if (c?.reason) parts.push(h('p', { class: 'cw-reason' }, c.reason));
  if (c?.fTests.length) {
    parts.push(h('h3', { class: 'cw-h3' }, 'Nested models: extra-sum-of-squares F-tests'),
      h('div', { class: 'cw-table-wrap' }, h('table', { class: 'cw-table' },
        h('thead', null, h('tr', null, th('simpler', 'l'), th('richer', 'l'), th('F'), th('df\u2081'), th('df\u2082'), th('p'))),
        h('tbody', null, c.fTests.map(f => h('tr', null, h('td', null, f.simpler), h('td', null, f.richer),
          h('td', { class: 'num' }, fmtNum(f.F, 4)), h('td', { class: 'num' }, String(f.df1)), h('td', { class: 'num' }, String(f.df2)), h('td', { class: 'num' }, fmtP(f.p))))))));
  }
  return h('section', { class: 'cw-card cw-comparison' }, parts);
}

export function modelCard(ctx: ViewContext, r: FitReport, m: ModelReport, i: number, selected: boolean, open: boolean): HTMLElement {
  const conf = `${fmtNum(r.confidence * 100, 3)}\u2009%`;
  const summary = h('summary', { class: 'cw-model-sum' },
    lineSwatch(ctx.modelColor(r, m.name), dashFor(i), ctx.theme.lineWidth), ' ',
    h('span', { class: 'cw-model-name' }, m.name),
    r.best === m.name ? h('span', { class: 'cw-badge cw-badge-best' }, '\u2605 best') : null,
    m.status === 'failed' ? h('span', { class: 'cw-badge cw-badge-bad' }, 'failed') : null,
    h('span', { class: 'cw-kind' }, m.kind === 'polynomial' ? 'polynomial' : m.kind === 'builtin' ? 'built-in' : 'formula'),
    h('code', { class: 'cw-formula' }, m.formula),
  );
  const s = m.stats;
  const paramRows = m.paramOrder.map(name => {
    const p = m.params[name];
    if (!p) return null;
    const rel = typeof p.se === 'number' && typeof p.value === 'number' && p.value !== 0 ? p.se / Math.abs(p.value) : null;
    const notes: Child[] = [];
    if (p.fixed) notes.push(h('span', { class: 'cw-badge' }, 'fixed'));
    if (p.atBound) notes.push(h('span', { class: 'cw-badge cw-badge-warn' }, p.atBound === 'min' ? 'at lower bound' : 'at upper bound'));
    const f = (v: number | null) => fmtEstimate(v, p.se);
    return h('tr', { class: p.fixed ? 'cw-fixed' : null },
      h('td', null, h('code', null, name)),
      h('td', { class: 'num cw-strong' }, f(p.value)),
      h('td', { class: 'num' }, fmtNum(p.se, 3)),
      h('td', { class: 'num' }, fmtPct(rel)),
      h('td', { class: 'num' }, p.fixed ? MISSING : fmtInterval(p.ci, f)),
      h('td', { class: 'num' }, p.fixed ? MISSING : fmtInterval(p.profileCi, f)),
      h('td', { class: 'num' }, fmtP(p.p)),
      h('td', null, notes));
  });
  const paramTable = h('div', { class: 'cw-table-wrap', role: 'region', tabindex: 0, 'aria-label': `Parameters of ${m.name}` }, h('table', { class: 'cw-table cw-params' },
    h('thead', null, h('tr', null, th('parameter', 'l'), th('estimate'), th('SE', undefined, 'standard error'), th('rel. SE', undefined, 'standard error relative to the estimate'),
      th(`${conf} CI (Wald)`), th(`${conf} CI (profile)`, undefined, 'profile-likelihood interval; \u2014 marks a bound that does not exist'), th('p', undefined, 'two-sided p-value of t = estimate/SE'), th('', 'l'))),
    h('tbody', null, paramRows)));

  const stat = (label: string, value: string, title?: string) => [h('dt', title ? { title } : null, label), h('dd', null, value)];
  const statsList = h('dl', { class: 'cw-stats' },
    stat(s.r2Uncentred ? 'R\u00b2 (uncentred)' : 'R\u00b2', fmtR2(s.r2)),
    stat('adjusted R\u00b2', fmtR2(s.adjR2)),
    stat('\u03c3 (residual SE)', fmtNum(s.sigma, 4), 'sqrt(SSE / dof)'),
    stat('RMSE', fmtNum(s.rmse, 4), 'sqrt(SSE / n)'),
    stat('SSE', fmtNum(s.sse, 5)),
    stat('n', fmtInt(s.n)),
    stat('dof', fmtInt(s.dof)),
    s.chi2 !== null ? stat('\u03c7\u00b2', fmtNum(s.chi2, 5)) : null,
    s.reducedChi2 !== null ? stat('reduced \u03c7\u00b2', fmtNum(s.reducedChi2, 4)) : null,
    s.chi2P !== undefined && s.chi2P !== null ? stat('\u03c7\u00b2 p', fmtP(s.chi2P)) : null,
    stat('log-likelihood', fmtNum(s.logLik, 6)),
    stat('AIC', fmtNum(s.aic, 6)),
    stat('AICc', fmtNum(s.aicc, 6)),
    stat('BIC', fmtNum(s.bic, 6)),
    stat(s.cvFolds ? `CV RMSE (${s.cvFolds}-fold)` : 'CV RMSE', fmtNum(s.cvRmse, 4)),
  );
  const solver = h('p', { class: 'cw-solver' },
    m.status === 'converged' ? h('span', { class: 'cw-ok-text' }, '\u2714 converged') : h('span', { class: 'cw-bad-text' }, '\u2716 failed'),
    ` \u00b7 ${m.termination.replace(/-/g, ' ')} \u00b7 ${m.iterations} iteration${m.iterations === 1 ? '' : 's'}`,
    m.linear ? ' \u00b7 linear in its parameters' : '',
    m.start ? ` \u00b7 start: ${m.start.source}` : '');

  const wide: Child[] = [h('h3', { class: 'cw-h3' }, 'Parameters'), paramTable];
  const rt = m.residualTests;
  if (rt) {
    const rows: Child[] = [];
    if (rt.runs) rows.push(h('tr', null, h('td', null, 'runs test'), h('td', { class: 'num' }, `${rt.runs.runs} runs (expected ${fmtNum(rt.runs.expected, 3)})`), h('td', { class: 'num' }, `z = ${fmtNum(rt.runs.z, 3)}`), h('td', { class: 'num' }, fmtP(rt.runs.p))));
    if (rt.normality) rows.push(h('tr', null, h('td', null, rt.normality.test === 'shapiro-wilk' ? 'Shapiro\u2013Wilk' : 'D\u2019Agostino\u2013Pearson K\u00b2'),
      h('td', { class: 'num' }, `${rt.normality.test === 'shapiro-wilk' ? 'W' : 'K\u00b2'} = ${fmtNum(rt.normality.statistic, 4)}`), h('td', null, ''), h('td', { class: 'num' }, fmtP(rt.normality.p))));
    if (rt.durbinWatson !== null) rows.push(h('tr', null, h('td', null, 'Durbin\u2013Watson'), h('td', { class: 'num' }, `d = ${fmtNum(rt.durbinWatson, 3)}`), h('td', null, ''), h('td', { class: 'num' }, MISSING)));
    if (rows.length) wide.push(h('h3', { class: 'cw-h3' }, 'Residual tests'), h('div', { class: 'cw-table-wrap', role: 'region', tabindex: 0, 'aria-label': `Residual tests of ${m.name}` }, h('table', { class: 'cw-table cw-tests' },
      h('thead', null, h('tr', null, th('test', 'l'), th('statistic'), th(''), th('p'))), h('tbody', null, rows))));
  }
  const sections: Child[] = [solver, h('div', { class: 'cw-grid' },
    h('div', { class: 'cw-col-wide' }, wide),
    h('div', { class: 'cw-col' }, h('h3', { class: 'cw-h3' }, 'Fit statistics'), statsList))];
  if (m.predictions.length) {
    sections.push(h('h3', { class: 'cw-h3' }, 'Predictions'), h('div', { class: 'cw-table-wrap', role: 'region', tabindex: 0, 'aria-label': `Predictions of ${m.name}` }, h('table', { class: 'cw-table cw-predictions' },
      h('thead', null, h('tr', null, th('x'), th('\u0177'), th(`${conf} CI of the mean`), th(`${conf} prediction interval`), th('', 'l'))),
      h('tbody', null, m.predictions.map(p => h('tr', null,
        h('td', { class: 'num' }, typeof p.x === 'number' ? fmtNum(p.x, 6) : Object.entries(p.x).map(([k, v]) => `${k} = ${fmtNum(v, 6)}`).join(', ')),
        h('td', { class: 'num cw-strong' }, fmtNum(p.y, 5)),
        h('td', { class: 'num' }, fmtInterval(p.ci, v => fmtNum(v, 5))),
        h('td', { class: 'num' }, fmtInterval(p.pi, v => fmtNum(v, 5))),
        h('td', null, p.extrapolated ? extrapolatedBadge() : null)))))));
    // the weight of the new observation in the prediction intervals (weighted fits, or spec predictWeight)
    const weighted = m.predictions.filter(p => p.weight);
    if (weighted.length) {
      const fromSpec = weighted[0].weight!.from === 'spec';
      sections.push(h('p', { class: 'cw-muted cw-note' }, fromSpec
        ? `Prediction intervals use the weight ${fmtNum(weighted[0].weight!.value, 4)} for a new observation (predictWeight in the spec).`
        : `Prediction intervals use, for a new observation, the weight of the observation nearest in x (${weighted.map(p => fmtNum(p.weight!.value, 4)).join(', ')}); set predictWeight in the spec to give it explicitly.`));
    }
  }
  if (m.inverse.length) {
    const rows: Child[] = [];
    for (const inv of m.inverse) {
      if (inv.roots.length === 0) {
        rows.push(h('tr', null, h('td', { class: 'num' }, fmtNum(inv.y, 6)), h('td', { class: 'cw-muted', colspan: 2 }, 'no x gives this y'), h('td', null, inv.extrapolated ? extrapolatedBadge() : null)));
        continue;
      }
      inv.roots.forEach((root, k) => rows.push(h('tr', null,
        h('td', { class: 'num' }, k === 0 ? fmtNum(inv.y, 6) : ''),
        h('td', { class: 'num cw-strong' }, fmtNum(root.x, 5)),
        h('td', { class: 'num' }, fmtInterval(root.interval, v => fmtNum(v, 5))),
        h('td', null, inv.extrapolated ? extrapolatedBadge() : null))));
    }
    sections.push(h('h3', { class: 'cw-h3' }, 'Inverse predictions (x for a given y)'), h('div', { class: 'cw-table-wrap', role: 'region', tabindex: 0, 'aria-label': `Inverse predictions of ${m.name}` }, h('table', { class: 'cw-table cw-inverse' },
      h('thead', null, h('tr', null, th('y'), th('x'), th(`${conf} interval`), th('', 'l'))), h('tbody', null, rows))));
  }
  if (m.correlation && m.paramOrder.length > 1) {
    sections.push(h('details', { class: 'cw-sub-details' }, h('summary', null, 'Parameter correlation'), correlationTable(m)));
  }
  const details = h('details', { class: `cw-card cw-model${selected ? ' cw-model-selected' : ''}`, 'data-model': m.name, open }, summary, h('div', { class: 'cw-model-body' }, sections));
  return details;
}

function correlationTable(m: ModelReport): HTMLElement {
  const c = m.correlation!;
  return h('div', { class: 'cw-table-wrap', role: 'region', tabindex: 0, 'aria-label': `Parameter correlation of ${m.name}` }, h('table', { class: 'cw-table cw-corr' },
    h('thead', null, h('tr', null, th('', 'l'), m.paramOrder.map(p => th(p)))),
    h('tbody', null, m.paramOrder.map((p, i) => h('tr', null, h('td', null, h('code', null, p)),
      m.paramOrder.map((_q, j) => {
        const v = c[i]?.[j] ?? null;
        const strong = v !== null && i !== j && Math.abs(v) >= 0.95;
        return h('td', { class: `num${strong ? ' cw-strong cw-warn-text' : ''}` }, i === j ? '1' : fmtNum(v, 3));
      }))))));
}

function expectCard(r: FitReport): HTMLElement {
  return h('section', { class: 'cw-card' }, h('h2', { class: 'cw-h2' }, 'Expectations'),
    h('div', { class: 'cw-table-wrap' }, h('table', { class: 'cw-table' },
      h('thead', null, h('tr', null, th('model', 'l'), th('parameter', 'l'), th('expected'), th('tolerance'), th('actual'), th('', 'l'))),
      h('tbody', null, r.expect.map(e => h('tr', null, h('td', null, e.model), h('td', null, h('code', null, e.param)),
        h('td', { class: 'num' }, fmtNum(e.value, 6)),
        h('td', { class: 'num' }, e.tol !== undefined ? `\u00b1${fmtNum(e.tol, 3)}` : e.rel !== undefined ? `\u00b1${fmtPct(e.rel)}` : MISSING),
        h('td', { class: 'num' }, fmtNum(e.actual, 6)),
        h('td', null, e.ok ? h('span', { class: 'cw-ok-text' }, '\u2714 met') : h('span', { class: 'cw-bad-text' }, '\u2716 not met'))))))));
}

function dataCard(ctx: ViewContext, r: FitReport): HTMLElement {
  const d = r.data;
  const rangeX = Array.isArray(d.range.x) ? [['x', d.range.x] as const] : Object.entries(d.range.x);
  const stat = (label: string, value: Child) => [h('dt', null, label), h('dd', null, value)];
  const list = h('dl', { class: 'cw-stats cw-data-stats' },
    stat('file', h('code', null, d.file)),
    stat('rows read', fmtInt(d.rows)),
    stat('rows used', fmtInt(d.used)),
    d.filtered ? stat('left out by where', fmtInt(d.filtered)) : null,
    stat('dropped (bad cells)', fmtInt(d.dropped.length)),
    stat('excluded on purpose', fmtInt(d.excluded.length)),
    rangeX.map(([k, v]) => stat(`range of ${k}`, fmtInterval(v, x => fmtNum(x, 5)))),
    stat('range of y', fmtInterval(d.range.y, x => fmtNum(x, 5))),
    Object.entries(d.correlation).map(([k, v]) => stat(`Pearson r (y, ${k})`, fmtNum(v, 4))),
  );
  const parts: Child[] = [h('h2', { class: 'cw-h2' }, 'Data'), list];
  const LIMIT = 50;
  if (d.dropped.length) {
    parts.push(h('h3', { class: 'cw-h3' }, 'Dropped rows'), h('div', { class: 'cw-table-wrap' }, h('table', { class: 'cw-table' },
      h('thead', null, h('tr', null, th('row'), th('line'), th('column', 'l'), th('reason', 'l'))),
      h('tbody', null, d.dropped.slice(0, LIMIT).map(x => h('tr', null, h('td', { class: 'num' }, rowLink(ctx, x.row)), h('td', { class: 'num' }, String(x.line)), h('td', null, x.column), h('td', null, x.reason)))))));
    if (d.dropped.length > LIMIT) parts.push(h('p', { class: 'cw-muted' }, `\u2026 and ${fmtInt(d.dropped.length - LIMIT)} more`));
  }
  if (d.excluded.length) {
    parts.push(h('h3', { class: 'cw-h3' }, 'Excluded rows'), h('div', { class: 'cw-table-wrap' }, h('table', { class: 'cw-table' },
      h('thead', null, h('tr', null, th('row'), th('reason', 'l'))),
      h('tbody', null, d.excluded.slice(0, LIMIT).map(x => h('tr', null, h('td', { class: 'num' }, rowLink(ctx, x.row)), h('td', null, x.reason)))))));
    if (d.excluded.length > LIMIT) parts.push(h('p', { class: 'cw-muted' }, `\u2026 and ${fmtInt(d.excluded.length - LIMIT)} more`));
  }
  return h('section', { class: 'cw-card cw-data' }, parts);
}

function rowLink(ctx: ViewContext, row: number): Child {
  const revealRow = ctx.opts.onRevealRow;
  return revealRow ? h('button', { class: 'cw-link', type: 'button', title: 'Open the data file at this row', onclick: () => revealRow(row) }, String(row)) : String(row);
}

export function th(text: string, align?: 'l', title?: string): HTMLTableCellElement {
  return h('th', { class: align === 'l' ? 'l' : 'num', scope: 'col', title }, text);
}

function extrapolatedBadge(): HTMLElement {
  return h('span', { class: 'cw-badge cw-badge-warn', title: 'outside the range of the data: the model is extrapolated' }, '\u26a0 extrapolated');
}

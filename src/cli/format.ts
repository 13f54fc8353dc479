// Human-readable text of run results: the per-spec summary table of `fit`, problem lines, and check verdicts.
// Numbers are rounded here for reading only; the JSON never is.
import * as path from 'path';
import { allProblems, pathText } from '../shared/reportText';
import { fmtCli as num } from '../shared/numberFormat';
import type { ErrorReport, FitReport, ModelReport, Problem } from '../engine/report';

function table(rows: string[][], indent = '  '): string[] {
  const widths = rows[0].map((_, j) => Math.max(...rows.map(r => (r[j] ?? '').length)));
  return rows.map(r => indent + r.map((c, j) => (j === r.length - 1 ? c : c.padEnd(widths[j]))).join('  ').trimEnd());
}

/** Natural order of names: digit runs compare as numbers (chick2 before chick10), the rest as text. */
export function naturalCompare(a: string, b: string): number {
  const ta = a.match(/\d+|\D+/g) ?? [];
  const tb = b.match(/\d+|\D+/g) ?? [];
  for (let i = 0; i < Math.min(ta.length, tb.length); i++) {
    const x = ta[i];
    const y = tb[i];
    if (x === y) continue;
    const dx = /^\d/.test(x);
    const dy = /^\d/.test(y);
    if (dx && dy) {
      const nx = x.replace(/^0+(?=\d)/, '');
      const ny = y.replace(/^0+(?=\d)/, '');
      if (nx.length !== ny.length) return nx.length - ny.length;
      if (nx !== ny) return nx < ny ? -1 : 1;
      if (x.length !== y.length) return x.length - y.length;
      continue;
    }
    return x < y ? -1 : 1;
  }
  return ta.length - tb.length;
}

/** Every parameter as "name=value±SE", wrapped into lines of at most `width` characters. */
export function paramLines(m: ModelReport, width = 60): string[] {
  const parts = m.paramOrder.map(n => {
    const p = m.params[n];
    if (!p) return `${n}=—`;
    const se = p.fixed ? ' (fixed)' : p.se !== null && Number.isFinite(p.se) ? `±${num(p.se, 2)}` : '';
    return `${n}=${num(p.value)}${se}`;
  });
  const lines: string[] = [];
  for (const part of parts) {
    const last = lines.length - 1;
    if (last >= 0 && lines[last].length + 1 + part.length <= width) lines[last] += ` ${part}`;
    else lines.push(part);
  }
  return lines.length ? lines : [''];
}

/** "file:line:column" (or "file row N", or "file") for a problem: the spec, or a data file named relative to the spec's folder. */
export function where(p: { location?: Problem['location'] }, specShown: string): string {
  const loc = p.location;
  if (!loc) return specShown;
  const isSpec = !loc.file || path.basename(loc.file) === path.basename(specShown);
  const file = isSpec ? specShown : path.isAbsolute(loc.file) ? loc.file : path.join(path.dirname(specShown), loc.file).split(path.sep).join('/');
  if (loc.line !== undefined) return `${file}:${loc.line}${typeof loc.column === 'number' ? `:${loc.column}` : ''}`;
  if (loc.row !== undefined) return `${file} row ${loc.row}`;
  return file;
}


export function problemLine(p: Problem, specShown: string): string {
  const at = p.path && p.path.length ? ` [${pathText(p.path)}]` : '';
  return `${where(p, specShown)}: ${p.severity}${at}: ${p.message} (${p.code})`;
}

export { allProblems, num };

/** Text of an ErrorReport: the spec's place, the message, and every problem found. */
export function errorText(r: ErrorReport, specShown: string): string {
  const lines: string[] = [];
  const problems = r.error.problems ?? [];
  if (problems.length) {
    for (const p of problems) {
    const line = problemLine(p, specShown);
    lines.push(line.startsWith(specShown) ? line : `${line} (spec ${specShown})`);
  }
  } else {
    const jp = r.error.path && r.error.path.length ? ` [${pathText(r.error.path)}]` : '';
    const at = where(r.error, specShown);
    lines.push(`${at}: error${jp}: ${r.error.message}${at.startsWith(specShown) ? '' : ` (spec ${specShown})`}`);
  }
  return lines.join('\n');
}

/** The summary `fit` prints for one spec; `verbose` lists the info notes too (otherwise only their count). */
export function summaryText(r: FitReport, specShown: string, written: string | null, verbose = false): string {
  const out: string[] = [];
  out.push(`${specShown}${r.title ? ` — ${r.title}` : ''}`);
  const d = r.data;
  const notes: string[] = [];
  if (d.filtered) notes.push(`${d.filtered} filtered by where`);
  if (d.dropped.length) notes.push(`${d.droppedTotal ?? d.dropped.length} dropped`);
  if (d.excluded.length) notes.push(`${d.excluded.length} excluded`);
  out.push(`  data: ${d.file}, ${d.used} of ${d.rows} rows used${notes.length ? ` (${notes.join(', ')})` : ''}`);
  const rows: string[][] = [['', 'model', 'status', 'parameters (± SE)', 'AICc', 'R²', 'problems']];
  for (const m of r.models) {
    const status = m.status === 'converged' ? 'converged' : `FAILED (${m.termination})`;
    const counted = m.problems.filter(p => p.severity !== 'info').length;
    const [first, ...rest] = paramLines(m);
    rows.push([r.best === m.name ? '*' : '', m.name, status, first, num(m.stats.aicc, 5), num(m.stats.r2, 5), String(counted)]);
    for (const more of rest) rows.push(['', '', '', more, '', '', '']);
  }
  out.push(...table(rows));
  for (const t of r.comparison?.fTests ?? []) {
    out.push(`  F-test ${t.simpler} vs ${t.richer}: F = ${num(t.F)} on ${t.df1} and ${t.df2} df, p = ${num(t.p, 3)}`);
  }
  if (r.comparison && r.best) out.push(`  best: ${r.best}${r.comparison.reason ? ` — ${r.comparison.reason}` : ''}`);
  const best = r.models.find(m => m.name === r.best) ?? r.models.find(m => m.status === 'converged');
  if (best) {
    for (const p of best.predictions) {
      const x = typeof p.x === 'number' ? num(p.x) : Object.entries(p.x).map(([k, v]) => `${k}=${num(v)}`).join(', ');
      out.push(`  predict (${best.name}) at ${x}: ${num(p.y, 5)}${p.ci ? ` [${num(p.ci[0])}, ${num(p.ci[1])}]` : ''}${p.extrapolated ? ' (extrapolated)' : ''}`);
    }
    for (const inv of best.inverse) {
      const roots = inv.roots.length
        ? inv.roots.map(rt => `${num(rt.x)} [${num(rt.interval[0])}, ${num(rt.interval[1])}]`).join(' or ')
        : 'no x in range gives this y';
      out.push(`  inverse prediction (${best.name}) at y = ${num(inv.y, 6)}: back-calculated x = ${roots}${inv.extrapolated ? ' (extrapolated)' : ''}`);
    }
  }
  if (r.expect.length) {
    const met = r.expect.filter(e => e.ok).length;
    out.push(`  expect: ${met} of ${r.expect.length} met${met < r.expect.length ? ` — ${r.expect.filter(e => !e.ok).map(expectText).join('; ')}` : ''}`);
  }
  // one line per (model, code): the first message, and how many more of the same kind
  const groups = new Map<string, { problem: Problem; model?: string; count: number }>();
  let infos = 0;
  for (const x of allProblems(r)) {
    if (x.problem.severity === 'info') infos++;
    if (x.problem.severity === 'info' && !verbose) continue;
    const key = `${x.model ?? ''}\u0000${x.problem.code}\u0000${x.problem.severity}`;
    const g = groups.get(key);
    if (g) g.count++;
    else groups.set(key, { ...x, count: 1 });
  }
  const list = [...groups.values()];
  const shownGroups = list.slice(0, 12);
  for (const { problem, model, count } of shownGroups) {
    const named = model !== undefined && !problem.message.startsWith(`${model}:`);
    const more = count > 1 ? ` (+${count - 1} more like it)` : '';
    out.push(`  ${problem.severity}${named ? ` (${model})` : ''}: ${problem.message} [${problem.code}]${more}`);
  }
  if (list.length > shownGroups.length) out.push(`  … and ${list.length - shownGroups.length} more kinds of problem (see the results file or --json)`);
  if (infos && !verbose) out.push(`  ${infos} info note${infos === 1 ? '' : 's'} (--verbose shows ${infos === 1 ? 'it' : 'them'})`);
  if (written) out.push(`  wrote ${written}`);
  return out.join('\n');
}

export function expectText(e: FitReport['expect'][number]): string {
  const allowed = e.tol !== undefined ? `± ${num(e.tol)}` : `± ${num((e.rel ?? 0) * 100)} %`;
  const got = e.actual === null ? 'no estimate (model failed or parameter unknown)' : `got ${num(e.actual, 6)}`;
  return `${e.model}.${e.param} = ${num(e.value, 6)} ${allowed}: ${got}`;
}

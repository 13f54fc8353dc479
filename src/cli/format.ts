// Human-readable text of run results: the per-spec summary table of `fit`, problem lines, and check verdicts.
// Numbers are rounded here for reading only; the JSON never is.
import * as path from 'path';
import { allProblems, pathText } from '../shared/reportText';
import { fmtCli as num } from '../shared/numberFormat';
import { oneLine } from '../shared/terminalText';
import type { ErrorReport, FitReport, ModelReport, Problem, UnknownReport } from '../engine/report';

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
  return oneLine(`${where(p, specShown)}: ${p.severity}${at}: ${p.message} (${p.code})`);
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
  return lines.map(oneLine).join('\n');
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
  if (r.groups) out.push(`  groups: ${r.groups.length} (${groupByText(r)}), each model fitted to each group; * marks the best model within a group`);
  const grouped = r.groups !== undefined;
  const rows: string[][] = [['', ...(grouped ? ['group'] : []), 'model', 'status', 'parameters (± SE)', 'AICc', 'R²', 'problems']];
  const shown = grouped && r.models.length > MAX_GROUP_ROWS ? foldedModels(r) : r.models;
  for (const m of shown) {
    const status = m.status === 'converged' ? 'converged' : `FAILED (${m.termination})`;
    const counted = m.problems.filter(p => p.severity !== 'info').length;
    const best = grouped ? r.comparison?.byGroup?.[m.group as string]?.best === m.name : r.best === m.name;
    const [first, ...rest] = m.group === null ? jointParamLines(m, r.groups?.length ?? 0) : paramLines(m);
    rows.push([best ? '*' : '', ...(grouped ? [m.group === null ? 'all (joint)' : m.group ?? ''] : []), m.name, status, first, num(m.stats.aicc, 5), num(m.stats.r2, 5), String(counted)]);
    for (const more of rest) rows.push(['', ...(grouped ? [''] : []), '', '', more, '', '', '']);
  }
  out.push(...table(rows));
  const how = fitMethodLine(r);
  if (how) out.push(how);
  if (shown.length < r.models.length) {
    const failed = r.models.filter(m => m.status !== 'converged').length;
    out.push(`  … ${r.models.length - shown.length} more rows not shown (${r.models.length} fits in all: ${r.models.length - failed} converged, ${failed} failed; failed fits are always among the rows shown, up to ${MAX_GROUP_ROWS / 2}) — see --json or the results file`);
  }
  if (grouped && r.comparison?.byGroup) {
    const tally = new Map<string, number>();
    for (const c of Object.values(r.comparison.byGroup)) if (c.best) tally.set(c.best, (tally.get(c.best) ?? 0) + 1);
    if (tally.size) out.push(`  best within groups: ${[...tally.entries()].map(([k, v]) => `${k} in ${v} of ${r.groups!.length}`).join(', ')}`);
  }
  for (const t of r.comparison?.sharing ?? []) {
    const test = t.F !== null && t.p !== null ? `F = ${num(t.F)} on ${t.df1} and ${t.df2} df, p = ${num(t.p, 3)}; ` : '';
    const ic = t.aiccShared !== null && t.aiccSeparate !== null ? `AICc ${num(t.aiccShared, 5)} joint vs ${num(t.aiccSeparate, 5)} separate; ` : '';
    out.push(`  shared ${t.shared.join(', ')} (${t.model} vs ${t.separate ?? 'separate fits'}): ${test}${ic}${t.verdict}`);
  }
  for (const t of r.comparison?.fTests ?? []) {
    out.push(`  F-test ${t.simpler} vs ${t.richer}: F = ${num(t.F)} on ${t.df1} and ${t.df2} df, p = ${num(t.p, 3)}`);
  }
  if (r.comparison && r.best) out.push(`  best: ${r.best}${r.comparison.reason ? ` — ${r.comparison.reason}` : ''}`);
  const best = grouped ? undefined : r.models.find(m => m.name === r.best) ?? r.models.find(m => m.status === 'converged');
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
  if (r.derived?.length) {
    const shownD = r.derived.slice(0, MAX_GROUP_ROWS);
    const conf = `${num(r.confidence * 100, 3)} %`;
    for (const d of shownD)
      out.push(`  derived ${d.name} (${d.model}${d.group !== null ? `, group ${d.group}` : ''}): ${num(d.value, 5)}${d.se !== null ? ` ± ${num(d.se, 2)}` : ''}${d.ci ? ` [${num(d.ci[0])}, ${num(d.ci[1])}] (${conf} Wald)` : ''}`);
    if (r.derived.length > shownD.length) out.push(`  … ${r.derived.length - shownD.length} more derived values — see --json or the results file`);
  }
  out.push(...calibrationLines(r));
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
    const more = count > 1 ? ` (+${count - 1} more like it${problem.group !== undefined ? ' in other groups' : ''})` : '';
    const who = [named ? model : undefined, problem.group !== undefined ? `group ${problem.group}` : undefined].filter(Boolean).join(', ');
    out.push(`  ${problem.severity}${who ? ` (${who})` : ''}: ${problem.message} [${problem.code}]${more}`);
  }
  if (list.length > shownGroups.length) out.push(`  … and ${list.length - shownGroups.length} more kinds of problem (see the results file or --json)`);
  if (infos && !verbose) out.push(`  ${infos} info note${infos === 1 ? '' : 's'} (--verbose shows ${infos === 1 ? 'it' : 'them'})`);
  if (written) out.push(`  wrote ${written}`);
  // user text (title, names, messages quoting them) can hold control characters: each line is one escaped line
  return out.map(oneLine).join('\n');
}

/** One line naming every fit that is not plain least squares: robust loss, errors in x, variance function (first fit of each model). */
export function fitMethodLine(r: FitReport): string | null {
  const parts: string[] = [];
  const seen = new Set<string>();
  for (const m of r.models) {
    if (seen.has(m.name)) continue;
    const bits: string[] = [];
    if (m.robust) {
      const down = m.robust.downWeightedRows.length;
      bits.push(`${m.robust.loss} loss, threshold ${num(m.robust.threshold, 4)}${m.robust.scaleSource === 'spec' ? ' (lossScale)' : ` (${num(m.robust.tuning, 4)} × MAD scale ${num(m.robust.scale, 4)})`}, ${down} row${down === 1 ? '' : 's'} down-weighted${down ? ` (${m.robust.downWeightedRows.slice(0, 8).join(', ')}${down > 8 ? ', …' : ''})` : ''}`);
    }
    if (m.errorsInX) bits.push(m.errorsInX.method === 'deming' ? `errors in x: Deming regression, λ = σy²/σx² = ${num(m.errorsInX.lambda, 4)}` : 'errors in x: orthogonal distance regression');
    if (m.variance) bits.push(`weights from σ ∝ |fitted|^θ, θ = ${num(m.variance.theta, 4)} ${m.variance.estimated ? `estimated from ${m.variance.replicateGroups} replicated x values` : 'given'}`);
    if (!bits.length) continue;
    seen.add(m.name);
    parts.push(`${m.name}: ${bits.join('; ')}`);
  }
  return parts.length ? `  fitted by: ${parts.join(' | ')}` : null;
}

export function expectText(e: FitReport['expect'][number]): string {
  const allowed = e.tol !== undefined ? `± ${num(e.tol)}` : `± ${num((e.rel ?? 0) * 100)} %`;
  const got = e.actual === null ? 'no estimate (model failed or parameter unknown)' : `got ${num(e.actual, 6)}`;
  return oneLine(`${e.model}.${e.param}${e.group !== undefined ? `[${e.group}]` : ''} = ${num(e.value, 6)} ${allowed}: ${got}`);
}

/** Grouped summary tables longer than this many rows are folded. */
export const MAX_GROUP_ROWS = 40;

function groupByText(r: FitReport): string {
  const first = r.groups?.[0];
  return first ? `by ${Object.keys(first.key).join(' / ')}` : 'none';
}

/**
 * Parameters of a joint fit (models[].shared): every parameter up to 8 groups; beyond, the shared ones with SE and
 * each per-group parameter as its range across groups.
 */
function jointParamLines(m: ModelReport, groups: number): string[] {
  if (groups <= 8) return paramLines(m);
  const shared = new Set(m.shared ?? []);
  const lines = paramLines({ ...m, paramOrder: m.paramOrder.filter(n => shared.has(n)) });
  const per = new Map<string, number[]>();
  for (const n of m.paramOrder) {
    const k = /^(.+)\[(.+)\]$/.exec(n);
    if (k && !shared.has(n)) per.set(k[1], [...(per.get(k[1]) ?? []), m.params[n]?.value ?? NaN]);
  }
  for (const [n, v] of per) lines.push(`${n}[·]: ${v.length} values, ${num(Math.min(...v))} to ${num(Math.max(...v))}`);
  return lines;
}

/** The rows of a long grouped table that are shown: joint fits and failed fits first (up to the limit), then the first groups' fits. */
function foldedModels(r: FitReport): ModelReport[] {
  const keep = new Set<ModelReport>();
  for (const m of r.models) if (m.group === null) keep.add(m);
  for (const m of r.models) if (m.status !== 'converged' && keep.size < MAX_GROUP_ROWS / 2) keep.add(m);
  for (const m of r.models) if (keep.size < MAX_GROUP_ROWS) keep.add(m);
  return r.models.filter(m => keep.has(m));
}

/** Unknowns, controls, standards' recovery and limits (docs/calibration.md), as tables under the summary. */
function calibrationLines(r: FitReport): string[] {
  const out: string[] = [];
  const conf = `${num(r.confidence * 100, 3)} %`;
  const iv = (i: [number | null, number | null] | null) => (i ? `[${i[0] === null ? '—' : num(i[0])}, ${i[1] === null ? '—' : num(i[1])}]` : '');
  const flags = (u: UnknownReport) => u.flags.map(f => f.kind).join(', ');
  const cap = <T>(list: T[]) => list.slice(0, MAX_GROUP_ROWS);
  const more = (n: number, what: string) => (n > MAX_GROUP_ROWS ? [`    … ${n - MAX_GROUP_ROWS} more ${what} — see the results file or the CSV export`] : []);
  if (r.unknowns) {
    const u = r.unknowns;
    out.push(`  unknowns (${u.model}, ${conf} intervals for the mean of m readings; value = x × dilution):`);
    const rows = [['id', 'm', 'mean y', 'x', 'interval', 'dilution', 'value', 'interval', 'flags']];
    for (const x of cap(u.results)) rows.push([x.id, String(x.m), num(x.meanY, 4), x.x === null ? '—' : num(x.x, 4), iv(x.interval), num(x.dilution), x.value === null ? '—' : num(x.value, 4), iv(x.valueInterval), flags(x)]);
    out.push(...table(rows, '    '), ...more(u.results.length, 'unknowns'));
    if (u.output) out.push(`    table: ${u.output}`);
  }
  if (r.controls) {
    const c = r.controls;
    if (c.results.length) {
      out.push(`  controls (${c.model}${c.accept ? `, accept ${num(c.accept[0])}–${num(c.accept[1])} %` : ''}): ${c.pass === null ? 'no verdict' : c.pass ? 'all passed' : 'FAILED'}`);
      const rows = [['id', 'm', 'nominal', 'value', 'recovery %', 'interval', 'verdict', 'flags']];
      for (const x of cap(c.results)) rows.push([x.id, String(x.m), num(x.nominal), x.value === null ? '—' : num(x.value, 4), x.recovery === null ? '—' : num(x.recovery, 4), iv(x.recoveryInterval), x.pass === null ? '' : x.pass ? 'pass' : 'FAIL', flags(x)]);
      out.push(...table(rows, '    '), ...more(c.results.length, 'controls'));
    }
    const s = c.standards.filter(x => x.recovery !== null);
    if (s.length) {
      const lo = Math.min(...s.map(x => x.recovery!));
      const hi = Math.max(...s.map(x => x.recovery!));
      const failed = s.filter(x => x.pass === false).length;
      out.push(`  standards back-calculated (${c.model}): recovery ${num(lo, 4)}–${num(hi, 4)} % over ${s.length} levels${c.acceptStandards ? `, ${failed ? `${failed} outside` : 'all within'} ${num(c.acceptStandards[0])}–${num(c.acceptStandards[1])} %` : ''}`);
    }
  }
  if (r.limits) {
    const l = r.limits;
    const rule = l.convention === 'ich-line' ? '3.3·σ/slope and 10·σ/slope (ICH Q2(R1))' : 'blank ± 3.3·σ and ± 10·σ read off the curve';
    out.push(`  limits (${l.model}, σ from ${l.sigma.from === 'blanks' ? `${l.sigma.n} blanks` : 'the residuals'} = ${num(l.sigma.value, 4)}): LOD ${num(l.lod, 4)}, LOQ ${num(l.loq, 4)} by ${rule}; detection limit ${num(l.detection.x, 4)} (Hubaux–Vos) — conventions to validate under your own procedure`);
  }
  if (r.potency) {
    const p = r.potency;
    for (const x of p.results.slice(0, MAX_GROUP_ROWS)) {
      const par = x.parallelism;
      const eq = par
        ? `; parallelism (${num(par.level * 100, 3)} % intervals): slope ratio ${num(par.slopeRatio.value, 4)} ${iv(par.slopeRatio.interval)}, span ratio ${num(par.spanRatio.value, 4)} ${iv(par.spanRatio.interval)}${par.verdict ? ` — ${par.verdict}` : ''}`
        : '';
      out.push(`  relative potency ${x.test} vs ${p.reference} (${p.model}): ${num(x.ratio, 4)} ${iv(x.interval)} (${conf} Fieller)${eq}`);
    }
  }
  return out;
}

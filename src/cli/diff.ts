// `curvewright diff <old.json> <new.json>`: what changed between two results files, in words a reviewer reads —
// "K moved from 1.856 ± 0.012 to 1.861 ± 0.011 (0.4 SE)" — models added or removed, status and best-model changes,
// problems new and gone, expectations. Exit 0 when nothing a reader sees changed, 1 when something did, 2 bad input.
// The shift in SE is |new − old| divided by the old standard error (the uncertainty the old result claimed).
import { readFileSync } from 'fs';
import { isErrorReport, type FitReport, type ModelReport, type Problem, type RunResult } from '../engine/report';
import { UsageError, type Parsed } from './args';
import { num } from './format';
import type { Io } from './io';

type Model = ModelReport & { group?: string | null };

function readResults(file: string): RunResult {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new UsageError(`cannot read ${file}: ${code === 'ENOENT' ? 'no such file' : (e as Error).message} — give two results files (a spec's "output", or a \`fit --json\` line saved to a file)`);
  }
  let v: unknown;
  try {
    v = JSON.parse(text.charCodeAt(0) === 0xfeff ? text.slice(1) : text);
  } catch (e) {
    throw new UsageError(`${file} is not valid JSON (${(e as Error).message}) — give a results file written by \`curvewright fit\``);
  }
  const r = v as RunResult;
  if (!r || typeof r !== 'object' || r.version !== 1 || (!isErrorReport(r) && !Array.isArray((r as FitReport).models)))
    throw new UsageError(`${file} is not a Curvewright results file (no "version": 1 with "models") — give a results file written by \`curvewright fit\``);
  return r;
}

const keyOf = (m: Model) => (m.group !== undefined && m.group !== null ? `${m.name} [${m.group}]` : m.name);

/** Two numbers at the fewest significant digits (4 to 12) that tell them apart. */
function pair(a: number, b: number): [string, string] {
  for (let d = 4; d <= 12; d++) {
    const x = num(a, d), y = num(b, d);
    if (x !== y || d === 12) return [x, y];
  }
  return [num(a), num(b)];
}

function withSe(value: string, se: number | null): string {
  return se !== null && Number.isFinite(se) ? `${value} ± ${num(se, 2)}` : value;
}

function paramLines(a: Model, b: Model): string[] {
  const out: string[] = [];
  for (const name of b.paramOrder) {
    const p = a.params[name], q = b.params[name];
    if (!p) { out.push(`${name} is new: ${withSe(num(q.value), q.se)}`); continue; }
    if (!q || p.value === q.value) continue;
    const [x, y] = pair(p.value, q.value);
    const se = p.se ?? q.se;
    const shift = se !== null && se > 0 ? ` (${num(Math.abs(q.value - p.value) / se, 2)} SE)` : '';
    out.push(`${name} moved from ${withSe(x, p.se)} to ${withSe(y, q.se)}${shift}`);
  }
  for (const name of a.paramOrder) if (!b.params[name]) out.push(`${name} is gone (was ${withSe(num(a.params[name].value), a.params[name].se)})`);
  return out;
}

function statLine(a: Model, b: Model): string | null {
  const parts: string[] = [];
  const show = (label: string, x: number | null | undefined, y: number | null | undefined) => {
    if (x === y || (x == null && y == null)) return;
    const [s, t] = x != null && y != null ? pair(x, y) : [num(x), num(y)];
    parts.push(`${label} ${s} → ${t}`);
  };
  if (a.stats.n !== b.stats.n) parts.push(`n ${a.stats.n} → ${b.stats.n}`);
  show('AICc', a.stats.aicc, b.stats.aicc);
  show('R²', a.stats.r2, b.stats.r2);
  show('σ', a.stats.sigma, b.stats.sigma);
  return parts.length ? parts.join('; ') : null;
}

function problemKey(p: Problem, model?: string): string {
  return JSON.stringify([model ?? null, p.code, p.severity, p.path]);
}

function problemsOf(r: FitReport): Map<string, { p: Problem; model?: string }> {
  const m = new Map<string, { p: Problem; model?: string }>();
  for (const p of r.problems) m.set(problemKey(p), { p });
  for (const x of r.models as Model[]) for (const p of x.problems) m.set(problemKey(p, keyOf(x)), { p, model: keyOf(x) });
  return m;
}

/** The differences in words, one per line (empty when a reader would see none). */
export function diffLines(a: RunResult, b: RunResult): string[] {
  const out: string[] = [];
  if (isErrorReport(a) || isErrorReport(b)) {
    if (isErrorReport(a) && isErrorReport(b)) {
      if (a.error.message !== b.error.message) out.push(`the spec still cannot run, now: ${b.error.message}`);
    } else if (isErrorReport(b)) out.push(`the spec no longer runs: ${b.error.message}`);
    else out.push(`the spec runs again (before: ${(a as { error: { message: string } }).error.message})`);
    return out;
  }
  const changed = [a.meta.specHash !== b.meta.specHash ? 'the spec' : '', a.meta.dataHash !== b.meta.dataHash ? 'the data' : ''].filter(Boolean);
  if (changed.length) out.push(`${changed.join(' and ')} changed`);
  if (a.meta.engine !== b.meta.engine) out.push(`engine ${a.meta.engine} → ${b.meta.engine}`);
  if (a.data.used !== b.data.used || a.data.rows !== b.data.rows) out.push(`rows used ${a.data.used} of ${a.data.rows} → ${b.data.used} of ${b.data.rows}`);
  const rowsOf = (r: FitReport) => new Set([...r.data.dropped.map(d => `dropped row ${d.row}`), ...r.data.excluded.map(d => `excluded row ${d.row}`)]);
  const ra = rowsOf(a), rb = rowsOf(b);
  const newRows = [...rb].filter(x => !ra.has(x)), oldRows = [...ra].filter(x => !rb.has(x));
  if (newRows.length) out.push(`now ${newRows.join(', ')}`);
  if (oldRows.length) out.push(`no longer ${oldRows.join(', ')}`);
  if (a.best !== b.best) out.push(`best model: ${a.best ?? 'none'} → ${b.best ?? 'none'}`);
  const am = new Map((a.models as Model[]).map(m => [keyOf(m), m]));
  const bm = new Map((b.models as Model[]).map(m => [keyOf(m), m]));
  for (const [k, m] of bm) {
    const old = am.get(k);
    if (!old) { out.push(`model ${k} added (${m.status})`); continue; }
    const lines: string[] = [];
    if (old.status !== m.status) lines.push(`status ${old.status} (${old.termination}) → ${m.status} (${m.termination})`);
    if (old.formula !== m.formula) lines.push(`formula ${old.formula} → ${m.formula}`);
    lines.push(...paramLines(old, m));
    const s = statLine(old, m);
    if (s) lines.push(s);
    if (lines.length) out.push(`model ${k}:`, ...lines.map(l => `  ${l}`));
  }
  for (const k of am.keys()) if (!bm.has(k)) out.push(`model ${k} removed`);
  const pa = problemsOf(a), pb = problemsOf(b);
  const bare = (message: string, model?: string) => (model && message.startsWith(`${model}: `) ? message.slice(model.length + 2) : message);
  for (const [k, { p, model }] of pb) if (!pa.has(k)) out.push(`new ${p.severity} ${p.code}${model ? ` (${model})` : ''}: ${bare(p.message, model)}`);
  for (const [k, { p, model }] of pa) if (!pb.has(k)) out.push(`gone: ${p.severity} ${p.code}${model ? ` (${model})` : ''}`);
  const ea = new Map(a.expect.map(e => [`${e.model}.${e.param}`, e]));
  for (const e of b.expect) {
    const old = ea.get(`${e.model}.${e.param}`);
    if (old && old.ok !== e.ok) out.push(`expect ${e.model}.${e.param} ${e.ok ? 'now met' : 'no longer met'} (expected ${num(e.value)}, got ${num(e.actual)})`);
    if (!old) out.push(`expect ${e.model}.${e.param} added (${e.ok ? 'met' : 'not met'})`);
  }
  return out;
}

export async function diffCommand(parsed: Parsed, io: Io): Promise<number> {
  if (parsed.positionals.length !== 2) throw new UsageError("'diff' compares two results files, e.g. `curvewright diff old.fitresult.json results/growth.fitresult.json`");
  const [oldFile, newFile] = parsed.positionals;
  const lines = diffLines(readResults(oldFile), readResults(newFile));
  if (!lines.length) {
    io.out(`no change between ${oldFile} and ${newFile} that the report shows`);
    return 0;
  }
  io.out([`${oldFile} → ${newFile}`, ...lines.map(l => `  ${l}`)].join('\n'));
  return 1;
}

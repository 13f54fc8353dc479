// Turns a read table into fit data: evaluates data.x variables, y, sigma or weight and the where filter, applies
// exclusions, and drops (and reports) rows whose values are not finite.
import { compileExpression, formulaIdentifiers } from '../formula';
import type { JsonPath, Problem } from '../report';
import type { NormalizedSpec } from '../spec/types';
import type { Table } from './types';

export interface PreparedData {
  /** variable names bound by data.x, in spec order */
  variables: string[];
  /** one column per variable, length n */
  X: Float64Array[];
  y: Float64Array;
  /** weights (1/σ² or data.weight), or null when unweighted; precision weights only (data.count is not in them) */
  w: Float64Array | null;
  /** data.count: how many identical observations each row stands for, or null (one each) */
  count: Float64Array | null;
  /** 1-based data row of each used point */
  rows: Int32Array;
  /** 1-based file line of each used point */
  lines: Int32Array;
  /** rows left out by data.exclude (those present in the table) */
  excluded: { row: number; reason: string }[];
  /** number of rows left out by data.where */
  filtered: number;
  /** rows dropped while reading (bad cells) and while evaluating (non-finite values, bad sigma/weight), by row */
  dropped: Table['dropped'];
  /** table problems plus those found here */
  problems: Problem[];
}

/** Names of data columns an expression text uses (a text that does not parse is taken as one column name). */
function expressionColumns(text: string, logic: boolean, header: readonly string[] | undefined, exclude: readonly string[]): string[] {
  if (header && header.includes(text)) return [text];
  let names: string[];
  try {
    names = formulaIdentifiers(text, { logic }).map((u) => u.name);
  } catch {
    return [text];
  }
  const out: string[] = [];
  for (const n of names) {
    // a column wins over an x variable or y of the same name (weight and where expressions)
    if (exclude.includes(n) && !(header && header.includes(n))) continue;
    if (!out.includes(n)) out.push(n);
  }
  return out;
}

/**
 * The CSV columns a spec uses (data.x, y, sigma, weight, where), in first-use order; pass to readTable.
 * With `header`, a name that is an x variable or `y` in weight/where counts as a column only when the header has it.
 */
export function columnsNeeded(spec: NormalizedSpec, header?: readonly string[]): string[] {
  const d = spec.data;
  const extra = [...Object.keys(d.x), 'y'];
  const all: string[] = [];
  const add = (names: string[]) => {
    for (const n of names) if (!all.includes(n)) all.push(n);
  };
  for (const t of Object.values(d.x)) add(expressionColumns(t, false, header, []));
  add(expressionColumns(d.y, false, header, []));
  if (d.sigma !== undefined) add(expressionColumns(d.sigma, false, header, []));
  if (d.weight !== undefined) add(expressionColumns(d.weight, false, header, extra));
  if (d.count !== undefined) add(expressionColumns(d.count, false, header, extra));
  if (d.where !== undefined) add(expressionColumns(d.where, true, header, extra));
  return all;
}

/**
 * For each CSV column a spec uses, the spec path of the first data key that uses it (data.x…, data.y, data.sigma,
 * data.weight, data.where): pass as readTable's columnPaths so a bad cell points at the key that reads the column.
 */
export function columnPaths(spec: NormalizedSpec, header?: readonly string[]): Record<string, JsonPath> {
  const d = spec.data;
  const vars = Object.keys(d.x);
  const extra = [...vars, 'y'];
  const out: Record<string, JsonPath> = {};
  const add = (names: string[], p: JsonPath) => {
    for (const n of names) if (!(n in out)) out[n] = p;
  };
  for (const v of vars) add(expressionColumns(d.x[v], false, header, []), vars.length === 1 && v === 'x' ? ['data', 'x'] : ['data', 'x', v]);
  add(expressionColumns(d.y, false, header, []), ['data', 'y']);
  if (d.sigma !== undefined) add(expressionColumns(d.sigma, false, header, []), ['data', 'sigma']);
  if (d.weight !== undefined) add(expressionColumns(d.weight, false, header, extra), ['data', 'weight']);
  if (d.count !== undefined) add(expressionColumns(d.count, false, header, extra), ['data', 'count']);
  if (d.where !== undefined) add(expressionColumns(d.where, true, header, extra), ['data', 'where']);
  return out;
}

/** data rows listed in one problem */
const MAX_ROWS_LISTED = 1000;
/** dropped-row records kept (beyond this only counted) */
const MAX_DROPPED_LISTED = 10000;

function rowList(rows: number[], total: number, max = 8): string {
  const shown = rows.slice(0, max).join(', ');
  return total > max ? `${shown}, …` : shown;
}

/**
 * Evaluates the spec's data expressions over the table and returns the points to fit. Never throws for user data:
 * rows that cannot be used are dropped and reported as problems (with their data rows).
 */
export function prepareData(spec: NormalizedSpec, table: Table): PreparedData {
  const d = spec.data;
  const N = table.row.length;
  const problems: Problem[] = [...table.problems];
  const variables = Object.keys(d.x);
  const label = d.fileGiven ?? table.file;

  // environment: table columns, then (for weight/where) x variables and y
  const env = new Map<string, Float64Array>();
  for (const [k, v] of Object.entries(table.values)) env.set(k, v);

  const evaluate = (text: string, logic: boolean, p: JsonPath, role: string): Float64Array | null => {
    const direct = env.get(text);
    if (direct && text !== '') return direct;
    const names = [...env.keys()];
    try {
      const ex = compileExpression(text, names, { logic });
      const out = new Float64Array(N);
      ex.evaluate(
        ex.columns.map((c) => env.get(c) as Float64Array),
        out,
      );
      return out;
    } catch (e) {
      problems.push({
        code: 'data-expression',
        severity: 'error',
        message: `${role} ${JSON.stringify(text)} cannot be evaluated: ${e instanceof Error ? e.message : String(e)}`,
        path: p,
      });
      return null;
    }
  };

  const xPath = (v: string): JsonPath => (variables.length === 1 && v === 'x' ? ['data', 'x'] : ['data', 'x', v]);
  const Xall: (Float64Array | null)[] = variables.map((v) => evaluate(d.x[v], false, xPath(v), `data.x.${v}`));
  const yAll = evaluate(d.y, false, ['data', 'y'], 'data.y');
  const sigmaAll = d.sigma !== undefined ? evaluate(d.sigma, false, ['data', 'sigma'], 'data.sigma') : null;
  // x variables and y become names for weight and where (a column of the same name wins)
  variables.forEach((v, k) => {
    const col = Xall[k];
    if (col && !env.has(v)) env.set(v, col);
  });
  if (yAll && !env.has('y')) env.set('y', yAll);
  const weightAll = d.weight !== undefined ? evaluate(d.weight, false, ['data', 'weight'], 'data.weight') : null;
  const whereAll = d.where !== undefined ? evaluate(d.where, true, ['data', 'where'], 'data.where') : null;
  const countAll = d.count !== undefined ? evaluate(d.count, false, ['data', 'count'], 'data.count') : null;

  const empty = (): PreparedData => ({
    variables,
    X: variables.map(() => new Float64Array(0)),
    y: new Float64Array(0),
    w: null,
    count: null,
    rows: new Int32Array(0),
    lines: new Int32Array(0),
    excluded: [],
    filtered: 0,
    dropped: [...table.dropped],
    problems,
  });
  if (Xall.some((c) => c === null) || !yAll || (d.sigma !== undefined && !sigmaAll) || (d.weight !== undefined && !weightAll) || (d.where !== undefined && !whereAll) || (d.count !== undefined && !countAll))
    return empty();

  // exclusions by data row
  const rowIndex = new Map<number, number>();
  for (let i = 0; i < N; i++) rowIndex.set(table.row[i], i);
  const droppedRows = new Set(table.dropped.map((r) => r.row));
  const excludedAt = new Map<number, string>();
  const excluded: { row: number; reason: string }[] = [];
  d.exclude.forEach((e, k) => {
    if (rowIndex.has(e.row)) {
      if (!excludedAt.has(e.row)) {
        excludedAt.set(e.row, e.reason);
        excluded.push({ row: e.row, reason: e.reason });
      }
    } else if (e.row > table.totalRows) {
      problems.push({
        code: 'exclude-missing-row',
        severity: 'warning',
        message: `data.exclude names row ${e.row}, but ${label} has only ${table.totalRows} data rows — remove the entry or fix the row number (the first row after the header is 1)`,
        path: ['data', 'exclude', k, 'row'],
        rows: [e.row],
      });
    } else if (droppedRows.has(e.row)) {
      // already dropped for a bad cell: nothing more to leave out
    }
  });

  // where, then finiteness of every value
  const keep = new Uint8Array(N);
  let filtered = 0;
  interface Bad {
    role: string;
    text: string;
    p: JsonPath;
    code: string;
    why: string;
    /** the first rows (up to MAX_ROWS_LISTED) */
    rows: number[];
    count: number;
    note(row: number): void;
  }
  const bad: Bad[] = [];
  const badEntry = (role: string, text: string, p: JsonPath, code: string, why: string): Bad => {
    let b = bad.find((e) => e.role === role && e.code === code);
    if (!b) {
      const entry: Bad = {
        role, text, p, code, why, rows: [], count: 0,
        note(row: number) {
          entry.count++;
          if (entry.rows.length < MAX_ROWS_LISTED) entry.rows.push(row);
        },
      };
      bad.push((b = entry));
    }
    return b;
  };
  const newlyDropped: Table['dropped'] = [];
  let droppedHere = 0;
  for (let i = 0; i < N; i++) {
    const row = table.row[i];
    if (excludedAt.has(row)) continue;
    if (whereAll) {
      const c = whereAll[i];
      if (!(c !== 0 && Number.isFinite(c))) {
        filtered++;
        continue;
      }
    }
    let reason: { column: string; reason: string } | null = null;
    for (let k = 0; k < variables.length && !reason; k++) {
      const v = (Xall[k] as Float64Array)[i];
      if (!Number.isFinite(v)) {
        const role = variables.length === 1 && variables[0] === 'x' ? 'data.x' : `data.x.${variables[k]}`;
        badEntry(role, d.x[variables[k]], xPath(variables[k]), 'non-finite-value', 'is not a finite number').note(row);
        reason = { column: d.x[variables[k]], reason: `${role} = ${d.x[variables[k]]} is ${v}` };
      }
    }
    if (!reason && !Number.isFinite(yAll[i])) {
      badEntry('data.y', d.y, ['data', 'y'], 'non-finite-value', 'is not a finite number').note(row);
      reason = { column: d.y, reason: `data.y = ${d.y} is ${yAll[i]}` };
    }
    if (!reason && sigmaAll) {
      const s = sigmaAll[i];
      if (!(Number.isFinite(s) && s > 0)) {
        badEntry('data.sigma', d.sigma as string, ['data', 'sigma'], 'bad-sigma', 'is not a positive finite number').note(row);
        reason = { column: d.sigma as string, reason: `sigma = ${s} (must be a positive number)` };
      }
    }
    if (!reason && weightAll) {
      const w = weightAll[i];
      if (!(Number.isFinite(w) && w > 0)) {
        badEntry('data.weight', d.weight as string, ['data', 'weight'], 'bad-weight', 'is not a positive finite number').note(row);
        reason = { column: d.weight as string, reason: `weight = ${w} (must be a positive number)` };
      }
    }
    if (!reason && countAll) {
      const k = countAll[i];
      if (!(Number.isInteger(k) && k >= 1)) {
        badEntry('data.count', d.count as string, ['data', 'count'], 'bad-count', 'is not a whole number ≥ 1').note(row);
        reason = { column: d.count as string, reason: `count = ${k} (must be a whole number of observations, at least 1)` };
      }
    }
    if (reason) {
      droppedHere++;
      if (newlyDropped.length < MAX_DROPPED_LISTED) newlyDropped.push({ row, line: table.line[i], column: reason.column, reason: reason.reason });
      continue;
    }
    keep[i] = 1;
  }
  for (const b of bad) {
    const fix =
      b.code === 'non-finite-value'
        ? 'they were left out; check the expression, or leave such rows out with data.where'
        : b.code === 'bad-count'
          ? 'they were left out; a count is how many identical observations the row stands for (a row with none has no place in the data)'
          : 'they were left out; standard deviations and weights must be positive';
    problems.push({
      code: b.code,
      severity: 'warning',
      message: `${b.role} = ${b.text} ${b.why} in ${b.count} row${b.count === 1 ? '' : 's'} (data row${b.count === 1 ? '' : 's'} ${rowList(b.rows, b.count)}) — ${fix}`,
      path: b.p,
      location: { file: label, row: b.rows[0] },
      rows: b.rows,
    });
  }

  let n = 0;
  for (let i = 0; i < N; i++) n += keep[i];
  const X = variables.map(() => new Float64Array(n));
  const y = new Float64Array(n);
  const w = sigmaAll || weightAll ? new Float64Array(n) : null;
  const count = countAll ? new Float64Array(n) : null;
  const rows = new Int32Array(n);
  const lines = new Int32Array(n);
  for (let i = 0, j = 0; i < N; i++) {
    if (!keep[i]) continue;
    for (let k = 0; k < variables.length; k++) X[k][j] = (Xall[k] as Float64Array)[i];
    y[j] = yAll[i];
    if (w) w[j] = sigmaAll ? 1 / (sigmaAll[i] * sigmaAll[i]) : (weightAll as Float64Array)[i];
    if (count) count[j] = countAll![i];
    rows[j] = table.row[i];
    lines[j] = table.line[i];
    j++;
  }
  if (n === 0)
    problems.push({
      code: 'no-data',
      severity: 'error',
      message: `no data rows are left to fit in ${label} (${table.totalRows} rows, ${(table.droppedTotal ?? table.dropped.length) + droppedHere} dropped, ${excluded.length} excluded, ${filtered} filtered out by data.where) — check data.where, data.exclude and the columns`,
      path: d.where !== undefined && filtered > 0 ? ['data', 'where'] : ['data'],
    });
  const dropped = [...table.dropped, ...newlyDropped].sort((a, b) => a.row - b.row);
  return { variables, X, y, w, count, rows, lines, excluded, filtered, dropped, problems };
}

// Turns a read table into fit data: evaluates data.x variables, y, sigma or weight and the where filter, applies
// exclusions, and drops (and reports) rows whose values are not finite.
import { compileExpression, formatFormula, formulaIdentifiers, parseFormula, FormulaError, type Node } from '../formula';
import type { JsonPath, Problem, ProblemCode } from '../report';
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
  /** data.sigmaX: weights 1/σ_x² of the x values (errors in x), or null without data.sigmaX */
  wx?: Float64Array | null;
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
  /** with data.groupBy: the groups in order of first appearance, and the group of each used point */
  groups?: PreparedGroups;
}

export interface PreparedGroups {
  ids: string[];
  keys: Record<string, string>[];
  /** rows of each group that passed data.where and data.exclude */
  rows: number[];
  /** index into ids of each used point (length n) */
  of: Int32Array;
}

/** Most groups one spec may have: beyond it the run stops with a clear message instead of fitting for hours. */
export const MAX_GROUPS = 20000;
/** Characters a group id may not contain: '/' joins several groupBy columns, '[' and ']' index parameters (K[R1]). */
const GROUP_ID_FORBIDDEN = /[/[\]]/;

/** Prefix of the code columns that stand for text columns inside a compiled where filter (never a header name). */
const TEXT_CODE = '\u0001text:';

/** Columns a where filter compares with quoted text (state == "treated"): read as text. Empty when it does not parse. */
export function whereTextColumns(where: string | undefined): string[] {
  if (where === undefined) return [];
  let ast: Node;
  try {
    ast = parseFormula(where, { logic: true });
  } catch {
    return [];
  }
  const out: string[] = [];
  walkWhere(ast, null, (n, parent) => {
    if (n.type === 'ident' && parent && parent.type === 'binary' && (parent.left.type === 'str' || parent.right.type === 'str') && !out.includes(n.name)) out.push(n.name);
  });
  return out;
}

function walkWhere(root: Node, parent0: Node | null, visit: (n: Node, parent: Node | null) => void): void {
  const stack: [Node, Node | null][] = [[root, parent0]];
  while (stack.length > 0) {
    const [n, parent] = stack.pop() as [Node, Node | null];
    visit(n, parent);
    if (n.type === 'unary') stack.push([n.arg, n]);
    else if (n.type === 'binary') stack.push([n.right, n], [n.left, n]);
    else if (n.type === 'call') for (let k = n.args.length - 1; k >= 0; k--) stack.push([n.args[k], n]);
  }
}

/**
 * A where filter with its text comparisons replaced by comparisons of codes: each text column becomes a column of
 * codes (index of the cell's value among the column's distinct values), each quoted text the code of that value
 * (-1 when no row has it). A text column used any other way is a FormulaError naming the column and the operator.
 */
function encodeTextWhere(where: string, text: Record<string, string[]>, env: Map<string, Float64Array>, N: number): string {
  const ast = parseFormula(where, { logic: true });
  const textCols = new Set(whereTextColumns(where));
  const codes = new Map<string, Map<string, number>>();
  for (const c of textCols) {
    const cells = text[c] ?? [];
    const dict = new Map<string, number>();
    const code = new Float64Array(N);
    for (let i = 0; i < N; i++) {
      let k = dict.get(cells[i]);
      if (k === undefined) dict.set(cells[i], (k = dict.size));
      code[i] = k;
    }
    codes.set(c, dict);
    env.set(TEXT_CODE + c, code);
  }
  walkWhere(ast, null, (n, parent) => {
    if (n.type !== 'ident' || !textCols.has(n.name)) return;
    const isTextCmp = parent && parent.type === 'binary' && (parent.op === '==' || parent.op === '!=') && (parent.left.type === 'str' || parent.right.type === 'str');
    if (isTextCmp) return;
    const op = parent === null ? null : parent.type === 'call' ? `${parent.fn}()` : 'op' in parent ? parent.op : null;
    const how = op === null ? 'as a condition on its own' : `with '${op}'`;
    throw new FormulaError(
      `column '${n.name}' holds text (it is compared with quoted text elsewhere in the filter) and is used ${how} at column ${n.span.start + 1} — ` +
        `a text column can only be compared with == or != and a quoted string, e.g. ${n.name} == "treated"`,
      n.span,
    );
  });
  const rewrite = (n: Node): Node => {
    switch (n.type) {
      case 'binary': {
        if ((n.op === '==' || n.op === '!=') && (n.left.type === 'str' || n.right.type === 'str')) {
          const id = (n.left.type === 'ident' ? n.left : n.right) as Extract<Node, { type: 'ident' }>;
          const lit = (n.left.type === 'str' ? n.left : n.right) as Extract<Node, { type: 'str' }>;
          const code = codes.get(id.name)?.get(lit.value) ?? -1;
          return { ...n, left: { type: 'ident', name: TEXT_CODE + id.name, quoted: true, span: id.span }, right: { type: 'num', value: code, span: lit.span } };
        }
        return { ...n, left: rewrite(n.left), right: rewrite(n.right) };
      }
      case 'unary':
        return { ...n, arg: rewrite(n.arg) };
      case 'call':
        return { ...n, args: n.args.map(rewrite) };
      default:
        return n;
    }
  };
  return formatFormula(rewrite(ast));
}

/**
 * A where column used with a numeric operator whose cells are mostly text (most of its rows were dropped as 'not a
 * number'): an error naming the column and the operator, with the fix (compare it with quoted text).
 */
function textMetNumber(where: string, table: Table, textCols: string[]): { column: string; op: string; sample: string } | null {
  let ast: Node;
  try {
    ast = parseFormula(where, { logic: true });
  } catch {
    return null;
  }
  const uses = new Map<string, string>();
  walkWhere(ast, null, (n, parent) => {
    if (n.type !== 'ident' || textCols.includes(n.name) || uses.has(n.name)) return;
    const op = parent === null ? 'as a condition' : parent.type === 'call' ? `${parent.fn}()` : 'op' in parent ? parent.op : 'as a condition';
    uses.set(n.name, op);
  });
  for (const [column, op] of uses) {
    const bad = table.dropped.filter((d) => d.column === column && d.reason.startsWith('not a number'));
    if (bad.length > 0 && bad.length >= table.row.length) {
      const m = /^not a number: '(.*?)'/.exec(bad[0].reason);
      return { column, op, sample: m ? m[1] : '' };
    }
  }
  return null;
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
  if (d.sigmaX !== undefined) add(expressionColumns(d.sigmaX, false, header, []));
  if (d.weight !== undefined) add(expressionColumns(d.weight, false, header, extra));
  if (d.count !== undefined) add(expressionColumns(d.count, false, header, extra));
  // columns a where filter compares with quoted text are read as text (textColumns), not as numbers
  const textInWhere = new Set(whereTextColumns(d.where));
  if (d.where !== undefined) add(expressionColumns(d.where, true, header, extra).filter(c => !textInWhere.has(c)));
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
  if (d.sigmaX !== undefined) add(expressionColumns(d.sigmaX, false, header, []), ['data', 'sigmaX']);
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
  const sigmaXAll = d.sigmaX !== undefined ? evaluate(d.sigmaX, false, ['data', 'sigmaX'], 'data.sigmaX') : null;
  // x variables and y become names for weight and where (a column of the same name wins)
  variables.forEach((v, k) => {
    const col = Xall[k];
    if (col && !env.has(v)) env.set(v, col);
  });
  if (yAll && !env.has('y')) env.set('y', yAll);
  const weightAll = d.weight !== undefined ? evaluate(d.weight, false, ['data', 'weight'], 'data.weight') : null;
  const whereTextCols = whereTextColumns(d.where);
  let whereText = d.where;
  if (d.where !== undefined && whereTextCols.length > 0) {
    try {
      whereText = encodeTextWhere(d.where, table.text ?? {}, env, N);
    } catch (e) {
      problems.push({
        code: 'data-expression',
        severity: 'error',
        message: `data.where ${JSON.stringify(d.where)} cannot be evaluated: ${e instanceof Error ? e.message : String(e)}`,
        path: ['data', 'where'],
      });
      whereText = undefined;
    }
  }
  if (d.where !== undefined) {
    const met = textMetNumber(d.where, table, whereTextCols);
    if (met)
      problems.push({
        code: 'text-column-operator',
        severity: 'error',
        message: `data.where uses column '${met.column}' with ${met.op.endsWith(')') ? met.op : `'${met.op}'`}, but the column holds text (e.g. '${met.sample}') — ` +
          `compare a text column with == or != and a quoted string, e.g. ${met.column} == "${met.sample || 'treated'}"`,
        path: ['data', 'where'],
      });
  }
  const whereAll = whereText !== undefined ? evaluate(whereText, true, ['data', 'where'], 'data.where') : null;
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
  if (Xall.some((c) => c === null) || !yAll || (d.sigma !== undefined && !sigmaAll) || (d.sigmaX !== undefined && !sigmaXAll) || (d.weight !== undefined && !weightAll) || (d.where !== undefined && !whereAll) || (d.count !== undefined && !countAll))
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
    code: ProblemCode;
    why: string;
    /** the first rows (up to MAX_ROWS_LISTED) */
    rows: number[];
    count: number;
    note(row: number): void;
  }
  const bad: Bad[] = [];
  const badEntry = (role: string, text: string, p: JsonPath, code: ProblemCode, why: string): Bad => {
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
  const groupCols = d.groupBy ?? [];
  const groupCells = groupCols.map((c) => table.text?.[c] ?? []);
  const groupIndex = new Map<string, number>();
  const groupIds: string[] = [];
  const groupKeys: Record<string, string>[] = [];
  const groupRows: number[] = [];
  const groupOfRow = new Int32Array(groupCols.length ? N : 0);
  let groupError: Problem | null = null;
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
    if (groupCols.length) {
      if (groupError) continue;
      const id = groupCols.length === 1 ? groupCells[0][i] : groupCells.map((c) => c[i]).join('/');
      let g = groupIndex.get(id);
      if (g === undefined) {
        const bad = groupCols.findIndex((_, k) => groupCells[k][i] === '' || GROUP_ID_FORBIDDEN.test(groupCells[k][i]));
        if (bad !== -1) {
          const v = groupCells[bad][i];
          groupError = {
            code: 'group-id',
            severity: 'error',
            message: v === ''
              ? `${label} line ${table.line[i]} (data row ${row}): the group column '${groupCols[bad]}' is empty — give every row a group, or leave such rows out with data.where (e.g. ${groupCols[bad]} != "")`
              : `${label} line ${table.line[i]} (data row ${row}): the group value '${v}' of column '${groupCols[bad]}' contains '${/[/]/.test(v) ? '/' : /\[/.test(v) ? '[' : ']'}' — group ids may not contain '/', '[' or ']' ('/' joins several groupBy columns, '[…]' names a group's parameter, e.g. K[R1]); rename the groups in the file, e.g. '${v.replace(/[/[\]]/g, '-')}'`,
            path: ['data', 'groupBy'],
            location: { file: label, line: table.line[i], column: groupCols[bad], row },
          };
          continue;
        }
        if (groupIds.length >= MAX_GROUPS) {
          groupError = {
            code: 'too-many-groups',
            severity: 'error',
            message: `data.groupBy gives more than ${MAX_GROUPS} groups in ${label} (group '${id}' at line ${table.line[i]} is number ${MAX_GROUPS + 1}) — one spec fits at most ${MAX_GROUPS} groups; check that ${groupCols.map((c) => `'${c}'`).join(' and ')} name${groupCols.length === 1 ? 's' : ''} groups rather than single rows, or split the file`,
            path: ['data', 'groupBy'],
          };
          continue;
        }
        g = groupIds.length;
        groupIndex.set(id, g);
        groupIds.push(id);
        const key: Record<string, string> = {};
        groupCols.forEach((c, k) => (key[c] = groupCells[k][i]));
        groupKeys.push(key);
        groupRows.push(0);
      }
      groupRows[g]++;
      groupOfRow[i] = g;
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
      } else if (!Number.isFinite(1 / (s * s))) {
        // a positive σ below about 1e-154 gives the row an infinite weight 1/σ²: it would decide the fit alone
        badEntry('data.sigma', d.sigma as string, ['data', 'sigma'], 'bad-sigma', 'is so small that its weight 1/σ² is infinite (check the units of the σ column)').note(row);
        reason = { column: d.sigma as string, reason: `sigma = ${s} is so small that its weight 1/σ² is infinite` };
      }
    }
    if (!reason && sigmaXAll) {
      const s = sigmaXAll[i];
      if (!(Number.isFinite(s) && s > 0) || !Number.isFinite(1 / (s * s))) {
        badEntry('data.sigmaX', d.sigmaX as string, ['data', 'sigmaX'], 'bad-sigma', 'is not a positive finite number (σ of x must be positive; an x without error has no place in an errors-in-x fit)').note(row);
        reason = { column: d.sigmaX as string, reason: `sigmaX = ${s} (must be a positive number)` };
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

  if (groupError) problems.push(groupError);
  let n = 0;
  for (let i = 0; i < N; i++) n += keep[i];
  const X = variables.map(() => new Float64Array(n));
  const y = new Float64Array(n);
  const w = sigmaAll || weightAll ? new Float64Array(n) : null;
  const count = countAll ? new Float64Array(n) : null;
  const wx = sigmaXAll ? new Float64Array(n) : null;
  const rows = new Int32Array(n);
  const lines = new Int32Array(n);
  const of = new Int32Array(groupCols.length ? n : 0);
  for (let i = 0, j = 0; i < N; i++) {
    if (!keep[i]) continue;
    if (groupCols.length) of[j] = groupOfRow[i];
    for (let k = 0; k < variables.length; k++) X[k][j] = (Xall[k] as Float64Array)[i];
    y[j] = yAll[i];
    if (w) w[j] = sigmaAll ? 1 / (sigmaAll[i] * sigmaAll[i]) : (weightAll as Float64Array)[i];
    if (count) count[j] = countAll![i];
    if (wx) wx[j] = 1 / (sigmaXAll![i] * sigmaXAll![i]);
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
  const groups = groupCols.length ? { groups: { ids: groupIds, keys: groupKeys, rows: groupRows, of } } : {};
  return { variables, X, y, w, count, ...(wx ? { wx } : {}), rows, lines, excluded, filtered, dropped, problems, ...groups };
}

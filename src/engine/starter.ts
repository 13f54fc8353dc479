// Starter specs from a CSV file: guess x and y from a sample of rows, propose candidate models from the data's shape,
// and write the spec text (JSON with comments). The shape rule is our own heuristic (documented below), not a test.
//
// Rule (applied to the sample sorted by x, split into thirds; "slope" = least-squares slope of y on x within a third):
//   always:       linear and quadratic are recommended; cubic is offered.
//   peaked:       the largest |y − median| lies inside the x range and both ends are lower → gaussian.
//   monotone:     |Spearman ρ(x, y)| ≥ 0.8 ...
//     sigmoid:    the middle third's |slope| exceeds 1.5× both outer thirds' → logistic4 when x > 0 everywhere, else logistic3.
//     saturating: increasing and the last third's slope < 1/3 of the first's → michaelis_menten when x ≥ 0 (asymptotic otherwise).
//     decaying:   decreasing and the last third's |slope| < 1/3 of the first's → exponential_offset.
//   Every other catalogue model named above is offered (not recommended) so the user can tick it.
import { promises as fsp } from 'fs';
import * as path from 'path';
import Papa from 'papaparse';
import type { ModelSpec } from './report';
import { readHeader } from './data';
import { detectDelimiter } from './data/csv';

// the spec text has its own file so that the extension host, which only writes specs, does not bundle papaparse
export { starterSpecText } from './starterText';

export interface Candidate {
  id: string;
  label: string;
  recommended: boolean;
  model: ModelSpec;
}

export interface Suggestion {
  columns: string[];
  x: string;
  y: string;
  candidates: Candidate[];
  /** "," when the file is semicolon-separated with decimal commas (the spec must then say data.decimal) */
  decimal?: ',';
  /** a long-format file's id column (text or whole numbers, few distinct values, each repeated, x repeated across them) */
  groupBy?: string;
}

/**
 * The id column of a long-format file (our own rule): a column other than the chosen x and y whose sample cells are
 * text or whole numbers, with 2 to max(2, rows/3) distinct values, every value on at least 3 rows, and the x values
 * repeating across its groups (fewer distinct x than rows / 1.5); a column named rep/replicate/repeat is not one.
 * The first such column, or undefined.
 */
export function groupColumn(columns: string[], rows: string[][], exclude: number[], xj: number): number | undefined {
  const n = rows.length;
  if (n < 6) return undefined;
  const xDistinct = new Set(rows.map(r => (r[xj] ?? '').trim())).size;
  if (!(xDistinct < n / 1.5)) return undefined;
  for (let j = 0; j < columns.length; j++) {
    // replicate numbers repeat the same curve: they are not groups to fit one by one
    if (exclude.includes(j) || /^(rep|replicate|repeat)s?$/i.test(columns[j].trim())) continue;
    const cells = rows.map(r => (r[j] ?? '').trim());
    if (cells.some(c => c === '')) continue;
    // whole numbers or text; a column of decimals is a measurement, not an id
    if (cells.some(c => /^[-+]?\d*[.,]\d+([eE][-+]?\d+)?$/.test(c) || /^[-+]?\d+[eE]/.test(c))) continue;
    const count = new Map<string, number>();
    for (const c of cells) count.set(c, (count.get(c) ?? 0) + 1);
    if (count.size < 2 || count.size > Math.max(2, n / 3)) continue;
    if ([...count.values()].some(k => k < 3)) continue;
    return j;
  }
  return undefined;
}

/** Rows read to guess columns and shape. */
const SAMPLE_ROWS = 500;
/** Fraction of a column's non-empty sample cells that must be numbers for it to count as numeric. */
const NUMERIC_FRACTION = 0.8;

function toNumber(cell: string | undefined, decimalComma: boolean): number {
  if (cell === undefined) return NaN;
  let s = cell.trim();
  if (s === '') return NaN;
  if (decimalComma) s = s.replace(',', '.');
  if (!/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(s)) return NaN;
  return Number(s);
}

/** Spearman rank correlation (average ranks for ties). */
export function spearman(x: ArrayLike<number>, y: ArrayLike<number>): number {
  const rank = (v: ArrayLike<number>) => {
    const idx = Array.from({ length: v.length }, (_, i) => i).sort((a, b) => v[a] - v[b]);
    const r = new Array<number>(v.length);
    for (let i = 0; i < idx.length; ) {
      let j = i;
      while (j + 1 < idx.length && v[idx[j + 1]] === v[idx[i]]) j++;
      for (let k = i; k <= j; k++) r[idx[k]] = (i + j) / 2 + 1;
      i = j + 1;
    }
    return r;
  };
  const rx = rank(x), ry = rank(y);
  const n = rx.length;
  if (n < 3) return 0;
  const m = (n + 1) / 2;
  let sxy = 0, sxx = 0, syy = 0;
  for (let i = 0; i < n; i++) {
    sxy += (rx[i] - m) * (ry[i] - m);
    sxx += (rx[i] - m) ** 2;
    syy += (ry[i] - m) ** 2;
  }
  return sxx > 0 && syy > 0 ? sxy / Math.sqrt(sxx * syy) : 0;
}

function slope(x: number[], y: number[]): number {
  const n = x.length;
  if (n < 2) return 0;
  const mx = x.reduce((a, b) => a + b, 0) / n, my = y.reduce((a, b) => a + b, 0) / n;
  let sxy = 0, sxx = 0;
  for (let i = 0; i < n; i++) { sxy += (x[i] - mx) * (y[i] - my); sxx += (x[i] - mx) ** 2; }
  return sxx > 0 ? sxy / sxx : 0;
}

export type Shape = 'sigmoid' | 'saturating' | 'decaying' | 'peaked' | 'other';

/** The data's shape by the rule at the top of this file. */
export function classifyShape(xs: ArrayLike<number>, ys: ArrayLike<number>): Shape {
  const pts = Array.from({ length: xs.length }, (_, i) => [xs[i], ys[i]] as [number, number])
    .filter(([a, b]) => Number.isFinite(a) && Number.isFinite(b))
    .sort((a, b) => a[0] - b[0]);
  const n = pts.length;
  if (n < 6) return 'other';
  const x = pts.map(p => p[0]), y = pts.map(p => p[1]);
  const third = Math.floor(n / 3);
  const parts = [[0, third], [third, n - third], [n - third, n]].map(([a, b]) => slope(x.slice(a, b), y.slice(a, b)));
  const [s1, s2, s3] = parts.map(Math.abs);
  const rho = spearman(x, y);
  if (Math.abs(rho) >= 0.8) {
    if (s2 > 1.5 * s1 && s2 > 1.5 * s3) return 'sigmoid';
    if (rho > 0 && s3 < s1 / 3) return 'saturating';
    if (rho < 0 && s3 < s1 / 3) return 'decaying';
    return 'other';
  }
  const sorted = [...y].sort((a, b) => a - b);
  const median = sorted[Math.floor(n / 2)];
  let k = 0;
  for (let i = 1; i < n; i++) if (Math.abs(y[i] - median) > Math.abs(y[k] - median)) k = i;
  const ends = (Math.abs(y[0] - median) + Math.abs(y[n - 1] - median)) / 2;
  if (k > 0 && k < n - 1 && Math.abs(y[k] - median) > 3 * ends) return 'peaked';
  return 'other';
}

function builtin(id: string, label: string, recommended: boolean): Candidate {
  return { id, label, recommended, model: { name: id, builtin: id } };
}

/** Candidate models for a shape (rule at the top of this file). xMin is the smallest x in the sample. */
export function candidatesFor(shape: Shape, xMin: number): Candidate[] {
  const c: Candidate[] = [
    builtin('linear', 'straight line', true),
    { id: 'quadratic', label: 'quadratic (polynomial of degree 2)', recommended: true, model: { name: 'quadratic', polynomial: 2 } },
    { id: 'cubic', label: 'cubic (polynomial of degree 3)', recommended: false, model: { name: 'cubic', polynomial: 3 } },
  ];
  const positive = xMin > 0;
  const extra: [string, string, boolean][] = [
    ['logistic4', '4-parameter logistic (x > 0)', shape === 'sigmoid' && positive],
    ['logistic3', '3-parameter logistic', shape === 'sigmoid' && !positive],
    ['gompertz', 'Gompertz growth', false],
    ['michaelis_menten', 'Michaelis–Menten saturation', shape === 'saturating' && xMin >= 0],
    ['asymptotic', 'exponential rise to a plateau', shape === 'saturating' && xMin < 0],
    ['exponential_offset', 'exponential decay to an offset', shape === 'decaying'],
    ['gaussian', 'Gaussian peak', shape === 'peaked'],
  ];
  for (const [id, label, rec] of extra) {
    if (id === 'logistic4' && !positive) continue;
    c.push(builtin(id, label, rec));
  }
  return c;
}

function isMonotoneIsh(v: number[]): boolean {
  const f = v.filter(Number.isFinite);
  if (f.length < 2) return false;
  let up = 0, down = 0;
  for (let i = 1; i < f.length; i++) { if (f[i] > f[i - 1]) up++; else if (f[i] < f[i - 1]) down++; }
  const steps = f.length - 1;
  return up >= 0.9 * steps || down >= 0.9 * steps || Math.abs(spearman(f.map((_, i) => i), f)) >= 0.95;
}

/**
 * Reads the header and up to SAMPLE_ROWS rows of a CSV file, guesses x (the first numeric column that is
 * monotone-ish in file order, else the first numeric column) and y (the next numeric column), and proposes
 * candidate models for the shape of y against x. opts.x / opts.y override the guesses (names not in the header are
 * ignored here; the caller reports them). Throws a DataError (from readHeader) for unreadable files.
 */
export async function suggestSpec(csvPath: string, opts: { x?: string; y?: string } = {}): Promise<Suggestion> {
  const columns = await readHeader(csvPath);
  const handle = await fsp.open(csvPath, 'r');
  let text: string;
  let cut = false;
  try {
    const buf = Buffer.alloc(256 * 1024);
    const { bytesRead } = await handle.read(buf, 0, buf.length, 0);
    cut = bytesRead === buf.length;
    text = buf.subarray(0, bytesRead).toString('utf8');
  } finally {
    await handle.close();
  }
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  // the delimiter the reader itself will use (it decides from the header line), not papaparse's own guess
  const delimiter = detectDelimiter(text.split(/\r?\n/, 1)[0], '.');
  const parsed = Papa.parse<string[]>(text, { preview: SAMPLE_ROWS + 1, skipEmptyLines: 'greedy', delimiter });
  const rows = parsed.data.slice(1).filter(r => Array.isArray(r));
  if (cut && rows.length > SAMPLE_ROWS - 1) rows.pop(); // the last row may be cut in the middle
  const decimalComma = delimiter === ';';
  const values = columns.map((_, j) => rows.map(r => toNumber(r[j], decimalComma)));
  const numeric = columns
    .map((name, j) => {
      const cells = rows.filter(r => (r[j] ?? '').trim() !== '').length;
      const ok = values[j].filter(Number.isFinite).length;
      return { name, j, ok: cells > 0 && ok >= NUMERIC_FRACTION * cells };
    })
    .filter(c => c.ok);
  const chosen = (name: string | undefined) => (name !== undefined ? columns.indexOf(name) : -1);
  const xj = chosen(opts.x), yj = chosen(opts.y);
  if (numeric.length < 2 && !(xj >= 0 && yj >= 0)) {
    const err = new Error(
      `${path.basename(csvPath)} has ${numeric.length === 0 ? 'no numeric column' : `only one numeric column ('${numeric[0].name}')`} in its first ${rows.length} rows — a fit needs a numeric x and y column`,
    );
    err.name = 'DataError';
    throw err;
  }
  // a long-format file: an id column (text, or whole numbers that look like x) is proposed as data.groupBy and is
  // never taken as x or y; the guess is made with the id column left out, then checked against the chosen x
  let idFirst: number | undefined;
  let fewest = Infinity;
  for (const c of numeric) {
    if (c.j === yj) continue;
    const g = groupColumn(columns, rows, [c.j, xj, yj].filter(j => j >= 0), c.j);
    const distinctOf = (j: number): number => new Set(rows.map(r => (r[j] ?? '').trim())).size;
    const distinct = g === undefined ? Infinity : distinctOf(g);
    // an id has fewer distinct values than the x it repeats over (hours repeat across reactors, not vice versa);
    // of several readings, the id with the fewest
    if (distinct < distinctOf(c.j) && distinct < fewest) [idFirst, fewest] = [g, distinct];
  }
  const pool = numeric.filter(c => c.j !== idFirst || numeric.length <= 2);
  const xCol = xj >= 0 ? { name: columns[xj], j: xj } : (pool.find(c => c.j !== yj && isMonotoneIsh(values[c.j])) ?? pool.find(c => c.j !== yj)!);
  const yCol = yj >= 0 ? { name: columns[yj], j: yj } : (pool.find(c => c.j > xCol.j) ?? pool.find(c => c.j !== xCol.j) ?? xCol);
  const gj = groupColumn(columns, rows, [xCol.j, yCol.j], xCol.j);
  // the shape is judged on the groups pooled (same x grid, more points than one group)
  const xs = values[xCol.j], ys = values[yCol.j];
  const finiteX = xs.filter((v, i) => Number.isFinite(v) && Number.isFinite(ys[i]));
  const xMin = finiteX.length ? Math.min(...finiteX) : 0;
  // a decimal comma is written into the spec: the reader's default is "." (and ';' files are where commas are decimals)
  const commaNumbers = decimalComma && rows.some(r => [xCol.j, yCol.j].some(j => /^\s*[-+]?\d*,\d+(?:[eE][-+]?\d+)?\s*$/.test(r[j] ?? '')));
  return {
    columns, x: xCol.name, y: yCol.name, candidates: candidatesFor(classifyShape(xs, ys), xMin),
    ...(commaNumbers ? { decimal: ',' as const } : {}), ...(gj !== undefined ? { groupBy: columns[gj] } : {}),
  };
}




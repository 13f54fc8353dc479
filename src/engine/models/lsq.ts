// Small dense least squares for self-starting estimates: modified Gram–Schmidt QR with one re-orthogonalisation
// pass (Björck, "Numerical Methods for Least Squares Problems", 1996, §2.4; mgsQr in solve/linalg.ts), plus profile
// grids over the nonlinear parameters of conditionally linear models (the linear ones solved exactly for every grid
// point — common practice).
import { sortedOrder } from '../data/order';
import { mgsProject, mgsQr } from '../solve/linalg';

/** Result of a small least-squares solve: coefficients and residual sum of squares. */
export interface SmallLsq {
  coef: number[];
  sse: number;
}

/**
 * Minimise Σ w_i (y_i − Σ_k coef_k · cols[k][i])². Returns null when a column is (numerically) dependent on the
 * others or any value is non-finite. p = cols.length is small (≤ 4 here); n may be large.
 */
export function smallLsq(cols: ArrayLike<number>[], y: ArrayLike<number>, w?: ArrayLike<number> | null): SmallLsq | null {
  const p = cols.length;
  const n = y.length;
  if (p === 0 || n < p) return null;
  const Q: Float64Array[] = [];
  const R = new Float64Array(p * p);
  const sw = new Float64Array(n);
  for (let i = 0; i < n; i++) sw[i] = w ? Math.sqrt(w[i]) : 1;
  for (let k = 0; k < p; k++) {
    const q = new Float64Array(n);
    const c = cols[k];
    for (let i = 0; i < n; i++) {
      q[i] = c[i] * sw[i];
      if (!Number.isFinite(q[i])) return null;
    }
    Q.push(q);
  }
  if (!mgsQr(Q, n, { relTol: 1e-10, R })) return null;
  const qty = new Float64Array(p);
  const r = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    r[i] = y[i] * sw[i];
    if (!Number.isFinite(r[i])) return null;
  }
  mgsProject(Q, n, r, 1, qty);
  const coef = new Array<number>(p).fill(0);
  for (let k = p - 1; k >= 0; k--) {
    let s = qty[k];
    for (let j = k + 1; j < p; j++) s -= R[k * p + j] * coef[j];
    coef[k] = s / R[k * p + k];
  }
  let sse = 0;
  for (let i = 0; i < n; i++) sse += r[i] * r[i];
  if (!coef.every(Number.isFinite) || !Number.isFinite(sse)) return null;
  return { coef, sse };
}

/** Straight line y ≈ a + b·t by least squares (optionally weighted); null when t is constant. */
export function lineFit(t: ArrayLike<number>, y: ArrayLike<number>, w?: ArrayLike<number> | null): { a: number; b: number; sse: number } | null {
  const ones = new Float64Array(t.length).fill(1);
  const s = smallLsq([ones, t], y, w);
  return s ? { a: s.coef[0], b: s.coef[1], sse: s.sse } : null;
}

/** Best point of a profile grid: for each q, the basis columns are built and the linear coefficients solved. */
export interface ProfileBest {
  q: number[];
  coef: number[];
  sse: number;
}

/**
 * Profile search: for every nonlinear candidate q in `grid`, `basis(q)` gives the columns of the model's linear
 * part (or null when q is not admissible); the coefficients follow by least squares. Returns the q with least SSE.
 */
export function profileSearch(
  grid: number[][],
  basis: (q: number[]) => Float64Array[] | null,
  y: ArrayLike<number>,
): ProfileBest | null {
  let best: ProfileBest | null = null;
  for (const q of grid) {
    const cols = basis(q);
    if (!cols) continue;
    const s = smallLsq(cols, y);
    if (!s) continue;
    if (!best || s.sse < best.sse) best = { q, coef: s.coef, sse: s.sse };
  }
  return best;
}

/** Cartesian product of value lists. */
export function product(...lists: number[][]): number[][] {
  let out: number[][] = [[]];
  for (const list of lists) {
    const next: number[][] = [];
    for (const prefix of out) for (const v of list) next.push([...prefix, v]);
    out = next;
  }
  return out;
}

/** m values spaced evenly in log10 between lo > 0 and hi > lo. */
export function logSpace(lo: number, hi: number, m: number): number[] {
  const a = Math.log10(lo);
  const b = Math.log10(hi);
  const out: number[] = [];
  for (let k = 0; k < m; k++) out.push(10 ** (a + ((b - a) * k) / Math.max(1, m - 1)));
  return out;
}

/** m values spaced evenly between lo and hi (inclusive). */
export function linSpace(lo: number, hi: number, m: number): number[] {
  const out: number[] = [];
  for (let k = 0; k < m; k++) out.push(lo + ((hi - lo) * k) / Math.max(1, m - 1));
  return out;
}

/** Summary of a data column used by the self-starts: min, max, span, and the finite pairs kept. */
export interface XYSummary {
  x: Float64Array;
  y: Float64Array;
  n: number;
  xmin: number;
  xmax: number;
  span: number;
  ymin: number;
  ymax: number;
  /** smallest positive x, or NaN when none */
  xposMin: number;
}

/** Self-starts look at no more rows than this (an even subsample in x order above it). */
export const MAX_SELF_START_POINTS = 400;

/** Keeps only rows with finite x and y (at most MAX_SELF_START_POINTS of them); null when fewer than `minPoints` remain. */
export function summarize(x: ArrayLike<number>, y: ArrayLike<number>, minPoints: number): XYSummary | null {
  const xs: number[] = [];
  const ys: number[] = [];
  const m = Math.min(x.length, y.length);
  for (let i = 0; i < m; i++) {
    if (Number.isFinite(x[i]) && Number.isFinite(y[i])) {
      xs.push(x[i]);
      ys.push(y[i]);
    }
  }
  if (xs.length < minPoints) return null;
  if (xs.length > MAX_SELF_START_POINTS) {
    // an estimate needs no more than a few thousand points: every k-th row in x order, covering the whole range
    const idx = sortedOrder(xs); // stable: ties in row order
    const m = MAX_SELF_START_POINTS;
    const pick = Array.from({ length: m }, (_, k) => idx[Math.round((k * (idx.length - 1)) / (m - 1))]);
    const sx = pick.map((i) => xs[i]);
    const sy = pick.map((i) => ys[i]);
    xs.length = 0;
    ys.length = 0;
    xs.push(...sx);
    ys.push(...sy);
  }
  let xmin = Infinity;
  let xmax = -Infinity;
  let ymin = Infinity;
  let ymax = -Infinity;
  let xposMin = Infinity;
  for (let i = 0; i < xs.length; i++) {
    xmin = Math.min(xmin, xs[i]);
    xmax = Math.max(xmax, xs[i]);
    ymin = Math.min(ymin, ys[i]);
    ymax = Math.max(ymax, ys[i]);
    if (xs[i] > 0) xposMin = Math.min(xposMin, xs[i]);
  }
  return {
    x: Float64Array.from(xs),
    y: Float64Array.from(ys),
    n: xs.length,
    xmin,
    xmax,
    span: xmax - xmin,
    ymin,
    ymax,
    xposMin: Number.isFinite(xposMin) ? xposMin : NaN,
  };
}

/** Builds a column from x by a pointwise function. */
export function column(x: Float64Array, fn: (xi: number) => number): Float64Array {
  const out = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) out[i] = fn(x[i]);
  return out;
}

// What the analysis of one model reads from its data: the least-squares problem of a compiled formula, whether its
// columns span a constant (modified Gram–Schmidt, Björck 1996 §2.4: mgsQr), rows ordered by x and expanded by
// data.count for the residual tests, and the extremes of a column (common practice).
import type { LsqProblem } from '../solve/types';
import type { ModelAnalysisInput } from './api';
import { sortedOrder } from './crossval';
import { mgsProject, mgsQr } from '../solve/linalg';
import { blocksOf } from '../solve/block';

/** LsqProblem over the given data for a compiled formula. */
export function lsqProblem(input: Pick<ModelAnalysisInput, 'compiled' | 'X' | 'y' | 'w' | 'params'>): LsqProblem {
  const { compiled, X, y, w } = input;
  const blocks = blocksOf(compiled, X);
  return {
    n: y.length,
    p: input.params.length,
    y,
    w: w ?? undefined,
    ...(blocks ? { blocks } : {}),
    model: (theta, out, J) => (J ? compiled.evaluateWithJacobian(theta, X, out, J) : compiled.evaluate(theta, X, out)),
  };
}

/** true when the constant vector lies in the span of the free Jacobian columns (a linear model "with intercept"). */
export function hasConstantColumn(J: Float64Array, n: number, p: number, free: boolean[]): boolean {
  if (n === 0) return false;
  const cols: Float64Array[] = [];
  for (let j = 0; j < p; j++) if (free[j]) cols.push(Float64Array.from(J.subarray(j * n, (j + 1) * n)));
  // an orthonormal basis of the free columns (dependent ones left out), then the residual of projecting 1/√n onto it
  const kept = mgsQr(cols, n, { relTol: 1e-10, skipDependent: true }) ?? [];
  const basis = kept.map((a) => cols[a]);
  const one = new Float64Array(n).fill(1 / Math.sqrt(n));
  mgsProject(basis, n, one, 2);
  let r = 0;
  for (let i = 0; i < n; i++) r += one[i] * one[i];
  return Math.sqrt(r) < 1e-8;
}


/** Sort order of the rows by the first x variable (ties by row order). */
export function orderByX(X: Float64Array[], n: number): Int32Array {
  const x = X[0];
  if (x) return sortedOrder(x.length === n ? x : x.subarray(0, n));
  const idx = new Int32Array(n);
  for (let i = 0; i < n; i++) idx[i] = i;
  return idx;
}

/** max observations the residual tests expand data.count rows into (beyond it they use one residual per row) */
const MAX_EXPANDED = 1_000_000;

export function identityOrder(n: number): Int32Array {
  const idx = new Int32Array(n);
  for (let i = 0; i < n; i++) idx[i] = i;
  return idx;
}

/** v in the given order, each row repeated count[i] times (the expanded observations), or once without counts */
export function expandByCount(v: Float64Array, order: ArrayLike<number>, count: Float64Array | null): Float64Array {
  let total = 0;
  if (count) for (let t = 0; t < order.length; t++) total += count[order[t]];
  const expand = count !== null && total <= MAX_EXPANDED;
  const out = new Float64Array(expand ? total : order.length);
  let k = 0;
  for (let t = 0; t < order.length; t++) {
    const i = order[t];
    const m = expand ? count![i] : 1;
    for (let c = 0; c < m; c++) out[k++] = v[i];
  }
  return out;
}


export function minOf(a: ArrayLike<number>): number {
  let m = Infinity;
  for (let i = 0; i < a.length; i++) if (a[i] < m) m = a[i];
  return m;
}

export function maxOf(a: ArrayLike<number>): number {
  let m = -Infinity;
  for (let i = 0; i < a.length; i++) if (a[i] > m) m = a[i];
  return m;
}

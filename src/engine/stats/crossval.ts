// k-fold cross-validated RMSE with deterministic folds shared by every model of a spec: rows sorted by the first x
// variable (ties by row order), fold = rank mod k, k = min(10, n) (common practice; DESIGN.md "Cross-validation").
// Nonlinear refits are warm-started from the full-data estimate with a shorter iteration cap; linear refits skip the
// iterative refinement (their estimates are not reported, only their predictions of the held-out rows).
import type { CompiledFormula } from '../formula/types';
import { solve } from '../solve';
import { DEFAULTS } from '../spec/defaults';
import { sortedOrder } from '../data/order';

export { sortedOrder };


/** Fold of each row (0..k−1) and k. */
export function cvFolds(x: ArrayLike<number>, maxK = 10, order: Int32Array = sortedOrder(x)): { fold: Int32Array; k: number } {
  const n = x.length;
  const k = Math.min(maxK, n);
  const fold = new Int32Array(n);
  for (let rank = 0; rank < n; rank++) fold[order[rank]] = rank % k;
  return { fold, k };
}

/** test rows of every fold, concatenated fold by fold in row order: rows of fold f are test[start[f] .. start[f+1]) */
function foldRows(fold: Int32Array, k: number): { test: Int32Array; start: Int32Array } {
  const n = fold.length;
  const start = new Int32Array(k + 1);
  for (let i = 0; i < n; i++) start[fold[i] + 1]++;
  for (let f = 0; f < k; f++) start[f + 1] += start[f];
  const next = start.slice(0, k);
  const test = new Int32Array(n);
  for (let i = 0; i < n; i++) test[next[fold[i]]++] = i;
  return { test, start };
}

/** the rows of src at idx, into a new array */
function gather(src: ArrayLike<number>, idx: Int32Array): Float64Array {
  const out = new Float64Array(idx.length);
  for (let t = 0; t < idx.length; t++) out[t] = src[idx[t]];
  return out;
}

/** iteration cap of a nonlinear refit: warm-started from the full-data estimate it needs few (common practice) */
const CV_MAX_ITERATIONS: number = DEFAULTS.analysis.cvIterations;

export interface CvContext {
  compiled: CompiledFormula;
  X: Float64Array[];
  y: Float64Array;
  w: Float64Array | null;
  theta: Float64Array;
  lower: ArrayLike<number>;
  upper: ArrayLike<number>;
  fixed: boolean[];
  linear: boolean;
  /** sortedOrder(X[0]) when the caller has it already */
  order?: Int32Array;
  maxIterations?: number;
  deadline: number;
  shouldStop?: () => boolean;
}

export type CvResult = { rmse: number; folds: number } | { rmse: null; folds: number | null; reason: 'too-few-rows' | 'timeout' | 'failed' };

/** √(Σ w_i (y_i − ŷ_(−i))² / n), ŷ_(−i) from the fit without row i's fold. */
export function crossValidate(ctx: CvContext): CvResult {
  const n = ctx.y.length;
  const pFree = ctx.fixed.filter((f) => !f).length;
  if (n < 2) return { rmse: null, folds: null, reason: 'too-few-rows' };
  const x = ctx.X[0] ?? new Float64Array(n);
  const { fold, k } = cvFolds(x, 10, ctx.order && ctx.order.length === n ? ctx.order : sortedOrder(x));
  // the smallest training set must leave at least one residual degree of freedom
  if (n - Math.ceil(n / k) <= pFree) return { rmse: null, folds: k, reason: 'too-few-rows' };
  const { test: testRows, start } = foldRows(fold, k);
  const train = new Int32Array(n);
  let sum = 0;
  for (let f = 0; f < k; f++) {
    if (Date.now() > ctx.deadline || ctx.shouldStop?.()) return { rmse: null, folds: k, reason: 'timeout' };
    const test = testRows.subarray(start[f], start[f + 1]);
    let m = 0;
    for (let i = 0; i < n; i++) if (fold[i] !== f) train[m++] = i;
    const trainRows = train.subarray(0, m);
    const Xt = ctx.X.map((col) => gather(col, trainRows));
    const yt = gather(ctx.y, trainRows);
    const wt = ctx.w ? gather(ctx.w, trainRows) : undefined;
    const compiled = ctx.compiled;
    // refits predict held-out rows: the full-data fit is the certified one, so no refinement and a shorter cap here
    const res = solve(
      {
        n: m, p: ctx.theta.length, y: yt, w: wt,
        model: (theta, out, J) => (J ? compiled.evaluateWithJacobian(theta, Xt, out, J) : compiled.evaluate(theta, Xt, out)),
      },
      {
        theta0: ctx.theta, lower: ctx.lower, upper: ctx.upper, fixed: ctx.fixed, linear: ctx.linear, refine: false,
        maxIterations: Math.min(ctx.maxIterations ?? CV_MAX_ITERATIONS, CV_MAX_ITERATIONS),
        seconds: Math.max(0.05, (ctx.deadline - Date.now()) / 1000), shouldStop: ctx.shouldStop,
      },
    );
    if (res.termination === 'cancelled' || res.termination === 'time-limit') return { rmse: null, folds: k, reason: 'timeout' };
    const Xv = ctx.X.map((col) => gather(col, test));
    const pred = new Float64Array(test.length);
    compiled.evaluate(res.theta, Xv, pred);
    for (let t = 0; t < test.length; t++) {
      const i = test[t];
      const e = ctx.y[i] - pred[t];
      if (!Number.isFinite(e)) return { rmse: null, folds: k, reason: 'failed' };
      sum += (ctx.w ? ctx.w[i] : 1) * e * e;
    }
  }
  return { rmse: Math.sqrt(sum / n), folds: k };
}

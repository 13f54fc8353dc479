// k-fold cross-validated RMSE with deterministic folds shared by every model of a spec: rows sorted by the first x
// variable (ties by row order), fold = rank mod k, k = min(10, n) (common practice; DESIGN.md "Cross-validation").
// Nonlinear refits are warm-started from the full-data estimate.
import type { CompiledFormula } from '../formula/types';
import { solve } from '../solve';

/** Fold of each row (0..k−1) and k. */
export function cvFolds(x: ArrayLike<number>, maxK = 10): { fold: Int32Array; k: number } {
  const n = x.length;
  const k = Math.min(maxK, n);
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => x[a] - x[b] || a - b);
  const fold = new Int32Array(n);
  order.forEach((row, rank) => (fold[row] = rank % k));
  return { fold, k };
}

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
  const { fold, k } = cvFolds(ctx.X[0] ?? new Float64Array(n));
  // the smallest training set must leave at least one residual degree of freedom
  if (n - Math.ceil(n / k) <= pFree) return { rmse: null, folds: k, reason: 'too-few-rows' };
  let sum = 0;
  for (let f = 0; f < k; f++) {
    if (Date.now() > ctx.deadline || ctx.shouldStop?.()) return { rmse: null, folds: k, reason: 'timeout' };
    const train: number[] = [];
    const test: number[] = [];
    for (let i = 0; i < n; i++) (fold[i] === f ? test : train).push(i);
    const Xt = ctx.X.map((col) => Float64Array.from(train, (i) => col[i]));
    const yt = Float64Array.from(train, (i) => ctx.y[i]);
    const wt = ctx.w ? Float64Array.from(train, (i) => ctx.w![i]) : undefined;
    const m = train.length;
    const compiled = ctx.compiled;
    const res = solve(
      {
        n: m, p: ctx.theta.length, y: yt, w: wt,
        model: (theta, out, J) => (J ? compiled.evaluateWithJacobian(theta, Xt, out, J) : compiled.evaluate(theta, Xt, out)),
      },
      {
        theta0: ctx.theta, lower: ctx.lower, upper: ctx.upper, fixed: ctx.fixed, linear: ctx.linear,
        maxIterations: ctx.maxIterations ?? 200, seconds: Math.max(0.05, (ctx.deadline - Date.now()) / 1000), shouldStop: ctx.shouldStop,
      },
    );
    if (res.termination === 'cancelled' || res.termination === 'time-limit') return { rmse: null, folds: k, reason: 'timeout' };
    const Xv = ctx.X.map((col) => Float64Array.from(test, (i) => col[i]));
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

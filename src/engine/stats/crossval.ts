// k-fold cross-validated RMSE by exact block downdates for linear models (deleted-block residuals e₋f = (I − H_ff)⁻¹ e_f with H_ff = Q_f Q_fᵀ from the thin QR of the weighted design, by the Woodbury identity; Belsley, Kuh & Welsch 1980 §2.1) and warm-started Levenberg–Marquardt refits with a fixed iteration cap for nonlinear ones.
//
// Folds are deterministic and shared by every model of a spec: rows sorted by the first x variable (ties by row
// order), fold = rank mod k, k = min(10, n) (common practice; DESIGN.md "Cross-validation").
// - linear (no bound on a free parameter, full rank): e₋f = e_f + Q_f (I − Q_fᵀQ_f)⁻¹ Q_fᵀ e_f, a q×q solve per fold,
//   O(n q²) in all — the held-out residuals of the refit without fold f, exactly (to rounding) and without refitting.
// - nonlinear (or linear with bounds, or rank-deficient): a refit on the other folds, started from θ̂ + δ_f, the
//   same downdate applied to the linearised model (from θ̂ where that start does not converge), at most
//   DEFAULTS.analysis.cvIterations Levenberg–Marquardt iterations and no polish (a count, the same on every
//   machine); the report's `cvMethod` says which was used.
import type { CompiledFormula } from '../formula/types';
import { solve } from '../solve';
import { qrFactor, applyQ, rankTolerance } from '../solve/linalg';
import { blocksOf } from '../solve/block';
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
  /** 'refit': refit every fold even where a linear model could be downdated (tests compare the two) */
  method?: CvMethod;
  /** sortedOrder(X[0]) when the caller has it already */
  order?: Int32Array;
  maxIterations?: number;
  deadline: number;
  shouldStop?: () => boolean;
}

/** how the held-out predictions were obtained: exact downdate of the linear fit, or warm-started capped refits */
export type CvMethod = 'downdate' | 'refit';

export type CvResult =
  | { rmse: number; folds: number; method: CvMethod }
  | { rmse: null; folds: number | null; method: CvMethod | null; reason: 'too-few-rows' | 'timeout' | 'failed' };

/**
 * Block downdates of the fit at ctx.theta (see file header): Σ_f ‖e₋f‖² and, per fold, the step δ_f of the
 * linearised refit without it, θ₋f ≈ θ̂ + δ_f with δ_f = −P R⁻¹ (I − Q_fᵀQ_f)⁻¹ Q_fᵀ e_f (exact for a linear model);
 * null when the Jacobian is rank-deficient or a fold holds all the leverage of a direction.
 */
function foldDowndates(ctx: CvContext, k: number, testRows: Int32Array, start: Int32Array): { sum: number; delta: Float64Array[] } | null {
  const n = ctx.y.length;
  const p = ctx.theta.length;
  const free: number[] = [];
  for (let j = 0; j < p; j++) if (!ctx.fixed[j]) free.push(j);
  const q = free.length;
  if (q === 0 || n <= q) return null;
  const f = new Float64Array(n);
  const J = new Float64Array(n * p);
  ctx.compiled.evaluateWithJacobian(ctx.theta, ctx.X, f, J);
  const e = new Float64Array(n);
  const A = new Float64Array(n * q);
  for (let i = 0; i < n; i++) {
    const sw = Math.sqrt(ctx.w ? ctx.w[i] : 1);
    e[i] = sw * (ctx.y[i] - f[i]);
    for (let t = 0; t < q; t++) A[t * n + i] = sw * J[free[t] * n + i];
  }
  const qr = qrFactor(A, n, q, true);
  const tol = rankTolerance(n, q) * Math.abs(qr.rdiag[0]);
  for (let t = 0; t < q; t++) if (!(Math.abs(qr.rdiag[t]) > tol)) return null;
  // thin Q (n×q, column-major), column t = Q e_t
  const Q = new Float64Array(n * q);
  for (let t = 0; t < q; t++) {
    const col = Q.subarray(t * n, t * n + n);
    col[t] = 1;
    applyQ(qr, col);
  }
  let sum = 0;
  const G = new Float64Array(q * q);
  const u = new Float64Array(q);
  const delta: Float64Array[] = [];
  for (let fIdx = 0; fIdx < k; fIdx++) {
    const rows = testRows.subarray(start[fIdx], start[fIdx + 1]);
    // G = I − Q_fᵀQ_f, u = Q_fᵀ e_f
    G.fill(0);
    u.fill(0);
    for (const i of rows) {
      for (let a = 0; a < q; a++) {
        const qa = Q[a * n + i];
        u[a] += qa * e[i];
        for (let b = 0; b <= a; b++) G[a * q + b] += qa * Q[b * n + i];
      }
    }
    for (let a = 0; a < q; a++) {
      for (let b = 0; b < a; b++) G[b * q + a] = G[a * q + b] = -G[a * q + b];
      G[a * q + a] = 1 - G[a * q + a];
    }
    const z = cholSolve(G, u, q);
    if (!z) return null; // the fold holds (nearly) all the leverage of a direction: the refit tells what happens
    for (const i of rows) {
      let d = e[i];
      for (let a = 0; a < q; a++) d += Q[a * n + i] * z[a];
      if (!Number.isFinite(d)) return null;
      sum += d * d;
    }
    // δ in pivoted order: R w = −z, then θ_free[perm[t]] += w_t
    const wv = new Float64Array(q);
    for (let t = q - 1; t >= 0; t--) {
      let s = -z[t];
      for (let c = t + 1; c < q; c++) s -= qr.a[c * n + t] * wv[c];
      wv[t] = s / qr.rdiag[t];
    }
    const d = new Float64Array(p);
    for (let t = 0; t < q; t++) d[free[qr.perm[t]]] = wv[t];
    delta.push(d);
  }
  return { sum, delta };
}

/** no finite bound on a free parameter: a linear refit could not meet one, so the downdate is the refit */
function unbounded(ctx: CvContext): boolean {
  for (let j = 0; j < ctx.theta.length; j++) {
    if (!ctx.fixed[j] && (Number.isFinite(ctx.lower[j]) || Number.isFinite(ctx.upper[j]))) return false;
  }
  return true;
}

/** Solve G z = u for symmetric positive definite G (q×q) by Cholesky; null when G is not positive definite to rounding. */
function cholSolve(G: Float64Array, u: Float64Array, q: number): Float64Array | null {
  const L = new Float64Array(q * q);
  for (let j = 0; j < q; j++) {
    let d = G[j * q + j];
    for (let t = 0; t < j; t++) d -= L[j * q + t] * L[j * q + t];
    if (!(d > 64 * Number.EPSILON * G[j * q + j])) return null;
    const ljj = Math.sqrt(d);
    L[j * q + j] = ljj;
    for (let i = j + 1; i < q; i++) {
      let s = G[i * q + j];
      for (let t = 0; t < j; t++) s -= L[i * q + t] * L[j * q + t];
      L[i * q + j] = s / ljj;
    }
  }
  const z = Float64Array.from(u);
  for (let i = 0; i < q; i++) {
    let s = z[i];
    for (let t = 0; t < i; t++) s -= L[i * q + t] * z[t];
    z[i] = s / L[i * q + i];
  }
  for (let i = q - 1; i >= 0; i--) {
    let s = z[i];
    for (let t = i + 1; t < q; t++) s -= L[t * q + i] * z[t];
    z[i] = s / L[i * q + i];
  }
  return z;
}

/** { blocks } of a joint model on the training rows (solve/block.ts), else nothing */
function blocksIn(compiled: CompiledFormula, X: Float64Array[]): { blocks?: ReturnType<typeof blocksOf> } {
  const blocks = blocksOf(compiled, X);
  return blocks ? { blocks } : {};
}

/** √(Σ w_i (y_i − ŷ_(−i))² / n), ŷ_(−i) from the fit without row i's fold. */
export function crossValidate(ctx: CvContext): CvResult {
  const n = ctx.y.length;
  const pFree = ctx.fixed.filter((f) => !f).length;
  if (n < 2) return { rmse: null, folds: null, method: null, reason: 'too-few-rows' };
  const x = ctx.X[0] ?? new Float64Array(n);
  const { fold, k } = cvFolds(x, 10, ctx.order && ctx.order.length === n ? ctx.order : sortedOrder(x));
  // the smallest training set must leave at least one residual degree of freedom
  if (n - Math.ceil(n / k) <= pFree) return { rmse: null, folds: k, method: null, reason: 'too-few-rows' };
  const { test: testRows, start } = foldRows(fold, k);
  // a joint fit (solve/block.ts): block refits from θ̂ (the downdate would factor the dense n × p Jacobian)
  const joint = blocksOf(ctx.compiled, ctx.X) !== undefined;
  if (ctx.linear && !joint && ctx.method !== 'refit' && unbounded(ctx)) {
    const s = foldDowndates(ctx, k, testRows, start);
    if (s !== null) return { rmse: Math.sqrt(s.sum / n), folds: k, method: 'downdate' };
  }
  // nonlinear: each refit starts from the linearised downdate of its fold (second-order close, so the capped refit
  // converges in fewer iterations), or from θ̂ where there is none
  const lin = ctx.linear || joint ? null : foldDowndates(ctx, k, testRows, start);
  return refitFolds(ctx, fold, k, testRows, start, lin ? lin.delta : null);
}

/** the held-out predictions of capped, warm-started refits without each fold */
function refitFolds(ctx: CvContext, fold: Int32Array, k: number, testRows: Int32Array, start: Int32Array, delta: Float64Array[] | null): CvResult {
  const n = ctx.y.length;
  const method: CvMethod = 'refit';
  const train = new Int32Array(n);
  let sum = 0;
  for (let f = 0; f < k; f++) {
    if (Date.now() > ctx.deadline || ctx.shouldStop?.()) return { rmse: null, folds: k, method, reason: 'timeout' };
    const test = testRows.subarray(start[f], start[f + 1]);
    let m = 0;
    for (let i = 0; i < n; i++) if (fold[i] !== f) train[m++] = i;
    const trainRows = train.subarray(0, m);
    const Xt = ctx.X.map((col) => gather(col, trainRows));
    const yt = gather(ctx.y, trainRows);
    const wt = ctx.w ? gather(ctx.w, trainRows) : undefined;
    const compiled = ctx.compiled;
    // refits predict held-out rows: the full-data fit is the certified one, so no refinement and a shorter cap here
    const refit = (theta0: Float64Array) => solve(
      {
        n: m, p: ctx.theta.length, y: yt, w: wt, ...blocksIn(compiled, Xt),
        model: (theta, out, J) => (J ? compiled.evaluateWithJacobian(theta, Xt, out, J) : compiled.evaluate(theta, Xt, out)),
      },
      {
        theta0, lower: ctx.lower, upper: ctx.upper, fixed: ctx.fixed, linear: ctx.linear, refine: false,
        maxIterations: Math.min(ctx.maxIterations ?? CV_MAX_ITERATIONS, CV_MAX_ITERATIONS),
        seconds: Math.max(0.05, (ctx.deadline - Date.now()) / 1000), shouldStop: ctx.shouldStop,
      },
    );
    let res = refit(delta ? startOf(ctx, delta[f]) : ctx.theta);
    // a linearised start outside the model's domain, or one the capped refit does not bring to convergence: from θ̂
    if (delta && (!res.converged || !Number.isFinite(res.sse)) && res.termination !== 'cancelled' && res.termination !== 'time-limit') {
      res = refit(ctx.theta);
    }
    if (res.termination === 'cancelled' || res.termination === 'time-limit') return { rmse: null, folds: k, method, reason: 'timeout' };
    const Xv = ctx.X.map((col) => gather(col, test));
    const pred = new Float64Array(test.length);
    compiled.evaluate(res.theta, Xv, pred);
    for (let t = 0; t < test.length; t++) {
      const i = test[t];
      const e = ctx.y[i] - pred[t];
      if (!Number.isFinite(e)) return { rmse: null, folds: k, method, reason: 'failed' };
      sum += (ctx.w ? ctx.w[i] : 1) * e * e;
    }
  }
  return { rmse: Math.sqrt(sum / n), folds: k, method };
}

/** θ̂ + δ, inside the box (a start on the wrong side of a bound would be projected by the solver anyway) */
function startOf(ctx: CvContext, delta: Float64Array): Float64Array {
  const t = Float64Array.from(ctx.theta);
  for (let j = 0; j < t.length; j++) {
    if (ctx.fixed[j]) continue;
    const v = t[j] + delta[j];
    if (Number.isFinite(v)) t[j] = Math.min(ctx.upper[j], Math.max(ctx.lower[j], v));
  }
  return t;
}

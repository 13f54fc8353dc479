// Errors in x: orthogonal distance regression, min Σ w_y,i (y_i − f(x_i+δ_i; β))² + w_x,i δ_i² over β and δ (Boggs & Rogers 1990, "Orthogonal distance regression", Contemp. Math. 112), solved by the existing Levenberg–Marquardt on the augmented residual vector; for a straight line with constant σ_x and σ_y the closed form of Deming regression (Deming 1943; Cornbleet & Gochman 1979, Clin. Chem. 25:432) starts it.
import type { CompiledFormula } from '../formula/types';
import type { LsqProblem, SolveResult } from './types';
import { solveNonlinear } from './lm';

/** Above this many rows the augmented dense problem (2n × (p+n)) is too slow; the caller refuses with a message. */
export const MAX_ODR_ROWS = 1000;

/**
 * Deming regression of y on x with error-variance ratio λ = σ_y²/σ_x² (both constant): slope
 * b = (s_yy − λ s_xx + √((s_yy − λ s_xx)² + 4λ s_xy²)) / (2 s_xy), intercept a = ȳ − b x̄ (Cornbleet & Gochman 1979,
 * eq. 5). null when s_xy = 0 (no direction preferred).
 */
export function deming(x: ArrayLike<number>, y: ArrayLike<number>, lambda: number): { intercept: number; slope: number } | null {
  const n = x.length;
  let mx = 0;
  let my = 0;
  for (let i = 0; i < n; i++) {
    mx += x[i];
    my += y[i];
  }
  mx /= n;
  my /= n;
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    const dx = x[i] - mx;
    const dy = y[i] - my;
    sxx += dx * dx;
    syy += dy * dy;
    sxy += dx * dy;
  }
  if (!(Math.abs(sxy) > 0)) return null;
  const d = syy - lambda * sxx;
  const slope = (d + Math.sqrt(d * d + 4 * lambda * sxy * sxy)) / (2 * sxy);
  return { intercept: my - slope * mx, slope };
}

export interface OdrInput {
  compiled: CompiledFormula;
  /** the single x variable's observed values */
  x: Float64Array;
  y: Float64Array;
  /** weight of each y: precision (1/σ_y²) × count */
  wy: Float64Array;
  /** weight of each x: 1/σ_x² × count */
  wx: Float64Array;
  beta0: Float64Array;
  lower: ArrayLike<number>;
  upper: ArrayLike<number>;
  fixed: ArrayLike<boolean>;
  maxIterations?: number;
  seconds?: number;
  shouldStop?: () => boolean;
}

export interface OdrResult {
  /** the augmented solve (θ = [β, δ]) */
  augmented: SolveResult;
  beta: Float64Array;
  delta: Float64Array;
  /** f(x + δ; β) */
  f: Float64Array;
  /** ∂f/∂x at x + δ */
  dfdx: Float64Array;
  /** ∂f/∂β at x + δ, n×p column-major */
  J: Float64Array;
  /** Σ w_y e² + w_x δ² at the solution */
  objective: number;
}

/** f and ∂f/∂x at the points xd (central differences, step ∝ ε^(1/3) of the point's size and the x range). */
function evalWithSlope(c: CompiledFormula, beta: ArrayLike<number>, xd: Float64Array, xScale: number, f: Float64Array, dfdx: Float64Array): void {
  const n = xd.length;
  c.evaluate(beta, [xd], f);
  const lo = new Float64Array(n);
  const hi = new Float64Array(n);
  const h = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    h[i] = 6e-6 * (Math.abs(xd[i]) + xScale);
    lo[i] = xd[i] - h[i];
    hi[i] = xd[i] + h[i];
  }
  const fl = new Float64Array(n);
  const fh = new Float64Array(n);
  c.evaluate(beta, [lo], fl);
  c.evaluate(beta, [hi], fh);
  for (let i = 0; i < n; i++) dfdx[i] = (fh[i] - fl[i]) / (2 * h[i]);
}

/** Orthogonal distance fit from β0 (δ = 0); the augmented problem goes to solveNonlinear with its bounds. */
export function odrFit(o: OdrInput): OdrResult {
  const n = o.y.length;
  const p = o.beta0.length;
  let xScale = 0;
  for (let i = 0; i < n; i++) xScale = Math.max(xScale, Math.abs(o.x[i]));
  xScale = xScale > 0 ? 1e-3 * xScale : 1e-3;
  const yAug = new Float64Array(2 * n);
  yAug.set(o.y);
  const wAug = new Float64Array(2 * n);
  wAug.set(o.wy);
  wAug.set(o.wx, n);
  const xd = new Float64Array(n);
  const fb = new Float64Array(n);
  const Jb = new Float64Array(n * p);
  const slope = new Float64Array(n);
  const problem: LsqProblem = {
    n: 2 * n,
    p: p + n,
    y: yAug,
    w: wAug,
    model(theta, f, J) {
      const beta = theta.subarray(0, p);
      for (let i = 0; i < n; i++) xd[i] = o.x[i] + theta[p + i];
      if (J) {
        o.compiled.evaluateWithJacobian(beta, [xd], fb, Jb);
        evalWithSlope(o.compiled, beta, xd, xScale, fb, slope);
        J.fill(0);
        const m = 2 * n;
        for (let j = 0; j < p; j++) for (let i = 0; i < n; i++) J[j * m + i] = Jb[j * n + i];
        for (let i = 0; i < n; i++) {
          J[(p + i) * m + i] = slope[i];
          J[(p + i) * m + n + i] = 1;
        }
      } else o.compiled.evaluate(beta, [xd], fb);
      for (let i = 0; i < n; i++) {
        f[i] = fb[i];
        f[n + i] = theta[p + i];
      }
    },
  };
  const theta0 = new Float64Array(p + n);
  theta0.set(o.beta0);
  // δ starts at the best shift for β0 of the model linearised at x: δ_i = w_y e_i f′/(w_x + w_y f′²) (exact for a line)
  {
    const f0 = new Float64Array(n);
    const g0 = new Float64Array(n);
    evalWithSlope(o.compiled, o.beta0, Float64Array.from(o.x), xScale, f0, g0);
    for (let i = 0; i < n; i++) {
      const d = (o.wy[i] * (o.y[i] - f0[i]) * g0[i]) / (o.wx[i] + o.wy[i] * g0[i] * g0[i]);
      theta0[p + i] = Number.isFinite(d) ? d : 0;
    }
  }
  const lower = new Float64Array(p + n).fill(-Infinity);
  const upper = new Float64Array(p + n).fill(Infinity);
  const fixed = new Array<boolean>(p + n).fill(false);
  for (let j = 0; j < p; j++) {
    lower[j] = o.lower[j];
    upper[j] = o.upper[j];
    fixed[j] = !!o.fixed[j];
  }
  const aug = solveNonlinear(problem, { theta0, lower, upper, fixed, maxIterations: o.maxIterations, seconds: o.seconds, shouldStop: o.shouldStop });
  const beta = Float64Array.from(aug.theta.subarray(0, p));
  const delta = Float64Array.from(aug.theta.subarray(p));
  for (let i = 0; i < n; i++) xd[i] = o.x[i] + delta[i];
  const f = new Float64Array(n);
  const J = new Float64Array(n * p);
  const dfdx = new Float64Array(n);
  o.compiled.evaluateWithJacobian(beta, [xd], f, J);
  evalWithSlope(o.compiled, beta, xd, xScale, f, dfdx);
  let objective = 0;
  for (let i = 0; i < n; i++) objective += o.wy[i] * (o.y[i] - f[i]) ** 2 + o.wx[i] * delta[i] * delta[i];
  return { augmented: aug, beta, delta, f, dfdx, J, objective };
}

/**
 * The ODR solution as a weighted least-squares result over the n observations, for the statistics layer: weights
 * w_eff = 1/(1/w_y + f′²/w_x) and residuals ẽ = e·(1 + w_y f′²/w_x) (e = y − f(x+δ)), so that Σ w_eff ẽ² is the ODR
 * objective and s²(Jᵀ W_eff J)⁻¹ with J = ∂f/∂β at x+δ is the β block of s²(J_augᵀ W J_aug)⁻¹ (δ eliminated by
 * the Schur complement) — the covariance ODRPACK reports.
 */
export function odrAsLeastSquares(o: OdrInput, r: OdrResult): { result: SolveResult; wEff: Float64Array; residual: Float64Array } {
  const n = o.y.length;
  const wEff = new Float64Array(n);
  const residual = new Float64Array(n);
  const fOut = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const g = r.dfdx[i];
    const ratio = o.wx[i] > 0 ? (o.wy[i] * g * g) / o.wx[i] : 0;
    wEff[i] = o.wy[i] / (1 + ratio);
    residual[i] = (o.y[i] - r.f[i]) * (1 + ratio);
    fOut[i] = o.y[i] - residual[i];
  }
  const a = r.augmented;
  const p = r.beta.length;
  const result: SolveResult = {
    ...a,
    theta: r.beta,
    f: fOut,
    J: r.J,
    sse: r.objective,
    unidentifiable: a.unidentifiable.filter((j) => j < p),
    atBound: a.atBound.slice(0, p),
    rank: Math.min(a.rank, p),
  };
  return { result, wEff, residual };
}

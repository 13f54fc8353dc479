// Errors in x: orthogonal distance regression, min Σ w_y,i (y_i − f(x_i+δ_i; β))² + w_x,i δ_i² over β and δ (Boggs & Rogers 1990, "Orthogonal distance regression", Contemp. Math. 112), solved by the existing Levenberg–Marquardt over β with every δ_i eliminated by its own 1-D solve (variable projection); for a straight line with constant σ_x and σ_y the closed form of Deming regression (Deming 1943; Cornbleet & Gochman 1979, Clin. Chem. 25:432) starts it.
import type { CompiledFormula } from '../formula/types';
import type { LsqProblem, SolveResult } from './types';
import { solveNonlinear } from './lm';
import { centredMoments } from './linalg';

/**
 * Deming regression of y on x with error-variance ratio λ = σ_y²/σ_x² (both constant): slope
 * b = (s_yy − λ s_xx + √((s_yy − λ s_xx)² + 4λ s_xy²)) / (2 s_xy), intercept a = ȳ − b x̄ (Cornbleet & Gochman 1979,
 * eq. 5). null when s_xy = 0 (no direction preferred).
 */
export function deming(x: ArrayLike<number>, y: ArrayLike<number>, lambda: number): { intercept: number; slope: number } | null {
  const { ma: mx, mb: my, saa: sxx, sbb: syy, sab: sxy } = centredMoments(x, y, x.length);
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
  /** the solve over β (δ eliminated) */
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

/** φ_i(δ) = w_y (y − f(x+δ))² + w_x δ² of every point, and e = y − f, f′ at x + δ. */
function pointTerms(o: OdrInput, beta: ArrayLike<number>, delta: Float64Array, xScale: number, xd: Float64Array, f: Float64Array, g: Float64Array, phi: Float64Array): void {
  const n = o.y.length;
  for (let i = 0; i < n; i++) xd[i] = o.x[i] + delta[i];
  evalWithSlope(o.compiled, beta, xd, xScale, f, g);
  for (let i = 0; i < n; i++) {
    const e = o.y[i] - f[i];
    phi[i] = o.wy[i] * e * e + o.wx[i] * delta[i] * delta[i];
  }
}

/**
 * For fixed β, the best shift of every point: min_δ w_y (y − f(x+δ))² + w_x δ², one-dimensional and separate per
 * point, by Gauss–Newton steps δ += (w_y e f′ − w_x δ)/(w_y f′² + w_x) halved while φ_i does not decrease, from
 * the δ given (updated in place). Stops when no step moves any δ by more than 1e-14 of the x scale (at most 100).
 */
export function bestShifts(o: OdrInput, beta: ArrayLike<number>, delta: Float64Array, xScale: number): void {
  const n = o.y.length;
  const xd = new Float64Array(n);
  const f = new Float64Array(n);
  const g = new Float64Array(n);
  const phi = new Float64Array(n);
  const step = new Float64Array(n);
  const trial = new Float64Array(n);
  const fT = new Float64Array(n);
  const gT = new Float64Array(n);
  const phiT = new Float64Array(n);
  pointTerms(o, beta, delta, xScale, xd, f, g, phi);
  for (let it = 0; it < 100; it++) {
    let moved = 0;
    for (let i = 0; i < n; i++) {
      const e = o.y[i] - f[i];
      const d = (o.wy[i] * e * g[i] - o.wx[i] * delta[i]) / (o.wy[i] * g[i] * g[i] + o.wx[i]);
      step[i] = Number.isFinite(d) ? d : 0;
    }
    const active = new Uint8Array(n).fill(1);
    for (let halving = 0; halving < 40; halving++) {
      for (let i = 0; i < n; i++) trial[i] = delta[i] + step[i];
      pointTerms(o, beta, trial, xScale, xd, fT, gT, phiT);
      let pending = false;
      for (let i = 0; i < n; i++) {
        if (!active[i]) continue;
        if (phiT[i] <= phi[i] || !(Math.abs(step[i]) > 1e-14 * xScale)) {
          if (phiT[i] <= phi[i] && Number.isFinite(phiT[i])) {
            moved = Math.max(moved, Math.abs(step[i]));
            delta[i] = trial[i];
            f[i] = fT[i];
            g[i] = gT[i];
            phi[i] = phiT[i];
          }
          active[i] = 0;
          step[i] = 0;
        } else {
          step[i] /= 2;
          pending = true;
        }
      }
      if (!pending) break;
    }
    if (!(moved > 1e-14 * xScale)) break;
  }
}

/**
 * Orthogonal distance fit from β0: variable projection of the shifts δ (Golub & Pereyra 1973; the structure of
 * Boggs, Byrd & Schnabel 1987) — the existing Levenberg–Marquardt over β alone on the n residuals
 * r_i = ±√(w_y e_i² + w_x δ_i²) (sign of f − y) with every δ_i at its best for β (bestShifts), whose Jacobian is
 * exactly √w_eff,i ∂f_i/∂β at x + δ (envelope theorem; w_eff = 1/(1/w_y + f′²/w_x)). Work O(n·p) per step.
 */
export function odrFit(o: OdrInput): OdrResult {
  const n = o.y.length;
  const p = o.beta0.length;
  let xScale = 0;
  for (let i = 0; i < n; i++) xScale = Math.max(xScale, Math.abs(o.x[i]));
  xScale = xScale > 0 ? 1e-3 * xScale : 1e-3;
  const delta = new Float64Array(n);
  const xd = new Float64Array(n);
  const fb = new Float64Array(n);
  const g = new Float64Array(n);
  const Jb = new Float64Array(n * p);
  const zero = new Float64Array(n);
  const problem: LsqProblem = {
    n,
    p,
    y: zero,
    model(beta, r, J) {
      bestShifts(o, beta, delta, xScale);
      for (let i = 0; i < n; i++) xd[i] = o.x[i] + delta[i];
      if (J) o.compiled.evaluateWithJacobian(beta, [xd], fb, Jb);
      evalWithSlope(o.compiled, beta, xd, xScale, fb, g);
      for (let i = 0; i < n; i++) {
        const e = o.y[i] - fb[i];
        const mag = Math.sqrt(o.wy[i] * e * e + o.wx[i] * delta[i] * delta[i]);
        r[i] = e > 0 ? -mag : mag;
        if (J) {
          const sEff = Math.sqrt(o.wy[i] / (1 + (o.wy[i] * g[i] * g[i]) / o.wx[i]));
          for (let j = 0; j < p; j++) J[j * n + i] = sEff * Jb[j * n + i];
        }
      }
    },
  };
  const aug = solveNonlinear(problem, { theta0: o.beta0, lower: o.lower, upper: o.upper, fixed: o.fixed, maxIterations: o.maxIterations, seconds: o.seconds, shouldStop: o.shouldStop });
  const beta = Float64Array.from(aug.theta);
  delta.fill(0);
  bestShifts(o, beta, delta, xScale);
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

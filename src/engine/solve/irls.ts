// Robust M-estimation by iteratively reweighted least squares on top of the least-squares solvers (Holland & Welsch 1977, "Robust regression using iteratively reweighted least-squares"), losses as in SciPy least_squares: minimise Σ t²·ρ((r_i/t)²), weights u_i = ρ'(z_i); covariance by the sandwich A⁻¹BA⁻¹ (Huber 1981, Robust Statistics, §7.6) with the n/(n−p) factor (MacKinnon & White 1985, HC1).
import type { SolveResult } from './types';

export type LossName = 'squares' | 'huber' | 'soft_l1' | 'cauchy';
export const LOSSES: readonly LossName[] = ['squares', 'huber', 'soft_l1', 'cauchy'];

/**
 * Tuning constant c of each loss: the threshold t = c·s, s the robust residual scale. huber 1.345 and cauchy 2.385
 * give 95% efficiency at normal errors (Holland & Welsch 1977); soft_l1 (pseudo-Huber) takes Huber's 1.345
 * (common practice).
 */
export const TUNING: Record<Exclude<LossName, 'squares'>, number> = { huber: 1.345, soft_l1: 1.345, cauchy: 2.385 };

/** 1/Φ⁻¹(3/4): makes the median absolute residual a consistent estimate of σ at normal errors. */
export const MAD_FACTOR = 1.482602218505602;
/** √(π/2): makes the mean absolute residual consistent for σ at normal errors (the fallback when the MAD is 0). */
export const MEAN_ABS_FACTOR = 1.2533141373155001;

export const MAX_IRLS_ITERATIONS = 500;

/** ρ(z), ρ'(z), ρ''(z) of a loss at z = (r/t)² (SciPy least_squares' definitions). */
export function rho(loss: LossName, z: number): [number, number, number] {
  switch (loss) {
    case 'huber':
      return z <= 1 ? [z, 1, 0] : [2 * Math.sqrt(z) - 1, 1 / Math.sqrt(z), -0.5 / (z * Math.sqrt(z))];
    case 'soft_l1': {
      const s = Math.sqrt(1 + z);
      return [2 * (s - 1), 1 / s, -0.5 / (s * s * s)];
    }
    case 'cauchy':
      return [Math.log1p(z), 1 / (1 + z), -1 / ((1 + z) * (1 + z))];
    default:
      return [z, 1, 0];
  }
}

/** Median of |r_i| with frequency weights c_i (each row counted c_i times); the lower median at an even count. */
export function weightedMedianAbs(r: ArrayLike<number>, count: ArrayLike<number> | null): number {
  const n = r.length;
  if (n === 0) return 0;
  const idx = Array.from({ length: n }, (_, i) => i).sort((a, b) => Math.abs(r[a]) - Math.abs(r[b]));
  let total = 0;
  for (let i = 0; i < n; i++) total += count ? count[i] : 1;
  const half = total / 2;
  let acc = 0;
  for (let k = 0; k < n; k++) {
    const i = idx[k];
    acc += count ? count[i] : 1;
    if (acc > half) return Math.abs(r[i]);
    if (acc === half) {
      // an even number of observations: the mean of the two middle ones
      const next = k + 1 < n ? Math.abs(r[idx[k + 1]]) : Math.abs(r[i]);
      return (Math.abs(r[i]) + next) / 2;
    }
  }
  return Math.abs(r[idx[n - 1]]);
}

/**
 * Robust scale of weighted residuals: MAD about zero (the residuals' own centre, as MASS::rlm) × 1.4826; when more
 * than half the residuals are zero the MAD is 0, and the mean absolute residual × √(π/2) is used instead; 0 only
 * when every residual is zero (an exact fit).
 */
export function robustScale(r: ArrayLike<number>, count: ArrayLike<number> | null): { s: number; from: 'mad' | 'mean-abs' | 'exact' } {
  const mad = weightedMedianAbs(r, count) * MAD_FACTOR;
  if (mad > 0) return { s: mad, from: 'mad' };
  let sa = 0;
  let nc = 0;
  for (let i = 0; i < r.length; i++) {
    const c = count ? count[i] : 1;
    sa += c * Math.abs(r[i]);
    nc += c;
  }
  const m = nc > 0 ? (sa / nc) * MEAN_ABS_FACTOR : 0;
  return m > 0 ? { s: m, from: 'mean-abs' } : { s: 0, from: 'exact' };
}

/**
 * robustScale of the studentized least-squares residuals r_i/√(1−h_i): a least-squares residual has variance
 * σ²(1−h_i), so the raw residuals understate σ when p is not small against n (rows with h_i > 1 − 1e-9 carry no
 * information on σ and are left out).
 */
export function studentizedScale(r: ArrayLike<number>, h: ArrayLike<number>, count: ArrayLike<number> | null): { s: number; from: 'mad' | 'mean-abs' | 'exact' } {
  const rs: number[] = [];
  const cs: number[] = [];
  for (let i = 0; i < r.length; i++) {
    if (!(h[i] < 1 - 1e-9)) continue;
    rs.push(r[i] / Math.sqrt(1 - Math.max(0, h[i])));
    cs.push(count ? count[i] : 1);
  }
  return robustScale(rs, count ? cs : null);
}

export interface RobustOptions {
  loss: Exclude<LossName, 'squares'>;
  /** a number: the threshold t itself (SciPy's f_scale); 'mad': c × the MAD scale of the least-squares residuals, kept; 'mad-iterated': re-estimated from the current residuals every iteration (as MASS::rlm) */
  scale: number | 'mad' | 'mad-iterated';
  /** √ of the precision weights (1/σ or √weight), null when unweighted */
  sw: Float64Array | null;
  /** frequency weights (data.count), null when none */
  count: Float64Array | null;
  y: Float64Array;
  /** hat values of the least-squares fit: the "mad" scale is taken of r_i/√(1−h_i) (rows with h ≈ 1 left out) */
  leverage?: Float64Array | null;
  maxIterations?: number;
}

export interface RobustResult {
  result: SolveResult;
  /** final loss weights u_i in (0, 1] (multiply the precision weights) */
  u: Float64Array;
  /** the threshold t = c·s in units of the weighted residual */
  threshold: number;
  /** robust residual scale s (t / c), or null when the threshold was given */
  scale: number | null;
  scaleFrom: 'mad' | 'mean-abs' | 'exact' | 'spec';
  tuning: number;
  iterations: number;
  converged: boolean;
  /** Σ count·t²·ρ(z) at the solution (twice SciPy's cost) */
  objective: number;
  /** ψ_i = u_i r_i and ψ'_i = ρ'(z) + 2zρ''(z), for the sandwich */
  psi: Float64Array;
  dpsi: Float64Array;
}

function weightedResiduals(res: SolveResult, y: Float64Array, sw: Float64Array | null): Float64Array {
  const r = new Float64Array(y.length);
  for (let i = 0; i < y.length; i++) r[i] = (sw ? sw[i] : 1) * (y[i] - res.f[i]);
  return r;
}

/**
 * IRLS from a least-squares solution `ls`: `solveWeighted(u, theta0)` must refit with the precision weights times u
 * from θ0 (same bounds and fixed parameters). Every step is a majorise–minimise step for these losses (ρ concave in
 * z), so the objective never increases; stops when the weights change by less than 1e-12 and θ by less than 1e-11
 * relative, or after maxIterations refits.
 */
export function irls(ls: SolveResult, solveWeighted: (u: Float64Array, theta0: Float64Array) => SolveResult, o: RobustOptions): RobustResult {
  const n = o.y.length;
  const c = TUNING[o.loss];
  let res = ls;
  let r = weightedResiduals(res, o.y, o.sw);
  let scale: number | null = null;
  let scaleFrom: RobustResult['scaleFrom'] = 'spec';
  let t: number;
  if (typeof o.scale === 'number') t = o.scale;
  else {
    const rs = o.scale === 'mad' && o.leverage ? studentizedScale(r, o.leverage, o.count) : robustScale(r, o.count);
    scale = rs.s;
    scaleFrom = rs.from;
    t = c * rs.s;
  }
  const u = new Float64Array(n).fill(1);
  const weightsAt = (rr: Float64Array, tt: number, out: Float64Array): void => {
    for (let i = 0; i < n; i++) out[i] = tt > 0 ? rho(o.loss, (rr[i] / tt) ** 2)[1] : 1;
  };
  let iterations = 0;
  let converged = t === 0; // an exact fit: every residual zero, least squares is already the robust solution
  const maxIt = o.maxIterations ?? MAX_IRLS_ITERATIONS;
  const uNew = new Float64Array(n);
  if (!converged) {
    weightsAt(r, t, u);
    while (iterations < maxIt) {
      iterations++;
      const next = solveWeighted(Float64Array.from(u), Float64Array.from(res.theta));
      if (!next.converged) {
        res = next;
        break;
      }
      let dTheta = 0;
      for (let j = 0; j < next.theta.length; j++) {
        const d = Math.abs(next.theta[j] - res.theta[j]) / (Math.abs(next.theta[j]) + 1e-300);
        if (d > dTheta && Math.abs(next.theta[j] - res.theta[j]) > 0) dTheta = d;
      }
      res = next;
      r = weightedResiduals(res, o.y, o.sw);
      if (o.scale === 'mad-iterated') {
        const rs = robustScale(r, o.count);
        scale = rs.s;
        scaleFrom = rs.from;
        if (rs.s === 0) {
          converged = true;
          u.fill(1);
          break;
        }
        t = c * rs.s;
      }
      weightsAt(r, t, uNew);
      let dU = 0;
      for (let i = 0; i < n; i++) dU = Math.max(dU, Math.abs(uNew[i] - u[i]));
      u.set(uNew);
      if (dU <= 1e-12 && dTheta <= 1e-11) {
        converged = true;
        break;
      }
    }
  }
  const psi = new Float64Array(n);
  const dpsi = new Float64Array(n);
  let objective = 0;
  for (let i = 0; i < n; i++) {
    const ci = o.count ? o.count[i] : 1;
    if (t > 0) {
      const z = (r[i] / t) ** 2;
      const [p0, p1, p2] = rho(o.loss, z);
      objective += ci * t * t * p0;
      psi[i] = p1 * r[i];
      dpsi[i] = p1 + 2 * z * p2;
    } else {
      psi[i] = r[i];
      dpsi[i] = 1;
      objective += ci * r[i] * r[i];
    }
  }
  return { result: res, u, threshold: t, scale, scaleFrom, tuning: c, iterations, converged: converged && res.converged, objective, psi, dpsi };
}

/**
 * Sandwich covariance of an M-estimate: n/(n−q) · A⁻¹ B A⁻¹ with A = Σ c_i ψ'_i a_i a_iᵀ, B = Σ c_i ψ_i² a_i a_iᵀ,
 * a_i = √w_i ∂f_i/∂θ over the free parameters (Gauss–Newton: second derivatives of f left out). J is n×p
 * column-major (unweighted); returns p×p row-major, NaN for fixed parameters, or null when A is singular or not
 * positive definite (a redescending loss with too many points in its tails).
 */
export function sandwichCovariance(
  J: Float64Array, n: number, p: number, sw: Float64Array | null, count: Float64Array | null, free: boolean[], psi: Float64Array, dpsi: Float64Array,
): Float64Array | null {
  const cols: number[] = [];
  for (let j = 0; j < p; j++) if (free[j]) cols.push(j);
  const q = cols.length;
  const A = new Float64Array(q * q);
  const B = new Float64Array(q * q);
  let nObs = 0;
  const a = new Float64Array(q);
  for (let i = 0; i < n; i++) {
    const ci = count ? count[i] : 1;
    nObs += ci;
    for (let k = 0; k < q; k++) a[k] = (sw ? sw[i] : 1) * J[cols[k] * n + i];
    for (let k = 0; k < q; k++)
      for (let l = 0; l <= k; l++) {
        A[k * q + l] += ci * dpsi[i] * a[k] * a[l];
        B[k * q + l] += ci * psi[i] * psi[i] * a[k] * a[l];
      }
  }
  for (let k = 0; k < q; k++)
    for (let l = 0; l < k; l++) {
      A[l * q + k] = A[k * q + l];
      B[l * q + k] = B[k * q + l];
    }
  const Ainv = choleskyInverse(A, q);
  const cov = new Float64Array(p * p).fill(NaN);
  if (!Ainv || nObs <= q) return q === 0 ? cov : null;
  // C = Ainv B Ainv
  const T = new Float64Array(q * q);
  for (let k = 0; k < q; k++) for (let l = 0; l < q; l++) {
    let s = 0;
    for (let m = 0; m < q; m++) s += Ainv[k * q + m] * B[m * q + l];
    T[k * q + l] = s;
  }
  const factor = nObs / (nObs - q);
  for (let k = 0; k < q; k++) for (let l = 0; l < q; l++) {
    let s = 0;
    for (let m = 0; m < q; m++) s += T[k * q + m] * Ainv[m * q + l];
    cov[cols[k] * p + cols[l]] = factor * s;
  }
  return cov;
}

/** Inverse of a symmetric positive definite q×q matrix (row-major) by Cholesky, scaled to unit diagonal first; null when not positive definite. */
export function choleskyInverse(M: Float64Array, q: number): Float64Array | null {
  const d = new Float64Array(q);
  for (let k = 0; k < q; k++) {
    if (!(M[k * q + k] > 0) || !Number.isFinite(M[k * q + k])) return null;
    d[k] = 1 / Math.sqrt(M[k * q + k]);
  }
  const L = new Float64Array(q * q);
  for (let k = 0; k < q; k++)
    for (let l = 0; l <= k; l++) {
      let s = M[k * q + l] * d[k] * d[l];
      for (let m = 0; m < l; m++) s -= L[k * q + m] * L[l * q + m];
      if (k === l) {
        if (!(s > 1e-14)) return null;
        L[k * q + k] = Math.sqrt(s);
      } else L[k * q + l] = s / L[l * q + l];
    }
  // inverse of L, then (L⁻¹)ᵀ L⁻¹, then undo the scaling
  const Li = new Float64Array(q * q);
  for (let k = 0; k < q; k++) {
    Li[k * q + k] = 1 / L[k * q + k];
    for (let l = 0; l < k; l++) {
      let s = 0;
      for (let m = l; m < k; m++) s -= L[k * q + m] * Li[m * q + l];
      Li[k * q + l] = s / L[k * q + k];
    }
  }
  const out = new Float64Array(q * q);
  for (let k = 0; k < q; k++)
    for (let l = 0; l < q; l++) {
      let s = 0;
      for (let m = Math.max(k, l); m < q; m++) s += Li[m * q + k] * Li[m * q + l];
      out[k * q + l] = s * d[k] * d[l];
    }
  return out;
}

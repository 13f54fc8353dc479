// Weights from the data: the power-of-the-mean variance function σ_i = σ·|μ_i|^θ, fitted by iteratively reweighted
// (generalised) least squares with w_i = |μ̂_i|^(−2θ), θ given or estimated from replicates as the slope of
// log s_g on log |μ̂_g| over the x values measured two or more times (Carroll & Ruppert 1988, "Transformation and
// Weighting in Regression", §2.3 and §3.3; Davidian & Giltinan 1995, §2.3), iterated to a fixed point.
import type { SolveResult } from '../solve/types';

/** Fewest replicate groups (x values measured ≥ 2 times with some scatter) that estimate θ. */
export const MIN_REPLICATE_GROUPS = 3;
export const MAX_VARIANCE_ITERATIONS = 50;
/** |μ| is floored at this fraction of the largest |μ| so that a fitted value of 0 gets a finite weight (common practice). */
export const MU_FLOOR = 1e-6;

export interface ReplicateGroups {
  /** group index of each row (−1: the only row at its x) */
  of: Int32Array;
  /** rows of each group with two or more rows */
  members: number[][];
}

/** Rows with identical values of every x variable form a replicate group (groups of one row are not kept). */
export function replicateGroups(X: Float64Array[], n: number): ReplicateGroups {
  const byKey = new Map<string, number[]>();
  for (let i = 0; i < n; i++) {
    const key = X.map((c) => c[i]).join('\u0000');
    const list = byKey.get(key);
    if (list) list.push(i);
    else byKey.set(key, [i]);
  }
  const of = new Int32Array(n).fill(-1);
  const members: number[][] = [];
  for (const list of byKey.values()) {
    if (list.length < 2) continue;
    for (const i of list) of[i] = members.length;
    members.push(list);
  }
  return { of, members };
}

/** Replicate groups with some scatter (s_g > 0) and a non-zero fitted mean: those that inform θ. */
export function informativeGroups(g: ReplicateGroups, y: ArrayLike<number>, mu: ArrayLike<number>): number {
  let k = 0;
  for (const rows of g.members) {
    const s = groupSd(rows, y);
    if (s > 0 && Math.abs(mu[rows[0]]) > 0) k++;
  }
  return k;
}

function groupSd(rows: number[], y: ArrayLike<number>): number {
  let m = 0;
  for (const i of rows) m += y[i];
  m /= rows.length;
  let ss = 0;
  for (const i of rows) ss += (y[i] - m) ** 2;
  return Math.sqrt(ss / (rows.length - 1));
}

/**
 * θ as the slope of the least-squares line of log s_g on log |μ̂_g|, each group weighted by its degrees of freedom
 * m_g − 1 (μ̂_g the fitted mean at the group's x). null when fewer than MIN_REPLICATE_GROUPS groups inform it or
 * their |μ̂| do not vary.
 */
export function estimatePower(g: ReplicateGroups, y: ArrayLike<number>, mu: ArrayLike<number>): number | null {
  const lx: number[] = [];
  const ly: number[] = [];
  const wt: number[] = [];
  for (const rows of g.members) {
    const s = groupSd(rows, y);
    const m = Math.abs(mu[rows[0]]);
    if (!(s > 0) || !(m > 0)) continue;
    lx.push(Math.log(m));
    ly.push(Math.log(s));
    wt.push(rows.length - 1);
  }
  if (lx.length < MIN_REPLICATE_GROUPS) return null;
  let sw = 0;
  let mx = 0;
  let my = 0;
  for (let k = 0; k < lx.length; k++) {
    sw += wt[k];
    mx += wt[k] * lx[k];
    my += wt[k] * ly[k];
  }
  mx /= sw;
  my /= sw;
  let sxx = 0;
  let sxy = 0;
  for (let k = 0; k < lx.length; k++) {
    sxx += wt[k] * (lx[k] - mx) ** 2;
    sxy += wt[k] * (lx[k] - mx) * (ly[k] - my);
  }
  if (!(sxx > 1e-24 * (1 + mx * mx))) return null;
  return sxy / sxx;
}

/** w_i = |μ_i|^(−2θ), |μ| floored at MU_FLOOR·max|μ|, normalised to mean 1. */
export function powerWeights(mu: ArrayLike<number>, theta: number): Float64Array {
  const n = mu.length;
  let top = 0;
  for (let i = 0; i < n; i++) top = Math.max(top, Math.abs(mu[i]));
  const floor = top > 0 ? MU_FLOOR * top : 1;
  const w = new Float64Array(n);
  let sum = 0;
  for (let i = 0; i < n; i++) {
    w[i] = Math.max(Math.abs(mu[i]), floor) ** (-2 * theta);
    sum += w[i];
  }
  const mean = sum / n;
  for (let i = 0; i < n; i++) w[i] = mean > 0 && Number.isFinite(mean) ? w[i] / mean : 1;
  return w;
}

export interface VarianceFit {
  result: SolveResult;
  w: Float64Array;
  theta: number;
  estimated: boolean;
  iterations: number;
  converged: boolean;
  /** replicate groups that informed θ (estimated) or that exist (given θ) */
  groups: number;
}

/**
 * From the unweighted fit `ls`, alternate: θ from the replicates at the current fitted values (when estimated),
 * weights |μ̂|^(−2θ), a weighted refit from the current estimates; stops when θ moves by less than 1e-9 and the
 * fitted values by less than 1e-10 relative, or after MAX_VARIANCE_ITERATIONS refits. θ must be estimable from
 * `ls` (the caller checks informativeGroups first).
 */
export function varianceFit(
  power: number | 'estimate', ls: SolveResult, X: Float64Array[], y: Float64Array, refit: (w: Float64Array, theta0: Float64Array) => SolveResult,
  maxIterations = MAX_VARIANCE_ITERATIONS,
): VarianceFit {
  const g = replicateGroups(X, y.length);
  const estimated = power === 'estimate';
  let theta = estimated ? (estimatePower(g, y, ls.f) ?? 0) : (power as number);
  let res = ls;
  let w = powerWeights(res.f, theta);
  let iterations = 0;
  let converged = false;
  while (iterations < maxIterations) {
    iterations++;
    const next = refit(w, Float64Array.from(res.theta));
    let dMu = 0;
    let top = 0;
    for (let i = 0; i < y.length; i++) {
      dMu = Math.max(dMu, Math.abs(next.f[i] - res.f[i]));
      top = Math.max(top, Math.abs(next.f[i]));
    }
    res = next;
    if (!next.converged) break;
    const thetaNew = estimated ? (estimatePower(g, y, res.f) ?? theta) : theta;
    const dTheta = Math.abs(thetaNew - theta);
    theta = thetaNew;
    w = powerWeights(res.f, theta);
    if (dTheta <= 1e-9 && dMu <= 1e-10 * (top + 1e-300)) {
      converged = true;
      break;
    }
  }
  // the reported fit is the one solved with the reported weights
  if (converged) res = refit(w, Float64Array.from(res.theta));
  return { result: res, w, theta, estimated, iterations, converged: converged && res.converged, groups: estimated ? informativeGroups(g, y, res.f) : g.members.length };
}

// Variable projection (Golub & Pereyra 1973): the parameters the model is affine in are solved by linear least
// squares (modified Gram–Schmidt QR, Björck 1996 §2.4) for given values of the others; and the reduced problem over
// the others that the local runs solve.
import type { LsqProblem } from '../types';
import { mgsProject, mgsQr } from '../linalg';
import { evalF, type Ctx } from './context';
import { TUNING } from './tuning';

/**
 * Variable projection at θ: the parameters in L are replaced by their linear least-squares values given the others.
 * Returns the weighted SSE (Infinity when not finite or the linear part is rank-deficient); θ is updated in place.
 */
export function project(c: Ctx, theta: Float64Array, L: number[], work: { cols: Float64Array[]; r: Float64Array }): number {
  const { n, sw, problem } = c;
  for (const j of L) theta[j] = 0;
  if (!evalF(c, theta, L.length > 0)) return Infinity;
  const r = work.r;
  for (let i = 0; i < n; i++) r[i] = sw[i] * (problem.y[i] - c.f[i]);
  if (L.length === 0) {
    let s = 0;
    for (let i = 0; i < n; i++) s += r[i] * r[i];
    return s;
  }
  // modified Gram–Schmidt QR of √w·J_L (two passes), then back substitution (Björck 1996, §2.4)
  const m = L.length;
  const Q = work.cols;
  const R = new Float64Array(m * m);
  const norms = new Float64Array(m);
  for (let a = 0; a < m; a++) {
    const q = Q[a];
    const off = L[a] * n;
    for (let i = 0; i < n; i++) q[i] = sw[i] * c.J[off + i];
  }
  if (!mgsQr(Q, n, { relTol: 1e-9, R, norm0: norms })) return Infinity;
  const qty = new Float64Array(m);
  mgsProject(Q, n, r, 1, qty);
  for (let a = m - 1; a >= 0; a--) {
    let s = qty[a];
    for (let b = a + 1; b < m; b++) s -= R[a * m + b] * theta[L[b]];
    theta[L[a]] = s / R[a * m + a];
    if (!Number.isFinite(theta[L[a]])) return Infinity;
  }
  let s = 0;
  let fit = 0;
  for (let i = 0; i < n; i++) {
    s += r[i] * r[i];
    fit += (sw[i] * problem.y[i] - r[i]) ** 2;
  }
  // cancellation guard: linear terms much larger than the fit they add up to mark a degenerate combination (two
  // nearly equal terms with huge opposite coefficients); the search avoids them, the final unguarded fit does not
  let terms = 0;
  for (let a = 0; a < m; a++) terms += Math.abs(theta[L[a]]) * norms[a];
  if (terms > TUNING.cancellation * Math.sqrt(fit)) return Infinity;
  return Number.isFinite(s) ? s : Infinity;
}

/**
 * The variable-projection problem over the parameters NL not in L: f(φ) is the model with the L parameters at their
 * least-squares values given φ (Golub & Pereyra 1973); its Jacobian is by forward differences with steps relative to
 * each parameter (the full problem with analytic derivatives polishes the result afterwards).
 */
export function reducedProblem(
  c: Ctx,
  base: Float64Array,
  L: number[],
  NL: number[],
  typical: (j: number) => number,
  limit: (j: number) => number,
): { problem: LsqProblem; expand: (phi: ArrayLike<number>) => Float64Array } {
  const { n } = c;
  const work = { cols: L.map(() => new Float64Array(n)), r: new Float64Array(n) };
  const theta = new Float64Array(base.length);
  const fitted = (phi: ArrayLike<number>, out: Float64Array): boolean => {
    // the search stays within the sampled magnitudes: no drifting towards solutions at infinity
    for (let k = 0; k < NL.length; k++) if (!(Math.abs(phi[k]) <= limit(NL[k]))) return false;
    theta.set(base);
    NL.forEach((j, k) => (theta[j] = phi[k]));
    if (!Number.isFinite(project(c, theta, L, work))) return false;
    for (let i = 0; i < n; i++) {
      let v = c.f[i];
      for (const j of L) v += c.J[j * n + i] * theta[j];
      out[i] = v;
    }
    return true;
  };
  const expand = (phi: ArrayLike<number>): Float64Array => {
    const t = new Float64Array(base.length);
    t.set(base);
    NL.forEach((j, k) => (t[j] = phi[k]));
    project(c, t, L, work);
    return t;
  };
  const fh = new Float64Array(n);
  const problem: LsqProblem = {
    n,
    p: NL.length,
    y: c.problem.y,
    w: c.problem.w,
    model(phi, f, J) {
      if (!fitted(phi, f)) {
        f.fill(NaN);
        if (J) J.fill(NaN);
        return;
      }
      if (!J) return;
      const q = Float64Array.from(phi);
      for (let k = 0; k < NL.length; k++) {
        const h = 1e-7 * Math.max(Math.abs(phi[k]), 1e-3 * typical(NL[k]), 1e-30);
        q[k] = phi[k] + h;
        const dh = q[k] - phi[k];
        const ok = fitted(q, fh);
        q[k] = phi[k];
        for (let i = 0; i < n; i++) J[k * n + i] = ok ? (fh[i] - f[i]) / dh : NaN;
      }
    },
  };
  return { problem, expand };
}

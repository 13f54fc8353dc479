// Profile-likelihood intervals by the profile-t method (Bates & Watts 1988, "Nonlinear Regression Analysis and Its Applications", §6.1), each profile point by Gauss–Newton continuation on the reduced problem and each bound by a safeguarded Newton iteration on τ(v) = q with dτ/dv from the envelope theorem.
//
// τ(θ_j) = sign(θ_j − θ̂_j)·√((S̃(θ_j) − S(θ̂))/s²), S̃ re-optimised over the other parameters; a bound is where |τ|
// reaches the t quantile q.
// - a profile point v: the other parameters start from a linear extrapolation of the last two points of this side
//   (continuation; the first from θ̂), then Gauss–Newton steps (QR of the weighted reduced Jacobian, step halving)
//   until the predicted reduction ‖Q₁ᵀr‖² is below 1e-9·s², which fixes τ far below the 1e-6·q root tolerance.
//   When Gauss–Newton does not settle within DEFAULTS.analysis.profileSteps steps, is rank-deficient or meets a
//   bound, the point is refitted by Levenberg–Marquardt (at most DEFAULTS.analysis.profileIterations iterations),
//   first from the last point inside the interval, then from θ̂ — so strongly curved profiles stay exact.
// - dS̃/dv = ∂S/∂θ_j at the reduced optimum (envelope theorem), hence dτ/dv = (∂S/∂θ_j)/(2 s² τ): Newton steps on
//   τ(v) − q from the Wald guess θ̂_j ± q·SE, kept inside the bracket once a point with τ ≥ q is found (regula falsi
//   with the Illinois modification when Newton leaves it); at most DEFAULTS.analysis.profilePoints points per side.
// Every budget is a count; the deadline only stops a runaway profile (status 'timeout').
// - a joint fit (problem.blocks, solve/block.ts): every point by the block Levenberg–Marquardt refit (a dense
//   Gauss–Newton step would factor the whole n × p Jacobian), ∂S/∂θ_j from the compact Jacobian, and a budget of
//   work (maxWork: model evaluations × rows) instead of the deadline.
import type { LsqProblem } from '../solve/types';
import { solve } from '../solve';
import { qrFactor, applyQt, rankTolerance } from '../solve/linalg';
import { DEFAULTS } from '../spec/defaults';
import { blockSseGradient } from '../solve/block';

export interface ProfileContext {
  problem: LsqProblem;
  theta: Float64Array;
  lower: ArrayLike<number>;
  upper: ArrayLike<number>;
  fixed: boolean[];
  /** S(θ̂) */
  sseHat: number;
  /** s² (relative sigma mode) or 1 (absolute) */
  scale: number;
  /** the quantile |τ| must reach */
  q: number;
  /** Wald standard errors (NaN where undefined) */
  se: ArrayLike<number>;
  maxIterations?: number;
  /** absolute time (Date.now()) after which profiling stops */
  deadline: number;
  /** work budget: model evaluations × rows of all refits together, after which profiling stops (status 'timeout') */
  maxWork?: number;
  shouldStop?: () => boolean;
}

export type ProfileBound = { value: number | null; status: 'found' | 'open' | 'bound' | 'timeout' | 'failed' };

export interface ProfileResult {
  /** per parameter: [lower, upper], or null for fixed parameters */
  ci: ([ProfileBound, ProfileBound] | null)[];
  /** Levenberg–Marquardt refits performed (profile points where Gauss–Newton continuation did not settle) */
  refits: number;
  /** profile points computed (τ evaluations) */
  points: number;
  /** QR factorizations of the reduced Jacobian by the Gauss–Newton continuation */
  factorizations: number;
  /** model evaluations × rows spent by the refits */
  work: number;
}

const TIMEOUT = new Error('profile-timeout');

/** one profile point: S̃, the reduced optimum θ and ∂S/∂θ_j there */
interface Point {
  S: number;
  theta: Float64Array;
  g: number;
  ok: boolean;
}

export function profileIntervals(ctx: ProfileContext): ProfileResult {
  const { problem } = ctx;
  const { n, p, y } = problem;
  const ci: ([ProfileBound, ProfileBound] | null)[] = [];
  const stats = { refits: 0, points: 0, factorizations: 0, work: 0 };
  const blocks = problem.blocks;
  const sw = new Float64Array(n);
  for (let i = 0; i < n; i++) sw[i] = Math.sqrt(problem.w ? problem.w[i] : 1);
  const f = new Float64Array(n);
  // (a joint fit never forms the dense Jacobian here)
  const J = new Float64Array(blocks ? 0 : n * p);
  const r = new Float64Array(n);
  const A = new Float64Array(blocks ? 0 : n * Math.max(1, p));
  const maxSteps = DEFAULTS.analysis.profileSteps;
  const tolS = 1e-9 * ctx.scale;

  /** weighted residuals r = √w (y − f) and J at θ; S, or NaN when it is not finite (J is checked where it is used) */
  const evalAt = (theta: Float64Array): number => {
    problem.model(theta, f, J);
    let S = 0;
    for (let i = 0; i < n; i++) {
      const ri = sw[i] * (y[i] - f[i]);
      r[i] = ri;
      S += ri * ri;
    }
    return Number.isFinite(S) ? S : NaN;
  };
  /** ∂S/∂θ_j = −2 Σ √w r ∂f/∂θ_j from the last evalAt (NaN when that column is not finite) */
  const gradJ = (j: number): number => {
    let s = 0;
    for (let i = 0; i < n; i++) s += sw[i] * r[i] * J[j * n + i];
    return -2 * s;
  };

  /** Gauss–Newton on the parameters `free` with θ_j held; null when it does not settle (the caller refits by LM) */
  const gaussNewton = (start: Float64Array, j: number, free: number[]): Point | null => {
    if (blocks) return null;
    const theta = Float64Array.from(start);
    const k = free.length;
    let S = evalAt(theta);
    if (!Number.isFinite(S)) return null;
    const b = new Float64Array(n);
    const delta = new Float64Array(k);
    const trial = new Float64Array(p);
    for (let step = 0; step <= maxSteps; step++) {
      if (k === 0) return { S, theta, g: gradJ(j), ok: true };
      const a = A.subarray(0, n * k);
      let sum = 0;
      for (let t = 0; t < k; t++) {
        const c = free[t] * n;
        const o = t * n;
        for (let i = 0; i < n; i++) {
          const v = sw[i] * J[c + i];
          a[o + i] = v;
          sum += v;
        }
      }
      if (!Number.isFinite(sum)) return null;
      const qr = qrFactor(a, n, k, true);
      stats.factorizations++;
      const tol = rankTolerance(n, k) * Math.abs(qr.rdiag[0]);
      for (let t = 0; t < k; t++) if (!(Math.abs(qr.rdiag[t]) > tol)) return null;
      b.set(r);
      applyQt(qr, b);
      let pred = 0;
      for (let t = 0; t < k; t++) pred += b[t] * b[t];
      if (pred <= tolS) return { S, theta, g: gradJ(j), ok: true };
      if (step === maxSteps) return null;
      // R z = Q₁ᵀ r, δ = z in the original column order (ascent of f along r decreases S)
      const z = new Float64Array(k);
      for (let t = k - 1; t >= 0; t--) {
        let s = b[t];
        for (let u = t + 1; u < k; u++) s -= a[u * n + t] * z[u];
        z[t] = s / qr.rdiag[t];
      }
      for (let t = 0; t < k; t++) delta[qr.perm[t]] = z[t];
      let taken = false;
      for (let half = 0, alpha = 1; half < 6; half++, alpha /= 2) {
        trial.set(theta);
        for (let t = 0; t < k; t++) {
          const jj = free[t];
          const v = theta[jj] + alpha * delta[t];
          if (!(v >= ctx.lower[jj] && v <= ctx.upper[jj])) return null; // a bound in the way: LM handles it
          trial[jj] = v;
        }
        const S1 = evalAt(trial);
        if (Number.isFinite(S1) && S1 <= S) {
          theta.set(trial);
          S = S1;
          taken = true;
          break;
        }
      }
      if (!taken) return null;
    }
    return null;
  };

  for (let j = 0; j < p; j++) {
    if (ctx.fixed[j]) {
      ci.push(null);
      continue;
    }
    const mask = ctx.fixed.slice();
    mask[j] = true;
    const free: number[] = [];
    for (let k = 0; k < p; k++) if (!mask[k]) free.push(k);
    const lmRefit = (from: Float64Array, v: number): Point => {
      const start = Float64Array.from(from);
      start[j] = v;
      if (ctx.maxWork !== undefined && stats.work >= ctx.maxWork) throw TIMEOUT;
      stats.refits++;
      const remaining = Math.max(0.05, (ctx.deadline - Date.now()) / 1000);
      const res = solve(problem, {
        // no Gauss–Newton polish: LM's own tolerances (relative SSE reduction 1e-15) already fix S far below the 1e-6·q tolerance on τ
        theta0: start, lower: ctx.lower, upper: ctx.upper, fixed: mask, refine: false,
        maxIterations: ctx.maxIterations ?? DEFAULTS.analysis.profileIterations, seconds: remaining, shouldStop: ctx.shouldStop,
      });
      stats.work += res.evaluations * n;
      if (res.termination === 'cancelled' || res.termination === 'time-limit') throw TIMEOUT;
      if (blocks) {
        const bg = blockSseGradient(blocks, res.theta, y, sw, j);
        return { S: res.sse, theta: res.theta, g: bg, ok: res.converged && Number.isFinite(res.sse) };
      }
      const S = evalAt(res.theta);
      return { S: res.sse, theta: res.theta, g: Number.isFinite(S) ? gradJ(j) : NaN, ok: res.converged && Number.isFinite(res.sse) };
    };
    const bounds: ProfileBound[] = [];
    for (const dir of [-1, 1]) {
      // continuation: the accepted points inside the interval (τ < q) of this side, latest last
      const path: { v: number; theta: Float64Array }[] = [{ v: ctx.theta[j], theta: ctx.theta }];
      const tau = (v: number): { t: number; dt: number } | null => {
        if (Date.now() > ctx.deadline || ctx.shouldStop?.()) throw TIMEOUT;
        stats.points++;
        const last = path[path.length - 1];
        const start = Float64Array.from(last.theta);
        if (path.length >= 2) {
          const prev = path[path.length - 2];
          const s = (v - last.v) / (last.v - prev.v);
          for (const k of free) {
            const e = last.theta[k] + s * (last.theta[k] - prev.theta[k]);
            start[k] = Math.min(ctx.upper[k], Math.max(ctx.lower[k], e));
          }
        }
        start[j] = v;
        let best: Point | null = gaussNewton(start, j, free);
        if (!best && path.length >= 2) {
          const plain = Float64Array.from(last.theta);
          plain[j] = v;
          best = gaussNewton(plain, j, free);
        }
        if (!best) {
          best = lmRefit(last.theta, v);
          if (!best.ok && last.theta !== ctx.theta) {
            const again = lmRefit(ctx.theta, v);
            if (again.ok || (Number.isFinite(again.S) && !(again.S >= best.S))) best = again;
          }
        }
        if (!Number.isFinite(best.S)) return null;
        const t = Math.sqrt(Math.max(0, best.S - ctx.sseHat) / ctx.scale);
        if (best.ok && t < ctx.q) path.push({ v, theta: best.theta });
        return { t, dt: t > 0 ? best.g / (2 * ctx.scale * t) : NaN };
      };
      bounds.push(walk(ctx, j, dir, tau));
    }
    ci.push([bounds[0], bounds[1]]);
  }
  return { ci, ...stats };
}

/** the root of τ(v) = q on one side of θ̂_j: Newton with dτ/dv, safeguarded by the bracket once there is one */
function walk(ctx: ProfileContext, j: number, dir: number, tau: (v: number) => { t: number; dt: number } | null): ProfileBound {
  const est = ctx.theta[j];
  const limit = dir < 0 ? ctx.lower[j] : ctx.upper[j];
  const se = ctx.se[j];
  let delta = Number.isFinite(se) && se > 0 ? ctx.q * se : Math.max(Math.abs(est) * 0.1, 1e-6);
  // a huge SE means the quadratic picture is poor: start with a smaller step
  if (est !== 0 && delta > 0.5 * Math.abs(est)) delta = 0.5 * Math.abs(est);
  const maxReach = 1e4 * (Math.abs(est) + (Number.isFinite(se) ? se : 0) + 1e-12);
  const tol = 1e-6 * ctx.q;
  // a: the farthest point with τ < q; b: the nearest with τ ≥ q (null until found)
  let a = est;
  let ga = -ctx.q;
  let b: number | null = null;
  let gb = 0;
  let side = 0;
  let v = est + dir * delta;
  try {
    for (let k = 0; k < DEFAULTS.analysis.profilePoints; k++) {
      let atLimit = false;
      if ((dir < 0 && v <= limit) || (dir > 0 && v >= limit)) {
        v = limit;
        atLimit = true;
      }
      const res = tau(v);
      if (res === null) return { value: null, status: 'failed' };
      const g = res.t - ctx.q;
      if (Math.abs(g) <= tol) return { value: v, status: 'found' };
      if (g < 0) {
        if (atLimit) return { value: null, status: 'bound' };
        a = v;
        ga = g;
        if (side === -1) gb /= 2;
        side = -1;
      } else {
        b = v;
        gb = g;
        if (side === 1) ga /= 2;
        side = 1;
      }
      // Newton on τ − q (dτ/dv has the sign of dir on a well-behaved side)
      const slope = res.dt;
      let next = Number.isFinite(slope) && slope * dir > 0 ? v - g / slope : NaN;
      if (b === null) {
        // not yet bracketed: at most 4× the distance from θ̂, at least 1.2× (as a walk outwards)
        const d = Math.abs(v - est);
        const lo = est + dir * 1.2 * d;
        const hi = est + dir * 4 * d;
        if (!Number.isFinite(next) || (next - lo) * dir < 0) next = Number.isFinite(next) && (next - v) * dir > 0 ? lo : hi;
        if ((next - hi) * dir > 0) next = hi;
        if (Math.abs(next - est) > maxReach) return { value: null, status: 'open' };
      } else if (!(Number.isFinite(next) && (next - a) * (next - b) < 0)) {
        next = (a * gb - b * ga) / (gb - ga); // Illinois step inside [a, b]
      }
      if (b !== null && Math.abs(b - a) <= 4 * Number.EPSILON * Math.max(Math.abs(a), Math.abs(b))) {
        return Math.abs(gb) < Math.abs(ga) && Math.abs(gb) <= 1e-3 * ctx.q ? { value: b, status: 'found' }
          : Math.abs(ga) <= 1e-3 * ctx.q ? { value: a, status: 'found' } : { value: null, status: 'failed' };
      }
      v = next;
    }
    if (b === null) return { value: null, status: 'open' };
    const best = Math.abs(ga) < Math.abs(gb) ? { v: a, g: ga } : { v: b, g: gb };
    return Math.abs(best.g) <= 1e-3 * ctx.q ? { value: best.v, status: 'found' } : { value: null, status: 'failed' };
  } catch (e) {
    if (e === TIMEOUT) return { value: null, status: 'timeout' };
    throw e;
  }
}

// Profile-likelihood intervals by the profile-t method (Bates & Watts 1988, "Nonlinear Regression Analysis and Its
// Applications", §6.1): τ(θ_j) = sign(θ_j − θ̂_j)·√((S̃(θ_j) − S(θ̂))/s²), S̃ re-optimised over the other parameters;
// the bounds are where |τ| reaches the t quantile. Walk outwards from the estimate, then refine by the Illinois method.
import type { LsqProblem } from '../solve/types';
import { solve } from '../solve';
import { DEFAULTS } from '../spec/defaults';

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
  shouldStop?: () => boolean;
}

export type ProfileBound = { value: number | null; status: 'found' | 'open' | 'bound' | 'timeout' | 'failed' };

export interface ProfileResult {
  /** per parameter: [lower, upper], or null for fixed parameters */
  ci: ([ProfileBound, ProfileBound] | null)[];
  /** refits performed */
  refits: number;
}

const MAX_STEPS = 24;
const REFINE = 20;

export function profileIntervals(ctx: ProfileContext): ProfileResult {
  const p = ctx.theta.length;
  const ci: ([ProfileBound, ProfileBound] | null)[] = [];
  let refits = 0;
  const nFree = ctx.fixed.filter((f) => !f).length;
  const f = new Float64Array(ctx.problem.n);
  const sse = (theta: Float64Array): number => {
    ctx.problem.model(theta, f, null);
    let s = 0;
    const y = ctx.problem.y;
    const w = ctx.problem.w;
    for (let i = 0; i < ctx.problem.n; i++) {
      const r = y[i] - f[i];
      s += (w ? w[i] : 1) * r * r;
    }
    return s;
  };
  for (let j = 0; j < p; j++) {
    if (ctx.fixed[j]) {
      ci.push(null);
      continue;
    }
    const mask = ctx.fixed.slice();
    mask[j] = true;
    const bounds: ProfileBound[] = [];
    for (const dir of [-1, 1]) {
      // warm starts come only from accepted points inside the interval (τ < q): a refit far outside may wander off
      let warm = Float64Array.from(ctx.theta);
      const refit = (from: Float64Array, v: number): { S: number; theta: Float64Array; ok: boolean } => {
        const start = Float64Array.from(from);
        start[j] = v;
        if (nFree === 1) return { S: sse(start), theta: start, ok: true };
        refits++;
        const remaining = Math.max(0.05, (ctx.deadline - Date.now()) / 1000);
        const r = solve(ctx.problem, {
          // no Gauss–Newton polish: LM's own tolerances (relative SSE reduction 1e-15) already fix S far below the 1e-6·q tolerance on τ
          theta0: start, lower: ctx.lower, upper: ctx.upper, fixed: mask, refine: false,
          maxIterations: ctx.maxIterations ?? DEFAULTS.analysis.profileIterations, seconds: remaining, shouldStop: ctx.shouldStop,
        });
        if (r.termination === 'cancelled' || r.termination === 'time-limit') throw TIMEOUT;
        return { S: r.sse, theta: r.theta, ok: r.converged && Number.isFinite(r.sse) };
      };
      const tau = (v: number): number | null => {
        if (Date.now() > ctx.deadline || ctx.shouldStop?.()) throw TIMEOUT;
        let best = refit(warm, v);
        if (!best.ok && warm !== ctx.theta) {
          const again = refit(ctx.theta, v);
          if (again.ok || (Number.isFinite(again.S) && !(again.S >= best.S))) best = again;
        }
        if (!Number.isFinite(best.S)) return null;
        const t = Math.sqrt(Math.max(0, best.S - ctx.sseHat) / ctx.scale);
        if (best.ok && t < ctx.q) warm = Float64Array.from(best.theta);
        return t;
      };
      bounds.push(walk(ctx, j, dir, tau));
    }
    ci.push([bounds[0], bounds[1]]);
  }
  return { ci, refits };
}

const TIMEOUT = new Error('profile-timeout');

function walk(ctx: ProfileContext, j: number, dir: number, tau: (v: number) => number | null): ProfileBound {
  const est = ctx.theta[j];
  const limit = dir < 0 ? ctx.lower[j] : ctx.upper[j];
  const se = ctx.se[j];
  let delta = Number.isFinite(se) && se > 0 ? ctx.q * se : Math.max(Math.abs(est) * 0.1, 1e-6);
  // a huge SE means the quadratic picture is poor: start with smaller steps (they grow up to 4× per step)
  if (est !== 0 && delta > 0.5 * Math.abs(est)) delta = 0.5 * Math.abs(est);
  const maxReach = 1e4 * (Math.abs(est) + (Number.isFinite(se) ? se : 0) + 1e-12);
  let prevV = est;
  let prevT = 0;
  try {
    for (let step = 0; step < MAX_STEPS; step++) {
      let v = est + dir * delta;
      let atLimit = false;
      if ((dir < 0 && v <= limit) || (dir > 0 && v >= limit)) {
        v = limit;
        atLimit = true;
      }
      const t = tau(v);
      if (t === null) return { value: null, status: 'failed' };
      if (t >= ctx.q) {
        const value = refine(ctx, tau, prevV, prevT, v, t);
        return value === null ? { value: null, status: 'failed' } : { value, status: 'found' };
      }
      if (atLimit) return { value: null, status: 'bound' };
      // extrapolate τ linearly in θ_j, growing the step by 1.2× to 4×
      const growth = t > 0 ? Math.min(4, Math.max(1.2, (1.1 * ctx.q) / t)) : 4;
      prevV = v;
      prevT = t;
      delta *= growth;
      if (delta > maxReach) return { value: null, status: 'open' };
    }
    return { value: null, status: 'open' };
  } catch (e) {
    if (e === TIMEOUT) return { value: null, status: 'timeout' };
    throw e;
  }
}

/** Illinois (modified regula falsi) on τ(v) − q between a (τ < q) and b (τ ≥ q); null when a refit fails or it does not settle. */
function refine(ctx: ProfileContext, tau: (v: number) => number | null, a: number, ta: number, b: number, tb: number): number | null {
  let ga = ta - ctx.q;
  let gb = tb - ctx.q;
  let side = 0;
  const tol = 1e-6 * ctx.q;
  for (let k = 0; k < REFINE; k++) {
    if (Math.abs(gb) <= tol) return b;
    if (Math.abs(ga) <= tol) return a;
    const c = (a * gb - b * ga) / (gb - ga);
    const tc = tau(c);
    if (tc === null) return null;
    const gc = tc - ctx.q;
    if (gc === 0) return c;
    if ((gc > 0) === (gb > 0)) {
      b = c;
      gb = gc;
      if (side === 1) ga /= 2;
      side = 1;
    } else {
      a = c;
      ga = gc;
      if (side === -1) gb /= 2;
      side = -1;
    }
  }
  const best = Math.abs(ga) < Math.abs(gb) ? { v: a, g: ga } : { v: b, g: gb };
  return Math.abs(best.g) <= 1e-3 * ctx.q ? best.v : null;
}

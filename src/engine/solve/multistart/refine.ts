// Stage 5 of the multi-start search: short Levenberg–Marquardt runs (Moré 1978) from the neutral point and the best
// distinct candidates — on the variable-projection problem when some parameters are affine (Golub & Pereyra 1973),
// else on the full one — until the same least SSE is reached from three starts.
import type { LsqProblem, SolveOptions } from '../types';
import { solveNonlinear } from '../lm';
import type { Candidate, Search } from './context';
import { project, reducedProblem } from './project';
import { TUNING } from './tuning';

/** The best point of the local runs and the start of the chain that reached it. */
export interface Incumbent extends Candidate {
  start: Float64Array;
}

/** A short local solver run from θ0, and the time left. */
export interface LocalSolver {
  run: (theta0: Float64Array, seconds: number, iterations?: number) => Candidate | null;
  remaining: () => number;
  solveOpts: (theta0: Float64Array, iters: number | undefined, seconds: number) => SolveOptions;
}

/** The starts of the local runs: the best distinct candidates of the pool, the neutral point first. */
export function chooseStarts(s: Search, pool: Candidate[], special: Float64Array[], localRunsOption: number | undefined): Float64Array[] {
  const { c, L, N, work, base, lower, upper, apart } = s;
  const d = N.length;
  const localRuns = Math.max(1, localRunsOption ?? TUNING.localRuns);
  const chosen: Float64Array[] = [];
  for (const cand of pool) {
    if (chosen.length >= localRuns) break;
    const far = chosen.every((q) => N.some((j) => apart(q[j], cand.theta[j], 0.3)));
    if (chosen.length === 0 || far) chosen.push(cand.theta);
  }
  // the neutral point (every sampled parameter 0, e.g. a rational's denominator 1) is always tried: cheap, and the
  // natural homotopy start for models that reduce to a linear one there
  const neutral = special[0];
  if (d > 0 && neutral && !chosen.includes(neutral) && Number.isFinite(project(c, Float64Array.from(neutral), L, work))) chosen.unshift(neutral);
  if (chosen.length === 0) chosen.push(Float64Array.from(base, (v, j) => Math.min(upper[j], Math.max(lower[j], v))));
  return chosen;
}

/** The local solver: on the reduced problem when some parameters are projected, else on the full problem. */
export function localSolver(
  s: Search,
  problem: LsqProblem,
  shouldStop: (() => boolean) | undefined,
  deadline: number,
  scale: (j: number) => number,
  limit: (j: number) => number,
): LocalSolver {
  const { c, L, Lset, base, lower, upper, fixed } = s;
  const { p } = c;
  const solveOpts = (theta0: Float64Array, iters: number | undefined, seconds: number): SolveOptions => ({
    theta0, lower, upper, fixed, maxIterations: iters, seconds, shouldStop: shouldStop,
  });
  const remaining = (): number => Math.max(0.01, (deadline - Date.now()) / 1000);
  // local runs on the projected problem when some parameters are affine (far more robust from afar), else on the full one
  const NL: number[] = [];
  for (let j = 0; j < p; j++) if (!fixed[j] && !Lset.has(j)) NL.push(j);
  const reduced = L.length > 0 && NL.length > 0 ? reducedProblem(c, base, L, NL, scale, limit) : null;
  const localRun = (theta0: Float64Array, seconds: number, iterations = TUNING.localIterations): { theta: Float64Array; sse: number } | null => {
    try {
      if (reduced) {
        const r = solveNonlinear(reduced.problem, {
          theta0: NL.map((j) => theta0[j]),
          lower: NL.map((j) => lower[j]),
          upper: NL.map((j) => upper[j]),
          maxIterations: iterations,
          seconds,
          shouldStop: shouldStop,
        });
        return Number.isFinite(r.sse) ? { theta: reduced.expand(r.theta), sse: r.sse } : null;
      }
      const r = solveNonlinear(problem, solveOpts(theta0, iterations, seconds));
      return Number.isFinite(r.sse) ? { theta: r.theta, sse: r.sse } : null;
    } catch {
      return null;
    }
  };
  return { run: localRun, remaining, solveOpts };
}

/** Runs the local solver from each start until the same least SSE is reached three times (or time is up). */
export function localRuns(s: Search, local: LocalSolver, chosen: Float64Array[]): Incumbent | null {
  const { stop } = s;
  const { remaining } = local;
  let best: Incumbent | null = null;
  const same = (a: number, b: number): boolean => Math.abs(a - b) <= 1e-6 * Math.max(Math.abs(a), Math.abs(b), 1e-300);
  const starts = chosen;
  let confirmations = 0;
  for (const theta0 of starts) {
    if (best && stop()) break;
    // the same least SSE reached from three distinct starts: enough local runs
    if (confirmations >= 3) break;
    const share = remaining() / Math.max(2, starts.length + 1);
    const r = local.run(theta0, share);
    s.localRunsDone++;
    if (!r) continue;
    if (!best || r.sse < best.sse) {
      confirmations = best && same(r.sse, best.sse) ? confirmations + 1 : 1;
      best = { start: theta0, ...r };
    } else if (same(r.sse, best.sse)) confirmations++;
  }
  return best;
}

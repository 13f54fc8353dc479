// Generic multi-start for least squares without starting values (knows nothing about any particular formula;
// deterministic given the seed): variable projection (Golub & Pereyra 1973) over the parameters the model is affine
// in, detected numerically; Latin-hypercube screening over bounds, signed log-magnitudes and data locations;
// differential evolution (Storn & Price 1997) on the projected SSE; short Levenberg–Marquardt runs on the projected
// problem from the best distinct candidates; basin hopping by redrawing one or two parameters; a full LM run last.
//
// Stages, in order (constants in TUNING, tuning.ts; one file per stage, this one runs them):
// 1. affine.ts, project.ts — affine parameters: free, unbounded θ_j with zero pure and mixed second differences at informative reference
//    points are solved by linear least squares (QR) for every candidate of the others.
// 2. candidates.ts — sensitivity scale of each remaining parameter: the change that moves f by the span of y (median over points).
// 3. candidates.ts — screening: 256·2^min(d,4) candidates (d = parameters to sample), each coordinate drawn from a mixture of
//    uniform-in-bounds, ±10^[-6, 6], ±scale·10^[-2.5, 2.5] and the x range (location-like parameters); plus the
//    neutral point 0 and ±1. Points whose linear terms cancel (sum of |terms| > 1000 × the fit) are rejected.
// 4. evolve.ts — differential evolution (DE/rand/1/bin) seeded with the best distinct candidates, trial values kept within the
//    sampled magnitudes.
// 5. refine.ts — local LM runs on the projected problem (forward-difference Jacobian) from the neutral point and the best distinct
//    candidates; stops after the same least SSE is reached three times.
// 6. hop.ts — hops: from the incumbent, every single parameter and pair is redrawn (others kept), the best redraw of each is
//    run locally; repeated while the SSE drops by more than 1e-5 relative.
// 7. index.ts — the full LM (analytic derivatives, bounds, no guard) from the best point polishes the answer.
import type { LsqProblem, SolveResult } from '../types';
import { solveNonlinear } from '../lm';
import { DEFAULTS } from '../../spec/defaults';
import { affineParameters } from './affine';
import { draw, screen, sampler, sensitivityScales, coord, type Sampler } from './candidates';
import { evalF, type Ctx, type Search } from './context';
import { evolve } from './evolve';
import { hop } from './hop';
import { mulberry32 } from './random';
import { chooseStarts, localRuns, localSolver } from './refine';
import { LOG_HI, TUNING } from './tuning';

export { mulberry32, sampleWithoutReplacement } from './random';
export { TUNING } from './tuning';

export interface MultiStartOptions {
  lower?: ArrayLike<number>;
  upper?: ArrayLike<number>;
  fixed?: ArrayLike<boolean>;
  /** known starting values (used as given); undefined where a start must be found */
  start: (number | undefined)[];
  /** range [min, max] of each x variable (data scales for location-like parameters) */
  xRanges: [number, number][];
  /** range of y */
  yRange: [number, number];
  /** seed of the candidate generator (default 1) */
  seed?: number;
  /** wall-clock budget in seconds (default 20); the search usually needs far less */
  seconds?: number;
  /** number of short local solver runs from the best distinct candidates (default 8) */
  localRuns?: number;
  /** number of candidates screened (default 256·2^min(d,4), at most TUNING.maxCandidates = 4096; d = parameters sampled) */
  candidates?: number;
  maxIterations?: number;
  shouldStop?: () => boolean;
}

export interface MultiStartResult extends SolveResult {
  /** the starting point of the final solver run */
  startValues: Float64Array;
  /** candidates screened and local runs made */
  screened: number;
  localRunsDone: number;
  /** indices of parameters solved by linear least squares during screening */
  projected: number[];
}

/** Multi-start least squares (see the file header). Never throws for a model that evaluates to NaN/Inf. */
export function multiStart(problem: LsqProblem, opts: MultiStartOptions): MultiStartResult {
  const t0 = Date.now();
  const budget = (opts.seconds ?? DEFAULTS.solver.seconds) * 1000;
  const deadline = t0 + budget;
  const { n, p } = problem;
  const lower = Float64Array.from({ length: p }, (_, j) => (opts.lower && opts.lower[j] !== undefined ? opts.lower[j] : -Infinity));
  const upper = Float64Array.from({ length: p }, (_, j) => (opts.upper && opts.upper[j] !== undefined ? opts.upper[j] : Infinity));
  const fixed = Array.from({ length: p }, (_, j) => !!(opts.fixed && opts.fixed[j]));
  const rand = mulberry32(opts.seed ?? 1);
  const sw = new Float64Array(n);
  for (let i = 0; i < n; i++) sw[i] = problem.w ? Math.sqrt(problem.w[i]) : 1;
  const c: Ctx = { problem, n, p, sw, f: new Float64Array(n), J: new Float64Array(n * p), evaluations: 0 };
  const stop = (): boolean => Date.now() > deadline || !!(opts.shouldStop && opts.shouldStop());

  const unknown: number[] = [];
  for (let j = 0; j < p; j++) if (!fixed[j] && opts.start[j] === undefined) unknown.push(j);
  const base = Float64Array.from({ length: p }, (_, j) => opts.start[j] ?? 0);
  // two values of a parameter are "apart" when their signed log magnitudes differ by more than `dex`, or (location-like
  // parameters) they differ by more than a share of the x span
  const xSpan = Math.max(1e-300, ...opts.xRanges.map(([a, b]) => b - a));
  const apart = (a: number, b: number, dex: number): boolean => Math.abs(coord(a) - coord(b)) > dex || Math.abs(a - b) > dex * 0.25 * xSpan;
  const yScale = Math.max(Math.abs(opts.yRange[1] - opts.yRange[0]), Math.abs(opts.yRange[0]), Math.abs(opts.yRange[1])) || 1;
  const s: Search = { c, lower, upper, fixed, base, unknown, L: [], Lset: new Set(), N: [], work: { cols: [], r: new Float64Array(n) }, rand, stop, apart, screened: 0, localRunsDone: 0 };

  // broad samplers first (scale 1), used for reference points and sensitivity scales
  const broad = unknown.map((j) => sampler(lower[j], upper[j], 1, opts.xRanges));

  // 1. parameters the model is affine in (free, unbounded): solved by linear least squares for every candidate
  // reference points of moderate magnitude (±10^[-1, 1], or inside the bounds), where parameters tend to matter
  const moderate = unknown.map((j) => {
    if (Number.isFinite(lower[j]) || Number.isFinite(upper[j])) return sampler(lower[j], upper[j], 1, opts.xRanges);
    return ((u: number, rnd: () => number) => (rnd() < 0.5 ? -1 : 1) * 10 ** (-1 + 2 * u)) as Sampler;
  });
  const refs: Float64Array[] = [];
  for (let k = 0; k < 60 && refs.length < 4; k++) {
    const t = draw(s, k < 30 ? moderate : broad, null);
    if (evalF(c, t, false)) refs.push(t);
  }
  const affineCandidates: number[] = [];
  for (let j = 0; j < p; j++) if (!fixed[j] && lower[j] === -Infinity && upper[j] === Infinity) affineCandidates.push(j);
  const L = refs.length > 0 ? affineParameters(c, refs, affineCandidates) : [];
  const Lset = new Set(L);
  const N = unknown.filter((j) => !Lset.has(j));
  Object.assign(s, { L, Lset, N, work: { cols: L.map(() => new Float64Array(n)), r: new Float64Array(n) } });

  // 2. sensitivity scale of each sampled parameter: the change that moves f by the span of y, median over points
  const scales = sensitivityScales(s, broad, yScale);
  const scale = (j: number): number => scales.get(j) ?? 1;
  /** largest magnitude the search visits for parameter j (the sampled range; bounds, when finite, beyond it) */
  const limit = (j: number): number => Math.max(10 ** LOG_HI, 10 ** 2.5 * scale(j), Math.abs(base[j]) * 10, ...[lower[j], upper[j]].filter(Number.isFinite).map(Math.abs));
  const samplers = unknown.map((j) => (Lset.has(j) ? () => 0 : sampler(lower[j], upper[j], scale(j), opts.xRanges)));

  // 3. screen candidates (Latin hypercube in the unit cube of the sampled parameters) by projected SSE; the count
  // depends on the dimension only, so the search is deterministic given the seed (time limits aside)
  const d = N.length;
  const nCand = opts.candidates ?? (d === 0 ? 1 : Math.min(TUNING.maxCandidates, 256 * 2 ** Math.min(d, 4)));
  const { pool, special } = screen(s, samplers, nCand);

  // 4. differential evolution on the projected SSE, seeded with the best distinct screened candidates
  evolve(s, pool, limit);

  // 5. short local runs from the best distinct candidates (and the neutral point)
  const chosen = chooseStarts(s, pool, special, opts.localRuns);
  const local = localSolver(s, problem, opts.shouldStop, deadline, scale, limit);
  const { remaining, solveOpts } = local;
  let best = localRuns(s, local, chosen);

  // 6. basin hopping by coordinate resampling from the incumbent
  best = hop(s, local, best, samplers);

  // 7. the full run from the best local solution, with the model's own derivatives
  const startValues = best ? best.start : chosen[0];
  let final: SolveResult;
  try {
    final = solveNonlinear(problem, solveOpts(Float64Array.from(best ? best.theta : startValues), opts.maxIterations, remaining()));
  } catch (e) {
    if (!best) throw e;
    final = solveNonlinear(problem, solveOpts(Float64Array.from(startValues), opts.maxIterations, remaining()));
  }
  return { ...final, startValues, screened: s.screened, localRunsDone: s.localRunsDone, projected: L };
}

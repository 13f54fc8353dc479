// Generic multi-start for least squares without starting values (knows nothing about any particular formula;
// deterministic given the seed): variable projection (Golub & Pereyra 1973) over the parameters the model is affine
// in, detected numerically; Latin-hypercube screening over bounds, signed log-magnitudes and data locations;
// differential evolution (Storn & Price 1997) on the projected SSE; short Levenberg–Marquardt runs on the projected
// problem from the best distinct candidates; basin hopping by redrawing one or two parameters; a full LM run last.
//
// Stages, in order (constants in TUNING):
// 1. affine parameters: free, unbounded θ_j with zero pure and mixed second differences at informative reference
//    points are solved by linear least squares (QR) for every candidate of the others.
// 2. sensitivity scale of each remaining parameter: the change that moves f by the span of y (median over points).
// 3. screening: 256·2^min(d,4) candidates (d = parameters to sample), each coordinate drawn from a mixture of
//    uniform-in-bounds, ±10^[-6, 6], ±scale·10^[-2.5, 2.5] and the x range (location-like parameters); plus the
//    neutral point 0 and ±1. Points whose linear terms cancel (sum of |terms| > 1000 × the fit) are rejected.
// 4. differential evolution (DE/rand/1/bin) seeded with the best distinct candidates, trial values kept within the
//    sampled magnitudes.
// 5. local LM runs on the projected problem (forward-difference Jacobian) from the neutral point and the best distinct
//    candidates; stops after the same least SSE is reached three times.
// 6. hops: from the incumbent, every single parameter and pair is redrawn (others kept), the best redraw of each is
//    run locally; repeated while the SSE drops by more than 1e-5 relative.
// 7. the full LM (analytic derivatives, bounds, no guard) from the best point polishes the answer.
import type { LsqProblem, SolveOptions, SolveResult } from './types';
import { solveNonlinear } from './index';
import { DEFAULTS } from '../spec/defaults';
import { mgsProject, mgsQr } from './linalg';

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

/** Small seeded PRNG: mulberry32 (T. Ettinger, public domain; common practice). Returns u in [0, 1). */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * k items of xs drawn uniformly without replacement, in draw order: the first k steps of a Fisher–Yates shuffle
 * (Durstenfeld 1964; Knuth, TAOCP vol. 2, 3.4.2, algorithm P) driven by the seeded generator, so every JS engine
 * draws the same items (unlike sorting with a random comparator, which is neither uniform nor portable).
 */
export function sampleWithoutReplacement<T>(xs: readonly T[], k: number, rand: () => number): T[] {
  const a = xs.slice();
  const m = Math.min(k, a.length);
  for (let i = 0; i < m; i++) {
    const j = i + Math.floor(rand() * (a.length - i));
    const t = a[i];
    a[i] = a[j];
    a[j] = t;
  }
  return a.slice(0, m);
}

/** Search constants (one place, frozen: the search reads them, nothing changes them). */
export const TUNING: Readonly<{
  /** share of candidates of an unbounded parameter drawn over the x range (location-like parameters) */
  locationShare: number;
  /** default number of short local runs */
  localRuns: number;
  /** iteration cap of one short local run */
  localIterations: number;
  /** the search rejects points whose linear terms sum (in norm) to more than this multiple of the fit */
  cancellation: number;
  /** cap on screened candidates */
  maxCandidates: number;
  /** differential-evolution population per sampled parameter */
  dePopulation: number;
  /** generations of differential evolution on the projected SSE (0: none) */
  deGenerations: number;
  /** candidates screened per redrawn subset in a hop */
  hopSamples: number;
  /** rounds of coordinate-resampling basin hopping, and local runs per round */
  hopRounds: number;
  hopRuns: number;
}> = Object.freeze({ locationShare: 0.4, localRuns: 8, localIterations: 100, hopRounds: 4, hopRuns: 24, hopSamples: 400, deGenerations: 150, cancellation: 1e3, maxCandidates: 4096, dePopulation: 10 });

const LOG_LO = -6;
const LOG_HI = 6;

interface Ctx {
  problem: LsqProblem;
  n: number;
  p: number;
  sw: Float64Array;
  f: Float64Array;
  J: Float64Array;
  evaluations: number;
}

/** f at θ; false when any value is not finite. */
function evalF(c: Ctx, theta: Float64Array, withJ: boolean): boolean {
  c.f.fill(NaN);
  try {
    c.problem.model(theta, c.f, withJ ? c.J : null);
  } catch {
    return false;
  }
  c.evaluations++;
  for (let i = 0; i < c.n; i++) if (!Number.isFinite(c.f[i])) return false;
  if (withJ) for (let k = 0; k < c.J.length; k++) if (!Number.isFinite(c.J[k])) return false;
  return true;
}

/**
 * Which free, unbounded parameters the model is jointly affine in, tested numerically at reference points: every
 * pure second difference along θ_j and every mixed difference along (θ_j, θ_k) within the set must vanish to
 * round-off at every observation. Greedy in parameter order.
 */
function affineParameters(c: Ctx, refs: Float64Array[], candidates: number[]): number[] {
  const { n } = c;
  const f0 = new Float64Array(n);
  const fa = new Float64Array(n);
  const fb = new Float64Array(n);
  const fab = new Float64Array(n);
  const small = (d: (i: number) => number, scale: (i: number) => number): boolean => {
    for (let i = 0; i < n; i++) if (!(Math.abs(d(i)) <= 1e-7 * scale(i) + 1e-300)) return false;
    return true;
  };
  const at = (theta: Float64Array, out: Float64Array): boolean => {
    if (!evalF(c, theta, false)) return false;
    out.set(c.f);
    return true;
  };
  const usable = refs.filter((r) => at(r, f0));
  if (usable.length === 0) return [];
  // a reference point is informative for θ_j when moving θ_j changes f there; at least two informative points are
  // required (else θ_j is treated as nonlinear, the safe side), and every informative one must show no curvature
  const pure = (j: number): boolean => {
    let informative = 0;
    for (const r of usable) {
      const h = Math.max(1, Math.abs(r[j]));
      const t = Float64Array.from(r);
      if (!at(t, f0)) return false;
      t[j] = r[j] + h;
      if (!at(t, fa)) return false;
      t[j] = r[j] + 2 * h;
      if (!at(t, fb)) return false;
      let moved = false;
      for (let i = 0; i < n && !moved; i++) if (Math.abs(fa[i] - f0[i]) > 1e-6 * (Math.abs(fa[i]) + Math.abs(f0[i]))) moved = true;
      if (!moved) continue;
      informative++;
      const flat = small(
        (i) => fb[i] - 2 * fa[i] + f0[i],
        (i) => Math.abs(fb[i]) + 2 * Math.abs(fa[i]) + Math.abs(f0[i]),
      );
      if (!flat) return false;
    }
    return informative >= 2;
  };
  const mixed = (j: number, k: number): boolean =>
    usable.every((r) => {
      const hj = Math.max(1, Math.abs(r[j]));
      const hk = Math.max(1, Math.abs(r[k]));
      const t = Float64Array.from(r);
      if (!at(t, f0)) return false;
      t[j] = r[j] + hj;
      if (!at(t, fa)) return false;
      t[k] = r[k] + hk;
      if (!at(t, fab)) return false;
      t[j] = r[j];
      if (!at(t, fb)) return false;
      return small(
        (i) => fab[i] - fa[i] - fb[i] + f0[i],
        (i) => Math.abs(fab[i]) + Math.abs(fa[i]) + Math.abs(fb[i]) + Math.abs(f0[i]),
      );
    });
  const L: number[] = [];
  for (const j of candidates) {
    if (!pure(j)) continue;
    if (L.every((k) => mixed(j, k))) L.push(j);
  }
  return L;
}

/**
 * Variable projection at θ: the parameters in L are replaced by their linear least-squares values given the others.
 * Returns the weighted SSE (Infinity when not finite or the linear part is rank-deficient); θ is updated in place.
 */
function project(c: Ctx, theta: Float64Array, L: number[], work: { cols: Float64Array[]; r: Float64Array }): number {
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
function reducedProblem(
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

type Sampler = (u: number, rand: () => number) => number;

/** The candidate distribution of one parameter, from its bounds, a sensitivity scale and the data locations. */
function sampler(lo: number, hi: number, scale: number, locations: [number, number][]): Sampler {
  const logU = (a: number, b: number, u: number): number => 10 ** (a + (b - a) * u);
  if (Number.isFinite(lo) && Number.isFinite(hi)) {
    if (lo > 0 && hi / lo > 1e3) return (u) => logU(Math.log10(lo), Math.log10(hi), u);
    if (hi < 0 && lo / hi > 1e3) return (u) => -logU(Math.log10(-hi), Math.log10(-lo), u);
    return (u) => lo + (hi - lo) * u;
  }
  const ls = Math.log10(scale);
  const magnitude = (u: number, rand: () => number): number => {
    const k = rand();
    if (k < 0.45) return logU(ls - 2.5, ls + 2.5, u);
    return logU(LOG_LO, LOG_HI, u);
  };
  if (Number.isFinite(lo)) return (u, rand) => lo + magnitude(u, rand);
  if (Number.isFinite(hi)) return (u, rand) => hi - magnitude(u, rand);
  return (u, rand) => {
    const k = rand();
    if (k < TUNING.locationShare && locations.length > 0) {
      const [a, b] = locations[Math.floor(rand() * locations.length)];
      const s = b - a > 0 ? b - a : Math.abs(a) || 1;
      return a - 0.25 * s + 1.5 * s * u;
    }
    const sign = rand() < 0.5 ? -1 : 1;
    return sign * magnitude(u, rand);
  };
}

/** Transformed coordinate used to tell candidates apart: signed log magnitude. */
function coord(v: number): number {
  const a = Math.abs(v);
  return a < 1e-12 ? 0 : Math.sign(v) * (Math.log10(a) + 13);
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

  // broad samplers first (scale 1), used for reference points and sensitivity scales
  const broad = unknown.map((j) => sampler(lower[j], upper[j], 1, opts.xRanges));
  const draw = (samplers: Sampler[], us: number[] | null): Float64Array => {
    const t = Float64Array.from(base);
    unknown.forEach((j, a) => (t[j] = samplers[a](us ? us[a] : rand(), rand)));
    return t;
  };

  // 1. parameters the model is affine in (free, unbounded): solved by linear least squares for every candidate
  // reference points of moderate magnitude (±10^[-1, 1], or inside the bounds), where parameters tend to matter
  const moderate = unknown.map((j) => {
    if (Number.isFinite(lower[j]) || Number.isFinite(upper[j])) return sampler(lower[j], upper[j], 1, opts.xRanges);
    return ((u: number, rnd: () => number) => (rnd() < 0.5 ? -1 : 1) * 10 ** (-1 + 2 * u)) as Sampler;
  });
  const refs: Float64Array[] = [];
  for (let k = 0; k < 60 && refs.length < 4; k++) {
    const t = draw(k < 30 ? moderate : broad, null);
    if (evalF(c, t, false)) refs.push(t);
  }
  const affineCandidates: number[] = [];
  for (let j = 0; j < p; j++) if (!fixed[j] && lower[j] === -Infinity && upper[j] === Infinity) affineCandidates.push(j);
  const L = refs.length > 0 ? affineParameters(c, refs, affineCandidates) : [];
  const Lset = new Set(L);
  const N = unknown.filter((j) => !Lset.has(j));
  const work = { cols: L.map(() => new Float64Array(n)), r: new Float64Array(n) };

  // 2. sensitivity scale of each sampled parameter: the change that moves f by the span of y, median over points
  const scaleOf = new Map<number, number[]>();
  for (let k = 0; k < 64 && !stop(); k++) {
    const t = draw(broad, null);
    if (!Number.isFinite(project(c, t, L, work))) continue;
    if (!evalF(c, t, true)) continue;
    for (const j of N) {
      let s = 0;
      for (let i = 0; i < n; i++) s += (sw[i] * c.J[j * n + i]) ** 2;
      const rms = Math.sqrt(s / n);
      if (rms > 0 && Number.isFinite(rms)) {
        const list = scaleOf.get(j) ?? [];
        list.push(Math.log10(yScale / rms));
        scaleOf.set(j, list);
      }
    }
  }
  const scales = new Map<number, number>();
  for (const [j, list] of scaleOf) {
    list.sort((a, b) => a - b);
    scales.set(j, 10 ** Math.min(LOG_HI, Math.max(LOG_LO, list[Math.floor(list.length / 2)])));
  }
  const scale = (j: number): number => scales.get(j) ?? 1;
  /** largest magnitude the search visits for parameter j (the sampled range; bounds, when finite, beyond it) */
  const limit = (j: number): number => Math.max(10 ** LOG_HI, 10 ** 2.5 * scale(j), Math.abs(base[j]) * 10, ...[lower[j], upper[j]].filter(Number.isFinite).map(Math.abs));
  const samplers = unknown.map((j) => (Lset.has(j) ? () => 0 : sampler(lower[j], upper[j], scale(j), opts.xRanges)));

  // 3. screen candidates (Latin hypercube in the unit cube of the sampled parameters) by projected SSE; the count
  // depends on the dimension only, so the search is deterministic given the seed (time limits aside)
  const d = N.length;
  const nCand = opts.candidates ?? (d === 0 ? 1 : Math.min(TUNING.maxCandidates, 256 * 2 ** Math.min(d, 4)));
  const pool: { theta: Float64Array; sse: number }[] = [];
  const special: Float64Array[] = [];
  if (d > 0) {
    for (const v of [0, 1, -1]) {
      const t = Float64Array.from(base);
      for (const j of N) t[j] = Math.min(upper[j], Math.max(lower[j], v));
      special.push(t);
    }
  } else special.push(Float64Array.from(base));
  for (const t of special) {
    const s = project(c, t, L, work);
    if (Number.isFinite(s)) pool.push({ theta: t, sse: s });
  }
  const batch = 256;
  let screened = special.length;
  for (let start = 0; start < nCand - special.length && !stop(); start += batch) {
    const m = Math.min(batch, nCand - special.length - start);
    // Latin hypercube: one stratum per candidate in every dimension, strata shuffled per dimension
    const perms = unknown.map(() => {
      const a = Array.from({ length: m }, (_, k) => k);
      for (let k = m - 1; k > 0; k--) {
        const r = Math.floor(rand() * (k + 1));
        [a[k], a[r]] = [a[r], a[k]];
      }
      return a;
    });
    for (let k = 0; k < m; k++) {
      const us = unknown.map((_, a) => (perms[a][k] + rand()) / m);
      const t = draw(samplers, us);
      const s = project(c, t, L, work);
      screened++;
      if (Number.isFinite(s)) pool.push({ theta: t, sse: s });
    }
    // keep the pool small: the best 4·localRuns·8
    if (pool.length > 2048) {
      pool.sort((a, b) => a.sse - b.sse);
      pool.length = 512;
    }
  }
  pool.sort((a, b) => a.sse - b.sse);

  // 3b. differential evolution (Storn & Price 1997, DE/rand/1/bin) on the projected SSE over the sampled
  // parameters, seeded with the best distinct screened candidates: cheap evaluations, good at multimodal landscapes
  const sampledIdx = N;
  if (sampledIdx.length > 0 && pool.length >= 4 && TUNING.deGenerations > 0) {
    const P = Math.min(pool.length, Math.max(20, TUNING.dePopulation * sampledIdx.length));
    const pop: { theta: Float64Array; sse: number }[] = [];
    for (const cand of pool) {
      if (pop.length >= P) break;
      if (pop.every((q) => sampledIdx.some((j) => apart(q.theta[j], cand.theta[j], 0.05)))) pop.push(cand);
    }
    const m = pop.length;
    for (let g = 0; g < TUNING.deGenerations && m >= 4 && !stop(); g++) {
      for (let i = 0; i < m; i++) {
        let r1: number, r2: number, r3: number;
        do r1 = Math.floor(rand() * m); while (r1 === i);
        do r2 = Math.floor(rand() * m); while (r2 === i || r2 === r1);
        do r3 = Math.floor(rand() * m); while (r3 === i || r3 === r1 || r3 === r2);
        const F = 0.5 + 0.5 * rand();
        const t = Float64Array.from(pop[i].theta);
        const jr = Math.floor(rand() * sampledIdx.length);
        sampledIdx.forEach((j, a) => {
          if (a === jr || rand() < 0.9) {
            // trial values stay within the sampled magnitudes (else the population can drift to degenerate infinities)
            const lim = limit(j);
            const v = pop[r1].theta[j] + F * (pop[r2].theta[j] - pop[r3].theta[j]);
            t[j] = Math.min(upper[j], lim, Math.max(lower[j], -lim, v));
          }
        });
        const sse = project(c, t, L, work);
        screened++;
        if (Number.isFinite(sse) && sse <= pop[i].sse) pop[i] = { theta: t, sse };
      }
    }
    pool.unshift(...pop);
    pool.sort((a, b) => a.sse - b.sse);
  }

  // 4. short local runs from the best distinct candidates
  const localRuns = Math.max(1, opts.localRuns ?? TUNING.localRuns);
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
  const solveOpts = (theta0: Float64Array, iters: number | undefined, seconds: number): SolveOptions => ({
    theta0, lower, upper, fixed, maxIterations: iters, seconds, shouldStop: opts.shouldStop,
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
          shouldStop: opts.shouldStop,
        });
        return Number.isFinite(r.sse) ? { theta: reduced.expand(r.theta), sse: r.sse } : null;
      }
      const r = solveNonlinear(problem, solveOpts(theta0, iterations, seconds));
      return Number.isFinite(r.sse) ? { theta: r.theta, sse: r.sse } : null;
    } catch {
      return null;
    }
  };
  let best: { start: Float64Array; theta: Float64Array; sse: number } | null = null;
  let localRunsDone = 0;
  const same = (a: number, b: number): boolean => Math.abs(a - b) <= 1e-6 * Math.max(Math.abs(a), Math.abs(b), 1e-300);
  const starts = chosen;
  let confirmations = 0;
  for (const theta0 of starts) {
    if (best && stop()) break;
    // the same least SSE reached from three distinct starts: enough local runs
    if (confirmations >= 3) break;
    const share = remaining() / Math.max(2, starts.length + 1);
    const r = localRun(theta0, share);
    localRunsDone++;
    if (!r) continue;
    if (!best || r.sse < best.sse) {
      confirmations = best && same(r.sse, best.sse) ? confirmations + 1 : 1;
      best = { start: theta0, ...r };
    } else if (same(r.sse, best.sse)) confirmations++;
  }

  // 4b. basin hopping by coordinate resampling: from the incumbent, redraw one or two sampled parameters (the others
  // kept), screen by projected SSE, and run local fits from the best few; repeat while it improves. This escapes the
  // minima where one term of a sum is wrong while the others are right (common in sums of peaks or exponentials).
  const sampledNL = N.filter((j) => !Lset.has(j));
  const samplerOf = new Map<number, Sampler>();
  unknown.forEach((j, a) => samplerOf.set(j, samplers[a]));
  const subsets: number[][] = sampledNL.map((j) => [j]);
  for (let a = 0; a < sampledNL.length; a++) for (let b = a + 1; b < sampledNL.length; b++) subsets.push([sampledNL[a], sampledNL[b]]);
  const maxSubsets = 24;
  for (let round = 0; best && round < TUNING.hopRounds && !stop() && sampledNL.length > 0; round++) {
    const inc = best;
    const pick = subsets.length > maxSubsets ? sampleWithoutReplacement(subsets, maxSubsets, rand) : subsets;
    const found: { theta: Float64Array; sse: number }[] = [];
    for (const S of pick) {
      if (stop()) break;
      let top: { theta: Float64Array; sse: number } | null = null;
      const m = TUNING.hopSamples;
      for (let k = 0; k < m; k++) {
        const t = Float64Array.from(inc.theta);
        for (const j of S) t[j] = (samplerOf.get(j) as Sampler)((k + rand()) / m, rand);
        // only moves that change the redrawn parameters materially (else the local run returns to the incumbent)
        if (!S.every((j) => apart(t[j], inc.theta[j], 0.2))) continue;
        const sse = project(c, t, L, work);
        screened++;
        if (Number.isFinite(sse) && (!top || sse < top.sse)) top = { theta: t, sse };
      }
      if (top) found.push(top);
    }
    found.sort((x, y) => x.sse - y.sse);
    let improved = false;
    for (const cand of found.slice(0, TUNING.hopRuns)) {
      if (stop()) break;
      const r = localRun(cand.theta, remaining() / 4);
      localRunsDone++;
      if (r && r.sse < (best as { sse: number }).sse * (1 - 1e-5)) {
        best = { start: inc.start, ...r }; // startValues name where the winning chain began
        improved = true;
      }
    }
    if (!improved) break;
  }

  // 5. the full run from the best local solution, with the model's own derivatives
  const startValues = best ? best.start : chosen[0];
  let final: SolveResult;
  try {
    final = solveNonlinear(problem, solveOpts(Float64Array.from(best ? best.theta : startValues), opts.maxIterations, remaining()));
  } catch (e) {
    if (!best) throw e;
    final = solveNonlinear(problem, solveOpts(Float64Array.from(startValues), opts.maxIterations, remaining()));
  }
  return { ...final, startValues, screened, localRunsDone, projected: L };
}

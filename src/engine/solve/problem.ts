// Shared set-up of a weighted least-squares problem for the solvers: option checking, free/fixed split, bounds,
// weighted residuals r = √w (f − y) and the weighted Jacobian of the free parameters (common practice).
import type { LsqProblem, SolveOptions, SolveResult } from './types';
import type { Termination } from '../report';
import { analyzeRank, norm2 } from './linalg';

export { CONVERGED } from '../terminations';

export interface Prepared {
  problem: LsqProblem;
  n: number;
  p: number;
  /** indices of the free parameters */
  free: number[];
  q: number;
  /** √w_i (all 1 when unweighted) */
  sw: Float64Array;
  lower: Float64Array;
  upper: Float64Array;
  /** starting point, full length p, projected into the box; fixed entries exact */
  theta0: Float64Array;
  maxIterations: number;
  /** false: no last-digit polishing (Gauss–Newton after LM, refinement of a linear solve); SolveOptions.refine */
  refine: boolean;
  deadline: number;
  shouldStop?: () => boolean;
  onIteration?: SolveOptions['onIteration'];
  /** scratch buffers of the raw model evaluation */
  f: Float64Array;
  J: Float64Array;
  evaluations: number;
}

/** `denseJacobian` false: no n×p Jacobian scratch (the block solver of solve/block.ts keeps its own compact one) */
export function prepare(problem: LsqProblem, opts: SolveOptions, defaultMaxIterations: number, denseJacobian = true): Prepared {
  const { n, p } = problem;
  if (!(Number.isInteger(n) && n >= 0 && Number.isInteger(p) && p >= 0)) {
    throw new Error(`least-squares problem has invalid size n=${n}, p=${p}: both must be non-negative integers`);
  }
  if (problem.y.length < n) throw new Error(`least-squares problem has ${problem.y.length} observations but n=${n}`);
  if (opts.theta0.length !== p) {
    throw new Error(`${opts.theta0.length} starting values were given for ${p} parameters: give one per parameter`);
  }
  const lower = new Float64Array(p).fill(-Infinity);
  const upper = new Float64Array(p).fill(Infinity);
  const free: number[] = [];
  const theta0 = new Float64Array(p);
  for (let j = 0; j < p; j++) {
    if (opts.lower && opts.lower[j] !== undefined && !Number.isNaN(opts.lower[j])) lower[j] = opts.lower[j];
    if (opts.upper && opts.upper[j] !== undefined && !Number.isNaN(opts.upper[j])) upper[j] = opts.upper[j];
    if (lower[j] > upper[j]) {
      throw new Error(`parameter ${j + 1} has lower bound ${lower[j]} above its upper bound ${upper[j]}: swap or fix them`);
    }
    const t = Number(opts.theta0[j]);
    const isFixed = !!(opts.fixed && opts.fixed[j]);
    if (!Number.isFinite(t)) {
      throw new Error(`starting value of parameter ${j + 1} is ${t}: give a finite number`);
    }
    theta0[j] = isFixed ? t : Math.min(upper[j], Math.max(lower[j], t));
    if (!isFixed) free.push(j);
  }
  const sw = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const wi = problem.w ? problem.w[i] : 1;
    if (!(wi >= 0) || !Number.isFinite(wi)) {
      throw new Error(`weight of observation ${i + 1} is ${wi}: weights must be finite and non-negative`);
    }
    sw[i] = Math.sqrt(wi);
  }
  const maxIterations = opts.maxIterations !== undefined && opts.maxIterations > 0 ? Math.floor(opts.maxIterations) : defaultMaxIterations;
  const deadline = opts.seconds !== undefined && opts.seconds > 0 ? Date.now() + opts.seconds * 1000 : Infinity;
  return {
    problem, n, p, free, q: free.length, sw, lower, upper, theta0, maxIterations, refine: opts.refine !== false, deadline,
    shouldStop: opts.shouldStop, onIteration: opts.onIteration,
    f: new Float64Array(n), J: new Float64Array(denseJacobian ? n * p : 0), evaluations: 0,
  };
}

/**
 * Evaluate at the full parameter vector θ: writes r (length m ≥ n, rows ≥ n zero) and, when A is given, the
 * weighted Jacobian of the free parameters (m×q column-major). Returns false when anything is NaN/±Inf.
 * The model's raw f and J go to `raw` (default: the scratch buffers P.f, P.J).
 */
export function evaluate(
  P: Prepared, theta: Float64Array, r: Float64Array, A: Float64Array | null, m: number,
  raw: { f: Float64Array; J: Float64Array } = P,
): boolean {
  const { n, sw, free, problem } = P;
  const { f, J } = raw;
  P.evaluations++;
  f.fill(NaN);
  if (A) J.fill(NaN);
  try {
    problem.model(theta, f, A ? J : null);
  } catch {
    return false;
  }
  const y = problem.y;
  for (let i = 0; i < n; i++) {
    const ri = sw[i] * (f[i] - y[i]);
    if (!Number.isFinite(ri)) return false;
    r[i] = ri;
  }
  for (let i = n; i < m; i++) r[i] = 0;
  if (A === J) {
    // unit weights, every parameter free, m = n: the weighted Jacobian is J itself (see jacobianIsRaw)
    for (let k = 0; k < n * free.length; k++) if (!Number.isFinite(J[k])) return false;
  } else if (A) {
    for (let k = 0; k < free.length; k++) {
      const cj = free[k] * n;
      const ck = k * m;
      for (let i = 0; i < n; i++) {
        const a = sw[i] * J[cj + i];
        if (!Number.isFinite(a)) return false;
        A[ck + i] = a;
      }
      for (let i = n; i < m; i++) A[ck + i] = 0;
    }
  }
  return true;
}

/** true when A = √w J of the free parameters is J itself (unit weights, none fixed, m = n): one buffer serves both */
export function jacobianIsRaw(P: Prepared, m: number): boolean {
  if (P.q !== P.p || m !== P.n) return false;
  for (let i = 0; i < P.n; i++) if (P.sw[i] !== 1) return false;
  return true;
}

/** rank, unidentifiable parameters (indices into θ) and bound flags at θ, from the weighted free Jacobian A (n×q). */
export function solutionInfo(P: Prepared, theta: Float64Array, A: Float64Array | null, lda = P.n): Pick<SolveResult, 'rank' | 'unidentifiable' | 'atBound'> {
  const atBound: ('min' | 'max' | null)[] = [];
  for (let j = 0; j < P.p; j++) {
    const isFree = P.free.includes(j);
    atBound.push(!isFree ? null : theta[j] <= P.lower[j] ? 'min' : theta[j] >= P.upper[j] ? 'max' : null);
  }
  if (!A || P.q === 0) return { rank: 0, unidentifiable: [], atBound };
  const ra = analyzeRank(A, lda, P.q);
  return { rank: ra.rank, unidentifiable: ra.nullColumns.map((k) => P.free[k]), atBound };
}

/** SSE from weighted residuals */
export function sseOf(r: Float64Array, n: number): number {
  const nr = norm2(r, 0, n);
  return nr * nr;
}

export function stopReason(P: Prepared): Termination | null {
  if (P.shouldStop && P.shouldStop()) return 'cancelled';
  if (Date.now() > P.deadline) return 'time-limit';
  return null;
}

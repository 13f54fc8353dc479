// Canonical parameters of the built-ins: after the solve, a solution is mapped to the one labelling of the same curve
// users expect (a width reported positive, lower < upper, the slow phase first). Each map g satisfies f(g(θ), x) = f(θ, x)
// for every x, so the fitted values and SSE are unchanged, and the Jacobian is re-evaluated at g(θ): J(θ) = J(g(θ))·Dg,
// so the covariance from it is Dg·V·Dgᵀ, the transformed covariance. Formulas the user wrote are never rewritten.
import type { LsqProblem, SolveResult } from '../solve/types';

interface CanonicalMap {
  /** parameter names the map reads or writes (all must be free) */
  uses: string[];
  /** the canonical parameters of the same curve, or null when θ is canonical already */
  map(v: Record<string, number>): Record<string, number> | null;
  /** what the convention is (docs/models) */
  note: string;
}

/** Built-in id → its canonical form. logistic5 is absent on purpose: swapping lower and upper with −slope is not the same 5PL curve unless asym = 1. */
export const CANONICAL: Record<string, CanonicalMap> = {
  gaussian: {
    uses: ['width'],
    map: (v) => (v.width < 0 ? { width: -v.width } : null),
    note: 'width > 0 (the formula uses width² only)',
  },
  lorentzian: {
    uses: ['hwhm'],
    map: (v) => (v.hwhm < 0 ? { hwhm: -v.hwhm } : null),
    note: 'hwhm > 0 (the formula uses hwhm² only)',
  },
  logistic4: {
    uses: ['lower', 'upper', 'slope'],
    // lower + (upper − lower)/(1 + u^s) = upper + (lower − upper)/(1 + u^(−s)), u = ec50/x
    map: (v) => (v.lower > v.upper ? { lower: v.upper, upper: v.lower, slope: -v.slope } : null),
    note: 'lower < upper (a falling curve has slope < 0); (lower, upper, ec50, slope) and (upper, lower, ec50, −slope) are the same curve',
  },
  double_exponential: {
    uses: ['A1', 'k1', 'A2', 'k2'],
    map: (v) => (v.k1 > v.k2 ? { A1: v.A2, k1: v.k2, A2: v.A1, k2: v.k1 } : null),
    note: 'k1 < k2: phase 1 is the slow phase, phase 2 the fast one (the two terms exchanged)',
  },
};

/**
 * The canonical form of a built-in's solution: θ, f, J and atBound at g(θ). Unchanged when there is no map, when
 * θ is canonical, when a parameter the map touches is fixed, or when g(θ) would leave the box bounds.
 */
export function canonicalResult(
  builtin: string | undefined,
  params: string[],
  fixed: boolean[],
  lower: ArrayLike<number>,
  upper: ArrayLike<number>,
  problem: LsqProblem,
  res: SolveResult,
): SolveResult {
  const c = builtin ? CANONICAL[builtin] : undefined;
  if (!c || !res.converged) return res;
  const idx = c.uses.map((name) => params.indexOf(name));
  if (idx.some((j) => j < 0 || fixed[j])) return res;
  const values: Record<string, number> = {};
  params.forEach((name, j) => (values[name] = res.theta[j]));
  const changed = c.map(values);
  if (!changed) return res;
  const theta = Float64Array.from(res.theta);
  for (const [name, v] of Object.entries(changed)) theta[params.indexOf(name)] = v;
  for (let j = 0; j < theta.length; j++) if (!(theta[j] >= lower[j] && theta[j] <= upper[j])) return res;
  const f = new Float64Array(problem.n);
  const J = new Float64Array(problem.n * problem.p);
  problem.model(theta, f, J);
  if (!f.every(Number.isFinite) || !J.every(Number.isFinite)) return res;
  const atBound = Array.from(theta, (t, j) => (t === lower[j] ? 'min' : t === upper[j] ? 'max' : null)) as SolveResult['atBound'];
  // unidentifiable indices follow the exchanged parameters (double_exponential swaps whole terms)
  const perm = params.map((_, j) => j);
  if (builtin === 'double_exponential' && changed.A1 !== undefined) {
    const [a1, k1, a2, k2] = idx;
    [perm[a1], perm[a2], perm[k1], perm[k2]] = [a2, a1, k2, k1];
  }
  return { ...res, theta, f, J, atBound, unidentifiable: res.unidentifiable.map((j) => perm[j]).sort((a, b) => a - b) };
}

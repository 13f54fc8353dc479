// Linear least squares by column-scaled Householder QR with column pivoting (Golub & Van Loan, Matrix Computations, 4th ed., §5.3.3, §5.4.2), rank by one-sided Jacobi SVD of R, minimal-norm solution when rank deficient (§5.5), and iterative refinement on the augmented system with double-double residuals (Björck 1967; Ogita, Rump & Oishi 2005). Never the normal equations.
import type { LsqProblem, SolveOptions, SolveResult } from './types';
import { CompensatedSum, analyzeRank, applyQt, refineAugmented, residualDD, RankAnalysis } from './linalg';
import { CONVERGED, Prepared, evaluate, prepare, solutionInfo } from './problem';
import { DEFAULT_MAX_ITERATIONS, solvePrepared } from './lm';

/** number of refinement steps (each: double-double residuals, then a correction from the same factors) */
const REFINEMENT_STEPS = 3;

/**
 * Solve a model linear in θ: f(θ) = f(0) + J θ exactly. J and f(0) are taken from the model at θ = 0; fixed
 * parameters move to the right-hand side. If the unconstrained solution violates a finite bound, the bounded
 * trust-region solver finishes from the projected solution (the problem is convex, so it finds the constrained optimum).
 */
export function solveLinear(problem: LsqProblem, opts: SolveOptions): SolveResult {
  const P = prepare(problem, opts, DEFAULT_MAX_ITERATIONS);
  const { n, p, q, free, sw } = P;
  const y = problem.y;
  // f(0) and J from the model at θ = 0
  const zero = new Float64Array(p);
  const f0 = new Float64Array(n);
  const J = new Float64Array(n * p);
  problem.model(zero, f0, J);
  P.evaluations++;
  if (!allFiniteArr(f0) || !allFiniteArr(J)) {
    return fail(P, 'the model or its derivatives give NaN or ±Infinity on these data (for example a power of a negative x): check the data and formula');
  }
  // right-hand side b_i = √w_i (y_i − f0_i − Σ_fixed J_ij θ_j) and the weighted free columns, computed compensated
  const fixedIdx: number[] = [];
  for (let j = 0; j < p; j++) if (!free.includes(j)) fixedIdx.push(j);
  const acc = new CompensatedSum();
  const rhs0 = new Float64Array(n); // unweighted y − f0 − J_fixed θ_fixed
  // (with no fixed parameters that is y − f0, one correctly rounded subtraction, which the accumulator would also give)
  if (fixedIdx.length === 0) {
    for (let i = 0; i < n; i++) rhs0[i] = y[i] - f0[i];
  } else {
    for (let i = 0; i < n; i++) {
      acc.reset(y[i]);
      acc.add(-f0[i]);
      for (const j of fixedIdx) acc.addProduct(-J[j * n + i], P.theta0[j]);
      rhs0[i] = acc.value();
    }
  }
  const m = Math.max(n, q);
  const A = new Float64Array(m * q);
  for (let k = 0; k < q; k++) for (let i = 0; i < n; i++) A[k * m + i] = sw[i] * J[free[k] * n + i];

  const theta = Float64Array.from(P.theta0);
  let ra: RankAnalysis | null = null;
  let refinedResidual: Float64Array | null = null;
  if (q > 0) {
    ra = analyzeRank(A, m, q);
    const x = new Float64Array(q);
    const resid = new Float64Array(m);
    const b = new Float64Array(m);
    for (let i = 0; i < n; i++) b[i] = sw[i] * rhs0[i];
    const steps = opts.refine === false ? 0 : REFINEMENT_STEPS;
    if (ra.rank === q) {
      // full rank: QR solution, then refinement on the augmented system with double-double residuals, stopped
      // early once a step no longer moves x (in column-scaled units)
      x.set(lsSolve(ra, b, m, q));
      if (steps > 0) {
        residualDD(A, m, q, x, b, null, resid);
        const xPrev = new Float64Array(q);
        const kappa = ra.svd.s[0] / ra.svd.s[q - 1];
        const rho = Number.isFinite(kappa) ? Math.min(1, kappa * Number.EPSILON * Math.sqrt(m) * q) : 1;
        for (let step = 0; step < steps; step++) {
          xPrev.set(x);
          refineAugmented(A, m, q, ra, b, null, x, resid, 1);
          if (negligibleChange(x, xPrev, ra.d, rho)) break;
        }
        refinedResidual = resid;
      }
    } else {
      // rank deficient: minimal-norm solution, refined as x ← x + LS(A, b − A x) with a double-double residual
      for (let step = 0; step <= steps; step++) {
        residualDD(A, m, q, x, b, null, resid);
        const dx = lsSolve(ra, resid, m, q);
        for (let k = 0; k < q; k++) x[k] += dx[k];
      }
    }
    for (let k = 0; k < q; k++) theta[free[k]] = x[k];
  }
  // a finite bound violated: finish with the bounded nonlinear solver from the projected solution
  for (const j of free) {
    if (theta[j] < P.lower[j] || theta[j] > P.upper[j]) {
      const P2: Prepared = { ...P, theta0: theta.map((t, k) => Math.min(P.upper[k], Math.max(P.lower[k], t))) };
      const res = solvePrepared(P2);
      return { ...res, message: `the unconstrained solution violates a bound; ${res.message}` };
    }
  }
  // f at the solution; J is constant for a model linear in θ, so the one taken at θ = 0 (checked finite) is reused,
  // and so is its rank analysis
  const rw = new Float64Array(m);
  const ok = evaluate(P, theta, rw, null, m);
  const fOut = Float64Array.from(P.f);
  const JOut = J;
  let sse = 0;
  for (let i = 0; i < n; i++) sse += rw[i] * rw[i];
  // the refined residual of the linear system is more accurate than f(θ) − y evaluated term by term
  if (refinedResidual) {
    let s2 = 0;
    for (let i = 0; i < n; i++) s2 += refinedResidual[i] * refinedResidual[i];
    if (Number.isFinite(s2)) sse = s2;
  }
  const info = solutionInfo(P, theta, null, m);
  info.unidentifiable = ok && ra ? ra.nullColumns.map((k) => free[k]) : [];
  const singular = ra !== null && ra.rank < q;
  const termination = !ok ? 'non-finite' : singular ? 'singular' : 'exact';
  const message = !ok
    ? 'the model gives NaN or ±Infinity at the solution'
    : singular
      ? `the design matrix has rank ${ra!.rank} < ${q} free parameters: the minimum-norm solution (in column-scaled units) is reported; parameters ${info.unidentifiable.map((j) => j + 1).join(', ')} are not identifiable`
      : 'solved directly (linear in the parameters)';
  return {
    theta, termination, converged: CONVERGED.includes(termination), iterations: 1, evaluations: P.evaluations,
    sse: ok ? sse : NaN, f: fOut, J: JOut, rank: ra ? ra.rank : 0, unidentifiable: info.unidentifiable,
    atBound: info.atBound, message,
  };
}

/**
 * Least-squares solution of A x ≈ b from the rank analysis (A D⁻¹ P = Q R, R = U Σ Vᵀ): full rank by back
 * substitution with R, rank deficient by the truncated SVD (minimal norm in column-scaled units).
 */
function lsSolve(ra: RankAnalysis, b: Float64Array, m: number, q: number): Float64Array {
  const c = Float64Array.from(b);
  applyQt(ra.qr, c);
  const z = new Float64Array(q);
  if (ra.rank === q) {
    const a = ra.qr.a;
    for (let j = q - 1; j >= 0; j--) {
      let s = c[j];
      for (let i = j + 1; i < q; i++) s -= a[i * m + j] * z[i];
      z[j] = s / ra.qr.rdiag[j];
    }
  } else {
    // R z = c[0..q)  →  z = V Σ⁺ Uᵀ c
    const { u, s, v } = ra.svd;
    for (let k = 0; k < ra.rank; k++) {
      let t = 0;
      for (let i = 0; i < q; i++) t += u[k * q + i] * c[i];
      t /= s[k];
      for (let i = 0; i < q; i++) z[i] += v[k * q + i] * t;
    }
  }
  const x = new Float64Array(q);
  for (let t = 0; t < q; t++) x[ra.qr.perm[t]] = z[t] / ra.d[ra.qr.perm[t]];
  return x;
}

/**
 * true when refinement can stop: the last step changed the scaled solution by rounding only (max_k |δx_k| d_k ≤
 * 2ε max_k |x_k| d_k), or the next step's change, predicted from the contraction factor ρ ≈ κ(R)·ε·√m·q of the
 * refinement (Björck 1967: each step reduces the error by about κ·ε; √m·q is a generous growth factor, common
 * practice), would be below ε max_k |x_k| d_k.
 */
function negligibleChange(x: Float64Array, xPrev: Float64Array, d: Float64Array, rho: number): boolean {
  let dmax = 0;
  let xmax = 0;
  for (let k = 0; k < x.length; k++) {
    dmax = Math.max(dmax, Math.abs(x[k] - xPrev[k]) * d[k]);
    xmax = Math.max(xmax, Math.abs(x[k]) * d[k]);
  }
  return dmax <= 2 * Number.EPSILON * xmax || dmax * rho <= Number.EPSILON * xmax;
}

function allFiniteArr(a: Float64Array): boolean {
  for (let i = 0; i < a.length; i++) if (!Number.isFinite(a[i])) return false;
  return true;
}

function fail(P: Prepared, message: string): SolveResult {
  return {
    theta: Float64Array.from(P.theta0), termination: 'non-finite', converged: false, iterations: 0, evaluations: P.evaluations,
    sse: NaN, f: new Float64Array(P.n).fill(NaN), J: new Float64Array(P.n * P.p).fill(NaN), rank: 0, unidentifiable: [],
    atBound: Array.from({ length: P.p }, () => null), message,
  };
}

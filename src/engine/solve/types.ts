// Types shared by the least-squares solvers (linear QR/SVD and trust-region Levenberg–Marquardt).
import type { Termination } from '../report';
import type { BlockStructure } from './block';

/**
 * Weighted least squares: minimise S(θ) = Σ_i w_i (y_i − f_i(θ))².
 * The model callback writes f (length n) and, when J is given, ∂f/∂θ column-major n×p over ALL parameters
 * (fixed ones included; the solver ignores their columns). It may write NaN/Inf: the solver rejects such steps.
 */
export interface LsqProblem {
  n: number;
  p: number;
  y: Float64Array;
  /** weights 1/σ²; omitted = all 1 */
  w?: Float64Array;
  model(theta: Float64Array, f: Float64Array, J: Float64Array | null): void;
  /** block structure of a joint fit (solve/block.ts): the solvers factor it block by block */
  blocks?: BlockStructure;
}

export interface SolveOptions {
  /** starting point, length p */
  theta0: ArrayLike<number>;
  /** box bounds, ±Infinity for none */
  lower?: ArrayLike<number>;
  upper?: ArrayLike<number>;
  /** fixed[j] holds θ_j at theta0[j] */
  fixed?: ArrayLike<boolean>;
  maxIterations?: number;
  /**
   * last-digit accuracy (default true): iterative refinement of a linear solve on the augmented system, Gauss–Newton
   * polishing after Levenberg–Marquardt. false skips both (linear: accuracy about cond·ε instead of the last digit;
   * nonlinear: the LM convergence tolerances), for refits whose estimates are not reported, e.g. cross-validation.
   */
  refine?: boolean;
  /** wall-clock budget in seconds */
  seconds?: number;
  /** polled every iteration; return true to cancel */
  shouldStop?: () => boolean;
  /** progress report every iteration */
  onIteration?: (iteration: number, sse: number, theta: Float64Array) => void;
}

export interface SolveResult {
  theta: Float64Array;
  termination: Termination;
  /** converged = termination is one of relative-reduction, step-size, gradient, exact */
  converged: boolean;
  iterations: number;
  /** model evaluations */
  evaluations: number;
  sse: number;
  /** fitted values f(θ) at the solution, length n */
  f: Float64Array;
  /** ∂f/∂θ at the solution, column-major n×p over all parameters (unweighted) */
  J: Float64Array;
  /** numerical rank of the weighted Jacobian of the free parameters at the solution */
  rank: number;
  /** indices of free parameters not identifiable (in the null space), empty when full rank */
  unidentifiable: number[];
  /** which bound each parameter sits on at the solution */
  atBound: ('min' | 'max' | null)[];
  /** human-readable detail on the termination */
  message: string;
}

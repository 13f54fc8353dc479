// Public entry of the least-squares solvers: direct linear solve (QR/SVD) and trust-region Levenberg–Marquardt (Moré 1978).
import type { LsqProblem, SolveOptions, SolveResult } from './types';
import { solveLinear } from './linear';
import { solveNonlinear, DEFAULT_MAX_ITERATIONS, FTOL, XTOL, GTOL } from './lm';
import { solveBlock } from './block';

export { solveLinear, solveNonlinear, DEFAULT_MAX_ITERATIONS, FTOL, XTOL, GTOL };
export type { LsqProblem, SolveOptions, SolveResult };

/** dispatch: a block-structured problem (a joint fit) by blocks; `linear: true` solves directly (the model must be linear in θ), otherwise Levenberg–Marquardt */
export function solve(problem: LsqProblem, opts: SolveOptions & { linear?: boolean }): SolveResult {
  if (problem.blocks) return solveBlock(problem as LsqProblem & { blocks: NonNullable<LsqProblem['blocks']> }, opts);
  return opts.linear ? solveLinear(problem, opts) : solveNonlinear(problem, opts);
}

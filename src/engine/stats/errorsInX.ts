// An errors-in-x fit (data.sigmaX) in the report: orthogonal distance regression on top of the model's least-squares
// fit (solve/odr.ts; Deming's closed form starts a straight line with constant σ), handed to the statistics layer as
// the equivalent weighted least-squares problem, then labelled: method, λ, the adjusted x of every point.
import type { ErrorsInXReport, ModelReport } from '../report';
import type { BuiltModel } from '../models/build';
import type { SolveResult } from '../solve/types';
import { deming, odrAsLeastSquares, odrFit, type OdrInput, type OdrResult } from '../solve/odr';

export interface ErrorsInXFit {
  result: SolveResult;
  /** effective weights 1/(1/w_y + f′²/w_x) of the equivalent least-squares problem */
  wEff: Float64Array;
  odr: OdrResult;
  method: 'deming' | 'odr';
  /** σ_y²/σ_x² when both are constant (Deming), else null */
  lambda: number | null;
  wy: Float64Array;
}

function constant(a: Float64Array): boolean {
  for (let i = 1; i < a.length; i++) if (a[i] !== a[0]) return false;
  return true;
}

/** The orthogonal-distance fit of one model; `ls` is its least-squares fit (the start of β). */
export function errorsInXFit(
  built: BuiltModel, x: Float64Array, y: Float64Array, wy: Float64Array, wx: Float64Array, ls: SolveResult,
  o: { maxIterations?: number; seconds?: number; shouldStop?: () => boolean },
): ErrorsInXFit {
  const line = built.builtin === 'linear' || (built.kind === 'polynomial' && built.degree === 1);
  const free = built.fixed.every((f) => !f) && [0, 1].every((j) => !Number.isFinite(built.lower[j]) && !Number.isFinite(built.upper[j]));
  const lambda = constant(wy) && constant(wx) && wy.length > 0 ? wx[0] / wy[0] : null;
  const beta0 = Float64Array.from(ls.theta);
  let method: 'deming' | 'odr' = 'odr';
  if (line && free && lambda !== null) {
    const d = deming(x, y, lambda);
    if (d) {
      beta0[0] = d.intercept;
      beta0[1] = d.slope;
      method = 'deming';
    }
  }
  const input: OdrInput = { compiled: built.compiled, x, y, wy, wx, beta0, lower: built.lower, upper: built.upper, fixed: built.fixed, ...o };
  const odr = odrFit(input);
  const ls2 = odrAsLeastSquares(input, odr);
  return { result: ls2.result, wEff: ls2.wEff, odr, method, lambda, wy };
}

/** Labels the analysed report: errorsInX, the adjusted x and the y weights per point; no profile intervals. */
export function applyErrorsInX(report: ModelReport, fit: ErrorsInXFit, sigmaX: string, variable: string): void {
  const delta = fit.odr.delta;
  let maxShift = 0;
  for (let i = 0; i < delta.length; i++) maxShift = Math.max(maxShift, Math.abs(delta[i]));
  const e: ErrorsInXReport = {
    method: fit.method,
    sigmaX,
    lambda: fit.method === 'deming' ? fit.lambda : null,
    objective: fit.odr.objective,
    iterations: fit.odr.augmented.iterations,
    maxShift,
  };
  report.errorsInX = e;
  for (const pr of Object.values(report.params)) pr.profileCi = null;
  if (report.points) {
    report.points.xAdjusted = Array.from(report.points.x[variable], (v, i) => v + delta[i]);
    report.points.weight = Array.from(fit.wy);
  }
}

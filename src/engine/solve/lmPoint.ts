// State of one Levenberg–Marquardt run shared by the driver (lm.ts) and the polish (polish.ts): the evaluated point
// (weighted residuals, Jacobian, raw f and J) and the run's result. Buffers are reused, never copied per iteration.
import type { Termination } from '../report';
import { Prepared, jacobianIsRaw } from './problem';

export interface RunResult {
  x: Float64Array; // free parameters
  fnorm: number;
  termination: Termination;
  iterations: number;
  gnorm: number;
  message: string;
  /** the evaluation at x (residuals, Jacobian, raw f and J), kept so that nothing is evaluated twice at one point */
  at: Point;
  /** a second set of buffers of the same sizes, for trial points */
  spare: Point;
}

/** weighted residuals r (length m) and Jacobian A (m×q) of the free parameters, raw f (n) and J (n×p) at one point */
export interface Point {
  r: Float64Array;
  A: Float64Array;
  f: Float64Array;
  J: Float64Array;
  /** false when the point was never evaluated successfully (r, A, f, J undefined) */
  ok: boolean;
}

export function newPoint(P: Prepared, m: number): Point {
  const J = new Float64Array(P.n * P.p);
  return { r: new Float64Array(m), A: jacobianIsRaw(P, m) ? J : new Float64Array(m * P.q), f: new Float64Array(P.n), J, ok: false };
}

export function weightedY(P: Prepared): Float64Array {
  const wy = new Float64Array(P.n);
  for (let i = 0; i < P.n; i++) wy[i] = P.sw[i] * P.problem.y[i];
  return wy;
}

/** all parameters θ: the fixed ones from θ₀, the free ones from x */
export function fullTheta(P: Prepared, x: Float64Array): Float64Array {
  const theta = Float64Array.from(P.theta0);
  for (let k = 0; k < P.q; k++) theta[P.free[k]] = x[k];
  return theta;
}

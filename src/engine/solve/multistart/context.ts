// What every stage of the multi-start search shares: the problem and its weighted evaluation (Ctx, evalF), and the
// search state built once in index.ts (Search).
import type { LsqProblem } from '../types';

/** The problem, √w and reusable buffers for f and J, and a count of model evaluations. */
export interface Ctx {
  problem: LsqProblem;
  n: number;
  p: number;
  sw: Float64Array;
  f: Float64Array;
  J: Float64Array;
  evaluations: number;
}

/** f at θ; false when any value is not finite. */
export function evalF(c: Ctx, theta: Float64Array, withJ: boolean): boolean {
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

/** A point of the search and its (projected) SSE. */
export interface Candidate {
  theta: Float64Array;
  sse: number;
}

/** The search state the stages share (index.ts builds it). */
export interface Search {
  c: Ctx;
  lower: Float64Array;
  upper: Float64Array;
  fixed: boolean[];
  /** the given starts (0 where unknown) */
  base: Float64Array;
  /** free parameters without a start: the ones to find */
  unknown: number[];
  /** parameters solved by linear least squares (variable projection) */
  L: number[];
  Lset: Set<number>;
  /** unknown parameters that are sampled (not in L) */
  N: number[];
  work: { cols: Float64Array[]; r: Float64Array };
  rand: () => number;
  stop: () => boolean;
  /** two values of a parameter differ materially (signed log magnitude, or a share of the x span) */
  apart: (a: number, b: number, dex: number) => boolean;
  /** candidates evaluated so far (screening, evolution, hops) */
  screened: number;
  /** local solver runs made so far */
  localRunsDone: number;
}

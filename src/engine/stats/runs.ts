// Wald–Wolfowitz runs test on residual signs by x position: replicates at the same x are one position (the sign of
// their mean residual), and the p-value is exact from the conditional distribution of the number of runs given the
// counts of each sign (Swed & Eisenhart 1943) up to 200 positions, the normal approximation above.
import { logGamma, normalSf } from './distributions';

export interface PositionRuns {
  runs: number;
  expected: number;
  z: number;
  p: number;
  /** signed positions used (distinct x with a non-zero mean residual) */
  positions: number;
  /** rows that shared an x with another row (0 when every x is distinct) */
  replicatedRows: number;
  exact: boolean;
}

/** Largest number of signed positions for the exact distribution (above it the normal approximation is used). */
export const EXACT_RUNS_MAX = 200;

function logChoose(n: number, k: number): number {
  if (k < 0 || k > n) return -Infinity;
  return logGamma(n + 1) - logGamma(k + 1) - logGamma(n - k + 1);
}

/**
 * P(R = r) for n1 signs of one kind and n2 of the other in random order (Swed & Eisenhart 1943):
 * r = 2k: 2·C(n1−1, k−1)·C(n2−1, k−1) / C(N, n1); r = 2k+1: [C(n1−1, k)·C(n2−1, k−1) + C(n1−1, k−1)·C(n2−1, k)] / C(N, n1).
 */
export function runsPmf(r: number, n1: number, n2: number): number {
  const lt = logChoose(n1 + n2, n1);
  if (r % 2 === 0) {
    const k = r / 2;
    return 2 * Math.exp(logChoose(n1 - 1, k - 1) + logChoose(n2 - 1, k - 1) - lt);
  }
  const k = (r - 1) / 2;
  return Math.exp(logChoose(n1 - 1, k) + logChoose(n2 - 1, k - 1) - lt) + Math.exp(logChoose(n1 - 1, k - 1) + logChoose(n2 - 1, k) - lt);
}

/** Two-sided exact p-value of R runs: 2·min(P(R ≤ r), P(R ≥ r)), capped at 1. */
export function runsExactP(r: number, n1: number, n2: number): number {
  const rMax = 2 * Math.min(n1, n2) + (n1 === n2 ? 0 : 1);
  let lower = 0;
  let upper = 0;
  for (let k = 2; k <= rMax; k++) {
    const pk = runsPmf(k, n1, n2);
    if (k <= r) lower += pk;
    if (k >= r) upper += pk;
  }
  return Math.min(1, 2 * Math.min(lower, upper));
}

/**
 * Runs test of residuals r (weighted) in the order `order` (ascending x), with rows whose x (all variables) are equal
 * grouped into one position signed by their mean residual. Null when a sign is missing.
 */
export function runsByPosition(r: ArrayLike<number>, X: Float64Array[], order: Int32Array, tiny = 0): PositionRuns | null {
  const n = order.length;
  const signs: number[] = [];
  let replicatedRows = 0;
  let t = 0;
  while (t < n) {
    let u = t + 1;
    while (u < n && X.every((col) => col[order[u]] === col[order[t]])) u++;
    let sum = 0;
    for (let v = t; v < u; v++) sum += r[order[v]];
    if (u - t > 1) replicatedRows += u - t;
    const mean = sum / (u - t);
    if (Math.abs(mean) > tiny && Number.isFinite(mean)) signs.push(mean > 0 ? 1 : -1);
    t = u;
  }
  let n1 = 0;
  let n2 = 0;
  let runs = 0;
  for (let i = 0; i < signs.length; i++) {
    if (signs[i] > 0) n1++;
    else n2++;
    if (i === 0 || signs[i] !== signs[i - 1]) runs++;
  }
  if (n1 === 0 || n2 === 0) return null;
  const N = n1 + n2;
  const expected = (2 * n1 * n2) / N + 1;
  const variance = (2 * n1 * n2 * (2 * n1 * n2 - n1 - n2)) / (N * N * (N - 1));
  const z = variance > 0 ? (runs - expected) / Math.sqrt(variance) : 0;
  const exact = N <= EXACT_RUNS_MAX;
  const p = exact ? runsExactP(runs, n1, n2) : variance > 0 ? Math.min(1, 2 * normalSf(Math.abs(z))) : 1;
  return { runs, expected, z, p, positions: N, replicatedRows, exact };
}

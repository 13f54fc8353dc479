// Residual tests: Wald–Wolfowitz runs test (normal approximation), Shapiro–Wilk W with Royston's (1995) AS R94
// coefficients and p-value, D'Agostino–Pearson K² omnibus (D'Agostino, Belanger & D'Agostino 1990), Durbin–Watson d.
import { normalQuantile, normalSf, chi2Sf } from './distributions';

export interface RunsResult {
  runs: number;
  expected: number;
  z: number;
  p: number;
  /** number of positive and negative values (zeros are left out) */
  nPos: number;
  nNeg: number;
}

/**
 * Runs test on the signs of `values` in the given order: R runs of n1 positives and n2 negatives (zeros dropped);
 * E[R] = 2n1n2/(n1+n2) + 1, Var[R] = 2n1n2(2n1n2 − n1 − n2)/((n1+n2)²(n1+n2−1)); z = (R − E)/√Var; two-sided p.
 * Returns null when either sign is missing (the test is undefined).
 */
export function runsTest(values: ArrayLike<number>): RunsResult | null {
  let n1 = 0;
  let n2 = 0;
  let runs = 0;
  let last = 0;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (!(v !== 0) || Number.isNaN(v)) continue;
    const s = v > 0 ? 1 : -1;
    if (s > 0) n1++;
    else n2++;
    if (s !== last) runs++;
    last = s;
  }
  if (n1 === 0 || n2 === 0) return null;
  const N = n1 + n2;
  const expected = (2 * n1 * n2) / N + 1;
  const variance = (2 * n1 * n2 * (2 * n1 * n2 - n1 - n2)) / (N * N * (N - 1));
  if (!(variance > 0)) return null;
  const z = (runs - expected) / Math.sqrt(variance);
  const p = Math.min(1, 2 * normalSf(Math.abs(z)));
  return { runs, expected, z, p, nPos: n1, nNeg: n2 };
}

/** Durbin–Watson d = Σ(e_i − e_{i−1})² / Σ e_i², in the given order; null when Σe² = 0 or n < 2. */
export function durbinWatson(e: ArrayLike<number>): number | null {
  const n = e.length;
  if (n < 2) return null;
  let num = 0;
  let den = e[0] * e[0];
  for (let i = 1; i < n; i++) {
    const d = e[i] - e[i - 1];
    num += d * d;
    den += e[i] * e[i];
  }
  return den > 0 ? num / den : null;
}

function poly(c: readonly number[], x: number): number {
  let r = 0;
  for (let i = c.length - 1; i >= 0; i--) r = r * x + c[i];
  return r;
}

const C1 = [0, 0.221157, -0.147981, -2.07119, 4.434685, -2.706056];
const C2 = [0, 0.042981, -0.293762, -1.752461, 5.682633, -3.582633];
const C3 = [0.544, -0.39978, 0.025054, -6.714e-4];
const C4 = [1.3822, -0.77857, 0.062767, -0.0020322];
const C5 = [-1.5861, -0.31082, -0.083751, 0.0038915];
const C6 = [-0.4803, -0.082676, 0.0030302];
const G = [-2.273, 0.459];

/** Shapiro–Wilk coefficients a_1 ≥ … ≥ a_{n/2} > 0 (Royston 1995, AS R94); Σ over the full antisymmetric vector of a² = 1. */
export function shapiroWilkCoefficients(n: number): Float64Array {
  const nn2 = Math.floor(n / 2);
  const a = new Float64Array(nn2);
  if (n === 3) {
    a[0] = Math.SQRT1_2;
    return a;
  }
  const m = new Float64Array(nn2);
  let summ2 = 0;
  for (let i = 0; i < nn2; i++) {
    m[i] = normalQuantile((i + 1 - 0.375) / (n + 0.25)); // negative: lower-tail expected order statistics
    summ2 += m[i] * m[i];
  }
  summ2 *= 2;
  const ssumm2 = Math.sqrt(summ2);
  const rsn = 1 / Math.sqrt(n);
  const a1 = poly(C1, rsn) - m[0] / ssumm2;
  let i1: number;
  let fac: number;
  if (n > 5) {
    i1 = 2;
    const a2 = -m[1] / ssumm2 + poly(C2, rsn);
    fac = Math.sqrt((summ2 - 2 * m[0] * m[0] - 2 * m[1] * m[1]) / (1 - 2 * a1 * a1 - 2 * a2 * a2));
    a[1] = a2;
  } else {
    i1 = 1;
    fac = Math.sqrt((summ2 - 2 * m[0] * m[0]) / (1 - 2 * a1 * a1));
  }
  a[0] = a1;
  for (let i = i1; i < nn2; i++) a[i] = -m[i] / fac;
  return a;
}

export interface NormalityResult {
  test: 'shapiro-wilk' | 'dagostino-pearson';
  statistic: number;
  p: number;
}

/** Shapiro–Wilk W and its p-value (Royston 1995, AS R94), 3 ≤ n ≤ 5000; null when n is outside or the values are all equal. */
export function shapiroWilk(values: ArrayLike<number>): NormalityResult | null {
  const n = values.length;
  if (n < 3 || n > 5000) return null;
  const x = Float64Array.from(values).sort();
  const range = x[n - 1] - x[0];
  if (!(range > 1e-19 * Math.max(1, Math.abs(x[0])))) return null;
  const a = shapiroWilkCoefficients(n);
  let mean = 0;
  for (let i = 0; i < n; i++) mean += x[i];
  mean /= n;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += ((x[i] - mean) / range) ** 2;
  let b = 0;
  for (let i = 0; i < a.length; i++) b += (a[i] * (x[n - 1 - i] - x[i])) / range;
  let w = (b * b) / ss;
  if (w > 1) w = 1;
  const w1 = 1 - w;
  if (n === 3) {
    const pi6 = 6 / Math.PI;
    const stqr = Math.PI / 3;
    const p = Math.max(0, Math.min(1, pi6 * (Math.asin(Math.sqrt(w)) - stqr)));
    return { test: 'shapiro-wilk', statistic: w, p };
  }
  if (w1 <= 0) return { test: 'shapiro-wilk', statistic: w, p: 1 };
  let y = Math.log(w1);
  const xx = Math.log(n);
  let mu: number;
  let s: number;
  if (n <= 11) {
    const gamma = poly(G, n);
    if (y >= gamma) return { test: 'shapiro-wilk', statistic: w, p: 1e-99 };
    y = -Math.log(gamma - y);
    mu = poly(C3, n);
    s = Math.exp(poly(C4, n));
  } else {
    mu = poly(C5, xx);
    s = Math.exp(poly(C6, xx));
  }
  return { test: 'shapiro-wilk', statistic: w, p: normalSf((y - mu) / s) };
}

/**
 * D'Agostino–Pearson K² = Z(√b1)² + Z(b2)² with the transformations of D'Agostino, Belanger & D'Agostino (1990);
 * p from χ² with 2 df. Needs n ≥ 8 (the skewness transform needs n ≥ 8 to be defined); null otherwise.
 */
export function dagostinoPearson(values: ArrayLike<number>): NormalityResult | null {
  const n = values.length;
  if (n < 8) return null;
  let mean = 0;
  for (let i = 0; i < n; i++) mean += values[i];
  mean /= n;
  let m2 = 0;
  let m3 = 0;
  let m4 = 0;
  for (let i = 0; i < n; i++) {
    const d = values[i] - mean;
    const d2 = d * d;
    m2 += d2;
    m3 += d2 * d;
    m4 += d2 * d2;
  }
  m2 /= n;
  m3 /= n;
  m4 /= n;
  if (!(m2 > 0)) return null;
  const sqrtB1 = m3 / Math.pow(m2, 1.5);
  const b2 = m4 / (m2 * m2);
  const z1 = skewnessZ(sqrtB1, n);
  const z2 = kurtosisZ(b2, n);
  const k2 = z1 * z1 + z2 * z2;
  return { test: 'dagostino-pearson', statistic: k2, p: chi2Sf(k2, 2) };
}

/** Z(√b1) of D'Agostino (1970). */
export function skewnessZ(sqrtB1: number, n: number): number {
  const Y = sqrtB1 * Math.sqrt(((n + 1) * (n + 3)) / (6 * (n - 2)));
  const beta2 = (3 * (n * n + 27 * n - 70) * (n + 1) * (n + 3)) / ((n - 2) * (n + 5) * (n + 7) * (n + 9));
  const W2 = -1 + Math.sqrt(2 * (beta2 - 1));
  const delta = 1 / Math.sqrt(0.5 * Math.log(W2));
  const alpha = Math.sqrt(2 / (W2 - 1));
  const ya = Y / alpha;
  return delta * Math.log(ya + Math.sqrt(ya * ya + 1));
}

/** Z(b2) of Anscombe & Glynn (1983). */
export function kurtosisZ(b2: number, n: number): number {
  const E = (3 * (n - 1)) / (n + 1);
  const varB2 = (24 * n * (n - 2) * (n - 3)) / ((n + 1) * (n + 1) * (n + 3) * (n + 5));
  const x = (b2 - E) / Math.sqrt(varB2);
  const sqrtBeta1 = ((6 * (n * n - 5 * n + 2)) / ((n + 7) * (n + 9))) * Math.sqrt((6 * (n + 3) * (n + 5)) / (n * (n - 2) * (n - 3)));
  const A = 6 + (8 / sqrtBeta1) * (2 / sqrtBeta1 + Math.sqrt(1 + 4 / (sqrtBeta1 * sqrtBeta1)));
  const term = (1 - 2 / A) / (1 + x * Math.sqrt(2 / (A - 4)));
  const z = (1 - 2 / (9 * A) - Math.cbrt(term)) / Math.sqrt(2 / (9 * A));
  return z;
}

/** Normality of residuals: Shapiro–Wilk up to n = 5000, D'Agostino–Pearson K² above. */
export function normalityTest(values: ArrayLike<number>): NormalityResult | null {
  return values.length <= 5000 ? shapiroWilk(values) : dagostinoPearson(values);
}

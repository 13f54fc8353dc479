// Parameter covariance s²(JᵀWJ)⁻¹ and hat values from the SVD of the column-scaled, pivoted-QR R factor of the weighted Jacobian (Golub & Van Loan, Matrix Computations, 4th ed., §5.3, §5.5); no explicit inverse of JᵀJ is formed.
import { analyzeRank } from '../solve/linalg';

function weightedFree(J: Float64Array, n: number, p: number, w: Float64Array | null, cols: number[]): Float64Array {
  const q = cols.length;
  const A = new Float64Array(n * q);
  for (let k = 0; k < q; k++) {
    const c = cols[k] * n;
    for (let i = 0; i < n; i++) A[k * n + i] = (w ? Math.sqrt(w[i]) : 1) * J[c + i];
  }
  void p;
  return A;
}

/**
 * Covariance of the estimates, cov = s² (AᵀA)⁻¹ with A = √W J restricted to the free parameters, computed as
 * D⁻¹ P V Σ⁻² Vᵀ Pᵀ D⁻¹ from A D⁻¹ P = Q R and R = U Σ Vᵀ. Rows and columns of fixed or unidentifiable parameters
 * are NaN; the others are the covariance with the unidentifiable ones left out (held at their values).
 * J is n×p column-major (all parameters); the result is p×p row-major.
 */
export function covarianceFromJacobian(
  J: Float64Array, n: number, p: number, w: Float64Array | null, free: ArrayLike<boolean>, s2: number,
): { cov: Float64Array; rank: number; unidentifiable: number[] } {
  const cov = new Float64Array(p * p).fill(NaN);
  const cols: number[] = [];
  for (let j = 0; j < p; j++) if (free[j]) cols.push(j);
  if (cols.length === 0) return { cov, rank: 0, unidentifiable: [] };
  const ra = analyzeRank(weightedFree(J, n, p, w, cols), n, cols.length);
  const unidentifiable = ra.nullColumns.map((k) => cols[k]);
  const rank = ra.rank;
  // the identifiable subset, refactored so its covariance is the inverse of its own information matrix
  const keep = cols.filter((j) => !unidentifiable.includes(j));
  if (keep.length === 0) return { cov, rank, unidentifiable };
  const rb = keep.length === cols.length ? ra : analyzeRank(weightedFree(J, n, p, w, keep), n, keep.length);
  const q = keep.length;
  const { s, v } = rb.svd;
  const kept = Math.min(rb.rank, q);
  for (let a = 0; a < q; a++) {
    for (let b = a; b < q; b++) {
      // element (perm⁻¹) of V Σ⁻² Vᵀ
      let sum = 0;
      for (let k = 0; k < kept; k++) sum += (v[k * q + a] * v[k * q + b]) / (s[k] * s[k]);
      const ja = keep[rb.qr.perm[a]];
      const jb = keep[rb.qr.perm[b]];
      const val = (s2 * sum) / (rb.d[rb.qr.perm[a]] * rb.d[rb.qr.perm[b]]);
      cov[ja * p + jb] = val;
      cov[jb * p + ja] = val;
    }
  }
  return { cov, rank, unidentifiable };
}

/**
 * Hat values h_ii of the weighted Jacobian of the free parameters: h_ii = ‖row i of U_A‖² over the kept singular
 * directions, with U_A = A D⁻¹ P V Σ⁻¹.
 */
export function leverage(J: Float64Array, n: number, p: number, w: Float64Array | null, free: ArrayLike<boolean>): Float64Array {
  const h = new Float64Array(n);
  const cols: number[] = [];
  for (let j = 0; j < p; j++) if (free[j]) cols.push(j);
  const q = cols.length;
  if (q === 0) return h;
  const A = weightedFree(J, n, p, w, cols);
  const ra = analyzeRank(A, n, q);
  const { s, v } = ra.svd;
  const row = new Float64Array(q);
  for (let i = 0; i < n; i++) {
    for (let t = 0; t < q; t++) row[t] = A[ra.qr.perm[t] * n + i] / ra.d[ra.qr.perm[t]];
    let hi = 0;
    for (let k = 0; k < ra.rank; k++) {
      let u = 0;
      for (let t = 0; t < q; t++) u += row[t] * v[k * q + t];
      u /= s[k];
      hi += u * u;
    }
    h[i] = hi;
  }
  return h;
}

// Parameter covariance s²(JᵀWJ)⁻¹ and hat values from the SVD of the column-scaled, pivoted-QR R factor of the weighted Jacobian (Golub & Van Loan, Matrix Computations, 4th ed., §5.3, §5.5), each covariance column refined on the augmented system (Björck 1967); JᵀJ is never formed.
import { analyzeRank, refineAugmented, residualDD } from '../solve/linalg';
import { blockCovariance, type BlockStructure } from '../solve/block';

/** block factors of one Jacobian, shared by covarianceFromJacobian and leverage */
const blockMemo = new WeakMap<Float64Array, ReturnType<typeof blockCovariance>>();
function blockFactors(bs: BlockStructure, J: Float64Array, n: number, p: number, w: Float64Array | null, free: ArrayLike<boolean>): ReturnType<typeof blockCovariance> {
  if (!blockMemo.has(J)) blockMemo.set(J, blockCovariance(bs, J, n, p, w, free));
  return blockMemo.get(J)!;
}

/** refinement steps of each covariance column (double-double residuals) */
const COV_REFINEMENT_STEPS = 2;

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
  J: Float64Array, n: number, p: number, w: Float64Array | null, free: ArrayLike<boolean>, s2: number, blocks?: BlockStructure,
): { cov: Float64Array; rank: number; unidentifiable: number[] } {
  // a joint fit of full rank: block by block (solve/block.ts); otherwise, and when rank-deficient, densely
  const bc = blocks ? blockFactors(blocks, J, n, p, w, free) : null;
  if (bc) {
    const cov = Float64Array.from(bc.cov, v => v * s2);
    let rank = 0;
    for (let j = 0; j < p; j++) if (free[j]) rank++;
    return { cov, rank, unidentifiable: [] };
  }
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
  // C = (AᵀA)⁻¹ of the kept columns, first from the SVD: element (a, b) in pivoted order is Σ_k v_ak v_bk / s_k²
  const C = new Float64Array(q * q); // column-major, original (keep) order
  for (let a = 0; a < q; a++) {
    for (let b = a; b < q; b++) {
      let sum = 0;
      for (let k = 0; k < kept; k++) sum += (v[k * q + a] * v[k * q + b]) / (s[k] * s[k]);
      const ia = rb.qr.perm[a];
      const ib = rb.qr.perm[b];
      const val = sum / (rb.d[ia] * rb.d[ib]);
      C[ib * q + ia] = val;
      C[ia * q + ib] = val;
    }
  }
  if (kept === q && n >= q) {
    // refine each column c_j on the augmented system [I A; Aᵀ 0][r; c] = [0; −e_j] (so AᵀA c = e_j), Björck 1967
    const A = weightedFree(J, n, p, w, keep);
    const e = new Float64Array(q);
    const r = new Float64Array(n);
    for (let j = 0; j < q; j++) {
      const x = C.subarray(j * q, j * q + q);
      residualDD(A, n, q, x, null, null, r);
      e.fill(0);
      e[j] = -1;
      refineAugmented(A, n, q, rb, null, e, x, r, COV_REFINEMENT_STEPS);
    }
    // symmetrise
    for (let a = 0; a < q; a++) {
      for (let b = a + 1; b < q; b++) {
        const m = 0.5 * (C[b * q + a] + C[a * q + b]);
        C[b * q + a] = m;
        C[a * q + b] = m;
      }
    }
  }
  for (let a = 0; a < q; a++) for (let b = 0; b < q; b++) cov[keep[a] * p + keep[b]] = s2 * C[b * q + a];
  return { cov, rank, unidentifiable };
}

/**
 * Hat values h_ii of the weighted Jacobian of the free parameters: h_ii = ‖row i of U_A‖² over the kept singular
 * directions, with U_A = A D⁻¹ P V Σ⁻¹.
 */
export function leverage(J: Float64Array, n: number, p: number, w: Float64Array | null, free: ArrayLike<boolean>, blocks?: BlockStructure): Float64Array {
  const bc = blocks ? blockFactors(blocks, J, n, p, w, free) : null;
  if (bc) return Float64Array.from(bc.h);
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

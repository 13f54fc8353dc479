// Householder QR with column pivoting after MINPACK qrfac (Moré, Garbow & Hillstrom 1980) and Golub & Van Loan, Matrix Computations, 4th ed., §5.2 and §5.4.2; modified Gram–Schmidt with one re-orthogonalisation pass after Björck, Numerical Methods for Least Squares Problems (1996), §2.4; one-sided Jacobi SVD after Hestenes (1958) / Demmel & Veselić (1992); compensated dot products after Ogita, Rump & Oishi (2005).
//
// Layout: every matrix is a column-major Float64Array, A[j*m + i] = A(i, j) for an m×n matrix.

export const EPS = 2.220446049250313e-16;
const TINY = 2.2250738585072014e-308;
const GIANT = 1.3407807929942596e154; // sqrt of the largest double

/** Euclidean norm of x[off .. off+len) with stride 1, without overflow or destructive underflow. */
export function norm2(x: ArrayLike<number>, off = 0, len = x.length - off): number {
  let s = 0;
  for (let i = off; i < off + len; i++) s += x[i] * x[i];
  if (s > TINY / EPS && s < GIANT && Number.isFinite(s)) return Math.sqrt(s);
  // rescale: pass 1 finds the largest magnitude, pass 2 sums scaled squares
  let big = 0;
  for (let i = off; i < off + len; i++) {
    const a = Math.abs(x[i]);
    if (!(a <= big)) big = a; // NaN propagates
  }
  if (big === 0 || !Number.isFinite(big)) return big;
  s = 0;
  for (let i = off; i < off + len; i++) {
    const t = x[i] / big;
    s += t * t;
  }
  return big * Math.sqrt(s);
}

/** Σ_i a[off + i] · v[i], i < len (a small function so the engine optimises it on its own) */
export function dotAt(a: Float64Array, off: number, v: Float64Array, len: number): number {
  let s = 0;
  for (let i = 0; i < len; i++) s += a[off + i] * v[i];
  return s;
}

/** Σ_i (u_i − v_i)(u_i + v_i) = ‖u‖² − ‖v‖² without the cancellation of the difference of squares */
export function diffOfSquares(u: Float64Array, v: Float64Array, len: number): number {
  let s = 0;
  for (let i = 0; i < len; i++) s += (u[i] - v[i]) * (u[i] + v[i]);
  return s;
}

/** true when every entry is a finite number */
export function allFinite(x: ArrayLike<number>, len = x.length): boolean {
  for (let i = 0; i < len; i++) if (!Number.isFinite(x[i])) return false;
  return true;
}

export interface QRFactors {
  /** m×n, column-major: strict upper triangle of R above the diagonal, Householder vectors on and below it */
  a: Float64Array;
  m: number;
  n: number;
  /** diagonal of R */
  rdiag: Float64Array;
  /** 2-norms of the columns of the input matrix (in input column order) */
  acnorm: Float64Array;
  /** column k of the factored matrix is input column perm[k] */
  perm: Int32Array;
}

/**
 * Householder QR, A P = Q R, in place on `a` (m×n, column-major, m ≥ 1). With `pivot`, column k is the remaining
 * column of largest norm (Businger & Golub 1965), which makes R rank-revealing in practice.
 */
export function qrFactor(a: Float64Array, m: number, n: number, pivot: boolean): QRFactors {
  const rdiag = new Float64Array(n);
  const acnorm = new Float64Array(n);
  const wa = new Float64Array(n);
  const perm = new Int32Array(n);
  for (let j = 0; j < n; j++) {
    acnorm[j] = norm2(a, j * m, m);
    rdiag[j] = acnorm[j];
    wa[j] = rdiag[j];
    perm[j] = j;
  }
  const kmin = Math.min(m, n);
  for (let j = 0; j < kmin; j++) {
    if (pivot) {
      let kmax = j;
      for (let k = j; k < n; k++) if (rdiag[k] > rdiag[kmax]) kmax = k;
      if (kmax !== j) {
        for (let i = 0; i < m; i++) {
          const t = a[j * m + i];
          a[j * m + i] = a[kmax * m + i];
          a[kmax * m + i] = t;
        }
        rdiag[kmax] = rdiag[j];
        wa[kmax] = wa[j];
        const k = perm[j];
        perm[j] = perm[kmax];
        perm[kmax] = k;
      }
    }
    // Householder reflection that zeroes column j below the diagonal
    const cj = j * m;
    let ajnorm = norm2(a, cj + j, m - j);
    if (ajnorm !== 0) {
      if (a[cj + j] < 0) ajnorm = -ajnorm;
      for (let i = j; i < m; i++) a[cj + i] /= ajnorm;
      a[cj + j] += 1;
      const vjj = a[cj + j];
      for (let k = j + 1; k < n; k++) {
        const ck = k * m;
        let sum = 0;
        for (let i = j; i < m; i++) sum += a[cj + i] * a[ck + i];
        const temp = sum / vjj;
        for (let i = j; i < m; i++) a[ck + i] -= temp * a[cj + i];
        if (pivot && rdiag[k] !== 0) {
          const t = a[ck + j] / rdiag[k];
          rdiag[k] *= Math.sqrt(Math.max(0, 1 - t * t));
          const r = rdiag[k] / wa[k];
          if (0.05 * r * r <= EPS) {
            rdiag[k] = norm2(a, ck + j + 1, m - j - 1);
            wa[k] = rdiag[k];
          }
        }
      }
    }
    rdiag[j] = -ajnorm;
  }
  for (let j = kmin; j < n; j++) rdiag[j] = 0;
  return { a, m, n, rdiag, acnorm, perm };
}

/** b ← H_j b for the j-th Householder reflector stored in column j of a (rows j..m−1); each H_j is symmetric. */
function applyReflector(a: Float64Array, m: number, j: number, b: Float64Array): void {
  const cj = j * m;
  const vjj = a[cj + j];
  if (vjj === 0) return;
  let sum = 0;
  for (let i = j; i < m; i++) sum += a[cj + i] * b[i];
  const temp = -sum / vjj;
  for (let i = j; i < m; i++) b[i] += temp * a[cj + i];
}

/** b ← Qᵀ b (b of length m): Qᵀ = H_{k−1}⋯H_0, applied first to last */
export function applyQt(qr: QRFactors, b: Float64Array): void {
  const kmin = Math.min(qr.m, qr.n);
  for (let j = 0; j < kmin; j++) applyReflector(qr.a, qr.m, j, b);
}

/** b ← Q b (b of length m): Q = H_0⋯H_{k−1}, applied last to first */
export function applyQ(qr: QRFactors, b: Float64Array): void {
  for (let j = Math.min(qr.m, qr.n) - 1; j >= 0; j--) applyReflector(qr.a, qr.m, j, b);
}

/** The n×n upper-triangular R of a factorisation (column-major, zeros below the diagonal; rows ≥ m are zero). */
export function extractR(qr: QRFactors): Float64Array {
  const { a, m, n, rdiag } = qr;
  const r = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < Math.min(j, m); i++) r[j * n + i] = a[j * m + i];
    r[j * n + j] = rdiag[j];
  }
  return r;
}

/** Solve R x = b in place for upper-triangular R (k×k leading block of an ldr×? column-major array). */
export function solveUpper(r: Float64Array, ldr: number, k: number, b: Float64Array): void {
  for (let j = k - 1; j >= 0; j--) {
    b[j] /= r[j * ldr + j];
    const t = b[j];
    for (let i = 0; i < j; i++) b[i] -= r[j * ldr + i] * t;
  }
}

/** Solve Rᵀ x = b in place for upper-triangular R (k×k leading block). */
export function solveUpperT(r: Float64Array, ldr: number, k: number, b: Float64Array): void {
  for (let j = 0; j < k; j++) {
    let s = b[j];
    for (let i = 0; i < j; i++) s -= r[j * ldr + i] * b[i];
    b[j] = s / r[j * ldr + j];
  }
}

// ---------------------------------------------------------------- modified Gram–Schmidt

/** How mgsQr treats a column that is (numerically) dependent on the columns before it. */
export interface MgsOptions {
  /** a column is dependent when ‖q‖ after orthogonalisation is not > relTol · ‖q‖ before */
  relTol: number;
  /** true: leave a dependent column out of the basis and go on; false (default): stop and return null */
  skipDependent?: boolean;
  /** k×k, row-major, zero on entry: receives R (R[j·k + a] = r_ja; the columns kept, in order) */
  R?: Float64Array;
  /** length k: receives ‖q_a‖ before orthogonalisation */
  norm0?: Float64Array;
}

/**
 * Thin QR of the k = cols.length columns (each of length n) by modified Gram–Schmidt with one re-orthogonalisation
 * pass ("twice is enough", Björck 1996, §2.4), in place: each column kept becomes a unit vector of Q. Columns that
 * are zero or not finite count as dependent. Returns the indices of the columns kept (in order), or null when a
 * column is dependent and `skipDependent` is not set.
 */
export function mgsQr(cols: Float64Array[], n: number, opts: MgsOptions): number[] | null {
  const { relTol, R, norm0: norm0Out } = opts;
  const k = cols.length;
  const kept: number[] = [];
  for (let a = 0; a < k; a++) {
    const q = cols[a];
    let norm0 = 0;
    for (let i = 0; i < n; i++) norm0 += q[i] * q[i];
    norm0 = Math.sqrt(norm0);
    if (norm0Out) norm0Out[a] = norm0;
    if (!(norm0 > 0) || !Number.isFinite(norm0)) {
      if (opts.skipDependent) continue;
      return null;
    }
    for (let pass = 0; pass < 2; pass++) {
      for (const b of kept) {
        const qb = cols[b];
        let d = 0;
        for (let i = 0; i < n; i++) d += qb[i] * q[i];
        if (R) R[b * k + a] += d;
        for (let i = 0; i < n; i++) q[i] -= d * qb[i];
      }
    }
    let norm = 0;
    for (let i = 0; i < n; i++) norm += q[i] * q[i];
    norm = Math.sqrt(norm);
    if (!(norm > relTol * norm0) || !(norm > 0)) {
      if (opts.skipDependent) continue;
      return null;
    }
    for (let i = 0; i < n; i++) q[i] /= norm;
    if (R) R[a * k + a] = norm;
    kept.push(a);
  }
  return kept;
}

/**
 * r ← r − Σ_a q_a (q_aᵀ r) over the given orthonormal columns, one column at a time (the modified Gram–Schmidt
 * order), `passes` times. qty (when given, length basis.length) receives Qᵀr, summed over the passes.
 */
export function mgsProject(basis: Float64Array[], n: number, r: Float64Array, passes = 1, qty?: Float64Array): void {
  for (let pass = 0; pass < passes; pass++) {
    for (let a = 0; a < basis.length; a++) {
      const q = basis[a];
      let d = 0;
      for (let i = 0; i < n; i++) d += q[i] * r[i];
      if (qty) qty[a] = pass === 0 ? d : qty[a] + d;
      for (let i = 0; i < n; i++) r[i] -= d * q[i];
    }
  }
}

export interface SVD {
  /** m×n column-major left singular vectors (columns of zero singular values are zero) */
  u: Float64Array;
  /** n singular values, descending */
  s: Float64Array;
  /** n×n column-major right singular vectors */
  v: Float64Array;
}

/**
 * One-sided Jacobi SVD of an m×n matrix (m ≥ n): orthogonalises the columns of A by plane rotations applied on the
 * right, A V = U Σ. Accurate to high relative precision for small n; meant for n up to a few dozen.
 */
export function jacobiSVD(aIn: Float64Array, m: number, n: number): SVD {
  const u = Float64Array.from(aIn.subarray(0, m * n));
  const v = new Float64Array(n * n);
  for (let j = 0; j < n; j++) v[j * n + j] = 1;
  const tol = EPS * m;
  for (let sweep = 0; sweep < 80; sweep++) {
    let rotated = false;
    for (let j = 0; j < n - 1; j++) {
      for (let k = j + 1; k < n; k++) {
        const cj = j * m;
        const ck = k * m;
        let alpha = 0;
        let beta = 0;
        let gamma = 0;
        for (let i = 0; i < m; i++) {
          const x = u[cj + i];
          const y = u[ck + i];
          alpha += x * x;
          beta += y * y;
          gamma += x * y;
        }
        if (gamma === 0 || Math.abs(gamma) <= tol * Math.sqrt(alpha * beta)) continue;
        rotated = true;
        const zeta = (beta - alpha) / (2 * gamma);
        const t = (zeta >= 0 ? 1 : -1) / (Math.abs(zeta) + Math.sqrt(1 + zeta * zeta));
        const c = 1 / Math.sqrt(1 + t * t);
        const s = c * t;
        for (let i = 0; i < m; i++) {
          const x = u[cj + i];
          const y = u[ck + i];
          u[cj + i] = c * x - s * y;
          u[ck + i] = s * x + c * y;
        }
        for (let i = 0; i < n; i++) {
          const x = v[j * n + i];
          const y = v[k * n + i];
          v[j * n + i] = c * x - s * y;
          v[k * n + i] = s * x + c * y;
        }
      }
    }
    if (!rotated) break;
  }
  const s = new Float64Array(n);
  for (let j = 0; j < n; j++) s[j] = norm2(u, j * m, m);
  // sort descending
  const order = Array.from({ length: n }, (_, j) => j).sort((a, b) => s[b] - s[a]);
  const u2 = new Float64Array(m * n);
  const v2 = new Float64Array(n * n);
  const s2 = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const j = order[k];
    s2[k] = s[j];
    for (let i = 0; i < m; i++) u2[k * m + i] = s[j] > 0 ? u[j * m + i] / s[j] : 0;
    for (let i = 0; i < n; i++) v2[k * n + i] = v[j * n + i];
  }
  return { u: u2, s: s2, v: v2 };
}

/** Default numerical-rank tolerance relative to the largest singular value: max(m, n)·ε (common practice, as LAPACK's xGELSS guidance). */
export function rankTolerance(m: number, n: number): number {
  return Math.max(m, n) * EPS;
}

// ---------------------------------------------------------------- compensated arithmetic

/** error-free transformation a + b = s + e (Knuth TwoSum) */
export function twoSum(a: number, b: number, out: Float64Array): void {
  const s = a + b;
  const bb = s - a;
  out[0] = s;
  out[1] = a - (s - bb) + (b - bb);
}

const SPLIT = 134217729; // 2^27 + 1
/** error-free transformation a·b = p + e (Dekker TwoProduct via Veltkamp splitting) */
export function twoProduct(a: number, b: number, out: Float64Array): void {
  const p = a * b;
  let t = SPLIT * a;
  const ah = t - (t - a);
  const al = a - ah;
  t = SPLIT * b;
  const bh = t - (t - b);
  const bl = b - bh;
  out[0] = p;
  out[1] = al * bl - (p - ah * bh - al * bh - ah * bl);
}

/**
 * A double-double accumulator (Ogita, Rump & Oishi 2005, Sum2/Dot2): add(x) and addProduct(a, b) keep the
 * rounding errors, value() returns the sum as if accumulated in twice the working precision.
 */
export class CompensatedSum {
  private hi = 0;
  private lo = 0;
  private readonly t = new Float64Array(2);
  reset(x = 0): this {
    this.hi = x;
    this.lo = 0;
    return this;
  }
  add(x: number): void {
    twoSum(this.hi, x, this.t);
    this.hi = this.t[0];
    this.lo += this.t[1];
  }
  addProduct(a: number, b: number): void {
    twoProduct(a, b, this.t);
    const e = this.t[1];
    twoSum(this.hi, this.t[0], this.t);
    this.hi = this.t[0];
    this.lo += this.t[1] + e;
  }
  value(): number {
    return this.hi + this.lo;
  }
}

// ---------------------------------------------------------------- rank analysis of a Jacobian

export interface RankAnalysis {
  /** numerical rank */
  rank: number;
  /** indices (into the columns given) that lie in the numerical null space */
  nullColumns: number[];
  /** column scale factors used (powers of two near the 2-norms; 1 where a column is zero) */
  d: Float64Array;
  /** SVD of R D⁻¹P (q×q) where A D⁻¹ P = Q R */
  svd: SVD;
  /** the QR factors of A D⁻¹ (pivoted) */
  qr: QRFactors;
  /** singular values kept: s_k > tol·s_max */
  tol: number;
}

/**
 * Numerical rank of an m×q matrix A (column-major; copied): columns scaled to unit 2-norm, pivoted Householder
 * QR, then one-sided Jacobi SVD of the q×q R. A column is reported in the null space when its share of the
 * right singular vectors of the dropped singular values exceeds 1e-4 (|component| > 0.01), common practice.
 */
export function analyzeRank(aIn: Float64Array, m: number, q: number, relTol = rankTolerance(m, q)): RankAnalysis {
  const mm = Math.max(m, q);
  if (mm !== m) {
    // fewer rows than columns: pad with zero rows
    const padded = new Float64Array(mm * q);
    for (let j = 0; j < q; j++) padded.set(aIn.subarray(j * m, j * m + m), j * mm);
    return analyzeRank(padded, mm, q, relTol);
  }
  const a = new Float64Array(mm * q);
  const d = new Float64Array(q);
  for (let j = 0; j < q; j++) {
    const nj = norm2(aIn, j * m, m);
    // a power of two near the column norm, so that scaling is exact (common practice)
    d[j] = nj > 0 && Number.isFinite(nj) ? 2 ** Math.round(Math.log2(nj)) : 1;
    for (let i = 0; i < m; i++) a[j * mm + i] = aIn[j * m + i] / d[j];
  }
  const qr = qrFactor(a, mm, q, true);
  const r = extractR(qr);
  const svd = jacobiSVD(r, q, q);
  const smax = svd.s[0] ?? 0;
  let rank = 0;
  for (let k = 0; k < q; k++) if (svd.s[k] > relTol * smax && svd.s[k] > 0) rank++;
  const share = new Float64Array(q);
  for (let k = rank; k < q; k++) {
    for (let i = 0; i < q; i++) {
      const vik = svd.v[k * q + i];
      share[qr.perm[i]] += vik * vik;
    }
  }
  const nullColumns: number[] = [];
  for (let j = 0; j < q; j++) if (share[j] > 1e-4) nullColumns.push(j);
  return { rank, nullColumns, d, svd, qr, tol: relTol };
}

/**
 * out = b − r − A x (A m×q column-major; b or r null = 0), accumulated in double-double column by column
 * (TwoSum/TwoProduct inlined; Ogita, Rump & Oishi 2005) and rounded once.
 */
export function residualDD(
  A: Float64Array, m: number, q: number, x: ArrayLike<number>, b: ArrayLike<number> | null, r: ArrayLike<number> | null,
  out: Float64Array, lo: Float64Array = new Float64Array(m),
): void {
  for (let i = 0; i < m; i++) {
    let hi = b ? b[i] : 0;
    let l = 0;
    if (r) {
      const v = -r[i];
      const s = hi + v;
      const bb = s - hi;
      l += hi - (s - bb) + (v - bb);
      hi = s;
    }
    out[i] = hi;
    lo[i] = l;
  }
  for (let k = 0; k < q; k++) {
    const xb = -x[k];
    if (xb === 0) continue;
    let t = SPLIT * xb;
    const bh = t - (t - xb);
    const bl = xb - bh;
    const ck = k * m;
    for (let i = 0; i < m; i++) {
      const a = A[ck + i];
      const p = a * xb;
      t = SPLIT * a;
      const ah = t - (t - a);
      const al = a - ah;
      const e = al * bl - (p - ah * bh - al * bh - ah * bl);
      const h = out[i];
      const s = h + p;
      const bb = s - h;
      out[i] = s;
      lo[i] += h - (s - bb) + (p - bb) + e;
    }
  }
  for (let i = 0; i < m; i++) out[i] += lo[i];
}

/** c − Σ_i a_i r_i for one column a = A[off .. off+m), in double-double, rounded once */
export function dotResidualDD(A: Float64Array, off: number, m: number, r: ArrayLike<number>, c: number): number {
  let hi = c;
  let lo = 0;
  for (let i = 0; i < m; i++) {
    const a = -A[off + i];
    const v = r[i];
    const p = a * v;
    let t = SPLIT * a;
    const ah = t - (t - a);
    const al = a - ah;
    t = SPLIT * v;
    const vh = t - (t - v);
    const vl = v - vh;
    const e = al * vl - (p - ah * vh - al * vh - ah * vl);
    const s = hi + p;
    const bb = s - hi;
    lo += hi - (s - bb) + (p - bb) + e;
    hi = s;
  }
  return hi + lo;
}

/**
 * Iterative refinement of a full-rank least-squares problem on the augmented system [I A; Aᵀ 0][r; x] = [b; c]
 * (Björck 1967, "Iterative refinement of linear least squares solutions I"), with both residuals accumulated in
 * double-double so the result is accurate to about cond(A)·ε even for large residuals. A is m×q (column-major,
 * leading dimension m), `ra` its rank analysis (rank must be q); b = null means 0, c = null means 0. x (length q)
 * and r (length m) are updated in place; pass r = b − A x of the starting x (or refine from r = 0 with steps ≥ 2).
 */
export function refineAugmented(
  A: Float64Array, m: number, q: number, ra: RankAnalysis, b: Float64Array | null, c: Float64Array | null,
  x: Float64Array, r: Float64Array, steps: number,
): void {
  const f = new Float64Array(m);
  const lo = new Float64Array(m);
  const gs = new Float64Array(q);
  const { qr, d } = ra;
  const { perm, rdiag } = qr;
  const a = qr.a;
  for (let it = 0; it < steps; it++) {
    // f = b − r − A x,  g = c − Aᵀ r  (double-double accumulation, rounded once)
    residualDD(A, m, q, x, b, r, f, lo);
    for (let t = 0; t < q; t++) {
      const k = perm[t];
      gs[t] = dotResidualDD(A, k * m, m, r, c ? c[k] : 0) / d[k]; // exact: d is a power of two
    }
    // h = R⁻ᵀ g_s
    for (let j = 0; j < q; j++) {
      let sum = gs[j];
      for (let i = 0; i < j; i++) sum -= a[j * m + i] * gs[i];
      gs[j] = sum / rdiag[j];
    }
    // Qᵀ f = [d1; d2]; δx_s = R⁻¹ (d1 − h); δr = Q [h; d2]
    applyQt(qr, f);
    const dx = new Float64Array(q);
    for (let j = 0; j < q; j++) dx[j] = f[j] - gs[j];
    for (let j = q - 1; j >= 0; j--) {
      let sum = dx[j];
      for (let i = j + 1; i < q; i++) sum -= a[i * m + j] * dx[i];
      dx[j] = sum / rdiag[j];
    }
    for (let j = 0; j < q; j++) f[j] = gs[j];
    applyQ(qr, f);
    for (let i = 0; i < m; i++) r[i] += f[i];
    for (let t = 0; t < q; t++) x[perm[t]] += dx[t] / d[perm[t]];
  }
}

/** Means and centred sums of squares and products of the first n values of a and b, by two passes (mean first, then
 *  the centred sums; the textbook remedy for the cancellation of the one-pass formula, common practice). */
export function centredMoments(a: ArrayLike<number>, b: ArrayLike<number>, n: number): { ma: number; mb: number; saa: number; sbb: number; sab: number } {
  let ma = 0;
  let mb = 0;
  for (let i = 0; i < n; i++) {
    ma += a[i];
    mb += b[i];
  }
  ma /= n;
  mb /= n;
  let saa = 0;
  let sbb = 0;
  let sab = 0;
  for (let i = 0; i < n; i++) {
    const da = a[i] - ma;
    const db = b[i] - mb;
    saa += da * da;
    sbb += db * db;
    sab += da * db;
  }
  return { ma, mb, saa, sbb, sab };
}

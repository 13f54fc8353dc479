// Kernels of the solvers: Householder QR, Jacobi SVD, compensated sums, rank analysis, augmented refinement; and the covariance/leverage built on them.
import * as assert from 'assert';
import { analyzeRank, applyQ, applyQt, CompensatedSum, extractR, jacobiSVD, mgsProject, mgsQr, norm2, qrFactor, refineAugmented } from '../../src/engine/solve/linalg';
import { covarianceFromJacobian, leverage } from '../../src/engine/stats/covariance';

/** deterministic pseudo-random numbers (LCG of Park & Miller 1988) */
function lcg(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 16807) % 2147483647) / 2147483647 - 0.5;
}

describe('linalg', function () {
  it('norm2 neither overflows nor underflows (scaled two-pass norm, as MINPACK enorm)', function () {
    assert.ok(Math.abs(norm2([3e200, 4e200]) / 5e200 - 1) < 1e-15);
    assert.ok(Math.abs(norm2([3e-200, 4e-200]) / 5e-200 - 1) < 1e-15);
    assert.strictEqual(norm2([3, 4]), 5);
  });

  it('Householder QR with pivoting reproduces A P = Q R to rounding (backward stability, Golub & Van Loan §5.2)', function () {
    const rnd = lcg(7);
    const m = 9;
    const n = 4;
    const A = Float64Array.from({ length: m * n }, rnd);
    const qr = qrFactor(Float64Array.from(A), m, n, true);
    const R = extractR(qr);
    for (let j = 0; j < n; j++) {
      // column j of Q R = Q (R e_j)
      const col = new Float64Array(m);
      for (let i = 0; i <= j; i++) col[i] = R[j * n + i];
      applyQ(qr, col);
      for (let i = 0; i < m; i++) assert.ok(Math.abs(col[i] - A[qr.perm[j] * m + i]) < 1e-14, `entry ${i},${j}`);
    }
    // pivoting makes |r_jj| non-increasing (Businger & Golub 1965)
    for (let j = 1; j < n; j++) assert.ok(Math.abs(qr.rdiag[j]) <= Math.abs(qr.rdiag[j - 1]) * (1 + 1e-12));
    // Qᵀ Q = I
    const b = Float64Array.from({ length: m }, rnd);
    const c = Float64Array.from(b);
    applyQt(qr, c);
    applyQ(qr, c);
    for (let i = 0; i < m; i++) assert.ok(Math.abs(c[i] - b[i]) < 1e-15);
  });

  it('Jacobi SVD of [[3,0],[4,5]]: singular values 3√5 and √5 (by hand: AᵀA = [[25,20],[20,25]], eigenvalues 45 and 5)', function () {
    const A = Float64Array.from([3, 4, 0, 5]); // column-major
    const { s, u, v } = jacobiSVD(A, 2, 2);
    assert.ok(Math.abs(s[0] - 3 * Math.sqrt(5)) < 1e-14);
    assert.ok(Math.abs(s[1] - Math.sqrt(5)) < 1e-14);
    // A v_k = s_k u_k
    for (let k = 0; k < 2; k++) {
      for (let i = 0; i < 2; i++) {
        const av = A[i] * v[k * 2] + A[2 + i] * v[k * 2 + 1];
        assert.ok(Math.abs(av - s[k] * u[k * 2 + i]) < 1e-14);
      }
    }
  });

  it('Jacobi SVD keeps small singular values to high relative accuracy on a graded matrix (Demmel & Veselić 1992)', function () {
    // diag(1, 1e-8, 1e-16) times an orthogonal rotation on the right: singular values are the diagonal
    const c = Math.cos(0.3);
    const s = Math.sin(0.3);
    const D = [1, 1e-8, 1e-16];
    const A = new Float64Array(9);
    // A = D · G with G a rotation in the (1,2) plane and (2,3) plane applied to columns
    const G = [c, -s, 0, s, c, 0, 0, 0, 1]; // column-major rotation
    for (let j = 0; j < 3; j++) for (let i = 0; i < 3; i++) A[j * 3 + i] = D[i] * G[j * 3 + i];
    const sv = jacobiSVD(A, 3, 3).s;
    for (let k = 0; k < 3; k++) assert.ok(Math.abs(sv[k] - D[k]) / D[k] < 1e-13, `σ${k + 1} = ${sv[k]}`);
  });

  it('compensated dot product is exact where plain summation loses everything (Ogita, Rump & Oishi 2005, ill-conditioned sums)', function () {
    const acc = new CompensatedSum();
    acc.reset(1e16);
    acc.add(1);
    acc.add(-1e16);
    assert.strictEqual(acc.value(), 1);
    acc.reset(0);
    acc.addProduct(1 + 2 ** -30, 1 - 2 ** -30); // = 1 − 2⁻⁶⁰
    acc.add(-1);
    assert.strictEqual(acc.value(), -(2 ** -60));
  });

  it('rank analysis finds the null space of duplicate and zero columns', function () {
    const m = 6;
    const x = [1, 2, 3, 4, 5, 6];
    const A = new Float64Array(m * 4);
    for (let i = 0; i < m; i++) { A[i] = 1; A[m + i] = x[i]; A[2 * m + i] = 2 * x[i]; A[3 * m + i] = 0; }
    const ra = analyzeRank(A, m, 4);
    assert.strictEqual(ra.rank, 2);
    assert.deepStrictEqual(ra.nullColumns, [1, 2, 3]);
  });

  it('augmented refinement recovers a large-residual least-squares solution (Björck 1967)', function () {
    // Vandermonde-like basis, large residual: compare to the solution obtained in exact rational arithmetic of a tiny case
    // x = [0,1,2,3], y = [1,0,0,1], line fit: slope 0, intercept 0.5 (by hand: symmetric data)
    const m = 4;
    const A = Float64Array.from([1, 1, 1, 1, 0, 1, 2, 3]);
    const b = Float64Array.from([1, 0, 0, 1]);
    const ra = analyzeRank(A, m, 2);
    const x = new Float64Array(2);
    const r = Float64Array.from(b);
    refineAugmented(A, m, 2, ra, b, null, x, r, 3);
    assert.ok(Math.abs(x[0] - 0.5) < 1e-15 && Math.abs(x[1]) < 1e-15, `${x[0]}, ${x[1]}`);
    // residual r = b − A x
    for (let i = 0; i < m; i++) assert.ok(Math.abs(r[i] - (b[i] - 0.5)) < 1e-15);
  });

  it('modified Gram–Schmidt: Q orthonormal and Q R = A to rounding (Björck 1996 §2.4); Qᵀr of a vector in span(A) recovers it', function () {
    const rnd = lcg(11);
    const n = 12;
    const k = 3;
    const A = Array.from({ length: k }, () => Float64Array.from({ length: n }, rnd));
    const Q = A.map((c) => Float64Array.from(c));
    const R = new Float64Array(k * k);
    const norm0 = new Float64Array(k);
    assert.deepStrictEqual(mgsQr(Q, n, { relTol: 1e-10, R, norm0 }), [0, 1, 2]);
    for (let a = 0; a < k; a++) {
      assert.ok(Math.abs(norm0[a] - norm2(A[a])) < 1e-14 * norm0[a]);
      for (let b = 0; b < k; b++) {
        let d = 0;
        for (let i = 0; i < n; i++) d += Q[a][i] * Q[b][i];
        assert.ok(Math.abs(d - (a === b ? 1 : 0)) < 1e-14, `qᵀq at ${a},${b}`);
      }
      for (let i = 0; i < n; i++) {
        let v = 0;
        for (let b = 0; b <= a; b++) v += Q[b][i] * R[b * k + a];
        assert.ok(Math.abs(v - A[a][i]) < 1e-14, `(QR)[${i},${a}]`);
      }
      for (let b = a + 1; b < k; b++) assert.strictEqual(R[b * k + a], 0, 'R is upper triangular');
    }
    // r = 2·a0 − a2 lies in the span: the projection leaves ~0 and Qᵀr solves R c = Qᵀr for c = (2, 0, −1)
    const r = Float64Array.from({ length: n }, (_, i) => 2 * A[0][i] - A[2][i]);
    const qty = new Float64Array(k);
    mgsProject(Q, n, r, 1, qty);
    assert.ok(norm2(r) < 1e-14);
    const c2 = qty[2] / R[8];
    const c1 = (qty[1] - R[5] * c2) / R[4];
    const c0 = (qty[0] - R[1] * c1 - R[2] * c2) / R[0];
    assert.ok(Math.abs(c0 - 2) < 1e-13 && Math.abs(c1) < 1e-13 && Math.abs(c2 + 1) < 1e-13);
  });

  it('modified Gram–Schmidt at the edges: a dependent, zero or NaN column stops it, or is skipped on request', function () {
    const n = 5;
    const x = [1, 2, 3, 4, 5];
    const make = () => [Float64Array.from(x), Float64Array.from(x, (v) => 3 * v), new Float64Array(n), Float64Array.from(x, () => NaN), new Float64Array(n).fill(1)];
    assert.strictEqual(mgsQr(make(), n, { relTol: 1e-10 }), null, 'column 1 = 3 · column 0');
    assert.strictEqual(mgsQr([new Float64Array(n)], n, { relTol: 1e-10 }), null, 'zero column');
    const cols = make();
    assert.deepStrictEqual(mgsQr(cols, n, { relTol: 1e-10, skipDependent: true }), [0, 4]);
    let d = 0;
    for (let i = 0; i < n; i++) d += cols[0][i] * cols[4][i];
    assert.ok(Math.abs(d) < 1e-15, 'kept columns orthogonal');
    // near-dependent: passes a loose tolerance, fails a tight one
    const near = () => [Float64Array.from(x), Float64Array.from(x, (v, i) => v + (i === 0 ? 1e-8 : 0))];
    assert.ok(mgsQr(near(), n, { relTol: 1e-10 }));
    assert.strictEqual(mgsQr(near(), n, { relTol: 1e-8 }), null);
  });
});

describe('covarianceFromJacobian and leverage', function () {
  // straight line: Var(b) = s²/Sxx, Var(a) = s²(1/n + x̄²/Sxx), Cov(a,b) = −x̄ s²/Sxx; h_ii = 1/n + (x_i − x̄)²/Sxx
  // (simple linear regression, handbook formulas)
  const x = [0.5, 1, 2, 3.5, 4, 6, 7.5];
  const n = x.length;
  const J = new Float64Array(n * 2);
  for (let i = 0; i < n; i++) { J[i] = 1; J[n + i] = x[i]; }
  const xbar = x.reduce((a, b) => a + b, 0) / n;
  const sxx = x.reduce((a, v) => a + (v - xbar) ** 2, 0);
  const s2 = 0.37;

  it('straight line: matches the closed-form covariance', function () {
    const { cov, rank, unidentifiable } = covarianceFromJacobian(J, n, 2, null, [true, true], s2);
    assert.strictEqual(rank, 2);
    assert.deepStrictEqual(unidentifiable, []);
    const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);
    assert.ok(rel(cov[3], s2 / sxx) < 1e-14);
    assert.ok(rel(cov[0], s2 * (1 / n + (xbar * xbar) / sxx)) < 1e-14);
    assert.ok(rel(cov[1], (-xbar * s2) / sxx) < 1e-14);
    assert.strictEqual(cov[1], cov[2]);
  });

  it('straight line: leverage matches 1/n + (x − x̄)²/Sxx and sums to p', function () {
    const h = leverage(J, n, 2, null, [true, true]);
    let sum = 0;
    for (let i = 0; i < n; i++) {
      assert.ok(Math.abs(h[i] - (1 / n + (x[i] - xbar) ** 2 / sxx)) < 1e-14);
      sum += h[i];
    }
    assert.ok(Math.abs(sum - 2) < 1e-13);
  });

  it('weights scale rows by √w: doubling every weight halves the covariance', function () {
    const w = new Float64Array(n).fill(2);
    const a = covarianceFromJacobian(J, n, 2, null, [true, true], s2).cov;
    const b = covarianceFromJacobian(J, n, 2, w, [true, true], s2).cov;
    for (let k = 0; k < 4; k++) assert.ok(Math.abs(b[k] - a[k] / 2) < 1e-14 * Math.abs(a[k]));
  });

  it('fixed parameter: NaN row and column; the other variance is s²/Σx² (fixed intercept, handbook formula)', function () {
    const { cov } = covarianceFromJacobian(J, n, 2, null, [false, true], s2);
    assert.ok(Number.isNaN(cov[0]) && Number.isNaN(cov[1]) && Number.isNaN(cov[2]));
    const sx2 = x.reduce((a, v) => a + v * v, 0);
    assert.ok(Math.abs(cov[3] - s2 / sx2) < 1e-14 * (s2 / sx2));
  });

  it('duplicate columns: both unidentifiable, NaN entries, no exception', function () {
    const Jd = new Float64Array(n * 3);
    for (let i = 0; i < n; i++) { Jd[i] = 1; Jd[n + i] = x[i]; Jd[2 * n + i] = x[i]; }
    const { cov, rank, unidentifiable } = covarianceFromJacobian(Jd, n, 3, null, [true, true, true], s2);
    assert.strictEqual(rank, 2);
    assert.deepStrictEqual(unidentifiable, [1, 2]);
    assert.ok(Number.isNaN(cov[4]) && Number.isNaN(cov[8]));
    assert.ok(Math.abs(cov[0] - s2 / n) < 1e-14, 'intercept alone: s²/n');
  });
});

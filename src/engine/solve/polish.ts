// Gauss–Newton polishing of a Levenberg–Marquardt solution by contraction (common practice; see polish()). Used by lm.ts.
import { EPS, norm2, dotAt, qrFactor, applyQt, rankTolerance } from './linalg';
import { Prepared, evaluate } from './problem';
import { RunResult, fullTheta, weightedY } from './lmPoint';

/**
 * (Damped) Gauss–Newton steps at the LM solution, z = argmin ‖A_s z − r‖² + λ‖z‖² in column-scaled units. Near the
 * minimum the SSE is flat to rounding, so steps are judged by contraction, not by SSE: a step is taken while
 * ‖z_k‖ < ‖z_{k−1}‖ and the residual norm does not grow by more than its rounding level 16 ε ‖√w y‖ (common
 * practice). On a large-residual problem plain Gauss–Newton may expand (the second-order term exceeds JᵀJ); then λ
 * grows (0 → 1e-4 → ×4 … ≤ 1), which makes the fixed-point iteration contract. Stops when ‖z‖ ≤ 1e-15 ‖D θ‖.
 */
export function polish(P: Prepared, run: RunResult): void {
  const { n, q } = P;
  const m = Math.max(n, q);
  if (!run.at.ok) return;
  // the run's evaluation at its solution starts the polish; trial points go to the spare buffers, swapped when taken
  let r = run.at.r;
  let A = run.at.A;
  let fnorm = norm2(r, 0, n);
  const tolAbs = 16 * EPS * norm2(weightedY(P), 0, n);
  const lo = P.free.map((j) => P.lower[j]);
  const hi = P.free.map((j) => P.upper[j]);
  let prevZ = Infinity;
  let lambda = 0;
  let raises = 0;
  const aBuf = new Float64Array((m + q) * q);
  const bBuf = new Float64Array(m + q);
  for (let step = 0; step < 60; step++) {
    // hold parameters on a bound whose descent direction points outward
    const idx: number[] = [];
    for (let k = 0; k < q; k++) {
      const g = dotAt(A, k * m, r, m);
      if ((run.x[k] <= lo[k] && g > 0) || (run.x[k] >= hi[k] && g < 0)) continue;
      idx.push(k);
    }
    const kk = idx.length;
    if (kk === 0) return;
    const mm = m + kk;
    const a = aBuf.subarray(0, mm * kk);
    a.fill(0);
    const d = new Float64Array(kk);
    let xs = 0;
    const sl = Math.sqrt(lambda);
    for (let t = 0; t < kk; t++) {
      const c = idx[t] * m;
      const nj = norm2(A, c, m);
      d[t] = nj > 0 ? nj : 1;
      xs += (d[t] * run.x[idx[t]]) ** 2;
      scaleInto(a, t * mm, A, c, m, 1 / d[t]);
      a[t * mm + m + t] = sl;
    }
    xs = Math.sqrt(xs);
    const qr = qrFactor(a, mm, kk, true);
    const b = bBuf.subarray(0, mm);
    b.fill(0);
    b.set(r.subarray(0, m));
    applyQt(qr, b);
    const tol = rankTolerance(m, kk) * Math.abs(qr.rdiag[0]);
    let rank = 0;
    while (rank < kk && Math.abs(qr.rdiag[rank]) > tol) rank++;
    const z = new Float64Array(kk);
    for (let j = rank - 1; j >= 0; j--) {
      let s = b[j];
      for (let i = j + 1; i < rank; i++) s -= a[i * mm + j] * z[i];
      z[j] = s / qr.rdiag[j];
    }
    const zn = norm2(z);
    if (!(zn > 0)) return;
    if (!(zn < prevZ)) {
      // expanding: damp more and measure contraction afresh
      if (raises >= 8) return;
      raises++;
      lambda = lambda === 0 ? 1e-4 : Math.min(1, lambda * 4);
      prevZ = Infinity;
      continue;
    }
    const xNew = Float64Array.from(run.x);
    let changed = false;
    for (let t = 0; t < rank; t++) {
      const k = idx[qr.perm[t]];
      const v = run.x[k] - z[t] / d[qr.perm[t]];
      if (v < lo[k] || v > hi[k]) return; // a step that leaves the box is not a polish
      if (v !== run.x[k]) changed = true;
      xNew[k] = v;
    }
    if (!changed) return;
    const trial = run.spare;
    if (!evaluate(P, fullTheta(P, xNew), trial.r, trial.A, m, trial)) return;
    const fnorm1 = norm2(trial.r, 0, n);
    if (!(fnorm1 <= fnorm + tolAbs)) return;
    run.x = xNew;
    run.fnorm = fnorm1;
    trial.ok = true;
    run.spare = run.at;
    run.at = trial;
    r = trial.r;
    A = trial.A;
    fnorm = Math.min(fnorm, fnorm1);
    prevZ = zn;
    if (zn <= 1e-15 * xs) return;
  }
}

/** dst[doff + i] = src[soff + i] · s, i < len (d is a power of two in practice only when chosen so; here any scale) */
export function scaleInto(dst: Float64Array, doff: number, src: Float64Array, soff: number, len: number, s: number): void {
  for (let i = 0; i < len; i++) dst[doff + i] = src[soff + i] * s;
}

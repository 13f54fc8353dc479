// The trust-region step of Levenberg–Marquardt: MINPACK lmpar (Moré's safeguarded Newton iteration for λ) and
// qrsolv (Givens elimination of √λ D against R), after Moré (1978) and Moré, Garbow & Hillstrom (1980), on the
// pivoted QR of the free columns (buildSub). Used by the driver in lm.ts.
import { qrFactor, applyQt, norm2 } from './linalg';

const DWARF = 2.2250738585072014e-308;

export interface Sub {
  /** free-parameter indices of the columns in the subproblem */
  idx: number[];
  k: number;
  /** k×k R (column-major, ldr = k); strict lower triangle is workspace of qrsolv */
  r: Float64Array;
  ipvt: Int32Array;
  qtf: Float64Array;
  /** column norms of the sub-Jacobian */
  acnorm: Float64Array;
  diag: Float64Array;
}

/** scratch buffers reused across iterations (large fits would otherwise churn the garbage collector) */
export interface Scratch {
  a: Float64Array;
  wa: Float64Array;
}

export function buildSub(A: Float64Array, m: number, fvec: Float64Array, idx: number[], diagAll: Float64Array, scratch: Scratch): Sub {
  const k = idx.length;
  const a = scratch.a.subarray(0, m * k);
  for (let t = 0; t < k; t++) a.set(A.subarray(idx[t] * m, idx[t] * m + m), t * m);
  const qr = qrFactor(a, m, k, true);
  const wa = scratch.wa;
  wa.set(fvec);
  applyQt(qr, wa);
  const r = new Float64Array(k * k);
  for (let j = 0; j < k; j++) {
    for (let i = 0; i < j; i++) r[j * k + i] = a[j * m + i];
    r[j * k + j] = qr.rdiag[j];
  }
  const diag = new Float64Array(k);
  for (let t = 0; t < k; t++) diag[t] = diagAll[idx[t]];
  return { idx, k, r, ipvt: qr.perm, qtf: wa.subarray(0, k).slice(), acnorm: qr.acnorm, diag };
}

export function scaledNorm(d: Float64Array, x: Float64Array): number {
  let s = 0;
  for (let j = 0; j < x.length; j++) s += d[j] * x[j] * (d[j] * x[j]);
  return Math.sqrt(s);
}

/** max_j |(Aᵀ r)_j| / (‖A_j‖ ‖r‖) over the sub-problem columns (MINPACK gnorm) */
export function scaledGradient(sub: Sub, fnorm: number): number {
  if (fnorm === 0) return 0;
  let gnorm = 0;
  for (let j = 0; j < sub.k; j++) {
    const l = sub.ipvt[j];
    if (sub.acnorm[l] === 0) continue;
    let sum = 0;
    for (let i = 0; i <= j; i++) sum += sub.r[j * sub.k + i] * (sub.qtf[i] / fnorm);
    gnorm = Math.max(gnorm, Math.abs(sum / sub.acnorm[l]));
  }
  return gnorm;
}

/**
 * MINPACK lmpar: λ ≥ 0 with ‖D p‖ ≈ Δ (within 10%) or λ = 0 when the Gauss–Newton step is inside the region,
 * where p solves min ‖[A; √λ D] p + [r; 0]‖. Returns λ and x = −p (the step is subtracted), in sub-column order.
 */
export function lmpar(sub: Sub, delta: number, parIn: number): { par: number; x: Float64Array } {
  const { k: n, r, ipvt, diag, qtf } = sub;
  const ldr = n;
  const x = new Float64Array(n);
  const sdiag = new Float64Array(n);
  const wa1 = new Float64Array(n);
  const wa2 = new Float64Array(n);
  // Gauss–Newton direction (least squares if singular)
  let nsing = n;
  for (let j = 0; j < n; j++) {
    wa1[j] = qtf[j];
    if (r[j * ldr + j] === 0 && nsing === n) nsing = j;
    if (nsing < n) wa1[j] = 0;
  }
  for (let j = nsing - 1; j >= 0; j--) {
    wa1[j] /= r[j * ldr + j];
    const temp = wa1[j];
    for (let i = 0; i < j; i++) wa1[i] -= r[j * ldr + i] * temp;
  }
  for (let j = 0; j < n; j++) x[ipvt[j]] = wa1[j];
  let iter = 0;
  for (let j = 0; j < n; j++) wa2[j] = diag[j] * x[j];
  let dxnorm = norm2(wa2);
  let fp = dxnorm - delta;
  if (fp <= 0.1 * delta || !Number.isFinite(dxnorm)) {
    if (Number.isFinite(dxnorm)) return { par: 0, x };
  }
  // lower bound parl of the Newton iteration (zero if singular)
  let parl = 0;
  if (nsing >= n && Number.isFinite(dxnorm)) {
    for (let j = 0; j < n; j++) {
      const l = ipvt[j];
      wa1[j] = diag[l] * (wa2[l] / dxnorm);
    }
    for (let j = 0; j < n; j++) {
      let sum = 0;
      for (let i = 0; i < j; i++) sum += r[j * ldr + i] * wa1[i];
      wa1[j] = (wa1[j] - sum) / r[j * ldr + j];
    }
    const temp = norm2(wa1);
    parl = fp / delta / temp / temp;
    if (!Number.isFinite(parl)) parl = 0;
  }
  // upper bound paru
  for (let j = 0; j < n; j++) {
    let sum = 0;
    for (let i = 0; i <= j; i++) sum += r[j * ldr + i] * qtf[i];
    const l = ipvt[j];
    wa1[j] = sum / diag[l];
  }
  const gnorm = norm2(wa1);
  let paru = gnorm / delta;
  if (paru === 0) paru = DWARF / Math.min(delta, 0.1);
  let par = Math.max(parIn, parl);
  par = Math.min(par, paru);
  if (par === 0) par = Number.isFinite(dxnorm) && dxnorm > 0 ? gnorm / dxnorm : paru;
  for (;;) {
    iter++;
    if (par === 0) par = Math.max(DWARF, 0.001 * paru);
    const temp = Math.sqrt(par);
    for (let j = 0; j < n; j++) wa1[j] = temp * diag[j];
    qrsolv(n, r, ldr, ipvt, wa1, qtf, x, sdiag);
    for (let j = 0; j < n; j++) wa2[j] = diag[j] * x[j];
    dxnorm = norm2(wa2);
    const fpOld = fp;
    fp = dxnorm - delta;
    if (Math.abs(fp) <= 0.1 * delta || (parl === 0 && fp <= fpOld && fpOld < 0) || iter === 10) break;
    // Newton correction
    for (let j = 0; j < n; j++) {
      const l = ipvt[j];
      wa1[j] = diag[l] * (wa2[l] / dxnorm);
    }
    for (let j = 0; j < n; j++) {
      wa1[j] /= sdiag[j];
      const t = wa1[j];
      for (let i = j + 1; i < n; i++) wa1[i] -= r[j * ldr + i] * t;
    }
    const tn = norm2(wa1);
    const parc = fp / delta / tn / tn;
    if (fp > 0) parl = Math.max(parl, par);
    if (fp < 0) paru = Math.min(paru, par);
    par = Math.max(parl, par + parc);
    if (!Number.isFinite(par)) { par = paru; }
  }
  return { par, x };
}

/** MINPACK qrsolv: solve min ‖[R; D̃] z − [Qᵀr; 0]‖ by Givens rotations; R's strict lower triangle receives Sᵀ. */
export function qrsolv(n: number, r: Float64Array, ldr: number, ipvt: Int32Array, diag: Float64Array, qtb: Float64Array, x: Float64Array, sdiag: Float64Array): void {
  const wa = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    for (let i = j; i < n; i++) r[j * ldr + i] = r[i * ldr + j];
    x[j] = r[j * ldr + j];
    wa[j] = qtb[j];
  }
  for (let j = 0; j < n; j++) {
    const l = ipvt[j];
    if (diag[l] !== 0) {
      for (let k = j; k < n; k++) sdiag[k] = 0;
      sdiag[j] = diag[l];
      let qtbpj = 0;
      for (let k = j; k < n; k++) {
        if (sdiag[k] === 0) continue;
        const rkk = r[k * ldr + k];
        let cos: number;
        let sin: number;
        if (Math.abs(rkk) < Math.abs(sdiag[k])) {
          const cotan = rkk / sdiag[k];
          sin = 0.5 / Math.sqrt(0.25 + 0.25 * cotan * cotan);
          cos = sin * cotan;
        } else {
          const tan = sdiag[k] / rkk;
          cos = 0.5 / Math.sqrt(0.25 + 0.25 * tan * tan);
          sin = cos * tan;
        }
        r[k * ldr + k] = cos * rkk + sin * sdiag[k];
        const temp = cos * wa[k] + sin * qtbpj;
        qtbpj = -sin * wa[k] + cos * qtbpj;
        wa[k] = temp;
        for (let i = k + 1; i < n; i++) {
          const t = cos * r[k * ldr + i] + sin * sdiag[i];
          sdiag[i] = -sin * r[k * ldr + i] + cos * sdiag[i];
          r[k * ldr + i] = t;
        }
      }
    }
    sdiag[j] = r[j * ldr + j];
    r[j * ldr + j] = x[j];
  }
  let nsing = n;
  for (let j = 0; j < n; j++) {
    if (sdiag[j] === 0 && nsing === n) nsing = j;
    if (nsing < n) wa[j] = 0;
  }
  for (let j = nsing - 1; j >= 0; j--) {
    let sum = 0;
    for (let i = j + 1; i < nsing; i++) sum += r[j * ldr + i] * wa[i];
    wa[j] = (wa[j] - sum) / sdiag[j];
  }
  for (let j = 0; j < n; j++) x[ipvt[j]] = wa[j];
}

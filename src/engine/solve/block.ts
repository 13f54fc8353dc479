// Block-angular least squares for joint fits (models[].shared): Householder QR of each group's own columns, then QR of the reduced system of the shared columns (Björck 1996, "Numerical Methods for Least Squares Problems", §6.3 block angular problems — from memory), inside Levenberg–Marquardt with Marquardt column scaling and Nielsen's (1999) damping update; never a dense n × (groups·p_local + p_shared) factorisation.
//
// Notation: rows i of group g; A = √W ∂f/∂θ of the free parameters; the columns of group g's own parameters (L_g)
// are zero outside its rows, the shared columns (S) are not. For each group, [A_gL A_gS r_g] = Q_g [R_g T_g c_g; 0 B_g d_g];
// stacking every [B_g d_g] gives the reduced problem min ‖B δ_S + d‖, R_S its triangular factor; then
// δ_g = −R_g⁻¹(c_g + T_g δ_S). The same factors give (AᵀA)⁻¹ block by block and the hat values.
import type { LsqProblem, SolveOptions, SolveResult } from './types';
import type { Termination } from '../report';
import { CONVERGED, prepare, type Prepared, stopReason } from './problem';
import { EPS, rankTolerance, solveUpper, solveUpperT } from './linalg';
import { DEFAULTS } from '../spec/defaults';

/**
 * Structure of a joint problem. θ indices: `shared` are common to all rows; `local[g]` are group g's own (the same
 * count in every group, in the same order). `evaluate` writes f (length n) and, when Jc is given, the compact Jacobian
 * n × (shared.length + local[0].length) column-major: ∂f_i/∂θ for the shared columns, then for the local columns of
 * row i's group (every other derivative is zero).
 */
export interface BlockStructure {
  G: number;
  /** group of each row, 0..G−1 */
  group: Int32Array;
  shared: number[];
  local: number[][];
  evaluate(theta: Float64Array, f: Float64Array, Jc: Float64Array | null): void;
}

/** rows of each group, in row order */
export function rowsOfGroups(group: Int32Array, G: number): Int32Array[] {
  const count = new Int32Array(G);
  for (let i = 0; i < group.length; i++) count[group[i]]++;
  const rows = Array.from(count, c => new Int32Array(c));
  const at = new Int32Array(G);
  for (let i = 0; i < group.length; i++) rows[group[i]][at[group[i]]++] = i;
  return rows;
}

/**
 * Householder QR of the first k columns of the m × c column-major matrix a (in place), the reflections applied to the
 * remaining columns; rdiag receives R's diagonal (R's strict upper triangle is in a above the diagonal).
 * Returns false when a column is exactly zero below the diagonal (rank < k).
 */
function houseQR(a: Float64Array, m: number, c: number, k: number, rdiag: Float64Array): boolean {
  let full = true;
  for (let j = 0; j < k && j < m; j++) {
    const cj = j * m;
    let s = 0;
    for (let i = j; i < m; i++) s += a[cj + i] * a[cj + i];
    let nrm = Math.sqrt(s);
    if (nrm === 0) {
      rdiag[j] = 0;
      full = false;
      continue;
    }
    if (a[cj + j] < 0) nrm = -nrm;
    for (let i = j; i < m; i++) a[cj + i] /= nrm;
    a[cj + j] += 1;
    const v = a[cj + j];
    for (let t = j + 1; t < c; t++) {
      const ct = t * m;
      let d = 0;
      for (let i = j; i < m; i++) d += a[cj + i] * a[ct + i];
      const f = d / v;
      for (let i = j; i < m; i++) a[ct + i] -= f * a[cj + i];
    }
    rdiag[j] = -nrm;
  }
  for (let j = m; j < k; j++) {
    rdiag[j] = 0;
    full = false;
  }
  return full;
}

/** the factors of one step: per group R_g (k_g×k_g, upper), T_g (k_g × qS), c_g; R_S (qS×qS, upper), c_S */
interface Factors {
  /** column indices into θ: the free local parameters of each group, and the free shared parameters */
  L: number[][];
  S: number[];
  R: Float64Array[];
  T: Float64Array[];
  c: Float64Array[];
  RS: Float64Array;
  cS: Float64Array;
  /** false when some diagonal of R is negligible (rank-deficient at this damping) */
  full: boolean;
}

/** Compact layout of the weighted Jacobian and residuals for the factorisation. */
interface Layout {
  n: number;
  G: number;
  rows: Int32Array[];
  /** compact column (0..pc−1) of each θ index, and whether it is shared */
  compactOf: Map<number, number>;
  pc: number;
  ps: number;
}

/**
 * Factor [A; √λ D] block by block. A is the compact weighted Jacobian (n × pc), r the weighted residuals; `use[θ]`
 * says which parameters take part (free and not held at a bound); D the scaling (θ-indexed), λ ≥ 0.
 */
let scratch = new Float64Array(256);
function factor(lay: Layout, bs: BlockStructure, A: Float64Array, r: Float64Array, use: Uint8Array, D: Float64Array, lambda: number): Factors {
  const { n, G, rows } = lay;
  const S = bs.shared.filter(j => use[j]);
  const qS = S.length;
  const sl = Math.sqrt(lambda);
  const L: number[][] = [];
  const R: Float64Array[] = [];
  const T: Float64Array[] = [];
  const c: Float64Array[] = [];
  let full = true;
  // the reduced system, (n + qS) × (qS + 1): each group's rows below its R_g, then √λ D_S
  const mZ = n + qS;
  const Z = new Float64Array(mZ * (qS + 1));
  let zRow = 0;
  for (let g = 0; g < G; g++) {
    const Lg = bs.local[g].filter(j => use[j]);
    const k = Lg.length;
    const rg = rows[g];
    const ng = rg.length;
    const m = ng + (lambda > 0 ? k : 0);
    const cols = k + qS + 1;
    if (scratch.length < m * cols) scratch = new Float64Array(m * cols);
    const M = scratch;
    M.fill(0, 0, m * cols);
    for (let t = 0; t < k; t++) {
      const cc = lay.compactOf.get(Lg[t])! * n;
      for (let a = 0; a < ng; a++) M[t * m + a] = A[cc + rg[a]];
      if (lambda > 0) M[t * m + ng + t] = sl * D[Lg[t]];
    }
    for (let t = 0; t < qS; t++) {
      const cc = lay.compactOf.get(S[t])! * n;
      for (let a = 0; a < ng; a++) M[(k + t) * m + a] = A[cc + rg[a]];
    }
    for (let a = 0; a < ng; a++) M[(k + qS) * m + a] = r[rg[a]];
    const rdiag = new Float64Array(k);
    if (!houseQR(M, m, cols, k, rdiag)) full = false;
    const Rg = new Float64Array(k * k);
    for (let j = 0; j < k; j++) {
      for (let i = 0; i < j; i++) Rg[j * k + i] = M[j * m + i];
      Rg[j * k + j] = rdiag[j];
    }
    const Tg = new Float64Array(k * qS);
    for (let t = 0; t < qS; t++) for (let i = 0; i < k; i++) Tg[t * k + i] = M[(k + t) * m + i];
    const cg = new Float64Array(k);
    for (let i = 0; i < k; i++) cg[i] = M[(k + qS) * m + i];
    // the rows below R_g go to the reduced system
    for (let a = k; a < m; a++) {
      for (let t = 0; t <= qS; t++) Z[t * mZ + zRow] = M[(k + t) * m + a];
      zRow++;
    }
    L.push(Lg);
    R.push(Rg);
    T.push(Tg);
    c.push(cg);
  }
  if (lambda > 0) for (let t = 0; t < qS; t++) Z[t * mZ + zRow + t] = sl * D[S[t]];
  const mUsed = lambda > 0 ? zRow + qS : zRow;
  // compact Z to mUsed rows (its row count differs from mZ without damping)
  const Zu = mUsed === mZ ? Z : new Float64Array(mUsed * (qS + 1));
  if (Zu !== Z) for (let t = 0; t <= qS; t++) for (let a = 0; a < mUsed; a++) Zu[t * mUsed + a] = Z[t * mZ + a];
  const rdS = new Float64Array(qS);
  if (!houseQR(Zu, mUsed, qS + 1, qS, rdS)) full = false;
  const RS = new Float64Array(qS * qS);
  for (let j = 0; j < qS; j++) {
    for (let i = 0; i < j; i++) RS[j * qS + i] = Zu[j * mUsed + i];
    RS[j * qS + j] = rdS[j];
  }
  const cS = new Float64Array(qS);
  for (let i = 0; i < qS && i < mUsed; i++) cS[i] = Zu[qS * mUsed + i];
  return { L, S, R, T, c, RS, cS, full };
}

/** the step δ (θ-indexed, zero outside the factored columns) minimising ‖A δ + r‖² + λ‖D δ‖² */
function stepOf(F: Factors, p: number): Float64Array {
  const delta = new Float64Array(p);
  const qS = F.S.length;
  const dS = Float64Array.from(F.cS, v => -v);
  solveUpper(F.RS, qS, qS, dS);
  for (let t = 0; t < qS; t++) delta[F.S[t]] = dS[t];
  for (let g = 0; g < F.L.length; g++) {
    const k = F.L[g].length;
    const x = new Float64Array(k);
    for (let i = 0; i < k; i++) {
      let s = -F.c[g][i];
      for (let t = 0; t < qS; t++) s -= F.T[g][t * k + i] * dS[t];
      x[i] = s;
    }
    solveUpper(F.R[g], k, k, x);
    for (let i = 0; i < k; i++) delta[F.L[g][i]] = x[i];
  }
  return delta;
}

/**
 * The parameters (θ indices) whose diagonal of R is negligible against their column's norm: each is (numerically) in
 * the span of the columns factored before it — its group's earlier parameters, or for a shared one every group's
 * own columns and the earlier shared ones. Empty at full rank.
 */
function deficientColumns(F: Factors, colNorm: Float64Array, n: number): number[] {
  const out: number[] = [];
  const check = (Rk: Float64Array, k: number, idx: number[]): void => {
    for (let j = 0; j < k; j++) if (!(Math.abs(Rk[j * k + j]) > rankTolerance(n, k) * 100 * colNorm[idx[j]])) out.push(idx[j]);
  };
  for (let g = 0; g < F.L.length; g++) check(F.R[g], F.L[g].length, F.L[g]);
  check(F.RS, F.S.length, F.S);
  return out;
}

export interface BlockWork {
  rows: Int32Array[];
  layout: Layout;
}

const layouts = new WeakMap<BlockStructure, Layout>();
function layoutOf(bs: BlockStructure, n: number): Layout {
  const hit = layouts.get(bs);
  if (hit && hit.n === n) return hit;
  const lay = makeLayout(bs, n);
  layouts.set(bs, lay);
  return lay;
}

function makeLayout(bs: BlockStructure, n: number): Layout {
  const compactOf = new Map<number, number>();
  bs.shared.forEach((j, t) => compactOf.set(j, t));
  const ps = bs.shared.length;
  for (const lg of bs.local) lg.forEach((j, t) => compactOf.set(j, ps + t));
  return { n, G: bs.G, rows: rowsOfGroups(bs.group, bs.G), compactOf, pc: ps + (bs.local[0]?.length ?? 0), ps };
}

/** weighted compact Jacobian and residuals at θ; false when anything is not finite */
function evalAt(P: Prepared, bs: BlockStructure, lay: Layout, theta: Float64Array, f: Float64Array, r: Float64Array, A: Float64Array | null): boolean {
  P.evaluations++;
  f.fill(NaN);
  try {
    bs.evaluate(theta, f, A);
  } catch {
    return false;
  }
  const { n, sw } = P;
  const y = P.problem.y;
  for (let i = 0; i < n; i++) {
    const ri = sw[i] * (f[i] - y[i]);
    if (!Number.isFinite(ri)) return false;
    r[i] = ri;
  }
  if (A) {
    for (let t = 0; t < lay.pc; t++) {
      const c = t * n;
      for (let i = 0; i < n; i++) {
        const a = sw[i] * A[c + i];
        if (!Number.isFinite(a)) return false;
        A[c + i] = a;
      }
    }
  }
  return true;
}

/** ‖A δ + r‖² with the compact A */
function linearisedSse(bs: BlockStructure, lay: Layout, A: Float64Array, r: Float64Array, delta: Float64Array): number {
  const { n, ps } = lay;
  let s = 0;
  for (let i = 0; i < n; i++) {
    let v = r[i];
    for (let t = 0; t < ps; t++) v += A[t * n + i] * delta[bs.shared[t]];
    const lg = bs.local[bs.group[i]];
    for (let t = 0; t < lg.length; t++) v += A[(ps + t) * n + i] * delta[lg[t]];
    s += v * v;
  }
  return s;
}

/** gradient Aᵀr (θ-indexed) and the column norms of A */
function gradient(bs: BlockStructure, lay: Layout, A: Float64Array, r: Float64Array, p: number): { g: Float64Array; norm: Float64Array } {
  const { n, ps } = lay;
  const g = new Float64Array(p);
  const norm = new Float64Array(p);
  for (let i = 0; i < n; i++) {
    const ri = r[i];
    for (let t = 0; t < ps; t++) {
      const a = A[t * n + i];
      g[bs.shared[t]] += a * ri;
      norm[bs.shared[t]] += a * a;
    }
    const lg = bs.local[bs.group[i]];
    for (let t = 0; t < lg.length; t++) {
      const a = A[(ps + t) * n + i];
      g[lg[t]] += a * ri;
      norm[lg[t]] += a * a;
    }
  }
  for (let j = 0; j < p; j++) norm[j] = Math.sqrt(norm[j]);
  return { g, norm };
}

/** dense n × p Jacobian (unweighted) from the compact one */
function denseJacobian(bs: BlockStructure, n: number, p: number, Jc: Float64Array): Float64Array {
  const J = new Float64Array(n * p);
  const ps = bs.shared.length;
  for (let i = 0; i < n; i++) {
    for (let t = 0; t < ps; t++) J[bs.shared[t] * n + i] = Jc[t * n + i];
    const lg = bs.local[bs.group[i]];
    for (let t = 0; t < lg.length; t++) J[lg[t] * n + i] = Jc[(ps + t) * n + i];
  }
  return J;
}

const FTOL = 1e-15;
const XTOL = 1e-15;
const GTOL = 1e-15;

/**
 * Levenberg–Marquardt on a problem with problem.blocks (see the file header). Bounds: a parameter on a bound whose
 * gradient points outwards is held for the step, and every trial point is projected into the box.
 */
export function solveBlock(problem: LsqProblem & { blocks: BlockStructure }, opts: SolveOptions): SolveResult {
  const P = prepare(problem, opts, DEFAULTS.solver.maxIterations, false);
  const bs = problem.blocks;
  const { n, p } = P;
  const lay = layoutOf(bs, n);
  const isFree = new Uint8Array(p);
  for (const j of P.free) isFree[j] = 1;
  let theta = Float64Array.from(P.theta0);
  const f = new Float64Array(n);
  const r = new Float64Array(n);
  let A = new Float64Array(n * lay.pc);
  let current = false;
  const fail = (termination: Termination, message: string, iterations: number): SolveResult =>
    finishBlock(P, bs, lay, theta, termination, message, iterations, isFree, current ? { f, r, A } : null);
  if (!evalAt(P, bs, lay, theta, f, r, A)) return fail('non-finite', 'the model is not finite at the starting values: change the starting values or bounds', 0);
  current = true;
  let sse = 0;
  for (let i = 0; i < n; i++) sse += r[i] * r[i];
  if (P.q === 0) return fail('exact', 'no free parameters', 0);
  const D = new Float64Array(p);
  let lambda = 1e-3;
  let nu = 2;
  let iterations = 0;
  const fNew = new Float64Array(n);
  const rNew = new Float64Array(n);
  let ANew = new Float64Array(n * lay.pc);
  let gr = gradient(bs, lay, A, r, p);
  for (;;) {
    if (sse === 0) return fail('exact', 'the model fits the data exactly', iterations);
    const stop = stopReason(P);
    if (stop) return fail(stop, stop === 'cancelled' ? 'cancelled' : 'the time budget ran out', iterations);
    // Marquardt scaling: the largest column norm seen (MINPACK's mode 1)
    for (const j of P.free) D[j] = Math.max(D[j], gr.norm[j] > 0 ? gr.norm[j] : 1);
    // gradient test on the free parameters not held at a bound
    const use = new Uint8Array(p);
    let gmax = 0;
    const rn = Math.sqrt(sse);
    for (const j of P.free) {
      const held = (theta[j] <= P.lower[j] && gr.g[j] > 0) || (theta[j] >= P.upper[j] && gr.g[j] < 0);
      if (!held) {
        use[j] = 1;
        if (gr.norm[j] > 0) gmax = Math.max(gmax, Math.abs(gr.g[j]) / (gr.norm[j] * rn));
      }
    }
    if (gmax <= GTOL) return fail('gradient', 'the gradient vanishes at the solution', iterations);
    if (iterations >= P.maxIterations) return fail('iteration-limit', `stopped after ${iterations} iterations without converging`, iterations);
    const F = factor(lay, bs, A, r, use, D, lambda);
    const delta = stepOf(F, p);
    const trial = Float64Array.from(theta);
    let dNorm = 0;
    let tNorm = 0;
    for (const j of P.free) {
      if (!use[j]) continue;
      trial[j] = Math.min(P.upper[j], Math.max(P.lower[j], theta[j] + (Number.isFinite(delta[j]) ? delta[j] : 0)));
      delta[j] = trial[j] - theta[j];
      dNorm += (D[j] * delta[j]) ** 2;
      tNorm += (D[j] * theta[j]) ** 2;
    }
    dNorm = Math.sqrt(dNorm);
    tNorm = Math.sqrt(tNorm);
    const predicted = sse - linearisedSse(bs, lay, A, r, delta);
    // the (nearly Gauss–Newton) step cannot reduce the sum of squares by more than rounding: converged
    if (lambda <= 1 && predicted <= FTOL * sse) return fail('relative-reduction', 'the predicted reduction of the sum of squares fell below its tolerance', iterations);
    const ok = dNorm > 0 && evalAt(P, bs, lay, trial, fNew, rNew, ANew);
    let sseNew = Infinity;
    if (ok) {
      sseNew = 0;
      for (let i = 0; i < n; i++) sseNew += rNew[i] * rNew[i];
    }
    const actual = sse - sseNew;
    const rho = predicted > 0 ? actual / predicted : actual > 0 ? 1 : -1;
    if (ok && actual >= 0 && rho > 1e-4) {
      theta = trial;
      f.set(fNew);
      r.set(rNew);
      [A, ANew] = [ANew, A];
      const before = sse;
      sse = sseNew;
      iterations++;
      opts.onIteration?.(iterations, sse, theta);
      lambda *= Math.max(1 / 3, 1 - (2 * rho - 1) ** 3);
      nu = 2;
      gr = gradient(bs, lay, A, r, p);
      if (actual <= FTOL * before && predicted <= FTOL * before) return fail('relative-reduction', 'the relative reduction of the sum of squares fell below its tolerance', iterations);
      if (dNorm <= XTOL * (tNorm + XTOL)) return fail('step-size', 'the step fell below its tolerance', iterations);
    } else {
      lambda *= nu;
      nu *= 2;
      // no step reduces the sum of squares any more: converged within rounding
      if (dNorm <= XTOL * (tNorm + XTOL) || lambda > 1e20 || (ok && Math.abs(actual) <= 4 * EPS * sse && predicted <= 4 * EPS * sse))
        return fail('step-size', 'no step reduces the sum of squares within rounding', iterations);
    }
  }
}

/** the result at θ: f, a lazily built dense J (profile and cross-validation refits never read it), rank, bounds */
function finishBlock(
  P: Prepared, bs: BlockStructure, lay: Layout, theta: Float64Array, termination: Termination, message: string, iterations: number, isFree: Uint8Array,
  at: { f: Float64Array; r: Float64Array; A: Float64Array } | null,
): SolveResult {
  const { n, p } = P;
  const f = at ? at.f : new Float64Array(n);
  const r = at ? at.r : new Float64Array(n);
  const A = at ? at.A : new Float64Array(n * lay.pc);
  const ok = at ? true : evalAt(P, bs, lay, theta, f, r, A);
  let sse = 0;
  for (let i = 0; i < n; i++) sse += r[i] * r[i];
  // unweighted compact Jacobian for the report
  const Jc = Float64Array.from(A);
  for (let t = 0; t < lay.pc; t++) for (let i = 0; i < n; i++) Jc[t * n + i] = P.sw[i] > 0 ? Jc[t * n + i] / P.sw[i] : 0;
  if (P.sw.some(v => v === 0)) {
    // rows of weight 0: their derivatives again from the model (√w = 0 wiped them)
    const f2 = new Float64Array(n);
    const J2 = new Float64Array(n * lay.pc);
    bs.evaluate(theta, f2, J2);
    for (let i = 0; i < n; i++) if (P.sw[i] === 0) for (let t = 0; t < lay.pc; t++) Jc[t * n + i] = J2[t * n + i];
  }
  let dense: Float64Array | null = null;
  const getJ = (): Float64Array => (dense ??= denseJacobian(bs, n, p, Jc));
  let rank = P.q;
  let unidentifiable: number[] = [];
  const atBound: ('min' | 'max' | null)[] = [];
  for (let j = 0; j < p; j++) atBound.push(!isFree[j] ? null : theta[j] <= P.lower[j] ? 'min' : theta[j] >= P.upper[j] ? 'max' : null);
  if (ok && P.q > 0) {
    const use = isFree;
    const { norm } = gradient(bs, lay, A, r, p);
    const F = factor(lay, bs, A, r, use, new Float64Array(p), 0);
    // rank from the block factors (never a dense rank analysis: with many groups it would cost minutes)
    unidentifiable = deficientColumns(F, norm, n).sort((a, b) => a - b);
    rank = P.q - unidentifiable.length;
  }
  if (ok && CONVERGED.includes(termination) && rank < P.q) {
    termination = 'singular';
    message = `the Jacobian has rank ${rank} < ${P.q} free parameters at the solution: some parameters are not identifiable from these data`;
  }
  const out = {
    theta, termination, converged: CONVERGED.includes(termination), iterations, evaluations: P.evaluations,
    sse: ok ? sse : NaN, f, rank, unidentifiable, atBound, message,
  } as Omit<SolveResult, 'J'> as SolveResult;
  Object.defineProperty(out, 'J', { get: getJ, enumerable: true, configurable: true });
  return out;
}

// ---------------------------------------------------------------- covariance and hat values

/**
 * (AᵀA)⁻¹ of the free parameters (p×p row-major, NaN rows and columns for fixed ones) and the hat values, from the
 * block factors at λ = 0: with M_g = R_g⁻¹T_g and C_S = R_S⁻¹R_S⁻ᵀ, C_gg = R_g⁻¹R_g⁻ᵀ + M_g C_S M_gᵀ, C_gS = −M_g C_S,
 * C_gh = M_g C_S M_hᵀ. Null when the factors are rank-deficient (the caller takes the dense path). Columns are scaled
 * to unit norm before factoring (as the dense path does).
 */
export function blockCovariance(bs: BlockStructure, J: Float64Array, n: number, p: number, w: Float64Array | null, free: ArrayLike<boolean>): { cov: Float64Array; h: Float64Array } | null {
  const lay = layoutOf(bs, n);
  const use = new Uint8Array(p);
  for (let j = 0; j < p; j++) if (free[j]) use[j] = 1;
  // compact weighted Jacobian, each column scaled by its norm
  const A = new Float64Array(n * lay.pc);
  const norm = new Float64Array(p);
  for (let i = 0; i < n; i++) {
    const s = w ? Math.sqrt(w[i]) : 1;
    const put = (t: number, j: number): void => {
      const a = s * J[j * n + i];
      A[t * n + i] = a;
      norm[j] += a * a;
    };
    bs.shared.forEach((j, t) => put(t, j));
    bs.local[bs.group[i]].forEach((j, t) => put(lay.ps + t, j));
  }
  for (let j = 0; j < p; j++) norm[j] = Math.sqrt(norm[j]);
  for (let j = 0; j < p; j++) if (use[j] && !(norm[j] > 0)) return null;
  for (let i = 0; i < n; i++) {
    bs.shared.forEach((j, t) => (A[t * n + i] /= norm[j] || 1));
    bs.local[bs.group[i]].forEach((j, t) => (A[(lay.ps + t) * n + i] /= norm[j] || 1));
  }
  const F = factor(lay, bs, A, new Float64Array(n), use, new Float64Array(p), 0);
  if (!F.full || deficientColumns(F, Float64Array.from({ length: p }, () => 1), n).length) return null;
  const qS = F.S.length;
  // C_S = R_S⁻¹ R_S⁻ᵀ (column-major qS×qS)
  const RSinv = new Float64Array(qS * qS);
  for (let t = 0; t < qS; t++) {
    const e = new Float64Array(qS);
    e[t] = 1;
    solveUpper(F.RS, qS, qS, e);
    RSinv.set(e, t * qS);
  }
  const CS = new Float64Array(qS * qS);
  for (let a = 0; a < qS; a++)
    for (let b = 0; b < qS; b++) {
      let s = 0;
      for (let k = 0; k < qS; k++) s += RSinv[k * qS + a] * RSinv[k * qS + b];
      CS[b * qS + a] = s;
    }
  // per group: Rinv_g, M_g = R_g⁻¹ T_g (k × qS), N_g = M_g C_S (k × qS)
  const G = F.L.length;
  const Rinv: Float64Array[] = [];
  const M: Float64Array[] = [];
  const N: Float64Array[] = [];
  for (let g = 0; g < G; g++) {
    const k = F.L[g].length;
    const Ri = new Float64Array(k * k);
    for (let t = 0; t < k; t++) {
      const e = new Float64Array(k);
      e[t] = 1;
      solveUpper(F.R[g], k, k, e);
      Ri.set(e, t * k);
    }
    const Mg = new Float64Array(k * qS);
    for (let t = 0; t < qS; t++) {
      const x = F.T[g].slice(t * k, t * k + k);
      solveUpper(F.R[g], k, k, x);
      Mg.set(x, t * k);
    }
    const Ng = new Float64Array(k * qS);
    for (let i = 0; i < k; i++)
      for (let b = 0; b < qS; b++) {
        let s = 0;
        for (let a = 0; a < qS; a++) s += Mg[a * k + i] * CS[b * qS + a];
        Ng[b * k + i] = s;
      }
    Rinv.push(Ri);
    M.push(Mg);
    N.push(Ng);
  }
  const cov = new Float64Array(p * p).fill(NaN);
  const set = (a: number, b: number, v: number): void => {
    const s = v / (norm[a] * norm[b]);
    cov[a * p + b] = s;
    cov[b * p + a] = s;
  };
  for (let a = 0; a < qS; a++) for (let b = a; b < qS; b++) set(F.S[a], F.S[b], CS[b * qS + a]);
  for (let g = 0; g < G; g++) {
    const k = F.L[g].length;
    for (let i = 0; i < k; i++) {
      for (let b = 0; b < qS; b++) set(F.L[g][i], F.S[b], -N[g][b * k + i]);
      for (let h = g; h < G; h++) {
        const kh = F.L[h].length;
        for (let i2 = h === g ? i : 0; i2 < kh; i2++) {
          // M_g C_S M_hᵀ, plus R_g⁻¹R_g⁻ᵀ on the diagonal block
          let s = 0;
          for (let a = 0; a < qS; a++) s += N[g][a * k + i] * M[h][a * kh + i2];
          if (h === g) for (let t = 0; t < k; t++) s += Rinv[g][t * k + i] * Rinv[g][t * k + i2];
          set(F.L[g][i], F.L[h][i2], s);
        }
      }
    }
  }
  // hat values: row i of A R⁻¹ = [a_L R_g⁻¹, (a_S − a_L M_g) R_S⁻¹], then its squared norm
  const h = new Float64Array(n);
  const colS = F.S.map(j => lay.compactOf.get(j)!);
  for (let g = 0; g < G; g++) {
    const k = F.L[g].length;
    const colL = F.L[g].map(j => lay.compactOf.get(j)!);
    const uL = new Float64Array(k);
    const uS = new Float64Array(qS);
    for (const i of lay.rows[g]) {
      for (let t = 0; t < k; t++) uL[t] = A[colL[t] * n + i];
      for (let t = 0; t < qS; t++) {
        let s = A[colS[t] * n + i];
        for (let a = 0; a < k; a++) s -= uL[a] * M[g][t * k + a];
        uS[t] = s;
      }
      solveUpperT(F.R[g], k, k, uL);
      solveUpperT(F.RS, qS, qS, uS);
      let s = 0;
      for (let t = 0; t < k; t++) s += uL[t] * uL[t];
      for (let t = 0; t < qS; t++) s += uS[t] * uS[t];
      h[i] = s;
    }
  }
  return { cov, h };
}

/** The block structure a compiled model carries on data X (a joint model, joint.ts), or undefined. */
export function blocksOf(compiled: object, X: ArrayLike<number>[]): BlockStructure | undefined {
  const b = (compiled as { blocks?: (X: ArrayLike<number>[]) => BlockStructure }).blocks;
  return typeof b === 'function' ? b.call(compiled, X) : undefined;
}

/** ∂S/∂θ_j = −2 Σ √w r ∂f/∂θ_j (r = √w (y − f)) at θ from the compact Jacobian; NaN when not finite */
export function blockSseGradient(bs: BlockStructure, theta: Float64Array, y: Float64Array, sw: Float64Array, j: number): number {
  const n = y.length;
  const ps = bs.shared.length;
  const pc = ps + (bs.local[0]?.length ?? 0);
  const f = new Float64Array(n);
  const Jc = new Float64Array(n * pc);
  bs.evaluate(theta, f, Jc);
  const t = bs.shared.indexOf(j);
  let s = 0;
  if (t >= 0) for (let i = 0; i < n; i++) s += sw[i] * sw[i] * (y[i] - f[i]) * Jc[t * n + i];
  else
    for (let g = 0; g < bs.G; g++) {
      const k = bs.local[g].indexOf(j);
      if (k < 0) continue;
      for (let i = 0; i < n; i++) if (bs.group[i] === g) s += sw[i] * sw[i] * (y[i] - f[i]) * Jc[(ps + k) * n + i];
    }
  return Number.isFinite(s) ? -2 * s : NaN;
}

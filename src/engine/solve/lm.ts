// Trust-region Levenberg–Marquardt after Moré (1978), "The Levenberg-Marquardt algorithm: implementation and theory", and MINPACK lmder/lmpar/qrsolv (Moré, Garbow & Hillstrom 1980); box bounds by an active-set trust-region step after the dogbox method of Voglis & Lagaris (2004).
//
// Method, in the words of the sources:
// - residual r(θ) = √w (f(θ) − y), Jacobian A = ∂r/∂θ of the free parameters; QR with column pivoting of A;
//   the LM parameter λ by Moré's safeguarded Newton iteration on ‖D p(λ)‖ = Δ (lmpar), the step by Givens
//   elimination of √λ D against R (qrsolv); ratio ρ = actual / predicted reduction; Δ updated as in lmder.
// - variable scaling D: MINPACK "mode 1" (D_j = running max of the Jacobian column norms) first; when that run ends
//   badly (not converged, a step-size stop with a scaled gradient above 1e-8, or a rank-deficient Jacobian at the
//   end) the fit is rerun from the start with unit scaling D = I and the lower SSE is kept (both choices fail on
//   different NIST problems, see PEERS.md). onIteration then counts again from 1 for the second run.
// - the actual reduction is computed as Σ (r − r₁)(r + r₁) / ‖r‖², free of the cancellation in 1 − (‖r₁‖/‖r‖)²,
//   so the relative tests (ftol = xtol = gtol = 1e-15) stay meaningful down to rounding.
// - a trial step whose f or J has NaN/±Inf is rejected explicitly and the region shrinks (IEEE comparisons with NaN
//   would otherwise accept it).
// - bounds: a parameter on a bound whose descent direction −g_j points outward is held (active set); the LM step is
//   computed over the others and then shortened along its own direction to stay in the box, the blocking parameter
//   landing exactly on its bound; ρ uses the predicted reduction of the shortened step. Never clamped after the step.
// - at the end, (damped) Gauss–Newton steps polish the solution while they contract (polish.ts).
//
// Files: this one is the driver (the iteration, the retry with the other scaling, the result); the step (lmpar,
// qrsolv) is in lmStep.ts, the polish in polish.ts, the run's evaluated point and buffers in lmPoint.ts.
import type { LsqProblem, SolveOptions, SolveResult } from './types';
import type { Termination } from '../report';
import { EPS, norm2, dotAt, diffOfSquares } from './linalg';
import { CONVERGED, Prepared, evaluate, prepare, solutionInfo, stopReason } from './problem';
import { RunResult, fullTheta, newPoint, weightedY } from './lmPoint';
import { Scratch, buildSub, lmpar, scaledGradient, scaledNorm } from './lmStep';
import { polish } from './polish';
import { DEFAULTS } from '../spec/defaults';

/** default cap on LM iterations (accepted steps, each with a new Jacobian) per scaling strategy */
export const DEFAULT_MAX_ITERATIONS: number = DEFAULTS.solver.maxIterations;
/** relative tolerances of the convergence tests (ftol, xtol, gtol of MINPACK), near machine precision */
export const FTOL = 1e-15;
export const XTOL = 1e-15;
export const GTOL = 1e-15;
/** initial trust-region radius factor (MINPACK `factor`) */
const FACTOR = 100;
/** a step-size stop with a scaled gradient above this is treated as a stall and retried with the other scaling */
const RETRY_GNORM = 1e-8;
const DWARF = 2.2250738585072014e-308;

export type Scaling = 'jacobian' | 'unit';


/**
 * Each trial point is evaluated once, with its Jacobian (kept when the step is accepted, so the next iteration needs no
 * second call). Measured in bench/solve-speed.ts: a generated kernel's f alone costs 50–80 % of f with J (the
 * transcendental functions are shared), and about 1 trial in 7 is rejected, so MINPACK's schedule (f at the trial,
 * J after acceptance) costs more calls and more time here. No point is ever evaluated twice.
 */

/** trust-region Levenberg–Marquardt with bounds and fixed parameters (see file header) */
export function solveNonlinear(problem: LsqProblem, opts: SolveOptions): SolveResult {
  const P = prepare(problem, opts, DEFAULT_MAX_ITERATIONS);
  return solvePrepared(P);
}

/**
 * As solveNonlinear with one scaling strategy only ('jacobian' = MINPACK mode 1, 'unit' = D = I), no second run;
 * for benchmarks and tests that measure what the two-strategy design buys.
 */
export function solveNonlinearWithScaling(problem: LsqProblem, opts: SolveOptions, scaling: Scaling): SolveResult {
  const P = prepare(problem, opts, DEFAULT_MAX_ITERATIONS);
  return solvePrepared(P, scaling);
}

export function solvePrepared(P: Prepared, only?: Scaling): SolveResult {
  const { n, q, free } = P;
  const m = Math.max(n, q);
  const x0 = new Float64Array(q);
  for (let k = 0; k < q; k++) x0[k] = P.theta0[free[k]];

  let best: RunResult;
  let info: RankInfo | null = null;
  if (q === 0) {
    const at = newPoint(P, m);
    at.ok = evaluate(P, P.theta0, at.r, at.A, m, at);
    const ok = at.ok;
    best = { x: x0, fnorm: ok ? norm2(at.r, 0, n) : NaN, termination: ok ? 'gradient' : 'non-finite', iterations: 0, gnorm: 0,
      message: ok ? 'every parameter is fixed: nothing to fit' : 'the model gives NaN or ±Infinity at the given parameter values', at, spare: at };
  } else {
    best = lmRun(P, x0, only ?? 'jacobian');
    if (!only && shouldRetry(P, best, (a) => (info = a))) {
      const second = lmRun(P, x0, 'unit');
      if (second.termination === 'cancelled' || second.termination === 'time-limit') {
        if (!(best.fnorm <= second.fnorm)) best = second;
        else best = { ...best, termination: second.termination, message: second.message };
      } else if (second.fnorm < best.fnorm || (!Number.isFinite(best.fnorm) && Number.isFinite(second.fnorm))) {
        best = second;
      }
    }
    if (CONVERGED.includes(best.termination) && P.refine) {
      const before = best.x;
      polish(P, best);
      if (best.x !== before) info = null;
    }
  }
  return finish(P, best, info);
}

type RankInfo = Pick<SolveResult, 'rank' | 'unidentifiable' | 'atBound'>;

function shouldRetry(P: Prepared, run: RunResult, keep?: (info: RankInfo) => void): boolean {
  if (run.termination === 'cancelled' || run.termination === 'time-limit' || run.termination === 'exact') return false;
  if (!CONVERGED.includes(run.termination)) return true;
  // a step-size stop away from a stationary point (scaled gradient not small) may be a stall of this scaling
  if (run.termination === 'step-size' && !(run.gnorm <= RETRY_GNORM)) return true;
  // converged, but at a point where the Jacobian has lost rank (a plateau such as exp(−b x) → 0)
  if (!run.at.ok) return true;
  const info = solutionInfo(P, fullTheta(P, run.x), run.at.A, Math.max(P.n, P.q));
  keep?.(info);
  return info.rank < P.q;
}

/** the result at run.x from the run's own evaluation there (run.at): the solution is never evaluated again */
function finish(P: Prepared, run: RunResult, known: RankInfo | null = null): SolveResult {
  const theta = fullTheta(P, run.x);
  const m = Math.max(P.n, P.q);
  const { r, f, J, ok } = run.at;
  const info: RankInfo = known ?? (ok ? solutionInfo(P, theta, run.at.A, m) : { rank: 0, unidentifiable: [], atBound: Array.from({ length: P.p }, (): 'min' | 'max' | null => null) });
  let termination = run.termination;
  let message = run.message;
  if (ok && CONVERGED.includes(termination) && info.rank < P.q) {
    termination = 'singular';
    message = `the Jacobian has rank ${info.rank} < ${P.q} free parameters at the solution: some parameters are not identifiable from these data`;
  }
  let sse = 0;
  for (let i = 0; i < P.n; i++) sse += r[i] * r[i];
  return {
    theta, termination, converged: CONVERGED.includes(termination), iterations: run.iterations, evaluations: P.evaluations,
    sse: ok ? sse : NaN, f, J, rank: info.rank, unidentifiable: info.unidentifiable, atBound: info.atBound, message,
  };
}

// ---------------------------------------------------------------- the LM iteration


function lmRun(P: Prepared, xStart: Float64Array, scaling: Scaling): RunResult {
  const { n, q } = P;
  const m = Math.max(n, q);
  const lo = new Float64Array(q);
  const hi = new Float64Array(q);
  for (let k = 0; k < q; k++) {
    lo[k] = P.lower[P.free[k]];
    hi[k] = P.upper[P.free[k]];
  }
  let x = Float64Array.from(xStart);
  const theta = fullTheta(P, x);
  // cur = the evaluation at x; nxt = the trial point (swapped on acceptance, never copied)
  let cur = newPoint(P, m);
  let nxt = newPoint(P, m);
  let fvec = cur.r;
  let A = cur.A;
  const done = (termination: Termination, message: string, iterations: number, fnorm: number, gnorm = NaN): RunResult => ({
    x, fnorm, termination, iterations, gnorm, message, at: cur, spare: nxt,
  });
  cur.ok = evaluate(P, theta, fvec, A, m, cur);
  if (!cur.ok) {
    return done('non-finite', 'the model or its derivatives give NaN or ±Infinity at the starting values: choose other starts or bounds', 0, NaN);
  }
  let fnorm = norm2(fvec, 0, n);
  const ynorm = norm2(weightedY(P), 0, n);
  const exactTol = EPS * ynorm;
  const diagAll = new Float64Array(q);
  const colnorm = new Float64Array(q);
  const g = new Float64Array(q);
  let delta = 0;
  let xnorm = 0;
  let par = 0;
  let iter = 0;
  let gnorm = NaN;
  const trial = new Float64Array(q);
  const wa3 = new Float64Array(q);
  const scratch: Scratch = { a: new Float64Array(m * q), wa: new Float64Array(m) };

  for (;;) {
    if (fnorm <= exactTol) return done('exact', 'the model fits the data exactly (residuals at rounding level)', iter, fnorm, 0);
    const stop = stopReason(P);
    if (stop) return done(stop, stop === 'cancelled' ? 'cancelled by the caller' : 'the time budget ran out before convergence', iter, fnorm, gnorm);
    if (iter >= P.maxIterations) {
      return done('iteration-limit', `no convergence after ${iter} iterations: raise maxIterations or give better starting values`, iter, fnorm, gnorm);
    }
    // column norms and gradient g = Aᵀ r of ½‖r‖²
    for (let j = 0; j < q; j++) {
      colnorm[j] = norm2(A, j * m, m);
      g[j] = dotAt(A, j * m, fvec, m);
    }
    if (iter === 0) {
      for (let j = 0; j < q; j++) diagAll[j] = scaling === 'unit' || colnorm[j] === 0 ? 1 : colnorm[j];
      xnorm = scaledNorm(diagAll, x);
      delta = xnorm === 0 ? FACTOR : FACTOR * xnorm;
    }
    // active set: on a bound with the descent direction pointing out of the box
    const activeMask = new Uint8Array(q);
    for (let j = 0; j < q; j++) if ((x[j] <= lo[j] && g[j] > 0) || (x[j] >= hi[j] && g[j] < 0)) activeMask[j] = 1;
    let sub = buildSub(A, m, fvec, inactive(activeMask), diagAll, scratch);
    // scaled gradient test (cosine of the angle between r and the columns of A), over the free directions
    gnorm = scaledGradient(sub, fnorm);
    if (sub.k === 0 || gnorm <= GTOL) {
      return done('gradient', sub.k === 0 ? 'every free parameter is held at a bound by the gradient' : 'the gradient is zero to working precision', iter, fnorm, gnorm);
    }
    if (scaling === 'jacobian') {
      for (let j = 0; j < q; j++) diagAll[j] = Math.max(diagAll[j], colnorm[j]);
      for (let t = 0; t < sub.k; t++) sub.diag[t] = diagAll[sub.idx[t]];
    }

    // inner loop: find an acceptable step
    for (;;) {
      const stop2 = stopReason(P);
      if (stop2) return done(stop2, stop2 === 'cancelled' ? 'cancelled by the caller' : 'the time budget ran out before convergence', iter, fnorm, gnorm);
      let step!: Float64Array;
      // a parameter on its bound whose LM step points outward joins the active set
      for (let guard = 0; guard <= q; guard++) {
        const res = lmpar(sub, delta, par);
        par = res.par;
        step = res.x;
        let blocked = false;
        for (let t = 0; t < sub.k; t++) {
          const j = sub.idx[t];
          const pj = -step[t];
          if ((pj < 0 && x[j] <= lo[j]) || (pj > 0 && x[j] >= hi[j])) {
            activeMask[j] = 1;
            blocked = true;
          }
        }
        if (!blocked) break;
        sub = buildSub(A, m, fvec, inactive(activeMask), diagAll, scratch);
        if (sub.k === 0) return done('gradient', 'every free parameter is held at a bound', iter, fnorm, gnorm);
      }
      // shorten the step to stay inside the box
      let alpha = 1;
      let hit = -1;
      let hitValue = 0;
      for (let t = 0; t < sub.k; t++) {
        const j = sub.idx[t];
        const pj = -step[t];
        if (pj < 0 && Number.isFinite(lo[j])) {
          const a = (lo[j] - x[j]) / pj;
          if (a < alpha) { alpha = a; hit = j; hitValue = lo[j]; }
        } else if (pj > 0 && Number.isFinite(hi[j])) {
          const a = (hi[j] - x[j]) / pj;
          if (a < alpha) { alpha = a; hit = j; hitValue = hi[j]; }
        }
      }
      alpha = Math.max(0, alpha);
      trial.set(x);
      let pnormLM = 0;
      for (let t = 0; t < sub.k; t++) {
        const j = sub.idx[t];
        trial[j] = x[j] - alpha * step[t];
        // rounding guard only: the shortened step is inside the box up to one ulp
        if (trial[j] < lo[j]) trial[j] = lo[j];
        if (trial[j] > hi[j]) trial[j] = hi[j];
        const d = sub.diag[t] * step[t];
        pnormLM += d * d;
      }
      pnormLM = Math.sqrt(pnormLM);
      if (hit >= 0) trial[hit] = hitValue;
      const pnorm = alpha * pnormLM;
      if (iter === 0) delta = Math.min(delta, pnorm);

      for (let k = 0; k < q; k++) theta[P.free[k]] = trial[k];
      const fvec1 = nxt.r;
      const ok = evaluate(P, theta, fvec1, nxt.A, m, nxt);
      const fnorm1 = ok ? norm2(fvec1, 0, n) : Infinity;
      // actual and predicted reductions (MINPACK), the latter for the shortened step α p
      // actred = (‖r‖² − ‖r₁‖²)/‖r‖² as Σ (r − r₁)(r + r₁): free of the cancellation of 1 − (‖r₁‖/‖r‖)² near the minimum
      let actred = -1;
      let prered = 0;
      let dirder = 0;
      let ratio = 0;
      if (ok) {
        if (0.1 * fnorm1 < fnorm) actred = diffOfSquares(fvec, fvec1, n) / fnorm / fnorm;
        wa3.fill(0, 0, sub.k);
        for (let j = 0; j < sub.k; j++) {
          const temp = step[sub.ipvt[j]];
          for (let i = 0; i <= j; i++) wa3[i] += sub.r[j * sub.k + i] * temp;
        }
        const temp1 = norm2(wa3, 0, sub.k) / fnorm;
        const temp2 = (Math.sqrt(par) * pnormLM) / fnorm;
        prered = alpha * (2 - alpha) * temp1 * temp1 + 2 * alpha * temp2 * temp2;
        dirder = -alpha * (temp1 * temp1 + temp2 * temp2);
        ratio = prered !== 0 ? actred / prered : 0;
      }
      if (!ok) {
        // reject explicitly and shrink the region
        delta = 0.25 * Math.min(delta, pnorm > 0 ? pnorm : delta);
        par = par > 0 ? par * 4 : par;
        if (delta <= XTOL * xnorm || delta <= DWARF) {
          return done('non-finite', 'every trial step leads to NaN or ±Infinity in the model or its derivatives: check the formula domain or add bounds', iter, fnorm, gnorm);
        }
        continue;
      }
      if (ratio <= 0.25) {
        let temp = actred >= 0 ? 0.5 : (0.5 * dirder) / (dirder + 0.5 * actred);
        if (0.1 * fnorm1 >= fnorm || temp < 0.1) temp = 0.1;
        // a step shortened at a bound says little about the region: shrink relative to the full LM step
        delta = temp * Math.min(delta, pnormLM / 0.1);
        par /= temp;
      } else if (par === 0 || ratio >= 0.75) {
        delta = alpha < 1 ? Math.max(delta, pnorm / 0.5) : pnorm / 0.5;
        par *= 0.5;
      }
      const accepted = ratio >= 1e-4;
      if (accepted) {
        x.set(trial);
        xnorm = scaledNorm(diagAll, x);
        nxt.ok = true;
        const t = cur; cur = nxt; nxt = t;
        fvec = cur.r;
        A = cur.A;
        fnorm = fnorm1;
        iter++;
        if (P.onIteration) P.onIteration(iter, fnorm * fnorm, fullTheta(P, x));
      }
      // convergence tests
      if (fnorm <= exactTol) return done('exact', 'the model fits the data exactly (residuals at rounding level)', iter, fnorm, 0);
      if (Math.abs(actred) <= FTOL && prered <= FTOL && 0.5 * ratio <= 1) {
        return done('relative-reduction', 'the relative reduction of the sum of squares is below 1e-15', iter, fnorm, gnorm);
      }
      if (delta <= XTOL * xnorm || delta <= DWARF) {
        return done('step-size', 'the relative step size is below 1e-15', iter, fnorm, gnorm);
      }
      if (accepted) break;
    }
  }
}

function inactive(mask: Uint8Array): number[] {
  const idx: number[] = [];
  for (let j = 0; j < mask.length; j++) if (!mask[j]) idx.push(j);
  return idx;
}

export type { SolveOptions };

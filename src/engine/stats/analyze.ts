// Everything a fitted model reports: estimates with SE from s²(JᵀWJ)⁻¹, t, p, Wald and profile-t intervals, fit
// statistics (R², information criteria after R's conventions), residual diagnostics, bands, predictions, inverse
// predictions, cross-validation and the problems found along the way (docs/problems.md).
import type { FitStats, ModelReport, ParamReport, PointsReport, Problem, ResidualTests } from '../report';
import type { LsqProblem } from '../solve/types';
import type { ModelAnalysisInput } from './api';
import { covarianceFromJacobian, leverage } from './covariance';
import { chi2Sf, normalQuantile, tQuantile, tTwoSidedP, normalSf } from './distributions';
import { informationCriteria, informationCriteriaKnownSigma } from './information';
import { durbinWatson, normalityTest } from './residualTests';
import { runsByPosition, type PositionRuns } from './runs';
import { profileIntervals } from './profile';
import { crossValidate, sortedOrder } from './crossval';
import { computeBand, computeInverse, computePrediction, predictionPoint, variableRange, type PredictionContext } from './predict';
import { fmtMessage as fmt } from '../../shared/numberFormat';
import { roleOf } from '../models/roles';
import { DEFAULTS } from '../spec/defaults';
import { mgsProject, mgsQr } from '../solve/linalg';
import { terminationAdvice } from '../terminations';

/** LsqProblem over the given data for a compiled formula. */
export function lsqProblem(input: Pick<ModelAnalysisInput, 'compiled' | 'X' | 'y' | 'w' | 'params'>): LsqProblem {
  const { compiled, X, y, w } = input;
  return {
    n: y.length,
    p: input.params.length,
    y,
    w: w ?? undefined,
    model: (theta, out, J) => (J ? compiled.evaluateWithJacobian(theta, X, out, J) : compiled.evaluate(theta, X, out)),
  };
}

/** true when the constant vector lies in the span of the free Jacobian columns (a linear model "with intercept"). */
export function hasConstantColumn(J: Float64Array, n: number, p: number, free: boolean[]): boolean {
  if (n === 0) return false;
  const cols: Float64Array[] = [];
  for (let j = 0; j < p; j++) if (free[j]) cols.push(Float64Array.from(J.subarray(j * n, (j + 1) * n)));
  // an orthonormal basis of the free columns (dependent ones left out), then the residual of projecting 1/√n onto it
  const kept = mgsQr(cols, n, { relTol: 1e-10, skipDependent: true }) ?? [];
  const basis = kept.map((a) => cols[a]);
  const one = new Float64Array(n).fill(1 / Math.sqrt(n));
  mgsProject(basis, n, one, 2);
  let r = 0;
  for (let i = 0; i < n; i++) r += one[i] * one[i];
  return Math.sqrt(r) < 1e-8;
}

const PROFILE_SECONDS: number = DEFAULTS.analysis.profileSeconds;
const CV_SECONDS: number = DEFAULTS.analysis.cvSeconds;

function emptyStats(n: number, dof: number, sse: number): FitStats {
  return {
    n, dof, sse,
    sigma: dof > 0 && Number.isFinite(sse) ? Math.sqrt(sse / dof) : null,
    rmse: n > 0 ? Math.sqrt(sse / n) : NaN,
    r2: null, adjR2: null, chi2: null, reducedChi2: null, logLik: null, aic: null, aicc: null, bic: null,
    cvRmse: null, cvFolds: null,
  };
}

/** Sort order of the rows by the first x variable (ties by row order). */
export function orderByX(X: Float64Array[], n: number): Int32Array {
  const x = X[0];
  if (x) return sortedOrder(x.length === n ? x : x.subarray(0, n));
  const idx = new Int32Array(n);
  for (let i = 0; i < n; i++) idx[i] = i;
  return idx;
}

/** max observations the residual tests expand data.count rows into (beyond it they use one residual per row) */
const MAX_EXPANDED = 1_000_000;

function identityOrder(n: number): Int32Array {
  const idx = new Int32Array(n);
  for (let i = 0; i < n; i++) idx[i] = i;
  return idx;
}

/** v in the given order, each row repeated count[i] times (the expanded observations), or once without counts */
function expandByCount(v: Float64Array, order: ArrayLike<number>, count: Float64Array | null): Float64Array {
  let total = 0;
  if (count) for (let t = 0; t < order.length; t++) total += count[order[t]];
  const expand = count !== null && total <= MAX_EXPANDED;
  const out = new Float64Array(expand ? total : order.length);
  let k = 0;
  for (let t = 0; t < order.length; t++) {
    const i = order[t];
    const m = expand ? count![i] : 1;
    for (let c = 0; c < m; c++) out[k++] = v[i];
  }
  return out;
}

function finiteOrNull(v: number): number | null {
  return Number.isFinite(v) ? v : null;
}

export function analyzeModel(input: ModelAnalysisInput): ModelReport {
  const { result: res, params, compiled, X, y, w } = input;
  const opts = input.options ?? {};
  const base: (string | number)[] = ['models', input.index];
  const problems: Problem[] = [];
  const n = y.length;
  const p = params.length;
  const free = input.fixed.map((f) => !f);
  const pFree = free.filter(Boolean).length;
  const theta = Float64Array.from(res.theta);
  const f = res.f;
  const J = res.J;
  // data.count (frequency weights): each row stands for count[i] identical observations; w then already includes the
  // counts (w = count × precision weight), wPrec is the precision weight of one observation, nObs the observations
  const count = input.count ?? null;
  const wPrec: Float64Array | null = count ? (input.precision ?? null) : w;
  let nObs = n;
  if (count) {
    nObs = 0;
    for (let i = 0; i < n; i++) nObs += count[i];
  }
  const weighted = wPrec !== null;
  const absolute = input.sigmaMode === 'absolute' && weighted;

  // residuals e = y − f, weighted residuals r = √w e (w with the counts: their squares sum to the expanded SSE) and
  // rObs = √wPrec e, the weighted residual of one observation
  const e = new Float64Array(n);
  const r = new Float64Array(n);
  const rObs = count ? new Float64Array(n) : r;
  let sse = 0;
  const badRows: number[] = [];
  for (let i = 0; i < n; i++) {
    e[i] = y[i] - f[i];
    r[i] = (w ? Math.sqrt(w[i]) : 1) * e[i];
    if (count) rObs[i] = (wPrec ? Math.sqrt(wPrec[i]) : 1) * e[i];
    if (!Number.isFinite(f[i])) badRows.push(input.rows[i]);
    sse += r[i] * r[i];
  }
  // a model linear in θ: the solver's SSE comes from the iteratively refined residual of the linear system, which is
  // more accurate than y − f(θ) summed term by term (NIST StRD Longley: 15 digits against 12); a fit whose residuals
  // are exactly zero stays exact
  if (input.linear && sse > 0 && Number.isFinite(res.sse) && res.sse >= 0) sse = res.sse;

  const report: ModelReport = {
    name: input.name,
    kind: input.kind,
    formula: input.formula,
    linear: input.linear,
    status: res.converged && badRows.length === 0 ? 'converged' : 'failed',
    termination: res.termination,
    iterations: res.iterations,
    paramOrder: params.slice(),
    params: {},
    covariance: null,
    correlation: null,
    stats: emptyStats(nObs, nObs - pFree, sse),
    residualTests: null,
    band: null,
    predictions: [],
    inverse: [],
    problems,
  };
  if (input.startValues && input.startSource) {
    const values: Record<string, number> = {};
    params.forEach((name, j) => (values[name] = input.startValues![j]));
    report.start = { values, source: input.startSource };
  }
  const points: PointsReport = {
    row: Array.from(input.rows as ArrayLike<number>),
    x: Object.fromEntries(input.variables.map((v, k) => [v, Array.from(X[k])])),
    y: Array.from(y),
    fitted: Array.from(f),
    residual: Array.from(e),
    standardized: new Array(n).fill(NaN),
    leverage: new Array(n).fill(NaN),
    cooks: new Array(n).fill(NaN),
  };
  if (weighted) points.weight = Array.from(wPrec!);
  if (count) points.count = Array.from(count);
  report.points = points;

  // ------------------------------------------------------------ failure: report what we have, no inference
  if (report.status === 'failed') {
    if (badRows.length > 0 || res.termination === 'non-finite') {
      const rowsText = badRows.length ? ` at data row${badRows.length > 1 ? 's' : ''} ${listRows(badRows)}` : '';
      problems.push({
        code: 'non-finite-values',
        severity: 'error',
        message:
          `${input.name}: the model gives a non-finite value (NaN or infinity)${rowsText}. ` +
          `The formula cannot be evaluated there with these parameter values (e.g. log or sqrt of a negative number, division by zero, overflow in exp). ` +
          `Try other start values, bounds that keep the parameters in the valid region (min/max), or exclude the rows concerned.`,
        path: base,
        ...(badRows.length ? { rows: badRows.slice(0, 100) } : {}),
      });
    }
    const singular = res.termination === 'singular' && res.unidentifiable.length > 0;
    // a plateau the data never reach: the solver chases the asymptote off to huge values (singular or no convergence)
    const plateau = badRows.length === 0 ? runawayAsymptote(input, theta, res.unidentifiable) : null;
    if (plateau) {
      problems.push(noPlateau(input.name, plateau, base));
    } else if (singular) {
      const names = res.unidentifiable.map((j) => params[j]);
      problems.push(rankDeficient(input.name, names, res.rank, pFree, base));
    }
    if (!res.converged && !singular && !plateau) {
      problems.push({
        code: 'no-convergence',
        severity: 'error',
        message:
          `${input.name} did not converge: the solver stopped with '${res.termination}' after ${res.iterations} iteration${res.iterations === 1 ? '' : 's'}` +
          `${res.message ? ` (${res.message})` : ''}. The estimates are not a least-squares solution, so no uncertainty is reported. ` +
          terminationAdvice(res.termination),
        path: base,
      });
    }
    for (let j = 0; j < p; j++) {
      report.params[params[j]] = { value: theta[j], se: null, t: null, p: null, ci: null, profileCi: null, fixed: input.fixed[j], atBound: res.atBound[j] ?? null };
    }
    report.predictions = input.predict.map((entry) => ({ x: entry, y: null, ci: null, pi: null, extrapolated: false }));
    report.inverse = input.solveFor.map((yv) => ({ y: yv, roots: [], extrapolated: false }));
    return report;
  }

  // a model linear in θ with a parameter on its bound: the profile is not the Wald quadratic any more (the bound is
  // kept while profiling), so it is computed like a nonlinear model's; otherwise profile-t equals Wald exactly
  const boundActive = params.some((_, j) => !input.fixed[j] && (res.atBound[j] ?? null) !== null);
  const waldIsProfile = input.linear && !boundActive;

  // ------------------------------------------------------------ covariance and parameters
  const covInfo0 = covarianceFromJacobian(J, n, p, w, free, 1);
  const rank = covInfo0.rank;
  const dof = nObs - rank;
  const s2 = dof > 0 ? sse / dof : NaN;
  const scale = absolute ? 1 : s2;
  const cov = new Float64Array(p * p);
  for (let k = 0; k < p * p; k++) cov[k] = covInfo0.cov[k] * scale;
  const unidentifiable = covInfo0.unidentifiable;
  const level = input.confidence;
  const qWald = absolute ? normalQuantile((1 + level) / 2) : dof > 0 ? tQuantile((1 + level) / 2, dof) : NaN;
  report.stats = emptyStats(nObs, dof, sse);

  const se = new Float64Array(p).fill(NaN);
  for (let j = 0; j < p; j++) {
    const name = params[j];
    const fixed = input.fixed[j];
    const pr: ParamReport = { value: theta[j], se: null, t: null, p: null, ci: null, profileCi: null, fixed, atBound: fixed ? null : res.atBound[j] ?? null };
    const v = cov[j * p + j];
    if (!fixed && Number.isFinite(v) && v >= 0) {
      se[j] = Math.sqrt(v);
      pr.se = se[j];
      if (se[j] > 0) {
        pr.t = theta[j] / se[j];
        pr.p = absolute ? Math.min(1, 2 * normalSf(Math.abs(pr.t))) : tTwoSidedP(pr.t, dof);
      }
      if (Number.isFinite(qWald)) {
        pr.ci = [theta[j] - qWald * se[j], theta[j] + qWald * se[j]];
        if (waldIsProfile) pr.profileCi = pr.ci.slice() as [number, number]; // linear models: profile-t equals Wald exactly
      }
    }
    report.params[name] = pr;
  }
  const covOut: (number | null)[][] = [];
  const corOut: (number | null)[][] = [];
  for (let a = 0; a < p; a++) {
    covOut.push([]);
    corOut.push([]);
    for (let b = 0; b < p; b++) {
      covOut[a].push(finiteOrNull(cov[a * p + b]));
      const c = cov[a * p + b] / Math.sqrt(cov[a * p + a] * cov[b * p + b]);
      corOut[a].push(a === b && Number.isFinite(c) ? 1 : finiteOrNull(Math.max(-1, Math.min(1, c))));
    }
  }
  report.covariance = covOut;
  report.correlation = corOut;

  // ------------------------------------------------------------ fit statistics
  const stats = report.stats;
  let sw = 0;
  let swy = 0;
  let swy2 = 0;
  let nPos = 0;
  let sumLogW = 0;
  for (let i = 0; i < n; i++) {
    const wi = w ? w[i] : 1;
    const ci = count ? count[i] : 1;
    sw += wi;
    swy += wi * y[i];
    swy2 += wi * y[i] * y[i];
    if (wi > 0) {
      nPos += ci;
      if (weighted) sumLogW += ci * Math.log(wPrec![i]);
    }
  }
  const uncentred = input.linear && !hasConstantColumn(J, n, p, free);
  const ybar = sw > 0 ? swy / sw : NaN;
  let sst = 0;
  for (let i = 0; i < n; i++) sst += (w ? w[i] : 1) * (y[i] - ybar) ** 2;
  const denom = uncentred ? swy2 : sst;
  if (denom > 0) {
    stats.r2 = 1 - sse / denom;
    if (dof > 0) stats.adjR2 = 1 - ((1 - stats.r2) * (nObs - (uncentred ? 0 : 1))) / dof;
  }
  if (uncentred) stats.r2Uncentred = true;
  if (weighted) {
    stats.chi2 = sse;
    stats.reducedChi2 = dof > 0 ? sse / dof : null;
    stats.chi2P = absolute && dof > 0 ? chi2Sf(sse, dof) : null;
  }
  const ic = absolute ? informationCriteriaKnownSigma(sse, nPos, pFree, sumLogW) : informationCriteria(sse, nPos, pFree, sumLogW);
  stats.logLik = ic.logLik;
  stats.aic = ic.aic;
  stats.aicc = ic.aicc;
  stats.bic = ic.bic;

  // ------------------------------------------------------------ points: leverage, standardized residuals, Cook's D
  // (with counts: the leverage of one of the row's identical observations, h/count, as in the expanded data)
  const h = leverage(J, n, p, w, free);
  if (count) for (let i = 0; i < n; i++) h[i] /= count[i];
  for (let i = 0; i < n; i++) {
    const hi = h[i];
    points.leverage[i] = hi;
    const denomS = Math.sqrt(scale * (1 - hi));
    points.standardized[i] = 1 - hi > 1e-12 && denomS > 0 ? rObs[i] / denomS : NaN;
    points.cooks[i] = 1 - hi > 1e-12 && scale > 0 && rank > 0 ? (rObs[i] * rObs[i] * hi) / (rank * scale * (1 - hi) * (1 - hi)) : NaN;
  }

  // ------------------------------------------------------------ residual tests (weighted residuals, ordered by x)
  const order = orderByX(X, n);
  const rOrdered = expandByCount(rObs, order, count);
  const rRows = count ? expandByCount(rObs, identityOrder(n), count) : r;
  const allZero = rOrdered.every((v) => Math.abs(v) <= 1e-14 * (Math.abs(y[0]) + 1));
  // replicates at the same x form one position (the sign of their mean residual); exact p for small counts
  // (with data.count the sign of Σ count·rObs over a position is the sign of the expanded observations' mean)
  const runs = allZero ? null : runsByPosition(count ? Float64Array.from(rObs, (v, i) => v * count[i]) : r, X, order);
  const normality = allZero ? null : normalityTest(rOrdered);
  const tests: ResidualTests = {
    runs: runs ? { runs: runs.runs, expected: runs.expected, z: runs.z, p: runs.p } : null,
    normality: normality ? { test: normality.test, statistic: normality.statistic, p: normality.p } : null,
    // Durbin–Watson is defined on the observations in the order they were taken: data row order (Durbin & Watson
    // 1950); patterns along x are the runs test's job
    durbinWatson: allZero ? null : durbinWatson(rRows),
  };
  report.residualTests = tests;

  // ------------------------------------------------------------ cross-validation
  if (opts.crossValidate !== false) {
    const cv = crossValidate({
      compiled, X, y, w, theta, lower: input.lower, upper: input.upper, fixed: input.fixed, linear: input.linear, order,
      maxIterations: input.solverOptions?.maxIterations,
      deadline: Date.now() + 1000 * (opts.cvSeconds ?? CV_SECONDS), shouldStop: input.shouldStop,
    });
    stats.cvRmse = cv.rmse;
    stats.cvFolds = cv.folds;
    if (cv.rmse === null && cv.reason === 'timeout') {
      problems.push({
        code: 'cv-incomplete',
        severity: 'info',
        message: `${input.name}: cross-validation did not finish within its time budget (${opts.cvSeconds ?? CV_SECONDS} s), so no cross-validated RMSE is reported. Fewer rows or a simpler model make it faster.`,
        path: base,
      });
    }
  }

  // ------------------------------------------------------------ profile-likelihood intervals (nonlinear, or bound active)
  const openProfile = new Set<number>();
  /** parameters whose profile interval was computed to the end (both sides found or shown not to exist) */
  const profiled = new Set<number>();
  // (an exact fit, s = 0, has no profile to walk: its intervals are degenerate and profileCi stays null)
  if (!waldIsProfile && opts.profile !== false && dof > 0 && Number.isFinite(qWald) && scale > 0) {
    const seconds = opts.profileSeconds ?? PROFILE_SECONDS;
    const prof = profileIntervals({
      problem: lsqProblem(input), theta, lower: input.lower, upper: input.upper, fixed: input.fixed,
      sseHat: sse, scale, q: qWald, se, maxIterations: DEFAULTS.analysis.profileIterations,
      deadline: Date.now() + 1000 * seconds, shouldStop: input.shouldStop,
    });
    const timedOut: string[] = [];
    prof.ci.forEach((b, j) => {
      if (!b) return;
      report.params[params[j]].profileCi = [b[0].value, b[1].value];
      if (b[0].status === 'timeout' || b[1].status === 'timeout') timedOut.push(params[j]);
      else {
        profiled.add(j);
        if (b[0].value === null || b[1].value === null) openProfile.add(j);
      }
    });
    if (timedOut.length) {
      problems.push({
        code: 'profile-incomplete',
        severity: 'info',
        message:
          `${input.name}: the profile-likelihood interval of ${quoteList(timedOut)} was not finished within the ${seconds} s budget, so those bounds are null (not computed). ` +
          `The Wald interval (ci) is still reported; a model with fewer parameters or fewer rows profiles faster.`,
        path: base,
      });
    }
  }

  // ------------------------------------------------------------ band, predictions, inverse
  const pctx: PredictionContext = { compiled, theta, cov, free, q: qWald, scale, X, w: wPrec, predictWeight: input.predictWeight };
  if (input.variables.length === 1) report.band = computeBand(pctx, input.variables[0], opts.bandPoints ?? DEFAULTS.analysis.bandPoints);
  const ranges = variableRange(X);
  input.predict.forEach((entry, k) => {
    const pt = predictionPoint(entry, input.variables);
    if ('error' in pt) {
      report.predictions.push({ x: entry, y: null, ci: null, pi: null, extrapolated: false });
      problems.push({
        code: 'prediction-invalid',
        severity: 'warning',
        message: `predict[${k}] ${pt.error}, so ${input.name} cannot be evaluated there.`,
        path: ['predict', k],
      });
      return;
    }
    const pr = computePrediction(pctx, entry, pt.x);
    report.predictions.push(pr);
    if (pr.extrapolated) {
      problems.push({
        code: 'extrapolation',
        severity: 'warning',
        message:
          `${input.name}: the prediction at ${describePoint(entry)} lies outside the data range (${describeRanges(input.variables, ranges)}). ` +
          `Its intervals assume the model still holds there, which the data cannot confirm; treat it with care or collect data that cover it.`,
        path: ['predict', k],
      });
    }
  });
  input.solveFor.forEach((yv, k) => {
    if (input.variables.length !== 1) {
      report.inverse.push({ y: yv, roots: [], extrapolated: false });
      problems.push({
        code: 'inverse-no-root',
        severity: 'warning',
        message: `${input.name} has several x variables (${input.variables.join(', ')}); inverse prediction (the back-calculated x at y = ${fmt(yv)}) needs a single x variable.`,
        path: ['solveFor', k],
      });
      return;
    }
    const inv = computeInverse(pctx, yv);
    report.inverse.push(inv);
    const [lo, hi] = ranges[0];
    if (inv.flat)
      problems.push({
        code: 'inverse-flat',
        severity: 'warning',
        message: `${input.name}: the curve is flat at y = ${fmt(yv)} over [${fmt(inv.flat[0])}, ${fmt(inv.flat[1])}], so no single x reads off there — solve for a value the curve crosses, or fit a model that changes with ${input.variables[0]}.`,
        path: ['solveFor', k],
      });
    if (inv.moreRoots)
      problems.push({
        code: 'inverse-many-roots',
        severity: 'warning',
        message: `${input.name} crosses y = ${fmt(yv)} ${inv.roots.length + inv.moreRoots} times; the first ${inv.roots.length} are listed (the limit per value) — a curve that oscillates this much is rarely a usable calibration.`,
        path: ['solveFor', k],
      });
    if (inv.flat && inv.roots.length === 0) {
      // said above
    } else if (inv.roots.length === 0) {
      problems.push({
        code: 'inverse-no-root',
        severity: 'warning',
        message:
          `${input.name} does not reach y = ${fmt(yv)} within or near the data range (${input.variables[0]} from ${fmt(lo)} to ${fmt(hi)}), so no x is back-calculated for it (inverse prediction). ` +
          `Check that the value is inside the range of the curve (fitted ${fmt(minOf(f))} to ${fmt(maxOf(f))}) and in the same units as y.`,
        path: ['solveFor', k],
      });
    }
    const open = inv.roots.filter((rt) => rt.interval[0] === null || rt.interval[1] === null);
    if (open.length > 0 && Number.isFinite(qWald)) {
      const sides = open.map((rt) => `${input.variables[0]} = ${fmt(rt.x)}: ${rt.interval[0] === null && rt.interval[1] === null ? 'both limits' : rt.interval[0] === null ? 'the lower limit' : 'the upper limit'}`);
      problems.push({
        code: 'inverse-unbounded',
        severity: 'warning',
        message:
          `${input.name}: the ${Math.round(100 * input.confidence)}% interval for x at y = ${fmt(yv)} does not close (${sides.join('; ')} does not exist, so it is null): ` +
          `the prediction interval contains y = ${fmt(yv)} however far x goes on that side, because the curve changes too little there compared with the scatter ` +
          `(for a straight line: the slope is not significantly different from 0 at this confidence). More data, less scatter or standards further out make the interval finite.`,
        path: ['solveFor', k],
      });
    }
    if (inv.roots.length > 0 && inv.extrapolated) {
      problems.push({
        code: 'inverse-extrapolation',
        severity: 'warning',
        message:
          `${input.name} reaches y = ${fmt(yv)} only outside the data range (at ${input.variables[0]} = ${inv.roots.map((rt) => fmt(rt.x)).join(', ')}; data from ${fmt(lo)} to ${fmt(hi)}). ` +
          `The back-calculated x is extrapolated from the model's shape; extend the measured range (e.g. add standards) to read it reliably.`,
        path: ['solveFor', k],
      });
    }
  });

  // ------------------------------------------------------------ problems
  detectProblems(input, report, { rank, dof, unidentifiable, se, openProfile, profiled, h, n, pFree, runs });
  return report;
}

function rankDeficient(name: string, names: string[], rank: number, pFree: number, base: (string | number)[]): Problem {
  return {
    code: 'rank-deficient',
    severity: 'error',
    message:
      `${name}: the fit is singular (rank ${rank} of ${pFree} free parameters) — ${quoteList(names)} cannot be determined from these data, ` +
      `because a change in ${names.length > 1 ? 'them' : 'it'} can be offset exactly by the other parameters or the data do not vary enough. ` +
      `Their standard errors are not reported. Fix ${names.length > 1 ? 'one of them' : 'it'} ("fixed": true with a start), remove a redundant term, or add data that vary more.`,
    path: names.length === 1 ? [...base, 'params', names[0]] : base,
  };
}

/** How far beyond the data an asymptote has to run (in spans of y) to count as "not reached" in a failed fit. */
const RUNAWAY_SPANS = 10;

interface Runaway {
  param: string;
  value: number;
  side: 'upper' | 'lower';
}

/**
 * An asymptote of a built-in that the data do not determine: unidentifiable at the solution, or run off more than
 * RUNAWAY_SPANS ranges of y beyond the data (common practice: a plateau far outside the data is not measured by them).
 */
function runawayAsymptote(input: ModelAnalysisInput, theta: Float64Array, unidentifiable: number[]): Runaway | null {
  if (input.kind !== 'builtin') return null;
  const y = input.y;
  const ylo = minOf(y);
  const yhi = maxOf(y);
  const span = yhi - ylo;
  for (let j = 0; j < input.params.length; j++) {
    if (input.fixed[j] || roleOf(input.builtin, input.params[j]) !== 'asymptote') continue;
    const a = theta[j];
    const away = !Number.isFinite(a) || (span > 0 && (a > yhi + RUNAWAY_SPANS * span || a < ylo - RUNAWAY_SPANS * span));
    if (away || unidentifiable.includes(j)) return { param: input.params[j], value: a, side: a >= (ylo + yhi) / 2 ? 'upper' : 'lower' };
  }
  return null;
}

function noPlateau(name: string, r: Runaway, base: (string | number)[]): Problem {
  return {
    code: 'no-plateau',
    severity: 'error',
    message:
      `${name}: the data do not reach the ${r.side} plateau: ${r.param} is not determined (the fit ran it to ${fmt(r.value)}, far beyond the data, and could not settle). ` +
      `Bound it (min/max in params), fix it ("fixed": true with a start), or fit data that reach the plateau; a model without that plateau (e.g. an exponential) may describe these data.`,
    path: [...base, 'params', r.param],
  };
}

function openSide(pr: ParamReport): string {
  const ci = pr.profileCi!;
  return ci[0] === null && ci[1] === null ? 'on either side' : ci[0] === null ? 'below' : 'above';
}

/** An asymptote more than one range of y beyond the data: the plateau is extrapolated, not measured (common practice). */
function beyondData(y: ArrayLike<number>, a: number): boolean {
  const lo = minOf(y);
  const hi = maxOf(y);
  const span = hi - lo;
  return span > 0 && (a > hi + span || a < lo - span);
}

function asymptoteNotReached(input: ModelAnalysisInput, param: string, pr: ParamReport, open: boolean): Problem {
  const lo = minOf(input.y);
  const hi = maxOf(input.y);
  const side = pr.value >= (lo + hi) / 2 ? 'upper' : 'lower';
  const why = open
    ? `is not determined — its profile-likelihood interval does not close ${openSide(pr)} the estimate`
    : `lies beyond the data (y from ${fmt(lo)} to ${fmt(hi)}), so it is extrapolated from the curve's shape, not measured`;
  return {
    code: 'asymptote-not-reached',
    severity: 'warning',
    message:
      `${input.name}: the data do not reach the ${side} plateau: ${param} = ${fmt(pr.value)} ${why}. ` +
      `Bound it, fix it, or fit data that reach the plateau.`,
    path: ['models', input.index, 'params', param],
  };
}

function rateNotDetermined(input: ModelAnalysisInput, param: string, pr: ParamReport): Problem {
  return {
    code: 'rate-not-determined',
    severity: 'warning',
    message:
      `${input.name}: the rate ${param} = ${fmt(pr.value)} is not determined — its profile-likelihood interval does not close ${openSide(pr)} the estimate, so the data do not show how fast the curve changes there ` +
      `(too few points on the rising or falling part). Add data where the curve changes, bound or fix ${param}, or use a simpler model.`,
    path: ['models', input.index, 'params', param],
  };
}

function minOf(a: ArrayLike<number>): number {
  let m = Infinity;
  for (let i = 0; i < a.length; i++) if (a[i] < m) m = a[i];
  return m;
}

function maxOf(a: ArrayLike<number>): number {
  let m = -Infinity;
  for (let i = 0; i < a.length; i++) if (a[i] > m) m = a[i];
  return m;
}

/** Most rows an influential-points problem names (the largest Cook's distances). */
export const MAX_INFLUENTIAL_ROWS = 100;

export function listRows(rows: number[], max = 10): string {
  const shown = rows.slice(0, max).join(', ');
  return rows.length > max ? `${shown} and ${rows.length - max} more` : shown;
}

function quoteList(names: string[]): string {
  return names.map((s) => `'${s}'`).join(', ');
}

function describePoint(entry: number | Record<string, number>): string {
  return typeof entry === 'number' ? `x = ${fmt(entry)}` : Object.entries(entry).map(([k, v]) => `${k} = ${fmt(v)}`).join(', ');
}

function describeRanges(vars: string[], ranges: [number, number][]): string {
  return vars.map((v, k) => `${v} from ${fmt(ranges[k][0])} to ${fmt(ranges[k][1])}`).join('; ');
}

interface Facts {
  rank: number;
  dof: number;
  unidentifiable: number[];
  se: Float64Array;
  openProfile: Set<number>;
  profiled: Set<number>;
  h: Float64Array;
  n: number;
  pFree: number;
  runs: PositionRuns | null;
}

/**
 * The ratio cvRmse / rmse expected under a correct model: for least squares the held-out residual of row i is
 * e_i/(1 − h_i) (exact when each row is left out alone, and close for k-fold folds spread over x), so
 * E[Σ e_cv²] = σ² Σ 1/(1 − h_i) while E[SSE] = σ²(n − p) (Allen 1974, PRESS). Nonlinear models use the leverages of the
 * linearised model. Infinity when a leverage is 1 (a row that alone determines a parameter) or n ≤ p.
 */
export function expectedCvRatio(h: ArrayLike<number>, rank: number): number {
  const n = h.length;
  if (!(n > rank)) return Infinity;
  let s = 0;
  for (let i = 0; i < n; i++) {
    if (!(h[i] < 1 - 1e-9)) return Infinity;
    s += 1 / (1 - h[i]);
  }
  return Math.sqrt(s / (n - rank));
}

function detectProblems(input: ModelAnalysisInput, report: ModelReport, k: Facts): void {
  const { params, thresholds: th } = input;
  const problems = report.problems;
  const base: (string | number)[] = ['models', input.index];
  const name = input.name;
  const p = params.length;

  if (k.unidentifiable.length > 0) {
    const plateau = runawayAsymptote(input, Float64Array.from(report.paramOrder, (q) => report.params[q].value), k.unidentifiable);
    problems.push(plateau ? noPlateau(name, plateau, base) : rankDeficient(name, k.unidentifiable.map((j) => params[j]), k.rank, k.pFree, base));
  }

  for (let j = 0; j < p; j++) {
    const pr = report.params[params[j]];
    if (pr.fixed) continue;
    if (pr.atBound) {
      const bound = pr.atBound === 'min' ? input.lower[j] : input.upper[j];
      problems.push({
        code: 'param-at-bound',
        severity: 'warning',
        message:
          `${name}: ${params[j]} = ${fmt(pr.value)} sits on its ${pr.atBound} bound (${fmt(bound)}). The best fit may lie beyond the bound, ` +
          `and standard errors and intervals computed at a bound are not reliable. Check whether the bound is physically required; if not, relax it.`,
        path: [...base, 'params', params[j]],
      });
    }
    // judged on the interval, not on SE/|estimate| (zero is an ordinary value for an intercept or a blank-corrected
    // asymptote): the profile interval does not close on a side. Models without a finished profile (profiling off or
    // out of time) fall back to the Wald interval reaching relativeSe × |estimate| on both sides of a nonlinear
    // parameter; linear models have exact intervals that always close, so they never get this problem.
    const open = k.openProfile.has(j);
    const rel = pr.se !== null && pr.value !== 0 ? pr.se / Math.abs(pr.value) : null;
    const fallback = !input.linear && !k.profiled.has(j) && rel !== null && rel > th.relativeSe;
    const role = roleOf(input.builtin, params[j]);
    if (open && role) {
      problems.push(role === 'asymptote' ? asymptoteNotReached(input, params[j], pr, true) : rateNotDetermined(input, params[j], pr));
      continue;
    }
    if (role === 'asymptote' && beyondData(input.y, pr.value)) {
      problems.push(asymptoteNotReached(input, params[j], pr, false));
      continue;
    }
    if (open || fallback) {
      let why: string;
      if (open) {
        const ci = pr.profileCi!;
        const side = ci[0] === null && ci[1] === null ? 'on either side of' : ci[0] === null ? 'below' : 'above';
        why = `its ${fmt(100 * input.confidence, 3)}% profile-likelihood interval does not close ${side} the estimate (no value there is ruled out by the data)`;
      } else {
        why = `its standard error is ${fmt(100 * rel!, 3)}% of the estimate (above ${fmt(100 * th.relativeSe, 3)}%; no profile interval was computed to check)`;
      }
      problems.push({
        code: 'poorly-determined',
        severity: 'warning',
        message:
          `${name}: ${params[j]} = ${fmt(pr.value)} is poorly determined — ${why}. The data say little about its value; ` +
          `consider fixing it, bounding it, a simpler model, or data over a range where it matters (e.g. further along the curve).`,
        path: [...base, 'params', params[j]],
      });
    }
  }

  // pairwise correlation of the estimates: one problem per model, strongest pair first
  const cor = report.correlation;
  if (cor) {
    const pairs: { a: number; b: number; r: number }[] = [];
    for (let a = 0; a < p; a++) {
      for (let b = a + 1; b < p; b++) {
        const c = cor[a][b];
        if (c !== null && Math.abs(c) > th.paramCorrelation) pairs.push({ a, b, r: c });
      }
    }
    if (pairs.length > 0) {
      pairs.sort((u, v) => Math.abs(v.r) - Math.abs(u.r));
      const top = pairs[0];
      const listed = pairs.slice(0, 4).map((q) => `${params[q.a]} and ${params[q.b]} (r = ${q.r.toFixed(4)})`);
      const more = pairs.length > 4 ? ` and ${pairs.length - 4} more pair${pairs.length - 4 === 1 ? '' : 's'}` : '';
      problems.push({
        code: 'param-correlation',
        severity: 'info',
        message:
          `${name}: the estimates of ${listed.join(', ')}${more} are correlated beyond ±${th.paramCorrelation}. ` +
          `The data mainly determine a combination of ${pairs.length === 1 ? 'the two' : 'each pair'}, so each alone is uncertain and sensitive to the start. ` +
          `Reparametrise (e.g. centre x), fix one of them, or collect data that separate their effects.`,
        path: [...base, 'params', params[top.a]],
      });
    }
  }

  // overfitting
  let paramsFired = false;
  if (k.dof < th.minDof) {
    problems.push({
      code: 'overfit-dof',
      severity: 'warning',
      message:
        `${name} leaves ${k.dof} residual degree${k.dof === 1 ? '' : 's'} of freedom (${k.n} rows, ${k.rank} estimated parameters; fewer than ${th.minDof} is flagged). ` +
        `With so few, the curve follows the noise and the uncertainty estimates are unreliable or undefined. Use a model with fewer parameters or add data.`,
      path: base,
    });
  }
  if (k.pFree > k.n * th.paramsPerPoint) {
    paramsFired = true;
    problems.push({
      code: 'overfit-params',
      severity: 'warning',
      message:
        `${name} estimates ${k.pFree} parameters from ${k.n} rows (more than ${fmt(th.paramsPerPoint, 3)} per row). ` +
        `Such a flexible model can fit noise rather than the trend. Compare with a simpler model or add data.`,
      path: base,
    });
  }
  if (input.kind === 'polynomial' && input.degree !== undefined && !paramsFired) {
    // distinct x values, counted only as far as the decision needs (the flag fires when distinct < need)
    const need = (input.degree + 1) / th.paramsPerPoint;
    const seen = new Set<number>();
    for (const v of input.X[0] ?? []) {
      seen.add(v);
      if (seen.size >= need) break;
    }
    const distinct = seen.size;
    if (input.degree + 1 > distinct * th.paramsPerPoint) {
      problems.push({
        code: 'overfit-degree',
        severity: 'warning',
        message:
          `${name}: a polynomial of degree ${input.degree} is high for ${distinct} distinct x value${distinct === 1 ? '' : 's'} ` +
          `(${input.degree + 1} coefficients; more than ${fmt(th.paramsPerPoint, 3)} per distinct x is flagged). It will wiggle between the x values and extrapolate badly. Try a lower degree or a model with a mechanism.`,
        path: [...base, 'polynomial'],
      });
    }
  }
  const st = report.stats;
  // the expected ratio comes from the leverages; not repeated when overfit-params already fires (at p > n/3 the
  // refits of a correct nonlinear model on so few rows are unstable, so the ratio says nothing more)
  const cvExpected = paramsFired ? Infinity : expectedCvRatio(k.h, k.rank);
  if (st.cvRmse !== null && st.rmse > 0 && Number.isFinite(cvExpected) && st.cvRmse > th.cvRatio * cvExpected * st.rmse) {
    problems.push({
      code: 'overfit-cv',
      severity: 'warning',
      message:
        `${name}: the cross-validated RMSE (${fmt(st.cvRmse)}, ${st.cvFolds}-fold) is ${fmt(st.cvRmse / st.rmse, 3)} times the in-sample RMSE (${fmt(st.rmse)}), ` +
        `where a correct model on these x values gives about ${fmt(cvExpected, 3)} times (from the leverages; flagged above ${fmt(th.cvRatio * cvExpected, 3)} = cvRatio ${th.cvRatio} × expected). ` +
        `The model predicts left-out rows much worse than the rows it was fitted to — a sign of overfitting or of a few rows driving the fit. Try a simpler model, and look at the influential points.`,
      path: base,
    });
  }

  // residual structure
  const tests = report.residualTests;
  const runs = k.runs;
  if (runs && runs.p < th.runsP) {
    const few = runs.runs < runs.expected;
    const where = runs.replicatedRows > 0 ? `the ${runs.positions} x positions (replicates at the same x counted once, by the sign of their mean residual)` : `the residuals ordered by x`;
    problems.push({
      code: 'systematic-residuals',
      severity: 'warning',
      message:
        `${name}: ${where} have ${runs.runs} runs of the same sign where about ${fmt(runs.expected, 3)} are expected by chance (${runs.exact ? 'exact' : 'normal-approximation'} runs test p = ${fmt(runs.p, 2)}, below ${th.runsP}). ` +
        (few
          ? `Long stretches above and below the curve mean the model misses a systematic pattern in the data. Look at the residual plot and try a model of a different shape.`
          : `The signs alternate more than chance allows, which suggests correlated measurements or a periodic effect. Look at the residual plot.`),
      path: base,
    });
  }
  if (tests?.normality && tests.normality.p < th.normalityP) {
    problems.push({
      code: 'non-normal-residuals',
      severity: 'info',
      message:
        `${name}: the residuals are far from normal (${tests.normality.test === 'shapiro-wilk' ? 'Shapiro–Wilk W' : "D'Agostino–Pearson K²"} = ${fmt(tests.normality.statistic, 4)}, p = ${fmt(tests.normality.p, 2)}, below ${th.normalityP}). ` +
        `The p-values and intervals assume normal errors. Check for outliers, a skewed measurement scale (e.g. fit log(y)), or weights that vary with y.`,
      path: base,
    });
  }
  const pts = report.points!;
  const cut = th.cooksFactor / k.n;
  const flagged: { row: number; d: number }[] = [];
  for (let i = 0; i < k.n; i++) {
    const d = pts.cooks[i];
    if (d > cut || (Number.isNaN(d) && k.h[i] >= 1 - 1e-12 && k.dof > 0)) flagged.push({ row: pts.row[i], d: Number.isNaN(d) ? Infinity : d });
  }
  // on big data thousands of rows can pass 4/n: keep the most influential ones (a problem must stay readable)
  const total = flagged.length;
  const influential = (total > MAX_INFLUENTIAL_ROWS ? [...flagged].sort((a, b) => b.d - a.d || a.row - b.row).slice(0, MAX_INFLUENTIAL_ROWS) : flagged)
    .map((f) => f.row)
    .sort((a, b) => a - b);
  if (influential.length > 0 && k.dof > 0) {
    const which = total > influential.length ? `the ${influential.length} most influential are data rows` : `data row${influential.length === 1 ? '' : 's'}`;
    problems.push({
      code: 'influential-points',
      severity: 'info',
      message:
        `${name}: ${total} point${total === 1 ? ' has' : 's have'} a large influence on the fit (Cook's distance above ${fmt(th.cooksFactor, 3)}/n = ${fmt(cut, 3)}): ${which} ${listRows(influential)}. ` +
        `Removing ${total === 1 ? 'it' : 'one of them'} would move the estimates noticeably. Check these rows for errors; if one is a genuine mistake, exclude it with a reason in data.exclude.`,
      path: base,
      rows: influential,
    });
  }
}

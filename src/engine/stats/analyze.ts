// Everything a fitted model reports: estimates with SE from s²(JᵀWJ)⁻¹, t, p, Wald and profile-t intervals, fit
// statistics (R², information criteria after R's conventions), residual diagnostics, bands, predictions, inverse
// predictions, cross-validation and the problems found along the way (docs/problems.md; detected in
// problemsDetect.ts; the fit statistics in fitStats.ts, predictions in predictReport.ts, the data helpers in
// analysisData.ts).
import type { ModelReport, ParamReport, PointsReport, Problem, ResidualTests } from '../report';
import { blocksOf } from '../solve/block';
import type { ModelAnalysisInput } from './api';
import { covarianceFromJacobian, leverage } from './covariance';
import { normalQuantile, tQuantile, tTwoSidedP, normalSf } from './distributions';
import { durbinWatson, normalityTest } from './residualTests';
import { runsByPosition } from './runs';
import { profileIntervals } from './profile';
import { crossValidate } from './crossval';
import type { PredictionContext } from './predict';
import { groupTargets, predictionsAndInverse } from './predictReport';
import { DEFAULTS } from '../spec/defaults';
import { emptyStats, fitStatistics } from './fitStats';
import { expandByCount, identityOrder, lsqProblem, orderByX } from './analysisData';
import { quoteList } from './problemText';
import { detectProblems, failureProblems } from './problemsDetect';

const PROFILE_SECONDS: number = DEFAULTS.analysis.profileSeconds;
const CV_SECONDS: number = DEFAULTS.analysis.cvSeconds;



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
    problems.push(...failureProblems(input, theta, badRows, pFree));
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
  // a joint fit (solve/block.ts): covariance and hat values block by block
  const blocks = blocksOf(compiled, X);
  const covInfo0 = covarianceFromJacobian(J, n, p, w, free, 1, blocks);
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
  fitStatistics(report.stats, { y, w, count, wPrec, weighted, absolute, linear: input.linear, J, n, p, free, sse, dof, nObs, pFree });

  // ------------------------------------------------------------ points: leverage, standardized residuals, Cook's D
  // (with counts: the leverage of one of the row's identical observations, h/count, as in the expanded data)
  const h = leverage(J, n, p, w, free, blocks);
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
      // a joint fit: no time guard (10 block refits of bounded iterations), so the result does not depend on the machine
      deadline: blocks ? Infinity : Date.now() + 1000 * (opts.cvSeconds ?? CV_SECONDS), shouldStop: input.shouldStop,
    });
    report.stats.cvRmse = cv.rmse;
    report.stats.cvFolds = cv.folds;
    report.stats.cvMethod = cv.method;
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
    // a joint fit is profiled within a budget of work (its many parameters would otherwise meet the time guard, and
    // the report would depend on the machine's speed)
    const maxWork = blocks ? DEFAULTS.analysis.jointProfileWork : undefined;
    const prof = profileIntervals({
      problem: lsqProblem(input), theta, lower: input.lower, upper: input.upper, fixed: input.fixed,
      sseHat: sse, scale, q: qWald, se, maxIterations: DEFAULTS.analysis.profileIterations,
      deadline: blocks ? Infinity : Date.now() + 1000 * seconds, maxWork, shouldStop: input.shouldStop,
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
          (maxWork !== undefined
            ? `${input.name}: the profile-likelihood interval of ${quoteList(timedOut)} was not computed within the joint fit's work budget (${maxWork.toExponential(0)} model evaluations × rows; shared parameters are profiled first), so those bounds are null. `
            : `${input.name}: the profile-likelihood interval of ${quoteList(timedOut)} was not finished within the ${seconds} s budget, so those bounds are null (not computed). `) +
          `The Wald interval (ci) is still reported; a model with fewer parameters or fewer rows profiles faster.`,
        path: base,
      });
    }
  }

  // ------------------------------------------------------------ band, predictions, inverse
  const pctx: PredictionContext = { compiled, theta, cov, free, q: qWald, scale, X, w: wPrec, predictWeight: input.predictWeight };
  // a joint fit: predictions and inverse predictions for each group, at its own parameters (full covariance)
  if (input.jointGroups)
    for (const t of groupTargets(pctx, input.jointGroups, input.name, f))
      predictionsAndInverse({ ...input, name: t.who, variables: t.variables, X: t.pctx.X }, report, t.pctx, 0, t.f, qWald, t.group);
  else predictionsAndInverse(input, report, pctx, opts.bandPoints ?? DEFAULTS.analysis.bandPoints, f, qWald);

  // ------------------------------------------------------------ problems
  detectProblems(input, report, { rank, dof, unidentifiable, se, openProfile, profiled, h, n, pFree, runs });
  return report;
}

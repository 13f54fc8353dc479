// A robust-loss fit in the report: IRLS on top of the model's least-squares fit (solve/irls.ts), then the sandwich
// covariance, Wald intervals, band and predictions from it, the loss weights per point and the down-weighted rows.
import type { ModelReport, Problem, RobustReport } from '../report';
import type { SolveResult } from '../solve/types';
import { irls, sandwichCovariance, type LossName, type RobustResult } from '../solve/irls';
import type { ModelAnalysisInput } from './api';
import { normalQuantile, normalSf, tQuantile, tTwoSidedP } from './distributions';
import { computeBand, computeInverse, computePrediction, predictionPoint, type PredictionContext } from './predict';
import { fmtMessage as fmt } from '../../shared/numberFormat';
import { DEFAULTS } from '../spec/defaults';
import { leverage } from './covariance';

export interface RobustData {
  y: Float64Array;
  /** fit weights: precision × count (null when neither) */
  w: Float64Array | null;
  count: Float64Array | null;
  /** precision weights alone (1/σ² or data.weight), null when none */
  precision: Float64Array | null;
}

export interface RobustFit {
  rr: RobustResult;
  /** the weights of the final least-squares step: fit weights × loss weights */
  w: Float64Array;
  result: SolveResult;
}

/**
 * IRLS for one model: `ls` is its least-squares fit, `refit(w, θ0)` a weighted refit with the model's bounds.
 * Returns the final fit and the weights it was solved with.
 */
export function robustFit(
  loss: Exclude<LossName, 'squares'>, lossScale: number | 'mad' | 'mad-iterated', d: RobustData, ls: SolveResult,
  refit: (w: Float64Array, theta0: Float64Array) => SolveResult, fixed: boolean[],
): RobustFit {
  const prec = d.count ? d.precision : d.w;
  const sw = prec ? Float64Array.from(prec, Math.sqrt) : null;
  const combined = (u: Float64Array): Float64Array => Float64Array.from(u, (ui, i) => ui * (d.w ? d.w[i] : 1));
  const h = lossScale === 'mad' ? leverage(ls.J, d.y.length, fixed.length, d.w, fixed.map((f) => !f)) : null;
  const rr = irls(ls, (u, theta0) => refit(combined(u), theta0), { loss, scale: lossScale, sw, count: d.count, y: d.y, leverage: h });
  return { rr, w: combined(rr.u), result: rr.result };
}

/**
 * Rewrites a report analysed at the final IRLS weights: sandwich covariance and Wald intervals (no profile
 * intervals: the robust objective is not a likelihood), band and predictions from that covariance with the robust
 * scale s² as the variance of a new observation, the loss weights per point, `robust` and the down-weighted rows.
 */
export function applyRobust(report: ModelReport, input: ModelAnalysisInput, fit: RobustFit, d: RobustData, loss: RobustReport['loss'], scaleGiven: boolean): void {
  const { rr } = fit;
  const n = d.y.length;
  const p = input.params.length;
  const free = input.fixed.map((f) => !f);
  const prec = d.count ? d.precision : d.w;
  const sw = prec ? Float64Array.from(prec, Math.sqrt) : null;
  const base = ['models', input.index];
  const u = rr.u;
  const rows = Array.from(input.rows as ArrayLike<number>);
  const cut = input.thresholds.lossWeight;
  const down: number[] = [];
  for (let i = 0; i < n; i++) if (u[i] < cut) down.push(i);
  const sorted = Array.from(u).sort((a, b) => a - b);
  const median = n === 0 ? NaN : n % 2 ? sorted[(n - 1) / 2] : (sorted[n / 2 - 1] + sorted[n / 2]) / 2;
  const robust: RobustReport = {
    loss,
    tuning: rr.tuning,
    scale: rr.scale,
    scaleSource: scaleGiven ? 'spec' : rr.scaleFrom,
    threshold: rr.threshold,
    iterations: rr.iterations,
    converged: rr.converged,
    objective: rr.objective,
    weights: { min: sorted.length ? sorted[0] : NaN, median, below: cut, downWeighted: down.length },
    downWeightedRows: down.map((i) => rows[i]),
  };
  report.robust = robust;
  if (report.points) {
    report.points.lossWeight = Array.from(u);
    if (prec) report.points.weight = Array.from(prec);
    else delete report.points.weight;
  }
  if (!rr.converged) {
    report.problems.push({
      code: 'robust-no-convergence',
      severity: 'warning',
      message:
        `${input.name}: the ${robust.loss} loss's reweighting did not settle within ${rr.iterations} refits, so the estimates are those of the last refit. ` +
        `Give lossScale a larger value, or try the huber loss (its weights never go to zero).`,
      path: [...base, 'loss'],
    });
  }
  // a robust objective is not a likelihood: no information criteria, so AICc does not rank the fit (docs/robust.md)
  report.stats.logLik = null;
  report.stats.aic = null;
  report.stats.aicc = null;
  report.stats.bic = null;
  if (report.status !== 'converged') return;

  // ------------------------------------------------------------ sandwich covariance
  const cov = sandwichCovariance(fit.result.J, n, p, sw, d.count, free, rr.psi, rr.dpsi);
  const absolute = input.sigmaMode === 'absolute' && prec !== null;
  const dof = report.stats.dof;
  const level = input.confidence;
  const qWald = absolute ? normalQuantile((1 + level) / 2) : dof > 0 ? tQuantile((1 + level) / 2, dof) : NaN;
  const covOut: (number | null)[][] = [];
  const corOut: (number | null)[][] = [];
  const C = cov ?? new Float64Array(p * p).fill(NaN);
  for (let j = 0; j < p; j++) {
    const pr = report.params[input.params[j]];
    pr.se = null;
    pr.t = null;
    pr.p = null;
    pr.ci = null;
    pr.profileCi = null;
    const v = C[j * p + j];
    if (free[j] && Number.isFinite(v) && v >= 0) {
      const se = Math.sqrt(v);
      pr.se = se;
      if (se > 0) {
        pr.t = pr.value / se;
        pr.p = absolute ? Math.min(1, 2 * normalSf(Math.abs(pr.t))) : tTwoSidedP(pr.t, dof);
      }
      if (Number.isFinite(qWald)) pr.ci = [pr.value - qWald * se, pr.value + qWald * se];
    }
    covOut.push([]);
    corOut.push([]);
    for (let k = 0; k < p; k++) {
      const c = C[j * p + k];
      covOut[j].push(Number.isFinite(c) ? c : null);
      const r = c / Math.sqrt(C[j * p + j] * C[k * p + k]);
      corOut[j].push(j === k && Number.isFinite(r) ? 1 : Number.isFinite(r) ? Math.max(-1, Math.min(1, r)) : null);
    }
  }
  report.covariance = covOut;
  report.correlation = corOut;
  if (!cov) {
    report.problems.push({
      code: 'robust-no-covariance',
      severity: 'warning',
      message:
        `${input.name}: the ${robust.loss} loss leaves too few points in its quadratic part to estimate the standard errors (the sandwich's middle matrix is not positive definite), so none are reported. ` +
        `The huber loss, or a larger lossScale, keeps more points fully weighted.`,
      path: [...base, 'loss'],
    });
  }

  // ------------------------------------------------------------ standardized residuals on the robust scale
  const s = rr.scale !== null && rr.scale > 0 ? rr.scale : rr.threshold > 0 ? rr.threshold / rr.tuning : 0;
  if (report.points) {
    for (let i = 0; i < n; i++) {
      const ri = (sw ? sw[i] : 1) * (d.y[i] - fit.result.f[i]);
      report.points.standardized[i] = s > 0 ? ri / s : NaN;
    }
  }

  // ------------------------------------------------------------ band, predictions, inverse from the sandwich
  const scale = absolute ? 1 : s * s;
  const pctx: PredictionContext = { compiled: input.compiled, theta: Float64Array.from(fit.result.theta), cov: C, free, q: qWald, scale, X: input.X, w: prec, predictWeight: input.predictWeight };
  if (report.band && input.variables.length === 1) report.band = computeBand(pctx, input.variables[0], input.options?.bandPoints ?? DEFAULTS.analysis.bandPoints);
  report.predictions = report.predictions.map((old, k) => {
    const entry = input.predict[k];
    const pt = predictionPoint(entry, input.variables);
    return 'error' in pt || old.y === null ? old : computePrediction(pctx, entry, pt.x);
  });
  if (input.variables.length === 1) report.inverse = input.solveFor.map((yv) => computeInverse(pctx, yv));

  if (down.length > 0) {
    const shown = down.slice(0, 10).map((i) => `row ${rows[i]} (${fmt(u[i])})`);
    const problem: Problem = {
      code: 'robust-down-weighted',
      severity: 'info',
      message:
        `${input.name}: the ${robust.loss} loss gave ${down.length === n ? 'every row' : `${down.length} of ${n} rows`} less than ${fmt(cut)} of the weight of a well-fitting point — ${shown.join(', ')}${down.length > 10 ? `, … (${down.length - 10} more)` : ''}. ` +
        `They stay in the fit with less influence; check them for recording or handling errors before excluding any (data.exclude with a reason).`,
      path: [...base, 'loss'],
      rows: down.slice(0, 100).map((i) => rows[i]),
    };
    report.problems.push(problem);
  }
}

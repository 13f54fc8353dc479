// Problem detection for one fitted model (docs/problems.md; codes from the PROBLEMS table, src/engine/problems.ts):
// identifiability (rank, plateaus the data never reach), parameters at bounds or poorly determined by their profile
// intervals, rates and asymptotes of built-ins, correlation, overfitting (degrees of freedom, parameters per point,
// the cross-validation ratio of Allen 1974), systematic and non-normal residuals, influential points (Cook 1977), and
// predictions outside the data. The thresholds are DEFAULT_THRESHOLDS (thresholds.ts) or the spec's.
import type { ModelReport, ParamReport, Problem } from '../report';
import type { ModelAnalysisInput } from './api';
import type { PositionRuns } from './runs';
import { fmtMessage as fmt } from '../../shared/numberFormat';
import { roleOf } from '../models/roles';
import { maxOf, minOf } from './analysisData';
import { listRows, quoteList } from './problemText';
import { terminationAdvice } from '../terminations';


export function rankDeficient(name: string, names: string[], rank: number, pFree: number, base: (string | number)[]): Problem {
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
export function runawayAsymptote(input: ModelAnalysisInput, theta: Float64Array, unidentifiable: number[]): Runaway | null {
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

export function noPlateau(name: string, r: Runaway, base: (string | number)[]): Problem {
  return {
    code: 'no-plateau',
    severity: 'error',
    message:
      `${name}: the data do not reach the ${r.side} plateau: ${r.param} is not determined (the fit ran it to ${fmt(r.value)}, far beyond the data, and could not settle). ` +
      `Bound it (min/max in params), fix it ("fixed": true with a start), or fit data that reach the plateau; a model without that plateau (e.g. an exponential) may describe these data.`,
    path: [...base, 'params', r.param],
  };
}

export function openSide(pr: ParamReport): string {
  const ci = pr.profileCi!;
  return ci[0] === null && ci[1] === null ? 'on either side' : ci[0] === null ? 'below' : 'above';
}

/** An asymptote more than one range of y beyond the data: the plateau is extrapolated, not measured (common practice). */
export function beyondData(y: ArrayLike<number>, a: number): boolean {
  const lo = minOf(y);
  const hi = maxOf(y);
  const span = hi - lo;
  return span > 0 && (a > hi + span || a < lo - span);
}

export function asymptoteNotReached(input: ModelAnalysisInput, param: string, pr: ParamReport, open: boolean): Problem {
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

export function rateNotDetermined(input: ModelAnalysisInput, param: string, pr: ParamReport): Problem {
  return {
    code: 'rate-not-determined',
    severity: 'warning',
    message:
      `${input.name}: the rate ${param} = ${fmt(pr.value)} is not determined — its profile-likelihood interval does not close ${openSide(pr)} the estimate, so the data do not show how fast the curve changes there ` +
      `(too few points on the rising or falling part). Add data where the curve changes, bound or fix ${param}, or use a simpler model.`,
    path: ['models', input.index, 'params', param],
  };
}

/** Most rows an influential-points problem names (the largest Cook's distances). */
export const MAX_INFLUENTIAL_ROWS = 100;


/**
 * The problems of a failed fit (no inference is made): non-finite model values, a plateau the data never reach or a
 * singular fit, or no convergence with the termination's advice (TERMINATIONS, src/engine/terminations.ts).
 */
export function failureProblems(input: ModelAnalysisInput, theta: Float64Array, badRows: number[], pFree: number): Problem[] {
  const { result: res, params } = input;
  const base: (string | number)[] = ['models', input.index];
  const problems: Problem[] = [];
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
  return problems;
}

/** What the analysis found that the detection reads (rank, standard errors, profiles, leverages, runs). */
export interface Facts {
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
/** Every problem of one fitted model, in report order (each detector below pushes onto report.problems). */
export function detectProblems(input: ModelAnalysisInput, report: ModelReport, k: Facts): void {
  parameterProblems(input, report, k);
  correlationProblems(input, report);
  overfitProblems(input, report, k);
  residualProblems(input, report, k);
  influenceProblems(input, report, k);
}

/** Identifiability (rank, a plateau the data never reach), then each free parameter: at a bound, an asymptote or rate of a built-in not determined, poorly determined. */
function parameterProblems(input: ModelAnalysisInput, report: ModelReport, k: Facts): void {
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
}

/** Pairwise correlation of the estimates: one problem per model, strongest pair first. */
function correlationProblems(input: ModelAnalysisInput, report: ModelReport): void {
  const { params, thresholds: th } = input;
  const problems = report.problems;
  const base: (string | number)[] = ['models', input.index];
  const name = input.name;
  const p = params.length;

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
}

/** Overfitting: residual degrees of freedom, parameters per row, polynomial degree per distinct x, the cross-validation ratio. */
function overfitProblems(input: ModelAnalysisInput, report: ModelReport, k: Facts): void {
  const { thresholds: th } = input;
  const problems = report.problems;
  const base: (string | number)[] = ['models', input.index];
  const name = input.name;

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
}

/** Residual structure: the runs test by x position, strong non-normality. */
function residualProblems(input: ModelAnalysisInput, report: ModelReport, k: Facts): void {
  const { thresholds: th } = input;
  const problems = report.problems;
  const base: (string | number)[] = ['models', input.index];
  const name = input.name;

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
}

/** Influential points: Cook's distance above cooksFactor/n (at most MAX_INFLUENTIAL_ROWS rows named). */
function influenceProblems(input: ModelAnalysisInput, report: ModelReport, k: Facts): void {
  const { thresholds: th } = input;
  const problems = report.problems;
  const base: (string | number)[] = ['models', input.index];
  const name = input.name;

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

// The band, predictions and inverse predictions of one fitted model into its report, with the problems they raise
// (prediction-invalid, extrapolation, inverse-*; docs/problems.md). The computations are in predict.ts.
import type { ModelReport } from '../report';
import type { ModelAnalysisInput } from './api';
import { computeBand, computeInverse, computePrediction, predictionPoint, variableRange, type PredictionContext } from './predict';
import { fmtMessage as fmt } from '../../shared/numberFormat';
import { maxOf, minOf } from './analysisData';
import { describePoint, describeRanges } from './problemText';

/**
 * Fills report.band, report.predictions and report.inverse; qWald is the interval's quantile (NaN when dof ≤ 0).
 * With `group` (a joint fit, one call per group): no band, and every entry says its group.
 */
export function predictionsAndInverse(input: ModelAnalysisInput, report: ModelReport, pctx: PredictionContext, bandPoints: number, f: ArrayLike<number>, qWald: number, group?: string): void {
  const { X } = input;
  const problems = report.problems;
  const tag = group === undefined ? {} : { group };
  if (input.variables.length === 1 && group === undefined) report.band = computeBand(pctx, input.variables[0], bandPoints);
  const ranges = variableRange(X);
  input.predict.forEach((entry, k) => {
    const pt = predictionPoint(entry, input.variables);
    if ('error' in pt) {
      report.predictions.push({ x: entry, y: null, ci: null, pi: null, extrapolated: false, ...tag });
      problems.push({
        code: 'prediction-invalid',
        severity: 'warning',
        message: `predict[${k}] ${pt.error}, so ${input.name} cannot be evaluated there.`,
        path: ['predict', k],
      });
      return;
    }
    const pr = computePrediction(pctx, entry, pt.x);
    report.predictions.push({ ...pr, ...tag });
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
      report.inverse.push({ y: yv, roots: [], extrapolated: false, ...tag });
      problems.push({
        code: 'inverse-no-root',
        severity: 'warning',
        message: `${input.name} has several x variables (${input.variables.join(', ')}); inverse prediction (the back-calculated x at y = ${fmt(yv)}) needs a single x variable.`,
        path: ['solveFor', k],
      });
      return;
    }
    const inv = computeInverse(pctx, yv);
    report.inverse.push({ ...inv, ...tag });
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
}

/** Per-group prediction contexts of a joint fit: the group's rows, and the model read at that group's parameters. */
export function groupTargets(ctx: PredictionContext, jg: { ids: string[]; variables: string[] }, name: string, fAll: ArrayLike<number>): { group: string; pctx: PredictionContext; variables: string[]; who: string; f: Float64Array }[] {
  const nv = jg.variables.length;
  const gcol = ctx.X[nv];
  return jg.ids.map((id, g) => {
    const rows: number[] = [];
    for (let i = 0; i < gcol.length; i++) if (gcol[i] === g) rows.push(i);
    const X = ctx.X.slice(0, nv).map(col => Float64Array.from(rows, i => col[i]));
    const w = ctx.w ? Float64Array.from(rows, i => ctx.w![i]) : null;
    const c = ctx.compiled;
    const withGroup = (x: ArrayLike<number>): number[] => [...Array.from(x), g];
    const compiled = { ...c, variables: jg.variables, at: (t: ArrayLike<number>, x: ArrayLike<number>) => c.at(t, withGroup(x)), gradientAt: (t: ArrayLike<number>, x: ArrayLike<number>, gr: Float64Array) => c.gradientAt(t, withGroup(x), gr) };
    return { group: id, pctx: { ...ctx, compiled, X, w }, variables: jg.variables, who: `${name} (group '${id}')`, f: Float64Array.from(rows, i => fAll[i]) };
  });
}

// Decimation of the per-point arrays embedded in an HTML report, so that the page stays bounded for any number of rows
// (4.5 × 10^6 rows would not fit in one JavaScript string). Min/max per bucket (common practice for plotting large
// series): the x range (the single x variable, else the fitted values) is cut into equal intervals and each keeps its
// points of lowest and highest y and of lowest and highest residual, so the plot's envelope and the largest residuals
// survive. The fits and statistics are not touched — they were computed from every row — and the report says so.
import type { FitReport, PointsReport, Problem, RunResult } from '../engine/report';
import { isErrorReport } from '../engine/report';

/** At most this many points per model are embedded in an HTML report. */
export const REPORT_POINTS_MAX = 20000;
/** x intervals of the decimation (each keeps up to 4 points). */
const BUCKETS = REPORT_POINTS_MAX / 4;

/** Indices (ascending) of the points kept: per x interval the extremes of y and of the residual. */
export function keptIndices(axis: ArrayLike<number>, y: ArrayLike<number>, residual: ArrayLike<number>, buckets = BUCKETS): number[] {
  const n = axis.length;
  let lo = Infinity, hi = -Infinity;
  for (let i = 0; i < n; i++) {
    const v = axis[i]!;
    if (Number.isFinite(v)) { if (v < lo) lo = v; if (v > hi) hi = v; }
  }
  // a constant or non-finite axis: intervals of the row order instead
  const byIndex = !(hi > lo);
  const bucketOf = (i: number) => (byIndex ? Math.floor((i * buckets) / n) : Math.min(buckets - 1, Math.floor(((axis[i]! - lo) / (hi - lo)) * buckets)));
  const pick = new Int32Array(buckets * 4).fill(-1);
  for (let i = 0; i < n; i++) {
    if (!byIndex && !Number.isFinite(axis[i]!)) continue;
    const b = bucketOf(i) * 4;
    const yi = y[i]!, ri = residual[i]!;
    if (pick[b] < 0 || yi < y[pick[b]!]!) pick[b] = i;
    if (pick[b + 1] < 0 || yi > y[pick[b + 1]!]!) pick[b + 1] = i;
    if (pick[b + 2] < 0 || ri < residual[pick[b + 2]!]!) pick[b + 2] = i;
    if (pick[b + 3] < 0 || ri > residual[pick[b + 3]!]!) pick[b + 3] = i;
  }
  const set = new Set<number>();
  for (const i of pick) if (i >= 0) set.add(i);
  return [...set].sort((a, b) => a - b);
}

function take(a: ArrayLike<number>, keep: number[]): number[] {
  const out = new Array<number>(keep.length);
  for (let k = 0; k < keep.length; k++) out[k] = a[keep[k]!]!;
  return out;
}

function decimatePoints(p: PointsReport, max: number): { points: PointsReport; kept: number } | null {
  const n = p.y.length;
  if (n <= max) return null;
  const xs = Object.keys(p.x);
  const axis = xs.length === 1 ? p.x[xs[0]!]! : p.fitted;
  const keep = keptIndices(axis, p.y, p.residual, Math.max(1, Math.floor(max / 4)));
  const x: Record<string, number[]> = {};
  for (const k of xs) x[k] = take(p.x[k]!, keep);
  const points: PointsReport = {
    row: take(p.row, keep), x, y: take(p.y, keep), fitted: take(p.fitted, keep), residual: take(p.residual, keep),
    standardized: take(p.standardized, keep), leverage: take(p.leverage, keep), cooks: take(p.cooks, keep),
    ...(p.weight ? { weight: take(p.weight, keep) } : {}),
    ...(p.count ? { count: take(p.count, keep) } : {}),
  };
  return { points, kept: keep.length };
}

/**
 * The report as an HTML report embeds it: models with more than `max` points carry a decimated set, and the report
 * gains an info note 'report-points-decimated' saying how many points are shown. Other results are returned as they are.
 */
export function forHtmlReport(r: RunResult, max = REPORT_POINTS_MAX): RunResult {
  if (isErrorReport(r)) return r;
  let most = 0, total = 0, decimated = 0;
  const models = r.models.map(m => {
    if (!m.points) return m;
    const d = decimatePoints(m.points, max);
    if (!d) return m;
    decimated++;
    most = Math.max(most, d.kept);
    total = Math.max(total, m.points.y.length);
    return { ...m, points: d.points };
  });
  if (!decimated) return r;
  const note: Problem = {
    code: 'report-points-decimated',
    severity: 'info',
    message: `this HTML report shows at most ${most.toLocaleString('en-US')} of the ${total.toLocaleString('en-US')} data points of each model ` +
      `(in each of ${Math.floor(max / 4).toLocaleString('en-US')} x intervals the points of lowest and highest y and residual) so that the page stays small; ` +
      'the fits and every statistic used all rows',
    path: ['data', 'file'],
  };
  return { ...(r as FitReport), models, problems: [...r.problems, note] };
}

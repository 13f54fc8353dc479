// HTML report decimation (src/cli/reportPoints.ts): above REPORT_POINTS_MAX points per model the page embeds the
// extremes of y and of the residual of each x interval, says so in an info note, and stays bounded in size.
import * as assert from 'assert';
import { forHtmlReport, keptIndices, REPORT_POINTS_MAX } from '../../src/cli/reportPoints';
import { buildReportHtml } from '../../src/shared/html';
import type { FitReport, ModelReport } from '../../src/engine/report';
import { isErrorReport } from '../../src/engine/report';

/** A report with one model of n points (y = 2x + noise, residual = noise), just the fields the decimation reads. */
function bigReport(n: number): FitReport {
  const x = new Array<number>(n), y = new Array<number>(n), f = new Array<number>(n), r = new Array<number>(n);
  let s = 12345;
  for (let i = 0; i < n; i++) {
    s = (s * 1103515245 + 12345) % 2147483648;
    const e = s / 2147483648 - 0.5;
    x[i] = i / n * 100; f[i] = 2 * x[i]!; r[i] = e; y[i] = f[i]! + e;
  }
  const row = Array.from({ length: n }, (_, i) => i + 1);
  const model = { name: 'line', problems: [], points: { row, x: { t: x }, y, fitted: f, residual: r, standardized: r, leverage: r.map(() => 1 / n), cooks: r.map(() => 0) } } as unknown as ModelReport;
  return { version: 1, spec: 'big.fitspec.json', problems: [], models: [model] } as unknown as FitReport;
}

describe('HTML report decimation of large data', () => {
  it('leaves reports at or below the limit untouched', () => {
    const r = bigReport(REPORT_POINTS_MAX);
    assert.strictEqual(forHtmlReport(r), r);
  });

  it('keeps at most the limit, the extremes of y and residual, rows in order, and says so', () => {
    const n = 300000;
    const r = bigReport(n);
    const d = forHtmlReport(r);
    if (isErrorReport(d)) throw new Error('unexpected');
    const p = d.models[0]!.points!;
    assert.ok(p.y.length <= REPORT_POINTS_MAX && p.y.length > REPORT_POINTS_MAX / 2, String(p.y.length));
    for (const k of ['row', 'y', 'fitted', 'residual', 'standardized', 'leverage', 'cooks'] as const) assert.strictEqual(p[k].length, p.y.length, k);
    assert.strictEqual(p.x.t!.length, p.y.length);
    for (let k = 1; k < p.row.length; k++) assert.ok(p.row[k]! > p.row[k - 1]!, 'rows ascending');
    const full = r.models[0]!.points!;
    const argmax = (a: number[]) => a.reduce((b, v, i) => (v > a[b]! ? i : b), 0);
    const argmin = (a: number[]) => a.reduce((b, v, i) => (v < a[b]! ? i : b), 0);
    for (const i of [argmax(full.residual), argmin(full.residual), argmax(full.y), argmin(full.y)]) assert.ok(p.row.includes(full.row[i]!), `row ${full.row[i]} kept`);
    // each kept point is the same row's values
    for (let k = 0; k < p.row.length; k += 997) { const i = p.row[k]! - 1; assert.strictEqual(p.y[k], full.y[i]); assert.strictEqual(p.x.t![k], full.x.t![i]); }
    const note = d.problems.find(q => q.code === 'report-points-decimated');
    assert.ok(note && note.severity === 'info');
    assert.match(note.message, new RegExp(`of the 300,000 data points`));
    assert.match(note.message, /used all rows/);
    assert.strictEqual(r.models[0]!.points!.y.length, n, 'the input report is not changed');
  });

  it('the page stays bounded as the rows grow (100k vs 800k rows: the same number of points, a few MB)', () => {
    const size = (n: number) => buildReportHtml([forHtmlReport(bigReport(n))], { js: '', css: '' }).length;
    const a = size(100000), b = size(800000);
    // the same count of points; only the digits of the numbers differ (longer decimals at 800k rows)
    assert.ok(b < a * 2, `${a} -> ${b} characters`);
    assert.ok(b < 4e6, `${b} characters`);
  });

  it('a constant axis falls back to intervals of the row order', () => {
    const n = 1000;
    const keep = keptIndices(new Array(n).fill(3), Array.from({ length: n }, (_, i) => Math.sin(i)), Array.from({ length: n }, (_, i) => Math.cos(i)), 10);
    assert.ok(keep.length > 10 && keep.length <= 40, String(keep.length));
  });
});

// Unknowns read off a standard curve against two references, through a spec file and the function the CLI calls:
// (1) the fluorescence standards of Miller & Miller, "Statistics and Chemometrics for Analytical Chemistry", ch. 5
//     (a straight line; the book's printed figures, from memory: b = 1.93, a = 1.52, s_y/x = 0.4329, x0 = 0.72, 6.21,
//     11.13 pg/mL at y0 = 2.9, 13.5, 23.0 with s_x0 ≈ 0.26, 0.24, 0.26), and the closed-form classical limits for
//     the mean of m readings (Draper & Smith §3.2 with 1/m for the new mean);
// (2) R 4.2.2 (stats::lm / nls, predict, vcov, deriv, uniroot; scripts/reference-calibration.R, figures committed in
//     test/fixtures/reference/r-calibration.json) inverting the prediction band for the mean of m readings, on the line
//     and on a 4PL fitted to the demo standards. Also the Hubaux & Vos (1970) detection limit on the line, and the
//     relative potency of the two-lot demo (joint nls with ec50[lot]) with Fieller intervals found by uniroot from
//     their definition, and the slope and span ratios of the separate fits (examples/potency-lots.fitspec.json).
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile } from '../../src/engine/run';
import { isErrorReport, type FitReport } from '../../src/engine/report';
import { tQuantile } from '../../src/engine/stats/distributions';

const root = path.join(__dirname, '..', '..');
interface Read { y: number; m: number; x: number; low: number; high: number }
const R = JSON.parse(fs.readFileSync(path.join(root, 'test', 'fixtures', 'reference', 'r-calibration.json'), 'utf8')) as {
  R: string;
  line: { x: number[]; y: number[]; intercept: number; slope: number; sigma: number; reads: Read[]; decisionY: number; detectionX: number };
  logistic4: { lower: number; upper: number; ec50: number; slope: number; sigma: number; reads: Read[] };
  potency: { ec50_ref: number; ec50_test: number; dof: number; ratio: number; low: number; high: number; slope_ratio: number[]; span_ratio: number[] };
};
const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);
const close = (what: string, a: number | null | undefined, b: number, tol: number) =>
  assert.ok(a !== null && a !== undefined && rel(a, b) <= tol, `${what}: ${a} vs ${b} (relative ${a == null ? '—' : rel(a, b).toExponential(2)} > ${tol})`);

/** A workspace with standards and readings (replicates written as m rows of the same id), run through the spec. */
async function run(standards: string, readings: Read[], models: unknown[], extra: Record<string, unknown> = {}): Promise<FitReport> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-rcal-'));
  fs.writeFileSync(path.join(dir, 'standards.csv'), standards);
  const rows = ['sample,signal'];
  readings.forEach((r, k) => {
    for (let i = 0; i < r.m; i++) rows.push(`U${k},${r.y}`);
  });
  fs.writeFileSync(path.join(dir, 'unknowns.csv'), rows.join('\n') + '\n');
  const spec = { data: { file: 'standards.csv', x: 'x', y: 'y' }, models, unknowns: { file: 'unknowns.csv', id: 'sample', y: 'signal' }, ...extra };
  fs.writeFileSync(path.join(dir, 'c.fitspec.json'), JSON.stringify(spec));
  const r = await runSpecFile(path.join(dir, 'c.fitspec.json'), { workspaceRoot: dir });
  if (isErrorReport(r)) assert.fail(r.error.message);
  return r as FitReport;
}

/** Classical limits for the mean of m readings on a line (roots of the quadratic in u = x − x̄). */
function classical(x: number[], y: number[], y0: number, m: number): [number, number, number] {
  const n = x.length;
  const xb = x.reduce((a, b) => a + b, 0) / n;
  const yb = y.reduce((a, b) => a + b, 0) / n;
  let sxx = 0, sxy = 0;
  for (let i = 0; i < n; i++) { sxx += (x[i] - xb) ** 2; sxy += (x[i] - xb) * (y[i] - yb); }
  const b = sxy / sxx;
  let sse = 0;
  for (let i = 0; i < n; i++) sse += (y[i] - yb - b * (x[i] - xb)) ** 2;
  const s2 = sse / (n - 2);
  const t = tQuantile(0.975, n - 2);
  const d = y0 - yb;
  const A = b * b - (t * t * s2) / sxx;
  const B = -2 * b * d;
  const C = d * d - t * t * s2 * (1 / m + 1 / n);
  const disc = Math.sqrt(B * B - 4 * A * C);
  return [xb + d / b, xb + (-B - disc) / (2 * A), xb + (-B + disc) / (2 * A)];
}

describe(`calibration read-outs vs Miller & Miller and ${R.R}`, function () {
  this.timeout(60000);
  const lineCsv = 'x,y\n' + R.line.x.map((x, i) => `${x},${R.line.y[i]}`).join('\n') + '\n';

  it('a line: the textbook figures, the classical limits for m readings and R agree with the read-outs', async () => {
    const report = await run(lineCsv, R.line.reads, [{ name: 'line', builtin: 'linear' }], { limits: { sigma: 'residual' } });
    const m = report.models[0];
    // Miller & Miller (from memory): b = 1.93, a = 1.52, s_y/x = 0.4329
    assert.equal(Number(m.params.slope.value.toFixed(2)), 1.93);
    assert.equal(Number(m.params.intercept.value.toFixed(2)), 1.52);
    assert.ok(Math.abs(m.stats.sigma! - 0.4329) < 1e-4); // the book prints 0.4329; R and this fit give 0.432848
    close('slope vs R', m.params.slope.value, R.line.slope, 1e-12);
    const got = report.unknowns!.results;
    assert.equal(got.length, R.line.reads.length);
    const book: Record<number, [number, number]> = { 2.9: [0.72, 0.26], 13.5: [6.21, 0.24], 23: [11.13, 0.26] };
    R.line.reads.forEach((r, k) => {
      const u = got[k];
      assert.equal(u.m, r.m);
      close(`x at ${r.y} (m=${r.m}) vs R`, u.x, r.x, 1e-9);
      close(`low at ${r.y} (m=${r.m}) vs R`, u.interval![0], r.low, 1e-7);
      close(`high at ${r.y} (m=${r.m}) vs R`, u.interval![1], r.high, 1e-7);
      const [cx, clo, chi] = classical(R.line.x, R.line.y, r.y, r.m);
      close(`x vs closed form`, u.x, cx, 1e-10);
      close(`low vs closed form`, u.interval![0], clo, 1e-7);
      close(`high vs closed form`, u.interval![1], chi, 1e-7);
      if (r.m === 1 && book[r.y]) {
        assert.equal(Number(u.x!.toFixed(2)), book[r.y][0], `book x0 at ${r.y}`);
        // the book's s_x0 is the approximate (linearised) SD: half the interval over t(5) matches it to its rounding
        const sx0 = (u.interval![1]! - u.interval![0]!) / 2 / tQuantile(0.975, 5);
        assert.ok(Math.abs(sx0 - book[r.y][1]) <= 0.006, `book s_x0 at ${r.y}: ${sx0}`);
      }
    });
    // the mean of 4 readings has a narrower interval than one reading at the same y
    const one = got[1], four = got[3];
    assert.ok(four.interval![1]! - four.interval![0]! < 0.6 * (one.interval![1]! - one.interval![0]!));
    // limits: ICH Q2(R1) 3.3σ/slope and 10σ/slope; Hubaux–Vos against R
    const L = report.limits!;
    assert.equal(L.convention, 'ich-line');
    close('LOD', L.lod, (3.3 * R.line.sigma) / R.line.slope, 1e-12);
    close('LOQ', L.loq, (10 * R.line.sigma) / R.line.slope, 1e-12);
    close('Hubaux–Vos decision level vs R', L.detection.decisionY, R.line.decisionY, 1e-10);
    close('Hubaux–Vos detection limit vs R', L.detection.x, R.line.detectionX, 1e-7);
    assert.match(L.note, /validate/);
  });

  it('a 4PL: back-calculated x and its interval for the mean of m readings agree with R (nls + delta method + uniroot)', async () => {
    const std = fs.readFileSync(path.join(root, 'examples', 'data', 'assay-standards.csv'), 'utf8').replace('conc_ng_ml', 'x').replace('absorbance', 'y');
    const report = await run(std, R.logistic4.reads, [{ name: '4PL', builtin: 'logistic4', params: { slope: { min: 0 } } }]);
    const m = report.models[0];
    close('ec50 vs R', m.params.ec50.value, R.logistic4.ec50, 1e-6);
    close('sigma vs R', m.stats.sigma, R.logistic4.sigma, 1e-6);
    R.logistic4.reads.forEach((r, k) => {
      const u = report.unknowns!.results[k];
      assert.equal(u.m, r.m);
      assert.deepEqual(u.flags, []);
      close(`x at ${r.y} (m=${r.m})`, u.x, r.x, 1e-6);
      close(`low at ${r.y} (m=${r.m})`, u.interval![0], r.low, 1e-5);
      close(`high at ${r.y} (m=${r.m})`, u.interval![1], r.high, 1e-5);
    });
  });

  it('relative potency and parallelism of the two-lot demo agree with R (nls with ec50[lot], Fieller by uniroot)', async () => {
    const r = await runSpecFile(path.join(root, 'examples', 'potency-lots.fitspec.json'), { workspaceRoot: root });
    if (isErrorReport(r)) assert.fail(r.error.message);
    const p = (r as FitReport).potency!;
    const x = p.results[0];
    const P = R.potency;
    assert.equal((r as FitReport).models.find((m) => m.group === null)!.stats.dof, P.dof);
    close('ec50 reference', x.reference, P.ec50_ref, 1e-6);
    close('ec50 test', x.testValue, P.ec50_test, 1e-6);
    close('potency', x.ratio, P.ratio, 1e-6);
    close('potency low', x.interval![0], P.low, 1e-6);
    close('potency high', x.interval![1], P.high, 1e-6);
    const q = x.parallelism!;
    assert.equal(q.level, 0.9);
    close('slope ratio', q.slopeRatio.value, P.slope_ratio[0], 1e-6);
    close('slope ratio low', q.slopeRatio.interval[0], P.slope_ratio[1], 1e-6);
    close('slope ratio high', q.slopeRatio.interval[1], P.slope_ratio[2], 1e-6);
    close('span ratio', q.spanRatio.value, P.span_ratio[0], 1e-6);
    close('span ratio low', q.spanRatio.interval[0], P.span_ratio[1], 1e-6);
    close('span ratio high', q.spanRatio.interval[1], P.span_ratio[2], 1e-6);
    assert.equal(q.verdict, 'equivalent');
    assert.equal(p.method, 'fieller');
  });
});

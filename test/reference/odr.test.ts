// Errors in x (data.sigmaX) against SciPy's scipy.odr (ODRPACK; scripts/reference-odr.py) on Pearson's (1901) data
// with York's (1966) weights (test/fixtures/pearson-york.csv), through a spec file and the function the CLI calls:
// the straight line with York's weights (published: intercept 5.47991, slope −0.480533 — Reed 1992, Cantrell
// 2008), orthogonal regression (σ_x = σ_y, Deming λ = 1) and Deming λ = 4 (closed form, Cornbleet & Gochman 1979),
// and a nonlinear orthogonal-distance fit y = A·exp(−k·x). Figures committed in test/fixtures/reference/scipy-odr.json.
// Tolerances: estimates and the weighted sum of squares 1e-7 relative, SE 1e-5 relative, δ 1e-6 absolute.
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile } from '../../src/engine/run';
import { isErrorReport, type FitReport, type ModelReport } from '../../src/engine/report';
import { deming } from '../../src/engine/solve/odr';

const root = path.join(__dirname, '..', '..');
interface Odr { beta: number[]; se: number[]; sumSquares: number; delta: number[] }
const S = JSON.parse(fs.readFileSync(path.join(root, 'test', 'fixtures', 'reference', 'scipy-odr.json'), 'utf8')) as Record<string, Odr> & { source: string };
const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(Math.abs(b), 1e-300);
const close = (what: string, a: number | null | undefined, b: number, tol: number) =>
  assert.ok(a !== null && a !== undefined && rel(a, b) <= tol, `${what}: ${a} vs scipy.odr ${b} (relative ${a == null ? '—' : rel(a, b).toExponential(2)} > ${tol}) [${S.source}]`);

async function run(data: object, models: object[]): Promise<FitReport> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-odr-'));
  fs.copyFileSync(path.join(root, 'test', 'fixtures', 'pearson-york.csv'), path.join(dir, 'py.csv'));
  fs.writeFileSync(path.join(dir, 'o.fitspec.json'), JSON.stringify({ data: { file: 'py.csv', x: 'x', y: 'y', ...data }, models }));
  const r = await runSpecFile(path.join(dir, 'o.fitspec.json'), { workspaceRoot: dir });
  if (isErrorReport(r)) assert.fail(r.error.message);
  return r as FitReport;
}

function compare(m: ModelReport, names: string[], ref: Odr): void {
  assert.equal(m.status, 'converged', m.problems.map((p) => p.message).join('\n'));
  names.forEach((p, j) => {
    close(`${m.name} ${p}`, m.params[p].value, ref.beta[j], 1e-7);
    close(`${m.name} se ${p}`, m.params[p].se, ref.se[j], 1e-5);
  });
  close(`${m.name} sum of squares`, m.stats.sse, ref.sumSquares, 1e-7);
  close(`${m.name} objective`, m.errorsInX!.objective, ref.sumSquares, 1e-7);
  m.points!.xAdjusted!.forEach((xa, i) => assert.ok(Math.abs(xa - m.points!.x.x[i] - ref.delta[i]) <= 1e-6, `${m.name} δ of row ${i + 1}: ${xa - m.points!.x.x[i]} vs ${ref.delta[i]}`));
}

describe(`errors in x vs scipy.odr (${S.source})`, function () {
  this.timeout(60000);

  it('York-weighted straight line: the published solution of Pearson–York data', async () => {
    const r = await run({ sigma: '1/sqrt(wy)', sigmaX: '1/sqrt(wx)' }, [{ name: 'line', builtin: 'linear' }, { name: 'poly1', polynomial: 1 }]);
    compare(r.models[0], ['intercept', 'slope'], S.yorkLine);
    compare(r.models[1], ['c0', 'c1'], S.yorkLine);
    assert.equal(r.models[0].errorsInX!.method, 'odr', 'per-point σ: the general fit');
    // the published figures (York 1966 as solved exactly by Reed 1992)
    assert.ok(Math.abs(r.models[0].params.intercept.value - 5.47991) < 1e-5 && Math.abs(r.models[0].params.slope.value + 0.480533) < 1e-6);
  });

  it('constant σ: Deming regression (closed form) equals ODRPACK for λ = 1 and λ = 4', async () => {
    const o = await run({ sigma: '1', sigmaX: '1' }, [{ name: 'line', builtin: 'linear' }]);
    compare(o.models[0], ['intercept', 'slope'], S.orthogonal);
    assert.equal(o.models[0].errorsInX!.method, 'deming');
    assert.equal(o.models[0].errorsInX!.lambda, 1);
    const d = await run({ sigma: '1', sigmaX: '0.5' }, [{ name: 'line', builtin: 'linear' }]);
    compare(d.models[0], ['intercept', 'slope'], S.deming4);
    assert.equal(d.models[0].errorsInX!.lambda, 4);
    // the closed form alone, on the same data
    const rows = fs.readFileSync(path.join(root, 'test', 'fixtures', 'pearson-york.csv'), 'utf8').trim().split('\n').slice(1).map((l) => l.split(',').map(Number));
    const dm = deming(rows.map((r) => r[0]), rows.map((r) => r[1]), 4)!;
    const C = (S as unknown as { demingClosed4: { intercept: number; slope: number } }).demingClosed4;
    close('Deming closed-form slope (NumPy)', dm.slope, C.slope, 1e-13);
    close('Deming closed-form intercept (NumPy)', dm.intercept, C.intercept, 1e-13);
    close('the engine\'s Deming slope against the closed form', d.models[0].params.slope.value, C.slope, 1e-10);
    close('Deming closed-form slope against ODRPACK', dm.slope, S.deming4.beta[1], 1e-9);
  });

  it('nonlinear orthogonal distance: y = A·exp(−k·x) with York weights', async () => {
    const r = await run({ sigma: '1/sqrt(wy)', sigmaX: '1/sqrt(wx)' }, [{ name: 'exp', formula: 'A*exp(-k*x)', params: { A: { start: 6 }, k: { start: 0.1 } } }]);
    compare(r.models[0], ['A', 'k'], S.yorkExp);
  });

  it('a bound active in the orthogonal-distance fit is kept', async () => {
    const r = await run({ sigma: '1/sqrt(wy)', sigmaX: '1/sqrt(wx)' }, [{ name: 'line', formula: 'a + b*x', params: { a: { start: 5 }, b: { start: -0.44, min: -0.45 } } }]);
    const m = r.models[0];
    assert.equal(m.params.b.value, -0.45);
    assert.equal(m.params.b.atBound, 'min');
    assert.ok(m.errorsInX!.objective > S.yorkLine.sumSquares, 'the bound costs sum of squares');
  });
});

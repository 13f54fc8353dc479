// Edges of the robust fits (solve/irls.ts, stats/robust.ts) through a spec: an exact fit (scale 0 must not divide
// by zero), a MAD of 0 with some residuals non-zero (the mean-absolute fallback), every point an outlier (a tiny
// given threshold), a redescending loss; and the loss functions themselves against their closed forms.
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile } from '../../src/engine/run';
import { isErrorReport, type FitReport } from '../../src/engine/report';
import { rho, robustScale, weightedMedianAbs, choleskyInverse, irls, sandwichCovariance } from '../../src/engine/solve/irls';
import { varianceFit } from '../../src/engine/data/variance';

async function fit(csv: string, models: object[], data: object = {}): Promise<FitReport> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-irls-'));
  fs.writeFileSync(path.join(dir, 'd.csv'), csv);
  fs.writeFileSync(path.join(dir, 's.fitspec.json'), JSON.stringify({ data: { file: 'd.csv', x: 'x', y: 'y', ...data }, models }));
  const r = await runSpecFile(path.join(dir, 's.fitspec.json'), { workspaceRoot: dir });
  if (isErrorReport(r)) assert.fail(r.error.message);
  return r as FitReport;
}
const csvOf = (pts: [number, number][]) => 'x,y\n' + pts.map(([a, b]) => `${a},${b}`).join('\n') + '\n';

describe('robust loss: edges', () => {
  it('loss functions: ρ, ρ′ and ρ″ of SciPy least_squares at z = 0.25 and 4', () => {
    assert.deepEqual(rho('huber', 0.25), [0.25, 1, 0]);
    assert.deepEqual(rho('huber', 4), [3, 0.5, -0.5 / 8]);
    const [a, b, c] = rho('soft_l1', 4);
    assert.ok(Math.abs(a - 2 * (Math.sqrt(5) - 1)) < 1e-15 && Math.abs(b - 1 / Math.sqrt(5)) < 1e-15 && Math.abs(c + 0.5 / 5 ** 1.5) < 1e-15);
    assert.deepEqual(rho('cauchy', 4), [Math.log(5), 0.2, -1 / 25]);
  });

  it('median of |r| with frequency weights, and the scale fallbacks', () => {
    assert.equal(weightedMedianAbs([3, -1, 2], null), 2);
    assert.equal(weightedMedianAbs([3, -1, 2, 10], null), 2.5);
    assert.equal(weightedMedianAbs([1, 5], [3, 1]), 1);
    assert.deepEqual(robustScale([0, 0, 0, 2], null).from, 'mean-abs');
    assert.deepEqual(robustScale([0, 0, 0], null), { s: 0, from: 'exact' });
    assert.equal(choleskyInverse(Float64Array.from([1, 2, 2, 1]), 2), null, 'indefinite → null');
    const inv = choleskyInverse(Float64Array.from([4, 2, 2, 3]), 2)!;
    [0.375, -0.25, -0.25, 0.5].forEach((v, k) => assert.ok(Math.abs(inv[k] - v) < 1e-15));
  });

  it('an exact fit: scale 0, the least-squares solution, every weight 1, no division by zero', async () => {
    const r = await fit(csvOf([1, 2, 3, 4, 5, 6].map((x) => [x, 2 + 3 * x])), [{ name: 'h', formula: 'b0 + b1*x', loss: 'huber' }]);
    const m = r.models[0];
    assert.equal(m.status, 'converged');
    assert.equal(m.robust!.scaleSource, 'exact');
    assert.equal(m.robust!.scale, 0);
    assert.equal(m.robust!.iterations, 0);
    assert.ok(Math.abs(m.params.b1.value - 3) < 1e-12 && Math.abs(m.params.b0.value - 2) < 1e-12, JSON.stringify(m.params));
    assert.ok(m.points!.lossWeight!.every((u) => u === 1));
    assert.equal(m.robust!.downWeightedRows.length, 0);
  });

  it('seven points on a line and one far off, scale re-estimated: the residual scale collapses towards 0 without a division by zero, the line is found', async () => {
    const pts: [number, number][] = [1, 2, 3, 4, 5, 6, 7, 8].map((x) => [x, 1 + x]);
    pts[7][1] = 30;
    const r = await fit(csvOf(pts), [{ name: 'h', formula: 'b0 + b1*x', loss: 'huber', lossScale: 'mad-iterated' }]);
    const m = r.models[0];
    assert.equal(m.status, 'converged');
    assert.ok(m.robust!.scale! < 1e-3, String(m.robust!.scale));
    assert.ok(Math.abs(m.params.b1.value - 1) < 1e-6, `slope ${m.params.b1.value}: the line's 1, not least squares' 2.6`);
    assert.deepEqual(m.robust!.downWeightedRows, [8]);
    assert.ok(Object.values(m.params).every((p) => p.se === null || Number.isFinite(p.se)));
  });

  it('every point beyond a tiny given threshold: huber tends to the L1 line (exact through two points), the others listed', async () => {
    const pts: [number, number][] = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10].map((x) => [x, 1 + 2 * x + Math.sin(1.7 * x)]);
    const r = await fit(csvOf(pts), [{ name: 'h', formula: 'b0 + b1*x', loss: 'huber', lossScale: 1e-7 }, { name: 'c', formula: 'b0 + b1*x', loss: 'cauchy', lossScale: 1e-3 }]);
    const h = r.models[0];
    assert.equal(h.status, 'converged');
    assert.ok(h.robust!.downWeightedRows.length >= 8, JSON.stringify(h.robust));
    const p = h.problems.find((q) => q.code === 'robust-down-weighted')!;
    assert.match(p.message, /of 10 rows/);
    assert.ok(r.models[1].robust && r.models[1].robust.threshold === 1e-3, 'the cauchy fit reports its given threshold');
  });

  it('with data.groupBy each group gets its own robust fit, errors-in-x fit and variance function', async () => {
    const pts = [0.02, 0.06, 0.11, 0.22, 0.56, 1.1].flatMap((c) => ['A', 'B'].flatMap((g) => [1, 2].map((k) => `${c},${(g === 'A' ? 200 : 150) * c / (0.06 + c) * (1 + 0.03 * Math.sin(17 * c * k))},${g}`)));
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-irls-'));
    fs.writeFileSync(path.join(dir, 'd.csv'), 'x,y,g\n' + pts.join('\n') + '\n');
    const run = async (data: object, model: object) => {
      fs.writeFileSync(path.join(dir, 's.fitspec.json'), JSON.stringify({ data: { file: 'd.csv', x: 'x', y: 'y', groupBy: 'g', ...data }, models: [{ name: 'mm', builtin: 'michaelis_menten', ...model }] }));
      const r = await runSpecFile(path.join(dir, 's.fitspec.json'), { workspaceRoot: dir });
      if (isErrorReport(r)) assert.fail(r.error.message);
      return (r as FitReport).models;
    };
    const rob = await run({}, { loss: 'cauchy' });
    assert.deepEqual(rob.map((m) => [m.group, m.status, !!m.robust]), [['A', 'converged', true], ['B', 'converged', true]]);
    assert.ok(rob[0].params.Vmax.value > 180 && rob[1].params.Vmax.value < 170);
    const eiv = await run({ sigma: '2', sigmaX: '0.001' }, {});
    assert.deepEqual(eiv.map((m) => [m.group, m.errorsInX?.method]), [['A', 'odr'], ['B', 'odr']]);
    const vf = await run({ sigma: { power: 'estimate' } }, {});
    assert.ok(vf.every((m) => m.variance && m.variance.estimated && m.variance.replicateGroups === 6 && m.variance.converged), JSON.stringify(vf.map((m) => m.variance)));
  });

  it('least squares by name equals no loss at all (byte-identical report)', async () => {
    const pts: [number, number][] = [1, 2, 3, 4, 5, 6].map((x) => [x, 1 + 2 * x + 0.1 * Math.sin(x)]);
    const a = await fit(csvOf(pts), [{ name: 'l', polynomial: 1 }]);
    const b = await fit(csvOf(pts), [{ name: 'l', polynomial: 1, loss: 'squares' }]);
    assert.equal(JSON.stringify(a.models), JSON.stringify(b.models));
    assert.equal(a.models[0].robust, undefined);
  });
});

describe('errors in x: edges', () => {
  it('data exactly on a line: every shift 0, the line exact, no division by zero', async () => {
    const r = await fit(csvOf([1, 2, 3, 4, 5, 6].map((x) => [x, 2 + 3 * x])), [{ name: 'l', builtin: 'linear' }, { name: 'e', formula: 'a*exp(b*x)', params: { a: { start: 5 }, b: { start: 0.2 } } }], { sigma: '1', sigmaX: '0.5' });
    const m = r.models[0];
    assert.equal(m.status, 'converged');
    assert.equal(m.errorsInX!.method, 'deming');
    assert.ok(Math.abs(m.params.slope.value - 3) < 1e-12 && Math.abs(m.params.intercept.value - 2) < 1e-11, JSON.stringify(m.params));
    assert.ok(m.errorsInX!.maxShift < 1e-12 && m.errorsInX!.objective < 1e-20);
    assert.ok(r.models[1].errorsInX, 'a nonlinear model on the same data runs too');
  });

  it('a huge σx (x nearly unknown) and a tiny one (x exact) bracket the two ordinary regressions', async () => {
    const pts: [number, number][] = [1, 2, 3, 4, 5, 6, 7, 8].map((x) => [x, 1 + 0.5 * x + 0.4 * Math.sin(3 * x)]);
    const ls = (await fit(csvOf(pts), [{ name: 'l', builtin: 'linear' }])).models[0].params.slope.value;
    const tiny = (await fit(csvOf(pts), [{ name: 'l', builtin: 'linear' }], { sigma: '1', sigmaX: '1e-6' })).models[0];
    assert.ok(Math.abs(tiny.params.slope.value - ls) < 1e-9, `σx → 0 gives y-on-x least squares: ${tiny.params.slope.value} vs ${ls}`);
    const big = (await fit(csvOf(pts), [{ name: 'l', builtin: 'linear' }], { sigma: '1e-3', sigmaX: '10' })).models[0];
    assert.equal(big.status, 'converged');
    assert.ok(big.params.slope.value > ls, 'σx ≫ σy tends to the x-on-y regression, steeper than y-on-x');
  });
});

describe('variance function: edges', () => {
  it('a fitted value of 0 gets a finite weight (|μ| floored), and the fit stays finite', async () => {
    const pts: [number, number][] = [0, 1, 2, 3, 4, 5, 6].flatMap((x) => [[x, x - 3 + 0.05 * Math.sin(5 * x)], [x, x - 3 - 0.04 * Math.cos(3 * x)]] as [number, number][]);
    const r = await fit(csvOf(pts), [{ name: 'l', builtin: 'linear' }], { sigma: { power: 1 } });
    const m = r.models[0];
    assert.ok(m.points!.weight!.every((w) => Number.isFinite(w) && w > 0), 'finite positive weights');
    assert.ok(Number.isFinite(m.params.slope.value) && Math.abs(m.params.slope.value - 1) < 0.05, String(m.params.slope.value));
    assert.equal(m.variance!.theta, 1);
  });

  it('θ = 0 given is ordinary least squares', async () => {
    const pts: [number, number][] = [1, 2, 3, 4, 5].flatMap((x) => [[x, 2 * x + 0.1 * Math.sin(x)], [x, 2 * x - 0.1 * Math.cos(x)]] as [number, number][]);
    const a = (await fit(csvOf(pts), [{ name: 'l', builtin: 'linear' }])).models[0];
    const b = (await fit(csvOf(pts), [{ name: 'l', builtin: 'linear' }], { sigma: { power: 0 } })).models[0];
    assert.ok(Math.abs(a.params.slope.value - b.params.slope.value) < 1e-12 && Math.abs((a.params.slope.se as number) - (b.params.slope.se as number)) < 1e-12);
  });
});

describe('robust and variance fits: the cases behind the warnings', () => {
  const line = (x: number[], y: number[]) => {
    // a straight-line LsqProblem solved exactly, as the refit callback of irls/varianceFit
    return (w: Float64Array): import('../../src/engine/solve/types').SolveResult => {
      let sw = 0, sx = 0, sy = 0, sxx = 0, sxy = 0;
      for (let i = 0; i < x.length; i++) { sw += w[i]; sx += w[i] * x[i]; sy += w[i] * y[i]; sxx += w[i] * x[i] * x[i]; sxy += w[i] * x[i] * y[i]; }
      const b = (sw * sxy - sx * sy) / (sw * sxx - sx * sx);
      const a = (sy - b * sx) / sw;
      const f = Float64Array.from(x, (xi) => a + b * xi);
      const J = new Float64Array(2 * x.length);
      x.forEach((xi, i) => { J[i] = 1; J[x.length + i] = xi; });
      return { theta: Float64Array.from([a, b]), termination: 'exact', converged: true, iterations: 1, evaluations: 1, sse: 0, f, J, rank: 2, unidentifiable: [], atBound: [null, null], message: '' };
    };
  };
  const x = [1, 2, 3, 4, 5, 6, 7, 8];
  const y = [2.1, 3.9, 6.2, 7.8, 30, 12.1, 13.8, 16.2];

  it('irls stopped after one refit reports converged false (robust-no-convergence)', () => {
    const refit = line(x, y);
    const ls = refit(new Float64Array(8).fill(1));
    const rr = irls(ls, (u) => refit(u), { loss: 'cauchy', scale: 0.01, sw: null, count: null, y: Float64Array.from(y), maxIterations: 1 });
    assert.equal(rr.converged, false);
    const done = irls(ls, (u) => refit(u), { loss: 'huber', scale: 'mad', sw: null, count: null, y: Float64Array.from(y) });
    assert.equal(done.converged, true);
    assert.ok(done.u[4] < 0.3 && done.u.every((u, i) => i === 4 || u > 0.5), `the wild row alone is down-weighted: ${Array.from(done.u)}`);
  });

  it('the sandwich is null when Σψ′aaᵀ is not positive definite (robust-no-covariance)', () => {
    const J = new Float64Array(16);
    x.forEach((xi, i) => { J[i] = 1; J[8 + i] = xi; });
    const psi = new Float64Array(8).fill(0.1);
    assert.equal(sandwichCovariance(J, 8, 2, null, null, [true, true], psi, new Float64Array(8).fill(-0.2)), null);
    const ok = sandwichCovariance(J, 8, 2, null, null, [true, true], psi, new Float64Array(8).fill(1))!;
    assert.ok(ok[0] > 0 && ok[3] > 0);
  });

  it('varianceFit with too few refits reports converged false (variance-no-convergence)', () => {
    const ys = x.flatMap((xi) => [2 * xi * (1 + 0.1 * Math.sin(xi)), 2 * xi * (1 - 0.1 * Math.cos(xi))]);
    const xs = x.flatMap((xi) => [xi, xi]);
    const refit = line(xs, ys);
    const ls = refit(new Float64Array(xs.length).fill(1));
    const X = [Float64Array.from(xs)];
    const vf = varianceFit('estimate', ls, X, Float64Array.from(ys), (w) => refit(w));
    assert.ok(vf.converged && vf.groups === 8 && vf.theta > 0.5, JSON.stringify({ ...vf, result: undefined, w: undefined }));
    const stopped = varianceFit('estimate', ls, X, Float64Array.from(ys), (w) => refit(w), 1);
    assert.equal(stopped.converged, false);
  });
});

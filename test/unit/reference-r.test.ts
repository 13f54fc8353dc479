// Statistics checked against R on R's built-in datasets, through the user path (a spec file + CSV in a temporary
// folder, run by runSpecFile). The figures come from scripts/reference-r.R (R's stats and datasets packages; the R
// version is in the fixture) and are committed in test/fixtures/reference/r-stats.json, so these tests never need R.
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile } from '../../src/engine/run';
import { isErrorReport, type FitReport } from '../../src/engine/report';

// eslint-disable-next-line @typescript-eslint/no-require-imports
const R = require('../fixtures/reference/r-stats.json');

function close(actual: number | null | undefined, expected: number, relTol: number, what: string): void {
  assert.ok(actual !== null && actual !== undefined && Number.isFinite(actual), `${what}: got ${actual}`);
  const err = Math.abs(actual - expected) / Math.max(Math.abs(expected), 1e-300);
  assert.ok(err <= relTol, `${what}: ${actual} vs R ${expected} (relative error ${err.toExponential(2)} > ${relTol})`);
}

/** run a spec over columns written as a CSV; returns the FitReport */
async function fit(columns: Record<string, number[]>, spec: Record<string, unknown>): Promise<FitReport> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-rref-'));
  const names = Object.keys(columns);
  const n = columns[names[0]].length;
  const lines = [names.join(',')];
  for (let i = 0; i < n; i++) lines.push(names.map((c) => String(columns[c][i])).join(','));
  fs.writeFileSync(path.join(dir, 'data.csv'), lines.join('\n') + '\n');
  const specPath = path.join(dir, 'r.fitspec.json');
  fs.writeFileSync(specPath, JSON.stringify({ ...spec, data: { file: 'data.csv', ...(spec.data as object) } }, null, 2));
  const r = await runSpecFile(specPath, { workspaceRoot: dir });
  fs.rmSync(dir, { recursive: true, force: true });
  if (isErrorReport(r)) assert.fail(r.error.message);
  return r as FitReport;
}

describe(`statistics against R (${R.R}; figures from scripts/reference-r.R)`, function () {
  this.timeout(60000);

  it('bounded linear model: profile interval with the bound c2 ≤ 0 kept (datasets::cars, lm + uniroot on the constrained profile)', async () => {
    const c = R.cars_bounded;
    assert.ok(c.c2_unconstrained > 0, 'the bound is active');
    const r = await fit({ speed: c.speed, dist: c.dist }, {
      data: { x: 'speed', y: 'dist' },
      models: [{ name: 'quad', formula: 'c0 + c1*x + c2*x^2', params: { c0: {}, c1: {}, c2: { max: 0 } } }],
    });
    const m = r.models[0];
    assert.equal(m.status, 'converged');
    assert.equal(m.params.c2.atBound, 'max');
    close(m.params.c0.value, c.c0, 1e-9, 'c0');
    close(m.params.c1.value, c.c1, 1e-9, 'c1');
    close(m.stats.sse, c.sse, 1e-9, 'SSE');
    const pc2 = m.params.c2.profileCi!;
    close(pc2[0], c.profile_c2[0], 1e-5, 'c2 profile lower');
    assert.equal(pc2[1], null, 'c2 profile upper: beyond the bound, does not exist');
    for (const k of ['c0', 'c1'] as const) {
      close(m.params[k].profileCi![0], c[`profile_${k}`][0], 1e-5, `${k} profile lower`);
      close(m.params[k].profileCi![1], c[`profile_${k}`][1], 1e-5, `${k} profile upper`);
    }
  });

  it('sigmaMode "absolute": known-σ logLik, AIC, AICc, BIC and the χ² difference test (datasets::cars, σ = 15, dnorm + pchisq)', async () => {
    const c = R.cars_known_sigma;
    const b = R.cars_bounded;
    const r = await fit({ speed: b.speed, dist: b.dist, s: b.speed.map(() => c.sigma) }, {
      data: { x: 'speed', y: 'dist', sigma: 's', sigmaMode: 'absolute' },
      models: [{ name: 'line', builtin: 'linear' }, { name: 'quad', polynomial: 2 }],
    });
    const names = ['logLik', 'aic', 'aicc', 'bic'] as const;
    for (const [k, m] of [['line', r.models[0]], ['quadratic', r.models[1]]] as const) {
      names.forEach((s, i) => close(m.stats[s], c[k][i], 1e-10, `${k} ${s}`));
      close(m.stats.chi2, c[`chi2_${k}`], 1e-10, `${k} χ²`);
    }
    const t = r.comparison!.fTests.find((f) => f.simpler === 'line' && f.richer === 'quad')!;
    assert.ok(t, 'the nested pair is tested');
    assert.equal(t.test, 'chi2');
    close(t.chi2, c.delta_chi2, 1e-9, 'Δχ²');
    assert.equal(t.df1, 1);
    close(t.p, c.p, 1e-9, 'p of the χ² test');
  });

  it('inverse prediction: classical limits found far outside the data (datasets::BOD at 90%, predict.lm + uniroot)', async () => {
    const c = R.bod_inverse;
    const r = await fit({ Time: c.time, demand: c.demand }, {
      data: { x: 'Time', y: 'demand' }, confidence: c.level, solveFor: [c.y0],
      models: [{ name: 'line', builtin: 'linear' }],
    });
    const inv = r.models[0].inverse[0];
    assert.equal(inv.roots.length, 1);
    close(inv.roots[0].x, c.root, 1e-9, 'root');
    close(inv.roots[0].interval[0], c.interval[0], 1e-7, 'lower classical limit (below the data, once cut at lo/10)');
    close(inv.roots[0].interval[1], c.interval[1], 1e-7, 'upper classical limit');
  });

  it('inverse prediction with a slope not significant at 99.9%: no limits, and a problem says why (datasets::BOD)', async () => {
    const c = R.bod_inverse;
    assert.ok(Math.abs(c.slope_t) < c.t_0999, 'R: |t| of the slope is below the quantile');
    assert.deepEqual(c.interval_999, [null, null]);
    const r = await fit({ Time: c.time, demand: c.demand }, {
      data: { x: 'Time', y: 'demand' }, confidence: c.level_999, solveFor: [c.y0_999],
      models: [{ name: 'line', builtin: 'linear' }],
    });
    const m = r.models[0];
    close(m.inverse[0].roots[0].x, c.root_999, 1e-9, 'root');
    assert.deepEqual(m.inverse[0].roots[0].interval, [null, null]);
    const p = m.problems.find((q) => q.code === 'inverse-unbounded');
    assert.ok(p, 'inverse-unbounded explains the null limits');
    assert.match(p!.message, /slope is not significantly different from 0/);
    assert.deepEqual(p!.path, ['solveFor', 0]);
  });

  it('Durbin–Watson in data row order, the definition (datasets::mtcars, lm(mpg ~ wt))', async () => {
    const c = R.mtcars_dw;
    const r = await fit({ wt: c.wt, mpg: c.mpg }, { data: { x: 'wt', y: 'mpg' }, models: [{ name: 'line', builtin: 'linear' }] });
    close(r.models[0].residualTests!.durbinWatson, c.dw, 1e-10, 'DW (row order)');
    assert.ok(Math.abs(c.dw - c.dw_by_wt) > 0.1, 'the data are not in x order, so the two orders differ');
  });

  it('weighted prediction interval at a new x: spec predictWeight, or the nearest observed weight (datasets::cars, predict.lm weights)', async () => {
    const c = R.cars_weighted_predict;
    const b = R.cars_bounded;
    const cols = { speed: b.speed, dist: b.dist, w: b.speed.map((v: number) => 1 / v) };
    const base = { data: { x: 'speed', y: 'dist', weight: 'w' }, predict: [c.x0], models: [{ name: 'line', builtin: 'linear' }] };
    const given = (await fit(cols, { ...base, predictWeight: c.weight_spec })).models[0].predictions[0];
    close(given.pi![0], c.pi_spec[0], 1e-10, 'PI low, predictWeight 2');
    close(given.pi![1], c.pi_spec[1], 1e-10, 'PI high, predictWeight 2');
    assert.deepEqual(given.weight, { value: c.weight_spec, from: 'spec' });
    const nearest = (await fit(cols, base)).models[0].predictions[0];
    close(nearest.pi![0], c.pi_nearest[0], 1e-10, 'PI low, nearest weight');
    close(nearest.pi![1], c.pi_nearest[1], 1e-10, 'PI high, nearest weight');
    assert.equal(nearest.weight!.from, 'nearest');
    close(nearest.weight!.value, c.weight_nearest, 1e-15, 'nearest weight');
  });

  it('data.count (frequency weights) equals the fit on the expanded rows (datasets::cars binned into counts; lm on the expanded data)', async () => {
    const c = R.counts_expanded;
    const counted = await fit({ x: c.x, y: c.y, n: c.count }, {
      data: { x: 'x', y: 'y', count: 'n' }, predict: [12], solveFor: [40],
      models: [{ name: 'line', builtin: 'linear' }, { name: 'quad', polynomial: 2 }],
    });
    const ex: Record<string, number[]> = { x: [], y: [] };
    c.x.forEach((x: number, i: number) => { for (let k = 0; k < c.count[i]; k++) { ex.x.push(x); ex.y.push(c.y[i]); } });
    const expanded = await fit(ex, {
      data: { x: 'x', y: 'y' }, predict: [12], solveFor: [40],
      models: [{ name: 'line', builtin: 'linear' }, { name: 'quad', polynomial: 2 }],
    });
    const line = counted.models[0];
    // against R on the expanded rows
    close(line.params.intercept.value, c.intercept, 1e-10, 'intercept');
    close(line.params.slope.value, c.slope, 1e-10, 'slope');
    close(line.params.intercept.se, c.se_intercept, 1e-10, 'SE intercept');
    close(line.params.slope.se, c.se_slope, 1e-10, 'SE slope');
    close(line.stats.sigma, c.sigma, 1e-10, 'σ');
    assert.equal(line.stats.dof, c.dof);
    close(line.stats.logLik, c.logLik, 1e-10, 'logLik');
    close(line.stats.aic, c.aic, 1e-10, 'AIC');
    close(line.stats.bic, c.bic, 1e-10, 'BIC');
    // and every inference figure equal to the expanded fit's, to 1e-10
    for (let k = 0; k < 2; k++) {
      const a = counted.models[k];
      const b = expanded.models[k];
      assert.equal(a.stats.n, b.stats.n);
      assert.equal(a.stats.dof, b.stats.dof);
      for (const s of ['sse', 'sigma', 'r2', 'adjR2', 'logLik', 'aic', 'aicc', 'bic'] as const) close(a.stats[s] as number, b.stats[s] as number, 1e-10, `${a.name} ${s}`);
      for (const pn of a.paramOrder) {
        const pa = a.params[pn];
        const pb = b.params[pn];
        close(pa.value, pb.value, 1e-10, `${pn} value`);
        close(pa.se, pb.se!, 1e-10, `${pn} SE`);
        pa.ci!.forEach((v, i) => close(v, pb.ci![i] as number, 1e-10, `${pn} ci`));
        pa.profileCi!.forEach((v, i) => close(v, pb.profileCi![i] as number, 1e-10, `${pn} profileCi`));
      }
      a.predictions[0].ci!.forEach((v, i) => close(v, b.predictions[0].ci![i], 1e-10, 'prediction CI'));
      a.predictions[0].pi!.forEach((v, i) => close(v, b.predictions[0].pi![i], 1e-10, 'prediction PI'));
      close(a.inverse[0].roots[0].x, b.inverse[0].roots[0].x, 1e-10, 'inverse root');
      a.inverse[0].roots[0].interval.forEach((v, i) => {
        const o = b.inverse[0].roots[0].interval[i];
        if (o === null) assert.equal(v, null, 'inverse limit: both absent');
        else close(v, o, 1e-8, 'inverse limit');
      });
      close(a.residualTests!.durbinWatson, b.residualTests!.durbinWatson!, 1e-10, 'Durbin–Watson on the expanded residuals');
      close(a.residualTests!.normality!.statistic, b.residualTests!.normality!.statistic, 1e-8, 'normality statistic');
      assert.deepEqual(a.residualTests!.runs, b.residualTests!.runs, 'runs test on x positions');
    }
    const f1 = counted.comparison!.fTests[0];
    const f2 = expanded.comparison!.fTests[0];
    close(f1.F, f2.F, 1e-8, 'nested F');
    assert.equal(f1.df2, f2.df2);
  });

  it('data.count must be a whole number ≥ 1: other rows are left out with bad-count at ["data","count"]', async () => {
    const r = await fit({ x: [1, 2, 3, 4, 5, 6], y: [2.1, 3.9, 6.2, 8.1, 9.8, 12.2], n: [1, 2, 0.5, 1, 3, 1] }, {
      data: { x: 'x', y: 'y', count: 'n' }, models: [{ name: 'line', builtin: 'linear' }],
    });
    const p = r.problems.find((q) => q.code === 'bad-count');
    assert.ok(p, 'bad-count reported');
    assert.deepEqual(p!.path, ['data', 'count']);
    assert.equal(r.data.used, 5);
    assert.equal(r.models[0].stats.n, 8);
  });
});

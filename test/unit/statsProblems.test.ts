// Each problem code fires on a small constructed case and stays silent on a clean one (docs/problems.md).
import { strict as assert } from 'assert';
import { analyzeModel, compareModels, dataCorrelation, DEFAULT_THRESHOLDS, resolveThresholds } from '../../src/engine/stats';
import type { ModelReport } from '../../src/engine/report';
import { makeInput, noise, type FitCase } from './statsHelpers';

const X20 = Array.from({ length: 20 }, (_, i) => i + 1);
const codes = (r: ModelReport) => r.problems.map((p) => p.code);
const run = (c: FitCase) => analyzeModel(makeInput(c));
function only(r: ModelReport, code: string) {
  const found = r.problems.filter((p) => p.code === code);
  assert.ok(found.length > 0, `expected '${code}', got [${codes(r).join(', ')}]`);
  for (const p of found) {
    assert.ok(p.message.length > 40, 'message written for the user');
    assert.ok(['error', 'warning', 'info'].includes(p.severity));
  }
  return found[0];
}

/** clean exponential decay (seeded noise chosen so that no diagnostic fires) */
const expClean: FitCase = (() => {
  const e = noise(20, 9);
  return {
    formula: 'A*exp(-k*x)', x: X20, y: X20.map((v, i) => 5 * Math.exp(-0.15 * v) + 0.05 * e[i]),
    start: { A: 4, k: 0.1 }, predict: [10], solveFor: [2],
  };
})();

describe('stats problems', () => {
  it('a clean fit reports no problem at all', () => {
    const r = run(expClean);
    assert.equal(r.status, 'converged');
    assert.deepEqual(codes(r), []);
    assert.ok(r.params.k.profileCi![0] !== null && r.params.k.profileCi![1] !== null);
  });

  it('DEFAULT_THRESHOLDS is the one table; spec overrides replace single entries', () => {
    assert.equal(DEFAULT_THRESHOLDS.paramCorrelation, 0.99);
    assert.equal(DEFAULT_THRESHOLDS.cooksFactor, 4);
    const t = resolveThresholds({ runsP: 0.05, cvRatio: Number.NaN });
    assert.equal(t.runsP, 0.05);
    assert.equal(t.cvRatio, DEFAULT_THRESHOLDS.cvRatio);
    assert.ok(Object.isFrozen(DEFAULT_THRESHOLDS));
  });

  it('no-convergence: the termination and iteration count are named', () => {
    const r = run({ formula: 'A*exp(-k*x)', x: X20, y: expClean.y, start: { A: 100, k: 3 }, maxIterations: 2 });
    assert.equal(r.status, 'failed');
    const p = only(r, 'no-convergence');
    assert.equal(p.severity, 'error');
    assert.match(p.message, /iteration-limit/);
    assert.match(p.message, /2 iterations/);
  });

  it('non-finite-values: rows where the model is NaN are named', () => {
    const r = run({ formula: 'a*sqrt(x - c)', x: X20, y: X20.map((v) => Math.sqrt(Math.abs(v - 3))), start: { a: 1 }, fixed: { c: 3 } });
    assert.equal(r.status, 'failed');
    const p = only(r, 'non-finite-values');
    assert.equal(p.severity, 'error');
    assert.deepEqual(p.rows, [1, 2]);
  });

  it('rank-deficient: the parameters that cannot be determined are named', () => {
    const r = run({ formula: 'a + b*x + c*(2*x)', x: X20, y: X20.map((v, i) => 1 + v + 0.1 * noise(20, 3)[i]), options: { crossValidate: false } });
    const p = only(r, 'rank-deficient');
    assert.equal(p.severity, 'error');
    assert.match(p.message, /'(b|c)'/);
  });

  it('param-at-bound: the bound and its value are named, path points at the parameter', () => {
    const r = run({ formula: 'a + b*x', x: X20, y: X20.map((v, i) => 1 + 2 * v + 0.1 * noise(20, 4)[i]), upper: { b: 1.5 }, options: { crossValidate: false } });
    const p = only(r, 'param-at-bound');
    assert.deepEqual(p.path, ['models', 0, 'params', 'b']);
    assert.match(p.message, /max bound \(1\.5\)/);
  });

  it('poorly-determined: not raised for a linear coefficient near zero (its exact interval closes)', () => {
    const e = noise(20, 5);
    const r = run({ formula: 'a + b*x + c*x^2', x: X20, y: X20.map((v, i) => 1 + 2 * v + e[i]), options: { crossValidate: false } });
    assert.ok(r.params.c.se! > Math.abs(r.params.c.value), 'c is near zero relative to its SE');
    assert.ok(!codes(r).includes('poorly-determined'), `got [${codes(r).join(', ')}]`);
  });

  it('poorly-determined: falls back to the relative SE only for a nonlinear parameter without a profile', () => {
    // exponential decay seen over a tenth of its time constant: k is barely determined
    const x = Array.from({ length: 12 }, (_, i) => i / 2000);
    const e = noise(12, 3);
    const y = x.map((v, i) => 2 * Math.exp(-1 * v) + 0.05 * e[i]);
    const r = run({ formula: 'A*exp(-k*x)', x, y, start: { A: 2, k: 1 }, options: { crossValidate: false, profile: false } });
    assert.ok(r.params.k.se! > Math.abs(r.params.k.value), `k = ${r.params.k.value} ± ${r.params.k.se}`);
    const p = r.problems.find((q) => q.code === 'poorly-determined' && q.path.join('/') === 'models/0/params/k')!;
    assert.match(p.message, /no profile interval was computed/);
  });

  it('poorly-determined: an open profile-likelihood interval is reported as null, not invented', () => {
    // saturating curve observed only at its start: the plateau Vm is not bounded above by the data
    const x = [0.1, 0.2, 0.3, 0.4, 0.5, 0.6];
    const e = noise(6, 7);
    const y = x.map((v, i) => (10 * v) / (5 + v) + 0.05 * e[i]);
    const r = run({ formula: 'Vm*x/(K + x)', x, y, start: { Vm: 10, K: 5 }, options: { crossValidate: false, profileSeconds: 5 } });
    const ci = r.params.Vm.profileCi!;
    assert.ok(ci[0] !== null && ci[1] === null, `profile interval ${JSON.stringify(ci)}`);
    assert.ok(ci[0]! < r.params.Vm.value);
    const p = r.problems.find((q) => q.code === 'poorly-determined' && q.path.join('/') === 'models/0/params/Vm')!;
    assert.match(p.message, /does not close above/);
  });

  it('profile-incomplete: profiling out of time leaves null bounds and says so', () => {
    const r = run({ ...expClean, options: { profileSeconds: -1 } });
    assert.deepEqual(r.params.k.profileCi, [null, null]);
    assert.equal(only(r, 'profile-incomplete').severity, 'info');
    assert.ok(!codes(r).includes('poorly-determined'), 'a bound not computed is not an open interval');
  });

  it('cv-incomplete: cross-validation out of time leaves cvRmse null and says so', () => {
    const r = run({ ...expClean, options: { cvSeconds: -1 } });
    assert.equal(r.stats.cvRmse, null);
    only(r, 'cv-incomplete');
  });

  it('param-correlation: |r| > 0.99 between intercept and slope far from x = 0', () => {
    const x = X20.map((v) => 1000 + v);
    const r = run({ formula: 'a + b*x', x, y: x.map((v, i) => 2 + 0.5 * v + 0.2 * noise(20, 2)[i]), options: { crossValidate: false } });
    const p = only(r, 'param-correlation');
    assert.deepEqual(p.path, ['models', 0, 'params', 'a']);
    assert.match(p.message, /a and b/);
    // several correlated pairs give one problem that lists them, strongest first
    const cubic = run({ formula: 'a + b*x + c*x^2 + d*x^3', x, y: x.map((v, i) => 2 + 0.5 * v + 0.2 * noise(20, 2)[i]), options: { crossValidate: false } });
    const found = cubic.problems.filter((q) => q.code === 'param-correlation');
    assert.equal(found.length, 1);
    assert.match(found[0].message, /more pair|, /);
  });

  it('overfit-dof: fewer than 2 residual degrees of freedom', () => {
    const r = run({ formula: 'a + b*x', x: [1, 2, 3], y: [1, 2.2, 2.9] });
    assert.equal(r.stats.dof, 1);
    only(r, 'overfit-dof');
  });

  it('overfit-params: more than n/3 parameters', () => {
    const x = X20.slice(0, 10);
    const r = run({ formula: 'a + b*x + c*x^2 + d*x^3', x, y: x.map((v, i) => v + noise(10, 8)[i]), options: { crossValidate: false } });
    only(r, 'overfit-params');
  });

  it('overfit-degree: polynomial degree high for the number of distinct x (replicates do not help)', () => {
    const x = [1, 1, 1, 2, 2, 2, 3, 3, 3, 4, 4, 4, 5, 5, 5];
    const e = noise(15, 11);
    const r = run({
      formula: 'c0 + c1*x + c2*x^2 + c3*x^3 + c4*x^4', kind: 'polynomial', degree: 4, x, y: x.map((v, i) => v + 0.1 * e[i]),
      options: { crossValidate: false },
    });
    assert.ok(!codes(r).includes('overfit-params'));
    const p = only(r, 'overfit-degree');
    assert.deepEqual(p.path, ['models', 0, 'polynomial']);
  });

  it('overfit-cv: cross-validated RMSE far above what a correct model gives on these x values', () => {
    // a cubic on 16 rows (not too many parameters per row) whose single far-out row carries a gross error: held out,
    // that row is predicted far worse than the leverages allow for
    const x = [...X20.slice(0, 15), 30];
    const e = noise(16, 13);
    const y = x.map((v, i) => 1 + 0.5 * v + 0.1 * e[i]);
    y[15] += 30;
    const r = run({ formula: 'c0 + c1*x + c2*x^2 + c3*x^3', x, y });
    const p = only(r, 'overfit-cv');
    assert.match(p.message, /from the leverages/);
  });

  it('overfit-cv: silent on a correct 6-point line, and not repeated when overfit-params fires', () => {
    const x = [0, 2, 4, 6, 8, 10];
    const dev = [0.012, -0.021, 0.018, 0.004, -0.025, 0.015];
    const line = run({ formula: 'a + b*x', x, y: x.map((v, i) => 0.05 + 0.2 * v + dev[i]) });
    assert.ok(line.stats.cvRmse! > 1.2 * line.stats.rmse, 'the ratio a fixed 1.5× threshold would nearly flag');
    assert.ok(!codes(line).includes('overfit-cv'));
    const x12 = X20.slice(0, 12);
    const e = noise(12, 13);
    const poly = run({ formula: 'c0 + c1*x + c2*x^2 + c3*x^3 + c4*x^4 + c5*x^5 + c6*x^6', x: x12, y: x12.map((v, i) => v + e[i]) });
    assert.ok(codes(poly).includes('overfit-params') && !codes(poly).includes('overfit-cv'), `got [${codes(poly).join(', ')}]`);
  });

  it('systematic-residuals: a line through curved data leaves long runs of one sign', () => {
    const x = Array.from({ length: 30 }, (_, i) => i / 29);
    const r = run({ formula: 'a + b*x', x, y: x.map((v, i) => v * v + 0.01 * noise(30, 1)[i]), options: { crossValidate: false } });
    assert.ok(r.residualTests!.runs!.p < 0.01);
    only(r, 'systematic-residuals');
  });

  it('non-normal-residuals: heavy-tailed errors', () => {
    const x = Array.from({ length: 40 }, (_, i) => i);
    const e = noise(40, 21).map((v, i) => (i % 9 === 4 ? 25 * Math.sign(v || 1) : 0.1 * v));
    const r = run({ formula: 'a + b*x', x, y: x.map((v, i) => 1 + v + e[i]), options: { crossValidate: false } });
    assert.ok(r.residualTests!.normality!.p < 0.001, `p = ${r.residualTests!.normality!.p}`);
    assert.equal(only(r, 'non-normal-residuals').severity, 'info');
  });

  it("influential-points: Cook's distance above 4/n names the rows", () => {
    const e = noise(20, 5);
    const y = X20.map((v, i) => 1 + 0.5 * v + 0.3 * e[i]);
    const clean = run({ formula: 'a + b*x', x: X20, y, options: { crossValidate: false } });
    assert.ok(!codes(clean).includes('influential-points'), 'silent on clean line');
    y[19] += 6;
    const r = run({ formula: 'a + b*x', x: X20, y, options: { crossValidate: false } });
    const p = only(r, 'influential-points');
    assert.ok(p.rows!.includes(20), `rows ${p.rows}`);
  });

  it('influential-points on big data names at most the 100 most influential rows, and says how many there are', () => {
    const n = 4000;
    const x = Array.from({ length: n }, (_, i) => i / 100);
    const e = noise(n, 9);
    // heavy-tailed errors (a cube of Gaussian draws): many rows pass 4/n
    const y = x.map((v, i) => 1 + 0.5 * v + 0.1 * e[i] ** 3);
    const r = run({ formula: 'a + b*x', x, y, options: { crossValidate: false, profile: false } });
    const p = only(r, 'influential-points');
    const total = Number(/(\d+) points have/.exec(p.message)?.[1]);
    assert.ok(total > 100, `expected more than 100 flagged rows, got ${total}`);
    assert.equal(p.rows!.length, 100);
    assert.match(p.message, /the 100 most influential/);
    // the listed rows are those with the largest Cook's distances
    const cooks = r.points!.cooks;
    const listedMin = Math.min(...p.rows!.map((row) => cooks[r.points!.row.indexOf(row)]));
    const unlisted = r.points!.row.filter((row) => !p.rows!.includes(row)).map((row) => cooks[r.points!.row.indexOf(row)]);
    assert.ok(unlisted.every((d) => !(d > listedMin)), 'no unlisted row is more influential than a listed one');
  });

  it('extrapolation / inverse-extrapolation / inverse-no-root / prediction-invalid point at the spec entry', () => {
    const r = run({ ...expClean, predict: [10, 45, { z: 3 }], solveFor: [2, 0.02, 50], options: { crossValidate: false, profile: false } });
    const ex = only(r, 'extrapolation');
    assert.deepEqual(ex.path, ['predict', 1]);
    assert.equal(r.predictions[1].extrapolated, true);
    assert.deepEqual(only(r, 'prediction-invalid').path, ['predict', 2]);
    const ie = only(r, 'inverse-extrapolation');
    assert.deepEqual(ie.path, ['solveFor', 1]);
    assert.equal(r.inverse[1].extrapolated, true);
    assert.ok(r.inverse[1].roots[0].x > 20);
    const nr = only(r, 'inverse-no-root');
    assert.deepEqual(nr.path, ['solveFor', 2]);
    assert.deepEqual(r.inverse[2].roots, []);
    assert.equal(r.inverse[0].extrapolated, false);
  });

  it('linear-tendency: |r| ≥ 0.7 between y and an x is an info hint (common practice); silent when weak', () => {
    const y = X20.map((v, i) => v + noise(20, 1)[i]);
    const d = dataCorrelation(['x'], [Float64Array.from(X20)], Float64Array.from(y), DEFAULT_THRESHOLDS);
    assert.ok(d.correlation.x! > 0.9);
    assert.equal(d.problems[0].code, 'linear-tendency');
    assert.equal(d.problems[0].severity, 'info');
    const flat = dataCorrelation(['x'], [Float64Array.from(X20)], Float64Array.from(noise(20, 2)), DEFAULT_THRESHOLDS);
    assert.deepEqual(flat.problems, []);
    const constant = dataCorrelation(['x'], [Float64Array.from(X20)], new Float64Array(20).fill(3), DEFAULT_THRESHOLDS);
    assert.equal(constant.correlation.x, null);
  });

  it('overfit-nested: a richer model preferred by AICc although the F-test does not reject the simpler nested one', () => {
    // With one extra parameter AICc prefers the richer model once F exceeds about 2 (plus a small-sample term), while the
    // F-test rejects the simpler one only above F(0.95; 1, 17) = 4.45: seeded noise 66 gives F ≈ 3.8, in between.
    const fit = (seed: number) => {
      const e = noise(20, seed);
      const y = X20.map((v, i) => 1 + v + e[i]);
      const a = makeInput({ formula: 'c0 + c1*x', kind: 'polynomial', degree: 1, x: X20, y, name: 'line', index: 0, options: { crossValidate: false } });
      const b = makeInput({ formula: 'c0 + c1*x + c2*x^2', kind: 'polynomial', degree: 2, x: X20, y, name: 'quad', index: 1, options: { crossValidate: false } });
      const ra = analyzeModel(a);
      const rb = analyzeModel(b);
      return { ra, rb, cmp: compareModels([a, b], [ra, rb], DEFAULT_THRESHOLDS) };
    };
    const { ra, rb, cmp } = fit(66);
    assert.ok(rb.stats.aicc! < ra.stats.aicc!);
    assert.ok(cmp.fTests[0].p >= 0.05 && cmp.fTests[0].F > 2);
    const p = only(rb, 'overfit-nested');
    assert.deepEqual(p.path, ['models', 1]);
    assert.equal(cmp.best, 'line');
    assert.match(cmp.reason, /not rejected/);
    assert.ok(!codes(ra).includes('overfit-nested'));
    // silent when the line has the lower AICc anyway (seed 1)
    const quiet = fit(1);
    assert.ok(quiet.ra.stats.aicc! < quiet.rb.stats.aicc!);
    assert.ok(!codes(quiet.rb).includes('overfit-nested'));
  });
});

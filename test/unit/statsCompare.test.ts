// Model comparison: AICc ranking and Akaike weights, the extra-sum-of-squares F-test, nested-pair detection, the `best` rule.
import { strict as assert } from 'assert';
import { analyzeModel, compareModels, extraSumOfSquaresF, nestedRelation, DEFAULT_THRESHOLDS } from '../../src/engine/stats';
import { makeInput, noise, type FitCase } from './statsHelpers';

const close = (a: number | null | undefined, b: number, tol: number, what: string) =>
  assert.ok(a !== null && a !== undefined && Math.abs(a - b) <= tol, `${what}: got ${a}, expected ${b} ± ${tol}`);

const X = Array.from({ length: 24 }, (_, i) => 0.5 * (i + 1));
const E = noise(24, 31);
const opts = { crossValidate: false, profile: false };

function analyse(cases: FitCase[]) {
  const inputs = cases.map((c, index) => makeInput({ ...c, index, options: c.options ?? opts }));
  const reports = inputs.map((i) => analyzeModel(i));
  return { inputs, reports, cmp: compareModels(inputs, reports, DEFAULT_THRESHOLDS) };
}

describe('stats compareModels', () => {
  it('extra-sum-of-squares F by definition, p against the closed form of F(2, ν): (1 + 2F/ν)^(−ν/2)', () => {
    const t = extraSumOfSquaresF(10, 10, 6, 8)!;
    close(t.F, 2 / (6 / 8), 1e-14, 'F');
    assert.equal(t.df1, 2);
    assert.equal(t.df2, 8);
    close(t.p, Math.pow(1 + (2 * t.F) / 8, -4), 1e-12, 'p');
    // a richer fit that is worse (local minimum) gives F = 0, p = 1
    const worse = extraSumOfSquaresF(5, 10, 6, 9)!;
    assert.equal(worse.F, 0);
    assert.equal(worse.p, 1);
    assert.equal(extraSumOfSquaresF(5, 10, 0, 9), null, 'zero residual in the richer model');
    assert.equal(extraSumOfSquaresF(5, 9, 4, 9), null, 'no difference in dof');
  });

  it('ranks by AICc with ΔAICc and Akaike weights; F-tests for every nested polynomial pair; the quadratic truth wins', () => {
    const y = X.map((x, i) => 1 + 0.5 * x + 0.3 * x * x + 0.4 * E[i]);
    const { reports, cmp } = analyse([
      { name: 'line', formula: 'c0 + c1*x', kind: 'polynomial', degree: 1, x: X, y },
      { name: 'quad', formula: 'c0 + c1*x + c2*x^2', kind: 'polynomial', degree: 2, x: X, y },
      { name: 'cubic', formula: 'c0 + c1*x + c2*x^2 + c3*x^3', kind: 'polynomial', degree: 3, x: X, y },
    ]);
    assert.equal(cmp.ranking.length, 3);
    const sorted = cmp.ranking.map((r) => r.aicc!);
    assert.deepEqual(sorted, [...sorted].sort((a, b) => a - b));
    assert.equal(cmp.ranking[0].deltaAicc, 0);
    close(cmp.ranking.reduce((s, r) => s + r.weight!, 0), 1, 1e-12, 'weights sum to 1');
    for (const r of cmp.ranking) {
      const rep = reports.find((q) => q.name === r.name)!;
      close(r.deltaAicc, rep.stats.aicc! - cmp.ranking[0].aicc!, 1e-12, 'Δ');
    }
    const pairs = cmp.fTests.map((t) => `${t.simpler}<${t.richer}`).sort();
    assert.deepEqual(pairs, ['line<cubic', 'line<quad', 'quad<cubic']);
    const lq = cmp.fTests.find((t) => t.simpler === 'line' && t.richer === 'quad')!;
    assert.ok(lq.p < 1e-6, 'the curvature is significant');
    assert.equal(cmp.best, 'quad');
    assert.match(cmp.reason, /quad/);
  });

  it('recognises nesting: linear built-in ⊂ polynomial, NESTED built-in pairs, the same formula with a parameter fixed', () => {
    const y = X.map((x, i) => 3 * Math.exp(-0.2 * x) + 0.5 + 0.02 * E[i]);
    const { inputs, cmp } = analyse([
      { name: 'lin', formula: 'intercept + slope*x', kind: 'builtin', builtin: 'linear', x: X, y },
      { name: 'p2', formula: 'c0 + c1*x + c2*x^2', kind: 'polynomial', degree: 2, x: X, y },
      { name: 'exp', formula: 'A*exp(k*x)', kind: 'builtin', builtin: 'exponential', x: X, y, start: { A: 3, k: -0.2 } },
      { name: 'expoff', formula: 'A*exp(k*x) + C', kind: 'builtin', builtin: 'exponential_offset', x: X, y, start: { A: 3, k: -0.2, C: 0.4 } },
      { name: 'mine', formula: 'A*exp(-k*x) + C', x: X, y, start: { A: 3, k: 0.2, C: 0.4 } },
      { name: 'mine0', formula: 'A*exp(-k*x) + C', x: X, y, start: { A: 3, k: 0.2 }, fixed: { C: 0 } },
    ]);
    const pairs = cmp.fTests.map((t) => `${t.simpler}<${t.richer}`).sort();
    assert.deepEqual(pairs, ['exp<expoff', 'lin<p2', 'mine0<mine']);
    // not nested: different families, or the richer fixes what the simpler estimates
    assert.equal(nestedRelation(inputs[0], inputs[2], 0, 2), null);
    assert.equal(nestedRelation(inputs[4], inputs[5], 4, 5), null);
    const offsetTest = cmp.fTests.find((t) => t.simpler === 'exp')!;
    assert.ok(offsetTest.p < 1e-6, 'the offset C = 0.5 is detected');
    assert.equal(cmp.best === 'expoff' || cmp.best === 'mine', true, `best ${cmp.best}`);
  });

  it('polynomials with fixed coefficients are nested only when the fixed values agree', () => {
    const y = X.map((x, i) => 2 * x + 0.1 * E[i]);
    const { cmp } = analyse([
      { name: 'origin', formula: 'c0 + c1*x', kind: 'polynomial', degree: 1, fixed: { c0: 0 }, x: X, y },
      { name: 'quad0', formula: 'c0 + c1*x + c2*x^2', kind: 'polynomial', degree: 2, fixed: { c0: 0 }, x: X, y },
      { name: 'quad', formula: 'c0 + c1*x + c2*x^2', kind: 'polynomial', degree: 2, x: X, y },
    ]);
    const pairs = cmp.fTests.map((t) => `${t.simpler}<${t.richer}`).sort();
    // origin ⊂ quad0 (both c0 = 0), origin ⊂ quad (c0 estimated in the richer), quad0 ⊂ quad (the same degree, c0 fixed)
    assert.deepEqual(pairs, ['origin<quad', 'origin<quad0', 'quad0<quad']);
    // but a free line is not nested in a quadratic through the origin
    const free = analyse([
      { name: 'line', formula: 'c0 + c1*x', kind: 'polynomial', degree: 1, x: X, y },
      { name: 'quad0', formula: 'c0 + c1*x + c2*x^2', kind: 'polynomial', degree: 2, fixed: { c0: 0 }, x: X, y },
    ]);
    assert.deepEqual(free.cmp.fTests, []);
    assert.equal(cmp.best, 'origin');
  });

  it('prefers a model with fewer parameters within ΔAICc < 2 when no F-test applies', () => {
    // seeded noise 25: the 3-parameter Hill curve edges out the 2-parameter one by ΔAICc ≈ 0.04
    const e = noise(24, 25);
    const y = X.map((x, i) => 5 * (1 - Math.exp(-0.3 * x)) + 0.15 * e[i]);
    const { cmp, reports } = analyse([
      { name: 'hill', formula: 'Vmax*x^n/(K^n + x^n)', x: X, y, start: { Vmax: 5, K: 2.3, n: 1.2 } },
      { name: 'asym', formula: 'upper*(1 - exp(-k*x))', x: X, y, start: { upper: 5, k: 0.3 } },
    ]);
    const a = reports[0].stats.aicc!;
    const b = reports[1].stats.aicc!;
    assert.ok(a < b && b - a < 2, `AICc ${a} vs ${b}`);
    assert.equal(cmp.ranking[0].name, 'hill');
    assert.equal(cmp.best, 'asym');
    assert.match(cmp.reason, /ΔAICc < 2/);
    assert.equal(cmp.fTests.length, 0);
  });

  it('failed models are ranked last with nulls and never best; none converged -> best null with a reason', () => {
    const y = X.map((x, i) => 1 + x + 0.1 * E[i]);
    const cases: FitCase[] = [
      { name: 'ok', formula: 'a + b*x', x: X, y },
      { name: 'bad', formula: 'A*exp(k*x)', x: X, y, start: { A: 1e3, k: 5 }, maxIterations: 1 },
    ];
    const { cmp, reports } = analyse(cases);
    assert.equal(reports[1].status, 'failed');
    assert.equal(cmp.ranking[1].name, 'bad');
    assert.equal(cmp.ranking[1].aicc, null);
    assert.equal(cmp.ranking[1].weight, null);
    assert.equal(cmp.best, 'ok');
    const none = analyse([cases[1]]);
    assert.equal(none.cmp.best, null);
    assert.match(none.cmp.reason, /No model converged/);
  });
});

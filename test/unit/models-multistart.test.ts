// Generic multi-start (src/engine/solve/multistart/) through buildModel/fitModel and directly: behaviour on seeded
// synthetic data (invented, allowed for behaviour tests) — determinism, bounds, fixed and partly given starts,
// weights, variable projection, NaN models, cancellation and tiny time budgets.
import { strict as assert } from 'assert';
import { buildModel, fitModel, modelProblem } from '../../src/engine/models';
import { multiStart, mulberry32 } from '../../src/engine/solve/multistart';

function noisy(xs: number[], f: (x: number) => number, sd: number, seed: number) {
  const u = mulberry32(seed);
  const g = () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u());
  const x = Float64Array.from(xs);
  const y = Float64Array.from(xs, (v) => f(v) + sd * g());
  return { x, y };
}
const grid = (a: number, b: number, m: number) => Array.from({ length: m }, (_, k) => a + ((b - a) * k) / (m - 1));

function fitFormula(formula: string, x: Float64Array, y: Float64Array, params?: Record<string, object>, opts = {}, w: Float64Array | null = null) {
  const m = buildModel({ name: 'm', formula, params }, ['x'], { X: [x], y });
  return { m, r: fitModel(m, { X: [x], y, w }, { seconds: 10, ...opts }) };
}

describe('models: generic multi-start for formulas without starts', () => {
  const logistic = noisy(grid(0, 48, 49), (t) => 1.93 / (1 + Math.exp(-0.3 * (t - 12))), 0.01, 5);

  it('finds a logistic written as a formula (no starts, no bounds)', () => {
    const { r } = fitFormula('K / (1 + exp(-r*(x - t0)))', logistic.x, logistic.y);
    assert.equal(r.startSource, 'multi-start');
    assert.ok(r.converged, r.message);
    assert.ok(Math.abs(r.theta[0] - 1.93) < 0.02 && Math.abs(r.theta[1] - 0.3) < 0.02 && Math.abs(r.theta[2] - 12) < 0.3, String(r.theta));
  });

  it('reaches the least SSE of a fit started at the truth on common lab formulas (invented data)', () => {
    const cases: [string, Record<string, number>, number, number][] = [
      ['a*sin(w*x + phi) + c', { a: 2, w: 0.8, phi: 0.5, c: 1 }, 0, 20],
      ['V*x/(K + x) + m*x', { V: 5, K: 2, m: 0.1 }, 0, 30],
      ['A*exp(-((x - mu)/s)^2) + c', { A: 3, mu: 42, s: 5, c: 0.7 }, 0, 100],
      ['A*exp(-k1*x) - A*exp(-k2*x)', { A: 10, k1: 0.2, k2: 1.5 }, 0, 24],
      ['Emax*x^h/(EC^h + x^h) + E0', { Emax: 80, EC: 5, h: 1.5, E0: 10 }, 0.1, 100],
      ['a/(1 + b*exp(-c*x))', { a: 100, b: 50, c: 0.5 }, 0, 25],
    ];
    cases.forEach(([formula, truth, lo, hi], k) => {
      const m0 = buildModel({ name: 'm', formula }, ['x'], { X: [new Float64Array(1)], y: new Float64Array(1) });
      const at = (v: number) => m0.compiled.at(m0.params.map((p) => truth[p]), [v]);
      const d = noisy(grid(lo, hi, 40), at, 0.02, 100 + k);
      const { m, r } = fitFormula(formula, d.x, d.y);
      const ref = fitModel({ ...m, start: m.params.map((p) => truth[p]) }, { X: [d.x], y: d.y, w: null });
      assert.ok(r.sse <= ref.sse * (1 + 1e-8), `${formula}: SSE ${r.sse} vs ${ref.sse} from the truth`);
    });
  });

  it('is deterministic given the seed', () => {
    const a = fitFormula('K / (1 + exp(-r*(x - t0)))', logistic.x, logistic.y, undefined, { seed: 3 }).r;
    const b = fitFormula('K / (1 + exp(-r*(x - t0)))', logistic.x, logistic.y, undefined, { seed: 3 }).r;
    assert.deepEqual(Array.from(a.theta), Array.from(b.theta));
    assert.deepEqual(Array.from(a.startValues), Array.from(b.startValues));
  });

  it('solves the parameters the model is affine in by projection (detected numerically)', () => {
    const d = noisy(grid(0, 10, 30), (x) => 2 + 3 * Math.exp(-0.7 * x), 0.01, 2);
    const m = buildModel({ name: 'm', formula: 'a + b*exp(-k*x)' }, ['x'], { X: [d.x], y: d.y });
    const r = multiStart(modelProblem(m, { X: [d.x], y: d.y, w: null }), {
      start: [undefined, undefined, undefined], xRanges: [[0, 10]], yRange: [2, 5],
    });
    assert.deepEqual(r.projected, [0, 1]);
    assert.ok(Math.abs(r.theta[2] - 0.7) < 0.02, String(r.theta));
  });

  it('keeps every parameter inside its bounds and fixed parameters at their start', () => {
    const d = noisy(grid(0, 5, 20), (x) => 4 * Math.exp(-1.5 * x) + 0.5, 0.01, 4);
    // the data want k = 1.5; the bound caps it at 1
    const { r, m } = fitFormula('A*exp(-k*x) + C', d.x, d.y, { A: {}, k: { min: 0, max: 1 }, C: { start: 0.5, fixed: true } });
    assert.ok(r.theta[1] >= 0 && r.theta[1] <= 1, String(r.theta));
    assert.equal(r.theta[1], 1);
    assert.equal(r.atBound[1], 'max');
    assert.equal(r.theta[2], 0.5);
    assert.ok(m.fixed[2]);
  });

  it('uses a start given for some parameters and finds the others', () => {
    const { r } = fitFormula('K / (1 + exp(-r*(x - t0)))', logistic.x, logistic.y, { K: {}, r: { start: 0.2 }, t0: {} });
    assert.equal(r.startSource, 'multi-start');
    assert.equal(r.startValues[1], 0.2);
    assert.ok(Math.abs(r.theta[2] - 12) < 0.3);
  });

  it('respects weights: a wild point with weight 0 does not move the fit', () => {
    const d = noisy(grid(0, 10, 21), (x) => 3 * Math.exp(-0.4 * x), 0.005, 9);
    d.y[10] = 50;
    const w = new Float64Array(d.y.length).fill(1);
    w[10] = 0;
    const { r } = fitFormula('A*exp(-k*x)', d.x, d.y, undefined, {}, w);
    assert.ok(Math.abs(r.theta[1] - 0.4) < 0.01, String(r.theta));
  });

  it('never throws on a model that is NaN everywhere; reports it as not converged', () => {
    const x = Float64Array.from(grid(1, 5, 10));
    const y = Float64Array.from(x, (v) => v);
    const { r } = fitFormula('sqrt(-1 - a^2)*x + b*x^2*c', x, y);
    assert.equal(r.converged, false);
  });

  it('stops when asked (cancelled) and within a tiny time budget, still returning a result', () => {
    const c = fitFormula('K / (1 + exp(-r*(x - t0)))', logistic.x, logistic.y, undefined, { shouldStop: () => true }).r;
    assert.equal(c.termination, 'cancelled');
    assert.equal(c.theta.length, 3);
    const t = fitFormula('K / (1 + exp(-r*(x - t0)))', logistic.x, logistic.y, undefined, { seconds: 0.001 }).r;
    assert.equal(t.theta.length, 3);
    assert.ok(t.theta.every((v) => Number.isFinite(v)));
  });

  it('a built-in whose self-start ends badly falls back to the multi-start (keeps the better fit)', () => {
    // a decaying exponential offered data that rise then fall: no good exponential exists, the fit must still finish
    const d = noisy(grid(0, 10, 30), (x) => x * Math.exp(-0.5 * x), 0.001, 8);
    const m = buildModel({ name: 'e', builtin: 'exponential_offset' }, ['x'], { X: [d.x], y: d.y });
    const r = fitModel(m, { X: [d.x], y: d.y, w: null }, { seconds: 5 });
    assert.ok(['self-start', 'multi-start'].includes(r.startSource));
    assert.ok(Number.isFinite(r.sse));
  });

  it('handles huge and tiny scales (x in 1e6, y in 1e-9)', () => {
    const d = noisy(grid(1e6, 3e6, 25), (x) => 2e-9 * (1 - Math.exp(-x / 8e5)), 1e-12, 6);
    const { r } = fitFormula('a*(1 - exp(-x/s))', d.x, d.y);
    assert.ok(Math.abs(r.theta[0] / 2e-9 - 1) < 0.02 && Math.abs(r.theta[1] / 8e5 - 1) < 0.05, String(r.theta));
  });
});

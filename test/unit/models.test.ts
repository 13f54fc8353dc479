// Built-in catalogue, polynomials, nested pairs, buildModel/fitModel: behaviour on seeded synthetic data
// (invented data, allowed for behaviour tests); the interface texts are checked against DESIGN.md's table.
import { strict as assert } from 'assert';
import { BUILTINS, NESTED, buildModel, fitModel, polynomialFormula, ModelError } from '../../src/engine/models';
import { compileFormula } from '../../src/engine/formula';
import { mulberry32 } from '../../src/engine/solve/multistart';

/** Standard normal deviates from a seeded uniform PRNG (Box–Muller; common practice). */
function gaussianNoise(seed: number): () => number {
  const u = mulberry32(seed);
  return () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u());
}

function linspace(a: number, b: number, m: number): number[] {
  return Array.from({ length: m }, (_, k) => a + ((b - a) * k) / (m - 1));
}
function logspace(a: number, b: number, m: number): number[] {
  return linspace(Math.log10(a), Math.log10(b), m).map((v) => 10 ** v);
}

/** Synthetic data of a built-in at true parameters, relative noise `noise` of the y span, x optionally shuffled. */
function synth(id: string, truth: Record<string, number>, xs: number[], noise: number, seed: number, shuffle = true) {
  const b = BUILTINS[id];
  const cf = compileFormula(b.formula, { variables: ['x'], params: b.params });
  const theta = b.params.map((p) => truth[p]);
  const x = Float64Array.from(xs);
  if (shuffle) {
    const u = mulberry32(seed + 1000);
    for (let k = x.length - 1; k > 0; k--) {
      const r = Math.floor(u() * (k + 1));
      [x[k], x[r]] = [x[r], x[k]];
    }
  }
  const f = new Float64Array(x.length);
  cf.evaluate(theta, [x], f);
  const span = Math.max(...f) - Math.min(...f);
  const g = gaussianNoise(seed);
  const y = Float64Array.from(f, (v) => v + noise * span * g());
  return { x, y };
}

// DESIGN.md "Built-in catalogue" table, copied verbatim (the ids, formulas and parameter names are an interface).
const TABLE: [string, string, string[]][] = [
  ['linear', 'intercept + slope*x', ['intercept', 'slope']],
  ['exponential', 'A*exp(k*x)', ['A', 'k']],
  ['exponential_offset', 'A*exp(k*x) + C', ['A', 'k', 'C']],
  ['exponential_base', 'a + b*c^x', ['a', 'b', 'c']],
  ['double_exponential', 'A1*exp(-k1*x) + A2*exp(-k2*x)', ['A1', 'k1', 'A2', 'k2']],
  ['logarithmic', 'a + b*log(x)', ['a', 'b']],
  ['power', 'a*x^b', ['a', 'b']],
  ['michaelis_menten', 'Vmax*x/(Km + x)', ['Vmax', 'Km']],
  ['hill', 'Vmax*x^n/(K^n + x^n)', ['Vmax', 'K', 'n']],
  ['logistic3', 'K/(1 + exp(-r*(x - x0)))', ['K', 'r', 'x0']],
  ['logistic4', 'lower + (upper - lower)/(1 + (ec50/x)^slope)', ['lower', 'upper', 'ec50', 'slope']],
  ['logistic5', 'lower + (upper - lower)/(1 + (xc/x)^slope)^asym', ['lower', 'upper', 'xc', 'slope', 'asym']],
  ['gompertz', 'K*exp(-exp(-r*(x - x0)))', ['K', 'r', 'x0']],
  ['richards', 'K/(1 + nu*exp(-r*(x - x0)))^(1/nu)', ['K', 'r', 'x0', 'nu']],
  ['weibull_growth', 'upper - (upper - y0)*exp(-(x/scale)^shape)', ['upper', 'y0', 'scale', 'shape']],
  ['asymptotic', 'upper - (upper - y0)*exp(-k*x)', ['upper', 'y0', 'k']],
  ['gaussian', 'height*exp(-(x - center)^2/(2*width^2))', ['height', 'center', 'width']],
  ['lorentzian', 'height/(1 + ((x - center)/hwhm)^2)', ['height', 'center', 'hwhm']],
  ['arrhenius', 'A*exp(-Ea/(8.314462618*x))', ['A', 'Ea']],
  ['steinhart_hart', '1/(a + b*log(x) + c*log(x)^3)', ['a', 'b', 'c']],
];

// Invented true parameters and designs (behaviour tests); tol = relative tolerance against the truth, chosen from
// the noise level (0.5 % of the y span unless `noise` says otherwise).
interface Case {
  id: string;
  truth: Record<string, number>;
  x: number[];
  tol: number;
  noise?: number;
}
const CASES: Case[] = [
  { id: 'linear', truth: { intercept: 2, slope: -0.5 }, x: linspace(0, 10, 21), tol: 0.02 },
  { id: 'exponential', truth: { A: 3, k: -0.4 }, x: linspace(0, 10, 25), tol: 0.02 },
  { id: 'exponential_offset', truth: { A: 5, k: -0.3, C: 1.5 }, x: linspace(0, 20, 30), tol: 0.02 },
  { id: 'exponential_base', truth: { a: 1, b: 4, c: 0.8 }, x: linspace(0, 20, 30), tol: 0.02 },
  { id: 'double_exponential', truth: { A1: 2, k1: 0.1, A2: 5, k2: 1.0 }, x: linspace(0, 40, 80), tol: 0.05, noise: 0.001 },
  { id: 'logarithmic', truth: { a: 1, b: 2 }, x: linspace(0.5, 20, 20), tol: 0.05 },
  { id: 'power', truth: { a: 2, b: 1.5 }, x: linspace(0.5, 10, 20), tol: 0.02 },
  { id: 'michaelis_menten', truth: { Vmax: 10, Km: 2 }, x: logspace(0.2, 40, 14), tol: 0.03 },
  { id: 'hill', truth: { Vmax: 8, K: 3, n: 2.5 }, x: logspace(0.2, 30, 20), tol: 0.03 },
  { id: 'logistic3', truth: { K: 2, r: 0.5, x0: 12 }, x: linspace(0, 30, 31), tol: 0.02 },
  { id: 'logistic4', truth: { lower: 0.1, upper: 2.5, ec50: 5, slope: 1.5 }, x: logspace(0.1, 100, 24), tol: 0.03 },
  { id: 'logistic5', truth: { lower: 0.1, upper: 2.5, xc: 5, slope: 1.2, asym: 2 }, x: logspace(0.01, 1000, 40), tol: 0.05, noise: 0.001 },
  { id: 'gompertz', truth: { K: 3, r: 0.3, x0: 10 }, x: linspace(0, 40, 41), tol: 0.02 },
  { id: 'richards', truth: { K: 2, r: 0.4, x0: 10, nu: 2.5 }, x: linspace(0, 40, 61), tol: 0.05, noise: 0.001 },
  { id: 'weibull_growth', truth: { upper: 5, y0: 1, scale: 8, shape: 2 }, x: linspace(0.5, 30, 31), tol: 0.03 },
  { id: 'asymptotic', truth: { upper: 4, y0: 0.5, k: 0.2 }, x: linspace(0, 30, 31), tol: 0.03 },
  { id: 'gaussian', truth: { height: 3, center: 5, width: 1.2 }, x: linspace(0, 10, 41), tol: 0.02 },
  { id: 'lorentzian', truth: { height: 3, center: 5, hwhm: 0.8 }, x: linspace(0, 10, 41), tol: 0.02 },
  { id: 'arrhenius', truth: { A: 1e7, Ea: 5e4 }, x: linspace(280, 360, 17), tol: 0.05 },
  // typical magnitudes of a 10 kΩ NTC thermistor's coefficients ("from memory", invented data only)
  { id: 'steinhart_hart', truth: { a: 1.129e-3, b: 2.341e-4, c: 8.775e-8 }, x: logspace(500, 30000, 20), tol: 0.05, noise: 0.0005 },
];

describe('models: built-in catalogue', () => {
  it('has exactly the ids, formula texts and parameter names of DESIGN.md', () => {
    assert.deepEqual(Object.keys(BUILTINS).sort(), TABLE.map((t) => t[0]).sort());
    for (const [id, formula, params] of TABLE) {
      assert.equal(BUILTINS[id].formula, formula, id);
      assert.deepEqual(BUILTINS[id].params, params, id);
      // the formula's own parameters (first appearance) are exactly the listed ones
      const cf = compileFormula(formula, { variables: ['x'] });
      assert.deepEqual([...cf.params].sort(), [...params].sort(), id);
      for (const p of params) assert.ok(BUILTINS[id].meanings[p], `${id}.${p} has a meaning`);
      assert.ok(BUILTINS[id].description.length > 0);
    }
  });

  for (const c of CASES) {
    it(`${c.id}: self-start alone converges and recovers the parameters (seeded synthetic data, shuffled x)`, () => {
      const { x, y } = synth(c.id, c.truth, c.x, c.noise ?? 0.005, 7);
      const model = buildModel({ name: c.id, builtin: c.id }, ['x'], { X: [x], y });
      const r = fitModel(model, { X: [x], y, w: null }, { seconds: 10 });
      assert.ok(r.converged, `${c.id}: ${r.termination} ${r.message}`);
      const b = BUILTINS[c.id];
      if (model.compiled.linear) assert.equal(r.startSource, 'linear');
      else assert.equal(r.startSource, 'self-start', `${c.id} fell back to ${r.startSource}`);
      b.params.forEach((p, j) => {
        const t = c.truth[p];
        assert.ok(Math.abs(r.theta[j] - t) <= c.tol * Math.abs(t), `${c.id}.${p}: ${r.theta[j]} vs ${t}`);
      });
      // and reaches the same minimum as a fit started at the truth
      const ref = fitModel({ ...model, start: b.params.map((p) => c.truth[p]) }, { X: [x], y, w: null });
      assert.ok(r.sse <= ref.sse * (1 + 1e-7), `${c.id}: SSE ${r.sse} vs ${ref.sse} from the truth`);
    });
  }

  it('fits data that include x = 0 where the model has x^k (Weibull growth from time 0, Hill with a zero dose)', () => {
    // ∂/∂k (x/scale)^k = (x/scale)^k·ln(x/scale) → 0 as x → 0+ (k > 0): the derivative must be finite at x = 0
    for (const [id, truth, xs] of [
      ['weibull_growth', { upper: 5, y0: 1, scale: 8, shape: 2 }, linspace(0, 30, 31)],
      ['hill', { Vmax: 8, K: 3, n: 2.5 }, [0, ...logspace(0.2, 30, 19)]],
    ] as [string, Record<string, number>, number[]][]) {
      const { x, y } = synth(id, truth, xs, 0.005, 11);
      const m = buildModel({ name: id, builtin: id }, ['x'], { X: [x], y });
      const r = fitModel(m, { X: [x], y, w: null });
      assert.ok(r.converged, `${id}: ${r.termination} ${r.message}`);
      BUILTINS[id].params.forEach((p, j) => assert.ok(Math.abs(r.theta[j] - truth[p]) <= 0.05 * Math.abs(truth[p]), `${id}.${p}: ${r.theta[j]}`));
    }
  });

  it('decreasing curves self-start as well as increasing ones (inhibition 4PL with slope ≥ 0, decay to a plateau, falling Hill)', () => {
    const cases: [string, Record<string, number>, number[], Record<string, { min?: number }>?][] = [
      ['logistic4', { lower: 2.4, upper: 0.1, ec50: 3, slope: 1.2 }, logspace(0.05, 200, 24), { slope: { min: 0 } }],
      ['asymptotic', { upper: 0.5, y0: 4, k: 0.15 }, linspace(0, 40, 30)],
      ['exponential_offset', { A: -3, k: -0.2, C: 5 }, linspace(0, 30, 30)],
      ['hill', { Vmax: 6, K: 2, n: -1.8 }, logspace(0.1, 40, 22)],
    ];
    for (const [id, truth, xs, params] of cases) {
      const { x, y } = synth(id, truth, xs, 0.003, 21);
      const m = buildModel({ name: id, builtin: id, params }, ['x'], { X: [x], y });
      const r = fitModel(m, { X: [x], y, w: null });
      assert.equal(r.startSource, 'self-start', id);
      assert.ok(r.converged, `${id}: ${r.message}`);
      BUILTINS[id].params.forEach((p, j) => assert.ok(Math.abs(r.theta[j] - truth[p]) <= 0.05 * Math.abs(truth[p]), `${id}.${p}: ${r.theta[j]} vs ${truth[p]}`));
    }
  });

  it('a self-start on 100 000 rows works on an even subsample and still finds the curve', () => {
    const { x, y } = synth('logistic3', { K: 2, r: 0.5, x0: 12 }, linspace(0, 30, 100000), 0.01, 5);
    const s = BUILTINS.logistic3.selfStart(x, y)!;
    assert.ok(Math.abs(s.K - 2) < 0.1 && Math.abs(s.x0 - 12) < 1.5, JSON.stringify(s));
  });

  it('self-starts are finite or null on awkward data: few points, negative and zero y, constant x', () => {
    const awkward: [number[], number[]][] = [
      [[1, 2], [0, 0]],
      [[1, 2, 3], [-1, 0, 2]],
      [[5, 5, 5, 5, 5], [1, 2, 3, 4, 5]],
      [[-3, -1, 0, 2, 4, 8], [-2, -1, 0, 0, 1, -5]],
      [[0, 0.1, 0.2, 10, 1000], [1e-300, 1e300, -1e300, 0, 1]],
    ];
    for (const [xs, ys] of awkward) {
      for (const b of Object.values(BUILTINS)) {
        const s = b.selfStart(Float64Array.from(xs), Float64Array.from(ys));
        if (s === null) continue;
        for (const p of b.params) assert.ok(Number.isFinite(s[p]), `${b.id}.${p} = ${s[p]} on ${xs}`);
      }
    }
  });

  it('exponential self-start handles decaying data with negative values (log falls back to the profile)', () => {
    const x = Float64Array.from(linspace(0, 5, 12));
    const y = Float64Array.from(x, (v) => -4 * Math.exp(-0.7 * v) + (v > 4 ? 0.03 : 0));
    const s = BUILTINS.exponential.selfStart(x, y)!;
    assert.ok(s.A < 0 && s.k < 0, JSON.stringify(s));
  });

  it('ignores rows with NaN x or y', () => {
    const x = Float64Array.from([0, 1, 2, NaN, 4, 5, 6]);
    const y = Float64Array.from([1, 2, 4, 8, NaN, 32, 64]);
    const s = BUILTINS.exponential.selfStart(x, y)!;
    assert.ok(Math.abs(s.k - Math.LN2) < 0.05, JSON.stringify(s));
  });
});

describe('models: polynomials', () => {
  it('names c0..cn in the raw basis', () => {
    assert.deepEqual(polynomialFormula(0), { formula: 'c0', params: ['c0'] });
    assert.deepEqual(polynomialFormula(3), { formula: 'c0 + c1*x + c2*x^2 + c3*x^3', params: ['c0', 'c1', 'c2', 'c3'] });
    assert.equal(polynomialFormula(2, 't').formula, 'c0 + c1*t + c2*t^2');
    assert.throws(() => polynomialFormula(-1));
    assert.throws(() => polynomialFormula(1.5));
  });

  it('fits exactly by linear least squares; c0 may be fixed (line through the origin)', () => {
    const x = Float64Array.from(linspace(-2, 3, 11));
    const y = Float64Array.from(x, (v) => 1 - 2 * v + 0.5 * v * v);
    const m = buildModel({ name: 'q', polynomial: 2 }, ['x'], { X: [x], y });
    assert.ok(m.compiled.linear);
    const r = fitModel(m, { X: [x], y, w: null });
    assert.equal(r.startSource, 'linear');
    [1, -2, 0.5].forEach((c, j) => assert.ok(Math.abs(r.theta[j] - c) < 1e-12, `c${j}`));
    const y2 = Float64Array.from(x, (v) => 3 * v);
    const m2 = buildModel({ name: 'o', polynomial: 1, params: { c0: { start: 0, fixed: true } } }, ['x'], { X: [x], y: y2 });
    const r2 = fitModel(m2, { X: [x], y: y2, w: null });
    assert.equal(r2.theta[0], 0);
    assert.ok(Math.abs(r2.theta[1] - 3) < 1e-12);
  });
});

describe('models: bounded polynomial', () => {
  it('a bound on a coefficient is honoured (the active bound holds; the rest is least squares given it)', () => {
    const xs = linspace(-5, 5, 11);
    const x = Float64Array.from(xs);
    const y = Float64Array.from(xs, (v) => 1 + v + 0.5 * v * v);
    const m = buildModel({ name: 'p', polynomial: 2, params: { c2: { max: 0.2 } } }, ['x'], { X: [x], y });
    const r = fitModel(m, { X: [x], y, w: null });
    assert.equal(r.theta[2], 0.2);
    assert.equal(r.atBound[2], 'max');
    // given c2 = 0.2: y − 0.2x² = 1 + x + 0.3x², whose least-squares line on the symmetric grid is 1 + 0.3·mean(x²) + x
    const mx2 = xs.reduce((a, v) => a + v * v, 0) / xs.length;
    assert.ok(Math.abs(r.theta[0] - (1 + 0.3 * mx2)) < 1e-8 && Math.abs(r.theta[1] - 1) < 1e-8, String(r.theta));
  });
});

describe('models: nested pairs', () => {
  it('contains the pairs of DESIGN.md', () => {
    const has = (s: string, r: string, fix: Record<string, number>) =>
      NESTED.some((p) => p.simpler === s && p.richer === r && JSON.stringify(p.fix) === JSON.stringify(fix));
    assert.ok(has('exponential', 'exponential_offset', { C: 0 }));
    assert.ok(has('logistic3', 'richards', { nu: 1 }));
    assert.ok(has('logistic4', 'logistic5', { asym: 1 }));
    assert.ok(has('linear', 'polynomial:1', {}));
  });

  it('the richer model with its fixed values equals the simpler one at every x', () => {
    const g = mulberry32(3);
    const compile = (id: string) => {
      if (id.startsWith('polynomial:')) {
        const pf = polynomialFormula(Number(id.slice(11)));
        return compileFormula(pf.formula, { variables: ['x'], params: pf.params });
      }
      return compileFormula(BUILTINS[id].formula, { variables: ['x'], params: BUILTINS[id].params });
    };
    for (const pair of NESTED) {
      const simple = compile(pair.simpler);
      const rich = compile(pair.richer);
      for (let trial = 0; trial < 5; trial++) {
        const sp: Record<string, number> = {};
        for (const name of simple.params) sp[name] = 0.3 + 2 * g();
        const rp: Record<string, number> = { ...pair.fix };
        for (const name of simple.params) rp[pair.rename?.[name] ?? name] = sp[name];
        for (const [name, fn] of Object.entries(pair.map ?? {})) rp[name] = fn(sp);
        for (const name of rich.params) assert.ok(rp[name] !== undefined, `${pair.richer}.${name} is mapped`);
        for (const x of [0.1, 0.7, 1, 2.5, 9]) {
          const a = simple.at(simple.params.map((n) => sp[n]), [x]);
          const b = rich.at(rich.params.map((n) => rp[n]), [x]);
          assert.ok(Math.abs(a - b) <= 1e-12 * Math.max(1, Math.abs(a)), `${pair.simpler} ⊂ ${pair.richer} at x=${x}: ${a} vs ${b}`);
        }
      }
    }
  });
});

describe('models: buildModel errors and parameters', () => {
  const x = Float64Array.from([1, 2, 3, 4]);
  const y = Float64Array.from([1, 2, 3, 4]);
  const data = { X: [x], y };

  it('names an undeclared formula parameter', () => {
    assert.throws(
      () => buildModel({ name: 'm', formula: 'K*x/(Km + x)', params: { K: { start: 1 } } }, ['x'], data),
      (e: unknown) => e instanceof ModelError && /'Km'/.test(e.message) && /not declared/.test(e.message),
    );
  });

  it('names a declared parameter that is not in the formula, with a suggestion', () => {
    assert.throws(
      () => buildModel({ name: 'm', formula: 'K*x', params: { K: {}, K2: {} } }, ['x'], data),
      (e: unknown) => e instanceof ModelError && /'K2'/.test(e.message) && /did you mean 'K'/.test(e.message),
    );
    assert.throws(
      () => buildModel({ name: 'm', builtin: 'logistic3', params: { x00: { start: 1 } } }, ['x'], data),
      (e: unknown) => e instanceof ModelError && /'x00'/.test(e.message) && /did you mean 'x0'/.test(e.message),
    );
  });

  it('refuses a polynomial or a built-in over several x variables', () => {
    const two = { X: [x, x], y };
    assert.throws(() => buildModel({ name: 'p', polynomial: 2 }, ['t', 'T'], two), (e: unknown) => e instanceof ModelError && /single x variable/.test(e.message));
    assert.throws(() => buildModel({ name: 'b', builtin: 'linear' }, ['t', 'T'], two), (e: unknown) => e instanceof ModelError && /single x variable/.test(e.message));
  });

  it('refuses an unknown built-in with a suggestion, fixed without start, min above max, start outside bounds', () => {
    assert.throws(() => buildModel({ name: 'b', builtin: 'logistc3' }, ['x'], data), /did you mean 'logistic3'/);
    assert.throws(() => buildModel({ name: 'b', builtin: 'logistic3', params: { K: { fixed: true } } }, ['x'], data), /fixed but has no start/);
    assert.throws(() => buildModel({ name: 'b', builtin: 'logistic3', params: { K: { min: 2, max: 1 } } }, ['x'], data), /above max/);
    assert.throws(() => buildModel({ name: 'b', builtin: 'logistic3', params: { K: { start: 5, max: 1 } } }, ['x'], data), /outside its bounds/);
  });

  it('carries default bounds, spec bounds, fixed values and the start source', () => {
    const m = buildModel({ name: 'h', builtin: 'hill', params: { n: { start: 1, fixed: true }, Vmax: { max: 100 } } }, ['x'], data);
    assert.equal(m.lower[m.params.indexOf('K')], 0);
    assert.equal(m.upper[m.params.indexOf('Vmax')], 100);
    assert.deepEqual(m.fixed, [false, false, true]);
    assert.equal(m.startSource, 'self-start');
    const f = buildModel({ name: 'f', formula: 'a*exp(b*x)' }, ['x'], data);
    assert.deepEqual(f.params, ['a', 'b']);
    assert.equal(f.startSource, 'multi-start');
    const s = buildModel({ name: 'f', formula: 'a*exp(b*x)', params: { a: { start: 1 }, b: { start: 0.1 } } }, ['x'], data);
    assert.equal(s.startSource, 'spec');
    const t = buildModel({ name: 'p', polynomial: 1 }, ['hours'], data);
    assert.equal(t.formula, 'c0 + c1*hours');
  });

  it('a built-in over a variable with another name is bound to x', () => {
    const xs = Float64Array.from(linspace(0, 10, 12));
    const ys = Float64Array.from(xs, (v) => 3 * Math.exp(-0.2 * v));
    const m = buildModel({ name: 'e', builtin: 'exponential' }, ['hours'], { X: [xs], y: ys });
    const r = fitModel(m, { X: [xs], y: ys, w: null });
    assert.ok(Math.abs(r.theta[1] + 0.2) < 1e-8);
  });

  it('user starts override the self-start for that parameter only', () => {
    const xs = Float64Array.from(linspace(0, 30, 31));
    const ys = Float64Array.from(xs, (v) => 2 / (1 + Math.exp(-0.5 * (v - 12))));
    const m = buildModel({ name: 'l', builtin: 'logistic3', params: { K: { start: 1.5 } } }, ['x'], { X: [xs], y: ys });
    const r = fitModel(m, { X: [xs], y: ys, w: null });
    assert.equal(r.startValues[0], 1.5);
    assert.equal(r.startSource, 'self-start');
    assert.ok(Math.abs(r.theta[0] - 2) < 1e-8);
  });
});

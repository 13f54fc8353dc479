// Exact derivatives: symbolic Jacobians against central differences (Richardson-extrapolated), against an
// independent forward-mode AD implementation, at the edges of the power rule and the subgradients; linear detection.

import { strict as assert } from 'assert';
import * as fc from 'fast-check';
import { compileFormula, formatFormula, parseFormula } from '../../src/engine/formula';
import { compileForwardJacobian } from '../../src/engine/formula/forward';
import { centralDifference, formulaArbitrary, KINK_TEMPLATES, smallReal, SMOOTH_TEMPLATES } from './formulaHelpers';

/** Symbolic gradient vs central differences at one point; relative to max(1, |f|, |∂f|). */
function checkAgainstDifferences(text: string, variables: string[], theta: number[], x: number[], tol = 1e-7): void {
  const c = compileFormula(text, { variables });
  const g = new Float64Array(c.params.length);
  const f = c.gradientAt(theta, x, g);
  for (let j = 0; j < c.params.length; j++) {
    const fd = centralDifference((t) => c.at(t, x), theta, j);
    const scale = Math.max(1, Math.abs(f), Math.abs(g[j]));
    assert.ok(Math.abs(g[j] - fd) <= tol * scale, `${text}: ∂/∂${c.params[j]} = ${g[j]}, central difference ${fd} at θ=${theta}, x=${x}`);
  }
}

describe('formula derivatives against central differences (Richardson-extrapolated, O(h^4); Burden & Faires §4.2)', () => {
  const cases: [string, number[], number[]][] = [
    // catalogue models (DESIGN.md) at typical values
    ['K/(1 + exp(-r*(x - x0)))', [1.9, 0.3, 12], [7]],
    ['lower + (upper - lower)/(1 + (ec50/x)^slope)', [0.05, 2.1, 3.3, 1.4], [2.2]],
    ['lower + (upper - lower)/(1 + (xc/x)^slope)^asym', [0.05, 2.1, 3.3, 1.4, 0.8], [2.2]],
    ['Vmax*x^n/(K^n + x^n)', [2, 1.7, 1.5], [1.2]],
    ['K*exp(-exp(-r*(x - x0)))', [2, 0.4, 10], [8]],
    ['K/(1 + nu*exp(-r*(x - x0)))^(1/nu)', [2, 0.4, 10, 0.7], [8]],
    ['upper - (upper - y0)*exp(-(x/scale)^shape)', [2, 0.1, 5, 1.8], [3]],
    ['height*exp(-(x - center)^2/(2*width^2))', [3, 1, 0.5], [1.3]],
    ['height/(1 + ((x - center)/hwhm)^2)', [3, 1, 0.5], [1.3]],
    ['A*exp(-Ea/(8.314462618*x))', [1e6, 5e4], [310]],
    ['1/(a + b*log(x) + c*log(x)^3)', [1.1e-3, 2.4e-4, 9e-8], [10000]],
    ['a + b*c^x', [1, 2, 0.7], [3.5]],
    ['Vmax*x/(Km + x)', [3, 0.8], [0.5]],
    // every function
    ['sin(a*x) + cos(b*x) + tan(c*x)', [0.3, 0.7, 0.2], [1.1]],
    ['asin(a*x) + acos(b*x) + atan(c*x)', [0.3, 0.7, 0.2], [1.1]],
    ['sinh(a*x) + cosh(b*x) + tanh(c*x)', [0.3, 0.7, 0.2], [1.1]],
    ['sqrt(a + x) + log(b*x) + ln(c + x) + log10(a*b*x)', [0.3, 0.7, 0.2], [1.1]],
    ['pow(a, b) + pow(x, a) + a^x', [1.3, 0.7], [1.1]],
    ['exp(a*x)/b - 1/(a*b)', [0.4, 2.5], [1.5]],
    // powers: base with a parameter, constant integer exponents on negative bases
    ['(a - x)^2 + (a - x)^3 + (a*x)^-1 + (a*x)^-2', [0.5], [2]],
    ['(b*x)^a', [2.5, 1.2], [0.8]],
    // model statements of NIST StRD Bennett5, MGH10, Eckerle4, Roszman1, Misra1d, ENSO, Nelson (the points are arbitrary)
    ['b1*(b2 + x)^(-1/b3)', [-2523.5, 46.7, 0.932], [7.447]],
    ['b1*exp(b2/(x + b3))', [0.0056, 6181, 345], [50]],
    ['(b1/b2) * exp(-0.5*((x - b3)/b2)^2)', [1.55, 4.09, 451.5], [440]],
    ['b1 - b2*x - atan(b3/(x - b4))/pi', [0.2, -6e-6, 1200, -180], [-4000]],
    ['b1*b2*x*((1 + b2*x)^(-1))', [438, 3e-4], [200]],
    ['b1 + b2*cos(2*pi*x/12) + b3*sin(2*pi*x/12) + b5*cos(2*pi*x/b4) + b6*sin(2*pi*x/b4) + b8*cos(2*pi*x/b7) + b9*sin(2*pi*x/b7)',
      [10.5, 3.08, 0.53, 44.3, -1.62, 0.53, 26.9, 0.21, 1.5], [17]],
    // two variables
    ['b1 - b2*x1*exp(-b3*x2)', [2.59, 5.6e-9, -5.8e-2], [1, 180]],
    ['A*exp(-k*t)*(1 + c*(T - 298))', [2, 0.1, 0.01], [5, 310]],
  ];
  for (const [text, theta, x] of cases) {
    const variables = x.length === 1 ? ['x'] : text.includes('x1') ? ['x1', 'x2'] : ['t', 'T'];
    it(text, () => checkAgainstDifferences(text, variables, theta, x));
  }

  it('random smooth formulas at random points (property, 2 variables, 3 parameters)', () => {
    fc.assert(
      fc.property(formulaArbitrary(SMOOTH_TEMPLATES), fc.array(smallReal, { minLength: 5, maxLength: 5 }), (text, [a, b, c, x, y]) => {
        const f = compileFormula(text, { variables: ['x', 'y'], params: ['a', 'b', 'c'] });
        const theta = [a, b, c];
        const g = new Float64Array(3);
        const v = f.gradientAt(theta, [x, y], g);
        for (let j = 0; j < 3; j++) {
          const fd = centralDifference((t) => f.at(t, [x, y]), theta, j);
          const scale = Math.max(1, Math.abs(v), Math.abs(g[j]));
          assert.ok(Math.abs(g[j] - fd) <= 1e-6 * scale, `${text}: ∂/∂θ${j} = ${g[j]} vs ${fd} at ${[a, b, c, x, y]}`);
        }
      }),
      { numRuns: 300 },
    );
  });
});

describe('formula derivatives: symbolic equals forward-mode AD (independent implementation; property)', () => {
  it('on random formulas including abs/min/max and divisions, at random points', () => {
    fc.assert(
      fc.property(
        formulaArbitrary([...SMOOTH_TEMPLATES, ...KINK_TEMPLATES, '(U)/(a - x)', '(U)^b', 'exp(U)', 'sqrt(abs(U))']),
        fc.array(smallReal, { minLength: 5, maxLength: 5 }),
        (text, [a, b, c, x, y]) => {
          const opts = { variables: ['x', 'y'], params: ['a', 'b', 'c'] };
          const sym = compileFormula(text, opts);
          const fwd = compileForwardJacobian(text, opts);
          const X = [new Float64Array([x]), new Float64Array([y])];
          const o1 = new Float64Array(1);
          const o2 = new Float64Array(1);
          const J1 = new Float64Array(3);
          const J2 = new Float64Array(3);
          sym.evaluateWithJacobian([a, b, c], X, o1, J1);
          fwd.kernel([a, b, c], X, o2, J2);
          assert.ok(Object.is(o1[0], o2[0]), 'same value');
          for (let j = 0; j < 3; j++) {
            const u = J1[j];
            const v = J2[j];
            const ok = Object.is(u, v) || (Number.isNaN(u) && Number.isNaN(v)) ||
              Math.abs(u - v) <= 1e-9 * Math.max(1, Math.abs(u), Math.abs(v)) ||
              // where the function itself is not finite, the two methods may disagree on ±Infinity vs NaN
              !Number.isFinite(o1[0]) || !Number.isFinite(u) && !Number.isFinite(v);
            assert.ok(ok, `${text}: ∂/∂θ${j} symbolic ${u} vs forward ${v} at ${[a, b, c, x, y]}`);
          }
        },
      ),
      { numRuns: 400 },
    );
  });
});

describe('formula derivatives at the edges', () => {
  const grad = (text: string, theta: number[], x: number[], variables = ['x']) => {
    const c = compileFormula(text, { variables });
    const g = new Float64Array(c.params.length);
    c.gradientAt(theta, x, g);
    return [...g].map((v) => (v === 0 ? 0 : v)); // -0 and 0 compare equal here
  };
  it('x^n with constant n: n*x^(n-1), finite for a negative base (no log of a negative)', () => {
    assert.deepEqual(grad('(a*x)^2', [-3], [2]), [2 * -6 * 2]);
    assert.deepEqual(grad('(a*x)^3', [-1], [2]), [3 * 4 * 2]);
    assert.deepEqual(grad('c^x', [-2], [3]), [3 * 4], 'parameter base, variable exponent: x*c^(x-1)');
  });
  it('at x = 0 where the model does not depend on a parameter, the derivative is 0, not NaN (hand-derived: f is constant in θ there; lim u→0+ of u^b·ln u = 0 for b > 0)', () => {
    assert.deepEqual(grad('upper - (upper - y0)*exp(-(x/scale)^shape)', [2, 0.1, 5, 0.8], [0]), [0, 1, 0, 0]);
    assert.deepEqual(grad('upper - (upper - y0)*exp(-(x/scale)^shape)', [2, 0.1, 5, 1.8], [0]), [0, 1, 0, 0]);
    assert.deepEqual(grad('Vmax*x^n/(K^n + x^n)', [2, 1.5, 0.7], [0]), [0, 0, 0]);
    assert.deepEqual(grad('x^n', [2], [0]), [0]);
    assert.deepEqual(grad('sqrt(a*x) + asin(b*x)', [2, 3], [0]), [0, 0]);
    assert.deepEqual(grad('log(1 + a*x^2)', [2], [0]), [0]);
    // zero dose in the 4-parameter logistic: (ec50/x)^slope = ∞, f = lower, flat in upper, ec50, slope
    assert.deepEqual(grad('lower + (upper - lower)/(1 + (ec50/x)^slope)', [0.05, 2, 3, 1.4], [0]), [1, 0, 0, 0]);
    assert.deepEqual(grad('lower + (upper - lower)/(1 + (ec50/x)^slope)', [0.05, 2, 3, 0.6], [0]), [1, 0, 0, 0]);
    // where the function itself moves, an infinite derivative stays infinite
    assert.deepEqual(grad('sqrt(a)', [0], [0]), [Infinity]);
  });
  it('a denominator that overflows to infinity gives 0 derivatives, not NaN (limit -a·b\'/b² → 0; hand-derived)', () => {
    // logistic3 far from its midpoint: exp(1200) overflows, f = 0
    assert.deepEqual(grad('K/(1 + exp(-r*(x - x0)))', [2, 100, 12], [0]), [0, 0, 0]);
    // and where the denominator is finite, the usual values
    const [gK] = grad('K/(1 + exp(-r*(x - x0)))', [2, 1, 12], [12]);
    assert.equal(gK, 0.5);
  });
  it('general a^b: a^b*(b\'*ln a + b*a\'/a)', () => {
    const [a, b] = [1.7, 2.3];
    const [ga, gb] = grad('a^b', [a, b], []);
    assert.ok(Math.abs(ga - b * Math.pow(a, b - 1)) <= 1e-15 * ga);
    assert.ok(Math.abs(gb - Math.pow(a, b) * Math.log(a)) <= 1e-15 * gb);
    const [g2] = grad('b^b', [1.5], []);
    assert.ok(Math.abs(g2 - Math.pow(1.5, 1.5) * (Math.log(1.5) + 1)) <= 1e-14, `d(b^b)/db = b^b (ln b + 1): ${g2}`);
  });
  it('abs: subgradient sign(u)*u\', 0 at the kink', () => {
    assert.deepEqual(grad('abs(a*x)', [2], [-3]), [3]);
    assert.deepEqual(grad('abs(a*x)', [0], [5]), [0]);
  });
  it('min/max: derivative of the selected argument, the first one on ties', () => {
    assert.deepEqual(grad('min(a, b)', [1, 2], []), [1, 0]);
    assert.deepEqual(grad('min(a, b)', [3, 2], []), [0, 1]);
    assert.deepEqual(grad('min(a, b)', [2, 2], []), [1, 0]);
    assert.deepEqual(grad('max(a*x, b, 3)', [1, 2], [5]), [5, 0]);
    assert.deepEqual(grad('max(a*x, b, 3)', [0, 2], [5]), [0, 0]);
  });
  it('comparisons (logic mode) are piecewise constant: zero derivative', () => {
    const c = compileFormula('a*(x > b)', { variables: ['x'], logic: true });
    const g = new Float64Array(2);
    assert.equal(c.gradientAt([2, 1], [3], g), 2);
    assert.deepEqual([...g], [1, 0]);
  });
  it('the Jacobian is column-major: J[j*n + i]', () => {
    const c = compileFormula('a + b*x', { variables: ['x'] });
    const J = new Float64Array(6);
    c.evaluateWithJacobian([1, 1], [new Float64Array([10, 20, 30])], new Float64Array(3), J);
    assert.deepEqual([...J], [1, 1, 1, 10, 20, 30]);
  });
});

describe('formula linearity and constant term (decided symbolically)', () => {
  const lin: [string, boolean, boolean][] = [
    // formula, linear in θ, has a constant (intercept) column
    ['c0 + c1*x + c2*x^2', true, true],
    ['a*exp(b*x)', false, false],
    ['a*sin(x) + b', true, true],
    ['a*b*x', false, false],
    ['a*x', true, false],
    ['a*x + b*x^2', true, false],
    ['2*a + b*x', true, true],
    ['a/x + b*log(x)', true, false],
    ['(a + b)*x', true, false],
    ['a^2*x', false, false],
    ['x + a', true, true],
    ['x*0 + a*x', true, false],
    ['a*exp(b*x) + c', false, true],
    ['intercept + slope*x', true, true],
    ['Vmax*x/(Km + x)', false, false],
    ['a + b*c^x', false, true],
    ['1/(a + b*log(x) + c*log(x)^3)', false, false],
    ['a*x/3 + b/4', true, true],
    ['x', true, false],
    ['a*t + b*T', true, false],
  ];
  for (const [text, linear, constant] of lin) {
    it(`${text}: linear ${linear}, constant term ${constant}`, () => {
      const c = compileFormula(text, { variables: ['x', 't', 'T'] });
      assert.equal(c.linear, linear, 'linear');
      assert.equal(c.hasConstantTerm, constant, 'hasConstantTerm');
    });
  }
  it('linear formulas satisfy f(θ) = f(0) + Jθ exactly up to rounding (property)', () => {
    fc.assert(
      fc.property(fc.array(smallReal, { minLength: 4, maxLength: 4 }), smallReal, ([a, b, c, d], x) => {
        const f = compileFormula('a + b*sin(x) + c*x^2 + d*exp(x)/3 + x', { variables: ['x'] });
        assert.ok(f.linear);
        const g = new Float64Array(4);
        const v = f.gradientAt([a, b, c, d], [x], g);
        const v0 = f.at([0, 0, 0, 0], [x]);
        const lin = v0 + g[0] * a + g[1] * b + g[2] * c + g[3] * d;
        assert.ok(Math.abs(v - lin) <= 1e-13 * Math.max(1, Math.abs(v)));
      }),
      { numRuns: 200 },
    );
  });
});

describe('formula: the built-in catalogue formulas (DESIGN.md catalogue table)', () => {
  const catalogue: [string, boolean][] = [
    // formula as written in the catalogue, linear in its parameters (hand-derived)
    ['intercept + slope*x', true],
    ['A*exp(k*x)', false],
    ['A*exp(k*x) + C', false],
    ['a + b*c^x', false],
    ['A1*exp(-k1*x) + A2*exp(-k2*x)', false],
    ['a + b*log(x)', true],
    ['a*x^b', false],
    ['Vmax*x/(Km + x)', false],
    ['Vmax*x^n/(K^n + x^n)', false],
    ['K/(1 + exp(-r*(x - x0)))', false],
    ['lower + (upper - lower)/(1 + (ec50/x)^slope)', false],
    ['lower + (upper - lower)/(1 + (xc/x)^slope)^asym', false],
    ['K*exp(-exp(-r*(x - x0)))', false],
    ['K/(1 + nu*exp(-r*(x - x0)))^(1/nu)', false],
    ['upper - (upper - y0)*exp(-(x/scale)^shape)', false],
    ['upper - (upper - y0)*exp(-k*x)', false],
    ['height*exp(-(x - center)^2/(2*width^2))', false],
    ['height/(1 + ((x - center)/hwhm)^2)', false],
    ['A*exp(-Ea/(8.314462618*x))', false],
    ['1/(a + b*log(x) + c*log(x)^3)', false],
  ];
  for (const [text, linear] of catalogue) {
    it(`${text}: canonical text is the catalogue text; linear ${linear}; finite derivatives wherever f is finite, also at x = 0`, () => {
      const c = compileFormula(text, { variables: ['x'] });
      assert.equal(formatFormula(parseFormula(text)), text);
      assert.equal(c.linear, linear);
      const theta = c.params.map((_, j) => [1.3, 0.7, 2.1, 0.9, 1.6, 0.4][j % 6]);
      for (const x of [0, 1e-300, 0.5, 3, 40]) {
        const g = new Float64Array(c.params.length);
        const f = c.gradientAt(theta, [x], g);
        if (Number.isFinite(f)) assert.ok(g.every(Number.isFinite), `${text} at x = ${x}: f = ${f}, gradient ${[...g]}`);
      }
    });
  }
});

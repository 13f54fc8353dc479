// Compiled evaluators: values against JavaScript Math, NaN behaviour, logic mode, column expressions,
// code-generation safety, and consistency of the four evaluators.

import { strict as assert } from 'assert';
import * as fc from 'fast-check';
import { compileExpression, compileFormula, FormulaError, FUNCTIONS, parseFormula } from '../../src/engine/formula';
import { numberLiteral } from '../../src/engine/formula/codegen';
import { formulaArbitrary, interpret, KINK_TEMPLATES, smallReal, SMOOTH_TEMPLATES } from './formulaHelpers';

const at = (text: string, x: number) => compileFormula(text, { variables: ['x'] }).at([], [x]);

function expectFormulaError(f: () => unknown, re: RegExp, column?: number): FormulaError {
  try {
    f();
  } catch (e) {
    assert.ok(e instanceof FormulaError, String(e));
    assert.match(e.message, re);
    if (column !== undefined) assert.equal(e.column, column);
    return e;
  }
  assert.fail('expected a FormulaError');
}

describe('formula evaluation: every function against JavaScript Math (JavaScript Math as reference)', () => {
  const pts = [-2.5, -1, -0.3, 0, 0.25, 0.5, 1, 2, 7.5, 1e-8, 1e5];
  const unary: Record<string, (u: number) => number> = {
    exp: Math.exp, log: Math.log, ln: Math.log, log10: Math.log10, sqrt: Math.sqrt, abs: Math.abs,
    sin: Math.sin, cos: Math.cos, tan: Math.tan, asin: Math.asin, acos: Math.acos, atan: Math.atan,
    sinh: Math.sinh, cosh: Math.cosh, tanh: Math.tanh,
  };
  for (const fn of Object.keys(unary)) {
    it(`${fn}(x) equals Math.${unary[fn].name}(x), NaN where Math gives NaN`, () => {
      for (const x of pts) assert.ok(Object.is(at(`${fn}(x)`, x), unary[fn](x)), `${fn}(${x})`);
    });
  }
  it('pow(a, b) and a^b equal Math.pow', () => {
    for (const [a, b] of [[2, 10], [-2, 3], [-2, 0.5], [0, 0], [0, -1], [1.5, -2.25], [10, 308], [-8, 1 / 3]]) {
      assert.ok(Object.is(compileFormula('pow(a, b)', { variables: ['a', 'b'] }).at([], [a, b]), Math.pow(a, b)));
      assert.ok(Object.is(compileFormula('a^b', { variables: ['a', 'b'] }).at([], [a, b]), Math.pow(a, b)));
      assert.ok(Object.is(compileFormula('a**b', { variables: ['a', 'b'] }).at([], [a, b]), Math.pow(a, b)));
    }
  });
  it('integer powers 2, 3, -1, -2 (emitted as products) agree with Math.pow to the last bit or within 1 ulp', () => {
    for (const n of [2, 3, -1, -2]) {
      for (const x of [-3.7, -1, 0.1, 1.0000001, 12345.678]) {
        const got = at(`x^${n < 0 ? `(${n})` : n}`, x);
        const want = Math.pow(x, n);
        assert.ok(Math.abs(got - want) <= 2.3e-16 * Math.abs(want), `${x}^${n}: ${got} vs ${want}`);
      }
    }
  });
  it('min and max of 2 and more arguments equal Math.min / Math.max', () => {
    const c = compileFormula('min(a, b, c) + 10*max(a, b, c)', { variables: ['a', 'b', 'c'] });
    for (const v of [[1, 2, 3], [3, -1, 2], [0, 0, 0], [-5, 7, 7]]) assert.equal(c.at([], v), Math.min(...v) + 10 * Math.max(...v));
    assert.ok(Number.isNaN(compileFormula('min(a, b)', { variables: ['a', 'b'] }).at([], [NaN, 1])), 'NaN propagates like Math.min');
  });
  it('covers every listed function', () => {
    for (const fn of FUNCTIONS) assert.ok(fn in unary || ['pow', 'min', 'max'].includes(fn), fn);
  });
  it('constants pi and e are Math.PI and Math.E', () => {
    assert.equal(at('pi', 0), Math.PI);
    assert.equal(at('e', 0), Math.E);
    assert.equal(at('2*pi*x', 3), 2 * Math.PI * 3);
  });
});

describe('formula evaluation: NaN and infinities never throw (IEEE 754 semantics, as JavaScript)', () => {
  it('log(-1), sqrt(-1), 0/0, asin(2) are NaN; 1/0 is Infinity', () => {
    assert.ok(Number.isNaN(at('log(x)', -1)));
    assert.ok(Number.isNaN(at('sqrt(x)', -1)));
    assert.ok(Number.isNaN(at('x/x', 0)));
    assert.ok(Number.isNaN(at('asin(x)', 2)));
    assert.equal(at('1/x', 0), Infinity);
    assert.equal(at('-1/x', 0), -Infinity);
  });
  it('constant subexpressions that fold to NaN are evaluated, not rejected', () => {
    assert.ok(Number.isNaN(at('x + log(-1)', 1)));
    assert.ok(Number.isNaN(at('x*0/0', 1)));
  });
  it('vector evaluation writes NaN for the bad points only', () => {
    const c = compileFormula('a*log(x)', { variables: ['x'] });
    const x = new Float64Array([-1, 1, Math.E]);
    const out = new Float64Array(3);
    const J = new Float64Array(3);
    c.evaluateWithJacobian([2], [x], out, J);
    assert.ok(Number.isNaN(out[0]) && Number.isNaN(J[0]));
    assert.deepEqual([out[1], out[2], J[1], J[2]], [0, 2, 0, 1]);
  });
  it('the user formula keeps IEEE semantics: 0*x is NaN at x = Infinity, x - x is NaN at Infinity', () => {
    assert.ok(Number.isNaN(at('0*x', Infinity)));
    assert.ok(Number.isNaN(at('x - x', Infinity)));
  });
});

describe('formula evaluation: agreement with an AST interpreter (JavaScript Math as reference; property)', () => {
  it('compiled at() and evaluate() equal direct interpretation on random formulas', () => {
    fc.assert(
      fc.property(formulaArbitrary([...SMOOTH_TEMPLATES, ...KINK_TEMPLATES, '(U)/(a - x)', 'exp(U)', 'log(U)', 'sqrt(U)']), fc.array(smallReal, { minLength: 5, maxLength: 5 }), (text, [a, b, c, x, y]) => {
        const f = compileFormula(text, { variables: ['x', 'y'], params: ['a', 'b', 'c'] });
        const ref = interpret(parseFormula(text), { a, b, c, x, y });
        const got = f.at([a, b, c], [x, y]);
        const out = new Float64Array(2);
        f.evaluate([a, b, c], [new Float64Array([x, 0]), new Float64Array([y, 0])], out);
        const close = (u: number, v: number) => Object.is(u, v) || Math.abs(u - v) <= 4e-16 * Math.max(Math.abs(u), Math.abs(v)) * 64;
        assert.ok(close(got, ref), `${text}: at ${got} vs interpreter ${ref}`);
        assert.ok(Object.is(out[0], got), `${text}: evaluate ${out[0]} vs at ${got}`);
      }),
      { numRuns: 500 },
    );
  });
});

describe('formula evaluation: variables, parameters and layout', () => {
  it('several variables are bound in the given order; parameters follow first appearance', () => {
    const c = compileFormula('A*exp(-Ea/(R*T)) * t', { variables: ['t', 'T'], params: ['A', 'Ea', 'R'] });
    assert.deepEqual(c.params, ['A', 'Ea', 'R']);
    const v = c.at([2, 1000, 8], [3, 300]);
    assert.equal(v, 2 * Math.exp(-1000 / (8 * 300)) * 3);
    assert.deepEqual(compileFormula('b*x + a', { variables: ['x'] }).params, ['b', 'a']);
  });
  it('a parameter listed in params but absent from the formula has a zero Jacobian column', () => {
    const c = compileFormula('a*x', { variables: ['x'], params: ['a', 'b'] });
    const out = new Float64Array(2);
    const J = new Float64Array(4).fill(7);
    c.evaluateWithJacobian([3, 5], [new Float64Array([1, 2])], out, J);
    assert.deepEqual([...J], [1, 2, 0, 0]);
  });
  it('unknown identifier with params given: did-you-mean among params and variables', () => {
    expectFormulaError(() => compileFormula('Vmax*x/(K2 + x)', { variables: ['x'], params: ['Vmax', 'K'] }), /^unknown identifier 'K2' at column 9 — did you mean 'K'\?$/, 9);
    expectFormulaError(() => compileFormula('a*z', { variables: ['x'], params: ['a'] }), /unknown identifier 'z' at column 3 — declare it under params or bind it as a variable \(x\)/, 3);
  });
  it('a parameter list naming a variable, a constant or a duplicate is rejected', () => {
    expectFormulaError(() => compileFormula('a*x', { variables: ['x'], params: ['a', 'x'] }), /'x' is a variable and cannot also be a parameter/);
    expectFormulaError(() => compileFormula('a*x', { variables: ['x'], params: ['a', 'pi'] }), /'pi' is a constant/);
    expectFormulaError(() => compileFormula('a*x', { variables: ['x'], params: ['a', 'a'] }), /listed twice/);
  });
  it('at(), gradientAt() and the vector evaluators agree', () => {
    const c = compileFormula('K/(1 + exp(-r*(x - x0)))', { variables: ['x'] });
    const theta = [1.9, 0.35, 12];
    const x = new Float64Array([0, 6, 12, 30]);
    const out = new Float64Array(4);
    const J = new Float64Array(12);
    c.evaluateWithJacobian(theta, [x], out, J);
    const out2 = new Float64Array(4);
    c.evaluate(theta, [x], out2);
    assert.deepEqual([...out2], [...out]);
    for (let i = 0; i < 4; i++) {
      const g = new Float64Array(3);
      assert.equal(c.gradientAt(theta, [x[i]], g), out[i]);
      assert.equal(c.at(theta, [x[i]]), out[i]);
      assert.deepEqual([...g], [J[i], J[4 + i], J[8 + i]]);
    }
  });
  it('accepts plain arrays as well as typed arrays', () => {
    const c = compileFormula('a + b*x', { variables: ['x'] });
    const out = new Float64Array(2);
    c.evaluate([1, 2], [[10, 20]], out);
    assert.deepEqual([...out], [21, 41]);
  });
  it('a formula free of variables fills every point', () => {
    const c = compileFormula('a*2', { variables: ['x'] });
    const out = new Float64Array(3);
    const J = new Float64Array(3);
    c.evaluateWithJacobian([4], [new Float64Array(3)], out, J);
    assert.deepEqual([...out, ...J], [8, 8, 8, 2, 2, 2]);
  });
  it('large n: 200 000 points evaluate and match at() (sanity, not timed)', () => {
    const c = compileFormula('b1*exp(-b2*x) + b3*exp(-b4*x) + b5*exp(-b6*x)', { variables: ['x'] });
    const n = 200_000;
    const x = new Float64Array(n).map((_, i) => i / n);
    const out = new Float64Array(n);
    const J = new Float64Array(n * 6);
    const theta = [0.0951, 1, 0.8607, 3, 1.5576, 5];
    c.evaluateWithJacobian(theta, [x], out, J);
    for (const i of [0, 1, n >> 1, n - 1]) assert.equal(out[i], c.at(theta, [x[i]]));
    assert.equal(J[5 * n + (n - 1)], -theta[4] * x[n - 1] * Math.exp(-theta[5] * x[n - 1]));
  });
  it('misuse by calling code is reported plainly', () => {
    const c = compileFormula('a*x', { variables: ['x'] });
    assert.throws(() => c.evaluate([1], [], new Float64Array(1)), /expected 1 variable column/);
    assert.throws(() => c.evaluate([], [[1]], new Float64Array(1)), /expected 1 parameter value/);
    assert.throws(() => c.evaluateWithJacobian([1], [[1, 2]], new Float64Array(2), new Float64Array(1)), /J needs 2 entries/);
  });
});

describe('formula code generation is safe and exact', () => {
  it('number literals round-trip exactly (ECMAScript Number::toString is shortest round-trip)', () => {
    fc.assert(
      fc.property(fc.double(), (v) => {
        const back = new Function(`return ${numberLiteral(v)};`)() as number;
        assert.ok(Object.is(back, v), `${v} -> ${numberLiteral(v)}`);
      }),
      { numRuns: 2000 },
    );
  });
  it('user constants are used with full precision', () => {
    const k = 0.1 + 0.2;
    const text = `${String(k)}*x + 8.314462618`;
    assert.equal(at(text, 3), k * 3 + 8.314462618);
    assert.equal(at('1.7976931348623157e308*x', 1), Number.MAX_VALUE);
    assert.equal(at('5e-324 + 0*x', 1), 5e-324);
  });
  it('names never reach the generated code: backtick names that look like code are just columns', () => {
    const evil = ['a; process.exit(1); //', '"); throw 1; ("', '`', 'x0', 'theta', 'constructor', '__proto__', '\n}'];
    const cols = evil.map((e) => e);
    const text = cols.map((c, k) => `${k + 1}*\`${c.replace(/`/g, '``')}\``).join(' + ');
    const e = compileExpression(text, cols);
    assert.deepEqual(e.columns, cols);
    const out = new Float64Array(1);
    e.evaluate(cols.map(() => new Float64Array([1])), out);
    assert.equal(out[0], (cols.length * (cols.length + 1)) / 2);
    const c = compileFormula(text, { variables: cols }) as unknown as { source: Record<string, string> };
    for (const src of Object.values(c.source)) {
      assert.ok(!/process|throw|constructor|__proto__/.test(src), 'no user text in the generated source');
    }
  });
  it('variables named like internal locals (x0, t0, theta) do not collide', () => {
    const c = compileFormula('t0*x0 + theta', { variables: ['x0', 'theta'] });
    assert.deepEqual(c.params, ['t0']);
    assert.equal(c.at([3], [5, 7]), 22);
  });
});

describe('formula logic mode (row filters): 1 for true, 0 for false', () => {
  const cols = ['hours', 'reactor', 'OD 600'];
  const data = [new Float64Array([0, 24, 48, 72, NaN]), new Float64Array([1, 2, 2, 2, 2]), new Float64Array([0.1, 0.9, 1.8, 1.9, 1])];
  const run = (text: string) => {
    const e = compileExpression(text, cols, { logic: true });
    const out = new Float64Array(5);
    e.evaluate(e.columns.map((c) => data[cols.indexOf(c)]), out);
    return [...out];
  };
  it('comparisons and and/or/not', () => {
    assert.deepEqual(run('hours <= 48 and reactor == 2'), [0, 1, 1, 0, 0]);
    assert.deepEqual(run('hours < 24 or reactor != 2'), [1, 0, 0, 0, 0]);
    assert.deepEqual(run('not (hours > 24)'), [1, 1, 0, 0, 1]);
    assert.deepEqual(run('`OD 600` >= 0.9 and `OD 600` < 1.85'), [0, 1, 1, 0, 1]);
  });
  it('arithmetic binds tighter than comparisons: hours/24 + 1 > 2 is (hours/24 + 1) > 2', () => {
    assert.deepEqual(run('hours/24 + 1 > 2'), [0, 0, 1, 1, 0]);
  });
  it('a comparison with NaN is false (IEEE 754); NaN counts as false in and/or/not (JavaScript truthiness)', () => {
    assert.deepEqual(run('hours >= 0'), [1, 1, 1, 1, 0]);
    assert.deepEqual(run('hours and 1'), [0, 1, 1, 1, 0]);
  });
  it('comparison results are numbers usable in arithmetic', () => {
    assert.deepEqual(run('(hours > 30) * 10 + reactor'), [1, 2, 12, 12, 2]);
  });
});

describe('compileExpression (column expressions for data.x / data.y / data.where)', () => {
  it('returns the columns it uses in order of first appearance', () => {
    const e = compileExpression('log(od600) - log(blank) + od600', ['hours', 'blank', 'od600']);
    assert.deepEqual(e.columns, ['od600', 'blank']);
    const out = new Float64Array(1);
    e.evaluate([new Float64Array([Math.E]), new Float64Array([1])], out);
    assert.equal(out[0], 1 + Math.E);
  });
  it('an unknown column is a FormulaError with did-you-mean among the columns', () => {
    expectFormulaError(() => compileExpression('log(od60)', ['hours', 'od600']), /^unknown column 'od60' at column 5 — did you mean 'od600'\?$/, 5);
    expectFormulaError(() => compileExpression('Hours*2', ['hours']), /did you mean 'hours'\?/, 1);
    expectFormulaError(() => compileExpression('zzz', ['hours', 'od600']), /unknown column 'zzz' at column 1 — the columns are: hours, od600/, 1);
    expectFormulaError(() => compileExpression('`OD 60` + 1', ['OD 600']), /unknown column `OD 60` at column 1 — did you mean `OD 600`\?/, 1);
    expectFormulaError(() => compileExpression('od-600', ['od-600']), /unknown column 'od' at column 1 — did you mean `od-600`\?/, 1);
  });
  it('parse errors come through with their position', () => {
    expectFormulaError(() => compileExpression('hours <', ['hours'], { logic: true }), /unexpected end of formula at column 8/, 8);
    expectFormulaError(() => compileExpression('hours < 2', ['hours']), /comparisons are only allowed in 'where' filters/, 7);
  });
  it('a column named like a constant is reached with backticks', () => {
    const e = compileExpression('`e` * e', ['e']);
    assert.deepEqual(e.columns, ['e']);
    const out = new Float64Array(1);
    e.evaluate([new Float64Array([2])], out);
    assert.equal(out[0], 2 * Math.E);
  });
});

// Cross-validation of linear models by exact block downdates (src/engine/stats/crossval.ts) against the definition:
// refit without each fold and predict its rows. The two must agree to rounding (~1e-12 relative) on weighted,
// ill-conditioned and fixed-parameter designs; a bound, rank deficiency or a fold holding all the leverage of a
// direction falls back to refits.
import * as assert from 'assert';
import { compileFormula } from '../../src/engine/formula';
import { crossValidate, CvContext } from '../../src/engine/stats/crossval';
import { solve } from '../../src/engine/solve';
import { noise } from './statsHelpers';

function ctxOf(formula: string, params: string[], x: number[], y: number[], opts: { w?: Float64Array; fixed?: boolean[]; start?: number[] } = {}): CvContext {
  const compiled = compileFormula(formula, { variables: ['x'], params });
  const X = [Float64Array.from(x)];
  const Y = Float64Array.from(y);
  const p = params.length;
  const fixed = opts.fixed ?? new Array(p).fill(false);
  const w = opts.w ?? null;
  const start = opts.start ?? new Array(p).fill(0);
  const fit = solve(
    { n: x.length, p, y: Y, w: w ?? undefined, model: (t, f, J) => (J ? compiled.evaluateWithJacobian(t, X, f, J) : compiled.evaluate(t, X, f)) },
    { theta0: start, fixed, linear: true },
  );
  return {
    compiled, X, y: Y, w, theta: fit.theta, lower: new Array(p).fill(-Infinity), upper: new Array(p).fill(Infinity), fixed,
    linear: true, deadline: Date.now() + 60_000,
  };
}

function both(ctx: CvContext): { down: number; refit: number } {
  const a = crossValidate(ctx);
  const b = crossValidate({ ...ctx, method: 'refit' });
  assert.strictEqual(a.method, 'downdate');
  assert.strictEqual(b.method, 'refit');
  assert.ok(a.rmse !== null && b.rmse !== null);
  assert.strictEqual(a.folds, b.folds);
  return { down: a.rmse, refit: b.rmse };
}

describe('cross-validation: exact downdates of linear fits equal refits without each fold', () => {
  const n = 157;
  const z = noise(n, 11);
  const x = Array.from({ length: n }, (_, i) => 0.5 + (9.5 * ((i * 37) % n)) / n);

  it('a straight line and a cubic (ill-conditioned on x in [0.5, 10]): agree to 1e-12', () => {
    for (const [formula, params] of [['a + b*x', ['a', 'b']], ['a + b*x + c*x^2 + d*x^3', ['a', 'b', 'c', 'd']]] as const) {
      const y = x.map((v, i) => 1 + 0.4 * v - 0.02 * v * v * v + 0.3 * z[i]);
      const { down, refit } = both(ctxOf(formula, [...params], x, y));
      assert.ok(Math.abs(down - refit) <= 1e-12 * refit, `${formula}: ${down} vs ${refit}`);
    }
  });

  it('weights and a fixed parameter: agree to 1e-12', () => {
    const y = x.map((v, i) => 2 + 0.7 * v + 0.05 * v * v + 0.2 * (1 + v / 5) * z[i]);
    const w = Float64Array.from(x, (v) => 1 / (1 + v / 5) ** 2);
    const { down, refit } = both(ctxOf('a + b*x + c*x^2', ['a', 'b', 'c'], x, y, { w, fixed: [true, false, false], start: [2, 0, 0] }));
    assert.ok(Math.abs(down - refit) <= 1e-12 * refit, `${down} vs ${refit}`);
  });

  it('a finite bound or too few rows per fold: refits, never a downdate', () => {
    const y = x.map((v, i) => 1 + 0.4 * v + 0.3 * z[i]);
    const ctx = ctxOf('a + b*x', ['a', 'b'], x, y);
    assert.strictEqual(crossValidate({ ...ctx, lower: [-Infinity, 0] }).method, 'refit');
    // one row with x far out carries all the leverage of the slope: its fold cannot be downdated, the refit is used
    const x2 = [...new Array(20).fill(1), 50];
    const y2 = x2.map((v, i) => v + 0.1 * z[i]);
    const c2 = ctxOf('a + b*x', ['a', 'b'], x2, y2);
    const r = crossValidate(c2);
    assert.strictEqual(r.method, 'refit');
  });
});

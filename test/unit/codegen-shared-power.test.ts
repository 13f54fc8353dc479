// Generated kernels share a power between value and derivative (src/engine/formula/codegen.ts): in
// lower + (upper − lower)/(1 + (ec50/x)^slope) the power rule's (ec50/x)^(slope−1) is computed as (ec50/x)^slope/(ec50/x)
// — one Math.pow per point on the main path — and falls back to Math.pow where that quotient would lose the limit
// (base 0, a^b subnormal, underflowed or overflowed). Reference: the power rule written out with Math.pow.
import * as assert from 'assert';
import { compileFormula } from '../../src/engine/formula';

const F = 'lower + (upper - lower)/(1 + (ec50/x)^slope)';

function reference(t: number[], x: number): number {
  const [lower, upper, ec50, slope] = t;
  const u = ec50 / x;
  const w = Math.pow(u, slope);
  const d = 1 + w;
  return -((upper - lower) / d / d) * slope * Math.pow(u, slope - 1) * (1 / x);
}

describe('generated kernels: one pow per power', () => {
  // compileFormula attaches the generated source (for inspection and tests) beside the CompiledFormula interface
  const c = compileFormula(F, { variables: ['x'], params: ['lower', 'upper', 'ec50', 'slope'] }) as ReturnType<typeof compileFormula> & {
    source: { evaluateWithJacobian: string };
  };

  it('the Jacobian kernel of logistic4 has one unguarded Math.pow in its loop', () => {
    const loop = c.source.evaluateWithJacobian.split('for (let i')[1];
    const pows = loop.match(/Math\.pow/g) ?? [];
    assert.strictEqual(pows.length, 2, loop); // a^b, and the guarded fallback of a^(b−1)
    assert.match(loop, /\? v\d+ \/ v\d+ : Math\.pow/);
  });

  it('∂f/∂ec50 equals the power rule with Math.pow to 4 ulp, also at the edges where the quotient is not used', () => {
    const cases: [number[], number][] = [
      [[0.1, 2, 3, 1.5], 0.7], [[0.1, 2, 3, 1.5], 40], [[0.1, 2, 3, -2.2], 5],
      [[0.1, 2, 0, 1.5], 5], // base 0: (0)^(0.5) = 0
      [[0.1, 2, 0, 0.5], 5], // base 0: 0^(−0.5) = Infinity, guarded by the model's own mulz rules
      [[0.1, 2, 1e-200, 1.6], 1e100], // a^b underflows to 0 while a^(b−1) does not
      [[0.1, 2, 1e200, 1.6], 1e-100], // a^b overflows while a^(b−1) is finite
    ];
    for (const [t, x] of cases) {
      const X = [Float64Array.of(x)];
      const f = new Float64Array(1);
      const J = new Float64Array(4);
      c.evaluateWithJacobian(t, X, f, J);
      const want = reference(t, x);
      const got = J[2];
      if (!Number.isFinite(want) || want === 0) {
        // limits: the kernel's zero/∞ conventions (0·∞ = 0 for an underflowed or overflowed factor) decide
        assert.ok(!Number.isNaN(got), `t=${t} x=${x}: ${got}`);
        continue;
      }
      assert.ok(Math.abs(got - want) <= 4 * Number.EPSILON * Math.abs(want), `t=${t} x=${x}: ${got} vs ${want}`);
    }
  });
});

// Exact runs test by x position (src/engine/stats/runs.ts) against the Swed & Eisenhart (1943) distribution worked by hand.
import * as assert from 'assert';
import { runsByPosition, runsExactP, runsPmf } from '../../src/engine/stats/runs';

describe('runs test by x position', () => {
  it('the exact distribution sums to 1 and matches hand counts for n1 = n2 = 5', () => {
    // C(10,5) = 252 arrangements; R = 2 in 2 of them, R = 3 in C(4,1)C(4,0) + C(4,0)C(4,1) = 8
    assert.ok(Math.abs(runsPmf(2, 5, 5) - 2 / 252) < 1e-12);
    assert.ok(Math.abs(runsPmf(3, 5, 5) - 8 / 252) < 1e-12);
    let total = 0;
    for (let r = 2; r <= 10; r++) total += runsPmf(r, 5, 5);
    assert.ok(Math.abs(total - 1) < 1e-12);
    for (const [a, b] of [[7, 3], [1, 9], [12, 12]]) {
      let t = 0;
      for (let r = 2; r <= a + b; r++) t += runsPmf(r, a, b);
      assert.ok(Math.abs(t - 1) < 1e-10, `${a},${b}: ${t}`);
    }
    assert.ok(Math.abs(runsExactP(2, 5, 5) - 4 / 252) < 1e-12);
    assert.strictEqual(runsExactP(6, 5, 5), 1);
  });

  it('six positions can never reach p < 0.01 (the smallest two-sided p is 0.1 × 2)', () => {
    assert.ok(Math.abs(runsExactP(2, 3, 3) - 0.2) < 1e-12);
  });

  it('replicates at the same x form one position signed by their mean residual', () => {
    // duplicates whose signs disagree (the curve passes between them): by row this is + − + − …, by position 3 runs
    const x = [1, 1, 2, 2, 3, 3, 4, 4, 5, 5, 6, 6];
    const r = [0.3, -0.1, 0.2, -0.1, 0.25, -0.2, -0.3, 0.1, -0.2, 0.1, 0.4, -0.1];
    const order = Int32Array.from(x.map((_, i) => i));
    const res = runsByPosition(r, [Float64Array.from(x)], order)!;
    assert.strictEqual(res.positions, 6);
    assert.strictEqual(res.replicatedRows, 12);
    assert.strictEqual(res.runs, 3); // + + + − − +
    assert.ok(res.exact);
  });

  it('uses the normal approximation above 200 positions', () => {
    const n = 400;
    const x = Float64Array.from({ length: n }, (_, i) => i);
    const r = Float64Array.from({ length: n }, (_, i) => (i < n / 2 ? 1 : -1));
    const res = runsByPosition(r, [x], Int32Array.from(x))!;
    assert.strictEqual(res.exact, false);
    assert.strictEqual(res.runs, 2);
    assert.ok(res.p < 1e-50);
  });
});

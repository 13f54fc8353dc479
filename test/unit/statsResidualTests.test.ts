// Residual tests against their definitions and published examples (sources named beside each check).
import { strict as assert } from 'assert';
import {
  dagostinoPearson, durbinWatson, kurtosisZ, normalityTest, runsTest, shapiroWilk, shapiroWilkCoefficients, skewnessZ,
} from '../../src/engine/stats/residualTests';
import { normalQuantile } from '../../src/engine/stats/distributions';
// eslint-disable-next-line @typescript-eslint/no-require-imports
const RREF = require('../fixtures/reference/r-stats.json');

const close = (a: number, b: number, tol: number, what: string) =>
  assert.ok(Math.abs(a - b) <= tol, `${what}: got ${a}, expected ${b} ± ${tol}`);

describe('stats residual tests', () => {
  it('runs test follows the Wald–Wolfowitz definition (E = 2n1n2/N + 1, Var = 2n1n2(2n1n2 − N)/(N²(N − 1)))', () => {
    const r = runsTest([1, 2, -1, -3, 4, 5, -2, -2])!;
    assert.equal(r.runs, 4);
    assert.equal(r.nPos, 4);
    assert.equal(r.nNeg, 4);
    close(r.expected, 5, 1e-15, 'expected runs');
    const sd = Math.sqrt((2 * 16 * (32 - 8)) / (64 * 7));
    close(r.z, (4 - 5) / sd, 1e-14, 'z');
    // two-sided normal p: 2Φ(−|z|) with z = −0.7638 -> 0.4450 (standard normal table)
    close(r.p, 0.445, 0.001, 'p');
    // zeros are left out; one sign only -> undefined
    assert.equal(runsTest([1, 0, 2, 3]), null);
    assert.equal(runsTest([0, 0]), null);
    // perfectly alternating signs: too many runs, small p
    const alt = Array.from({ length: 40 }, (_, i) => (i % 2 ? 1 : -1));
    assert.ok(runsTest(alt)!.p < 1e-6);
    // two long blocks: too few runs
    const blocks = Array.from({ length: 40 }, (_, i) => (i < 20 ? 1 : -1));
    const b = runsTest(blocks)!;
    assert.equal(b.runs, 2);
    assert.ok(b.z < -5 && b.p < 1e-6);
  });

  it('Durbin–Watson by definition: Σ(e_i − e_{i−1})²/Σe_i²', () => {
    assert.equal(durbinWatson([1, -1, 1, -1]), 12 / 4);
    assert.equal(durbinWatson([1, 1, 1, 1]), 0);
    close(durbinWatson([0.5, -0.2, 0.1, 0.3])!, (0.49 + 0.09 + 0.04) / (0.25 + 0.04 + 0.01 + 0.09), 1e-15, 'd');
    assert.equal(durbinWatson([0, 0, 0]), null);
    assert.equal(durbinWatson([1]), null);
  });

  it('Shapiro–Wilk coefficients: normalised (Σa² = 1) and close to the exact table of Shapiro & Wilk (1965) for n = 10 (from memory)', () => {
    for (const n of [3, 4, 5, 6, 10, 11, 25, 100, 5000]) {
      const a = shapiroWilkCoefficients(n);
      let s = 0;
      for (const v of a) s += 2 * v * v;
      close(s, 1, 1e-12, `Σa² for n=${n}`);
      for (let i = 1; i < a.length; i++) assert.ok(a[i] < a[i - 1] && a[i] > 0, `decreasing positive coefficients n=${n}`);
    }
    const table10 = [0.5739, 0.3291, 0.2141, 0.1224, 0.0399];
    const a10 = shapiroWilkCoefficients(10);
    table10.forEach((v, i) => close(a10[i], v, 0.001, `a_${i + 1} (n = 10)`));
  });

  it('Shapiro–Wilk n = 3 uses the exact distribution p = (6/π)(asin √W − asin √¾) (Shapiro & Wilk 1965)', () => {
    const r = shapiroWilk([1, 2, 4])!;
    // W by definition with a = (−1/√2, 0, 1/√2): (x3 − x1)²/2 / Σ(x − x̄)² = 4.5 / (42/9)
    close(r.statistic, 4.5 / (42 / 9), 1e-14, 'W');
    close(r.p, (6 / Math.PI) * (Math.asin(Math.sqrt(r.statistic)) - Math.PI / 3), 1e-14, 'exact p');
    const even = shapiroWilk([1, 2, 3])!;
    close(even.statistic, 1, 1e-14, 'W of equally spaced triple');
  });

  it(`Shapiro–Wilk on the example of Shapiro & Wilk (1965), weights of 11 men: W and p as R's shapiro.test (${RREF.R})`, () => {
    const c = RREF.shapiro_men;
    const r = shapiroWilk(c.x)!;
    close(r.statistic, c.W, 1e-6, 'W (R shapiro.test)');
    close(r.p, c.p, 1e-4 * c.p, 'p (R shapiro.test)');
  });

  it('Shapiro–Wilk separates normal from skewed samples and is invariant to location and scale', () => {
    const n = 60;
    const normal = Array.from({ length: n }, (_, i) => normalQuantile((i + 1 - 0.375) / (n + 0.25)));
    const sw = shapiroWilk(normal)!;
    assert.ok(sw.statistic > 0.99 && sw.p > 0.5, `normal scores: W = ${sw.statistic}, p = ${sw.p}`);
    const expo = Array.from({ length: n }, (_, i) => -Math.log(1 - (i + 0.5) / n));
    const se = shapiroWilk(expo)!;
    assert.ok(se.p < 0.001, `exponential scores: p = ${se.p}`);
    const shifted = shapiroWilk(expo.map((v) => 1e6 + 1e-3 * v))!;
    close(shifted.statistic, se.statistic, 1e-6, 'invariance');
    assert.equal(shapiroWilk([2, 2, 2, 2]), null, 'constant sample');
    assert.equal(shapiroWilk([1, 2]), null, 'n < 3');
  });

  it("D'Agostino–Pearson K²: symmetric samples give Z(√b1) = 0; normal vs exponential scores; used above n = 5000", () => {
    close(skewnessZ(0, 50), 0, 1e-15, 'Z(0)');
    // the kurtosis transform is increasing in b2 (heavier tails -> larger Z)
    assert.ok(kurtosisZ(4, 50) > kurtosisZ(3, 50) && kurtosisZ(3, 50) > kurtosisZ(2, 50));
    const n = 200;
    const normal = Array.from({ length: n }, (_, i) => normalQuantile((i + 0.5) / n));
    assert.ok(dagostinoPearson(normal)!.p > 0.5);
    const expo = Array.from({ length: n }, (_, i) => -Math.log(1 - (i + 0.5) / n));
    assert.ok(dagostinoPearson(expo)!.p < 1e-6);
    const big = Array.from({ length: 6000 }, (_, i) => normalQuantile((i + 0.5) / 6000));
    assert.equal(normalityTest(big)!.test, 'dagostino-pearson');
    assert.equal(normalityTest(normal)!.test, 'shapiro-wilk');
  });
});

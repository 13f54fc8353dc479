// Property-based checks (fast-check): quantiles invert their cdfs, and analyzeModel never throws on odd data.
import { strict as assert } from 'assert';
import fc from 'fast-check';
import { tCdf, tQuantile, fCdf, fQuantile, chi2Cdf, chi2Quantile, normalCdf, normalQuantile } from '../../src/engine/stats/distributions';
import { analyzeModel, compareModels, DEFAULT_THRESHOLDS } from '../../src/engine/stats';
import { makeInput } from './statsHelpers';

const prob = fc.double({ min: 1e-8, max: 1 - 1e-8, noNaN: true });
const dof = fc.double({ min: 0.5, max: 500, noNaN: true });

describe('stats properties', () => {
  it('quantile functions invert their cdfs (normal, t, F, χ²)', () => {
    fc.assert(fc.property(prob, (p) => Math.abs(normalCdf(normalQuantile(p)) - p) <= 1e-12 * Math.max(p, 1e-3)), { numRuns: 300, seed: 20261201 });
    fc.assert(fc.property(prob, dof, (p, nu) => Math.abs(tCdf(tQuantile(p, nu), nu) - p) <= 1e-9), { numRuns: 300, seed: 20261201 });
    fc.assert(fc.property(prob, dof, dof, (p, d1, d2) => Math.abs(fCdf(fQuantile(p, d1, d2), d1, d2) - p) <= 1e-9), { numRuns: 300, seed: 20261201 });
    fc.assert(fc.property(prob, dof, (p, k) => Math.abs(chi2Cdf(chi2Quantile(p, k), k) - p) <= 1e-9), { numRuns: 300, seed: 20261201 });
  });

  it('t quantiles increase with p and shrink towards the normal as ν grows', () => {
    fc.assert(fc.property(fc.double({ min: 0.5, max: 0.999, noNaN: true }), dof, (p, nu) => {
      const t = tQuantile(p, nu);
      return t >= normalQuantile(p) - 1e-9 && tQuantile(Math.min(p + 1e-4, 0.9999), nu) > t && tQuantile(p, nu * 2) <= t + 1e-9;
    }), { numRuns: 200, seed: 20261201 });
  });

  it('analyzeModel and compareModels never throw on odd data (repeated x, constant y, outliers, huge values)', () => {
    const value = fc.oneof(fc.double({ min: -1e6, max: 1e6, noNaN: true }), fc.constantFrom(0, 1, -1, 1e-300, 1e300));
    fc.assert(
      fc.property(fc.array(fc.tuple(value, value), { minLength: 3, maxLength: 25 }), fc.array(value, { maxLength: 3 }), (pts, extra) => {
        const x = pts.map((p) => p[0]);
        const y = pts.map((p) => p[1]);
        const cases = [
          { formula: 'a + b*x', name: 'line', kind: 'polynomial' as const, degree: 1 },
          { formula: 'A*exp(k*x/1000)', name: 'exp', start: { A: 1, k: 0.1 } },
        ];
        const inputs = cases.map((c, index) =>
          makeInput({ ...c, x, y, index, predict: extra, solveFor: extra, options: { profileSeconds: 0.2, cvSeconds: 0.2 }, maxIterations: 50 }));
        const reports = inputs.map((i) => analyzeModel(i));
        const cmp = compareModels(inputs, reports, DEFAULT_THRESHOLDS);
        for (const r of reports) {
          assert.ok(r.status === 'converged' || r.status === 'failed');
          for (const p of r.problems) assert.ok(['models', 'predict', 'solveFor'].includes(String(p.path[0])), `path ${p.path}`);
          assert.doesNotThrow(() => JSON.stringify(r));
        }
        assert.ok(cmp.best === null || reports.some((r) => r.name === cmp.best));
      }),
      { numRuns: 25, seed: 20261201 },
    );
  });
});

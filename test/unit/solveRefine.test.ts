// SolveOptions.refine = false (cross-validation refits) and the stable x order shared by cross-validation, residual
// tests and self-starts: checked against NIST StRD certified values and against a stable comparator sort.
import { strict as assert } from 'assert';
import * as path from 'path';
import fc from 'fast-check';
import { solveLinear, solveNonlinear } from '../../src/engine/solve';
import { sortedOrder, cvFolds } from '../../src/engine/stats/crossval';
import { lre, readStrd, strdFolderOrNotice } from '../reference/strd';

/** polynomial B0 + B1 x + … as an LsqProblem */
function polyProblem(x: number[], y: number[], p: number) {
  const n = x.length;
  return {
    n, p, y: Float64Array.from(y),
    model: (th: Float64Array, f: Float64Array, J: Float64Array | null) => {
      for (let i = 0; i < n; i++) {
        let s = 0;
        let xk = 1;
        for (let k = 0; k < p; k++) {
          s += th[k] * xk;
          if (J) J[k * n + i] = xk;
          xk *= x[i];
        }
        f[i] = s;
      }
    },
  };
}

describe('solver refine option', function () {
  const linDir = strdFolderOrNotice('linear');
  const nlDir = strdFolderOrNotice('nonlinear');

  it('linear, refine: false on a well-conditioned problem still gives ≥ 12 digits (NIST StRD Norris, certified values)', function () {
    if (!linDir) return this.skip();
    const prob = readStrd(path.join(linDir, 'Norris.dat'));
    const res = solveLinear(polyProblem(prob.x[0], prob.y, prob.p), { theta0: [0, 0], refine: false });
    assert.equal(res.termination, 'exact');
    for (let j = 0; j < prob.p; j++) {
      const d = lre(res.theta[j], prob.certified.values[j], prob.digits);
      assert.ok(d >= 12, `B${j}: LRE ${d.toFixed(1)}`);
    }
  });

  it('linear, default refinement: Wampler1 to ≥ 13 of the certified digits, refine: false within 1e-6 (cond·ε)', function () {
    if (!linDir) return this.skip();
    // NIST StRD Wampler1: y = 1 + x + … + x⁵ exactly, certified B0…B5 = 1
    const prob = readStrd(path.join(linDir, 'Wampler1.dat'));
    const th0 = new Array(prob.p).fill(0);
    const refined = solveLinear(polyProblem(prob.x[0], prob.y, prob.p), { theta0: th0 });
    const plain = solveLinear(polyProblem(prob.x[0], prob.y, prob.p), { theta0: th0, refine: false });
    for (let j = 0; j < prob.p; j++) {
      assert.ok(lre(refined.theta[j], prob.certified.values[j], prob.digits) >= 13, `refined B${j} = ${refined.theta[j]}`);
      assert.ok(Math.abs(plain.theta[j] - 1) < 1e-6, `unrefined B${j} = ${plain.theta[j]}`);
    }
  });

  it('nonlinear, refine: false skips only the polish: NIST StRD Misra1a from start 1 still ≥ 6 digits', function () {
    if (!nlDir) return this.skip();
    const prob = readStrd(path.join(nlDir, 'Misra1a.dat'));
    const x = prob.x[0];
    const n = x.length;
    // Misra1a: y = b1 (1 − exp(−b2 x))
    const problem = {
      n, p: 2, y: Float64Array.from(prob.y),
      model: (b: Float64Array, f: Float64Array, J: Float64Array | null) => {
        for (let i = 0; i < n; i++) {
          const e = Math.exp(-b[1] * x[i]);
          f[i] = b[0] * (1 - e);
          if (J) {
            J[i] = 1 - e;
            J[n + i] = b[0] * x[i] * e;
          }
        }
      },
    };
    const res = solveNonlinear(problem, { theta0: prob.starts[0], refine: false });
    assert.ok(res.converged, res.message);
    for (let j = 0; j < 2; j++) {
      const d = lre(res.theta[j], prob.certified.values[j], prob.digits);
      assert.ok(d >= 6, `b${j + 1}: LRE ${d.toFixed(1)}`);
    }
  });
});

describe('sortedOrder (stable merge sort of row indices by x)', function () {
  // reference: Array.prototype.sort, stable since ECMAScript 2019 (ECMA-262 §23.1.3.30), with an explicit tie-break
  const reference = (x: number[]) => Array.from({ length: x.length }, (_, i) => i).sort((a, b) => x[a] - x[b] || a - b);

  it('equals the stable comparator sort, with ties in row order, across run-length boundaries', function () {
    fc.assert(
      fc.property(fc.array(fc.integer({ min: -5, max: 5 }), { maxLength: 300 }), (x) => {
        assert.deepEqual(Array.from(sortedOrder(x)), reference(x));
      }),
      { numRuns: 200, seed: 7 },
    );
    fc.assert(
      fc.property(fc.array(fc.double({ min: -1e6, max: 1e6, noNaN: true }), { minLength: 30, maxLength: 200 }), (x) => {
        assert.deepEqual(Array.from(sortedOrder(x)), reference(x));
      }),
      { numRuns: 100, seed: 11 },
    );
  });

  it('edges: empty, one row, already sorted, reversed, all equal', function () {
    assert.deepEqual(Array.from(sortedOrder([])), []);
    assert.deepEqual(Array.from(sortedOrder([3])), [0]);
    assert.deepEqual(Array.from(sortedOrder([1, 2, 2, 3])), [0, 1, 2, 3]);
    const rev = Array.from({ length: 100 }, (_, i) => 100 - i);
    assert.deepEqual(Array.from(sortedOrder(rev)), reference(rev));
    assert.deepEqual(Array.from(sortedOrder(new Array(70).fill(1))), Array.from({ length: 70 }, (_, i) => i));
  });

  it('cvFolds with a precomputed order equals cvFolds sorting itself', function () {
    const x = Array.from({ length: 97 }, (_, i) => (i * 37) % 11);
    assert.deepEqual(Array.from(cvFolds(x, 10, sortedOrder(x)).fold), Array.from(cvFolds(x).fold));
  });
});

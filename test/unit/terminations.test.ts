// The TERMINATIONS table (src/engine/terminations.ts): which stops count as converged, and the advice the
// no-convergence problem and `curvewright check` give for the others.
import * as assert from 'assert';
import { CONVERGED, TERMINATION_CODES, TERMINATIONS, terminationAdvice, terminationFix } from '../../src/engine/terminations';
import { solveNonlinear } from '../../src/engine/solve';
import type { LsqProblem } from '../../src/engine/solve/types';

describe('termination table', () => {
  it('the four convergence tests count as converged, nothing else (report.ts, docs/problems.md#no-convergence)', () => {
    assert.deepStrictEqual([...CONVERGED], ['relative-reduction', 'step-size', 'gradient', 'exact']);
    assert.strictEqual(TERMINATION_CODES.length, 9);
  });

  it('every stop that is not converged has advice for the report and a fix naming the model for check', () => {
    for (const t of TERMINATION_CODES) {
      if (TERMINATIONS[t].converged) continue;
      assert.notStrictEqual(terminationAdvice(t), terminationAdvice('relative-reduction'), `${t}: own advice`);
      assert.match(terminationAdvice(t), /^[A-Z].*\.$/, `${t}: a sentence`);
      assert.ok(terminationFix(t, 3).length > 10, `${t}: a fix`);
    }
    assert.match(terminationFix('iteration-limit', 3), /models\[3\]\.solver\.maxIterations/);
    assert.match(terminationFix('time-limit', 0), /models\[0\]\.solver\.seconds/);
    assert.strictEqual(terminationAdvice('from-a-newer-engine'), 'Try other start values or bounds.');
    assert.match(terminationFix('from-a-newer-engine', 2), /models\[2\]\.params, or remove the model/);
  });

  it('the solver reports a termination of the table, converged exactly when the table says so', () => {
    // y = a·exp(b·x) on exact data, and the same with one iteration allowed
    const x = [0, 1, 2, 3, 4, 5];
    const y = Float64Array.from(x, (v) => 2 * Math.exp(0.3 * v));
    const problem: LsqProblem = {
      n: x.length,
      p: 2,
      y,
      model(th: Float64Array, f: Float64Array, J: Float64Array | null) {
        for (let i = 0; i < x.length; i++) {
          const e = Math.exp(th[1] * x[i]);
          f[i] = th[0] * e;
          if (J) { J[i] = e; J[x.length + i] = th[0] * x[i] * e; }
        }
      },
    };
    for (const maxIterations of [200, 1]) {
      const r = solveNonlinear(problem, { theta0: [1, 0.1], maxIterations });
      assert.ok(TERMINATION_CODES.includes(r.termination), r.termination);
      assert.strictEqual(r.converged, TERMINATIONS[r.termination].converged, `${maxIterations}: ${r.termination}`);
      assert.strictEqual(r.converged, maxIterations > 1, `${maxIterations}: ${r.termination}`);
    }
  });
});

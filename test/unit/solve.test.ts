// Edge cases of the least-squares solvers (solveLinear, solveNonlinear); the reference of each check is named beside it.
import * as assert from 'assert';
import { solve, solveLinear, solveNonlinear, DEFAULT_MAX_ITERATIONS } from '../../src/engine/solve';
import type { LsqProblem } from '../../src/engine/solve/types';

const range = (a: number, b: number, step: number): number[] => {
  const out: number[] = [];
  for (let v = a; v <= b + 1e-12; v += step) out.push(v);
  return out;
};
const close = (a: number, b: number, rel: number, what: string): void =>
  assert.ok(Math.abs(a - b) <= rel * Math.max(Math.abs(b), 1e-300), `${what}: ${a} vs ${b} (rel ${rel})`);

/** y ≈ A exp(k x), parameters [A, k] */
function expModel(x: number[], y: number[], hook?: (theta: Float64Array) => boolean): LsqProblem & { calls: number; nanCalls: number } {
  const prob = {
    n: x.length, p: 2, y: Float64Array.from(y), calls: 0, nanCalls: 0,
    model(theta: Float64Array, f: Float64Array, J: Float64Array | null) {
      prob.calls++;
      if (hook && !hook(theta)) {
        prob.nanCalls++;
        f.fill(NaN);
        if (J) J.fill(NaN);
        return;
      }
      const [A, k] = theta;
      for (let i = 0; i < x.length; i++) {
        const e = Math.exp(k * x[i]);
        f[i] = A * e;
        if (J) {
          J[i] = e;
          J[x.length + i] = A * x[i] * e;
        }
      }
    },
  };
  return prob;
}

/** y ≈ Σ_j θ_j · column_j(x): a model linear in θ with given basis functions */
function linearModel(x: number[], y: number[], basis: ((v: number) => number)[]): LsqProblem {
  const n = x.length;
  return {
    n, p: basis.length, y: Float64Array.from(y),
    model(theta, f, J) {
      for (let i = 0; i < n; i++) {
        let s = 0;
        for (let j = 0; j < basis.length; j++) {
          const b = basis[j](x[i]);
          s += theta[j] * b;
          if (J) J[j * n + i] = b;
        }
        f[i] = s;
      }
    },
  };
}

/** Rosenbrock's function as least squares: r1 = 10(θ2 − θ1²), r2 = 1 − θ1 (Moré, Garbow & Hillstrom 1981, problem 1; minimum (1, 1), zero residual) */
function rosenbrock(delayMs = 0): LsqProblem {
  return {
    n: 2, p: 2, y: Float64Array.from([0, -1]),
    model(t, f, J) {
      if (delayMs > 0) {
        const until = Date.now() + delayMs;
        while (Date.now() < until) { /* simulate an expensive model */ }
      }
      f[0] = 10 * (t[1] - t[0] * t[0]);
      f[1] = -t[0];
      if (J) {
        J[0] = -20 * t[0]; J[1] = -1;
        J[2] = 10; J[3] = 0;
      }
    },
  };
}

describe('solveNonlinear', function () {
  it('zero-residual data: exact termination and the generating parameters (data exact by construction)', function () {
    const x = range(0, 10, 0.5);
    const y = x.map((v) => 2 * Math.exp(-0.3 * v));
    const res = solveNonlinear(expModel(x, y), { theta0: [1, -0.1] });
    assert.ok(res.converged, res.message);
    assert.ok(res.termination === 'exact' || res.sse < 1e-28, `${res.termination} sse=${res.sse}`);
    close(res.theta[0], 2, 1e-12, 'A');
    close(res.theta[1], -0.3, 1e-12, 'k');
  });

  it('Rosenbrock from (−1.2, 1) reaches (1, 1) with zero residual (Moré, Garbow & Hillstrom 1981, problem 1)', function () {
    const res = solveNonlinear(rosenbrock(), { theta0: [-1.2, 1] });
    assert.strictEqual(res.termination, 'exact');
    close(res.theta[0], 1, 1e-12, 'θ1');
    close(res.theta[1], 1, 1e-12, 'θ2');
  });

  it('parameters of scale 1e6 and 1e-6 are recovered to 1e-10 (data exact by construction)', function () {
    // A = 1e6, k = −1e-6 over x in [0, 3e6]; and A = 1e-6, k = −1e6 over x in [0, 3e-6]
    for (const [A, k, xmax] of [[1e6, -1e-6, 3e6], [1e-6, -1e6, 3e-6]]) {
      const x = range(0, xmax, xmax / 30);
      const y = x.map((v) => A * Math.exp(k * v));
      const res = solveNonlinear(expModel(x, y), { theta0: [A * 1.5, k * 0.6] });
      assert.ok(res.converged, res.message);
      close(res.theta[0], A, 1e-10, `A=${A}`);
      close(res.theta[1], k, 1e-10, `k=${k}`);
    }
  });

  it('a trial step into the NaN part of the domain is rejected and the fit still converges (PEERS.md: NaN steps must be rejected explicitly)', function () {
    // y = exp(0.5 x); the model is undefined (NaN) for k > 0.8. From k = 0 the Gauss–Newton step overshoots past 0.8.
    const x = range(0, 4, 0.25);
    const y = x.map((v) => Math.exp(0.5 * v));
    let sxx = 0;
    let sxy = 0;
    for (let i = 0; i < x.length; i++) { sxx += x[i] * x[i]; sxy += x[i] * (y[i] - 1); }
    assert.ok(sxy / sxx > 0.8, 'premise: the first Gauss–Newton step for k lands in the NaN region');
    const prob = expModel(x, y, (t) => t[1] <= 0.8);
    const res = solveNonlinear(prob, { theta0: [1, 0] });
    assert.ok(prob.nanCalls >= 1, 'a NaN trial was evaluated');
    assert.ok(res.converged, res.message);
    close(res.theta[0], 1, 1e-10, 'A');
    close(res.theta[1], 0.5, 1e-10, 'k');
    assert.ok(Number.isFinite(res.sse));
  });

  it('NaN at the starting values: termination non-finite, no exception', function () {
    const x = range(0, 4, 1);
    const prob = expModel(x, x.map((v) => v), () => false);
    const res = solveNonlinear(prob, { theta0: [1, 1] });
    assert.strictEqual(res.termination, 'non-finite');
    assert.strictEqual(res.converged, false);
  });

  it('bound active at the optimum: k held at its upper bound, A the linear least-squares value given k (KKT conditions; A = Σ y e^{kx} / Σ e^{2kx})', function () {
    const x = range(0, 6, 0.5);
    const y = x.map((v, i) => 3 * Math.exp(-0.5 * v) + (i % 2 ? 0.01 : -0.01));
    const kMax = -0.8; // the unconstrained optimum k ≈ −0.5 is above this bound
    const res = solveNonlinear(expModel(x, y), { theta0: [1, -2], upper: [Infinity, kMax] });
    assert.ok(res.converged, res.message);
    assert.deepStrictEqual(res.atBound, [null, 'max']);
    assert.strictEqual(res.theta[1], kMax);
    let num = 0;
    let den = 0;
    for (let i = 0; i < x.length; i++) { const e = Math.exp(kMax * x[i]); num += y[i] * e; den += e * e; }
    close(res.theta[0], num / den, 1e-10, 'A at the bound');
  });

  it('a start on a bound with the optimum inside leaves the bound (active set released when −g points inward)', function () {
    const x = range(0, 6, 0.5);
    const y = x.map((v) => 3 * Math.exp(-0.5 * v));
    const res = solveNonlinear(expModel(x, y), { theta0: [1, -2], lower: [1, -2], upper: [10, 0] });
    assert.ok(res.converged, res.message);
    close(res.theta[0], 3, 1e-10, 'A');
    close(res.theta[1], -0.5, 1e-10, 'k');
    assert.deepStrictEqual(res.atBound, [null, null]);
  });

  it('lower bound active: A held at its minimum, k the 1-D least-squares optimum given A (KKT; checked by a golden-section search on S(k))', function () {
    const x = range(0, 6, 0.5);
    const y = x.map((v, i) => 3 * Math.exp(-0.5 * v) + (i % 2 ? 0.02 : -0.02));
    const Amin = 3.5;
    const res = solveNonlinear(expModel(x, y), { theta0: [4, -1], lower: [Amin, -Infinity] });
    assert.ok(res.converged, res.message);
    assert.deepStrictEqual(res.atBound, ['min', null]);
    assert.strictEqual(res.theta[0], Amin);
    // S(k) with A = Amin is unimodal near the answer: golden-section search on [−2, 0] (Kiefer 1953)
    const S = (k: number) => x.reduce((s, v, i) => s + (y[i] - Amin * Math.exp(k * v)) ** 2, 0);
    let a = -2;
    let b = 0;
    const gr = (Math.sqrt(5) - 1) / 2;
    for (let it = 0; it < 200; it++) {
      const c = b - gr * (b - a);
      const d = a + gr * (b - a);
      if (S(c) < S(d)) b = d;
      else a = c;
    }
    close(res.theta[1], (a + b) / 2, 1e-7, 'k given A at its bound');
    // the same optimum from a start a hair above the bound (the first step is shortened to almost nothing)
    const res2 = solveNonlinear(expModel(x, y), { theta0: [Amin * (1 + 1e-13), -1], lower: [Amin, -Infinity] });
    assert.ok(res2.converged, res2.message);
    assert.strictEqual(res2.theta[0], Amin);
    close(res2.theta[1], res.theta[1], 1e-10, 'k from a start next to the bound');
  });

  it('a start outside the box is projected into it, and the solution respects the bounds', function () {
    const x = range(0, 6, 0.5);
    const y = x.map((v) => 3 * Math.exp(-0.5 * v));
    const res = solveNonlinear(expModel(x, y), { theta0: [10, -0.5], lower: [0, -1], upper: [5, 0] });
    assert.ok(res.converged, res.message);
    close(res.theta[0], 3, 1e-10, 'A');
    close(res.theta[1], -0.5, 1e-10, 'k');
    assert.deepStrictEqual(res.atBound, [null, null]);
  });

  it('fixed parameter is held exactly and the others equal the fit of the reduced model (equivalence of the two problems)', function () {
    const x = range(0, 8, 0.5);
    const y = x.map((v, i) => 2 * Math.exp(-0.4 * v) + 0.1 + (i % 3 ? 0.003 : -0.004));
    const n = x.length;
    const full: LsqProblem = {
      n, p: 3, y: Float64Array.from(y),
      model(t, f, J) {
        for (let i = 0; i < n; i++) {
          const e = Math.exp(t[1] * x[i]);
          f[i] = t[0] * e + t[2];
          if (J) { J[i] = e; J[n + i] = t[0] * x[i] * e; J[2 * n + i] = 1; }
        }
      },
    };
    const c = 0.1;
    const res = solveNonlinear(full, { theta0: [1, -1, c], fixed: [false, false, true] });
    assert.ok(res.converged, res.message);
    assert.strictEqual(res.theta[2], c);
    const reduced = solveNonlinear(expModel(x, y.map((v) => v - c)), { theta0: [1, -1] });
    close(res.theta[0], reduced.theta[0], 1e-9, 'A');
    close(res.theta[1], reduced.theta[1], 1e-9, 'k');
  });

  it('rank-deficient Jacobian (two parameters with identical columns): unidentifiable reported, no NaN (duplicate columns span one direction)', function () {
    const x = range(0, 5, 0.5);
    const y = x.map((v) => 2 * Math.exp(-0.7 * v));
    const n = x.length;
    const dup: LsqProblem = {
      n, p: 3, y: Float64Array.from(y),
      model(t, f, J) {
        for (let i = 0; i < n; i++) {
          const e = Math.exp(t[1] * x[i]);
          f[i] = (t[0] + t[2]) * e;
          if (J) { J[i] = e; J[n + i] = (t[0] + t[2]) * x[i] * e; J[2 * n + i] = e; }
        }
      },
    };
    const res = solveNonlinear(dup, { theta0: [0.5, -0.2, 0.5] });
    assert.strictEqual(res.termination, 'singular');
    assert.strictEqual(res.rank, 2);
    assert.deepStrictEqual(res.unidentifiable, [0, 2]);
    assert.ok(Array.from(res.theta).every(Number.isFinite));
    close(res.theta[0] + res.theta[2], 2, 1e-9, 'A1 + A2');
    close(res.theta[1], -0.7, 1e-9, 'k');
  });

  it('cancellation: shouldStop is polled every iteration', function () {
    let polls = 0;
    const res = solveNonlinear(rosenbrock(), { theta0: [-1.2, 1], shouldStop: () => ++polls > 3 });
    assert.strictEqual(res.termination, 'cancelled');
    assert.strictEqual(res.converged, false);
    assert.ok(res.iterations <= 3, `iterations ${res.iterations}`);
    assert.ok(Array.from(res.theta).every(Number.isFinite));
  });

  it('time limit: a 1 ms budget with a 3 ms model ends with time-limit', function () {
    const res = solveNonlinear(rosenbrock(3), { theta0: [-1.2, 1], seconds: 0.001 });
    assert.strictEqual(res.termination, 'time-limit');
    assert.strictEqual(res.converged, false);
  });

  it('iteration limit: maxIterations 2 on Rosenbrock ends with iteration-limit after 2 iterations', function () {
    const res = solveNonlinear(rosenbrock(), { theta0: [-1.2, 1], maxIterations: 2 });
    assert.strictEqual(res.termination, 'iteration-limit');
    assert.strictEqual(res.iterations, 2);
    assert.ok(DEFAULT_MAX_ITERATIONS >= 1000);
  });

  it('onIteration reports a non-increasing SSE (LM accepts only reducing steps, Moré 1978)', function () {
    const seen: number[] = [];
    solveNonlinear(rosenbrock(), { theta0: [-1.2, 1], onIteration: (_k, sse) => seen.push(sse) });
    assert.ok(seen.length > 3);
    for (let i = 1; i < seen.length; i++) assert.ok(seen[i] <= seen[i - 1], `SSE rose at iteration ${i + 1}`);
  });

  it('weights 1/σ² give the weighted solution: one heavily weighted point is fitted almost exactly (definition of weighted least squares)', function () {
    const x = [0, 1, 2, 3, 4];
    const y = [1, 2.2, 2.8, 4.1, 5.3];
    const prob = linearModel(x, y, [() => 1, (v) => v]);
    const w = Float64Array.from([1, 1, 1e12, 1, 1]);
    const res = solveNonlinear({ ...prob, w }, { theta0: [0, 0] });
    assert.ok(res.converged, res.message);
    close(res.theta[0] + 2 * res.theta[1], 2.8, 1e-9, 'fit at the weighted point');
  });

  it('rejects bad input with a user message: lower above upper, wrong number of starts', function () {
    const prob = rosenbrock();
    assert.throws(() => solveNonlinear(prob, { theta0: [0] }), /starting values/);
    assert.throws(() => solveNonlinear(prob, { theta0: [0, 0], lower: [1, 0], upper: [0, 1] }), /lower bound/);
  });
});

describe('solveLinear', function () {
  const x = [1, 2, 3, 4, 5, 6, 7];
  const y = [2.1, 3.9, 6.2, 7.8, 10.1, 12.2, 13.8];
  const n = x.length;
  const xbar = x.reduce((a, b) => a + b, 0) / n;
  const ybar = y.reduce((a, b) => a + b, 0) / n;
  let sxx = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) { sxx += (x[i] - xbar) ** 2; sxy += (x[i] - xbar) * (y[i] - ybar); }

  it('straight line equals the closed form b = Sxy/Sxx, a = ȳ − b x̄ (simple linear regression, handbook formula)', function () {
    const res = solveLinear(linearModel(x, y, [() => 1, (v) => v]), { theta0: [0, 0] });
    assert.strictEqual(res.termination, 'exact');
    assert.strictEqual(res.iterations, 1);
    close(res.theta[1], sxy / sxx, 1e-14, 'slope');
    close(res.theta[0], ybar - (sxy / sxx) * xbar, 1e-14, 'intercept');
    assert.strictEqual(res.rank, 2);
  });

  it('solve({ linear: true }) dispatches to the direct solver', function () {
    const res = solve(linearModel(x, y, [() => 1, (v) => v]), { theta0: [5, 5], linear: true });
    assert.strictEqual(res.iterations, 1);
    close(res.theta[1], sxy / sxx, 1e-14, 'slope');
  });

  it('model with a constant offset f(0) ≠ 0 is handled (f(θ) = f(0) + Jθ)', function () {
    const base = linearModel(x, y, [() => 1, (v) => v]);
    const off: LsqProblem = { ...base, model(t, f, J) { base.model(t, f, J); for (let i = 0; i < n; i++) f[i] += 5; } };
    const res = solveLinear(off, { theta0: [0, 0] });
    close(res.theta[1], sxy / sxx, 1e-14, 'slope');
    close(res.theta[0], ybar - 5 - (sxy / sxx) * xbar, 1e-13, 'intercept');
  });

  it('fixed intercept: slope through the point equals Σx(y−a)/Σx² (regression through a fixed point, handbook formula)', function () {
    const a = 0.25;
    const res = solveLinear(linearModel(x, y, [() => 1, (v) => v]), { theta0: [a, 0], fixed: [true, false] });
    assert.strictEqual(res.theta[0], a);
    let num = 0;
    let den = 0;
    for (let i = 0; i < n; i++) { num += x[i] * (y[i] - a); den += x[i] * x[i]; }
    close(res.theta[1], num / den, 1e-14, 'slope');
  });

  it('duplicate columns: singular, both unidentifiable, minimal-norm split a = b (Golub & Van Loan §5.5.1)', function () {
    const res = solveLinear(linearModel(x, y, [(v) => v, (v) => v]), { theta0: [0, 0] });
    assert.strictEqual(res.termination, 'singular');
    assert.strictEqual(res.rank, 1);
    assert.deepStrictEqual(res.unidentifiable, [0, 1]);
    let sxy0 = 0;
    let sxx0 = 0;
    for (let i = 0; i < n; i++) { sxy0 += x[i] * y[i]; sxx0 += x[i] * x[i]; }
    close(res.theta[0], sxy0 / sxx0 / 2, 1e-12, 'a');
    close(res.theta[1], sxy0 / sxx0 / 2, 1e-12, 'b');
    assert.ok(Number.isFinite(res.sse));
  });

  it('bound violated by the unconstrained solution: constrained optimum slope = 0, intercept = ȳ (KKT for a convex problem)', function () {
    const yd = y.map((v) => 20 - v); // decreasing: the unconstrained slope is negative
    const res = solveLinear(linearModel(x, yd, [() => 1, (v) => v]), { theta0: [0, 0], lower: [-Infinity, 0] });
    assert.ok(res.converged, res.message);
    assert.deepStrictEqual(res.atBound, [null, 'min']);
    assert.strictEqual(res.theta[1], 0);
    close(res.theta[0], yd.reduce((s, v) => s + v, 0) / n, 1e-12, 'intercept');
  });

  it('zero-residual line: exact fit, SSE ~ 0', function () {
    const res = solveLinear(linearModel(x, x.map((v) => 3 - 2 * v), [() => 1, (v) => v]), { theta0: [0, 0] });
    close(res.theta[0], 3, 1e-15, 'a');
    close(res.theta[1], -2, 1e-15, 'b');
    assert.ok(res.sse < 1e-28);
  });

  it('more parameters than observations: rank reported, no crash', function () {
    const res = solveLinear(linearModel([1, 2], [1, 2], [() => 1, (v) => v, (v) => v * v]), { theta0: [0, 0, 0] });
    assert.strictEqual(res.termination, 'singular');
    assert.strictEqual(res.rank, 2);
    assert.ok(Array.from(res.theta).every(Number.isFinite));
  });
});

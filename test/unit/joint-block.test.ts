// The block-angular joint solve (src/engine/solve/block.ts) against the dense path on the same problems: the dense
// covariance s²(JᵀWJ)⁻¹ and hat values of stats/covariance.ts (SVD of the full Jacobian) and the dense trust-region
// LM of solve/lm.ts. Small seeded synthetic problems (no reference claimed beyond the dense computation).
import { strict as assert } from 'assert';
import { buildModel, type BuiltModel } from '../../src/engine/models/build';
import { jointBuiltModel } from '../../src/engine/joint';
import { covarianceFromJacobian, leverage } from '../../src/engine/stats/covariance';
import { blocksOf, solveBlock, type BlockStructure } from '../../src/engine/solve/block';
import { solveNonlinear } from '../../src/engine/solve';
import type { LsqProblem } from '../../src/engine/solve/types';
import { mulberry32, normalSource } from '../../scripts/generate-demo';
import type { NormalizedSpec } from '../../src/engine/spec/types';

interface Case {
  joint: BuiltModel;
  X: Float64Array[];
  y: Float64Array;
  w: Float64Array | null;
  problem: LsqProblem;
  blocks: BlockStructure;
}

/** logistic3 on G groups of uneven size, r and x0 shared, K per group; seeded noise; optional weights */
function makeCase(G: number, seed: number, weighted: boolean, shared = ['r', 'x0']): Case {
  const u = mulberry32(seed);
  const z = normalSource(mulberry32(seed + 1));
  const x: number[] = [];
  const gr: number[] = [];
  const y: number[] = [];
  for (let g = 0; g < G; g++) {
    const K = 1.5 + u();
    const m = 8 + (g % 3) * 3;
    for (let i = 0; i < m; i++) {
      const xi = (48 * i) / (m - 1) + u();
      x.push(xi);
      gr.push(g);
      y.push(K / (1 + Math.exp(-0.3 * (xi - 20))) + 0.03 * z());
    }
  }
  // rows interleaved across groups (as a long CSV would have them), not sorted by group
  const order = x.map((_, i) => i).sort((a, b) => ((a * 7919) % x.length) - ((b * 7919) % x.length));
  const X0 = Float64Array.from(order, i => x[i]);
  const Xg = Float64Array.from(order, i => gr[i]);
  const Y = Float64Array.from(order, i => y[i]);
  const w = weighted ? Float64Array.from(order, (_, k) => 0.5 + (k % 4)) : null;
  const spec = { name: 'm', builtin: 'logistic3', kind: 'builtin', index: 0, params: {} } as unknown as NormalizedSpec['models'][number];
  const base = buildModel(spec, ['hours'], { X: [X0], y: Y });
  const ids = Array.from({ length: G }, (_, g) => `G${g + 1}`);
  const starts = ids.map(() => ({ K: 2, r: 0.25, x0: 18 }));
  const joint = jointBuiltModel(base, shared, ids, starts, '.group');
  const X = [X0, Xg];
  const blocks = blocksOf(joint.compiled, X)!;
  const problem: LsqProblem = {
    n: Y.length, p: joint.params.length, y: Y, ...(w ? { w } : {}),
    model: (theta, f, J) => (J ? joint.compiled.evaluateWithJacobian(theta, X, f, J) : joint.compiled.evaluate(theta, X, f)),
  };
  return { joint, X, y: Y, w, problem, blocks };
}

function maxRelDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let scale = 0;
  for (let k = 0; k < a.length; k++) if (Number.isFinite(b[k])) scale = Math.max(scale, Math.abs(b[k]));
  let d = 0;
  for (let k = 0; k < a.length; k++) {
    if (Number.isNaN(a[k]) || Number.isNaN(b[k])) {
      assert.equal(Number.isNaN(a[k]), Number.isNaN(b[k]), `entry ${k}: ${a[k]} vs ${b[k]}`);
      continue;
    }
    d = Math.max(d, Math.abs(a[k] - b[k]) / scale);
  }
  return d;
}

describe('joint fits: the block-angular solve and covariance equal the dense path', function () {
  this.timeout(30000);

  for (const [G, weighted] of [[3, false], [7, true], [12, false]] as [number, boolean][]) {
    it(`covariance and hat values at a solution, ${G} groups${weighted ? ', weighted' : ''}: within 1e-10 of the dense SVD path`, () => {
      const c = makeCase(G, 40 + G, weighted);
      const dense = solveNonlinear(c.problem, { theta0: Float64Array.from(c.joint.start as number[]), lower: c.joint.lower, upper: c.joint.upper });
      assert.ok(dense.converged, dense.message);
      const free = c.joint.fixed.map(f => !f);
      const n = c.y.length;
      const p = c.joint.params.length;
      const J = dense.J;
      const a = covarianceFromJacobian(J, n, p, c.w, free, 1);
      const b = covarianceFromJacobian(J, n, p, c.w, free, 1, c.blocks);
      assert.equal(b.rank, a.rank);
      assert.ok(maxRelDiff(b.cov, a.cov) < 1e-10, `covariance differs by ${maxRelDiff(b.cov, a.cov)}`);
      const ha = leverage(J, n, p, c.w, free);
      const hb = leverage(J, n, p, c.w, free, c.blocks);
      assert.ok(maxRelDiff(hb, ha) < 1e-10, `hat values differ by ${maxRelDiff(hb, ha)}`);
      // the trace of the hat matrix is the number of parameters
      assert.ok(Math.abs(hb.reduce((s, v) => s + v, 0) - p) < 1e-9);
    });
  }

  it('with a parameter held fixed (as a profile refit holds it): the same covariance as the dense path', () => {
    const c = makeCase(5, 9, false);
    const free = c.joint.fixed.map(f => !f);
    free[c.joint.params.indexOf('K[G3]')] = false;
    free[c.joint.params.indexOf('r')] = false;
    const n = c.y.length;
    const p = c.joint.params.length;
    const J = new Float64Array(n * p);
    const f = new Float64Array(n);
    c.problem.model(Float64Array.from(c.joint.start as number[]), f, J);
    const a = covarianceFromJacobian(J, n, p, null, free, 1);
    const b = covarianceFromJacobian(J, n, p, null, free, 1, c.blocks);
    assert.ok(maxRelDiff(b.cov, a.cov) < 1e-10, `covariance differs by ${maxRelDiff(b.cov, a.cov)}`);
  });

  it('solves to the dense LM solution, also with a bound active on one group', () => {
    for (const bounded of [false, true]) {
      const c = makeCase(6, 21, true);
      const upper = Float64Array.from(c.joint.upper);
      if (bounded) upper[c.joint.params.indexOf('K[G2]')] = 1.2; // below its unbounded estimate
      const opts = { theta0: Float64Array.from(c.joint.start as number[]), lower: c.joint.lower, upper };
      const d = solveNonlinear(c.problem, opts);
      const s = solveBlock({ ...c.problem, blocks: c.blocks }, opts);
      assert.ok(d.converged && s.converged, `${d.message} / ${s.message}`);
      assert.ok(Math.abs(s.sse - d.sse) <= 1e-10 * d.sse, `sse ${s.sse} vs ${d.sse}`);
      for (let j = 0; j < d.theta.length; j++) assert.ok(Math.abs(s.theta[j] - d.theta[j]) <= 1e-6 * (Math.abs(d.theta[j]) + 1e-3), `${c.joint.params[j]}: ${s.theta[j]} vs ${d.theta[j]}`);
      if (bounded) assert.equal(s.atBound[c.joint.params.indexOf('K[G2]')], 'max');
      // the dense Jacobian it reports is the model's
      assert.ok(maxRelDiff(s.J, d.J) < 1e-6);
    }
  });

  it('a group whose own parameter cannot be determined: rank-deficient, named as the dense rank analysis names it', () => {
    const c = makeCase(4, 3, false, ['K', 'x0']);
    // r of group 2 multiplies (x − x0) only; with group 2's x all at x0 its column vanishes
    const x0 = 18;
    const X2 = [Float64Array.from(c.X[0], (v, i) => (c.blocks.group[i] === 1 ? x0 : v)), Float64Array.from(c.X[1])];
    const theta0 = Float64Array.from(c.joint.start as number[]);
    theta0[c.joint.params.indexOf('x0')] = x0;
    const fixed = c.joint.params.map(p => p === 'x0');
    const model: LsqProblem['model'] = (t, f, J) => (J ? c.joint.compiled.evaluateWithJacobian(t, X2, f, J) : c.joint.compiled.evaluate(t, X2, f));
    const s = solveBlock({ ...c.problem, model, blocks: blocksOf(c.joint.compiled, X2)! }, { theta0, fixed });
    assert.equal(s.termination, 'singular');
    assert.deepEqual(s.unidentifiable.map(j => c.joint.params[j]), ['r[G2]']);
  });
});

// Benchmark: a joint fit (models[].shared) of G plate wells × 12 points, logistic4 with ec50 and slope shared
// (2 + 2·G parameters), seeded invented data. Columns: the joint solve and its covariance by the block-angular path
// (src/engine/solve/block.ts) against the dense path on the same problem in the same run (dense trust-region LM of
// solve/lm.ts + dense SVD covariance of stats/covariance.ts), then the whole spec through runSpecFile with every
// statistic (profile intervals of all parameters within DEFAULTS.analysis.jointProfileWork, cross-validation).
// Run: npx tsx bench/joint-fit.ts [groups ...]   (default 96 1000; the dense peer is skipped above 200 groups: its
// n × p Jacobian alone would be 12 000 × 2 002 doubles and its QR about 5·10^10 flops per iteration)
//
// Measured 2026-12-02 17:55 UTC on 2 cores shared with other jobs (load ≈ 15, so ±30 % noise), CPU seconds:
//   groups  params  solve block  solve dense  ratio  cov block  cov dense  ratio  full run  profiled
//       96     194        0.050        1.261  0.040      0.058      1.794  0.032     3.102   194/194
//     1000    2002        0.074            —      —      0.899          —      —    19.037  100/2002
// Before the block path (commit 0371940, dense LM on the indicator formula) the 96-group full run took 16.5 s CPU
// (15.4 s of it the joint fit) and some profile intervals ran into the 10 s time guard.
// Figures quoted in docs/fitspec.md ("How it is fitted").
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile } from '../src/engine/run';
import { isErrorReport, type FitReport } from '../src/engine/report';
import { buildModel } from '../src/engine/models/build';
import { jointBuiltModel } from '../src/engine/joint';
import { blocksOf, solveBlock } from '../src/engine/solve/block';
import { solveNonlinear } from '../src/engine/solve';
import { covarianceFromJacobian } from '../src/engine/stats/covariance';
import type { NormalizedSpec } from '../src/engine/spec/types';
import { mulberry32, normalSource } from '../scripts/generate-demo';

const args = process.argv.slice(2).map(Number).filter(v => v > 0);
const GROUPS = args.length ? args : [96, 1000];
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-bench-joint-'));

function plate(G: number): { csv: string; x: number[]; y: number[]; g: number[] } {
  const z = normalSource(mulberry32(7));
  const u = mulberry32(11);
  const lines = ['conc,resp,well'];
  const x: number[] = [];
  const y: number[] = [];
  const g: number[] = [];
  for (let k = 0; k < G; k++) {
    const top = 1.5 + u();
    const bottom = 0.05 + 0.1 * u();
    for (let i = 0; i < 12; i++) {
      const c = 0.01 * 2 ** i;
      const v = Number((bottom + (top - bottom) / (1 + (1.2 / c) ** 1.3) + 0.02 * z()).toFixed(5));
      lines.push(`${c},${v},W${k + 1}`);
      x.push(c);
      y.push(v);
      g.push(k);
    }
  }
  return { csv: lines.join('\n') + '\n', x, y, g };
}

const cpu = (): number => process.cpuUsage().user / 1e6;

async function main(): Promise<void> {
  const rows: string[][] = [['groups', 'params', 'solve block', 'solve dense', 'ratio', 'cov block', 'cov dense', 'ratio', 'full run', 'profiled']];
  for (const G of GROUPS) {
    const d = plate(G);
    // the joint problem on its own: starts as the run takes them (each well's separate estimates; here the truth)
    const X0 = Float64Array.from(d.x);
    const Y = Float64Array.from(d.y);
    const base = buildModel({ name: 'm', builtin: 'logistic4', kind: 'builtin', index: 0, params: {} } as unknown as NormalizedSpec['models'][number], ['conc'], { X: [X0], y: Y });
    const ids = Array.from({ length: G }, (_, k) => `W${k + 1}`);
    const joint = jointBuiltModel(base, ['ec50', 'slope'], ids, ids.map(() => ({ lower: 0.1, upper: 2, ec50: 1, slope: 1 })), '.group');
    const X = [X0, Float64Array.from(d.g)];
    const problem = {
      n: Y.length, p: joint.params.length, y: Y,
      model: (t: Float64Array, f: Float64Array, J: Float64Array | null) => (J ? joint.compiled.evaluateWithJacobian(t, X, f, J) : joint.compiled.evaluate(t, X, f)),
    };
    const opts = { theta0: Float64Array.from(joint.start as number[]), lower: joint.lower, upper: joint.upper };
    let t = cpu();
    const sb = solveBlock({ ...problem, blocks: blocksOf(joint.compiled, X)! }, opts);
    const tSolveB = cpu() - t;
    t = cpu();
    const free = joint.fixed.map(f => !f);
    covarianceFromJacobian(sb.J, Y.length, joint.params.length, null, free, 1, blocksOf(joint.compiled, X));
    const tCovB = cpu() - t;
    let tSolveD = NaN;
    let tCovD = NaN;
    if (G <= 200) {
      t = cpu();
      const sd = solveNonlinear(problem, opts);
      tSolveD = cpu() - t;
      if (Math.abs(sd.sse - sb.sse) > 1e-8 * sd.sse) console.warn(`G=${G}: dense SSE ${sd.sse} vs block ${sb.sse}`);
      t = cpu();
      covarianceFromJacobian(sd.J, Y.length, joint.params.length, null, free, 1);
      tCovD = cpu() - t;
    }
    // the whole spec, every statistic
    fs.writeFileSync(path.join(dir, `p${G}.csv`), d.csv);
    const spec = path.join(dir, `p${G}.fitspec.json`);
    fs.writeFileSync(spec, JSON.stringify({ data: { file: `p${G}.csv`, x: 'conc', y: 'resp', groupBy: 'well' }, models: [{ name: 'common', builtin: 'logistic4', shared: ['ec50', 'slope'] }] }));
    t = cpu();
    const r = await runSpecFile(spec, { workspaceRoot: dir });
    const tRun = cpu() - t;
    if (isErrorReport(r)) throw new Error(r.error.message);
    const jm = (r as FitReport).models.find(m => m.group === null)!;
    const profiled = Object.values(jm.params).filter(p => p.profileCi && p.profileCi[0] !== null && p.profileCi[1] !== null).length;
    const f = (v: number): string => (Number.isFinite(v) ? v.toFixed(3) : '—');
    rows.push([String(G), String(joint.params.length), f(tSolveB), f(tSolveD), f(tSolveB / tSolveD), f(tCovB), f(tCovD), f(tCovB / tCovD), f(tRun), `${profiled}/${joint.params.length}`]);
  }
  const w = rows[0].map((_, c) => Math.max(...rows.map(r => r[c].length)));
  for (const r of rows) console.log(r.map((v, c) => v.padStart(w[c])).join('  '));
  console.log('CPU seconds; ratio = block / dense (same problem, same run); full run = runSpecFile of the spec, separate fits that start the joint fit included');
}

main().catch(e => {
  console.error(e);
  process.exit(1);
});

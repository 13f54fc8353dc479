// Benchmark: accuracy (min LRE over the parameters) and time on the 54 NIST StRD nonlinear cases — Curvewright's
// trust-region LM versus ml-levenberg-marquardt 5.1.0, measured in the same run on the same compiled models.
// Peer set-ups: (a) analytic Jacobian (its `jacobianFunction` option), errorTolerance 0, 1000 iterations, default
// damping — the set-up of PEERS.md; (b) its defaults (finite differences, 100 iterations).
// Run: npx tsx bench/solver-nist.ts [repeats]   (STRD_DIR as for the reference tests)
import * as fs from 'fs';
import * as path from 'path';
import { compileFormula } from '../src/engine/formula';
import type { CompiledFormula } from '../src/engine/formula/types';
import { solveNonlinear } from '../src/engine/solve';
import { solveNonlinearWithScaling } from '../src/engine/solve/lm';
import { lre, readStrd, strdDir, StrdProblem } from '../test/reference/strd';
import { NIST_MODELS } from '../test/reference/nist-models';
import type { LsqProblem } from '../src/engine/solve/types';

/** the least-squares problem of a compiled formula on columns X and observations y (solver level, for the bench) */
function lsqFromFormula(compiled: CompiledFormula, X: Float64Array[], y: Float64Array): LsqProblem {
  return {
    n: y.length,
    p: compiled.params.length,
    y,
    model(theta, f, J) {
      if (J) compiled.evaluateWithJacobian(theta, X, f, J);
      else compiled.evaluate(theta, X, f);
    },
  };
}

// the peer ships as an ES module whose types need moduleResolution node16; tsx loads it through require
type PeerFn = (
  data: { x: number[]; y: number[] },
  fn: (t: number[]) => (x: number) => number,
  options: Record<string, unknown>,
) => { parameterValues: number[]; parameterError: number; iterations: number };
// eslint-disable-next-line @typescript-eslint/no-require-imports
const { levenbergMarquardt } = require('ml-levenberg-marquardt') as { levenbergMarquardt: PeerFn };

const repeats = Math.max(1, Number(process.argv[2] ?? 3));

interface Row {
  name: string;
  start: number;
  ours: { lre: number; ms: number; iter: number };
  /** one scaling strategy alone (no second run) */
  jacOnly: number;
  unitOnly: number;
  peerJ: { lre: number; ms: number; iter: number; error?: string };
  peerDefault: { lre: number; ms: number; iter: number; error?: string };
}

function minLre(theta: ArrayLike<number>, prob: StrdProblem): number {
  let m = Infinity;
  for (let j = 0; j < prob.p; j++) m = Math.min(m, lre(theta[j], prob.certified.values[j], prob.digits));
  return m;
}

/** best of `repeats` wall-clock times of fn, in ms, and its last result */
function timed<T>(fn: () => T): { ms: number; value: T } {
  let best = Infinity;
  let value!: T;
  for (let k = 0; k < repeats; k++) {
    const t0 = process.hrtime.bigint();
    value = fn();
    best = Math.min(best, Number(process.hrtime.bigint() - t0) / 1e6);
  }
  return { ms: best, value };
}

function peer(prob: StrdProblem, c: CompiledFormula, X: Float64Array[], y: Float64Array, start: number, analytic: boolean): Row['peerJ'] {
  // x is the observation index, so multi-variable models (Nelson) fit the same interface
  const idx = Array.from({ length: prob.n }, (_, i) => i);
  const point = new Float64Array(X.length);
  const at = (i: number) => {
    for (let v = 0; v < X.length; v++) point[v] = X[v][i];
    return point;
  };
  const fn = (t: number[]) => (i: number) => c.at(t, at(i));
  const grad = new Float64Array(prob.p);
  const jac = (t: number[]) => (i: number) => {
    c.gradientAt(t, at(i), grad);
    return Array.from(grad);
  };
  const options = analytic
    ? { initialValues: prob.starts[start].slice(), maxIterations: 1000, errorTolerance: 0, jacobianFunction: jac }
    : { initialValues: prob.starts[start].slice() };
  try {
    const { ms, value } = timed(() => levenbergMarquardt({ x: idx, y: Array.from(y) }, fn, options));
    return { lre: minLre(value.parameterValues, prob), ms, iter: value.iterations };
  } catch (e) {
    return { lre: 0, ms: NaN, iter: 0, error: (e as Error).message };
  }
}

function main(): void {
  const dir = strdDir();
  if (!dir) {
    console.error('NIST StRD files not found: set STRD_DIR to the folder holding nonlinear/ and linear/.');
    process.exitCode = 2;
    return;
  }
  const nl = path.join(dir, 'nonlinear');
  const rows: Row[] = [];
  for (const f of fs.readdirSync(nl).filter((x) => x.endsWith('.dat')).sort()) {
    const prob = readStrd(path.join(nl, f));
    const m = NIST_MODELS[prob.name];
    const c = compileFormula(m.formula, { variables: m.variables, params: prob.params });
    const X = prob.x.map((a) => Float64Array.from(a));
    const y = Float64Array.from(prob.y.map(m.y === 'log(y)' ? Math.log : (v: number) => v)); // Nelson is fitted on log(y)
    const lsq = lsqFromFormula(c, X, y);
    for (const start of [0, 1]) {
      const ours = timed(() => solveNonlinear(lsq, { theta0: prob.starts[start] }));
      rows.push({
        name: prob.name, start,
        ours: { lre: minLre(ours.value.theta, prob), ms: ours.ms, iter: ours.value.iterations },
        jacOnly: minLre(solveNonlinearWithScaling(lsq, { theta0: prob.starts[start] }, 'jacobian').theta, prob),
        unitOnly: minLre(solveNonlinearWithScaling(lsq, { theta0: prob.starts[start] }, 'unit').theta, prob),
        peerJ: peer(prob, c, X, y, start, true),
        peerDefault: peer(prob, c, X, y, start, false),
      });
    }
  }
  const fmt = (v: number, w: number, d = 1) => (Number.isFinite(v) ? v.toFixed(d) : '—').padStart(w);
  const out: string[] = [
    `NIST StRD nonlinear, 54 cases: min LRE over the parameters, best-of-${repeats} time (ms)`,
    `${'problem'.padEnd(9)} st | ${'ours LRE'.padStart(8)} ${'ms'.padStart(7)} ${'it'.padStart(4)} ${'J-only'.padStart(6)} ${'U-only'.padStart(6)} | ${'ml-lm(J) LRE'.padStart(12)} ${'ms'.padStart(7)} ${'it'.padStart(4)} | ${'ml-lm(def) LRE'.padStart(14)} ${'ms'.padStart(6)}`,
  ];
  for (const r of rows) {
    out.push(
      `${r.name.padEnd(9)} ${r.start + 1}  | ${fmt(r.ours.lre, 8)} ${fmt(r.ours.ms, 7, 2)} ${String(r.ours.iter).padStart(4)} ${fmt(r.jacOnly, 6)} ${fmt(r.unitOnly, 6)} | ` +
        `${fmt(r.peerJ.lre, 12)} ${fmt(r.peerJ.ms, 7, 2)} ${String(r.peerJ.iter).padStart(4)} | ${fmt(r.peerDefault.lre, 14)} ${fmt(r.peerDefault.ms, 6, 2)}` +
        `${r.peerJ.error ? `  (ml-lm(J) threw: ${r.peerJ.error.slice(0, 40)})` : ''}${r.peerDefault.error ? `  (ml-lm(def) threw: ${r.peerDefault.error.slice(0, 40)})` : ''}`,
    );
  }
  const count = (sel: (r: Row) => number) => rows.filter((r) => sel(r) >= 6).length;
  const total = (sel: (r: Row) => number) => rows.reduce((s, r) => s + (Number.isFinite(sel(r)) ? sel(r) : 0), 0);
  const tOurs = total((r) => r.ours.ms);
  const tJ = total((r) => r.peerJ.ms);
  const tD = total((r) => r.peerDefault.ms);
  out.push('');
  out.push(`${'solver'.padEnd(48)} ${'cases ≥ 6 digits'.padStart(16)} ${'total ms'.padStart(9)} ${'time ratio'.padStart(10)}`);
  out.push(`${'Curvewright LM (analytic J from compileFormula)'.padEnd(48)} ${`${count((r) => r.ours.lre)}/54`.padStart(16)} ${tOurs.toFixed(0).padStart(9)} ${'1.00'.padStart(10)}`);
  out.push(`${'ml-levenberg-marquardt 5.1.0, analytic J, 1000 it'.padEnd(48)} ${`${count((r) => r.peerJ.lre)}/54`.padStart(16)} ${tJ.toFixed(0).padStart(9)} ${(tJ / tOurs).toFixed(2).padStart(10)}`);
  out.push(`${'ml-levenberg-marquardt 5.1.0, defaults'.padEnd(48)} ${`${count((r) => r.peerDefault.lre)}/54`.padStart(16)} ${tD.toFixed(0).padStart(9)} ${(tD / tOurs).toFixed(2).padStart(10)}`);
  out.push(`${'  the same LM, Jacobian scaling only (no second run)'.padEnd(48)} ${`${count((r) => r.jacOnly)}/54`.padStart(16)}`);
  out.push(`${'  the same LM, unit scaling only (no second run)'.padEnd(48)} ${`${count((r) => r.unitOnly)}/54`.padStart(16)}`);
  const okBoth = rows.filter((r) => r.ours.lre >= 6 && r.peerJ.lre >= 6);
  const sOurs = okBoth.reduce((s, r) => s + r.ours.ms, 0);
  const sJ = okBoth.reduce((s, r) => s + r.peerJ.ms, 0);
  out.push(`on the ${okBoth.length} cases both solve: ours ${sOurs.toFixed(0)} ms, ml-lm(J) ${sJ.toFixed(0)} ms, ratio ${(sJ / sOurs).toFixed(2)}`);
  console.log(out.join('\n'));
}

main();

// Benchmark: nonlinear solve alone, in process — Curvewright's solveNonlinear on the compiled formula (the kernels a
// fit uses) against SciPy least_squares(method='lm') with the analytic Jacobian (bench/scipy-peer.py, run as a
// subprocess in the same run when python3 imports numpy and scipy), on the same seeded CSVs and from the same starts.
// Columns: median CPU ms (process.cpuUsage; SciPy: time.process_time) of `repeats` solves, model evaluations per fit (ours: calls of the model callback, each with or
// without the Jacobian; SciPy: nfev + njev), ratio = ours / SciPy (≤ 1.0 is the goal), max relative difference of the
// estimates against SciPy with tight tolerances (1e-15, as ours), which shows both reach the same minimum.
// Run: npx tsx bench/solve-speed.ts [--quick] [--json FILE]
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { spawnSync } from 'child_process';
import { compileFormula } from '../src/engine/formula';
import { solveNonlinear } from '../src/engine/solve';
import type { LsqProblem } from '../src/engine/solve/types';

export interface SolveCase {
  model: 'exp_decay' | 'logistic3' | 'logistic4';
  formula: string;
  params: string[];
  truth: number[];
  start: number[];
  noise: number;
  xRange: [number, number];
}

export const CASES: SolveCase[] = [
  { model: 'exp_decay', formula: 'A*exp(k*x)', params: ['A', 'k'], truth: [5, -0.4], start: [3, -0.2], noise: 0.05, xRange: [0, 10] },
  { model: 'logistic3', formula: 'K/(1 + exp(-r*(x - x0)))', params: ['K', 'r', 'x0'], truth: [10, 0.9, 5], start: [7, 0.5, 4], noise: 0.3, xRange: [0, 10] },
  { model: 'logistic4', formula: 'lower + (upper - lower)/(1 + (ec50/x)^slope)', params: ['lower', 'upper', 'ec50', 'slope'], truth: [0.1, 2, 3, 1.5], start: [0.3, 1.5, 2, 1], noise: 0.05, xRange: [0.05, 20] },
];

/** seeded uniform (LCG, Numerical Recipes constants) and Box–Muller normal */
export function rng(seed: number): () => number {
  let s = seed >>> 0;
  return () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) + 0.5) / 4294967296;
}

/** seeded x, y for a case (x uniform on the range, y = f(x; truth) + N(0, noise²)), rounded to 10 digits as in a CSV */
export function caseData(c: SolveCase, n: number, seed = 20261202): { x: Float64Array; y: Float64Array } {
  const u = rng(seed);
  const comp = compileFormula(c.formula, { variables: ['x'], params: c.params });
  const x = new Float64Array(n);
  for (let i = 0; i < n; i++) x[i] = Number((c.xRange[0] + (c.xRange[1] - c.xRange[0]) * u()).toPrecision(10));
  const f = new Float64Array(n);
  comp.evaluate(c.truth, [x], f);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const z = Math.sqrt(-2 * Math.log(u())) * Math.cos(2 * Math.PI * u());
    y[i] = Number((f[i] + c.noise * z).toPrecision(10));
  }
  return { x, y };
}

export function writeCsv(file: string, x: Float64Array, y: Float64Array): void {
  const fd = fs.openSync(file, 'w');
  fs.writeSync(fd, 'x,y\n');
  let chunk = '';
  for (let i = 0; i < x.length; i++) {
    chunk += `${x[i]},${y[i]}\n`;
    if (chunk.length > 1 << 20) (fs.writeSync(fd, chunk), (chunk = ''));
  }
  fs.writeSync(fd, chunk);
  fs.closeSync(fd);
}

/** CPU time of this process in ms (user + system): on a machine shared with other jobs it is far steadier than wall time */
export function cpuMs(): number {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1000;
}

export function median(v: number[]): number {
  const s = [...v].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
}

export interface SolveRow {
  model: string;
  n: number;
  ours: { ms: number; evaluations: number; iterations: number; theta: number[]; termination: string };
  scipy: { ms: number; nfev: number; njev: number; theta: number[] } | null;
  scipyTight: { ms: number; nfev: number; njev: number; theta: number[] } | null;
  ratio: number | null;
  maxRelDiff: number | null;
}

export function scipyAvailable(): boolean {
  const r = spawnSync('python3', ['-c', 'import numpy, scipy'], { encoding: 'utf8' });
  return r.status === 0;
}

export function scipyVersion(): string {
  const r = spawnSync('python3', ['-c', 'import numpy, scipy; print(scipy.__version__, numpy.__version__)'], { encoding: 'utf8' });
  const [s, np] = r.stdout.trim().split(' ');
  return `SciPy ${s}, NumPy ${np}`;
}

export function runSolveBench(sizes: number[], repeats: number, log: (s: string) => void = console.log): SolveRow[] {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-bench-solve-'));
  const havePy = scipyAvailable();
  const rows: SolveRow[] = [];
  const jobs: object[] = [];
  try {
    for (const c of CASES) {
      const comp = compileFormula(c.formula, { variables: ['x'], params: c.params });
      for (const n of sizes) {
        const { x, y } = caseData(c, n);
        const X = [x];
        const lsq: LsqProblem = {
          n, p: c.params.length, y,
          model(theta, f, J) {
            if (J) comp.evaluateWithJacobian(theta, X, f, J);
            else comp.evaluate(theta, X, f);
          },
        };
        const times: number[] = [];
        let res = solveNonlinear(lsq, { theta0: c.start }); // warm-up (JIT), not timed
        for (let k = 0; k < repeats; k++) {
          const t0 = cpuMs();
          res = solveNonlinear(lsq, { theta0: c.start });
          times.push(cpuMs() - t0);
        }
        const id = `${c.model}-${n}`;
        rows.push({
          model: c.model, n,
          ours: { ms: median(times), evaluations: res.evaluations, iterations: res.iterations, theta: Array.from(res.theta), termination: res.termination },
          scipy: null, scipyTight: null, ratio: null, maxRelDiff: null,
        });
        if (havePy) {
          const csv = path.join(dir, `${id}.csv`);
          writeCsv(csv, x, y);
          jobs.push({ id, csv, model: c.model, start: c.start, repeats });
          jobs.push({ id: `${id}-tight`, csv, model: c.model, start: c.start, repeats: 1, tight: true });
        }
      }
    }
    if (havePy) {
      const r = spawnSync('python3', [path.join(__dirname, 'scipy-peer.py')], { input: JSON.stringify(jobs), encoding: 'utf8', maxBuffer: 1 << 26 });
      if (r.status !== 0) {
        log(`SciPy peer failed (exit ${r.status}): ${r.stderr.slice(0, 400)}`);
      } else {
        const res = JSON.parse(r.stdout) as { id: string; ms: number; nfev: number; njev: number; theta: number[] }[];
        const byId = new Map(res.map((o) => [o.id, o]));
        for (const row of rows) {
          const id = `${row.model}-${row.n}`;
          row.scipy = byId.get(id) ?? null;
          row.scipyTight = byId.get(`${id}-tight`) ?? null;
          if (row.scipy) row.ratio = row.ours.ms / row.scipy.ms;
          if (row.scipyTight) {
            const t = row.scipyTight.theta;
            row.maxRelDiff = Math.max(...row.ours.theta.map((v, j) => Math.abs(v - t[j]) / Math.max(Math.abs(t[j]), 1e-300)));
          }
        }
      }
    }
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
  return rows;
}

export function solveTable(rows: SolveRow[], havePy: boolean): string[] {
  const out: string[] = [];
  out.push(`${'model'.padEnd(10)} ${'n'.padStart(8)} | ${'ours ms'.padStart(9)} ${'evals'.padStart(5)} ${'iter'.padStart(4)} | ${'SciPy ms'.padStart(9)} ${'nfev+njev'.padStart(9)} | ${'ratio'.padStart(6)} ${'goal'.padStart(6)} | ${'Δθ vs SciPy 1e-15'.padStart(17)}`);
  for (const r of rows) {
    const sp = r.scipy;
    out.push(
      `${r.model.padEnd(10)} ${String(r.n).padStart(8)} | ${r.ours.ms.toFixed(1).padStart(9)} ${String(r.ours.evaluations).padStart(5)} ${String(r.ours.iterations).padStart(4)} | ` +
        `${(sp ? sp.ms.toFixed(1) : '—').padStart(9)} ${(sp ? `${sp.nfev}+${sp.njev}` : '—').padStart(9)} | ${(r.ratio === null ? '—' : r.ratio.toFixed(2)).padStart(6)} ` +
        `${(r.ratio === null ? '' : r.ratio <= 1 ? 'pass' : 'short').padStart(6)} | ${(r.maxRelDiff === null ? '—' : r.maxRelDiff.toExponential(1)).padStart(17)}`,
    );
  }
  if (!havePy) out.push('SciPy rows skipped: python3 with scipy not found (apt-get install -y python3-scipy)');
  return out;
}

if (require.main === module) {
  const args = process.argv.slice(2);
  const quick = args.includes('--quick');
  const ji = args.indexOf('--json');
  const sizes = quick ? [1e3, 1e5] : [1e3, 1e4, 1e5, 1e6];
  const repeats = quick ? 3 : 5;
  const rows = runSolveBench(sizes, repeats);
  const havePy = scipyAvailable();
  console.log(`nonlinear solve only, in process; median CPU ms of ${repeats}; ${havePy ? scipyVersion() : 'no SciPy'}`);
  for (const l of solveTable(rows, havePy)) console.log(l);
  if (ji >= 0 && args[ji + 1]) fs.writeFileSync(args[ji + 1], JSON.stringify(rows, null, 1));
}

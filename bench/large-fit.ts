// Benchmark: fitting large CSVs end to end (runSpecFile in-process), seconds per phase taken from the onProgress
// messages, for (a) linear + polynomial 2 and (b) logistic3 on seeded data of 10^4, 10^5, 10^6 rows; plus the full-data
// linear solve alone (our solveLinear) against a peer measured in the same run: ml-matrix QrDecomposition(X).solve(y)
// on the same design (1, x, x²).
// Run: npx tsx bench/large-fit.ts [rows ...]   (default 10000 100000 1000000)
//
// Measured 2026-12-01/02 (UTC) on 2 cores shared with other jobs, so ±30 % noise; seconds between onProgress messages.
// BEFORE = the code at commit 58f9658 (23:51 UTC), AFTER = this change (00:05 UTC). "solve" = full-data linear solve of
// (1, x, x²) alone, ours vs ml-matrix QrDecomposition(X).solve(y) in the same run (ratio = ours / ml-matrix).
//
//   n     case                    read   model 1  model 2   total  | solve ours  ml-matrix  ratio
//   1e4   before  linear + quad   0.06    0.41     0.20     0.71  |   0.013      0.071     0.18
//         after                   0.07    0.41     0.10     0.62  |   0.034      0.128     0.26
//   1e5   before                  0.30    1.47     1.52     3.31  |   0.176      0.446     0.39
//         after                   0.31    0.67     0.48     1.47  |   0.105      0.476     0.22
//   1e6   before                  2.55   14.04    16.10    32.71  |   1.004      5.421     0.19
//         after                   2.44    4.02     5.26    11.74  |   0.376      3.746     0.10
//   1e4   before  logistic3       0.04    0.74              0.79
//         after                   0.05    0.55              0.61
//   1e5   before                  0.31    4.08              4.41
//         after                   0.29    2.48              2.79
//   1e6   before                  3.08   27.57             30.67   (cross-validation ran out of its 10 s budget: cvRmse null)
//         after                   3.34   22.32             25.71   (cross-validation completes; the profile interval of
//                                                                   x0 still runs out of its 10 s budget)
// At 1e6 rows before, the quadratic's cross-validation also ran out of its budget (cvRmse null); after, it completes.
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { QrDecomposition, Matrix } from 'ml-matrix';
import { runSpecFile } from '../src/engine/run';
import { solveLinear } from '../src/engine/solve';
import { isErrorReport } from '../src/engine/report';

const sizes = process.argv.slice(2).map(Number).filter((v) => v > 0);
const ROWS = sizes.length ? sizes : [1e4, 1e5, 1e6];
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-bench-large-'));

/** seeded uniform (LCG, Numerical Recipes constants) and Box–Muller normal */
function rng(seed: number): () => number {
  let s = seed >>> 0;
  return () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) + 0.5) / 4294967296;
}
function normal(u: () => number): number {
  return Math.sqrt(-2 * Math.log(u())) * Math.cos(2 * Math.PI * u());
}

function writeCsv(file: string, n: number, f: (x: number) => number, noise: number, seed: number): void {
  const u = rng(seed);
  const fd = fs.openSync(file, 'w');
  fs.writeSync(fd, 'x,y\n');
  let chunk = '';
  for (let i = 0; i < n; i++) {
    const x = 10 * u();
    chunk += `${x.toPrecision(10)},${(f(x) + noise * normal(u)).toPrecision(10)}\n`;
    if (chunk.length > 1 << 20) {
      fs.writeSync(fd, chunk);
      chunk = '';
    }
  }
  fs.writeSync(fd, chunk);
  fs.closeSync(fd);
}

async function timedRun(spec: object, name: string): Promise<{ phases: [string, number][]; total: number; ok: string }> {
  const specPath = path.join(dir, `${name}.fitspec.json`);
  fs.writeFileSync(specPath, JSON.stringify(spec));
  const phases: [string, number][] = [];
  let label = 'setup';
  let t = performance.now();
  const t0 = t;
  const res = await runSpecFile(specPath, {
    workspaceRoot: dir,
    onProgress: (msg) => {
      const now = performance.now();
      phases.push([label, (now - t) / 1000]);
      label = msg;
      t = now;
    },
  });
  const end = performance.now();
  phases.push([label, (end - t) / 1000]);
  const incomplete = isErrorReport(res) ? [] : res.models.flatMap((m) => m.problems.filter((q) => q.code.endsWith('-incomplete')).map((q) => `${m.name}: ${q.code}`));
  const ok = (incomplete.length ? `${incomplete.join(', ')}; ` : '') + (isErrorReport(res)
    ? `error: ${JSON.stringify(res).slice(0, 200)}`
    : res.models.map((m) => `${m.name}: ${m.status}, cvRmse ${m.stats?.cvRmse == null ? 'null' : m.stats.cvRmse.toPrecision(6)}, ${Object.entries(m.params).map(([k, q]) => `${k}=${q.value.toPrecision(10)}`).join(' ')}`).join('; '));
  return { phases, total: (end - t0) / 1000, ok };
}

function linearSolveVsPeer(x: Float64Array, y: Float64Array): { ours: number; peer: number; maxRelDiff: number } {
  const n = x.length;
  const p = 3;
  let t = performance.now();
  const res = solveLinear(
    {
      n, p, y,
      model: (theta, f, J) => {
        for (let i = 0; i < n; i++) f[i] = theta[0] + theta[1] * x[i] + theta[2] * x[i] * x[i];
        if (J) for (let i = 0; i < n; i++) { J[i] = 1; J[n + i] = x[i]; J[2 * n + i] = x[i] * x[i]; }
      },
    },
    { theta0: [0, 0, 0] },
  );
  const ours = (performance.now() - t) / 1000;
  t = performance.now();
  const X = new Matrix(n, p);
  for (let i = 0; i < n; i++) { X.set(i, 0, 1); X.set(i, 1, x[i]); X.set(i, 2, x[i] * x[i]); }
  const Y = Matrix.columnVector(Array.from(y));
  const beta = new QrDecomposition(X).solve(Y).getColumn(0);
  const peer = (performance.now() - t) / 1000;
  let maxRelDiff = 0;
  for (let j = 0; j < p; j++) maxRelDiff = Math.max(maxRelDiff, Math.abs(beta[j] - res.theta[j]) / Math.abs(res.theta[j]));
  return { ours, peer, maxRelDiff };
}

function readXY(file: string): { x: Float64Array; y: Float64Array } {
  const lines = fs.readFileSync(file, 'utf8').trim().split('\n').slice(1);
  const x = new Float64Array(lines.length);
  const y = new Float64Array(lines.length);
  lines.forEach((l, i) => { const c = l.indexOf(','); x[i] = Number(l.slice(0, c)); y[i] = Number(l.slice(c + 1)); });
  return { x, y };
}

async function main(): Promise<void> {
  const out: string[] = [];
  const say = (s: string): void => { out.push(s); console.log(s); };
  try {
    for (const n of ROWS) {
      const linCsv = path.join(dir, `lin-${n}.csv`);
      writeCsv(linCsv, n, (x) => 2 + 0.5 * x - 0.03 * x * x, 0.2, 12345);
      const a = await timedRun({
        title: `linear ${n}`, data: { file: path.basename(linCsv), x: 'x', y: 'y' },
        models: [{ name: 'line', builtin: 'linear' }, { name: 'quadratic', polynomial: 2 }],
      }, `lin-${n}`);
      say(`\n(a) linear + polynomial 2, n = ${n}: total ${a.total.toFixed(2)} s  [${a.ok}]`);
      for (const [k, s] of a.phases) say(`    ${s.toFixed(3).padStart(8)} s  ${k}`);
      const { x, y } = readXY(linCsv);
      const lv = linearSolveVsPeer(x, y);
      say(`    full-data linear solve (1, x, x²): ours ${lv.ours.toFixed(3)} s, ml-matrix QR ${lv.peer.toFixed(3)} s, ratio ours/peer ${(lv.ours / lv.peer).toFixed(2)}, max rel. coefficient difference ${lv.maxRelDiff.toExponential(1)}`);
      fs.unlinkSync(linCsv);

      const logCsv = path.join(dir, `log-${n}.csv`);
      writeCsv(logCsv, n, (x) => 10 / (1 + Math.exp(-0.9 * (x - 5))), 0.3, 54321);
      const b = await timedRun({
        title: `logistic ${n}`, data: { file: path.basename(logCsv), x: 'x', y: 'y' },
        models: [{ name: 'logistic', builtin: 'logistic3' }],
      }, `log-${n}`);
      say(`\n(b) logistic3, n = ${n}: total ${b.total.toFixed(2)} s  [${b.ok}]`);
      for (const [k, s] of b.phases) say(`    ${s.toFixed(3).padStart(8)} s  ${k}`);
      fs.unlinkSync(logCsv);
    }
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

main().catch((e) => {
  console.error(e);
  process.exitCode = 1;
});

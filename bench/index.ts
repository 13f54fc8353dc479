// `npm run bench`: every benchmark in one run, printed as tables with ratios against peers measured in the same run.
//   1. nonlinear solve only vs SciPy least_squares(method='lm') with analytic Jacobian (bench/solve-speed.ts)
//   2. live refit: spec → finished report, 3 growth models (bench/fit-path.ts)
//   3. compiled formula vs a hand-written JavaScript f + J (goal ≤ 1.5×)
//   4. CSV read, rows/s and heap growth (bench/csv-read.ts, subprocess)
//   5. NIST StRD nonlinear accuracy and time vs ml-levenberg-marquardt (bench/solver-nist.ts, subprocess)
//   6. full only: `fit` path at 10^4…10^6 rows (bench/large-fit.ts, subprocess)
// Speed is never asserted in tests; this prints pass / short against the goals of the speed issue.
// Run: npm run bench [-- --quick] [-- --json FILE]      (--quick: under 2 minutes)
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { spawnSync } from 'child_process';
import { runSolveBench, solveTable, scipyAvailable, scipyVersion, cpuMs, median, caseData, CASES } from './solve-speed';
import { runFitPathBench, fitPathTable } from './fit-path';
import { compileFormula } from '../src/engine/formula';

const args = process.argv.slice(2);
const quick = args.includes('--quick');
const ji = args.indexOf('--json');
const jsonFile = ji >= 0 ? args[ji + 1] : undefined;
const figures: Record<string, unknown> = {};

function section(title: string): void {
  console.log(`\n## ${title}`);
}

/** logistic4 f + J: the compiled kernel against the same derivatives written by hand (one pow, one log per point) */
function kernelVsHand(n: number, rounds: number): { compiled: number; hand: number; ratio: number; maxRelDiff: number } {
  const c = CASES[2];
  const { x } = caseData(c, n);
  const comp = compileFormula(c.formula, { variables: ['x'], params: c.params });
  const t = c.truth;
  const f1 = new Float64Array(n);
  const J1 = new Float64Array(4 * n);
  const f2 = new Float64Array(n);
  const J2 = new Float64Array(4 * n);
  const hand = (th: number[], out: Float64Array, J: Float64Array): void => {
    const [lo, up, ec, s] = th;
    const d = up - lo;
    for (let i = 0; i < n; i++) {
      const u = ec / x[i];
      const w = Math.pow(u, s);
      const g = 1 / (1 + w);
      out[i] = lo + d * g;
      const h = -d * g * g * w;
      J[i] = 1 - g;
      J[n + i] = g;
      J[2 * n + i] = (h * s) / ec;
      J[3 * n + i] = h * Math.log(u);
    }
  };
  const tc: number[] = [];
  const th: number[] = [];
  for (let r = 0; r < rounds + 1; r++) {
    let t0 = cpuMs();
    comp.evaluateWithJacobian(t, [x], f1, J1);
    if (r > 0) tc.push(cpuMs() - t0);
    t0 = cpuMs();
    hand(t, f2, J2);
    if (r > 0) th.push(cpuMs() - t0);
  }
  let maxRelDiff = 0;
  for (let k = 0; k < 4 * n; k++) maxRelDiff = Math.max(maxRelDiff, Math.abs(J1[k] - J2[k]) / Math.max(Math.abs(J2[k]), 1e-300));
  const compiled = median(tc);
  const handMs = median(th);
  return { compiled, hand: handMs, ratio: compiled / handMs, maxRelDiff };
}

function sub(file: string, subArgs: string[]): string {
  const r = spawnSync(process.execPath, ['--import', 'tsx', path.join(__dirname, file), ...subArgs], {
    encoding: 'utf8', maxBuffer: 1 << 26, env: { ...process.env },
  });
  return (r.stdout + (r.status === 0 ? '' : `\n(${file} exited ${r.status}: ${r.stderr.slice(0, 300)})`)).trimEnd();
}

async function main(): Promise<void> {
  const cpu = os.cpus();
  const havePy = scipyAvailable();
  const machine = `${cpu[0]?.model ?? 'unknown CPU'}, ${cpu.length} cores, load ${os.loadavg()[0].toFixed(1)}, Node ${process.version}, ${os.platform()} ${os.release()}`;
  console.log(`# Curvewright bench${quick ? ' (--quick)' : ''}\n${machine}\npeer: ${havePy ? scipyVersion() : 'skipped: python3 with scipy not found (apt-get install -y python3-scipy)'}`);
  console.log('times are CPU ms of this process (process.cpuUsage; SciPy: time.process_time), medians');
  figures.machine = machine;

  section('1. nonlinear solve only vs SciPy least_squares(method="lm"), analytic Jacobian (goal: ratio ≤ 1.0)');
  const solveRows = runSolveBench(quick ? [1e3, 1e5] : [1e3, 1e4, 1e5, 1e6], quick ? 3 : 5);
  for (const l of solveTable(solveRows, havePy)) console.log(l);
  figures.solve = solveRows;

  section('2. live refit, spec text → finished report, warm, 3 growth models (goal: ≤ 60 ms at 10^3, ≤ 250 ms at 10^4)');
  const fitRows = await runFitPathBench([1e3, 1e4], quick ? 3 : 5);
  for (const l of fitPathTable(fitRows)) console.log(l);
  figures.fitPath = fitRows;

  section('3. compiled formula vs hand-written JavaScript, logistic4 f + J (goal: ratio ≤ 1.5)');
  const kn = quick ? 2e5 : 1e6;
  const k = kernelVsHand(kn, quick ? 5 : 11);
  console.log(`n = ${kn}: compiled ${k.compiled.toFixed(1)} ms, hand-written ${k.hand.toFixed(1)} ms, ratio ${k.ratio.toFixed(2)} ${k.ratio <= 1.5 ? 'pass' : 'short'}; max rel. difference of J ${k.maxRelDiff.toExponential(1)}`);
  figures.kernel = { n: kn, ...k };

  section('4. CSV read (goal ≥ 2 M rows/s at 10^6 rows × 3 numbers)');
  const csv = sub('csv-read.ts', quick ? ['5', '300000'] : ['20', '1000000']);
  console.log(csv);
  figures.csvRead = csv;

  section('5. NIST StRD nonlinear, 54 cases, accuracy (min LRE) and time vs ml-levenberg-marquardt');
  const nist = sub('solver-nist.ts', ['1']);
  const lines = nist.split('\n');
  console.log(quick ? lines.slice(-7).join('\n') : nist);
  figures.nist = nist;
  console.log('SciPy rows for NIST: not run by this bench (see the README: left for later)');

  if (!quick) {
    section('6. `fit` path at 10^4, 10^5, 10^6 rows (bench/large-fit.ts)');
    const large = sub('large-fit.ts', []);
    console.log(large);
    figures.largeFit = large;
  }
  if (jsonFile) {
    fs.writeFileSync(jsonFile, JSON.stringify(figures, null, 1));
    console.log(`\nwrote ${jsonFile}`);
  }
}

main().catch((e) => {
  console.error(e);
  process.exitCode = 1;
});

// Benchmark: the live-refit path — spec text → finished report through runSpecFile (the function the CLI and the
// editor's worker call), warm (the same spec run `repeats` times in one process, median reported), for 3 growth models
// (logistic3, gompertz, richards) on seeded Richards-curve data at 10^3 and 10^4 points, in CPU ms (process.cpuUsage); with the time per phase
// (from the onProgress messages) and the profile-interval and cross-validation work counts from the report.
// Run: npx tsx bench/fit-path.ts [--quick] [--json FILE]
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile } from '../src/engine/run';
import { isErrorReport } from '../src/engine/report';
import { rng, median, cpuMs } from './solve-speed';

export interface FitPathRow {
  n: number;
  ms: number;
  phases: Record<string, number>;
  models: { name: string; status: string; sse: number; profileCi: string }[];
}

function writeGrowthCsv(file: string, n: number): void {
  const u = rng(777);
  const K = 1.7, r = 0.25, t0 = 20, nu = 0.3;
  let s = 'hours,od600\n';
  for (let i = 0; i < n; i++) {
    const t = (48 * i) / (n - 1);
    const f = K / Math.pow(1 + nu * Math.exp(-r * (t - t0)), 1 / nu);
    const z = Math.sqrt(-2 * Math.log(u())) * Math.cos(2 * Math.PI * u());
    s += `${t.toPrecision(8)},${(f + 0.02 * z).toPrecision(6)}\n`;
  }
  fs.writeFileSync(file, s);
}

export async function runFitPathBench(sizes: number[], repeats: number): Promise<FitPathRow[]> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-bench-fit-'));
  const rows: FitPathRow[] = [];
  try {
    for (const n of sizes) {
      writeGrowthCsv(path.join(dir, `growth-${n}.csv`), n);
      const spec = path.join(dir, `growth-${n}.fitspec.json`);
      fs.writeFileSync(spec, JSON.stringify({
        title: `growth ${n}`, data: { file: `growth-${n}.csv`, x: 'hours', y: 'od600' },
        models: [{ name: 'logistic', builtin: 'logistic3' }, { name: 'gompertz', builtin: 'gompertz' }, { name: 'richards', builtin: 'richards' }],
      }));
      const times: number[] = [];
      const phaseRuns: Record<string, number>[] = [];
      let last: Awaited<ReturnType<typeof runSpecFile>> | null = null;
      for (let k = 0; k < repeats + 1; k++) {
        const phases: Record<string, number> = {};
        let label = 'setup';
        const t0 = cpuMs();
        let t = t0;
        last = await runSpecFile(spec, {
          workspaceRoot: dir,
          onProgress: (msg) => {
            const now = cpuMs();
            const key = label.replace(/[0-9.]+/g, '#');
            phases[key] = (phases[key] ?? 0) + now - t;
            label = msg;
            t = now;
          },
        });
        const end = cpuMs();
        const key = label.replace(/[0-9.]+/g, '#');
        phases[key] = (phases[key] ?? 0) + end - t;
        if (k > 0) (times.push(end - t0), phaseRuns.push(phases)); // the first run warms up the JIT
      }
      const phases: Record<string, number> = {};
      for (const k of Object.keys(phaseRuns[0])) phases[k] = median(phaseRuns.map((p) => p[k] ?? 0));
      const models = last && !isErrorReport(last)
        ? last.models.map((m) => ({
          name: m.name, status: m.status, sse: m.stats?.sse ?? NaN,
          profileCi: Object.entries(m.params).map(([k, q]) => `${k} ${q.profileCi ? q.profileCi.map((v) => (v === null ? 'null' : v.toPrecision(6))).join('…') : '—'}`).join('; '),
        }))
        : [];
      rows.push({ n, ms: median(times), phases, models });
    }
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
  return rows;
}

export function fitPathTable(rows: FitPathRow[]): string[] {
  const goal: Record<number, number> = { 1000: 60, 10000: 250 };
  const out = [`${'n'.padStart(6)} | ${'warm refit ms'.padStart(13)} | ${'goal'.padStart(5)} | largest phases (ms)`];
  for (const r of rows) {
    const top = Object.entries(r.phases).sort((a, b) => b[1] - a[1]).slice(0, 4).map(([k, v]) => `${k.slice(0, 40)} ${v.toFixed(0)}`).join(', ');
    const g = goal[r.n];
    out.push(`${String(r.n).padStart(6)} | ${r.ms.toFixed(0).padStart(13)} | ${(g === undefined ? '' : r.ms <= g ? 'pass' : 'short').padStart(5)} | ${top}`);
  }
  return out;
}

if (require.main === module) {
  const args = process.argv.slice(2);
  const quick = args.includes('--quick');
  const ji = args.indexOf('--json');
  runFitPathBench([1e3, 1e4], quick ? 3 : 5).then((rows) => {
    console.log('live refit: spec → finished report, runSpecFile in process, 3 growth models, warm; median CPU ms');
    for (const l of fitPathTable(rows)) console.log(l);
    if (args.includes('--verbose')) for (const r of rows) for (const m of r.models) console.log(`  n=${r.n} ${m.name} ${m.status} sse=${m.sse} ${m.profileCi}`);
    if (ji >= 0 && args[ji + 1]) fs.writeFileSync(args[ji + 1], JSON.stringify(rows, null, 1));
  });
}

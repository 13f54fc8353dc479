// False-alarm rates of the robust-loss and variance-function problems on correctly specified models with normal
// noise and no outliers (the curves of test/sim/falseAlarms.ts), through the path the CLI takes (spec file + CSV →
// runSpec). Counts, per fit, each new code: robust-down-weighted (info), robust-no-convergence,
// robust-no-covariance and variance-no-convergence (warnings), and failed fits. Seeded; prints a Markdown table.
// Run: npx tsx test/sim/robustAlarms.ts [reps]   (docs/robust.md quotes its output)
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpec } from '../../src/engine';
import type { FitReport } from '../../src/engine';
import { mulberry32, normalSource } from '../../scripts/generate-demo';
import { CORRECT, designsFor, draw } from './falseAlarms';

const CODES = ['robust-down-weighted', 'robust-no-convergence', 'robust-no-covariance', 'variance-no-convergence'];
/** other cuts of the loss weight, to choose the threshold: rate of fits with some row below each */
const CUTS = (process.env.CUTS ?? '').split(',').filter(Boolean).map(Number);
const reps = Number(process.argv[2] ?? 20);
const seed = 20261202;

interface Row { what: string; n: number; fits: number; failed: number; fired: Record<string, number> }

async function main(): Promise<void> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-rsim-'));
  const rows: Row[] = [];
  const variants: { what: string; loss?: string; variance?: boolean; replicates: number }[] = [
    { what: 'huber', loss: 'huber', replicates: 1 },
    { what: 'soft_l1', loss: 'soft_l1', replicates: 1 },
    { what: 'cauchy', loss: 'cauchy', replicates: 1 },
    { what: 'power "estimate" (3 replicates)', variance: true, replicates: 3 },
  ];
  try {
    for (const v of variants) {
      for (const n of [8, 12, 24]) {
        const row: Row = { what: v.what, n, fits: 0, failed: 0, fired: {} };
        for (let si = 0; si < CORRECT.length; si++) {
          const s = CORRECT[si];
          for (const d of designsFor(n, [v.replicates], s.p)) {
            const z = normalSource(mulberry32((seed ^ (si * 7919 + n * 131 + d.replicates * 17)) >>> 0));
            for (let r = 0; r < reps; r++) {
              const { xs, ys } = draw(s, d, z);
              fs.writeFileSync(path.join(dir, 'data.csv'), 'x,y\n' + xs.map((x, i) => `${x.toPrecision(10)},${ys[i].toPrecision(10)}`).join('\n') + '\n');
              const spec = {
                data: { file: 'data.csv', x: 'x', y: 'y', ...(v.variance ? { sigma: { power: 'estimate' } } : {}) },
                models: [{ name: s.id, ...s.model, ...(v.loss ? { loss: v.loss } : {}) }],
              };
              const rep = await runSpec(JSON.stringify(spec), path.join(dir, 'sim.fitspec.json'), { workspaceRoot: dir });
              row.fits++;
              if (!('models' in rep)) {
                row.failed++;
                continue;
              }
              const m = (rep as FitReport).models[0];
              if (m.status === 'failed') row.failed++;
              for (const c of new Set(m.problems.map((p) => p.code))) if (CODES.includes(c)) row.fired[c] = (row.fired[c] ?? 0) + 1;
              if (m.robust) for (const cut of CUTS) if (m.robust.weights.min < cut) row.fired[`cut ${cut}`] = (row.fired[`cut ${cut}`] ?? 0) + 1;
            }
          }
        }
        rows.push(row);
        process.stderr.write(`${v.what} n=${n}: ${row.fits} fits\n`);
      }
    }
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
  const pct = (k: number | undefined, f: number) => ((100 * (k ?? 0)) / f).toFixed(1);
  console.log(`Seed ${seed}; ${reps} data sets per curve and design; the 7 curves of test/sim/falseAlarms.ts (correct models, normal noise, no outliers). Rates in % of fits.\n`);
  const cols = [...CODES, ...CUTS.map((c) => `cut ${c}`)];
  console.log(`| fit | n (distinct x) | fits | failed | ${cols.join(' | ')} |`);
  console.log(`|---|---:|---:|---:|${cols.map(() => '---:').join('|')}|`);
  for (const r of rows) console.log(`| ${r.what} | ${r.n} | ${r.fits} | ${pct(r.failed, r.fits)} | ${cols.map((c) => pct(r.fired[c], r.fits)).join(' | ')} |`);
}

void main();

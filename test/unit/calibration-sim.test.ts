// Seeded simulation of plates read off a correct 4PL through the spec and the function the CLI calls: the coverage of
// the back-calculated interval for the mean of 2 readings (σ²/m), and how often the acceptance checks fail on correct
// plates (control-failed at 80–120 %, standard-recovery at 80–120 %). The figures are quoted in docs/calibration.md.
// Work-count based (a fixed number of plates), so the same work on any machine.
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile } from '../../src/engine/run';
import { mulberry32, normalSource } from '../../scripts/generate-demo';
import { asReport } from './reports';

const PLATES = 120;
const truth = (x: number) => 0.06 + (2.35 - 0.06) / (1 + (12 / x) ** 1.2);
const SD = 0.02;
const STANDARDS = [0.2, 0.6, 1.85, 5.6, 16.7, 50, 150, 450];
const UNKNOWNS = [1, 3, 10, 30, 100];
const CONTROLS = [2, 10, 40];

describe(`calibration read-outs on ${PLATES} simulated plates of a correct 4PL (seeded)`, function () {
  this.timeout(600000);
  let covered = 0, intervals = 0, controlFails = 0, standardFails = 0, controlsRead = 0, plates = 0;
  const coveredOne = { hit: 0, n: 0 };
  const byLevel = new Map<number, number>();

  before(async () => {
    const normal = normalSource(mulberry32(1515));
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-calsim-'));
    const read = (x: number) => (truth(x) + SD * normal()).toFixed(5);
    for (let p = 0; p < PLATES; p++) {
      fs.writeFileSync(path.join(dir, 's.csv'), 'conc,y\n' + STANDARDS.flatMap((x) => [`${x},${read(x)}`, `${x},${read(x)}`]).join('\n') + '\n');
      const rows = ['id,y,nominal'];
      UNKNOWNS.forEach((x, k) => rows.push(`U${k},${read(x)},`, `U${k},${read(x)},`, `V${k},${read(x)},`));
      CONTROLS.forEach((x, k) => rows.push(`QC${k},${read(x)},${x}`, `QC${k},${read(x)},${x}`));
      fs.writeFileSync(path.join(dir, 'u.csv'), rows.join('\n') + '\n');
      fs.writeFileSync(path.join(dir, 'a.fitspec.json'), JSON.stringify({
        data: { file: 's.csv', x: 'conc', y: 'y' },
        models: [{ name: '4PL', builtin: 'logistic4', params: { slope: { min: 0 } } }],
        unknowns: { file: 'u.csv', id: 'id' },
        controls: { nominal: 'nominal', accept: [80, 120], acceptStandards: [80, 120] },
      }));
      const r = asReport(await runSpecFile(path.join(dir, 'a.fitspec.json'), { workspaceRoot: dir }));
      if (r.models[0].status !== 'converged') continue;
      plates++;
      for (const u of r.unknowns!.results) {
        const x = UNKNOWNS[Number(u.id.slice(1))];
        const ok = u.interval !== null && (u.interval[0] ?? -Infinity) <= x && x <= (u.interval[1] ?? Infinity);
        if (u.id.startsWith('U')) {
          intervals++;
          if (ok) covered++;
        } else {
          coveredOne.n++;
          if (ok) coveredOne.hit++;
        }
      }
      controlsRead += r.controls!.results.length;
      if (r.problems.some((q) => q.code === 'control-failed')) controlFails++;
      if (r.problems.some((q) => q.code === 'standard-recovery')) standardFails++;
      for (const lv of r.controls!.standards) if (lv.pass === false) byLevel.set(lv.x, (byLevel.get(lv.x) ?? 0) + 1);
    }
    // the figures docs/calibration.md quotes
    console.log(`      plates ${plates}; coverage m=2 ${covered}/${intervals}, m=1 ${coveredOne.hit}/${coveredOne.n}; control-failed on ${controlFails} plates; standard-recovery on ${standardFails} plates (by level: ${[...byLevel].map(([x, k]) => `${x}: ${k}`).join(', ')})`);
  });

  it('every plate fits', () => assert.equal(plates, PLATES));

  it('the interval for the mean of 2 readings covers the true x about 95 % of the time (and so does the one-reading interval)', () => {
    // binomial sd at 600 intervals ≈ 0.9 %: a ±3 % band; using σ² instead of σ²/2 would give about 99 %
    const rate = covered / intervals;
    assert.ok(rate > 0.92 && rate < 0.98, `coverage ${rate}`);
    const rate1 = coveredOne.hit / coveredOne.n;
    assert.ok(rate1 > 0.92 && rate1 < 0.98, `coverage of one reading ${rate1}`);
  });

  it('correct plates: controls pass at 80–120 %; standards fail only at the flat ends of the curve, the steep ones (1.85–50) almost never', () => {
    assert.equal(controlsRead, plates * CONTROLS.length);
    assert.ok(controlFails <= 0.05 * plates, `control-failed on ${controlFails} of ${plates}`);
    const steep = [1.85, 5.6, 16.7, 50].reduce((a, x) => a + (byLevel.get(x) ?? 0), 0);
    assert.ok(steep <= 0.02 * 4 * plates, `steep standards failed ${steep} times in ${4 * plates}`);
    // the warning is about the design: the flat ends carry it (quoted in docs/calibration.md)
    assert.ok(standardFails > 0 && standardFails < plates, String(standardFails));
  });
});

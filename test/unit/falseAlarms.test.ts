// Quick seeded false-alarm check (the full table is bench/false-alarms.ts, published in docs/problems.md): correct
// models through the CLI's run path; every calibrated warning must fire on at most 2 % of the fits. Work-count based
// (a fixed number of data sets), so it takes the same work on any machine.
import * as assert from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { CORRECT, WRONG, FACT_CODES, simulate, pooledRates, fitOnce, type Cell } from '../sim/falseAlarms';

describe('false alarms on correct models (seeded simulation)', function () {
  this.timeout(240000);
  let cells: Cell[] = [];

  before(async () => {
    cells = await simulate({ scenarios: CORRECT, ns: [5, 6, 8, 12, 24, 100], replicates: [1, 2], reps: 10, repsLarge: 2, seed: 1402 });
  });

  it('fits every scenario and design it claims to', () => {
    const fits = cells.reduce((a, c) => a + c.fits, 0);
    assert.ok(fits >= 700, `only ${fits} fits`);
    // the tally works: a design fact does fire (5 points for a 2-parameter model is more than one third per row)
    const line5 = cells.find((c) => c.scenario === 'line' && c.nominalN === 5 && c.design.replicates === 1)!;
    assert.strictEqual(line5.alarms['overfit-params'], line5.fits);
  });

  it('no calibrated warning fires on more than 2 % of correct fits', () => {
    const rates = pooledRates(cells);
    const over = [...rates].filter(([code, r]) => !FACT_CODES.has(code) && r.fired > 0.02 * r.fits).map(([code, r]) => `${code}: ${r.fired}/${r.fits}`);
    assert.deepStrictEqual(over, []);
  });

  it('no correct model fails to converge', () => {
    const failed = cells.filter((c) => c.failed > 0 && c.design.levels >= 12).map((c) => `${c.scenario} n=${c.nominalN}×${c.design.replicates}: ${c.failed}`);
    assert.deepStrictEqual(failed, []);
  });

  it('a 6-point calibration line with R² 0.999 raises no warning', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-line6-'));
    try {
      const line = CORRECT.find((s) => s.id === 'line')!;
      // x 0…10 in 6 steps, y = 0.05 + 0.2x with fixed deviations of ±0.02 (R² ≈ 0.9996)
      const xs = [0, 2, 4, 6, 8, 10];
      const dev = [0.012, -0.021, 0.018, 0.004, -0.025, 0.015];
      const report = await fitOnce(line, xs, xs.map((x, i) => 0.05 + 0.2 * x + dev[i]), dir);
      const m = report.models[0];
      assert.ok(m.stats.r2! > 0.999, `R² ${m.stats.r2}`);
      const alarms = [...report.problems, ...m.problems].filter((p) => p.severity !== 'info').map((p) => p.code);
      assert.deepStrictEqual(alarms, []);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it('a wrong shape is still caught at n = 24 (power of the runs test)', async () => {
    const wrong = await simulate({ scenarios: WRONG.filter((s) => s.id.startsWith('line')), ns: [24], replicates: [1, 2], reps: 5, seed: 1403 });
    const r = pooledRates(wrong).get('systematic-residuals');
    assert.ok(r && r.fired >= 0.8 * r.fits, `systematic-residuals fired on ${r?.fired ?? 0} of ${wrong.reduce((a, c) => a + c.fits, 0)} wrong lines`);
  });
});

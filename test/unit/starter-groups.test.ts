// `new` on a long-format CSV: an id column (text, or whole numbers) with repeated x is proposed as data.groupBy and
// never taken as x or y; the written starter spec runs and fits one curve per group. Seeded invented data.
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { suggestSpec, starterSpecText } from '../../src/engine/starter';
import { runSpecFile } from '../../src/engine/run';
import { isErrorReport, type FitReport } from '../../src/engine/report';
import { mulberry32, normalSource } from '../../scripts/generate-demo';

const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-new-groups-'));
function write(name: string, header: string, row: (g: number, h: number, y: number) => string): string {
  const z = normalSource(mulberry32(8));
  const lines = [header];
  for (let g = 0; g < 4; g++) for (let h = 0; h <= 40; h += 4) lines.push(row(g, h, (1.8 + 0.1 * g) / (1 + Math.exp(-0.3 * (h - 18))) + 0.02 * z()));
  fs.writeFileSync(path.join(dir, name), lines.join('\n') + '\n');
  return path.join(dir, name);
}

describe('new: long-format CSV proposes data.groupBy', () => {
  it('a text id column', async () => {
    const f = write('text.csv', 'hours,od,flask', (g, h, y) => `${h},${y.toFixed(4)},F${g + 1}`);
    const s = await suggestSpec(f);
    assert.deepEqual([s.x, s.y, s.groupBy], ['hours', 'od', 'flask']);
  });

  it('a whole-number id column written first and sorted (monotone in file order) is not taken as x', async () => {
    const f = write('int.csv', 'reactor,hours,od', (g, h, y) => `${g + 1},${h},${y.toFixed(4)}`);
    const s = await suggestSpec(f);
    assert.deepEqual([s.x, s.y, s.groupBy], ['hours', 'od', 'reactor']);
    // the starter spec runs: one fit per group
    const spec = path.join(dir, 'int.fitspec.json');
    const models = s.candidates.filter(c => c.recommended).map(c => c.model);
    fs.writeFileSync(spec, starterSpecText({ csvPath: f, specPath: spec, x: s.x, y: s.y, models, groupBy: s.groupBy }));
    const r = await runSpecFile(spec, { workspaceRoot: dir });
    assert.ok(!isErrorReport(r), isErrorReport(r) ? r.error.message : '');
    assert.equal((r as FitReport).groups!.length, 4);
  });

  it('no group without repeated x, and not for a replicate column', async () => {
    const f1 = write('wide.csv', 'hours,od,flask', (g, h, y) => `${h + g / 10},${y.toFixed(4)},F${g + 1}`);
    assert.equal((await suggestSpec(f1)).groupBy, undefined);
    const f2 = write('rep.csv', 'hours,od,replicate', (g, h, y) => `${h},${y.toFixed(4)},${g + 1}`);
    assert.equal((await suggestSpec(f2)).groupBy, undefined);
    const f3 = write('plain.csv', 'hours,od', (_g, h, y) => `${h},${y.toFixed(4)}`);
    assert.equal((await suggestSpec(f3)).groupBy, undefined);
  });
});

// The CLI summary (src/cli/format.ts, `curvewright fit`): natural order of spec names, every parameter (wrapped),
// the F-tests, inverse predictions by their trade names, and the info notes counted (listed with --verbose).
import * as assert from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { main } from '../../src/cli/main';
import { naturalCompare } from '../../src/cli/format';
import { saturatingCsv } from './seededData';

function runCli(args: string[], cwd: string): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  return main(args, { cwd, out: (t) => (out += t.endsWith('\n') ? t : t + '\n'), err: (t) => (err += t.endsWith('\n') ? t : t + '\n') }).then((code) => ({ code, out, err }));
}

describe('CLI summary', function () {
  this.timeout(60000);
  let dir = '';
  before(() => {
    dir = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'cw-summary-')));
    fs.writeFileSync(path.join(dir, 'rate.csv'), saturatingCsv(3));
    const spec = {
      data: { file: 'rate.csv', x: 'conc', y: 'rate' },
      models: [
        { name: 'mm', builtin: 'michaelis_menten' },
        { name: 'hill', builtin: 'hill' },
        { name: 'p6', polynomial: 6 },
      ],
      solveFor: [2],
    };
    for (const n of ['chick1', 'chick10', 'chick2']) fs.writeFileSync(path.join(dir, `${n}.fitspec.json`), JSON.stringify(spec));
  });
  after(() => fs.rmSync(dir, { recursive: true, force: true }));

  it('naturalCompare puts chick2 before chick10 and keeps text order otherwise', () => {
    assert.deepStrictEqual(['chick10', 'chick2', 'chick1', 'b', 'a10b', 'a9b', 'a010'].sort(naturalCompare), ['a9b', 'a10b', 'a010', 'b', 'chick1', 'chick2', 'chick10']);
  });

  it('prints specs in natural order, every parameter, the F-tests, back-calculated x and an info count', async () => {
    const r = await runCli(['fit', 'chick1.fitspec.json', 'chick10.fitspec.json', 'chick2.fitspec.json', '--jobs', '1'], dir);
    assert.strictEqual(r.code, 0, r.err);
    const heads = r.out.split('\n').filter((l) => /^chick\d+\.fitspec\.json/.test(l));
    assert.deepStrictEqual(heads, ['chick1.fitspec.json', 'chick2.fitspec.json', 'chick10.fitspec.json']);
    const first = r.out.split('chick2.fitspec.json')[0];
    for (const c of ['c0=', 'c3=', 'c4=', 'c5=', 'c6=']) assert.ok(first.includes(c), `parameter ${c} missing:\n${first}`);
    assert.ok(!first.includes('… (+'), 'no parameter is cut off');
    assert.match(first, /F-test mm vs hill: F = [\d.e-]+ on 1 and \d+ df, p = /);
    assert.match(first, /inverse prediction \(\w+\) at y = 2: back-calculated x = /);
    assert.match(first, /\d+ info notes? \(--verbose shows (it|them)\)/);
    assert.ok(!/\binfo\b.*\[influential-points\]/.test(first), 'info notes are not listed without --verbose');
  });

  it('--verbose lists the info notes', async () => {
    const r = await runCli(['fit', 'chick1.fitspec.json', '--verbose', '--jobs', '1'], dir);
    assert.strictEqual(r.code, 0, r.err);
    assert.match(r.out, /info.*\[(influential-points|param-correlation|non-normal-residuals)\]/);
    assert.ok(!/--verbose shows/.test(r.out));
  });

  it('--help of fit names --verbose', async () => {
    const r = await runCli(['fit', '--help'], dir);
    assert.match(r.out, /--verbose/);
  });
});

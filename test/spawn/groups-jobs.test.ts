// One grouped spec (data.groupBy, a separate model and a joint model with shared parameters) through the built CLI
// with --jobs 1, 2 and 3: the groups' separate fits are spread over the worker pool (src/cli/pool.ts) and the printed
// JSON and the results file must be byte-identical whatever the number of workers. Seeded invented data.
import { strict as assert } from 'assert';
import { spawnSync } from 'child_process';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { groupChunks } from '../../src/cli/pool';
import { mulberry32, normalSource } from '../../scripts/generate-demo';

const ROOT = path.resolve(__dirname, '..', '..');
/** a private build of src/cli.ts (parallel rebuilds of dist/ by others cannot change it) */
const CLI = path.join(ROOT, 'out', 'cli-groups-test', 'cli.js');

function csv(G: number): string {
  const z = normalSource(mulberry32(3));
  const u = mulberry32(4);
  const lines = ['hours,od,culture'];
  const K = Array.from({ length: G }, () => 1.6 + 0.6 * u());
  // long format, rows interleaved across cultures as a plate reader writes them
  for (let h = 0; h <= 44; h += 4) for (let g = 0; g < G; g++) lines.push(`${h},${(K[g] / (1 + Math.exp(-0.28 * (h - 18))) + 0.02 * z()).toFixed(5)},C${g + 1}`);
  return lines.join('\n') + '\n';
}

describe('groups on the worker pool: --jobs 1, 2, 3 give byte-identical results', function () {
  this.timeout(300000);
  let dir = '';
  before(() => {
    // eslint-disable-next-line @typescript-eslint/no-require-imports
    const esbuild = require('esbuild') as typeof import('esbuild');
    esbuild.buildSync({
      entryPoints: [path.join(ROOT, 'src', 'cli.ts')], outfile: CLI, bundle: true, platform: 'node', format: 'cjs',
      target: 'node20', mainFields: ['module', 'main'], logLevel: 'error',
    });
    dir = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'cw-jobs-')));
    fs.writeFileSync(path.join(dir, 'cultures.csv'), csv(20));
    fs.writeFileSync(
      path.join(dir, 'cultures.fitspec.json'),
      JSON.stringify({
        data: { file: 'cultures.csv', x: 'hours', y: 'od', groupBy: 'culture' },
        models: [{ name: 'logistic', builtin: 'logistic3' }, { name: 'gompertz', builtin: 'gompertz' }, { name: 'common-rate', builtin: 'logistic3', shared: ['r', 'x0'] }],
        derived: { doubling: 'log(2)/r' },
        output: 'cultures.fitresult.json',
      }, null, 2),
    );
  });

  it('chunks consecutive groups, every group once, in order', () => {
    for (const [G, jobs] of [[1, 2], [7, 2], [96, 2], [96, 3], [5000, 2]]) {
      const c = groupChunks(G, jobs);
      assert.deepEqual(c.flat(), Array.from({ length: G }, (_, g) => g));
      assert.ok(c.length <= 4 * jobs + 1 && c.length >= Math.min(G, 4 * jobs) - 1, `${G} groups, ${jobs} jobs: ${c.length} chunks`);
    }
  });

  it('fit --json and the results file', () => {
    const outs: string[] = [];
    const files: string[] = [];
    for (const jobs of ['1', '2', '3']) {
      const r = spawnSync(process.execPath, [CLI, 'fit', 'cultures.fitspec.json', '--json', '--jobs', jobs], { cwd: dir, encoding: 'utf8', timeout: 240000, maxBuffer: 1 << 28 });
      assert.equal(r.status, 0, r.stderr);
      outs.push(r.stdout);
      files.push(fs.readFileSync(path.join(dir, 'cultures.fitresult.json'), 'utf8'));
      fs.rmSync(path.join(dir, 'cultures.fitresult.json'));
    }
    const report = JSON.parse(outs[0]);
    assert.equal(report.groups.length, 20);
    assert.equal(report.models.filter((m: { group: string | null }) => m.group === null).length, 1);
    assert.equal(outs[1], outs[0], '--jobs 2 differs from --jobs 1');
    assert.equal(outs[2], outs[0], '--jobs 3 differs from --jobs 1');
    assert.equal(files[1], files[0]);
    assert.equal(files[2], files[0]);
  });
});

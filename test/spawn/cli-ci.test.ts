// The command line in CI: check --json verdicts (placed at the spec's line and column), GitHub workflow annotations
// and their escaping, deterministic shards, and merge of the shards' output into one verdict and exit code.
// Behaviour tests on our own seeded data (no reference values are claimed here).
import { strict as assert } from 'assert';
import { spawnSync } from 'child_process';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { escapeData, escapeProperty, githubAnnotations } from '../../src/cli/annotate';
import { parseShard, shardSpecs } from '../../src/cli/shard';
import type { CheckVerdict, FitReport } from '../../src/engine/report';
import { locatePath } from '../../src/engine/spec/locate';
import { saturatingCsv } from '../unit/seededData';

const ROOT = path.resolve(__dirname, '..', '..');
/** A private build of src/cli.ts, so parallel rebuilds of dist/ cannot change the bundle under test. */
const CLI = path.join(ROOT, 'out', 'cli-ci-test', 'cli.js');

function cw(args: string[], cwd: string): { code: number; out: string; err: string } {
  const r = spawnSync(process.execPath, [CLI, ...args], { cwd, encoding: 'utf8', timeout: 120000, env: { ...process.env, CURVEWRIGHT_DEBUG: '' } });
  if (r.error) throw r.error;
  return { code: r.status ?? -1, out: r.stdout, err: r.stderr };
}

function tmpDir(): string {
  return fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'cw-ci-')));
}

const lines = (text: string) => text.split('\n').filter(l => l.trim()).map(l => JSON.parse(l) as FitReport & { check: CheckVerdict });

// a spec whose expect fails (Vmax is near 5 in the seeded data) and one that passes; formatted over several lines
const specText = (vmax: number, out = '') => `{
  "data": { "file": "../rate.csv", "x": "conc", "y": "rate" },
  "models": [{ "name": "mm", "builtin": "michaelis_menten" }],${out}
  "expect": {
    "mm": { "Vmax": { "value": ${vmax}, "tol": 0.3 } }
  }
}
`;

describe('cli in CI: check verdicts, annotations, shards, merge', function () {
  this.timeout(300000);
  let ws: string;
  const specs: string[] = [];

  before(function () {
    // eslint-disable-next-line @typescript-eslint/no-require-imports
    const esbuild = require('esbuild') as typeof import('esbuild');
    esbuild.buildSync({
      entryPoints: [path.join(ROOT, 'src', 'cli.ts')], outfile: CLI, bundle: true, platform: 'node', format: 'cjs',
      target: 'node20', mainFields: ['module', 'main'], logLevel: 'error',
    });
    ws = tmpDir();
    fs.writeFileSync(path.join(ws, 'rate.csv'), saturatingCsv(16));
    // seven specs in two folders; b/bad fails its expect
    for (const [dir, name, vmax] of [['a', 'one', 5], ['a', 'two', 5], ['a', 'three', 5], ['b', 'bad', 9], ['b', 'four', 5], ['b', 'five', 5], ['b', 'six', 5]] as const) {
      fs.mkdirSync(path.join(ws, dir), { recursive: true });
      fs.writeFileSync(path.join(ws, dir, `${name}.fitspec.json`), specText(vmax));
      specs.push(`${dir}/${name}.fitspec.json`);
    }
  });

  it('check --json: a verdict per spec, with the spec path from the current folder and placed reasons', () => {
    const r = cw(['check', 'a/one.fitspec.json', 'b/bad.fitspec.json', '--json'], ws);
    assert.equal(r.code, 1, r.err);
    const [one, bad] = lines(r.out);
    assert.deepEqual(one.check, { ok: true, spec: 'a/one.fitspec.json', strict: false, reasons: [], warnings: one.check.warnings });
    assert.equal(one.spec, 'one.fitspec.json', 'the report itself is unchanged: results do not depend on the folder');
    assert.equal(bad.check.ok, false);
    assert.equal(bad.check.spec, 'b/bad.fitspec.json');
    const [reason] = bad.check.reasons;
    const at = locatePath(specText(9), ['expect', 'mm', 'Vmax'])!;
    assert.deepEqual(
      { code: reason.code, file: reason.file, line: reason.line, column: reason.column, path: reason.path },
      { code: 'expect-not-met', file: 'b/bad.fitspec.json', line: at.line, column: at.column, path: ['expect', 'mm', 'Vmax'] },
    );
    assert.equal(at.line, 5);
    assert.match(reason.message, /expect not met: mm\.Vmax = 9 ± 0\.3: got 4\.9/);
    assert.match(r.err, /FAIL b\/bad\.fitspec\.json/, 'the summary goes to stderr under --json');
  });

  it('a stale results file and a spec that cannot run are reasons too (exit 1 and 2)', () => {
    const sub = path.join(ws, 'c');
    fs.mkdirSync(sub);
    fs.writeFileSync(path.join(sub, 'stale.fitspec.json'), specText(5, '\n  "output": "stale.fitresult.json",'));
    fs.writeFileSync(path.join(sub, 'broken.fitspec.json'), specText(5).replace('"y": "rate"', '"y": "rat"'));
    assert.equal(cw(['fit', 'c/stale.fitspec.json'], ws).code, 0);
    fs.appendFileSync(path.join(sub, 'stale.fitspec.json'), '// edited\n');
    const r = cw(['check', 'c/stale.fitspec.json', 'c/broken.fitspec.json', '--json'], ws);
    assert.equal(r.code, 2);
    const [stale, broken] = lines(r.out);
    assert.deepEqual(stale.check.reasons.map(x => [x.code, x.line]), [['stale-results', 4]]);
    assert.equal(broken.check.ok, false);
    assert.equal(broken.check.reasons[0].file, 'c/broken.fitspec.json');
    assert.equal(broken.check.reasons[0].line, 2);
    assert.match(broken.check.reasons[0].message, /did you mean 'rate'/);
    fs.rmSync(sub, { recursive: true });
  });

  it('--format github: one ::error per failure at the spec line, escaped as workflow commands', () => {
    const r = cw(['check', 'b/bad.fitspec.json', '--format', 'github'], ws);
    assert.equal(r.code, 1);
    const errors = r.out.split('\n').filter(l => l.startsWith('::error '));
    assert.deepEqual(errors, ['::error file=b/bad.fitspec.json,line=5,col=21,title=curvewright expect-not-met::' + escapeData(errors[0].split('::').slice(2).join('::'))]);
    assert.match(errors[0], /::expect not met: mm\.Vmax = 9 ± 0\.3: got 4\.9\d+$/);
    const bad = cw(['check', 'b/bad.fitspec.json', '--format', 'gitlab'], ws);
    assert.equal(bad.code, 2);
    assert.match(bad.err, /'--format' is 'text' \(default\) or 'github'/);
  });

  it('workflow-command escaping: % CR LF in the message; also : and , in properties', () => {
    assert.equal(escapeData('100% done\r\nnext'), '100%25 done%0D%0Anext');
    assert.equal(escapeProperty('dir,1/a:b%.json'), 'dir%2C1/a%3Ab%25.json');
    assert.deepEqual(githubAnnotations([{ code: 'bad-cell', severity: 'warning', message: 'a: b,\nc', file: 'f,1.json' }]), ['::warning file=f%2C1.json,title=curvewright bad-cell::a: b,%0Ac']);
    assert.deepEqual(githubAnnotations([{ code: 'spec-type', severity: 'error', message: 'm', file: 's.json', line: 3, column: 7 }]), ['::error file=s.json,line=3,col=7,title=curvewright spec-type::m']);
  });

  it('--shard K/N: every spec in exactly one shard, sizes within one, the same for any order of arguments', () => {
    const shuffled = [...specs].reverse();
    for (let n = 1; n <= 8; n++) {
      const parts = Array.from({ length: n }, (_, k) => shardSpecs(k % 2 ? shuffled : [...specs, specs[0]], ws, { index: k + 1, count: n }));
      const all = parts.flat().sort();
      assert.deepEqual(all, [...specs].sort(), `n=${n}`);
      const sizes = parts.map(p => p.length);
      assert.ok(Math.max(...sizes) - Math.min(...sizes) <= 1, `n=${n} sizes ${sizes}`);
    }
    // the documented rule: sorted paths, spec i in shard (i mod N) + 1
    assert.deepEqual(shardSpecs(specs, ws, { index: 2, count: 3 }), ['a/three.fitspec.json', 'b/five.fitspec.json'] /* sorted: a/one a/three a/two b/bad b/five b/four b/six */);
    assert.deepEqual(parseShard('2/4'), { index: 2, count: 4 });
    for (const bad of ['0/2', '3/2', '1/0', 'x', '1-2']) assert.throws(() => parseShard(bad), /needs K\/N with 1 ≤ K ≤ N/, bad);
  });

  it('shards checked apart and merged give the verdicts and exit code of one check', () => {
    const whole = cw(['check', 'a', 'b', '--json'], ws);
    assert.equal(whole.code, 1);
    const files: string[] = [];
    for (let k = 1; k <= 3; k++) {
      const r = cw(['check', 'b', 'a', '--json', '--shard', `${k}/3`], ws);
      assert.equal(r.code, lines(r.out).some(l => !l.check.ok) ? 1 : 0, r.err);
      assert.ok(lines(r.out).every(l => l.check.shard === `${k}/3`));
      files.push(`shard-${k}.jsonl`);
      fs.writeFileSync(path.join(ws, files[k - 1]), r.out);
    }
    const merged = cw(['merge', ...files, '--json'], ws);
    assert.equal(merged.code, 1, merged.err);
    const strip = (ls: ReturnType<typeof lines>) => ls.map(l => ({ ...l, check: { ...l.check, shard: undefined } })).map(l => JSON.stringify(l));
    const wholeSorted = lines(whole.out).sort((x, y) => (x.check.spec < y.check.spec ? -1 : 1));
    assert.deepEqual(strip(lines(merged.out)), strip(wholeSorted));
    assert.match(merged.err, /merge: 6 passed, 1 failed \(7 specs from 3 files\)/);
    const gh = cw(['merge', ...files, '--format', 'github'], ws);
    assert.equal(gh.code, 1);
    assert.match(gh.out, /^FAIL b\/bad\.fitspec\.json\n {4}b\/bad\.fitspec\.json:5:21: expect not met/m);
    assert.match(gh.out, /^::error file=b\/bad\.fitspec\.json,line=5,col=21,title=curvewright expect-not-met::/m);
    // passing shards alone pass
    const passing = files.filter(f => !fs.readFileSync(path.join(ws, f), 'utf8').includes('"ok":false'));
    assert.ok(passing.length >= 1);
    assert.equal(cw(['merge', ...passing], ws).code, 0);
  });

  it('merge refuses overlapping shards and lines that are not check output (exit 2, naming file:line)', () => {
    const one = cw(['check', 'a/one.fitspec.json', '--json'], ws).out;
    fs.writeFileSync(path.join(ws, 'x1.jsonl'), one);
    fs.writeFileSync(path.join(ws, 'x2.jsonl'), one);
    const dup = cw(['merge', 'x1.jsonl', 'x2.jsonl'], ws);
    assert.equal(dup.code, 2);
    assert.match(dup.err, /spec a\/one\.fitspec\.json is in both x1\.jsonl:1 and x2\.jsonl:1 — the shards overlap/);
    const fit = cw(['fit', 'a/one.fitspec.json', '--json'], ws).out;
    fs.writeFileSync(path.join(ws, 'fit.jsonl'), '\n' + fit);
    const notCheck = cw(['merge', 'fit.jsonl'], ws);
    assert.equal(notCheck.code, 2);
    assert.match(notCheck.err, /fit\.jsonl:2 is not a line of `curvewright check --json` output/);
    fs.writeFileSync(path.join(ws, 'text.jsonl'), 'PASS a/one.fitspec.json\n');
    assert.match(cw(['merge', 'text.jsonl'], ws).err, /text\.jsonl:1 is not JSON/);
    assert.match(cw(['merge', 'none.jsonl'], ws).err, /cannot read none\.jsonl: no such file/);
  });

  it('an empty shard passes and says so', () => {
    const r = cw(['check', 'a/one.fitspec.json', '--shard', '2/2'], ws);
    assert.equal(r.code, 0);
    assert.match(r.out, /check: shard 2\/2 has no spec \(1 spec in all, split over 2 shards\)/);
  });
});

describe('cli diff: what changed between two results files, in words', function () {
  this.timeout(120000);
  let dir: string;
  before(() => {
    dir = tmpDir();
    fs.writeFileSync(path.join(dir, 'rate.csv'), saturatingCsv(16));
    fs.writeFileSync(path.join(dir, 's.fitspec.json'), JSON.stringify({
      data: { file: 'rate.csv', x: 'conc', y: 'rate' },
      models: [{ name: 'mm', builtin: 'michaelis_menten' }, { name: 'line', builtin: 'linear' }],
      output: 'out/s.fitresult.json',
      expect: { mm: { Vmax: { value: 5, tol: 0.3 } } },
    }));
    assert.equal(cw(['fit', 's.fitspec.json'], dir).code, 0);
    fs.copyFileSync(path.join(dir, 'out', 's.fitresult.json'), path.join(dir, 'old.json'));
  });

  it('the same file: exit 0 and says so', () => {
    const r = cw(['diff', 'old.json', 'out/s.fitresult.json'], dir);
    assert.equal(r.code, 0, r.err);
    assert.match(r.out, /^no change between old\.json and out\/s\.fitresult\.json/);
  });

  it('one data point moved: each parameter shift in old standard errors, statistics, data changed (exit 1)', () => {
    const csv = fs.readFileSync(path.join(dir, 'rate.csv'), 'utf8').split('\n');
    const [x] = csv[10].split(',');
    csv[10] = `${x},9`;
    fs.writeFileSync(path.join(dir, 'rate.csv'), csv.join('\n'));
    assert.equal(cw(['fit', 's.fitspec.json'], dir).code, 0);
    const r = cw(['diff', 'old.json', 'out/s.fitresult.json'], dir);
    assert.equal(r.code, 1, r.err);
    const a = JSON.parse(fs.readFileSync(path.join(dir, 'old.json'), 'utf8')) as FitReport;
    const b = JSON.parse(fs.readFileSync(path.join(dir, 'out', 's.fitresult.json'), 'utf8')) as FitReport;
    const p = a.models[0].params.Vmax, q = b.models[0].params.Vmax;
    const shift = Math.abs(q.value - p.value) / p.se!;
    assert.ok(shift > 0.5, `the moved point shifts Vmax by ${shift} SE`);
    assert.match(r.out, /^ {2}the data changed$/m);
    const line = r.out.split('\n').find(l => l.includes('Vmax moved from'))!;
    assert.ok(line, r.out);
    const m = /Vmax moved from ([\d.]+) ± ([\d.]+) to ([\d.]+) ± ([\d.]+) \(([\d.]+) SE\)/.exec(line)!;
    assert.ok(m, line);
    assert.ok(Math.abs(Number(m[1]) - p.value) / p.value < 1e-3 && Math.abs(Number(m[3]) - q.value) / q.value < 1e-3, line);
    assert.ok(Math.abs(Number(m[5]) - shift) / shift < 0.05, `${line} vs ${shift}`);
    assert.match(r.out, /AICc -?[\d.]+ → -?[\d.]+; R² [\d.]+ → [\d.]+; σ [\d.]+ → [\d.]+/);
  });

  it('models added and removed, best model and expectations changed', () => {
    const a = JSON.parse(fs.readFileSync(path.join(dir, 'old.json'), 'utf8')) as FitReport;
    const b: FitReport = JSON.parse(JSON.stringify(a));
    b.models[1].name = 'quadratic';
    b.best = 'quadratic';
    b.expect[0].ok = false;
    b.models[0].status = 'failed';
    b.models[0].termination = 'iteration-limit';
    fs.writeFileSync(path.join(dir, 'b.json'), JSON.stringify(b));
    const r = cw(['diff', 'old.json', 'b.json'], dir);
    assert.equal(r.code, 1);
    for (const w of [/best model: mm → quadratic/, /model quadratic added \(converged\)/, /model line removed/, /status converged \(\w[\w-]*\) → failed \(iteration-limit\)/, /expect mm\.Vmax no longer met/])
      assert.match(r.out, w);
  });

  it('bad input: exit 2 naming the file', () => {
    fs.writeFileSync(path.join(dir, 'x.json'), '{"a": 1}');
    const r = cw(['diff', 'old.json', 'x.json'], dir);
    assert.equal(r.code, 2);
    assert.match(r.err, /x\.json is not a Curvewright results file/);
    assert.equal(cw(['diff', 'old.json'], dir).code, 2);
    assert.match(cw(['diff', 'old.json', 'missing.json'], dir).err, /cannot read missing\.json: no such file/);
  });
});

describe('cli new: data formats by extension', function () {
  this.timeout(120000);
  it('.tsv (tabs) and .txt (semicolons, decimal commas): the starter spec fits every row', () => {
    const dir = tmpDir();
    const rows = saturatingCsv(16).trim().split('\n');
    fs.writeFileSync(path.join(dir, 'rate.tsv'), rows.map(r => r.replace(',', '\t')).join('\n') + '\n');
    fs.writeFileSync(path.join(dir, 'rate.txt'), rows.map(r => r.replace(',', ';').replace(/(\d)\.(\d)/g, '$1,$2')).join('\n') + '\n');
    for (const [file, decimal] of [['rate.tsv', false], ['rate.txt', true]] as const) {
      const spec = file.replace(/\.\w+$/, `-${file.slice(-3)}.fitspec.json`);
      const made = cw(['new', file, '-o', spec], dir);
      assert.equal(made.code, 0, made.err);
      const text = fs.readFileSync(path.join(dir, spec), 'utf8');
      assert.equal(/"decimal": ","/.test(text), decimal, text);
      const fit = cw(['fit', spec, '--json'], dir);
      assert.equal(fit.code, 0, fit.err);
      const r = JSON.parse(fit.out) as FitReport;
      assert.equal(r.data.used, 24, `${file}: ${JSON.stringify(r.problems.slice(0, 2))}`);
      assert.equal(r.models.find(m => m.name === 'michaelis_menten')?.status, 'converged', file);
    }
  });
});

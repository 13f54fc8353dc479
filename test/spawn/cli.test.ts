// The command line as users run it: a built bundle spawned as a child process. Exit codes, the words of every
// bad-input message, fit/check/report/new behaviour, --json order, check's stale and --update handling.
// Behaviour tests on the demo workspace and on our own seeded data (no reference values are claimed here).
import { strict as assert } from 'assert';
import { spawnSync } from 'child_process';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { saturatingCsv } from '../unit/seededData';

const ROOT = path.resolve(__dirname, '..', '..');
/** A private build of src/cli.ts, so parallel rebuilds of dist/ by others cannot change the bundle under test. */
const CLI = path.join(ROOT, 'out', 'cli-test', 'cli.js');

interface Ran { code: number; out: string; err: string }

function cw(args: string[], cwd = ROOT, script = CLI): Ran {
  const r = spawnSync(process.execPath, [script, ...args], { cwd, encoding: 'utf8', timeout: 120000, env: { ...process.env, CURVEWRIGHT_DEBUG: '' } });
  if (r.error) throw r.error;
  return { code: r.status ?? -1, out: r.stdout, err: r.stderr };
}

function tmpDir(): string {
  return fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'cw-cli-')));
}

function write(dir: string, files: Record<string, string>): void {
  for (const [rel, text] of Object.entries(files)) {
    fs.mkdirSync(path.dirname(path.join(dir, rel)), { recursive: true });
    fs.writeFileSync(path.join(dir, rel), text);
  }
}

/** A copy of one demo spec with its data (and committed results) in a fresh folder. */
function demoCopy(spec: string): string {
  const dir = tmpDir();
  fs.cpSync(path.join(ROOT, 'examples', 'data'), path.join(dir, 'data'), { recursive: true });
  fs.mkdirSync(path.join(dir, 'results'));
  fs.copyFileSync(path.join(ROOT, 'examples', spec), path.join(dir, spec));
  const out = spec.replace('.fitspec.json', '.fitresult.json');
  fs.copyFileSync(path.join(ROOT, 'examples', 'results', out), path.join(dir, 'results', out));
  return dir;
}

const spec = (over = '', models = '[{ "name": "mm", "builtin": "michaelis_menten" }]') =>
  `{ "data": { "file": "rate.csv", "x": "conc", "y": "rate" }, "models": ${models}${over} }\n`;

describe('cli', function () {
  this.timeout(300000);

  before(function () {
    const build = spawnSync(process.execPath, ['esbuild.js'], { cwd: ROOT, encoding: 'utf8' });
    assert.equal(build.status, 0, `node esbuild.js failed: ${build.stderr}`);
    // eslint-disable-next-line @typescript-eslint/no-require-imports
    const esbuild = require('esbuild') as typeof import('esbuild');
    esbuild.buildSync({
      entryPoints: [path.join(ROOT, 'src', 'cli.ts')], outfile: CLI, bundle: true, platform: 'node', format: 'cjs',
      target: 'node20', mainFields: ['module', 'main'], logLevel: 'error',
    });
  });

  describe('program', () => {
    it('bin/curvewright.js runs the bundle built by esbuild.js', () => {
      const r = cw(['--version'], ROOT, path.join(ROOT, 'bin', 'curvewright.js'));
      assert.equal(r.code, 0, r.err);
      assert.match(r.out, /^curvewright \d+\.\d+\.\d+/);
    });
    it('--help for the program and every command', () => {
      const top = cw(['--help']);
      assert.equal(top.code, 0);
      for (const c of ['fit', 'check', 'report', 'new']) assert.match(top.out, new RegExp(`\\b${c}\\b`));
      for (const c of ['fit', 'check', 'report', 'new']) {
        const r = cw([c, '--help']);
        assert.equal(r.code, 0, c);
        assert.match(r.out, new RegExp(`Usage: curvewright ${c}`));
        assert.match(r.out, /Exit codes:/);
      }
      assert.match(cw(['check', '--help']).out, /--strict[\s\S]*--update/);
    });
    it('unknown option, unknown command, no spec: exit 2 with a hint and no stack trace', () => {
      const a = cw(['fit', 'x.fitspec.json', '--jsn']);
      assert.equal(a.code, 2);
      assert.match(a.err, /unknown option '--jsn' for 'fit' — did you mean '--json'\?/);
      const b = cw(['fitt', 'a.json']);
      assert.equal(b.code, 2);
      assert.match(b.err, /unknown command 'fitt' — did you mean 'fit'\?/);
      const c = cw(['check']);
      assert.equal(c.code, 2);
      assert.match(c.err, /needs at least one spec file/);
      const d = cw(['fit', 'a.fitspec.json', '--jobs', 'zero']);
      assert.equal(d.code, 2);
      assert.match(d.err, /--jobs' needs a whole number/);
      for (const r of [a, b, c, d]) assert.doesNotMatch(r.err, /\n\s+at /, 'no stack trace');
    });
  });

  describe('bad input: exit 2, the message names the file, the place and the fix', () => {
    let dir: string;
    before(() => {
      dir = tmpDir();
      write(dir, { 'rate.csv': saturatingCsv(11) });
    });
    const cases: { name: string; files: Record<string, string>; words: RegExp[] }[] = [
      { name: 'malformed spec JSON', files: { 's.fitspec.json': '{ "data": { "file": "rate.csv" "x": "conc" } }' }, words: [/s\.fitspec\.json:1:\d+: error/, /expected ','/, /put a comma/] },
      { name: 'wrong column', files: { 's.fitspec.json': spec().replace('"x": "conc"', '"x": "cnc"') }, words: [/s\.fitspec\.json:1:\d+/, /'cnc'.*not a column/, /did you mean 'conc'/] },
      { name: 'bad formula', files: { 's.fitspec.json': spec('', '[{ "name": "f", "formula": "a*exp(-b*x" }]') }, words: [/s\.fitspec\.json:1:\d+/, /models\[0\]\.formula/, /'f'/] },
      { name: 'impossible bounds', files: { 's.fitspec.json': spec('', '[{ "name": "mm", "builtin": "michaelis_menten", "params": { "Km": { "min": 3, "max": 1 } } }]') }, words: [/min 3 is greater than max 1/, /swap/] },
      { name: 'NaN cells with badRows fail', files: { 'nan.csv': 'conc,rate\n1,2\n2,NaN\n3,3\n', 's.fitspec.json': spec().replace('rate.csv', 'nan.csv').replace('"y": "rate"', '"y": "rate", "badRows": "fail"') }, words: [/nan\.csv/, /NaN/, /line 3|row 2/] },
      { name: 'empty CSV', files: { 'empty.csv': '', 's.fitspec.json': spec().replace('rate.csv', 'empty.csv') }, words: [/empty\.csv is empty/, /header row/] },
      { name: 'missing data file', files: { 's.fitspec.json': spec().replace('rate.csv', 'gone.csv') }, words: [/not found: gone\.csv/, /relative to the spec/] },
      { name: 'output escaping the workspace', files: { 's.fitspec.json': spec(', "output": "../../out.json"') }, words: [/\[output\]/, /outside the workspace/] },
      { name: 'output over the data file', files: { 's.fitspec.json': spec(', "output": "rate.csv"') }, words: [/data file/, /choose another file/] },
    ];
    for (const c of cases) {
      it(c.name, () => {
        const sub = path.join(dir, c.name.replace(/\W+/g, '-'));
        fs.mkdirSync(sub);
        fs.copyFileSync(path.join(dir, 'rate.csv'), path.join(sub, 'rate.csv'));
        write(sub, c.files);
        const r = cw(['fit', 's.fitspec.json'], sub);
        assert.equal(r.code, 2, `${r.out}\n${r.err}`);
        for (const w of c.words) assert.match(r.err, w);
        assert.doesNotMatch(r.err, /\n\s+at |internal error/);
        const chk = cw(['check', 's.fitspec.json'], sub);
        assert.equal(chk.code, 2, 'check: bad input is 2 too');
      });
    }
    it('missing spec file', () => {
      const r = cw(['fit', 'nothing.fitspec.json'], dir);
      assert.equal(r.code, 2);
      assert.match(r.err, /nothing\.fitspec\.json: error: cannot read the spec .*no such file/);
    });
    it('NaN cells by default: dropped with a warning naming the line, exit 0', () => {
      const sub = path.join(dir, 'nan-drop');
      write(sub, { 'rate.csv': saturatingCsv(11).replace(/\n([^,\n]+),[^\n]+\n/, '\n$1,NaN\n'), 's.fitspec.json': spec() });
      const r = cw(['fit', 's.fitspec.json'], sub);
      assert.equal(r.code, 0, r.err);
      assert.match(r.out, /23 of 24 rows used \(1 dropped\)/);
      assert.match(r.out, /warning: rate\.csv line 2, column 'rate': not a number: 'NaN'/);
    });
    it('with several specs the highest exit code wins', () => {
      const sub = path.join(dir, 'several');
      write(sub, { 'rate.csv': saturatingCsv(11), 'good.fitspec.json': spec(), 'bad.fitspec.json': spec().replace('"y": "rate"', '"y": "rat"') });
      const r = cw(['fit', 'good.fitspec.json', 'bad.fitspec.json'], sub);
      assert.equal(r.code, 2);
      assert.match(r.out, /good\.fitspec\.json/);
      assert.match(r.err, /bad\.fitspec\.json:1:\d+/);
    });
  });

  describe('fit', () => {
    let dir: string;
    before(() => {
      dir = tmpDir();
      const models = '[{ "name": "line", "builtin": "linear" }, { "name": "mm", "builtin": "michaelis_menten" }, { "name": "quad", "polynomial": 2 }]';
      write(dir, {
        'rate.csv': saturatingCsv(11),
        'b-three.fitspec.json': spec(', "output": "results/three.fitresult.json", "predict": [3], "solveFor": [2.5]', models),
        'a-one.fitspec.json': spec(', "output": "results/one.fitresult.json"'),
      });
    });
    it('--json prints one complete FitReport per line, in the order given, and picks the true model', () => {
      const r = cw(['fit', '--json', 'b-three.fitspec.json', 'a-one.fitspec.json', '--jobs', '2'], dir);
      assert.equal(r.code, 0, r.err);
      const lines = r.out.trim().split('\n');
      assert.equal(lines.length, 2);
      const [three, one] = lines.map(l => JSON.parse(l));
      assert.equal(three.spec, 'b-three.fitspec.json');
      assert.equal(one.spec, 'a-one.fitspec.json');
      assert.equal(three.best, 'mm');
      assert.equal(three.comparison.ranking.length, 3);
      assert.ok(Array.isArray(three.comparison.fTests));
      const mm = three.models.find((m: { name: string }) => m.name === 'mm');
      for (const p of ['Vmax', 'Km']) {
        const q = mm.params[p];
        for (const key of ['value', 'se', 't', 'p']) assert.equal(typeof q[key], 'number', `${p}.${key}`);
        assert.equal(q.ci.length, 2);
        assert.equal(q.profileCi.length, 2);
      }
      for (const key of ['n', 'dof', 'sse', 'sigma', 'rmse', 'r2', 'adjR2', 'logLik', 'aic', 'aicc', 'bic']) assert.equal(typeof mm.stats[key], 'number', `stats.${key}`);
      assert.ok(mm.residualTests.runs && mm.residualTests.normality);
      assert.ok(Array.isArray(mm.problems) && Array.isArray(three.problems));
      assert.equal(mm.predictions.length, 1);
      assert.equal(mm.inverse.length, 1);
      assert.ok(fs.existsSync(path.join(dir, 'results', 'three.fitresult.json')));
      assert.ok(fs.existsSync(path.join(dir, 'results', 'one.fitresult.json')));
    });
    it('the same results in one thread and on worker threads, byte for byte', () => {
      const a = cw(['fit', '--json', '--jobs', '1', 'a-one.fitspec.json', 'b-three.fitspec.json'], dir);
      const b = cw(['fit', 'a-one.fitspec.json', 'b-three.fitspec.json', '--json', '-j', '2'], dir);
      assert.equal(a.code, 0);
      assert.equal(a.out, b.out);
      const file = fs.readFileSync(path.join(dir, 'results', 'three.fitresult.json'), 'utf8');
      cw(['fit', 'b-three.fitspec.json'], dir);
      assert.equal(fs.readFileSync(path.join(dir, 'results', 'three.fitresult.json'), 'utf8'), file);
    });
    it('prints a readable summary: models, status, parameters ± SE, AICc, R², best marked', () => {
      const r = cw(['fit', 'b-three.fitspec.json'], dir);
      assert.equal(r.code, 0);
      assert.match(r.out, /model\s+status\s+parameters \(± SE\)\s+AICc\s+R²\s+problems/);
      assert.match(r.out, /\*\s+mm\s+converged\s+Vmax=[\d.]+±[\d.e-]+ Km=/);
      assert.match(r.out, /best: mm/);
      assert.match(r.out, /wrote results\/three\.fitresult\.json/);
    });
    it('a model that does not converge: fit still exits 0 and says FAILED; check exits 1', () => {
      const sub = tmpDir();
      write(sub, {
        'rate.csv': saturatingCsv(11),
        's.fitspec.json': spec('', '[{ "name": "slow", "formula": "Vmax*x/(Km + x)", "params": { "Vmax": { "start": 1000 }, "Km": { "start": 900 } }, "solver": { "maxIterations": 1 } }]'),
      });
      const f = cw(['fit', 's.fitspec.json'], sub);
      assert.equal(f.code, 0, f.err);
      assert.match(f.out, /slow\s+FAILED \(iteration-limit\)/);
      const c = cw(['check', 's.fitspec.json'], sub);
      assert.equal(c.code, 1);
      assert.match(c.out, /FAIL s\.fitspec\.json/);
      assert.match(c.out, /model 'slow' did not converge \(iteration-limit\)/);
    });
  });

  describe('check: error-level problems', () => {
    it('a formula without "params" takes every other name as a parameter; a singular fit fails check, not fit', () => {
      const sub = tmpDir();
      write(sub, {
        'line.csv': 'x,y\n1,2.1\n2,3.9\n3,6.2\n4,8.1\n5,9.8\n6,12.2\n',
        'ok.fitspec.json': '{ "data": { "file": "line.csv", "x": "x", "y": "y" }, "models": [{ "name": "through0", "formula": "a*x" }] }',
        'dup.fitspec.json': '{ "data": { "file": "line.csv", "x": "x", "y": "y" }, "models": [{ "name": "dup", "formula": "a*x + b*(2*x)" }] }',
      });
      const ok = cw(['check', 'ok.fitspec.json'], sub);
      assert.equal(ok.code, 0, ok.out + ok.err);
      assert.match(ok.out, /PASS ok\.fitspec\.json \(1 model, no expectations/);
      const f = cw(['fit', 'dup.fitspec.json'], sub);
      assert.equal(f.code, 0, f.err);
      assert.match(f.out, /error: dup: .*singular.*\[rank-deficient\]/);
      const c = cw(['check', 'dup.fitspec.json'], sub);
      assert.equal(c.code, 1);
      assert.match(c.out, /dup\.fitspec\.json: error \[models\[0\]\]: .*\(rank-deficient\)/);
    });
  });

  describe('check', () => {
    it('the demo workspace passes (every model converges, expectations met, results up to date)', () => {
      const r = cw(['check', 'examples/*.fitspec.json']);
      assert.equal(r.code, 0, r.out + r.err);
      const n = fs.readdirSync(path.join(ROOT, 'examples')).filter((f) => f.endsWith('.fitspec.json')).length;
      assert.match(r.out, new RegExp(`check: ${n} passed, 0 failed`));
    });
    it('fails when a data point moves a pinned parameter, naming the expectation and the stale results file', () => {
      const dir = demoCopy('growth-reactor1.fitspec.json');
      const csv = path.join(dir, 'data', 'growth-reactors.csv');
      // reactor 1 at 40 h sits on the plateau (OD ≈ 1.85); a reading of 2.6 drags K up by more than its tolerance
      const text = fs.readFileSync(csv, 'utf8');
      assert.match(text, /\n1,40,[\d.]+\n/);
      fs.writeFileSync(csv, text.replace(/\n1,40,[\d.]+\n/, '\n1,40,2.600\n'));
      const r = cw(['check', 'growth-reactor1.fitspec.json'], dir);
      assert.equal(r.code, 1, r.out + r.err);
      assert.match(r.out, /expect not met: logistic\.K = 1\.856 ± 0\.02: got 1\.8[89]|expect not met: logistic\.K = 1\.856 ± 0\.02: got 1\.9/);
      assert.match(r.out, /results file results\/growth-reactor1\.fitresult\.json is stale: the data changed/);
      // a nudge well inside the noise moves nothing pinned: only staleness fails
      fs.writeFileSync(csv, text.replace(/\n1,40,([\d.]+)\n/, (_m, v) => `\n1,40,${(Number(v) + 0.004).toFixed(3)}\n`));
      const s = cw(['check', 'growth-reactor1.fitspec.json'], dir);
      assert.equal(s.code, 1);
      assert.doesNotMatch(s.out, /expect not met/);
      assert.match(s.out, /stale: the data changed/);
    });
    it('stale when the spec changed, missing when the results file is absent', () => {
      const dir = demoCopy('growth-reactor3.fitspec.json');
      const specFile = path.join(dir, 'growth-reactor3.fitspec.json');
      assert.equal(cw(['check', 'growth-reactor3.fitspec.json'], dir).code, 0);
      fs.writeFileSync(specFile, fs.readFileSync(specFile, 'utf8').replace('"title": "', '"title": "(edited) '));
      const r = cw(['check', 'growth-reactor3.fitspec.json'], dir);
      assert.equal(r.code, 1);
      assert.match(r.out, /is stale: the spec changed/);
      fs.unlinkSync(path.join(dir, 'results', 'growth-reactor3.fitresult.json'));
      const m = cw(['check', 'growth-reactor3.fitspec.json'], dir);
      assert.equal(m.code, 1);
      assert.match(m.out, /does not exist — run `curvewright fit growth-reactor3\.fitspec\.json`/);
    });
    it('--update rewrites the expect values in place, keeping comments and layout, and the results file', () => {
      const dir = demoCopy('growth-reactor1.fitspec.json');
      const csv = path.join(dir, 'data', 'growth-reactors.csv');
      fs.writeFileSync(csv, fs.readFileSync(csv, 'utf8').replace(/\n1,40,[\d.]+\n/, '\n1,40,2.600\n'));
      const specFile = path.join(dir, 'growth-reactor1.fitspec.json');
      const before = fs.readFileSync(specFile, 'utf8');
      const u = cw(['check', '--update', 'growth-reactor1.fitspec.json'], dir);
      assert.equal(u.code, 0, u.out + u.err);
      assert.match(u.out, /updated expect logistic\.K: 1\.856 → /);
      const after = fs.readFileSync(specFile, 'utf8');
      const a = before.split('\n'), b = after.split('\n');
      assert.equal(a.length, b.length, 'same layout');
      const changed = a.map((l, i) => (l === b[i] ? -1 : i)).filter(i => i >= 0);
      assert.equal(changed.length, 1, 'only the expect line changed');
      assert.match(b[changed[0]], /"logistic": \{ "K": \{ "value": [\d.]+, "tol": 0\.02 \}, "r": \{ "value": [\d.]+, "rel": 0\.05 \} \}/);
      for (const comment of a.filter(l => l.includes('//'))) assert.ok(after.includes(comment), `comment kept: ${comment}`);
      const again = cw(['check', 'growth-reactor1.fitspec.json'], dir);
      assert.equal(again.code, 0, again.out);
    });
    it('warnings fail only with --strict', () => {
      const dir = demoCopy('growth-reactor1.fitspec.json');
      const plain = cw(['check', 'growth-reactor1.fitspec.json'], dir);
      assert.equal(plain.code, 0, plain.out);
      assert.match(plain.out, /PASS growth-reactor1\.fitspec\.json \(3 models, 2\/2 expectations met, \d+ warnings?\)/);
      const strict = cw(['check', '--strict', 'growth-reactor1.fitspec.json'], dir);
      assert.equal(strict.code, 1);
      assert.match(strict.out, /FAIL[\s\S]*warning/);
    });
  });

  describe('new and report', () => {
    it('new writes a starter spec that fits, guesses x and y, never overwrites, and checks --x', () => {
      const dir = tmpDir();
      write(dir, { 'data/plate.csv': 'well,conc,rate\n' + saturatingCsv(11).split('\n').slice(1).filter(Boolean).map((l, i) => `W${i},${l}`).join('\n') + '\n' });
      const r = cw(['new', 'data/plate.csv'], dir);
      assert.equal(r.code, 0, r.err);
      assert.match(r.out, /wrote data\/plate\.fitspec\.json: x = conc, y = rate, models: linear, quadratic, michaelis_menten/);
      const text = fs.readFileSync(path.join(dir, 'data', 'plate.fitspec.json'), 'utf8');
      assert.match(text, /^\/\/ Curvewright fit spec/);
      assert.match(text, /"file": "plate\.csv"/);
      assert.match(text, /"output": "results\/plate\.fitresult\.json"/);
      const f = cw(['fit', 'data/plate.fitspec.json'], dir);
      assert.equal(f.code, 0, f.err);
      assert.match(f.out, /\*\s+michaelis_menten\s+converged/);
      const again = cw(['new', 'data/plate.csv'], dir);
      assert.equal(again.code, 2);
      assert.match(again.err, /already exists/);
      const wrong = cw(['new', 'data/plate.csv', '--x', 'cnc', '-o', 'other.fitspec.json'], dir);
      assert.equal(wrong.code, 2);
      assert.match(wrong.err, /--x 'cnc' is not a column of data\/plate\.csv — did you mean 'conc'\?/);
    });
    it('report writes one self-contained HTML page; a bad spec still gets a page and exit 2', () => {
      const dir = tmpDir();
      write(dir, { 'rate.csv': saturatingCsv(11), 'a.fitspec.json': spec(', "title": "Seeded saturation"'), 'bad.fitspec.json': spec().replace('"y": "rate"', '"y": "nope"') });
      const r = cw(['report', 'a.fitspec.json', '-o', 'out/report.html'], dir);
      assert.equal(r.code, 0, r.err);
      assert.match(r.out, /wrote out\/report\.html \(1 of 1 spec fitted\)/);
      const html = fs.readFileSync(path.join(dir, 'out', 'report.html'), 'utf8');
      assert.match(html, /^<!doctype html>/i);
      assert.match(html, /Seeded saturation/);
      assert.doesNotMatch(html, /<script[^>]+src=|<link[^>]+href="http/i, 'self-contained: no external scripts or styles');
      const b = cw(['report', 'a.fitspec.json', 'bad.fitspec.json', '-o', 'both.html'], dir);
      assert.equal(b.code, 2);
      assert.match(b.err, /bad\.fitspec\.json:1:\d+: error/);
      assert.ok(fs.existsSync(path.join(dir, 'both.html')));
      const input = cw(['report', 'a.fitspec.json', '-o', 'rate.csv'], dir);
      assert.equal(input.code, 2);
      assert.match(input.err, /"-o" rate.csv is not a .html file/);
      assert.equal(fs.readFileSync(path.join(dir, 'rate.csv'), 'utf8'), saturatingCsv(11), 'the data file is untouched');
    });
  });
});

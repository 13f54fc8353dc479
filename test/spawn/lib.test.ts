// The library API as users get it: the package packed by npm, unpacked into a fresh folder's node_modules and
// required by name from plain Node (CommonJS, ES module, TypeScript types), with a guard that fails on any attempt
// to resolve `vscode`. evaluate() is checked against the engine's own fitted values, bands and predictions.
import { strict as assert } from 'assert';
import { spawnSync } from 'child_process';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { CurvewrightError, evaluate, fitSpec, fitSpecFile, readReport, type FitReport, type ModelReport } from '../../src/lib';
import { isErrorReport } from '../../src/engine/report';
import { mulberry32, normalSource } from '../../scripts/generate-demo';

const ROOT = path.resolve(__dirname, '..', '..');
const DEMOS = ['assay-standard-curve', 'capacity-fade', 'growth-reactor1', 'thermistor'];

function tmpDir(): string {
  return fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'cw-lib-')));
}

function run(cmd: string, args: string[], cwd: string): { code: number; out: string; err: string } {
  const r = spawnSync(cmd, args, { cwd, encoding: 'utf8', timeout: 120000 });
  if (r.error) throw r.error;
  return { code: r.status ?? -1, out: r.stdout, err: r.stderr };
}

/** Largest relative difference (absolute below 1e-300), null and NaN equal to each other. */
function maxRel(a: ArrayLike<number | null>, b: ArrayLike<number | null>): number {
  assert.equal(a.length, b.length);
  let worst = 0;
  for (let i = 0; i < a.length; i++) {
    const x = a[i] ?? NaN, y = b[i] ?? NaN;
    if (Number.isNaN(x) && Number.isNaN(y)) continue;
    worst = Math.max(worst, Math.abs(x - y) / Math.max(1e-300, Math.abs(y)));
  }
  return worst;
}

function single(m: ModelReport): number[] | Record<string, number[]> {
  const keys = Object.keys(m.points!.x);
  return keys.length === 1 ? m.points!.x[keys[0]] : m.points!.x;
}

describe('library: the packed package, required by name', function () {
  this.timeout(300000);
  let proj: string;
  let files: string[];
  const guard = `// fails the process if anything tries to load the vscode module
const Module = require('module');
const resolve = Module._resolveFilename;
Module._resolveFilename = function (request, ...rest) {
  if (request === 'vscode' || request.startsWith('vscode/')) throw new Error('GUARD: vscode was resolved');
  return resolve.call(this, request, ...rest);
};
`;

  before(function () {
    const build = run(process.execPath, ['esbuild.js'], ROOT);
    assert.equal(build.code, 0, `node esbuild.js failed: ${build.err}`);
    proj = tmpDir();
    const packed = run('npm', ['pack', '--ignore-scripts', '--json', '--pack-destination', proj], ROOT);
    assert.equal(packed.code, 0, packed.err);
    const info = JSON.parse(packed.out)[0] as { filename: string; files: { path: string }[] };
    files = info.files.map(f => f.path);
    const pkg = path.join(proj, 'node_modules', 'curvewright');
    fs.mkdirSync(pkg, { recursive: true });
    const tar = run('tar', ['-xzf', path.join(proj, info.filename), '-C', pkg, '--strip-components=1'], proj);
    assert.equal(tar.code, 0, tar.err);
    fs.writeFileSync(path.join(proj, 'guard.js'), guard);
    fs.cpSync(path.join(ROOT, 'examples', 'data'), path.join(proj, 'data'), { recursive: true });
    fs.copyFileSync(path.join(ROOT, 'examples', 'thermistor.fitspec.json'), path.join(proj, 'thermistor.fitspec.json'));
  });

  it('ships the library, its types, the command line and the versioned report schema — no sources or tests', () => {
    for (const f of ['dist/lib.js', 'dist/types/lib.d.ts', 'dist/types/engine/report.d.ts', 'dist/cli.js', 'bin/curvewright.js', 'schema/fitreport.schema.json', 'schema/fitspec.schema.json', 'package.json', 'README.md'])
      assert.ok(files.includes(f), `${f} missing from the package: ${files.join(', ')}`);
    assert.deepEqual(files.filter(f => /^(src|test|examples|scripts|bench|\.ci)\//.test(f) || f.endsWith('.map')), []);
    const schema = JSON.parse(fs.readFileSync(path.join(proj, 'node_modules', 'curvewright', 'schema', 'fitreport.schema.json'), 'utf8'));
    assert.deepEqual(schema.definitions.fitReport.properties.version, { const: 1, description: 'Report format version.' });
  });

  it('the guard catches a vscode import (so the next tests can fail)', () => {
    const r = run(process.execPath, ['-r', './guard.js', '-e', "require('vscode')"], proj);
    assert.notEqual(r.code, 0);
    assert.match(r.err, /GUARD: vscode was resolved/);
    assert.doesNotMatch(fs.readFileSync(path.join(proj, 'node_modules', 'curvewright', 'dist', 'lib.js'), 'utf8'), /require\(["']vscode["']\)/);
  });

  it("require('curvewright') in plain Node gives exactly what `curvewright fit --json` prints", () => {
    fs.writeFileSync(path.join(proj, 'use.cjs'), `
const cw = require('curvewright');
if (!require.resolve('curvewright').startsWith(__dirname)) throw new Error('resolved outside the project: ' + require.resolve('curvewright'));
cw.fitSpecFile('thermistor.fitspec.json').then(r => {
  const m = r.models[0];
  const y = cw.evaluate(r, m.name, [5000, 10000]);
  process.stdout.write(JSON.stringify(r) + '\\n' + JSON.stringify({ y, keys: Object.keys(cw).sort() }) + '\\n');
});
`);
    const lib = run(process.execPath, ['-r', './guard.js', 'use.cjs'], proj);
    assert.equal(lib.code, 0, lib.err);
    assert.ok(!fs.existsSync(path.join(proj, 'results')), 'fitSpecFile wrote the results file without { write: true }');
    const cli = run(process.execPath, ['node_modules/curvewright/bin/curvewright.js', 'fit', '--json', 'thermistor.fitspec.json'], proj);
    assert.equal(cli.code, 0, cli.err);
    const [libLine, extra] = lib.out.trim().split('\n');
    assert.equal(libLine, cli.out.trim());
    const { y, keys } = JSON.parse(extra) as { y: number[]; keys: string[] };
    for (const k of ['fitSpecFile', 'fitSpec', 'readReport', 'evaluate', 'isErrorReport']) assert.ok(keys.includes(k), k);
    assert.equal(y.length, 2);
    assert.ok(y[0] > y[1], 'an NTC thermistor: higher resistance, lower temperature');
  });

  it("import { … } from 'curvewright' in an ES module", () => {
    fs.writeFileSync(path.join(proj, 'use.mjs'), `
import { fitSpecFile, readReport, evaluate, fitSpec } from 'curvewright';
const r = await fitSpecFile('thermistor.fitspec.json', { write: true });
const back = readReport('results/thermistor.fitresult.json');
console.log(JSON.stringify({ same: JSON.stringify(evaluate(back, 'beta', [8000])) === JSON.stringify(evaluate(r, 'beta', [8000])), fitSpec: typeof fitSpec }));
`);
    const r = run(process.execPath, ['--import', './guard.js', 'use.mjs'], proj);
    assert.equal(r.code, 0, r.err);
    assert.deepEqual(JSON.parse(r.out), { same: true, fitSpec: 'function' });
  });

  it('the type declarations type-check a TypeScript user and reject a wrong call', () => {
    const tsc = path.join(ROOT, 'node_modules', 'typescript', 'bin', 'tsc');
    const opts = ['--noEmit', '--strict', '--module', 'node16', '--moduleResolution', 'node16', '--target', 'es2022', '--types', 'node', '--typeRoots', path.join(ROOT, 'node_modules', '@types')];
    fs.writeFileSync(path.join(proj, 'good.ts'), `
import { fitSpecFile, evaluate, isErrorReport, type FitReport, type EvaluatedBand } from 'curvewright';
export async function f(): Promise<number> {
  const r = await fitSpecFile('thermistor.fitspec.json');
  if (isErrorReport(r)) return NaN;
  const report: FitReport = r;
  const y: number[] = evaluate(report, 'beta', [1, 2]);
  const b: EvaluatedBand = evaluate(report, 'beta', { x: [1, 2] }, { band: true });
  return y[0] + b.ciLow[0] + report.models[0].params['B'].value;
}
`);
    fs.writeFileSync(path.join(proj, 'bad.ts'), `
import { readReport, evaluate } from 'curvewright';
const r = readReport('x.json');
export const y: string = evaluate(r, 'beta', [1]);
`);
    const good = run(process.execPath, [tsc, ...opts, 'good.ts'], proj);
    assert.equal(good.code, 0, good.out + good.err);
    // the README's TypeScript example, as written
    const readme = fs.readFileSync(path.join(ROOT, 'README.md'), 'utf8');
    const example = /```ts\n([\s\S]*?)```/.exec(readme)![1];
    assert.match(example, /from 'curvewright'/);
    fs.writeFileSync(path.join(proj, 'readme.mts'), example + '\nexport { y, band, saved };\n');
    const fromReadme = run(process.execPath, [tsc, ...opts, 'readme.mts'], proj);
    assert.equal(fromReadme.code, 0, 'README example: ' + fromReadme.out + fromReadme.err);
    const bad = run(process.execPath, [tsc, ...opts, 'bad.ts'], proj);
    assert.notEqual(bad.code, 0);
    assert.match(bad.out, /Type 'number\[\]' is not assignable to type 'string'/);
  });
});

describe('results files from other languages', () => {
  it("the README's Python example reads a committed results file (skipped without python3)", function () {
    const readme = fs.readFileSync(path.join(ROOT, 'README.md'), 'utf8');
    const example = /```python\n([\s\S]*?)```/.exec(readme)![1];
    const r = spawnSync('python3', ['-c', example], { cwd: ROOT, encoding: 'utf8' });
    if (r.error) {
      console.log('    (python3 not found: the README Python example was not run)');
      this.skip();
    }
    assert.equal(r.status, 0, r.stderr);
    assert.match(r.stdout, /^logistic 1\.85\d* ± 0\.00\d+ 95% CI \[1\.84\d*, 1\.86\d*\]/);
  });
});

describe('library: evaluate from the report alone', function () {
  this.timeout(120000);
  const reports: Record<string, FitReport> = {};
  before(async () => {
    for (const d of DEMOS) {
      const r = await fitSpecFile(path.join(ROOT, 'examples', `${d}.fitspec.json`), { workspaceRoot: ROOT });
      assert.ok(!isErrorReport(r), d);
      reports[d] = r as FitReport;
    }
  });

  it('reproduces every converged demo model\'s fitted values, band and predictions to 1e-12', () => {
    let checked = 0;
    for (const d of DEMOS) {
      for (const m of reports[d].models) {
        if (m.status !== 'converged') continue;
        assert.ok(maxRel(evaluate(reports[d], m.name, single(m)), m.points!.fitted) <= 1e-12, `${d} ${m.name} fitted`);
        const b = evaluate(reports[d], m.name, m.band!.x, { band: true });
        for (const k of ['fit', 'ciLow', 'ciHigh', 'piLow', 'piHigh'] as const) assert.ok(maxRel(b[k], m.band![k]) <= 1e-12, `${d} ${m.name} band.${k}`);
        for (const p of m.predictions) {
          const at = evaluate(reports[d], m.name, p.x as number, { band: true });
          assert.ok(maxRel([at.fit[0], at.ciLow[0], at.ciHigh[0], at.piLow[0], at.piHigh[0]], [p.y, p.ci![0], p.ci![1], p.pi![0], p.pi![1]]) <= 1e-12, `${d} ${m.name} prediction at ${p.x}`);
        }
        checked++;
      }
    }
    assert.ok(checked >= 10, `only ${checked} models checked`);
  });

  // seeded data of our own: y = 3 exp(-0.4 t) + 0.2 T + noise with known σ, two x variables, weighted fits
  function weightedDir(mode: 'relative' | 'absolute'): string {
    const dir = tmpDir();
    const z = normalSource(mulberry32(16));
    const rows = ['t,T,y,sd'];
    for (let i = 0; i < 30; i++) {
      const t = 0.3 * i, T = 10 + (i % 5), sd = 0.02 + 0.01 * (i % 3);
      rows.push(`${t},${T},${(3 * Math.exp(-0.4 * t) + 0.2 * T + sd * z()).toFixed(6)},${sd}`);
    }
    fs.writeFileSync(path.join(dir, 'w.csv'), rows.join('\n') + '\n');
    fs.writeFileSync(path.join(dir, 'w.fitspec.json'), JSON.stringify({
      data: { file: 'w.csv', x: { t: 't', T: 'T' }, y: 'y', sigma: 'sd', sigmaMode: mode },
      models: [{ name: 'decay', formula: 'A*exp(-k*t) + b*T', params: { A: { start: 2 }, k: { start: 0.3 }, b: { start: 0.1 } } }],
      predict: [{ t: 1.5, T: 12 }, { t: 20, T: 11 }],
    }));
    return dir;
  }

  for (const mode of ['relative', 'absolute'] as const) {
    it(`weighted fit with two x variables (${mode} σ): fitted values and prediction intervals`, async () => {
      const dir = weightedDir(mode);
      const r = (await fitSpecFile(path.join(dir, 'w.fitspec.json'), { workspaceRoot: dir })) as FitReport;
      assert.ok(!isErrorReport(r), JSON.stringify(r));
      const m = r.models[0];
      assert.equal(m.status, 'converged');
      assert.ok(maxRel(evaluate(r, 'decay', m.points!.x), m.points!.fitted) <= 1e-12);
      for (const p of m.predictions) {
        const px = p.x as Record<string, number>;
        const at = evaluate(r, 'decay', { t: [px.t], T: [px.T] }, { band: true });
        assert.ok(maxRel([at.fit[0], at.ciLow[0], at.ciHigh[0], at.piLow[0], at.piHigh[0]], [p.y, p.ci![0], p.ci![1], p.pi![0], p.pi![1]]) <= 1e-12, JSON.stringify(p));
      }
      assert.throws(() => evaluate(r, 'decay', [1, 2]), (e: Error) => e instanceof CurvewrightError && /several x variables \(t, T\).*\{ t: \[1, 2\], T: \[1, 2\] \}/.test(e.message));
      assert.throws(() => evaluate(r, 'decay', { t: [1] }), /x has no values for 'T'/);
      assert.throws(() => evaluate(r, 'decay', { t: [1, 2], T: [1] }), /x.T has 1 values but another variable has 2/);
      assert.throws(() => evaluate(r, 'decay', { t: [1], T: [1], temp: [1] }), /'temp', which is not a variable/);
    });
  }

  it('groups: per-group entries by { group }, a joint fit with shared parameters by its name[<group>] values', () => {
    // a grouped report built by hand from a real one, in the shape of the groups contract (DESIGN.md)
    const base = reports['growth-reactor1'];
    const m0 = base.models[0];
    const K = m0.params.K.value;
    const perGroup = (g: string, k: number) => ({ ...m0, group: g, params: { ...m0.params, K: { ...m0.params.K, value: k } } });
    const p = m0.paramOrder.length; // K, r, x0
    const cov = m0.covariance!;
    const sharedOrder = ['K[R1]', 'K[R2]', 'r', 'x0'];
    const from = [0, 0, 1, 2]; // each shared-order entry's index in the single-group covariance (K[R2] ~ K)
    const shared = {
      ...m0, name: 'common-rate', group: null, shared: ['r', 'x0'], paramOrder: sharedOrder,
      params: { 'K[R1]': m0.params.K, 'K[R2]': { ...m0.params.K, value: 2 * K }, r: m0.params.r, x0: m0.params.x0 },
      covariance: sharedOrder.map((_, a) => sharedOrder.map((__, b) => (a !== b && (a < 2) && (b < 2) ? 0 : cov[from[a]][from[b]]))),
    };
    const grouped = { ...base, models: [perGroup('R1', K), perGroup('R2', 2 * K), shared] } as unknown as FitReport;
    const x = [5, 15, 25];
    const single = evaluate(base, 'logistic', x);
    assert.deepEqual(evaluate(grouped, 'logistic', x, { group: 'R1' }), single);
    assert.ok(maxRel(evaluate(grouped, 'logistic', x, { group: 'R2' }), single.map(v => 2 * v)) <= 1e-12, 'K doubles the curve');
    assert.deepEqual(evaluate(grouped, 'common-rate', x, { group: 'R1' }), single);
    assert.ok(maxRel(evaluate(grouped, 'common-rate', x, { group: 'R2' }), single.map(v => 2 * v)) <= 1e-12);
    const b1 = evaluate(grouped, 'common-rate', x, { group: 'R1', band: true });
    const b0 = evaluate(base, 'logistic', x, { band: true });
    assert.ok(maxRel(b1.ciHigh, b0.ciHigh) <= 1e-12, 'the group\'s block of the joint covariance gives the same band');
    assert.equal(p, 3);
    assert.throws(() => evaluate(grouped, 'logistic', x), /fitted per group — pass \{ group \}, one of: R1, R2/);
    assert.throws(() => evaluate(grouped, 'logistic', x, { group: 'R3' }), /no group 'R3' \(groups: R1, R2\)/);
    assert.throws(() => evaluate(grouped, 'common-rate', x), /fitted per group — pass \{ group \}/);
  });

  it('names the fix for an unknown model, a failed model and a report that is an error', () => {
    const r = reports['growth-reactor1'];
    assert.throws(() => evaluate(r, 'logistik', [1]), /no model 'logistik' — did you mean 'logistic'\? \(models: logistic, gompertz, richards\)/);
    const failed: FitReport = { ...r, models: [{ ...r.models[0], status: 'failed', termination: 'iteration-limit' }] };
    assert.throws(() => evaluate(failed, 'logistic', [1]), /did not converge \(iteration-limit\)/);
    assert.throws(() => evaluate({ version: 1, spec: 's.fitspec.json', error: { message: 'boom' } } as unknown as FitReport, 'x', [1]), /could not be run.*boom/);
    assert.throws(() => evaluate(r, 'logistic', ['a' as unknown as number]), /x\[0\] is not a number/);
  });

  it('readReport validates a results file against the schema and names the file when it cannot', () => {
    const dir = tmpDir();
    const good = path.join(ROOT, 'examples', 'results', 'growth-reactor1.fitresult.json');
    assert.equal(readReport(good).models.length, 3);
    const broken = JSON.parse(fs.readFileSync(good, 'utf8'));
    delete broken.models[0].params;
    fs.writeFileSync(path.join(dir, 'b.json'), JSON.stringify(broken));
    assert.throws(() => readReport(path.join(dir, 'b.json')), (e: Error) => e instanceof CurvewrightError && e.message.includes('b.json') && /is not a Curvewright report \(\/models\/0 must have required property 'params'\)/.test(e.message));
    fs.writeFileSync(path.join(dir, 'c.json'), '{"version": 1,');
    assert.throws(() => readReport(path.join(dir, 'c.json')), /c\.json is not valid JSON/);
    assert.throws(() => readReport(path.join(dir, 'none.json')), /none\.json: no such file/);
  });

  it('fitSpec(text, { baseDir }) gives the same report as fitSpecFile', async () => {
    const file = path.join(ROOT, 'examples', 'thermistor.fitspec.json');
    const a = await fitSpecFile(file, { workspaceRoot: ROOT });
    const b = await fitSpec(fs.readFileSync(file, 'utf8'), { baseDir: path.join(ROOT, 'examples'), name: 'thermistor.fitspec.json', workspaceRoot: ROOT });
    assert.deepEqual(b, a);
    await assert.rejects(fitSpec('{}', undefined as unknown as { baseDir: string }), /fitSpec needs \{ baseDir \}/);
  });
});

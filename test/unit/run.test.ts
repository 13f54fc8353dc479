// The run layer end to end in-process: determinism, atomic results files, ErrorReports for bad input, expectations,
// points omitted above 10,000 rows, and model choice on seeded synthetic data from a known model.
// Behaviour tests on our own seeded data (no reference values are claimed here).
import { strict as assert } from 'assert';
import { createHash } from 'crypto';
import * as fs from 'fs';
import { promises as fsp } from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile, serializeReport, writeResults, reportForFile, MAX_POINTS_IN_FILE, sha256 } from '../../src/engine/run';
import type { ErrorReport, FitReport, RunResult } from '../../src/engine/report';
import { mulberry32, normalSource } from '../../scripts/generate-demo';
import { saturatingCsv } from './seededData';
import { asReport, asError } from './reports';

function tmpDir(): string {
  return fs.mkdtempSync(path.join(os.tmpdir(), 'cw-run-'));
}
function fileHash(f: string): string {
  return createHash('sha256').update(fs.readFileSync(f)).digest('hex');
}

function workspace(files: Record<string, string>): string {
  const dir = tmpDir();
  for (const [rel, text] of Object.entries(files)) {
    fs.mkdirSync(path.dirname(path.join(dir, rel)), { recursive: true });
    fs.writeFileSync(path.join(dir, rel), text);
  }
  return dir;
}

const MM_SPEC = `// seeded saturating data
{
  "title": "three candidates",
  "data": { "file": "rate.csv", "x": "conc", "y": "rate" },
  "models": [
    { "name": "line", "builtin": "linear" },
    { "name": "mm", "builtin": "michaelis_menten" },
    { "name": "quad", "polynomial": 2 },
  ],
  "predict": [1, 50],
  "solveFor": [2.5],
  "output": "results/rate.fitresult.json",
  "expect": { "mm": { "Vmax": { "value": 5, "tol": 0.3 }, "Km": { "value": 2, "rel": 0.25 } } }
}
`;

describe('run: runSpecFile', function () {
  this.timeout(120000);
  let dir: string;
  let spec: string;
  before(() => {
    dir = workspace({ 'rate.csv': saturatingCsv(7), 'rate.fitspec.json': MM_SPEC });
    spec = path.join(dir, 'rate.fitspec.json');
  });

  it('fits a three-model spec on data from a known model and the comparison picks that model', async () => {
    const r = asReport(await runSpecFile(spec, { workspaceRoot: dir }));
    assert.equal(r.version, 1);
    assert.equal(r.spec, 'rate.fitspec.json');
    assert.equal(r.best, 'mm');
    assert.equal(r.comparison?.best, 'mm');
    assert.equal(r.comparison?.ranking.length, 3);
    assert.equal(r.comparison?.ranking[0].name, 'mm');
    const mm = r.models.find(m => m.name === 'mm')!;
    assert.equal(mm.status, 'converged');
    for (const [name, truth] of [['Vmax', 5], ['Km', 2]] as const) {
      const p = mm.params[name];
      assert.ok(p.se !== null && p.se > 0, `${name} has a standard error`);
      // honest uncertainty: the truth lies within 4 standard errors of the estimate
      assert.ok(Math.abs(p.value - truth) < 4 * p.se!, `${name} = ${p.value} ± ${p.se} vs truth ${truth}`);
      assert.ok(p.ci && p.ci[0]! < p.value && p.value < p.ci[1]!, `${name} Wald interval brackets the estimate`);
      assert.ok(p.profileCi && p.profileCi[0]! < p.value && p.value < p.profileCi[1]!, `${name} profile interval brackets the estimate`);
    }
    assert.equal(mm.stats.n, 24);
    assert.equal(mm.stats.dof, 22);
    assert.ok(mm.stats.r2! > 0.99 && mm.stats.aicc !== null);
    assert.ok(mm.residualTests && mm.residualTests.runs && mm.residualTests.normality);
    assert.equal(mm.predictions.length, 2);
    assert.equal(mm.predictions[1].extrapolated, true, 'x = 50 lies beyond the data');
    assert.equal(mm.inverse.length, 1);
    assert.ok(Math.abs(mm.inverse[0].roots[0].x - 2) < 0.5, 'y = 2.5 = Vmax/2 is reached near x = Km');
    assert.deepEqual(r.expect.map(e => [e.model, e.param, e.ok]), [['mm', 'Vmax', true], ['mm', 'Km', true]]);
    assert.equal(r.data.rows, 24);
    assert.equal(r.data.used, 24);
    assert.ok(r.data.correlation.x! > 0.7);
    assert.equal(r.meta.specHash, sha256(fs.readFileSync(spec, 'utf8')));
    assert.equal(r.meta.dataHash, 'sha256:' + fileHash(path.join(dir, 'rate.csv')));
    assert.equal(r.meta.seed, 1);
  });

  it('is deterministic: the same spec and data give byte-identical JSON and results files', async () => {
    const a = serializeReport(await runSpecFile(spec, { workspaceRoot: dir }));
    const b = serializeReport(await runSpecFile(spec, { workspaceRoot: dir }));
    assert.equal(a, b);
    const ra = asReport(await runSpecFile(spec, { workspaceRoot: dir }));
    const out = await writeResults(ra, spec, { workspaceRoot: dir });
    assert.equal(out, path.join(dir, 'results', 'rate.fitresult.json'));
    const first = fs.readFileSync(out!, 'utf8');
    fs.unlinkSync(out!);
    await writeResults(asReport(await runSpecFile(spec, { workspaceRoot: dir })), spec, { workspaceRoot: dir });
    assert.equal(fs.readFileSync(out!, 'utf8'), first);
    assert.ok(!/\/tmp\/|cw-run-/.test(first), 'no absolute path of this machine in the results file');
    assert.deepEqual(JSON.parse(first).models.map((m: { name: string }) => m.name), ['line', 'mm', 'quad']);
  });

  it('writes atomically: a failed write leaves the old file whole, no temporary file, and the data untouched', async () => {
    const data = path.join(dir, 'rate.csv');
    const before = fileHash(data);
    const r = asReport(await runSpecFile(spec, { workspaceRoot: dir }));
    const out = (await writeResults(r, spec, { workspaceRoot: dir }))!;
    const good = fs.readFileSync(out, 'utf8');
    const changed: FitReport = { ...r, title: 'changed' };
    const original = fsp.writeFile;
    (fsp as { writeFile: unknown }).writeFile = async (file: string, text: string) => {
      await original(file, text.slice(0, 100)); // half a file, then the disk "fills"
      throw new Error('ENOSPC: no space left on device');
    };
    try {
      await assert.rejects(writeResults(changed, spec, { workspaceRoot: dir }), /cannot write the results file .*no space left/);
    } finally {
      (fsp as { writeFile: unknown }).writeFile = original;
    }
    assert.equal(fs.readFileSync(out, 'utf8'), good, 'the previous results file is intact');
    assert.deepEqual(fs.readdirSync(path.dirname(out)).filter(f => f.includes('curvewright-tmp')), [], 'no temporary file left');
    await writeResults(changed, spec, { workspaceRoot: dir });
    assert.equal(JSON.parse(fs.readFileSync(out, 'utf8')).title, 'changed');
    assert.equal(fileHash(data), before, 'the data file is untouched');
  });

  it('serializes NaN and Infinity as null, typed arrays as arrays, with the report keys in a fixed order', () => {
    const text = serializeReport({
      expect: [],
      version: 1,
      spec: 's',
      extra: { a: NaN, b: -Infinity, c: new Float64Array([1.5, NaN]), d: -0 },
    } as unknown as RunResult);
    assert.equal(text, '{"version":1,"spec":"s","expect":[],"extra":{"a":null,"b":null,"c":[1.5,null],"d":0}}');
    // full precision: the shortest text that reads back as the same double
    assert.equal(JSON.parse(serializeReport({ version: 1, spec: 's', v: 0.1 + 0.2 } as unknown as RunResult)).v, 0.1 + 0.2);
  });

  it('reports unmet expectations with the actual value (absolute and relative tolerances)', async () => {
    const text = MM_SPEC.replace('"value": 5, "tol": 0.3', '"value": 6, "tol": 0.3').replace('"value": 2, "rel": 0.25', '"value": 2.1, "rel": 0.5');
    const r = asReport(await runSpecFile(spec, { workspaceRoot: dir, specText: text }));
    const [vmax, km] = r.expect;
    assert.equal(vmax.ok, false);
    assert.equal(vmax.tol, 0.3);
    assert.ok(Math.abs(vmax.actual! - 5) < 0.3);
    assert.equal(km.ok, true);
    assert.equal(km.rel, 0.5);
    assert.notEqual(r.meta.specHash, sha256(fs.readFileSync(spec, 'utf8')), 'specHash follows the text given');
  });

  it('reports progress per model, and a cancel ends the fits as "cancelled" instead of throwing', async () => {
    const notes: string[] = [];
    const r = asReport(await runSpecFile(spec, { workspaceRoot: dir, onProgress: m => notes.push(m), shouldStop: () => true }));
    assert.deepEqual(notes, ['reading rate.csv', 'fitting model 1 of 3: line', 'fitting model 2 of 3: mm', 'fitting model 3 of 3: quad']);
    const mm = r.models.find(m => m.name === 'mm')!;
    assert.equal(mm.status, 'failed');
    assert.equal(mm.termination, 'cancelled');
  });

  it('omits per-point arrays from results files above 10,000 rows', async () => {
    const big = tmpDir();
    const z = normalSource(mulberry32(3));
    const rows = ['x,y'];
    for (let i = 0; i <= MAX_POINTS_IN_FILE; i++) rows.push(`${i},${(1 + 2e-3 * i + 0.1 * z()).toFixed(4)}`);
    fs.writeFileSync(path.join(big, 'big.csv'), rows.join('\n') + '\n');
    fs.writeFileSync(path.join(big, 'big.fitspec.json'), '{ "data": { "file": "big.csv", "x": "x", "y": "y" }, "models": [{ "name": "line", "builtin": "linear" }], "output": "big.fitresult.json" }');
    const r = asReport(await runSpecFile(path.join(big, 'big.fitspec.json'), { workspaceRoot: big }));
    assert.equal(r.data.used, MAX_POINTS_IN_FILE + 1);
    assert.equal(r.models[0].points?.y.length, MAX_POINTS_IN_FILE + 1, 'points stay in memory');
    assert.equal(reportForFile(r).models[0].pointsOmitted, true);
    const out = await writeResults(r, path.join(big, 'big.fitspec.json'), { workspaceRoot: big });
    const saved = JSON.parse(fs.readFileSync(out!, 'utf8'));
    assert.equal(saved.models[0].pointsOmitted, true);
    assert.equal(saved.models[0].points, undefined);
    assert.ok(Math.abs(saved.models[0].params.slope.value - 2e-3) < 1e-4);
  });
});

describe('run: bad input becomes an ErrorReport, never an exception', function () {
  this.timeout(60000);
  const csv = saturatingCsv(7);
  const base = (over: string) => `{ "data": { "file": "rate.csv", "x": "conc", "y": "rate" }, "models": [{ "name": "mm", "builtin": "michaelis_menten" }]${over} }`;
  async function errorOf(specText: string, files: Record<string, string> = { 'rate.csv': csv }): Promise<ErrorReport> {
    const dir = workspace({ ...files, 's.fitspec.json': specText });
    const r = asError(await runSpecFile(path.join(dir, 's.fitspec.json'), { workspaceRoot: dir }));
    assert.equal(r.version, 1);
    assert.equal(r.spec, 's.fitspec.json');
    return r;
  }

  it('malformed JSON: located syntax error', async () => {
    const e = await errorOf('{ "data": { "file": "rate.csv", "x": "conc" "y": "rate" } }');
    assert.match(e.error.message, /expected ','/);
    assert.equal(e.error.location?.line, 1);
    assert.equal(typeof e.error.location?.column, 'number');
  });
  it('wrong column: names the column and suggests the right one', async () => {
    const e = await errorOf(base('').replace('"y": "rate"', '"y": "rat"'));
    assert.match(e.error.message, /'rat'.*not a column.*did you mean 'rate'/);
    assert.deepEqual(e.error.path, ['data', 'y']);
  });
  it('bad formula: names the model and the column in the formula', async () => {
    const e = await errorOf(base('').replace('"builtin": "michaelis_menten"', '"formula": "Vmax*x/(Km + x"'));
    assert.match(e.error.message, /model 'mm'.*column/);
    assert.deepEqual(e.error.path, ['models', 0, 'formula']);
  });
  it('impossible bounds (min > max)', async () => {
    const e = await errorOf(base('').replace('"builtin": "michaelis_menten"', '"builtin": "michaelis_menten", "params": { "Km": { "min": 5, "max": 1 } }'));
    assert.match(e.error.message, /min 5 is greater than max 1/);
    assert.deepEqual(e.error.path?.slice(0, 4), ['models', 0, 'params', 'Km']);
  });
  it('NaN cells with badRows "fail": names the file, line and column', async () => {
    const bad = csv.replace(/\n([^,\n]+),[^\n]+\n/, '\n$1,NaN\n');
    const e = await errorOf(base('').replace('"y": "rate"', '"y": "rate", "badRows": "fail"'), { 'rate.csv': bad });
    assert.match(e.error.message, /rate\.csv/);
    assert.match(e.error.message, /NaN/);
  });
  it('NaN cells by default: the row is dropped and reported, the fit runs', async () => {
    const bad = csv.replace(/\n([^,\n]+),[^\n]+\n/, '\n$1,NaN\n');
    const dir = workspace({ 'rate.csv': bad, 's.fitspec.json': base('') });
    const r = asReport(await runSpecFile(path.join(dir, 's.fitspec.json'), { workspaceRoot: dir }));
    assert.equal(r.data.dropped.length, 1);
    assert.equal(r.data.used, 23);
    assert.ok(r.problems.some(p => p.code === 'bad-cell' && /NaN/.test(p.message)));
  });
  it('a bad cell points at the data key that reads its column (data.y, data.x), not at the file', async () => {
    const badY = csv.replace(/\n([^,\n]+),[^\n]+\n/, '\n$1,NaN\n');
    const dirY = workspace({ 'rate.csv': badY, 's.fitspec.json': base('') });
    const ry = asReport(await runSpecFile(path.join(dirY, 's.fitspec.json'), { workspaceRoot: dirY }));
    const py = ry.problems.find(p => p.code === 'bad-cell');
    assert.ok(py, 'a bad-cell problem');
    assert.deepEqual(py!.path, ['data', 'y']);
    const badX = csv.replace(/\n[^,\n]+,([^\n]+)\n/, '\nOL,$1\n');
    const dirX = workspace({ 'rate.csv': badX, 's.fitspec.json': base('') });
    const rx = asReport(await runSpecFile(path.join(dirX, 's.fitspec.json'), { workspaceRoot: dirX }));
    const px = rx.problems.find(p => p.code === 'bad-cell');
    assert.ok(px, 'a bad-cell problem');
    assert.deepEqual(px!.path, ['data', 'x']);
  });
  it('empty CSV', async () => {
    const e = await errorOf(base(''), { 'rate.csv': '' });
    assert.match(e.error.message, /rate\.csv is empty/);
  });
  it('missing data file and missing spec file', async () => {
    const e = await errorOf(base(''), {});
    assert.match(e.error.message, /not found: rate\.csv/);
    const m = asError(await runSpecFile(path.join(tmpDir(), 'none.fitspec.json')));
    assert.match(m.error.message, /cannot read the spec none\.fitspec\.json: no such file/);
  });
  it('output escaping the workspace, or onto the data file', async () => {
    const e = await errorOf(base(', "output": "../../escaped.json"'));
    assert.match(e.error.message, /outside the workspace/);
    assert.deepEqual(e.error.path, ['output']);
    const d = await errorOf(base(', "output": "rate.csv"'));
    assert.match(d.error.message, /data file/);
  });
  it('writeResults refuses a path outside the workspace even for a report made elsewhere', async () => {
    const dir = workspace({ 'rate.csv': csv, 's.fitspec.json': base(', "output": "r.json"') });
    const r = asReport(await runSpecFile(path.join(dir, 's.fitspec.json'), { workspaceRoot: dir }));
    const inner = path.join(dir, 'sub');
    await assert.rejects(writeResults(r, path.join(dir, 's.fitspec.json'), { workspaceRoot: inner }), /outside the workspace/);
    assert.ok(!fs.existsSync(path.join(dir, 'r.json')));
  });
});

// The spec's outputPoints switch: "inline" results files stay byte-identical; "sidecar" moves every model's points
// and band to <output>.points.json (written before the results file, read back by readReport, checked for staleness);
// "omit" leaves them out. Behaviour tests on the demo workspace and seeded data (no reference values claimed).
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile, serializeReport, writeResults } from '../../src/engine/run';
import { isErrorReport, type FitReport } from '../../src/engine/report';
import { parseSpecText, validateSpec } from '../../src/engine/spec';
import { staleness } from '../../src/cli/check';
import { evaluate, readReport } from '../../src/lib';

const ROOT = path.resolve(__dirname, '..', '..');

function demoCopy(): string {
  const dir = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'cw-points-')));
  fs.cpSync(path.join(ROOT, 'examples'), dir, { recursive: true });
  return dir;
}

async function fitAndWrite(dir: string, spec: string): Promise<FitReport> {
  const file = path.join(dir, spec);
  const r = await runSpecFile(file, { workspaceRoot: dir });
  assert.ok(!isErrorReport(r), JSON.stringify(r));
  await writeResults(r, file, { workspaceRoot: dir });
  return r;
}

function setMode(dir: string, spec: string, mode: string): void {
  const file = path.join(dir, spec);
  const text = fs.readFileSync(file, 'utf8');
  fs.writeFileSync(file, text.replace(/("output": "[^"]+")/, `$1, "outputPoints": "${mode}"`));
}

describe('outputPoints: where the per-point arrays and bands go', function () {
  this.timeout(120000);

  it('inline (the default): the demo results files are byte-identical to the committed ones', async () => {
    const dir = demoCopy();
    await fitAndWrite(dir, 'thermistor.fitspec.json');
    assert.equal(fs.readFileSync(path.join(dir, 'results', 'thermistor.fitresult.json'), 'utf8'), fs.readFileSync(path.join(ROOT, 'examples', 'results', 'thermistor.fitresult.json'), 'utf8'));
    assert.ok(!fs.existsSync(path.join(dir, 'results', 'thermistor.fitresult.points.json')));
  });

  it('sidecar: the results file names its points file, which readReport joins back to the inline report', async () => {
    const dir = demoCopy();
    setMode(dir, 'growth-reactor1.fitspec.json', 'sidecar');
    const report = await fitAndWrite(dir, 'growth-reactor1.fitspec.json');
    const mainFile = path.join(dir, 'results', 'growth-reactor1.fitresult.json');
    const main = JSON.parse(fs.readFileSync(mainFile, 'utf8')) as FitReport;
    assert.equal(main.pointsFile, 'growth-reactor1.fitresult.points.json');
    for (const m of main.models) {
      assert.equal(m.points, undefined);
      assert.equal(m.band, null);
      assert.equal(m.pointsOmitted, true);
      assert.equal(m.bandOmitted, true);
    }
    const side = JSON.parse(fs.readFileSync(path.join(dir, 'results', main.pointsFile!), 'utf8'));
    assert.equal(side.kind, 'curvewright-points');
    assert.deepEqual(side.meta, report.meta);
    const back = readReport(mainFile);
    const inline = JSON.parse(serializeReport(report)) as FitReport;
    assert.deepEqual(back, { ...inline, pointsFile: main.pointsFile });
    assert.deepEqual(evaluate(back, 'logistic', [5, 10], { band: true }), evaluate(inline, 'logistic', [5, 10], { band: true }));
    // the main file is what reviewers read: smaller, and it still validates against the schema (readReport did)
    const inlineText = serializeReport(report, { pretty: true });
    assert.ok(fs.statSync(mainFile).size < 0.6 * inlineText.length, `${fs.statSync(mainFile).size} vs ${inlineText.length} bytes`);
  });

  it('sidecar: a points file of another run is stale for check and an error for readReport; a missing one is neither', async () => {
    const dir = demoCopy();
    setMode(dir, 'growth-reactor1.fitspec.json', 'sidecar');
    const report = await fitAndWrite(dir, 'growth-reactor1.fitspec.json');
    const mainFile = path.join(dir, 'results', 'growth-reactor1.fitresult.json');
    const sideFile = path.join(dir, 'results', 'growth-reactor1.fitresult.points.json');
    assert.equal(await staleness(report, mainFile, 'results/g.json', 'g.fitspec.json'), null);
    const side = JSON.parse(fs.readFileSync(sideFile, 'utf8'));
    side.meta.dataHash = 'sha256:0';
    fs.writeFileSync(sideFile, JSON.stringify(side));
    assert.match((await staleness(report, mainFile, 'results/g.json', 'g.fitspec.json'))!, /points file growth-reactor1\.fitresult\.points\.json beside results\/g\.json is stale: it was written for another run/);
    assert.throws(() => readReport(mainFile), /does not belong to .*written for another run/);
    fs.unlinkSync(sideFile);
    assert.equal(await staleness(report, mainFile, 'results/g.json', 'g.fitspec.json'), null);
    assert.equal(readReport(mainFile).models[0].pointsOmitted, true);
  });

  it('omit: no points file, the arrays left out and flagged', async () => {
    const dir = demoCopy();
    setMode(dir, 'thermistor.fitspec.json', 'omit');
    await fitAndWrite(dir, 'thermistor.fitspec.json');
    const main = readReport(path.join(dir, 'results', 'thermistor.fitresult.json'));
    assert.equal(main.pointsFile, undefined);
    assert.ok(main.models.every(m => m.points === undefined && m.pointsOmitted && m.bandOmitted && m.band === null));
    assert.deepEqual(fs.readdirSync(path.join(dir, 'results')).filter(f => f.includes('points')), []);
  });

  it('numbers are written in the shortest form that reads back to the same double', async () => {
    const dir = demoCopy();
    const report = await fitAndWrite(dir, 'capacity-fade.fitspec.json');
    const text = fs.readFileSync(path.join(dir, 'results', 'capacity-fade.fitresult.json'), 'utf8');
    const tokens = text.replace(/"(?:[^"\\]|\\.)*"/g, '""').match(/-?\d+(?:\.\d+)?(?:[eE][-+]?\d+)?(?=[,\]\s}])/g)!;
    assert.ok(tokens.length > 1000, `${tokens.length} numbers`);
    for (const t of tokens) assert.equal(String(Number(t)), t, `'${t}' is not the shortest round-trip form`);
    // and every finite number of the report reads back exactly
    const walk = (a: unknown, b: unknown, at: string): void => {
      if (typeof a === 'number') { assert.ok(Number.isFinite(a) ? Object.is(a === 0 ? 0 : a, b) : b === null, at); return; }
      if (ArrayBuffer.isView(a)) return walk(Array.from(a as unknown as ArrayLike<number>), b, at);
      if (a && typeof a === 'object') for (const [k, v] of Object.entries(a)) if (v !== undefined) walk(v, (b as Record<string, unknown>)[k], `${at}.${k}`);
    };
    walk(report, JSON.parse(text), 'report');
  });

  it('a misspelt value is a spec error with a did-you-mean', () => {
    const text = '{ "data": { "file": "d.csv", "x": "a", "y": "b" }, "models": [{ "name": "l", "builtin": "linear" }], "outputPoints": "sidecars" }';
    const raw = parseSpecText(text, 's.fitspec.json').raw;
    const v = validateSpec(raw, { file: path.join(os.tmpdir(), 's.fitspec.json'), text });
    const p = v.problems.find(x => x.path.join('.') === 'outputPoints');
    assert.ok(p, JSON.stringify(v.problems));
    assert.equal(p.severity, 'error');
    assert.match(p.message, /outputPoints must be one of "inline", "sidecar", "omit".*did you mean 'sidecar'\?/);
  });
});

// Calibration read-outs through the spec and the function the CLI calls: dilution, flags in words, controls' and
// standards' recovery with pass/fail, limits on a curve, and the CSV export (atomic, quoted, never over a foreign file).
// The reference figures (R, Miller & Miller) are in test/reference/r-calibration.test.ts.
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile, serializeReport, writeResults, OutputError } from '../../src/engine/run';
import { READOUTS_HEADER } from '../../src/engine/calibration';
import type { FitReport } from '../../src/engine/report';
import { asReport } from './reports';
import { calibrationHtml } from '../../src/shared/html';
import { fieller } from '../../src/engine/stats/calibrationPotency';
import { staleness } from '../../src/cli/check';

// a 4PL with lower 0.1, upper 2.0, ec50 5, slope 1.2 at 8 levels in duplicate, with small fixed deviations
const f4 = (x: number) => 0.1 + 1.9 / (1 + (5 / x) ** 1.2);
const LEVELS = [0.2, 0.5, 1, 2, 5, 10, 25, 60];
const DEV = [0.012, -0.009, 0.004, -0.011, 0.008, -0.006, 0.01, -0.003, -0.007, 0.009, 0.002, -0.012, 0.006, -0.004, 0.011, -0.008];
const STANDARDS = 'conc,signal\n' + LEVELS.flatMap((x, k) => [0, 1].map((r) => `${x},${(f4(x) + DEV[2 * k + r]).toFixed(4)}`)).join('\n') + '\n';
const MODEL = { name: '4PL', builtin: 'logistic4', params: { slope: { min: 0 } } };

function workspace(files: Record<string, string>): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-cal-'));
  for (const [k, v] of Object.entries(files)) {
    fs.mkdirSync(path.dirname(path.join(dir, k)), { recursive: true });
    fs.writeFileSync(path.join(dir, k), v);
  }
  return dir;
}

async function run(dir: string, spec: Record<string, unknown>): Promise<FitReport> {
  fs.writeFileSync(path.join(dir, 'a.fitspec.json'), JSON.stringify({ data: { file: 'std.csv', x: 'conc', y: 'signal' }, models: [MODEL], ...spec }));
  return asReport(await runSpecFile(path.join(dir, 'a.fitspec.json'), { workspaceRoot: dir }));
}

const PLATE = [
  'sample,reading,dilution,nominal',
  `S1,${f4(3).toFixed(4)},1,`,
  `S1,${(f4(3) + 0.01).toFixed(4)},1,`,
  `S2,${f4(3).toFixed(4)},10,`, // same reading, diluted tenfold
  'HIGH,2.30,1,', // above the upper asymptote: no finite value
  'LOW,0.02,1,', // below the lower asymptote
  `EXTRA,${f4(90).toFixed(4)},1,`, // past the highest standard, still under the asymptote
  `QC1,${f4(4).toFixed(4)},1,4`,
  `QC1,${f4(4).toFixed(4)},1,4`,
  `QC2,${f4(8).toFixed(4)},1,4`, // recovers about 200 %: fails 80–120
  'BLK,0.101,1,',
  'BLK,0.094,1,',
  'BLK,0.108,1,',
].join('\n') + '\n';

describe('calibration read-outs', function () {
  this.timeout(60000);
  let dir: string;
  let report: FitReport;
  before(async () => {
    dir = workspace({ 'std.csv': STANDARDS, 'plate.csv': PLATE });
    report = await run(dir, {
      unknowns: { file: 'plate.csv', id: 'sample', y: 'reading', dilution: 'dilution', output: 'out/readouts.csv' },
      controls: { nominal: 'nominal', accept: [80, 120], acceptStandards: [85, 115] },
      limits: { sigma: 'blanks', blanks: 'BLK' },
    });
  });

  it('averages replicates of an id, keeps controls and blanks out of the unknowns, in order of appearance', () => {
    const ids = report.unknowns!.results.map((u) => u.id);
    assert.deepEqual(ids, ['S1', 'S2', 'HIGH', 'LOW', 'EXTRA']);
    const s1 = report.unknowns!.results[0];
    assert.equal(s1.m, 2);
    assert.deepEqual(s1.rows, [1, 2]);
    assert.ok(Math.abs(s1.meanY - (f4(3) + 0.005)) < 1e-4);
    assert.ok(s1.sdY! > 0);
    assert.ok(Math.abs(s1.x! - 3) < 0.15, String(s1.x));
    assert.deepEqual(s1.flags, []);
    assert.equal(report.unknowns!.modelFrom, 'best');
  });

  it('applies the dilution to the value and its interval, not to x', () => {
    const [, s2] = report.unknowns!.results;
    assert.equal(s2.dilution, 10);
    assert.equal(s2.value, s2.x! * 10);
    assert.deepEqual(s2.valueInterval, [s2.interval![0]! * 10, s2.interval![1]! * 10]);
    // one reading: a wider interval than S1's mean of two at about the same reading
    const s1 = report.unknowns!.results[0];
    assert.ok(s2.interval![1]! - s2.interval![0]! > s1.interval![1]! - s1.interval![0]!);
  });

  it('flags readings beyond the curve and past the standards, in words', () => {
    const by = Object.fromEntries(report.unknowns!.results.map((u) => [u.id, u]));
    assert.equal(by.HIGH.x, null);
    assert.equal(by.HIGH.value, null);
    assert.deepEqual(by.HIGH.flags.map((f) => f.kind), ['above-curve']);
    assert.match(by.HIGH.flags[0].message, /no finite value — dilute the sample/);
    assert.deepEqual(by.LOW.flags.map((f) => f.kind), ['below-curve']);
    assert.ok(by.EXTRA.flags.some((f) => f.kind === 'above-range'), JSON.stringify(by.EXTRA.flags));
    assert.match(by.EXTRA.flags.find((f) => f.kind === 'above-range')!.message, /above the highest standard \(60\)/);
    const p = report.problems.find((q) => q.code === 'unknown-flagged')!;
    assert.equal(p.severity, 'info');
    assert.match(p.message, /3 of 5 unknowns/);
  });

  it('controls: recovery with its interval, pass/fail against accept, and an error problem for a failed control', () => {
    const c = report.controls!;
    assert.deepEqual(c.results.map((r) => r.id), ['QC1', 'QC2']);
    const [q1, q2] = c.results;
    assert.ok(Math.abs(q1.recovery! - 100) < 5, String(q1.recovery));
    assert.equal(q1.pass, true);
    assert.ok(q1.recoveryInterval![0]! < q1.recovery! && q1.recovery! < q1.recoveryInterval![1]!);
    assert.ok(q2.recovery! > 150);
    assert.equal(q2.pass, false);
    assert.equal(c.pass, false);
    const p = report.problems.find((x) => x.code === 'control-failed')!;
    assert.equal(p.severity, 'error');
    assert.match(p.message, /QC2: \d+(\.\d+)? %/);
  });

  it('standards back-calculate near 100 % of nominal', () => {
    const s = report.controls!.standards;
    assert.deepEqual(s.map((x) => x.x), LEVELS);
    for (const level of s) {
      assert.equal(level.m, 2);
      assert.ok(Math.abs(level.recovery! - 100) < 15, `${level.x}: ${level.recovery}`);
    }
  });

  it('limits on a curve: the x where the curve leaves the blank by 3.3σ and 10σ, and Hubaux–Vos', () => {
    const L = report.limits!;
    assert.equal(L.convention, 'response');
    assert.equal(L.sigma.from, 'blanks');
    assert.equal(L.sigma.n, 3);
    const b = [0.101, 0.094, 0.108];
    const mu = (b[0] + b[1] + b[2]) / 3;
    const sd = Math.sqrt(b.reduce((a, v) => a + (v - mu) ** 2, 0) / 2);
    assert.ok(Math.abs(L.sigma.value! - sd) < 1e-15);
    assert.ok(Math.abs(L.blank.y! - mu) < 1e-15);
    const m = report.models[0].params;
    const fit = (x: number) => m.lower.value + (m.upper.value - m.lower.value) / (1 + (m.ec50.value / x) ** m.slope.value);
    assert.ok(Math.abs(fit(L.lod!) - (mu + 3.3 * sd)) < 1e-9, `f(LOD) ${fit(L.lod!)}`);
    assert.ok(Math.abs(fit(L.loq!) - (mu + 10 * sd)) < 1e-9, `f(LOQ) ${fit(L.loq!)}`);
    assert.ok(L.loq! > L.lod!);
    assert.ok(L.detection.x! > 0 && L.detection.decisionY! > mu);
    assert.match(L.note, /local regulations/);
  });

  it('writes the CSV export atomically, quoted, with its own header; leaves an identical file untouched', async () => {
    const specPath = path.join(dir, 'a.fitspec.json');
    await writeResults(report, specPath, { workspaceRoot: dir });
    const file = path.join(dir, 'out', 'readouts.csv');
    const text = fs.readFileSync(file, 'utf8');
    const lines = text.trimEnd().split('\n');
    assert.equal(lines[0], READOUTS_HEADER);
    assert.equal(lines.length, 1 + 5 + 2);
    assert.match(lines[1], /^unknown,S1,2,/);
    assert.match(lines[7], /^control,QC2,.*,fail,$/);
    assert.match(lines[3], /^unknown,HIGH,1,2\.3,,,,,1,,,,,,,,,the reading 2\.3 is beyond what the curve reaches/); // no value: empty cells
    assert.deepEqual(fs.readdirSync(path.join(dir, 'out')), ['readouts.csv']); // no temporary left
    const before = fs.statSync(file).mtimeMs;
    await new Promise((r) => setTimeout(r, 20));
    await writeResults(report, specPath, { workspaceRoot: dir });
    assert.equal(fs.statSync(file).mtimeMs, before);
  });

  it('refuses to replace a CSV it did not write, and leaves it as it was', async () => {
    const d2 = workspace({ 'std.csv': STANDARDS, 'plate.csv': PLATE, 'mine.csv': 'a,b\n1,2\n' });
    const r = await run(d2, { unknowns: { file: 'plate.csv', id: 'sample', y: 'reading', output: 'mine.csv' } });
    await assert.rejects(writeResults(r, path.join(d2, 'a.fitspec.json'), { workspaceRoot: d2 }), (e: unknown) => e instanceof OutputError && /unknowns\.output.*not a Curvewright table/.test((e as Error).message));
    assert.equal(fs.readFileSync(path.join(d2, 'mine.csv'), 'utf8'), 'a,b\n1,2\n');
  });

  it('a cell a spreadsheet would run as a formula is written as text', async () => {
    const d3 = workspace({ 'std.csv': STANDARDS, 'u.csv': `sample,reading\n"=cmd|x,y",${f4(3).toFixed(4)}\n` });
    const r = await run(d3, { unknowns: { file: 'u.csv', id: 'sample', y: 'reading', output: 'r.csv' } });
    await writeResults(r, path.join(d3, 'a.fitspec.json'), { workspaceRoot: d3 });
    assert.match(fs.readFileSync(path.join(d3, 'r.csv'), 'utf8').split('\n')[1], /^unknown,"'=cmd\|x,y",1,/);
  });

  it('the HTML report section lists every read-out, with the ids escaped', async () => {
    const d4 = workspace({ 'std.csv': STANDARDS, 'u.csv': `sample,reading\n<img src=x onerror=alert(1)>,${f4(3).toFixed(4)}\n` });
    const r = await run(d4, { unknowns: { file: 'u.csv', id: 'sample', y: 'reading' } });
    const html = calibrationHtml(r);
    assert.ok(!html.includes('<img'), html);
    assert.match(html, /&lt;img src=x onerror=alert\(1\)&gt;/);
    const full = calibrationHtml(report);
    for (const id of ['S1', 'S2', 'HIGH', 'LOW', 'EXTRA', 'QC1', 'QC2']) assert.match(full, new RegExp(`<td>${id}</td>`));
    assert.match(full, /Limits \(model 4PL\)/);
    assert.equal(calibrationHtml(await run(dir, {})), '');
  });

  it('is deterministic: the same spec and files give the same report', async () => {
    const again = await run(dir, {
      unknowns: { file: 'plate.csv', id: 'sample', y: 'reading', dilution: 'dilution', output: 'out/readouts.csv' },
      controls: { nominal: 'nominal', accept: [80, 120], acceptStandards: [85, 115] },
      limits: { sigma: 'blanks', blanks: 'BLK' },
    });
    assert.equal(serializeReport(again), serializeReport(report));
  });

  it('check sees results go stale when the unknowns file changes (meta.readingsHash)', async () => {
    const d5 = workspace({ 'std.csv': STANDARDS, 'u.csv': `sample,reading\nA,${f4(3).toFixed(4)}\n` });
    const spec = { unknowns: { file: 'u.csv', id: 'sample', y: 'reading' }, output: 'r.json' };
    const first = await run(d5, spec);
    assert.match(first.meta.readingsHash!, /^sha256:[0-9a-f]{64}$/);
    await writeResults(first, path.join(d5, 'a.fitspec.json'), { workspaceRoot: d5 });
    const out = path.join(d5, 'r.json');
    assert.equal(await staleness(await run(d5, spec), out, 'r.json', 'a.fitspec.json'), null);
    fs.writeFileSync(path.join(d5, 'u.csv'), `sample,reading\nA,${f4(4).toFixed(4)}\n`);
    assert.match((await staleness(await run(d5, spec), out, 'r.json', 'a.fitspec.json'))!, /stale: the unknowns or controls file changed/);
  });

  it('a spec without the blocks has no calibration keys (existing reports unchanged)', async () => {
    const r = await run(dir, {});
    assert.ok(!('unknowns' in r) && !('controls' in r) && !('limits' in r) && !('readingsHash' in r.meta));
  });
});

describe('back on the original scale', function () {
  this.timeout(60000);
  const X = [1, 2, 3, 4, 5, 6, 7, 8];
  const D = [0.01, -0.008, 0.004, -0.012, 0.009, -0.003, 0.006, -0.005];

  it('data.y = log10(signal): predictions and band also as signal, each interval end back-transformed, labelled', async () => {
    const csv = 'x,signal\n' + X.map((x, i) => `${x},${(10 ** (0.5 + 0.2 * x + D[i])).toFixed(5)}`).join('\n') + '\n';
    const dir = workspace({ 'd.csv': csv });
    fs.writeFileSync(path.join(dir, 'a.fitspec.json'), JSON.stringify({ data: { file: 'd.csv', x: 'x', y: 'log10(signal)' }, models: [{ name: 'line', builtin: 'linear' }], predict: [2, 5] }));
    const r = asReport(await runSpecFile(path.join(dir, 'a.fitspec.json'), { workspaceRoot: dir }));
    const m = r.models[0];
    const o = m.originalScale!;
    assert.equal(o.column, 'signal');
    assert.equal(o.transform, 'log10');
    assert.match(o.note, /signal = 10\^\(log10\(signal\)\).*median/);
    m.predictions.forEach((p, k) => {
      assert.equal(o.predictions[k].y, 10 ** p.y!);
      assert.deepEqual(o.predictions[k].ci, [10 ** p.ci![0], 10 ** p.ci![1]]);
      assert.deepEqual(o.predictions[k].pi, [10 ** p.pi![0], 10 ** p.pi![1]]);
    });
    assert.deepEqual(o.band!.x, m.band!.x);
    assert.deepEqual(o.band!.piHigh, m.band!.piHigh.map((v) => 10 ** v));
    // not a transform of one column: no original scale (e.g. the thermistor's temp_c + 273.15)
    fs.writeFileSync(path.join(dir, 'b.fitspec.json'), JSON.stringify({ data: { file: 'd.csv', x: 'x', y: 'signal + 1' }, models: [{ name: 'line', builtin: 'linear' }] }));
    const plain = asReport(await runSpecFile(path.join(dir, 'b.fitspec.json'), { workspaceRoot: dir }));
    assert.ok(!('originalScale' in plain.models[0]));
  });

  it('sqrt: a negative interval end maps to 0, not to its square', async () => {
    const csv = 'x,count\n' + X.map((x, i) => `${x},${((0.1 * x + D[i] * 20) ** 2).toFixed(5)}`).join('\n') + '\n';
    const dir = workspace({ 'd.csv': csv });
    fs.writeFileSync(path.join(dir, 'a.fitspec.json'), JSON.stringify({ data: { file: 'd.csv', x: 'x', y: 'sqrt(count)' }, models: [{ name: 'line', builtin: 'linear' }], predict: [0] }));
    const r = asReport(await runSpecFile(path.join(dir, 'a.fitspec.json'), { workspaceRoot: dir }));
    const p = r.models[0].predictions[0];
    const o = r.models[0].originalScale!.predictions[0];
    assert.ok(p.pi![0] < 0, String(p.pi));
    assert.equal(o.pi![0], 0);
    assert.equal(o.pi![1], p.pi![1] ** 2);
  });

  it('data.x = log10(conc): unknowns and standards read back as conc, the dilution applied to conc', async () => {
    const conc = [0.5, 1, 2, 5, 10, 20, 50, 100];
    const csv = 'conc,signal\n' + conc.map((c, i) => `${c},${(0.3 + 0.8 * Math.log10(c) + D[i]).toFixed(5)}`).join('\n') + '\n';
    const dir = workspace({ 'd.csv': csv, 'u.csv': `sample,signal,dilution,nominal\nA,${(0.3 + 0.8 * Math.log10(8)).toFixed(5)},4,\n` });
    fs.writeFileSync(path.join(dir, 'a.fitspec.json'), JSON.stringify({
      data: { file: 'd.csv', x: 'log10(conc)', y: 'signal' }, models: [{ name: 'line', builtin: 'linear' }],
      unknowns: { file: 'u.csv', id: 'sample', dilution: 'dilution' }, controls: { nominal: 'nominal' },
    }));
    const r = asReport(await runSpecFile(path.join(dir, 'a.fitspec.json'), { workspaceRoot: dir }));
    const u = r.unknowns!.results[0];
    assert.equal(u.xOriginal!.column, 'conc');
    assert.equal(u.xOriginal!.x, 10 ** u.x!);
    assert.ok(Math.abs(u.xOriginal!.x! - 8) < 0.3, String(u.xOriginal!.x));
    assert.equal(u.value, u.xOriginal!.x! * 4);
    assert.deepEqual(u.valueInterval, [10 ** u.interval![0]! * 4, 10 ** u.interval![1]! * 4]);
    for (const s of r.controls!.standards) assert.ok(Math.abs(s.recovery! - 100) < 6, `${s.x}: ${s.recovery}`);
    // limits need x on its own scale
    fs.writeFileSync(path.join(dir, 'b.fitspec.json'), JSON.stringify({ data: { file: 'd.csv', x: 'log10(conc)', y: 'signal' }, models: [{ name: 'line', builtin: 'linear' }], limits: {} }));
    const bad = await runSpecFile(path.join(dir, 'b.fitspec.json'), { workspaceRoot: dir });
    assert.ok('error' in bad && /limits need x on its own scale/.test(bad.error.message) && JSON.stringify(bad.error.path) === '["limits"]');
  });
});

describe('relative potency and parallelism', function () {
  this.timeout(60000);
  const curve = (x: number, ec50: number, slope: number, upper = 1.9) => 0.1 + (upper - 0.1) / (1 + (ec50 / x) ** slope);
  const DOSES = [0.3, 1, 3, 10, 30, 100, 300];
  const DV = [0.008, -0.011, 0.005, -0.004, 0.012, -0.007, 0.003, -0.009, 0.006, -0.002, 0.01, -0.006, 0.004, -0.008];
  async function lots(test: { ec50: number; slope: number; upper?: number }, margin: unknown = { slope: [0.8, 1.25], span: [0.8, 1.25] }) {
    let k = 0;
    const rows = ['lot,dose,resp'];
    for (const [lot, e, s, u] of [['REF', 5, 1.2, 1.9], ['NEW', test.ec50, test.slope, test.upper ?? 1.9]] as [string, number, number, number][])
      for (const x of DOSES) for (let r = 0; r < 2; r++) rows.push(`${lot},${x},${(curve(x, e, s, u) + DV[k++ % DV.length]).toFixed(5)}`);
    const dir = workspace({ 'l.csv': rows.join('\n') + '\n' });
    fs.writeFileSync(path.join(dir, 'a.fitspec.json'), JSON.stringify({
      data: { file: 'l.csv', x: 'dose', y: 'resp', groupBy: 'lot' },
      models: [{ name: '4PL', builtin: 'logistic4', params: { slope: { min: 0 } } }, { name: 'par', builtin: 'logistic4', params: { slope: { min: 0 } }, shared: ['lower', 'upper', 'slope'] }],
      potency: { reference: 'REF', ...(margin ? { margin } : {}) },
    }));
    return asReport(await runSpecFile(path.join(dir, 'a.fitspec.json'), { workspaceRoot: dir }));
  }

  it('parallel lots: potency near the true ratio, inside its interval, equivalent', async () => {
    const r = await lots({ ec50: 2.5, slope: 1.2 });
    const x = r.potency!.results[0];
    assert.equal(x.test, 'NEW');
    assert.ok(Math.abs(x.ratio! - 2) < 0.1, String(x.ratio));
    assert.ok(x.interval![0]! < x.ratio! && x.ratio! < x.interval![1]!);
    assert.equal(x.parallelism!.verdict, 'equivalent');
    assert.match(r.potency!.note, /Read the equivalence check/);
  });

  it('slopes far apart: not equivalent, whatever the F-test says', async () => {
    const r = await lots({ ec50: 5, slope: 2.4 });
    const q = r.potency!.results[0].parallelism!;
    assert.ok(q.slopeRatio.value > 1.6, String(q.slopeRatio.value));
    assert.equal(q.verdict, 'not-equivalent');
  });

  it('no margin: ratios and intervals, but no verdict', async () => {
    const r = await lots({ ec50: 2.5, slope: 1.2 }, null);
    assert.equal(r.potency!.results[0].parallelism!.verdict, null);
    assert.match(r.potency!.note, /no margin given/);
  });

  it('Fieller: unbounded when the denominator is not significantly different from 0; the closed form at its edges', async () => {
    assert.deepEqual(fieller(1, 0.1, 0.01, 0.01, 0, 2), [null, null]); // g = t²·vb/b² = 4 ≥ 1
    // zero variances: the interval collapses onto the ratio
    assert.deepEqual(fieller(3, 2, 0, 0, 0, 2), [1.5, 1.5]);
    // the ends satisfy (a − ρb)² = t²(va − 2ρc + ρ²vb)
    const [lo, hi] = fieller(3, 2, 0.04, 0.03, 0.01, 2.1) as [number, number];
    for (const r of [lo, hi]) assert.ok(Math.abs((3 - r * 2) ** 2 - 2.1 ** 2 * (0.04 - 2 * r * 0.01 + r * r * 0.03)) < 1e-12);
  });
});

describe('standards with data.count', () => {
  it('a row counted twice reads back exactly like the row written twice', async () => {
    const rows = STANDARDS.trim().split('\n').slice(1);
    const once = rows.filter((_, i) => i % 2 === 0); // one replicate per level
    const dirA = workspace({ 'std.csv': 'conc,signal,n\n' + once.map((r) => `${r},2`).join('\n') + '\n' });
    const dirB = workspace({ 'std.csv': 'conc,signal\n' + once.flatMap((r) => [r, r]).join('\n') + '\n' });
    const spec = (count: boolean) => ({ data: { file: 'std.csv', x: 'conc', y: 'signal', ...(count ? { count: 'n' } : {}) }, models: [MODEL], controls: { nominal: 'x' } });
    fs.writeFileSync(path.join(dirA, 'a.fitspec.json'), JSON.stringify(spec(true)));
    fs.writeFileSync(path.join(dirB, 'a.fitspec.json'), JSON.stringify(spec(false)));
    const a = asReport(await runSpecFile(path.join(dirA, 'a.fitspec.json'), { workspaceRoot: dirA })).controls!.standards;
    const b = asReport(await runSpecFile(path.join(dirB, 'a.fitspec.json'), { workspaceRoot: dirB })).controls!.standards;
    assert.equal(a.length, b.length);
    a.forEach((s, k) => {
      assert.equal(s.m, 2);
      assert.equal(s.m, b[k].m);
      assert.ok(Math.abs(s.back! - b[k].back!) <= 1e-9 * Math.abs(b[k].back!), `${s.x}: ${s.back} vs ${b[k].back}`);
      assert.ok(Math.abs(s.recovery! - b[k].recovery!) <= 1e-7, `${s.x}: ${s.recovery} vs ${b[k].recovery}`);
    });
  });
});

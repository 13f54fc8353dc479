// The data section of a FitReport: axis labels as the spec wrote them, and the straight-line hint
// (|r| of y with x at or above thresholds.linearHint, 0.7 by default — a rule of thumb, common practice, no source).
// Behaviour tests on our own seeded data; no reference values are claimed here.
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile } from '../../src/engine/run';
import { isErrorReport, type FitReport } from '../../src/engine/report';
import { mulberry32, normalSource } from '../../scripts/generate-demo';

function run(csv: string, spec: object): Promise<FitReport> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-datareport-'));
  fs.writeFileSync(path.join(dir, 'd.csv'), csv);
  fs.writeFileSync(path.join(dir, 's.fitspec.json'), JSON.stringify(spec));
  return runSpecFile(path.join(dir, 's.fitspec.json'), { workspaceRoot: dir }).then(r => {
    if (isErrorReport(r)) assert.fail(r.error.message);
    return r as FitReport;
  });
}

/** y = 3 + 2 t + N(0, 0.3²) over t = 1..20, seeded: strongly linear (r ≈ 1). */
function lineCsv(): string {
  const z = normalSource(mulberry32(11));
  const rows = ['time s,signal'];
  for (let t = 1; t <= 20; t++) rows.push(`${t},${(3 + 2 * t + 0.3 * z()).toFixed(4)}`);
  return rows.join('\n') + '\n';
}

describe('run: data report', () => {
  it('labels the axes with the columns and expressions the spec bound, without backtick quoting', async () => {
    const r = await run(lineCsv(), { data: { file: 'd.csv', x: '`time s`', y: 'log(signal)' }, models: [{ name: 'p2', polynomial: 2 }] });
    assert.deepEqual(r.data.labels, { x: { x: 'time s' }, y: 'log(signal)' });
  });

  it('hints at a straight line when y and x are strongly correlated and no line is in the spec', async () => {
    const r = await run(lineCsv(), { data: { file: 'd.csv', x: '`time s`', y: 'signal' }, models: [{ name: 'e', builtin: 'exponential' }] });
    assert.ok(r.data.correlation.x !== null && r.data.correlation.x > 0.99, `r = ${r.data.correlation.x}`);
    const hint = r.problems.find(p => p.code === 'linear-tendency');
    assert.ok(hint, 'expected a linear-tendency hint');
    assert.equal(hint.severity, 'info');
    assert.deepEqual(hint.path, ['data', 'x']);
    assert.match(hint.message, /straight line/);
  });

  it('stays silent when a line is already fitted, or when y does not follow x linearly', async () => {
    const withLine = await run(lineCsv(), { data: { file: 'd.csv', x: '`time s`', y: 'signal' }, models: [{ name: 'l', builtin: 'linear' }] });
    assert.equal(withLine.problems.filter(p => p.code === 'linear-tendency').length, 0);
    // a symmetric peak: r of y with x is near 0
    const rows = ['x,y'];
    for (let i = -10; i <= 10; i++) rows.push(`${i},${(Math.exp(-(i * i) / 20)).toFixed(6)}`);
    const peak = await run(rows.join('\n') + '\n', { data: { file: 'd.csv', x: 'x', y: 'y' }, models: [{ name: 'g', builtin: 'gaussian' }] });
    assert.ok(Math.abs(peak.data.correlation.x ?? 1) < 0.1);
    assert.equal(peak.problems.filter(p => p.code === 'linear-tendency').length, 0);
  });
});

// data.groupBy: one CSV, every model fitted to every group. Checked against the same fits done one group at a time
// with a text where filter (the numbers must be identical), and the bad-input paths (unknown column, bad ids, too
// many groups, too few rows). Behaviour tests on seeded synthetic data (no reference values claimed).
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile, serializeReport } from '../../src/engine/run';
import type { RunResult } from '../../src/engine/report';
import { mulberry32, normalSource } from '../../scripts/generate-demo';
import { summaryText } from '../../src/cli/format';
import { updateExpectText } from '../../src/cli/update';
import { asReport, asError } from './reports';


/** Logistic growth per reactor with seeded noise; reactors interleaved so that first appearance != sorted order. */
function reactorsCsv(): string {
  const rand = normalSource(mulberry32(11));
  const curves: Record<string, [number, number]> = { R2: [1.8, 0.35], R1: [2.0, 0.3], R3: [2.2, 0.25] };
  const lines = ['hours,od,reactor,run'];
  for (let h = 0; h <= 48; h += 2)
    for (const [r, [K, k]] of Object.entries(curves)) lines.push(`${h},${(K / (1 + Math.exp(-k * (h - 20))) + 0.02 * rand()).toFixed(5)},${r},${h < 24 ? 'a' : 'b'}`);
  lines.push('5,0.3,R9,a');
  return lines.join('\n') + '\n';
}

function workspace(files: Record<string, string>): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-groups-'));
  for (const [rel, text] of Object.entries(files)) fs.writeFileSync(path.join(dir, rel), text);
  return dir;
}

async function runIn(dir: string, spec: object): Promise<RunResult> {
  fs.writeFileSync(path.join(dir, 's.fitspec.json'), JSON.stringify(spec, null, 2));
  return runSpecFile(path.join(dir, 's.fitspec.json'), { workspaceRoot: dir });
}

const MODELS = [{ name: 'logistic', builtin: 'logistic3' }, { name: 'gompertz', builtin: 'gompertz' }];

describe('groups: data.groupBy', function () {
  this.timeout(120000);
  let dir: string;
  before(() => {
    dir = workspace({ 'r.csv': reactorsCsv() });
  });

  it('fits every model to every group, in order of first appearance, as one where-filtered spec per group would', async () => {
    const r = asReport(await runIn(dir, { data: { file: 'r.csv', x: 'hours', y: 'od', groupBy: 'reactor' }, models: MODELS }));
    assert.deepEqual(r.groups, [
      { id: 'R2', key: { reactor: 'R2' }, rows: 25, used: 25 },
      { id: 'R1', key: { reactor: 'R1' }, rows: 25, used: 25 },
      { id: 'R3', key: { reactor: 'R3' }, rows: 25, used: 25 },
      { id: 'R9', key: { reactor: 'R9' }, rows: 1, used: 1 },
    ]);
    assert.deepEqual(r.models.map((m) => `${m.group}:${m.name}`), ['R2:logistic', 'R2:gompertz', 'R1:logistic', 'R1:gompertz', 'R3:logistic', 'R3:gompertz', 'R9:logistic', 'R9:gompertz']);
    assert.equal(r.best, null);
    for (const id of ['R2', 'R1', 'R3']) {
      const one = asReport(await runIn(dir, { data: { file: 'r.csv', x: 'hours', y: 'od', where: `reactor == "${id}"` }, models: MODELS }));
      for (const m of one.models) {
        const g = r.models.find((x) => x.group === id && x.name === m.name)!;
        assert.deepEqual(g.params, m.params, `${id} ${m.name}`);
        assert.deepEqual(g.stats, m.stats);
        assert.deepEqual(g.points?.row, m.points?.row);
      }
      const c = r.comparison!.byGroup![id];
      assert.deepEqual(c, { ranking: one.comparison!.ranking, fTests: one.comparison!.fTests, best: one.comparison!.best, reason: one.comparison!.reason });
      assert.equal(c.best, one.best);
    }
  });

  it('a group with too few rows gets a problem naming the group; the others still fit', async () => {
    const r = asReport(await runIn(dir, { data: { file: 'r.csv', x: 'hours', y: 'od', groupBy: 'reactor' }, models: MODELS }));
    const r9 = r.models.filter((m) => m.group === 'R9');
    assert.equal(r9.length, 2);
    for (const m of r9) {
      assert.equal(m.status, 'failed');
      assert.equal(m.problems[0].code, 'group-too-few-rows');
      assert.equal(m.problems[0].group, 'R9');
      assert.match(m.problems[0].message, /group 'R9' has 1 row to fit, but model '\w+' estimates 3 parameters/);
    }
    assert.ok(r.models.filter((m) => m.group !== 'R9').every((m) => m.status === 'converged'));
    assert.equal(r.comparison!.byGroup!.R9.best, null);
  });

  it('several columns: ids joined by "/", keys per column; text where and expect per group', async () => {
    const r = asReport(await runIn(dir, {
      data: { file: 'r.csv', x: 'hours', y: 'od', groupBy: ['reactor', 'run'], where: 'reactor != "R9"' },
      models: [MODELS[0]],
      expect: { logistic: { 'K[R1/b]': { value: 2, tol: 0.05 }, 'x0[R1/b]': { value: 100, tol: 1 } } },
    }));
    assert.deepEqual(r.groups!.map((g) => g.id), ['R2/a', 'R1/a', 'R3/a', 'R2/b', 'R1/b', 'R3/b']);
    assert.deepEqual(r.groups![4].key, { reactor: 'R1', run: 'b' });
    assert.equal(r.groups!.reduce((s, g) => s + g.rows, 0), 75);
    assert.deepEqual(r.expect.map((e) => [e.group, e.param, e.ok]), [['R1/b', 'K', true], ['R1/b', 'x0', false]]);
    const text = summaryText(r, 's.fitspec.json', null);
    assert.match(text, /groups: 6 \(by reactor \/ run\)/);
    assert.match(text, /R1\/b\s+logistic\s+converged/);
    assert.match(text, /logistic\.x0\[R1\/b\] = 100/);
  });

  it('an expect naming a group that does not exist is an error problem (the check fails), with the groups listed', async () => {
    const r = asReport(await runIn(dir, { data: { file: 'r.csv', x: 'hours', y: 'od', groupBy: 'reactor' }, models: [MODELS[0]], expect: { logistic: { 'K[R4]': { value: 2, tol: 1 } } } }));
    const p = r.problems.find((q) => q.code === 'spec-expect')!;
    assert.equal(p.severity, 'error');
    assert.deepEqual(p.path, ['expect', 'logistic', 'K[R4]']);
    assert.match(p.message, /names group 'R4' in 'K\[R4\]', which is not a group of data.groupBy .*groups: R2, R1, R3, R9/);
    assert.deepEqual(r.expect.map((e) => e.ok), [false]);
  });

  it('is deterministic: the same spec gives byte-identical JSON', async () => {
    const spec = { data: { file: 'r.csv', x: 'hours', y: 'od', groupBy: 'reactor' }, models: MODELS };
    assert.equal(serializeReport(await runIn(dir, spec)), serializeReport(await runIn(dir, spec)));
  });

  it('a groupBy column that does not exist: did-you-mean', async () => {
    const e = asError(await runIn(dir, { data: { file: 'r.csv', x: 'hours', y: 'od', groupBy: 'reactr' }, models: [MODELS[0]] }));
    assert.match(e.error.message, /data.groupBy names 'reactr', which is not a column of r.csv — did you mean 'reactor'\?/);
    const t = asError(await runIn(dir, { data: { file: 'r.csv', x: 'hours', y: 'od', groupBy: [] }, models: [MODELS[0]] }));
    assert.match(t.error.message, /data.groupBy must be a column name, or a non-empty list/);
  });

  it('refuses group ids with "/", "[" or "]" and empty group cells, naming the line', async () => {
    const bad = workspace({ 'b.csv': 'x,y,g\n1,1,a\n2,2,a\n3,3,b/c\n' , 'e.csv': 'x,y,g\n1,1,a\n2,2,\n', 'k.csv': 'x,y,g\n1,1,w[1]\n' });
    const e = asError(await runIn(bad, { data: { file: 'b.csv', x: 'x', y: 'y', groupBy: 'g' }, models: [{ name: 'line', builtin: 'linear' }] }));
    assert.match(e.error.message, /b.csv line 4 \(data row 3\): the group value 'b\/c' of column 'g' contains '\/' .* e\.g\. 'b-c'/);
    assert.equal(e.error.location?.line, 4);
    const k = asError(await runIn(bad, { data: { file: 'k.csv', x: 'x', y: 'y', groupBy: 'g' }, models: [{ name: 'line', builtin: 'linear' }] }));
    assert.match(k.error.message, /contains '\['/);
    const m = asError(await runIn(bad, { data: { file: 'e.csv', x: 'x', y: 'y', groupBy: 'g' }, models: [{ name: 'line', builtin: 'linear' }] }));
    assert.match(m.error.message, /line 3 \(data row 2\): the group column 'g' is empty/);
  });

  it('10^5 groups of one row: a clear limit, quickly, nothing fitted', async () => {
    const lines = ['x,y,well'];
    for (let i = 0; i < 100000; i++) lines.push(`${i % 7},${i % 5},w${i}`);
    const big = workspace({ 'many.csv': lines.join('\n') + '\n' });
    const t0 = Date.now();
    const e = asError(await runIn(big, { data: { file: 'many.csv', x: 'x', y: 'y', groupBy: 'well' }, models: [{ name: 'line', builtin: 'linear' }] }));
    assert.match(e.error.message, /more than 20000 groups .*'w20000' at line 20002 .*check that 'well' names groups rather than single rows/);
    assert.ok(Date.now() - t0 < 60000); // generous: only guards against fitting 10^5 groups before refusing
  });
});

describe('groups: check --update', () => {
  it('updates a group pin "K[R1]" in place and leaves a plain key checked in every group alone', () => {
    const text = '{ "expect": { "m": { "K[R1]": { "value": 1, "tol": 0.1 }, "r": { "value": 5, "tol": 0.1 } } } }';
    const out = updateExpectText(text, [
      { model: 'm', group: 'R1', param: 'K', value: 1, tol: 0.1, actual: 2.04, ok: false },
      { model: 'm', group: 'R1', param: 'r', value: 5, tol: 0.1, actual: 3, ok: false },
      { model: 'm', group: 'R2', param: 'r', value: 5, tol: 0.1, actual: 4, ok: false },
    ]);
    assert.equal(out.text, '{ "expect": { "m": { "K[R1]": { "value": 2.04, "tol": 0.1 }, "r": { "value": 5, "tol": 0.1 } } } }');
    assert.equal(out.changed.length, 1);
  });
});

// models[].shared: one joint fit of all groups. Checked against the same model written by hand as one formula with
// 0/1 indicator columns in the CSV (estimates and SEs must agree), the nesting facts of the F-test (joint SSE at least
// the separate fits' SSE, df as parameter counts), and the spec errors. Seeded synthetic data (no reference claimed).
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile } from '../../src/engine/run';
import { isErrorReport, type FitReport, type RunResult } from '../../src/engine/report';
import { mulberry32, normalSource } from '../../scripts/generate-demo';
import { summaryText } from '../../src/cli/format';
import { tQuantile } from '../../src/engine/stats/distributions';

function csv(rates: number[]): string {
  const rand = normalSource(mulberry32(5));
  const Ks = [1.8, 2.0, 2.2];
  const lines = ['hours,od,reactor,i1,i2,i3'];
  for (let h = 0; h <= 48; h += 2)
    for (let g = 0; g < 3; g++) {
      const ind = [0, 0, 0];
      ind[g] = 1;
      lines.push(`${h},${(Ks[g] / (1 + Math.exp(-rates[g] * (h - 20))) + 0.02 * rand()).toFixed(5)},R${g + 1},${ind.join(',')}`);
    }
  return lines.join('\n') + '\n';
}

async function run(files: Record<string, string>, spec: object): Promise<RunResult> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-shared-'));
  for (const [rel, text] of Object.entries(files)) fs.writeFileSync(path.join(dir, rel), text);
  fs.writeFileSync(path.join(dir, 's.fitspec.json'), JSON.stringify(spec, null, 2));
  return runSpecFile(path.join(dir, 's.fitspec.json'), { workspaceRoot: dir });
}
const ok = (r: RunResult): FitReport => {
  if (isErrorReport(r)) assert.fail(r.error.message);
  return r as FitReport;
};

describe('models[].shared: joint fit of the groups', function () {
  this.timeout(60000);
  const data = { file: 'd.csv', x: 'hours', y: 'od', groupBy: 'reactor' };

  it('equals the hand-written indicator formula, reports K[<id>] and a group-null entry', async () => {
    const text = csv([0.3, 0.3, 0.3]);
    const grouped = ok(await run({ 'd.csv': text }, { data, models: [{ name: 'sep', builtin: 'logistic3' }, { name: 'common', builtin: 'logistic3', shared: ['r', 'x0'] }] }));
    const joint = grouped.models.filter(m => m.name === 'common');
    assert.equal(joint.length, 1);
    assert.equal(joint[0].group, null);
    assert.deepEqual(joint[0].shared, ['r', 'x0']);
    assert.deepEqual(joint[0].paramOrder, ['r', 'x0', 'K[R1]', 'K[R2]', 'K[R3]']);
    assert.equal(joint[0].status, 'converged');
    assert.equal(grouped.models.filter(m => m.name === 'sep').length, 3);
    const hand = ok(await run({ 'd.csv': text }, {
      data: { file: 'd.csv', x: { h: 'hours', i1: 'i1', i2: 'i2', i3: 'i3' }, y: 'od' },
      models: [{ name: 'hand', formula: '(K1*i1 + K2*i2 + K3*i3)/(1 + exp(-r*(h - x0)))', params: { K1: { start: 2 }, K2: { start: 2 }, K3: { start: 2 }, r: { start: 0.2 }, x0: { start: 15 } } }],
    }));
    const h = hand.models[0];
    const pairs: [string, string][] = [['K[R1]', 'K1'], ['K[R2]', 'K2'], ['K[R3]', 'K3'], ['r', 'r'], ['x0', 'x0']];
    for (const [a, b] of pairs) {
      const pa = joint[0].params[a];
      const pb = h.params[b];
      assert.ok(Math.abs(pa.value - pb.value) <= 1e-7 * Math.abs(pb.value), `${a}: ${pa.value} vs ${pb.value}`);
      assert.ok(Math.abs(pa.se! - pb.se!) <= 1e-5 * pb.se!, `${a} se: ${pa.se} vs ${pb.se}`);
      assert.ok(pa.profileCi && pa.profileCi[0] !== null, `${a} has a profile interval`);
    }
    assert.ok(Math.abs(joint[0].stats.sse - h.stats.sse) <= 1e-9 * h.stats.sse);
    assert.equal(joint[0].covariance!.length, 5);

    const s = grouped.comparison!.sharing!;
    assert.equal(s.length, 1);
    assert.equal(s[0].separate, 'sep');
    assert.equal(s[0].df1, 9 - 5);
    assert.equal(s[0].df2, grouped.models.filter(m => m.name === 'sep').reduce((a, m) => a + m.stats.dof, 0));
    const sseSep = grouped.models.filter(m => m.name === 'sep').reduce((a, m) => a + m.stats.sse, 0);
    assert.ok(joint[0].stats.sse >= sseSep * (1 - 1e-12));
    const F = ((joint[0].stats.sse - sseSep) / s[0].df1) / (sseSep / s[0].df2);
    assert.ok(Math.abs(s[0].F! - F) <= 1e-12 * Math.max(1, F));
    assert.ok(s[0].p! > 0.05, `same rate in every group: p = ${s[0].p}`);
    assert.match(s[0].verdict, /consistent with one common r and x0/);
    const summary = summaryText(grouped, 's.fitspec.json', null);
    assert.match(summary, /all \(joint\) +common +converged +r=/);
    assert.match(summary, /shared r, x0 \(common vs sep\): F = .* on 4 and \d+ df, p = .*consistent with one common r and x0/);
  });

  it('finds rates that differ, and fits the separate baseline internally when the spec has none', async () => {
    const r = ok(await run({ 'd.csv': csv([0.2, 0.3, 0.45]) }, {
      data,
      models: [{ name: 'common', builtin: 'logistic3', shared: ['r'] }],
      expect: { common: { 'K[R2]': { value: 2.0, tol: 0.05 }, r: { value: 99, tol: 1 } } },
    }));
    assert.equal(r.models.length, 1);
    assert.deepEqual(r.expect.map(e => [e.param, e.ok]), [['K[R2]', true], ['r', false]]);
    assert.ok(Math.abs(r.expect[0].actual! - r.models[0].params['K[R2]'].value) === 0);
    const s = r.comparison!.sharing![0];
    assert.equal(s.separate, null);
    assert.equal(s.df1, 9 - 7);
    assert.ok(s.p! < 1e-6, `p = ${s.p}`);
    assert.match(s.verdict, /^r differs between groups \(p = /);
    assert.ok(s.aiccSeparate! < s.aiccShared!);
  });

  it('predicts and back-calculates per group at the group\'s own parameters, intervals from the full covariance (delta method by hand)', async () => {
    const r = ok(await run({ 'd.csv': csv([0.3, 0.3, 0.3]) }, { data, models: [{ name: 'common', builtin: 'logistic3', shared: ['r', 'x0'] }], predict: [10, 30], solveFor: [1] }));
    const j = r.models[0];
    assert.deepEqual(j.predictions.map(p => [p.group, p.x]), [['R1', 10], ['R1', 30], ['R2', 10], ['R2', 30], ['R3', 10], ['R3', 30]]);
    assert.deepEqual(j.inverse.map(v => v.group), ['R1', 'R2', 'R3']);
    const v = (k: string) => j.params[k].value;
    const order = j.paramOrder;
    const dof = j.stats.dof;
    for (const p of j.predictions) {
      const K = v(`K[${p.group}]`), rr = v('r'), x0 = v('x0'), x = p.x as number;
      const e = Math.exp(-rr * (x - x0));
      assert.ok(Math.abs(p.y! - K / (1 + e)) <= 1e-12 * Math.abs(p.y!));
      // gradient of K/(1+e) in (K[g], r, x0), other entries 0; Var = gᵀ V g with V the reported covariance
      const g = order.map(k => (k === `K[${p.group}]` ? 1 / (1 + e) : k === 'r' ? (K * e * (x - x0)) / (1 + e) ** 2 : k === 'x0' ? (-K * e * rr) / (1 + e) ** 2 : 0));
      let varFit = 0;
      for (let a = 0; a < g.length; a++) for (let b = 0; b < g.length; b++) varFit += g[a] * (j.covariance![a][b] as number) * g[b];
      const half = (p.ci![1] - p.ci![0]) / 2;
      // half-width = t(0.975, dof of the joint fit) · √(gᵀVg)
      assert.ok(Math.abs(half - tQuantile(0.975, dof) * Math.sqrt(varFit)) <= 1e-9 * half, `half-width ${half} at ${dof} dof`);
    }
    const inv = j.inverse[1];
    const K2 = v('K[R2]');
    assert.ok(Math.abs(inv.roots[0].x - (v('x0') - Math.log(K2 / 1 - 1) / v('r'))) < 1e-6, 'x where K/(1+e) = 1');
  });

  it('refuses shared without groupBy, an unknown parameter (did-you-mean) and every parameter shared', async () => {
    const text = csv([0.3, 0.3, 0.3]);
    const a = await run({ 'd.csv': text }, { data: { file: 'd.csv', x: 'hours', y: 'od' }, models: [{ name: 'c', builtin: 'logistic3', shared: ['r'] }] });
    assert.ok(isErrorReport(a));
    assert.deepEqual(a.error.path, ['models', 0, 'shared']);
    assert.match(a.error.message, /data\.groupBy is not set/);
    const b = await run({ 'd.csv': text }, { data, models: [{ name: 'c', builtin: 'logistic3', shared: ['rr'] }] });
    assert.ok(isErrorReport(b));
    assert.deepEqual(b.error.path, ['models', 0, 'shared', 0]);
    assert.match(b.error.message, /'rr'.*did you mean 'r'/);
    const c = await run({ 'd.csv': text }, { data, models: [{ name: 'c', builtin: 'logistic3', shared: ['K', 'r', 'x0'] }] });
    assert.ok(isErrorReport(c));
    assert.match(c.error.message, /every parameter/);
  });
});

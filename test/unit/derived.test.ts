// Derived quantities (spec.derived): value, delta-method SE against a hand computation from the reported covariance,
// Wald interval, skipping models that lack a parameter, per group, and the spec error when no model can evaluate one.
// The hand computation: for doubling = log(2)/r, ∂/∂r = -log(2)/r², so se = log(2)/r² · sqrt(C_rr) (delta method,
// e.g. Seber & Wild, Nonlinear Regression §5.1); for K/x0, g = (1/x0, -K/x0²) and se² = gᵀ C g over (K, x0).
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile } from '../../src/engine/run';
import { isErrorReport } from '../../src/engine/report';
import { tQuantile } from '../../src/engine/stats/distributions';
import { mulberry32, normalSource } from '../../scripts/generate-demo';
import { asReport } from './reports';


function close(a: number, b: number, rel = 1e-12): void {
  assert.ok(Math.abs(a - b) <= rel * Math.max(Math.abs(a), Math.abs(b)), `${a} vs ${b}`);
}

describe('derived quantities', function () {
  this.timeout(60000);
  let dir: string;
  const run = (spec: object) => {
    fs.writeFileSync(path.join(dir, 's.fitspec.json'), JSON.stringify(spec));
    return runSpecFile(path.join(dir, 's.fitspec.json'), { workspaceRoot: dir });
  };
  before(() => {
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-derived-'));
    const rand = normalSource(mulberry32(3));
    const lines = ['t,od,reactor'];
    for (let h = 0; h <= 40; h += 2) for (const [r, k] of [['A', 0.3], ['B', 0.4]] as const) lines.push(`${h},${(2 / (1 + Math.exp(-k * (h - 18))) + 0.02 * rand()).toFixed(5)},${r}`);
    fs.writeFileSync(path.join(dir, 'd.csv'), lines.join('\n') + '\n');
  });

  it('value, delta-method SE and Wald interval match the hand computation from the covariance', async () => {
    const r = asReport(await run({
      data: { file: 'd.csv', x: 't', y: 'od', where: 'reactor == "A"' },
      models: [{ name: 'logistic', builtin: 'logistic3' }, { name: 'line', builtin: 'linear' }],
      derived: { doubling: 'log(2)/r', ratio: 'K/x0' },
    }));
    const m = r.models[0];
    const [K, rr, x0] = ['K', 'r', 'x0'].map((n) => m.params[n].value);
    const C = m.covariance as number[][];
    assert.equal(r.derived!.length, 2, 'line has no r, K or x0: skipped without a problem');
    const d = r.derived![0];
    assert.deepEqual([d.name, d.model, d.group], ['doubling', 'logistic', null]);
    close(d.value, Math.log(2) / rr);
    close(d.se!, (Math.log(2) / (rr * rr)) * Math.sqrt(C[1][1]), 1e-10);
    const q = tQuantile(0.975, m.stats.dof);
    close(d.ci![0], d.value - q * d.se!, 1e-12);
    close(d.ci![1], d.value + q * d.se!, 1e-12);
    const g = [1 / x0, 0, -K / (x0 * x0)];
    let v = 0;
    for (let a = 0; a < 3; a++) for (let b = 0; b < 3; b++) v += g[a] * C[a][b] * g[b];
    close(r.derived![1].value, K / x0);
    close(r.derived![1].se!, Math.sqrt(v), 1e-10);
    assert.ok(!r.problems.some((p) => p.code === 'spec-derived'));
  });

  it('per group: one entry per model and group, in the groups order', async () => {
    const r = asReport(await run({ data: { file: 'd.csv', x: 't', y: 'od', groupBy: 'reactor' }, models: [{ name: 'logistic', builtin: 'logistic3' }], derived: { doubling: 'log(2)/r' } }));
    assert.deepEqual(r.derived!.map((d) => d.group), ['A', 'B']);
    for (const d of r.derived!) close(d.value, Math.log(2) / r.models.find((m) => m.group === d.group)!.params.r.value);
  });

  it('a quantity no model can evaluate is a spec error naming the key', async () => {
    const r = await run({ data: { file: 'd.csv', x: 't', y: 'od' }, models: [{ name: 'logistic', builtin: 'logistic3' }, { name: 'line', builtin: 'linear' }], derived: { half: 'log(2)/k', both: 'slope*K' } });
    assert.ok(isErrorReport(r));
    const msgs = (r.error.problems ?? []).map((p) => `${p.path.join('.')}: ${p.message}`).join('\n');
    assert.match(msgs, /derived\.half: derived\.half uses 'k', which no model can evaluate \('k' is no model's parameter — did you mean 'K'\?\)/);
    assert.match(msgs, /derived\.both: derived\.both uses 'slope', 'K', which no model can evaluate \(no one model has all of them\)/);
    const bad = await run({ data: { file: 'd.csv', x: 't', y: 'od' }, models: [{ name: 'logistic', builtin: 'logistic3' }], derived: { 'a b': 'r' } });
    assert.ok(isErrorReport(bad) && /must be a plain name/.test(bad.error.message));
  });
});

// Words of the trade: a sigmoid fitted to data that never level off is reported as "the data do not reach the
// plateau" (no-plateau / asymptote-not-reached) or "the rate is not determined", through the run path and check.
import * as assert from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpec } from '../../src/engine';
import type { FitReport } from '../../src/engine';
import { verdictOf } from '../../src/cli/check';
import { mulberry32, normalSource } from '../../scripts/generate-demo';

let dir = '';
before(() => (dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-plateau-'))));
after(() => fs.rmSync(dir, { recursive: true, force: true }));

/** exponential growth 0.05·e^(0.15x) with 2 % noise, x = 0…28: no plateau anywhere in the data (seeded) */
function growthCsv(seed: number): string {
  const z = normalSource(mulberry32(seed));
  const rows = ['hours,od'];
  for (let i = 0; i < 15; i++) rows.push(`${2 * i},${(0.05 * Math.exp(0.15 * 2 * i) * (1 + 0.02 * z())).toFixed(5)}`);
  return rows.join('\n') + '\n';
}

async function run(models: unknown[], seed = 15): Promise<FitReport> {
  fs.writeFileSync(path.join(dir, 'g.csv'), growthCsv(seed));
  const r = await runSpec(JSON.stringify({ data: { file: 'g.csv', x: 'hours', y: 'od' }, models }), path.join(dir, 'g.fitspec.json'), { workspaceRoot: dir });
  assert.ok('models' in r);
  return r as FitReport;
}

const PLATEAU = ['no-plateau', 'asymptote-not-reached'];

describe('plateau and rate problems in the words of the trade', function () {
  this.timeout(60000);

  it('every sigmoid on growth without a plateau says the plateau is not reached, on its asymptote', async () => {
    const r = await run([
      { name: 'log3', builtin: 'logistic3' },
      { name: 'gomp', builtin: 'gompertz' },
      { name: 'l4', builtin: 'logistic4' },
    ]);
    for (const m of r.models) {
      const p = m.problems.find((q) => PLATEAU.includes(q.code));
      assert.ok(p, `${m.name}: got [${m.problems.map((q) => q.code).join(', ')}]`);
      assert.match(p.message, /do not reach the upper plateau: (K|upper)/);
      assert.match(p.message, /[Bb]ound it.*fix it.*fit data that reach/);
      assert.deepStrictEqual(p.path.slice(0, 3), ['models', m.name === 'log3' ? 0 : m.name === 'gomp' ? 1 : 2, 'params']);
      assert.ok(['K', 'upper'].includes(String(p.path[3])));
      // the generic wording is not repeated for the same parameter
      assert.ok(!m.problems.some((q) => q.code === 'poorly-determined' && q.path[3] === p.path[3]));
    }
    const failed = r.models.filter((m) => m.status === 'failed');
    for (const m of failed) assert.ok(m.problems.some((q) => q.code === 'no-plateau' && q.severity === 'error'), m.name);
  });

  it('a converged logistic whose plateau lies far beyond the data: asymptote-not-reached (extrapolated)', async () => {
    const r = await run([{ name: 'log3', builtin: 'logistic3' }], 14);
    const m = r.models[0];
    assert.strictEqual(m.status, 'converged');
    const p = m.problems.find((q) => q.code === 'asymptote-not-reached')!;
    assert.ok(p, m.problems.map((q) => q.code).join(', '));
    assert.match(p.message, /extrapolated from the curve's shape/);
  });

  it('check --strict fails with the plateau code on the model', async () => {
    const r = await run([{ name: 'log3', builtin: 'logistic3' }]);
    const v = verdictOf(r, 'g.fitspec.json', true);
    assert.ok(v.failures.some((line) => /do not reach the upper plateau/.test(line) && /(no-plateau|asymptote-not-reached)/.test(line)), v.failures.join('\n'));
  });

  it('a bound on the plateau is respected and the same data then fit without the plateau problem', async () => {
    const r = await run([{ name: 'log3', builtin: 'logistic3', params: { K: { start: 5, fixed: true } } }]);
    const m = r.models[0];
    assert.strictEqual(m.status, 'converged');
    assert.ok(!m.problems.some((q) => PLATEAU.includes(q.code)), m.problems.map((q) => q.code).join(', '));
  });

  it('user formulas get the generic wording (no roles are guessed for them)', async () => {
    const r = await run([{ name: 'mine', formula: 'K/(1 + exp(-r*(x - x0)))', params: { K: { start: 2 }, r: { start: 0.2 }, x0: { start: 10 } } }]);
    assert.ok(!r.models[0].problems.some((q) => PLATEAU.includes(q.code) || q.code === 'rate-not-determined'));
  });
});

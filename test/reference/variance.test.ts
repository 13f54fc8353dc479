// Weights from the data (data.sigma { "power": θ | "estimate" }: σ ∝ |fitted|^θ) against R's nlme — gls with
// varPower(fixed = θ, form = ~fitted(.)) for cars, stats::nls refitted with the weights for Puromycin (scripts/reference-variance.R) — on datasets::cars (Ezekiel 1930; a line,
// replicate speeds) and the treated Puromycin rows (Treloar 1974; Michaelis–Menten, each concentration twice), through
// a spec file and the function the CLI calls. Estimated θ: R iterates gls/gnls and the replicate regression of
// log sd on log |fitted| independently. Figures committed in test/fixtures/reference/r-variance.json.
// Tolerances: θ and estimates 1e-6 relative, SE 1e-4 relative.
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile } from '../../src/engine/run';
import { isErrorReport, type FitReport, type ModelReport, type RunResult } from '../../src/engine/report';

const root = path.join(__dirname, '..', '..');
interface Ref { theta: number; coef: number[]; se: number[] }
const R = JSON.parse(fs.readFileSync(path.join(root, 'test', 'fixtures', 'reference', 'r-variance.json'), 'utf8')) as Record<string, Ref> & { source: string };
const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(Math.abs(b), 1e-300);
const close = (what: string, a: number | null | undefined, b: number, tol: number) =>
  assert.ok(a !== null && a !== undefined && rel(a, b) <= tol, `${what}: ${a} vs nlme ${b} (relative ${a == null ? '—' : rel(a, b).toExponential(2)} > ${tol}) [${R.source}]`);

export async function runIn(csv: string, spec: object): Promise<RunResult> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-var-'));
  fs.copyFileSync(path.join(root, 'test', 'fixtures', csv), path.join(dir, csv));
  fs.writeFileSync(path.join(dir, 'v.fitspec.json'), JSON.stringify(spec));
  return runSpecFile(path.join(dir, 'v.fitspec.json'), { workspaceRoot: dir });
}
async function run(csv: string, spec: object): Promise<FitReport> {
  const r = await runIn(csv, spec);
  if (isErrorReport(r)) assert.fail(r.error.message);
  return r as FitReport;
}
function compare(m: ModelReport, names: string[], ref: Ref, estimated: boolean): void {
  assert.equal(m.status, 'converged', m.problems.map((p) => p.message).join('\n'));
  assert.equal(m.variance!.estimated, estimated);
  assert.ok(m.variance!.converged);
  close(`${m.name} θ`, m.variance!.theta, ref.theta, 1e-6);
  names.forEach((p, j) => {
    close(`${m.name} ${p}`, m.params[p].value, ref.coef[j], 1e-6);
    close(`${m.name} se ${p}`, m.params[p].se, ref.se[j], 1e-4);
  });
}

describe(`weights from a variance function vs nlme (${R.source})`, function () {
  this.timeout(60000);
  const carsSpec = (power: number | string) => ({ data: { file: 'cars.csv', x: 'speed', y: 'dist', sigma: { power } }, models: [{ name: 'line', builtin: 'linear' }] });
  const purSpec = (power: number | string) => ({
    data: { file: 'puromycin.csv', x: 'conc', y: 'rate', where: 'state == "treated"', sigma: { power } },
    models: [{ name: 'mm', builtin: 'michaelis_menten' }],
  });

  it('cars, straight line: θ = 1 given (constant CV), and θ estimated from the replicate speeds', async () => {
    compare((await run('cars.csv', carsSpec(1))).models[0], ['intercept', 'slope'], R.cars_fixed1, false);
    const m = (await run('cars.csv', carsSpec('estimate'))).models[0];
    compare(m, ['intercept', 'slope'], R.cars_estimate, true);
    assert.ok(m.variance!.replicateGroups >= 3);
  });

  it('Puromycin treated, Michaelis–Menten: θ = 0.5 given, and θ estimated from the duplicates', async () => {
    compare((await run('puromycin.csv', purSpec(0.5))).models[0], ['Vmax', 'Km'], R.puromycin_fixed05, false);
    compare((await run('puromycin.csv', purSpec('estimate'))).models[0], ['Vmax', 'Km'], R.puromycin_estimate, true);
  });

  it('θ to estimate without replicates is an error naming data.sigma.power', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-var-'));
    fs.writeFileSync(path.join(dir, 'd.csv'), 'x,y\n' + [1, 2, 3, 4, 5, 6, 7, 8].map((x) => `${x},${(2 * x + Math.sin(x)).toFixed(3)}`).join('\n') + '\n');
    fs.writeFileSync(path.join(dir, 'v.fitspec.json'), JSON.stringify({ data: { file: 'd.csv', x: 'x', y: 'y', sigma: { power: 'estimate' } }, models: [{ name: 'l', builtin: 'linear' }] }));
    const r = await runSpecFile(path.join(dir, 'v.fitspec.json'), { workspaceRoot: dir });
    assert.ok(isErrorReport(r));
    assert.deepEqual(r.error.path, ['data', 'sigma', 'power']);
    assert.match(r.error.message, /needs replicates.*found 0.*"power": 1/);
  });
});

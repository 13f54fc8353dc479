// Grouped and joint fits against R's nls (stats) on datasets::Puromycin (treated and untreated), Michaelis–Menten
// rate = Vmax·conc/(Km + conc): separate fits per state, a joint fit with Km shared and Vmax per state (indexed
// parameters in nls), and the extra-sum-of-squares F-test of stats::anova between the two. Figures made by
// scripts/reference-groups.R (R 4.2.2, named in the fixture's "source") and committed; CI does not need R.
// Through the spec file and the function the CLI calls, with the spec's defaults. Tolerances: 1e-5 relative on
// estimates, 1e-3 relative on SE and p.
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile } from '../../src/engine/run';
import { isErrorReport, type FitReport } from '../../src/engine/report';

const root = path.join(__dirname, '..', '..');
interface Est { value: number; se: number }
const R = JSON.parse(fs.readFileSync(path.join(root, 'test', 'fixtures', 'reference', 'r-groups.json'), 'utf8')) as {
  source: string;
  separate: Record<string, { params: Record<string, Est>; sse: number; dof: number }>;
  joint: { params: Record<string, Est>; sse: number; dof: number; sigma: number };
  anova: { F: number; df1: number; df2: number; p: number };
};
const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);
const close = (what: string, a: number | null | undefined, b: number, tol: number) => {
  assert.ok(a !== null && a !== undefined && rel(a, b) <= tol, `${what}: ${a} vs R ${b} (relative ${a == null ? '—' : rel(a, b).toExponential(2)} > ${tol}) [${R.source}]`);
};

describe(`groups and shared parameters vs R nls (${R.source})`, function () {
  this.timeout(60000);
  let report: FitReport;
  before(async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-rgroups-'));
    fs.copyFileSync(path.join(root, 'test', 'fixtures', 'puromycin.csv'), path.join(dir, 'puromycin.csv'));
    const spec = {
      data: { file: 'puromycin.csv', x: 'conc', y: 'rate', groupBy: 'state' },
      models: [{ name: 'mm', builtin: 'michaelis_menten' }, { name: 'mm-common-km', builtin: 'michaelis_menten', shared: ['Km'] }],
    };
    fs.writeFileSync(path.join(dir, 'p.fitspec.json'), JSON.stringify(spec));
    const r = await runSpecFile(path.join(dir, 'p.fitspec.json'), { workspaceRoot: dir });
    if (isErrorReport(r)) assert.fail(r.error.message);
    report = r as FitReport;
  });

  it('separate fits per state: estimates, SE, SSE', () => {
    for (const [g, ref] of Object.entries(R.separate)) {
      const m = report.models.find(x => x.name === 'mm' && x.group === g)!;
      assert.ok(m, `fit of group ${g}`);
      close(`Vmax[${g}]`, m.params.Vmax.value, ref.params.Vm.value, 1e-5);
      close(`Km[${g}]`, m.params.Km.value, ref.params.K.value, 1e-5);
      close(`se Vmax[${g}]`, m.params.Vmax.se, ref.params.Vm.se, 1e-3);
      close(`se Km[${g}]`, m.params.Km.se, ref.params.K.se, 1e-3);
      close(`sse[${g}]`, m.stats.sse, ref.sse, 1e-5);
      assert.equal(m.stats.dof, ref.dof);
    }
  });

  it('joint fit, Km shared: estimates, SE, sigma, dof', () => {
    const j = report.models.find(x => x.name === 'mm-common-km')!;
    assert.equal(j.group, null);
    assert.deepEqual(j.shared, ['Km']);
    close('Km', j.params.Km.value, R.joint.params.K.value, 1e-5);
    close('se Km', j.params.Km.se, R.joint.params.K.se, 1e-3);
    for (const g of Object.keys(R.separate)) {
      close(`Vmax[${g}]`, j.params[`Vmax[${g}]`].value, R.joint.params[`Vm[${g}]`].value, 1e-5);
      close(`se Vmax[${g}]`, j.params[`Vmax[${g}]`].se, R.joint.params[`Vm[${g}]`].se, 1e-3);
    }
    close('sse', j.stats.sse, R.joint.sse, 1e-5);
    close('sigma', j.stats.sigma, R.joint.sigma, 1e-5);
    assert.equal(j.stats.dof, R.joint.dof);
  });

  it('comparison.sharing: the F-test of anova(joint, separate)', () => {
    const s = report.comparison!.sharing![0];
    assert.equal(s.separate, 'mm');
    assert.equal(s.df1, R.anova.df1);
    assert.equal(s.df2, R.anova.df2);
    close('F', s.F, R.anova.F, 1e-3);
    close('p', s.p, R.anova.p, 1e-3);
    assert.match(s.verdict, /consistent with one common Km across groups/);
  });
});

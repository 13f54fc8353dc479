// Runs one NIST StRD problem the way a user does: the data written as a CSV and the model as a *.fitspec.json in a
// temporary folder, run by runSpecFile (the function `curvewright fit` and `check` call) with the spec's defaults (no
// `solver` key); the report's estimates and standard errors are scored by LRE against the certified values.
import * as assert from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { runSpecFile } from '../../src/engine/run';
import { isErrorReport, type FitReport, type ModelReport } from '../../src/engine/report';
import { lre, StrdProblem } from './strd';

export interface CaseScore {
  name: string;
  start: number | null;
  model: ModelReport;
  theta: number[];
  sd: number[];
  lreParams: number[];
  lreSd: number[];
  lreRss: number;
  lreRsd: number;
  minParams: number;
  minSd: number;
}

export interface SpecCase {
  /** the model formula in Curvewright's language */
  formula: string;
  /** the expression of y (e.g. "log(y)" for Nelson); default "y" */
  y?: string;
  /** per parameter: start value and bounds (omitted = no start, the generic multi-start) */
  params?: Record<string, { start?: number; min?: number; max?: number }>;
}

/** the problem's data as CSV text: its column names (x or x1, x2…, then y), numbers in shortest round-trip form */
export function strdCsv(prob: StrdProblem): string {
  const lines = [[...prob.xNames, 'y'].join(',')];
  for (let i = 0; i < prob.n; i++) lines.push([...prob.xNames.map((_, v) => String(prob.x[v][i])), String(prob.y[i])].join(','));
  return lines.join('\n') + '\n';
}

/** the fit spec text of one case: data.x, data.y, one formula model; nothing else, so every default applies */
export function strdSpec(prob: StrdProblem, c: SpecCase): string {
  const x = prob.xNames.length === 1 ? prob.xNames[0] : Object.fromEntries(prob.xNames.map((v) => [v, v]));
  const params = c.params ?? Object.fromEntries(prob.params.map((p) => [p, {}]));
  const spec = {
    title: `NIST StRD ${prob.name}`,
    data: { file: `${prob.name}.csv`, x, y: c.y ?? 'y' },
    models: [{ name: prob.name, formula: c.formula, params }],
  };
  return JSON.stringify(spec, null, 2) + '\n';
}

/** write the spec and CSV into a fresh temporary folder and run the spec as `curvewright fit` does */
export async function runStrdSpec(prob: StrdProblem, c: SpecCase): Promise<{ report: FitReport; model: ModelReport; specText: string }> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-strd-'));
  try {
    fs.writeFileSync(path.join(dir, `${prob.name}.csv`), strdCsv(prob));
    const specText = strdSpec(prob, c);
    const specPath = path.join(dir, `${prob.name}.fitspec.json`);
    fs.writeFileSync(specPath, specText);
    const r = await runSpecFile(specPath, { workspaceRoot: dir });
    if (isErrorReport(r)) assert.fail(`${prob.name}: the spec was refused: ${r.error.message}`);
    const report = r as FitReport;
    assert.strictEqual(report.models.length, 1);
    return { report, model: report.models[0], specText };
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

/** LRE of the report's estimates, standard errors, SSE and residual SD against the certified values */
export function scoreModel(prob: StrdProblem, model: ModelReport, start: number | null): CaseScore {
  const theta = prob.params.map((p) => model.params[p]?.value ?? NaN);
  const sd = prob.params.map((p) => model.params[p]?.se ?? NaN);
  const c = prob.certified;
  const lreParams = theta.map((t, j) => lre(t, c.values[j], prob.digits));
  const lreSd = sd.map((s, j) => lre(s, c.sd[j], prob.digits));
  const lreRss = lre(model.stats.sse, c.rss, prob.digits);
  const lreRsd = lre(model.stats.sigma ?? NaN, c.rsd, prob.digits);
  return {
    name: prob.name, start, model, theta, sd, lreParams, lreSd, lreRss, lreRsd,
    minParams: Math.min(...lreParams), minSd: Math.min(...lreSd),
  };
}

/** the NIST starting values of one start as spec params (optionally with bounds) */
export function startParams(prob: StrdProblem, start: number, bounds?: { lower: number[]; upper: number[] }): SpecCase['params'] {
  return Object.fromEntries(prob.params.map((p, j) => [p, {
    start: prob.starts[start][j],
    ...(bounds ? { min: bounds.lower[j], max: bounds.upper[j] } : {}),
  }]));
}

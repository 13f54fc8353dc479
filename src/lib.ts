// The library API of the `curvewright` package (bundled to dist/lib.js; DESIGN.md "Library API"): run a spec, read a
// results file, evaluate a fitted model (and its delta-method band, Var(ŷ0) = gᵀVg) at new x from the report alone.
// Plain Node: this entry imports only the engine, never `vscode` (test/spawn/lib.test.ts guards it).
import { readFileSync } from 'fs';
import * as path from 'path';
import Ajv, { type ValidateFunction } from 'ajv';
import { compileFormula, formulaIdentifiers } from './engine/formula';
import { suggest } from './engine/formula/suggest';
import { isErrorReport, type FitReport, type ModelReport, type RunResult } from './engine/report';
import { runSpecFile, serializeReport, writeResults } from './engine/run';
import { normalQuantile, tQuantile } from './engine/stats/distributions';
import { makePredictor, type PredictionContext } from './engine/stats/predict';
import { joinSidecar, sidecarMismatch, type PointsSidecar } from './engine/pointsFile';

export type * from './engine/report';
export { isErrorReport, ENGINE_VERSION } from './engine/report';
export { OutputError } from './engine/run';

/** A mistake in a call of the library (unknown model, wrong x, unreadable results file); the message says what to do. */
export class CurvewrightError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'CurvewrightError';
  }
}

export interface FitOptions {
  /** write the spec's `output` results file, as `curvewright fit` does (default false) */
  write?: boolean;
  /** folder the results file must stay inside (default: the current directory, as for the command line) */
  workspaceRoot?: string;
}

/** The report as plain JSON values: exactly what `curvewright fit --json` prints (NaN as null, typed arrays as arrays). */
function asPrinted(result: RunResult): RunResult {
  return JSON.parse(serializeReport(result)) as RunResult;
}

async function fitAndMaybeWrite(specAbs: string, specText: string | undefined, opts: FitOptions): Promise<RunResult> {
  const workspaceRoot = path.resolve(opts.workspaceRoot ?? process.cwd());
  const result = await runSpecFile(specAbs, { workspaceRoot, ...(specText !== undefined ? { specText } : {}) });
  if (opts.write && !isErrorReport(result)) await writeResults(result, specAbs, { workspaceRoot, ...(specText !== undefined ? { specText } : {}) });
  return asPrinted(result);
}

/**
 * Runs a spec file; resolves to exactly what `curvewright fit --json` prints for it: a FitReport, or an ErrorReport
 * (check with isErrorReport) when the spec cannot be run. Writes `output` only with `{ write: true }` (an unwritable
 * results file rejects with an OutputError).
 */
export function fitSpecFile(specPath: string, options: FitOptions = {}): Promise<RunResult> {
  return fitAndMaybeWrite(path.resolve(specPath), undefined, options);
}

/** The same as fitSpecFile for spec text; `baseDir` is the folder data.file and output are relative to. */
export async function fitSpec(specText: string, options: FitOptions & { baseDir: string; name?: string }): Promise<RunResult> {
  if (!options || typeof options.baseDir !== 'string')
    throw new CurvewrightError('fitSpec needs { baseDir }: the folder the spec\'s data.file is relative to, e.g. fitSpec(text, { baseDir: "examples" })');
  const name = options.name ?? 'inline.fitspec.json';
  return fitAndMaybeWrite(path.resolve(options.baseDir, name), specText, options);
}

// ------------------------------------------------------------------ reading results files

let validator: ValidateFunction | undefined;

function reportValidator(): ValidateFunction {
  if (!validator) {
    // dist/lib.js and src/lib.ts both sit one folder below the package root, beside schema/
    const schema = JSON.parse(readFileSync(path.join(__dirname, '..', 'schema', 'fitreport.schema.json'), 'utf8'));
    validator = new Ajv({ allErrors: false, strict: false, allowUnionTypes: true }).compile(schema);
  }
  return validator;
}

/**
 * Reads a results file (or a `--json` line saved to a file) and checks it against schema/fitreport.schema.json. When
 * the spec keeps points in a sidecar (outputPoints "sidecar") and that file is there, its points and bands are put
 * back; a points file of another run is an error, a missing one (e.g. git-ignored) leaves them out.
 */
export function readReport(file: string): FitReport {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new CurvewrightError(`cannot read the results file ${file}: ${code === 'ENOENT' ? 'no such file' : (e as Error).message} — check the path, or run \`curvewright fit\` to write it`);
  }
  let value: unknown;
  try {
    value = JSON.parse(text.charCodeAt(0) === 0xfeff ? text.slice(1) : text);
  } catch (e) {
    throw new CurvewrightError(`the results file ${file} is not valid JSON (${(e as Error).message}) — run \`curvewright fit\` on its spec to rewrite it`);
  }
  const validate = reportValidator();
  if (!validate(value)) {
    const first = validate.errors?.[0];
    const where = first ? `${first.instancePath || '(top level)'} ${first.message ?? ''}`.trim() : 'unknown';
    throw new CurvewrightError(`the results file ${file} is not a Curvewright report (${where}) — is it a results file of this version? run \`curvewright fit\` on its spec to rewrite it`);
  }
  const result = value as RunResult;
  if (isErrorReport(result)) throw new CurvewrightError(`the results file ${file} records a spec that could not be run: ${result.error.message}`);
  if (typeof result.pointsFile !== 'string') return result;
  const side = path.join(path.dirname(file), result.pointsFile);
  let sidecar: unknown;
  try {
    sidecar = JSON.parse(readFileSync(side, 'utf8'));
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return result;
    throw new CurvewrightError(`the points file ${side} of ${file} cannot be read (${(e as Error).message}) — run \`curvewright fit\` on its spec to rewrite both`);
  }
  const why = sidecarMismatch(result, sidecar);
  if (why) throw new CurvewrightError(`the points file ${side} does not belong to ${file}: ${why} — run \`curvewright fit\` on its spec to rewrite both`);
  return joinSidecar(result, sidecar as PointsSidecar);
}

// ------------------------------------------------------------------ evaluating a fitted model

/** x values: an array (or one number) for a single x variable, or variable name → array for several. */
export type XValues = number | ArrayLike<number> | Record<string, number | ArrayLike<number>>;

export interface EvaluateOptions {
  /** the group of a grouped spec (data.groupBy); required when the model was fitted per group */
  group?: string;
  /** also return the pointwise confidence and prediction intervals at the report's confidence */
  band?: boolean;
}

/** The fitted curve with its pointwise intervals; NaN where an interval is undefined (e.g. singular covariance). */
export interface EvaluatedBand {
  x: number[] | Record<string, number[]>;
  fit: number[];
  ciLow: number[];
  ciHigh: number[];
  piLow: number[];
  piHigh: number[];
}

/** A model entry of the report; with groups each entry has `group` (DESIGN.md, groups contract). */
type GroupedModel = ModelReport & { group?: string | null };

function pickModel(report: FitReport, modelName: string, group: string | undefined): GroupedModel {
  const models = report.models as GroupedModel[];
  const named = models.filter(m => m.name === modelName);
  if (!named.length) {
    const names = [...new Set(models.map(m => m.name))];
    const s = suggest(modelName, names);
    throw new CurvewrightError(`the report has no model '${modelName}'${s ? ` — did you mean '${s}'?` : ''} (models: ${names.join(', ') || 'none'})`);
  }
  if (group === undefined) {
    const ungrouped = named.filter(m => m.group === undefined || m.group === null);
    if (ungrouped.length === 1 && !(ungrouped[0].group === null && (ungrouped[0] as { shared?: unknown }).shared)) return ungrouped[0];
    const groups = named.map(m => m.group).filter((g): g is string => typeof g === 'string');
    throw new CurvewrightError(`model '${modelName}' was fitted per group — pass { group }, one of: ${groups.length ? groups.join(', ') : 'the groups of the report'}`);
  }
  const exact = named.find(m => m.group === group);
  if (exact) return exact;
  const shared = named.find(m => m.group === null);
  if (shared) return shared;
  const groups = named.map(m => m.group).filter((g): g is string => typeof g === 'string');
  throw new CurvewrightError(`model '${modelName}' has no group '${group}'${groups.length ? ` (groups: ${groups.join(', ')})` : ' (the report has no groups: leave group out)'}`);
}

/** The report's variable names, in the engine's order (data.labels, else points, else the formula's non-parameters). */
function variablesOf(report: FitReport, m: ModelReport, paramNames: Set<string>): string[] {
  const labelled = report.data.labels ? Object.keys(report.data.labels.x) : [];
  if (labelled.length) return labelled;
  if (m.points) return Object.keys(m.points.x);
  if (m.band?.variable) return [m.band.variable];
  const out: string[] = [];
  for (const { name } of formulaIdentifiers(m.formula)) if (!paramNames.has(name) && !out.includes(name)) out.push(name);
  return out;
}

function toArray(v: number | ArrayLike<number>, what: string): Float64Array {
  if (typeof v === 'number') return Float64Array.of(v);
  if (v && typeof v === 'object' && typeof (v as ArrayLike<number>).length === 'number') {
    const a = Float64Array.from(v as ArrayLike<number>);
    for (let i = 0; i < a.length; i++)
      if (typeof (v as ArrayLike<unknown>)[i] !== 'number') throw new CurvewrightError(`${what}[${i}] is not a number — give numbers only`);
    return a;
  }
  throw new CurvewrightError(`${what} must be a number or an array of numbers`);
}

/**
 * The fitted curve of `modelName` at new x, computed from the report alone: the report's formula compiled by the
 * engine's formula compiler with the report's parameter values. With `{ band: true }` also the pointwise
 * confidence and prediction intervals from the report's covariance (delta method, as the engine computes `band`;
 * for a weighted fit the prediction interval uses the weight of the nearest observed x, so it needs `points`).
 */
export function evaluate(report: FitReport, modelName: string, x: XValues, options?: EvaluateOptions & { band?: false }): number[];
export function evaluate(report: FitReport, modelName: string, x: XValues, options: EvaluateOptions & { band: true }): EvaluatedBand;
export function evaluate(report: FitReport, modelName: string, x: XValues, options: EvaluateOptions = {}): number[] | EvaluatedBand {
  if (!report || typeof report !== 'object' || !Array.isArray((report as FitReport).models))
    throw new CurvewrightError(isErrorReport(report as RunResult) ? `the spec ${(report as RunResult).spec} could not be run, so it has no models to evaluate: ${(report as unknown as { error: { message: string } }).error.message}` : 'evaluate needs a FitReport (from fitSpecFile, fitSpec or readReport)');
  const m = pickModel(report, modelName, options.group);
  const where = `model '${modelName}'${options.group !== undefined ? ` (group ${options.group})` : ''}`;
  if (m.status !== 'converged') throw new CurvewrightError(`${where} did not converge (${m.termination}), so the report holds no fitted curve for it — fix the fit first (see its problems)`);

  // the formula's parameters: the report's own names, or name[group] for a model with shared parameters
  const keyOf = (p: string): string | undefined => (p in m.params ? p : options.group !== undefined && `${p}[${options.group}]` in m.params ? `${p}[${options.group}]` : undefined);
  // a joint fit with shared parameters (group null) keys its per-group parameters name[<id>]
  const formulaParams = [...new Set(m.paramOrder.map(k => (m.group === null ? k.replace(/\[[^\]]*\]$/, '') : k)))];
  const variables = variablesOf(report, m, new Set(formulaParams));
  const used = new Set(formulaIdentifiers(m.formula).map(u => u.name));
  const keys = formulaParams.map(p => keyOf(p));
  const missing = formulaParams.filter((_, j) => keys[j] === undefined);
  if (missing.length) throw new CurvewrightError(`${where}: the report has no value for ${missing.map(p => `'${p}'`).join(', ')}${options.group === undefined ? ' — pass { group }' : ''}`);
  const compiled = compileFormula(m.formula, { variables, params: formulaParams });
  const theta = Float64Array.from(keys, k => m.params[k!].value);

  // x, in the variables' order
  let X: Float64Array[];
  if (typeof x === 'number' || (x && typeof (x as ArrayLike<number>).length === 'number')) {
    if (variables.length !== 1)
      throw new CurvewrightError(`${where} has several x variables (${variables.join(', ')}) — give x as an object of arrays, e.g. { ${variables.map(v => `${v}: [1, 2]`).join(', ')} }`);
    X = [toArray(x as number | ArrayLike<number>, 'x')];
  } else if (x && typeof x === 'object') {
    const obj = x as Record<string, number | ArrayLike<number>>;
    const absent = variables.filter(v => used.has(v) && !(v in obj));
    if (absent.length) throw new CurvewrightError(`x has no values for ${absent.map(v => `'${v}'`).join(', ')} (the variables are ${variables.join(', ')})`);
    const extra = Object.keys(obj).filter(k => !variables.includes(k));
    if (extra.length) throw new CurvewrightError(`x has ${extra.map(k => `'${k}'`).join(', ')}, which ${extra.length === 1 ? 'is' : 'are'} not a variable of the report (the variables are ${variables.join(', ')})`);
    const cols = variables.map(v => (v in obj ? toArray(obj[v], `x.${v}`) : null));
    const n = Math.max(0, ...cols.map(c => (c ? c.length : 0)));
    cols.forEach((c, k) => {
      if (c && c.length !== n) throw new CurvewrightError(`x.${variables[k]} has ${c.length} values but another variable has ${n} — give every variable the same number of values`);
    });
    X = cols.map(c => c ?? new Float64Array(n)); // an unused variable does not enter the formula
  } else throw new CurvewrightError('x must be a number, an array of numbers, or an object of arrays (one per variable)');
  const n = X.length ? X[0].length : 0;

  const xv = new Float64Array(variables.length);
  if (!options.band) {
    const out: number[] = new Array(n);
    for (let i = 0; i < n; i++) {
      for (let k = 0; k < variables.length; k++) xv[k] = X[k][i];
      out[i] = compiled.at(theta, xv);
    }
    return out;
  }

  // band: the same predictor the engine uses for `band` and `predictions`, fed from the report
  const p = formulaParams.length;
  const idx = keys.map(k => m.paramOrder.indexOf(k!));
  const cov = new Float64Array(p * p).fill(NaN);
  if (m.covariance) for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) cov[a * p + b] = m.covariance[idx[a]]?.[idx[b]] ?? NaN;
  const st = m.stats;
  const weighted = st.chi2 !== null;
  const absolute = weighted && typeof st.chi2P === 'number';
  const q = absolute ? normalQuantile((1 + report.confidence) / 2) : st.dof > 0 ? tQuantile((1 + report.confidence) / 2, st.dof) : NaN;
  const scale = absolute ? 1 : st.dof > 0 ? st.sse / st.dof : NaN;
  const pts = m.points;
  const dataX = pts ? variables.map(v => Float64Array.from(pts.x[v] ?? [])) : variables.map(() => new Float64Array(0));
  const w = weighted ? (pts?.weight ? Float64Array.from(pts.weight) : new Float64Array(0)) : null;
  const ctx: PredictionContext = { compiled, theta, cov, free: keys.map(k => !m.params[k!].fixed), q, scale, X: dataX, w };
  const predict = makePredictor(ctx);
  const band: EvaluatedBand = {
    x: variables.length === 1 ? Array.from(X[0]) : Object.fromEntries(variables.map((v, k) => [v, Array.from(X[k])])),
    fit: [], ciLow: [], ciHigh: [], piLow: [], piHigh: [],
  };
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < variables.length; k++) xv[k] = X[k][i];
    const pr = predict(xv);
    band.fit.push(pr.y);
    band.ciLow.push(pr.y - q * pr.seFit);
    band.ciHigh.push(pr.y + q * pr.seFit);
    band.piLow.push(pr.y - q * pr.sePred);
    band.piHigh.push(pr.y + q * pr.sePred);
  }
  return band;
}

// The run layer: spec text + CSV file -> FitReport (or ErrorReport), its deterministic JSON, and the atomic results file.
// Pipeline: parseSpecText -> validateSpec -> readHeader -> validateSpec(columns) -> readTable -> prepareData
//   -> per model: buildModel, fitModel, analyzeModel -> compareModels -> expect checks.
// Never throws for user input: every user mistake becomes an ErrorReport naming the file, place and fix.
import { createHash, randomBytes } from 'crypto';
import { promises as fsp } from 'fs';
import * as path from 'path';
import { parse as parseJsonc } from 'jsonc-parser';
import {
  ENGINE_VERSION,
  type DataReport,
  type ErrorReport,
  type ExpectResult,
  type FileLocation,
  type FitReport,
  type GroupComparison,
  type GroupFit,
  type SharingTest,
  type GroupReport,
  type JsonPath,
  type ModelReport,
  type ParamReport,
  type Problem,
  type RunResult,
  type Thresholds,
} from './report';
import { FormulaError } from './formula/types';
import { suggest } from './formula';
import { parseSpecText, validateSpec, locatePath } from './spec';
import type { NormalizedSpec } from './spec/types';
import { DataError, columnPaths, columnsNeeded, prepareData, headerShape, readHeader, readTable, whereTextColumns } from './data';
import type { Table } from './data/types';
import { buildModel, fitModel, modelProblem } from './models';
import { solveLinear, solveNonlinear } from './solve';
import { applyRobust, robustFit } from './stats/robust';
import { applyErrorsInX, errorsInXFit } from './stats/errorsInX';
import { MIN_REPLICATE_GROUPS, informativeGroups, replicateGroups, varianceFit } from './data/variance';
import { analyzeModel, compareModels, dataCorrelation, resolveThresholds } from './stats';
import type { AnalysisOptions, ModelAnalysisInput } from './stats/api';
import { sidecarPath, splitReport, type OutputPoints } from './pointsFile';
import { derivedFor } from './stats/derived';
import { jointBuiltModel } from './joint';
import { sharingTest } from './stats/sharing';
import { DEFAULTS } from './spec/defaults';
import { cleanStaleTemps, inputRefusal, LockBusyError, outputRefusal as pathOutputRefusal, realOrSelf, tmpName, withFileLock } from './paths';
import { addOriginalScale, runPotency, isReadoutsFile, readoutsCsv, runCalibration, writeTextAtomic, type FittedModel } from './calibration';

export interface RunOptions {
  /** spec text to use instead of the file on disk (e.g. unsaved editor text) */
  specText?: string;
  /** folder inputs and outputs must stay inside (default: the current directory) */
  workspaceRoot?: string;
  /** files outside workspaceRoot allowed (the CLI's --trust-paths) */
  trustPaths?: boolean;
  /** how the user lifts the boundary, for the refusals' advice (the extension's words; default the CLI's --trust-paths) */
  trustHint?: string;
  /** polled during the fits; true cancels */
  shouldStop?: () => boolean;
  /** short progress notes ("fitting model 2 of 3: gompertz") */
  onProgress?: (msg: string) => void;
  /** analysis switches and time budgets (default ANALYSIS_DEFAULTS) */
  analysis?: AnalysisOptions;
  /**
   * fits the groups of data.groupBy elsewhere (the CLI's worker pool): called with the number of groups, resolves to
   * each group's fits in the groups' order (what runSpecGroups gives for them), or an ErrorReport
   */
  groupRunner?: (groups: number) => Promise<GroupFit[] | ErrorReport>;
}


/**
 * Time budgets of profiling and cross-validation per model. Generous on purpose: a budget that runs out makes the
 * result depend on the machine's speed, and the same spec and data must give byte-identical reports.
 */
export const ANALYSIS_DEFAULTS: AnalysisOptions = { profileSeconds: DEFAULTS.analysis.profileSeconds, cvSeconds: DEFAULTS.analysis.cvSeconds };

/** Seed of every randomised step (multi-start); fixed so that the same spec and data give the same report. */
export const RUN_SEED = 1;

/** Results files leave out per-point arrays above this many rows (the report says pointsOmitted: true). */
export const MAX_POINTS_IN_FILE = 10000;

export function sha256(text: string | Buffer): string {
  return 'sha256:' + createHash('sha256').update(text).digest('hex');
}

/** The spec's name in reports: its file name, so that results do not depend on the folder the run started in. */
function specDisplayName(specPath: string): string {
  return path.basename(specPath);
}

// ------------------------------------------------------------------ errors

function errorReport(spec: string, message: string, extra: { path?: JsonPath; location?: FileLocation; problems?: Problem[] } = {}): ErrorReport {
  const error: ErrorReport['error'] = { message };
  if (extra.path) error.path = extra.path;
  if (extra.location) error.location = extra.location;
  if (extra.problems && extra.problems.length) error.problems = extra.problems;
  return { version: 1, spec, error };
}

function fromProblems(spec: string, problems: Problem[]): ErrorReport {
  const errors = problems.filter(p => p.severity === 'error');
  const first = errors[0];
  const more = errors.length > 1 ? ` (and ${errors.length - 1} more problem${errors.length > 2 ? 's' : ''})` : '';
  return errorReport(spec, first.message + more, { path: first.path, location: first.location, problems });
}

function locationOf(text: string, file: string, jsonPath: JsonPath): FileLocation | undefined {
  try {
    const at = locatePath(text, jsonPath);
    return at ? { file, line: at.line, column: at.column } : undefined;
  } catch {
    return undefined;
  }
}

/** Message of something thrown that is not a user error: a bug, worded so the user knows to report it. */
function internalMessage(e: unknown, doing: string): string {
  const m = e instanceof Error ? e.message : String(e);
  return `internal error while ${doing}: ${m} — this is a bug in Curvewright; please report it with the spec and data file`;
}

// ------------------------------------------------------------------ columns

/** Columns of the CSV read as text: those a where filter compares with quoted text, and the groupBy columns. */
export function textColumnsNeeded(spec: NormalizedSpec, header: string[]): string[] {
  const wanted = new Set([...whereTextColumns(spec.data.where), ...(spec.data.groupBy ?? [])]);
  return header.filter(c => wanted.has(c));
}

// ------------------------------------------------------------------ output path checks

/** Why `output` may not be written, or null when it may (the workspace boundary of src/engine/paths.ts). */
export async function outputRefusal(
  outputAbs: string,
  inputs: { spec: string; data: string },
  workspaceRoot: string | undefined,
  trustPaths = false,
  trustHint?: string,
): Promise<string | null> {
  return pathOutputRefusal('output', outputAbs, 'results', {
    root: workspaceRoot ?? process.cwd(),
    trustOutside: trustPaths,
    trustHint,
    inputs: [inputs.spec, inputs.data],
  });
}

// ------------------------------------------------------------------ header in messages

/** Whether messages may quote the header (src/engine/data/csv.ts headerShape), as validateSpec's context. */
function shapeContext(file: string, header: string[]): { columnsHidden?: string; otherDelimiter?: string } {
  const shape = headerShape(file, header);
  return shape.shown ? (shape.otherDelimiter !== undefined ? { otherDelimiter: shape.otherDelimiter } : {}) : { columnsHidden: shape.why };
}

/** A spec checked again with its data file's header, or null when the file may not or cannot be read. */
async function validateWithColumns(
  raw: unknown,
  data: { file: string; fileGiven: string; delimiter: NormalizedSpec['data']['delimiter']; decimal: NormalizedSpec['data']['decimal'] },
  ctx: { file: string; text: string; workspaceRoot: string; trustPaths: boolean },
  trustHint?: string,
): Promise<ReturnType<typeof validateSpec> | null> {
  if (await inputRefusal('data.file', data.file, { root: ctx.workspaceRoot, trustOutside: ctx.trustPaths, trustHint })) return null;
  let header: string[];
  try {
    header = await readHeader(data.file, { delimiter: data.delimiter, decimal: data.decimal, label: data.fileGiven });
  } catch {
    return null; // the first problems stand; the data file's own problem comes once the spec is fixed
  }
  return validateSpec(raw, { ...ctx, columns: header, dataLabel: data.fileGiven, ...shapeContext(data.file, header) });
}

// ------------------------------------------------------------------ the run

/** Run a spec given by its file (or its text in opts.specText). Resolves to a FitReport or an ErrorReport; never rejects for user input. */
export async function runSpecFile(specPath: string, opts: RunOptions = {}): Promise<RunResult> {
  const name = specDisplayName(specPath);
  let text: string;
  if (opts.specText !== undefined) text = opts.specText;
  else {
    try {
      text = await fsp.readFile(specPath, 'utf8');
    } catch (e) {
      const code = (e as NodeJS.ErrnoException).code;
      const why = code === 'ENOENT' ? 'no such file' : code === 'EISDIR' ? 'it is a folder' : code === 'EACCES' ? 'permission denied' : (e as Error).message;
      return errorReport(name, `cannot read the spec ${name}: ${why} — check the path`, { location: { file: name } });
    }
  }
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  try {
    return (await runSpecText(specPath, text, opts)) as RunResult;
  } catch (e) {
    if (e instanceof DataError) return errorReport(name, e.message, { path: e.path, location: e.location });
    if (e instanceof FormulaError) return errorReport(name, e.message);
    return errorReport(name, internalMessage(e, `running ${specPath}`));
  }
}

/**
 * The separate fits of the groups at `indices` (positions in the groups' order) of a spec with data.groupBy: the same
 * computation as runSpecFile makes for them, for a worker of the CLI pool. Resolves to an ErrorReport where
 * runSpecFile would.
 */
export async function runSpecGroups(specPath: string, opts: Omit<RunOptions, 'groupRunner'>, indices: number[]): Promise<GroupFit[] | ErrorReport> {
  const name = specDisplayName(specPath);
  try {
    let text = opts.specText ?? (await fsp.readFile(specPath, 'utf8'));
    if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
    const r = await runSpecText(specPath, text, { ...opts, onlyGroups: indices });
    if ('groupFits' in r) return r.groupFits;
    if ('error' in r) return r;
    return errorReport(name, internalMessage(new Error('the spec has no groups'), `fitting groups of ${specPath}`));
  } catch (e) {
    if (e instanceof DataError) return errorReport(name, e.message, { path: e.path, location: e.location });
    if (e instanceof FormulaError) return errorReport(name, e.message);
    return errorReport(name, internalMessage(e, `running ${specPath}`));
  }
}

/** Same as runSpecFile with the spec text given; the data file is read from disk relative to specPath. */
export function runSpec(specText: string, specPath: string, opts: Omit<RunOptions, 'specText'> = {}): Promise<RunResult> {
  return runSpecFile(specPath, { ...opts, specText });
}

async function runSpecText(specPath: string, text: string, opts: RunOptions & { onlyGroups?: number[] }): Promise<RunResult | { groupFits: GroupFit[] }> {
  const name = specDisplayName(specPath);
  const specHash = sha256(text);
  const progress = opts.onProgress ?? (() => undefined);

  // 1. syntax
  const parsed = parseSpecText(text, name);
  if (parsed.problems.some(p => p.severity === 'error')) return fromProblems(name, parsed.problems);

  // 2. shape, without and then with the data file's columns
  const workspaceRoot = opts.workspaceRoot ?? process.cwd();
  const trustPaths = opts.trustPaths === true;
  let first = validateSpec(parsed.raw, { file: specPath, text, workspaceRoot, trustPaths });
  const failed = (v: typeof first) => !v.spec || v.problems.some(p => p.severity === 'error');
  if (failed(first)) {
    // check again with the data file's header when it can be read (inside the boundary): every problem in one pass,
    // and names that only the header settles (a column "time h" written as is) accepted
    const again = first.data ? await validateWithColumns(parsed.raw, first.data, { file: specPath, text, workspaceRoot, trustPaths }, opts.trustHint) : null;
    if (!again || failed(again)) return fromProblems(name, [...parsed.problems, ...(again ? again.problems : first.problems)]);
    first = again;
  }
  if (!first.spec) return fromProblems(name, [...parsed.problems, ...first.problems]);
  const dataFile = first.spec.data.file;
  const dataLabel = first.spec.data.fileGiven;
  const readOpts = { delimiter: first.spec.data.delimiter, decimal: first.spec.data.decimal, label: dataLabel };
  // the workspace boundary: nothing outside the root is read (after following symlinks) unless trusted
  const dataRefusal = await inputRefusal('data.file', dataFile, { root: workspaceRoot, trustOutside: trustPaths, trustHint: opts.trustHint });
  if (dataRefusal) return errorReport(name, dataRefusal, { path: ['data', 'file'], location: locationOf(text, name, ['data', 'file']) });
  if (first.spec.output) {
    const early = await outputRefusal(first.spec.output, { spec: specPath, data: dataFile }, workspaceRoot, trustPaths, opts.trustHint);
    if (early) return errorReport(name, early, { path: ['output'], location: locationOf(text, name, ['output']) });
  }
  const header = await readHeader(dataFile, readOpts);
  const checked = validateSpec(parsed.raw, { file: specPath, text, columns: header, workspaceRoot, dataLabel, trustPaths, ...shapeContext(dataFile, header) });
  const specProblems = [...parsed.problems, ...checked.problems];
  if (!checked.spec || specProblems.some(p => p.severity === 'error')) return fromProblems(name, specProblems);
  const spec = checked.spec;

  if (spec.output) {
    const refusal = await outputRefusal(spec.output, { spec: specPath, data: spec.data.file }, workspaceRoot, trustPaths, opts.trustHint);
    if (refusal) return errorReport(name, refusal, { path: ['output'], location: locationOf(text, name, ['output']) });
  }

  // 3. data
  progress(`reading ${spec.data.fileGiven}`);
  // the columns the spec reads (those the header has; validateSpec has reported any other), and for each the data key
  // that reads it, so that a bad cell points at that key (e.g. ["data","y"]) rather than at the file
  const columns = columnsNeeded(spec, header).filter(c => header.includes(c));
  const table = await readTable(spec.data.file, { columns, columnPaths: columnPaths(spec, header), textColumns: textColumnsNeeded(spec, header), ...readOpts, badRows: spec.data.badRows });
  const prepared = prepareData(spec, table);
  const dataProblems = dedupe([...table.problems, ...prepared.problems]);
  if (dataProblems.some(p => p.severity === 'error')) return fromProblems(name, [...specProblems, ...dataProblems]);
  // the weights the fit minimises with: precision weights (sigma or weight) times frequency weights (data.count)
  const wFit = fitWeights(prepared.w, prepared.count);
  const data = { X: prepared.X, y: prepared.y, w: wFit };
  const thresholds: Thresholds = resolveThresholds(spec.thresholds);
  // Pearson r of y with each x, and the hint to try a straight line when |r| is high (common practice)
  const correlated = dataCorrelation(prepared.variables, prepared.X, prepared.y, thresholds);
  const correlation = correlated.correlation;
  const hasLine = spec.models.some(m => m.builtin === 'linear' || m.polynomial === 1);
  // the hint is moot when a line is already fitted, and about the pooled data when the groups are fitted separately
  const correlationProblems = hasLine || spec.data.groupBy ? [] : correlated.problems;

  // 4. models (with data.groupBy: every model on every group, group by group, in the groups' order)
  type Fitted = { models: ModelReport[]; analysed: { input: ModelAnalysisInput; report: ModelReport }[]; hidden: { index: number; report: ModelReport }[] };
  const fitAll = (sub: Subset, group?: string): Fitted | ErrorReport => {
    const models: ModelReport[] = [];
    const hidden: Fitted['hidden'] = [];
    const analysed: Fitted['analysed'] = [];
    const inGroup = group !== undefined ? ` in group '${group}'` : '';
    for (let i = 0; i < spec.models.length; i++) {
      const m = spec.models[i];
      progress(`fitting model ${i + 1} of ${spec.models.length}: ${m.name}${inGroup}`);
      let built: ReturnType<typeof buildModel>;
      try {
        built = buildModel(m, prepared.variables, { X: sub.X, y: sub.y });
      } catch (e) {
        if (e instanceof FormulaError || e instanceof DataError || isUserError(e)) {
          const subPath = (e as { path?: unknown }).path;
          const p: JsonPath = ['models', i, ...(Array.isArray(subPath) && subPath.length ? (subPath as JsonPath) : [m.kind])];
          return errorReport(name, `model '${m.name}'${inGroup}: ${(e as Error).message}`, { path: p, location: locationOf(text, name, p) });
        }
        models.push(withGroup(failedModel(m, i, e, `building the model${inGroup}`), group));
        continue;
      }
      const free = built.fixed.filter(f => !f).length;
      if (group !== undefined && sub.y.length < free) {
        if (!m.shared) models.push(tooFewRows(m, i, built, sub.y.length, free, group));
        continue;
      }
      try {
        const ls = fitModel(built, sub, {
          maxIterations: m.solver.maxIterations,
          seconds: m.solver.seconds,
          multiStart: m.solver.multiStart,
          seed: RUN_SEED,
          shouldStop: opts.shouldStop,
        });
        // a robust loss: iteratively reweighted least squares from the least-squares fit (stats/robust.ts)
        // data.sigma a variance function: weights |μ̂|^(−2θ) refitted to a fixed point (data/variance.ts)
        const variance = spec.data.variance;
        if (variance && variance.power === 'estimate' && ls.converged && informativeGroups(replicateGroups(sub.X, sub.y.length), sub.y, ls.f) < MIN_REPLICATE_GROUPS) {
          const P: JsonPath = ['data', 'sigma', 'power'];
          return errorReport(name,
            `data.sigma.power "estimate" needs replicates${inGroup}: θ comes from the scatter of y at x values measured two or more times, and at least ${MIN_REPLICATE_GROUPS} such x values with some scatter are needed (found ${informativeGroups(replicateGroups(sub.X, sub.y.length), sub.y, ls.f)}) — measure replicates, give θ as a number (e.g. "power": 1 for a constant CV), or use data.weight (e.g. "1/y^2")`,
            { path: P, location: locationOf(text, name, P) });
        }
        const vf = variance && ls.converged ? varianceFit(variance.power, ls, sub.X, sub.y, refitWith(built, sub, m, opts.shouldStop)) : null;
        const subW = vf ? { ...sub, w: vf.w, precision: vf.w } : sub;
        // errors in x (data.sigmaX): the orthogonal-distance fit from the least-squares one (stats/errorsInX.ts)
        const eiv = sub.wx && ls.converged && sub.w ? errorsInXFit(built, sub.X[0], sub.y, sub.w, sub.wx, ls, { maxIterations: m.solver.maxIterations, seconds: m.solver.seconds, shouldStop: opts.shouldStop }) : null;
        const rob = m.loss && ls.converged ? robustFit(m.loss, m.lossScale ?? 'mad', subW, vf ? vf.result : ls, refitWith(built, sub, m, opts.shouldStop), built.fixed) : null;
        const final = rob?.result ?? eiv?.result ?? vf?.result;
        const result = final ? { ...ls, ...final, startValues: ls.startValues, startSource: ls.startSource } : ls;
        const input: ModelAnalysisInput = {
          index: i,
          name: m.name,
          kind: built.kind,
          formula: built.formula,
          builtin: built.builtin,
          degree: built.degree,
          compiled: built.compiled,
          params: built.params,
          lower: built.lower,
          upper: built.upper,
          fixed: built.fixed,
          linear: built.compiled.linear,
          variables: prepared.variables,
          X: sub.X,
          y: sub.y,
          w: rob ? rob.w : eiv ? eiv.wEff : vf ? vf.w : sub.w,
          count: sub.count,
          precision: sub.precision,
          rows: sub.rows,
          sigmaMode: spec.data.sigmaMode,
          result,
          startValues: result.startValues,
          startSource: result.startSource,
          confidence: spec.confidence,
          predict: spec.predict,
          solveFor: spec.solveFor,
          predictWeight: spec.predictWeight,
          thresholds,
          solverOptions: { maxIterations: m.solver.maxIterations, seconds: m.solver.seconds },
          shouldStop: opts.shouldStop,
          options: { ...ANALYSIS_DEFAULTS, ...opts.analysis, ...(rob ? { profile: false } : {}), ...(eiv ? { profile: false, crossValidate: false } : {}) },
        };
        const analysedReport = analyzeModel(input);
        if (vf) analysedReport.variance = { scheme: 'power', theta: vf.theta, estimated: vf.estimated, replicateGroups: vf.groups, iterations: vf.iterations, converged: vf.converged };
        if (vf && !vf.converged)
          analysedReport.problems.push({
            code: 'variance-no-convergence', severity: 'warning', path: ['data', 'sigma'],
            message: `${m.name}${inGroup}: the weights of the variance function (σ ∝ |fitted|^θ, θ = ${vf.theta.toPrecision(4)}) did not settle within ${vf.iterations} refits, so the estimates are those of the last refit — give θ as a number, or check the replicates for outliers`,
          });
        if (rob && m.loss) applyRobust(analysedReport, input, rob, subW, m.loss, typeof m.lossScale === 'number');
        if (eiv) applyErrorsInX(analysedReport, eiv, spec.data.sigmaX as string, prepared.variables[0]);
        const report = withGroup(analysedReport, group);
        // a shared model's separate fits are not reported: they start its joint fit and are its sharing test's baseline
        if (group !== undefined && m.shared) hidden.push({ index: i, report });
        else {
          models.push(report);
          analysed.push({ input, report });
        }
      } catch (e) {
        if (!m.shared) models.push(withGroup(failedModel(m, i, e, `fitting model '${m.name}'${inGroup}`, built), group));
      }
    }
    return { models, analysed, hidden };
  };

  // 4b. a joint fit of all groups with the parameters in m.shared common (see joint.ts)
  const fitJoint = (m: NormalizedSpec['models'][number], separate: (ModelReport | null)[], ids: string[], of: Int32Array | number[]): { report: ModelReport } | ErrorReport => {
    const written = m;
    const shared = m.shared!;
    const P: JsonPath = ['models', m.index];
    let base: ReturnType<typeof buildModel>;
    let built: ReturnType<typeof buildModel>;
    let groupVar = '.group';
    while (prepared.variables.includes(groupVar)) groupVar = `.${groupVar}`;
    try {
      base = buildModel(written, prepared.variables, { X: prepared.X, y: prepared.y });
      const starts = separate.map(r => (r && r.status === 'converged' ? Object.fromEntries(Object.entries(r.params).map(([k, v]) => [k, v.value])) : null));
      built = jointBuiltModel(base, shared, ids, starts, groupVar);
    } catch (e) {
      if (e instanceof FormulaError || e instanceof DataError || isUserError(e))
        return errorReport(name, `model '${m.name}' (joint fit of the groups): ${(e as Error).message}`, { path: P, location: locationOf(text, name, P) });
      return { report: { ...failedModel(m, m.index, e, 'building the joint fit of the groups'), group: null, shared } };
    }
    // the group number of each row: the joint model reads each row with its own group's parameters (joint.ts)
    const X = [...prepared.X, Float64Array.from(of)];
    const fitData = { X, y: prepared.y, w: wFit };
    try {
      const result = fitModel(built, fitData, { maxIterations: m.solver.maxIterations, seconds: m.solver.seconds, multiStart: m.solver.multiStart, seed: RUN_SEED, shouldStop: opts.shouldStop });
      const input: ModelAnalysisInput = {
        index: m.index, name: m.name, kind: built.kind, formula: built.formula, builtin: undefined, degree: undefined,
        compiled: built.compiled, params: built.params, lower: built.lower, upper: built.upper, fixed: built.fixed,
        linear: built.compiled.linear, variables: [...prepared.variables, groupVar], X, y: prepared.y, w: wFit,
        count: prepared.count, precision: prepared.w, rows: prepared.rows, sigmaMode: spec.data.sigmaMode, result,
        startValues: result.startValues, startSource: result.startSource, confidence: spec.confidence,
        // predictions and inverse predictions: for every group, at its own parameters
        predict: spec.predict, solveFor: spec.solveFor, jointGroups: { ids, variables: prepared.variables }, predictWeight: spec.predictWeight, thresholds,
        solverOptions: { maxIterations: m.solver.maxIterations, seconds: m.solver.seconds },
        shouldStop: opts.shouldStop, options: { ...ANALYSIS_DEFAULTS, ...opts.analysis },
      };
      const r = analyzeModel(input);
      // the report speaks of the model as written: its formula and kind, the x variables without the group indicators
      if (r.points) r.points.x = Object.fromEntries(Object.entries(r.points.x).filter(([k]) => prepared.variables.includes(k)));
      const { name: rn, ...rest } = r;
      return { report: { name: rn, group: null, shared, ...rest, kind: base.kind, formula: base.formula } as ModelReport };
    } catch (e) {
      return { report: { ...failedModel(m, m.index, e, `fitting model '${m.name}' to all groups jointly`, built), group: null, shared } };
    }
  };

  // 5. comparison (with groups: within each group)
  const runProblems: Problem[] = [];
  const compare = (analysed: Fitted['analysed'], inGroup: string, sink: Problem[] = runProblems): FitReport['comparison'] => {
    if (analysed.length === 0) return null;
    try {
      const c = compareModels(analysed.map(a => a.input), analysed.map(a => a.report), thresholds);
      // robust-loss fits have no likelihood and no residual sum of squares to test: out of the F-tests and the pick
      const robust = new Set(analysed.filter(a => a.report.robust).map(a => a.report.name));
      if (robust.size === 0) return c;
      c.fTests = c.fTests.filter(t => !robust.has(t.simpler) && !robust.has(t.richer));
      const note = `${[...robust].map(n => `'${n}'`).join(', ')} ${robust.size === 1 ? 'uses a robust loss, which has' : 'use robust losses, which have'} no likelihood, so AICc does not rank ${robust.size === 1 ? 'it' : 'them'} — compare the estimates and the down-weighted rows instead.`;
      c.reason = c.best ? `${c.reason.replace(' is the only model that converged.', ' is the only model ranked by AICc.')} ${note}` : note;
      return c;
    } catch (e) {
      sink.push({ code: 'comparison-failed', severity: 'warning', message: internalMessage(e, `comparing the models${inGroup}`), path: ['models'] });
      return null;
    }
  };
  const models: ModelReport[] = [];
  let comparison: FitReport['comparison'] = null;
  let groups: GroupReport[] | undefined;
  let single: FittedModel[] = [];
  if (!prepared.groups) {
    const fitted = fitAll({ ...data, count: prepared.count, precision: prepared.w, rows: prepared.rows, wx: prepared.wx ?? null });
    if ('error' in fitted) return fitted;
    models.push(...fitted.models);
    single = fitted.analysed;
    comparison = compare(fitted.analysed, '');
  } else {
    const G = prepared.groups;
    const members: number[][] = G.ids.map(() => []);
    for (let j = 0; j < G.of.length; j++) members[G.of[j]].push(j);
    groups = G.ids.map((id, g) => ({ id, key: G.keys[g], rows: G.rows[g], used: members[g].length }));
    const byGroup: Record<string, GroupComparison> = {};
    const hiddenOf = new Map<number, (ModelReport | null)[]>();
    // each group's separate fits: here, or on the worker pool (opts.groupRunner), the same computation either way
    const fitGroup = (g: number): GroupFit | ErrorReport => {
      const fitted = fitAll(subset(prepared, members[g]), G.ids[g]);
      if ('error' in fitted) return fitted;
      const problems: Problem[] = [];
      const c = compare(fitted.analysed, ` in group '${G.ids[g]}'`, problems);
      const comparisonOf = c ?? { ranking: [], fTests: [], best: null, reason: `No model could be fitted in group '${G.ids[g]}', so none can be recommended.` };
      return { models: fitted.models, hidden: fitted.hidden, comparison: comparisonOf, problems };
    };
    if (opts.onlyGroups) {
      const groupFits: GroupFit[] = [];
      for (const g of opts.onlyGroups) {
        if (opts.shouldStop?.()) break;
        const fit = fitGroup(g);
        if ('error' in fit) return fit;
        groupFits.push(fit);
      }
      return { groupFits };
    }
    let fits: GroupFit[] = [];
    if (opts.groupRunner && G.ids.length > 1) {
      progress(`fitting ${G.ids.length} groups on the worker pool`);
      const r = await opts.groupRunner(G.ids.length);
      if ('error' in r) return r;
      fits = r;
    } else
      for (let g = 0; g < G.ids.length; g++) {
        if (opts.shouldStop?.()) break;
        const fit = fitGroup(g);
        if ('error' in fit) return fit;
        fits.push(fit);
      }
    fits.forEach((fit, g) => {
      models.push(...fit.models);
      for (const h of fit.hidden) {
        if (!hiddenOf.has(h.index)) hiddenOf.set(h.index, G.ids.map(() => null));
        hiddenOf.get(h.index)![g] = h.report;
      }
      runProblems.push(...fit.problems);
      byGroup[G.ids[g]] = fit.comparison;
    });
    comparison = {
      ranking: [],
      fTests: [],
      best: null,
      reason: `${G.ids.length} group${G.ids.length === 1 ? '' : 's'} fitted separately: the comparison within each group is in byGroup`,
      byGroup,
    };
    // joint fits (models[].shared): one fit of all groups, after the separate fits that give its starts
    const sharing: SharingTest[] = [];
    for (const m of spec.models) {
      if (!m.shared || opts.shouldStop?.()) continue;
      const hiddenFits = hiddenOf.get(m.index) ?? G.ids.map(() => null);
      progress(`fitting model ${m.index + 1} of ${spec.models.length}: ${m.name} (joint fit of ${G.ids.length} groups)`);
      const joint = fitJoint(m, hiddenFits, G.ids, G.of);
      if ('error' in joint) return joint;
      models.push(joint.report);
      // the separate fits it is tested against: the spec's model of the same builtin/polynomial/formula without shared
      const twin = spec.models.find(o => !o.shared && o.kind === m.kind && o.builtin === m.builtin && o.polynomial === m.polynomial && o.formula === m.formula);
      const sep = twin ? G.ids.map(id => models.find(r => r.name === twin.name && r.group === id) ?? null) : hiddenFits;
      sharing.push(sharingTest(m.name, twin ? twin.name : null, m.shared, joint.report, sep, spec.data.sigmaMode === 'absolute'));
    }
    if (sharing.length) comparison.sharing = sharing;
  }

  // 6. expectations and derived quantities
  const expect = checkExpectations(spec, models);
  const derived = spec.derived ? models.flatMap(m => derivedFor(spec.derived!, m, { confidence: spec.confidence, absolute: spec.data.sigmaMode === 'absolute' })) : undefined;
  if (groups) {
    const ids = groups.map(g => g.id);
    for (const [modelName, params] of Object.entries(spec.expect ?? {}))
      for (const key of Object.keys(params)) {
        const m = /^(.+)\[(.+)\]$/.exec(key);
        if (m && !ids.includes(m[2]))
          runProblems.push({
            code: 'spec-expect',
            severity: 'error',
            message: `expect.${modelName} names group '${m[2]}' in '${key}', which is not a group of data.groupBy${suggestText(m[2], ids)} (groups: ${ids.slice(0, 12).join(', ')}${ids.length > 12 ? ', …' : ''})`,
            path: ['expect', modelName, key],
            location: locationOf(text, name, ['expect', modelName, key]),
          });
      }
  }

  // 7. calibration: predictions back on the original scale of a transformed y, then unknowns, controls and limits
  addOriginalScale(spec, models);
  const calibration = spec.unknowns || spec.controls || spec.limits
    ? await runCalibration(spec, single, comparison ? comparison.best : null, {
        workspaceRoot,
        trustPaths,
        locate: (p) => locationOf(text, name, p),
        xLabel: unquote(spec.data.x[prepared.variables[0]] ?? 'x'),
      })
    : null;
  if (calibration) runProblems.push(...calibration.problems);
  const potency = spec.potency && groups ? runPotency(spec, models, comparison, groups.map(g => g.id), { locate: (p) => locationOf(text, name, p) }) : null;

  const specDir = path.dirname(path.resolve(specPath));
  const report: FitReport = {
    version: 1,
    spec: name,
    ...(spec.title !== undefined ? { title: spec.title } : {}),
    ...(spec.plot !== undefined ? { plot: spec.plot } : {}),
    meta: { engine: ENGINE_VERSION, specHash, dataHash: table.hash, ...(calibration?.readingsHash ? { readingsHash: calibration.readingsHash } : {}), seed: RUN_SEED },
    data: dataReport(spec, table, prepared, correlation),
    ...(groups ? { groups } : {}),
    models,
    comparison,
    best: comparison ? comparison.best : null,
    problems: dedupe([...specProblems, ...dataProblems, ...correlationProblems, ...runProblems]),
    expect,
    ...(derived ? { derived } : {}),
    ...(calibration?.unknowns ? { unknowns: calibration.unknowns } : {}),
    ...(calibration?.controls ? { controls: calibration.controls } : {}),
    ...(calibration?.limits ? { limits: calibration.limits } : {}),
    ...(potency ? { potency } : {}),
    confidence: spec.confidence,
  };
  // results files are committed: no absolute paths of this machine in them, only paths relative to the spec
  report.problems = relativeProblems(report.problems, specDir);
  for (const m of report.models) m.problems = relativeProblems(m.problems, specDir);
  return report;
}

/** Precision weights times frequency weights (data.count); null when neither is given. */
function fitWeights(w: Float64Array | null, count: Float64Array | null): Float64Array | null {
  if (!count) return w;
  return Float64Array.from(count, (c, i) => c * (w ? w[i] : 1));
}

/** A weighted refit of a built model from θ0 with its bounds and fixed parameters (the steps of a robust fit). */
function refitWith(built: ReturnType<typeof buildModel>, sub: Subset, m: NormalizedSpec['models'][number], shouldStop?: () => boolean) {
  return (w: Float64Array, theta0: Float64Array) => {
    const problem = modelProblem(built, { X: sub.X, y: sub.y, w });
    const o = { theta0, lower: built.lower, upper: built.upper, fixed: built.fixed, maxIterations: m.solver.maxIterations, seconds: m.solver.seconds, shouldStop };
    return built.compiled.linear ? solveLinear(problem, o) : solveNonlinear(problem, o);
  };
}

/** Errors thrown by buildModel with a user message (not a bug): plain Errors whose name says so. */
function isUserError(e: unknown): boolean {
  return e instanceof Error && (e.name === 'SpecError' || e.name === 'ModelError' || (e as { user?: boolean }).user === true);
}

/** Problems with absolute paths under `dir` rewritten relative to it (messages and locations). */
export function relativeProblems(problems: Problem[], dir: string): Problem[] {
  const prefixes = [dir + path.sep, dir + '/'];
  const strip = (s: string) => prefixes.reduce((acc, pre) => acc.split(pre).join(''), s);
  return problems.map(p => {
    const q: Problem = { ...p, message: strip(p.message) };
    if (p.location) q.location = { ...p.location, file: path.isAbsolute(p.location.file) ? path.relative(dir, p.location.file).split(path.sep).join('/') : p.location.file };
    return q;
  });
}

function dedupe(problems: Problem[]): Problem[] {
  const seen = new Set<string>();
  return problems.filter(p => {
    const k = JSON.stringify([p.code, p.severity, p.message, p.path]);
    if (seen.has(k)) return false;
    seen.add(k);
    return true;
  });
}

function failedModel(
  m: NormalizedSpec['models'][number],
  index: number,
  e: unknown,
  doing: string,
  built?: { formula: string; params: string[]; compiled: { linear: boolean } },
): ModelReport {
  const params: Record<string, ParamReport> = Object.create(null);
  for (const p of built?.params ?? []) params[p] = { value: NaN, se: null, t: null, p: null, ci: null, profileCi: null, fixed: false, atBound: null };
  return {
    name: m.name,
    kind: m.kind,
    formula: built?.formula ?? m.formula ?? '',
    linear: built?.compiled.linear ?? false,
    status: 'failed',
    termination: 'non-finite',
    iterations: 0,
    paramOrder: built?.params ?? [],
    params,
    covariance: null,
    correlation: null,
    stats: {
      n: 0, dof: 0, sse: NaN, sigma: null, rmse: NaN, r2: null, adjR2: null, chi2: null, reducedChi2: null,
      logLik: null, aic: null, aicc: null, bic: null, cvRmse: null, cvFolds: null, cvMethod: null,
    },
    residualTests: null,
    band: null,
    predictions: [],
    inverse: [],
    problems: [{ code: 'fit-failed', severity: 'error', message: internalMessage(e, doing), path: ['models', index] }],
  };
}

function suggestText(word: string, candidates: string[]): string {
  const s = suggest(word, candidates);
  return s !== undefined ? ` — did you mean '${s}'?` : '';
}

/** A model report tagged with its group (and its problems too), or unchanged without groups. */
function withGroup(report: ModelReport, group: string | undefined): ModelReport {
  if (group === undefined) return report;
  const { name, ...rest } = report;
  return { name, group, ...rest, problems: report.problems.map(p => ({ ...p, group })) };
}

/** The points of `members` (indices into the prepared arrays) as data of their own. */
/** The rows one fit uses: x, y, the weights the fit minimises with (w), frequency weights and precision weights. */
interface Subset { X: Float64Array[]; y: Float64Array; w: Float64Array | null; count: Float64Array | null; precision: Float64Array | null; rows: Int32Array; wx?: Float64Array | null }

function subset(prepared: ReturnType<typeof prepareData>, members: number[]): Subset {
  const pick = <T extends Float64Array | Int32Array>(a: T, make: (n: number) => T): T => {
    const out = make(members.length);
    for (let k = 0; k < members.length; k++) out[k] = a[members[k]];
    return out;
  };
  const f64 = (n: number) => new Float64Array(n);
  const precision = prepared.w ? pick(prepared.w, f64) : null;
  const count = prepared.count ? pick(prepared.count, f64) : null;
  return {
    X: prepared.X.map(x => pick(x, f64)),
    y: pick(prepared.y, f64),
    w: fitWeights(precision, count),
    count,
    precision,
    rows: pick(prepared.rows, n => new Int32Array(n)),
    wx: prepared.wx ? pick(prepared.wx, f64) : null,
  };
}

/** The entry of a model a group has too few rows for: not fitted, with a problem naming the group. */
function tooFewRows(m: NormalizedSpec['models'][number], index: number, built: { formula: string; params: string[]; compiled: { linear: boolean } }, n: number, free: number, group: string): ModelReport {
  const r = failedModel(m, index, null, '', built);
  r.stats.n = n;
  r.termination = 'singular'; // fewer rows than free parameters: the Jacobian cannot have full column rank
  r.problems = [{
    code: 'group-too-few-rows',
    severity: 'error',
    message: `group '${group}' has ${n} row${n === 1 ? '' : 's'} to fit, but model '${m.name}' estimates ${free} parameters — it was not fitted in this group (the other groups were); add data to the group, fix parameters, or leave the group out with data.where`,
    path: ['models', index],
  }];
  return withGroup(r, group);
}

/** The groups an expect key applies to: 'K[R1]' -> K in group R1; a plain name -> every group (or no group). */
function expectTargets(param: string, groups: string[] | null): { param: string; group?: string }[] {
  if (!groups) return [{ param }];
  const m = /^(.+)\[(.+)\]$/.exec(param);
  if (m) return [{ param: m[1], group: m[2] }];
  return groups.map(group => ({ param, group }));
}

function checkExpectations(spec: NormalizedSpec, models: ModelReport[]): ExpectResult[] {
  const out: ExpectResult[] = [];
  const groupIds = spec.data.groupBy ? [...new Set(models.filter(m => typeof m.group === 'string').map(m => m.group as string))] : null;
  for (const [modelName, params] of Object.entries(spec.expect ?? {})) {
    // a joint fit (models[].shared) has one entry whose parameters are keyed as expect writes them: 'r', 'K[R1]'
    const joint = models.find(m => m.name === modelName && m.group === null);
    for (const [key, e] of Object.entries(params)) {
      for (const { param, group } of joint ? [{ param: key, group: undefined }] : expectTargets(key, groupIds)) {
        const model = joint ?? models.find(m => m.name === modelName && m.group === group);
        const pr = model?.params[param];
        const actual = pr && Number.isFinite(pr.value) && model!.status === 'converged' ? pr.value : null;
        const r: ExpectResult = { model: modelName, ...(group !== undefined ? { group } : {}), param, value: e.value, actual: null, ok: false };
        let allowed: number;
        if ('tol' in e) {
          r.tol = e.tol;
          allowed = e.tol;
        } else {
          r.rel = e.rel;
          allowed = e.rel * Math.abs(e.value);
        }
        r.actual = actual;
        // a relative slack of a few ulps so that a value pinned exactly at the edge is not failed by rounding
        r.ok = actual !== null && Math.abs(actual - e.value) <= allowed * (1 + 1e-12) + 4 * Number.EPSILON * Math.abs(e.value);
        out.push(r as ExpectResult);
      }
    }
  }
  return out;
}

function range(v: ArrayLike<number>): [number, number] {
  let lo = Infinity, hi = -Infinity;
  for (let i = 0; i < v.length; i++) { if (v[i] < lo) lo = v[i]; if (v[i] > hi) hi = v[i]; }
  return v.length ? [lo, hi] : [NaN, NaN];
}

function dataReport(spec: NormalizedSpec, table: Table, prepared: ReturnType<typeof prepareData>, correlation: Record<string, number | null>): DataReport {
  const vars = prepared.variables;
  const xRanges: Record<string, [number, number]> = {};
  const labels: { x: Record<string, string>; y: string } = { x: {}, y: unquote(spec.data.y) };
  vars.forEach((v, k) => {
    xRanges[v] = range(prepared.X[k]);
    labels.x[v] = unquote(spec.data.x[v] ?? v);
  });
  return {
    file: spec.data.fileGiven,
    rows: table.totalRows,
    used: prepared.y.length,
    dropped: prepared.dropped ?? table.dropped,
    ...(table.droppedTotal !== undefined && table.droppedTotal > (prepared.dropped ?? table.dropped).length ? { droppedTotal: table.droppedTotal } : {}),
    excluded: prepared.excluded,
    filtered: prepared.filtered,
    range: { x: vars.length === 1 ? xRanges[vars[0]] : xRanges, y: range(prepared.y) },
    correlation,
    labels,
  };
}

/** An expression as a label: backticks only quote column names, they are not part of them. */
function unquote(expr: string): string {
  return expr.replace(/`([^`]*)`/g, '$1');
}

// ------------------------------------------------------------------ deterministic JSON

export interface SerializeOptions {
  /** indent nested objects (arrays of numbers stay on one line); default false = one line */
  pretty?: boolean;
}

/** Top-level key order of a FitReport (others follow in insertion order). */
const REPORT_KEYS = ['version', 'spec', 'title', 'plot', 'error', 'meta', 'data', 'groups', 'models', 'comparison', 'best', 'problems', 'expect', 'derived', 'unknowns', 'controls', 'limits', 'potency', 'confidence'];

function normalise(v: unknown): unknown {
  if (typeof v === 'number') return Number.isFinite(v) ? (Object.is(v, -0) ? 0 : v) : null;
  if (v === null || typeof v !== 'object') return v === undefined ? undefined : v;
  if (ArrayBuffer.isView(v)) return Array.from(v as unknown as ArrayLike<number>, x => (Number.isFinite(x) ? (Object.is(x, -0) ? 0 : x) : null));
  if (Array.isArray(v)) return v.map(x => { const n = normalise(x); return n === undefined ? null : n; });
  const out: Record<string, unknown> = {};
  for (const [k, x] of Object.entries(v as Record<string, unknown>)) {
    const n = normalise(x);
    if (n !== undefined && typeof x !== 'function') out[k] = n;
  }
  return out;
}

function ordered(report: Record<string, unknown>): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const k of REPORT_KEYS) if (k in report) out[k] = report[k];
  for (const k of Object.keys(report)) if (!(k in out)) out[k] = report[k];
  return out;
}

function isFlat(a: unknown[]): boolean {
  return a.every(x => x === null || typeof x !== 'object' || (Array.isArray(x) && x.every(y => y === null || typeof y !== 'object')));
}

function pretty(v: unknown, indent: string): string {
  if (v === null || typeof v !== 'object') return JSON.stringify(v);
  if (Array.isArray(v)) {
    if (v.length === 0) return '[]';
    if (isFlat(v)) return JSON.stringify(v);
    const inner = indent + '  ';
    return '[\n' + v.map(x => inner + pretty(x, inner)).join(',\n') + '\n' + indent + ']';
  }
  const entries = Object.entries(v as Record<string, unknown>);
  if (entries.length === 0) return '{}';
  const inner = indent + '  ';
  return '{\n' + entries.map(([k, x]) => inner + JSON.stringify(k) + ': ' + pretty(x, inner)).join(',\n') + '\n' + indent + '}';
}

/**
 * The deterministic JSON of a run result: fixed top-level key order, numbers at full precision (shortest
 * round-trip form), NaN and ±Infinity as null, typed arrays as arrays, no timestamps.
 */
export function serializeReport(result: RunResult, opts: SerializeOptions = {}): string {
  const value = ordered(normalise(result) as Record<string, unknown>);
  return opts.pretty ? pretty(value, '') + '\n' : JSON.stringify(value);
}

/** The report as written to a results file: per-point arrays left out above MAX_POINTS_IN_FILE rows. */
export function reportForFile(report: FitReport): FitReport {
  if (report.data.used <= MAX_POINTS_IN_FILE) return report;
  return {
    ...report,
    models: report.models.map(m => {
      if (!m.points) return m;
      const { points: _omit, ...rest } = m;
      return { ...rest, pointsOmitted: true };
    }),
  };
}

// ------------------------------------------------------------------ results file

/** Raised when a results file may not or cannot be written; the message is for the user. */
export class OutputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'OutputError';
  }
}

/**
 * The absolute results-file and data-file paths a spec names, its outputPoints, the read-outs CSV (unknowns.output)
 * and the other files it reads (unknowns.file, controls.file) — read leniently from its text; null when absent.
 */
export async function specFiles(
  specPath: string,
  specText?: string,
): Promise<{ output: string | null; data: string | null; outputPoints: OutputPoints; table: string | null; readings: string[] }> {
  let text = specText;
  if (text === undefined) {
    try {
      text = await fsp.readFile(specPath, 'utf8');
    } catch (e) {
      throw new OutputError(`cannot read the spec ${specPath} to find its "output": ${(e as Error).message}`);
    }
  }
  type Raw = { output?: unknown; outputPoints?: unknown; data?: { file?: unknown }; unknowns?: { file?: unknown; output?: unknown }; controls?: { file?: unknown } };
  const raw = parseJsonc(text, [], { allowTrailingComma: true }) as Raw | undefined;
  const dir = path.dirname(specPath);
  const str = (v: unknown) => (typeof v === 'string' && v !== '' ? path.resolve(dir, v) : null);
  const output = raw ? str(raw.output) : null;
  const data = raw && raw.data ? str(raw.data.file) : null;
  const outputPoints: OutputPoints = raw && (raw.outputPoints === 'sidecar' || raw.outputPoints === 'omit') ? raw.outputPoints : 'inline';
  const table = raw && raw.unknowns && typeof raw.unknowns === 'object' ? str(raw.unknowns.output) : null;
  const readings = [raw?.unknowns && typeof raw.unknowns === 'object' ? str(raw.unknowns.file) : null, raw?.controls && typeof raw.controls === 'object' ? str(raw.controls.file) : null].filter(
    (f): f is string => f !== null,
  );
  return { output, data, outputPoints, table, readings };
}

/**
 * Write the report to the spec's `output` (read from the spec on disk, or opts.specText), atomically: a temporary
 * file in the same folder, then rename. Refuses a path outside opts.workspaceRoot (default: the current
 * directory) or onto an input file.
 * Returns the path written, or null when the spec has no `output`. Leaves an identical file untouched.
 */
export async function writeResults(
  report: FitReport,
  specPath: string,
  opts: { workspaceRoot?: string; specText?: string; trustPaths?: boolean; claimed?: Set<string>; inputs?: string[]; lockWaitMs?: number } = {},
): Promise<string | null> {
  const { output, data, outputPoints, table, readings } = await specFiles(specPath, opts.specText);
  // the read-outs CSV (unknowns.output) first: the results file names it, so a reader finding one finds the other
  const csv = table ? readoutsCsv(report) : null;
  if (table && csv !== null) {
    const refusal = await pathOutputRefusal('unknowns.output', table, 'table', {
      root: opts.workspaceRoot ?? process.cwd(),
      trustOutside: opts.trustPaths === true,
      inputs: [specPath, data ?? specPath, ...readings, ...(opts.inputs ?? [])],
      claimed: opts.claimed,
      isOwn: isReadoutsFile,
    });
    if (refusal) throw new OutputError(refusal);
    try {
      await writeTextAtomic(table, csv);
    } catch (e) {
      const code = (e as NodeJS.ErrnoException).code;
      const why = code === 'EACCES' || code === 'EPERM' ? 'permission denied' : code === 'ENOSPC' ? 'the disk is full' : (e as Error).message;
      throw new OutputError(`cannot write the unknowns table ${path.basename(table)}: ${why} — check that its folder is writable and has space`);
    }
  }
  if (!output) return null;
  const side = sidecarPath(output);
  for (const file of outputPoints === 'sidecar' ? [output, side] : [output]) {
    const refusal = await pathOutputRefusal('output', file, 'results', {
      root: opts.workspaceRoot ?? process.cwd(),
      trustOutside: opts.trustPaths === true,
      inputs: [specPath, data ?? specPath, ...readings, ...(opts.inputs ?? [])],
      claimed: opts.claimed,
    });
    if (refusal) throw new OutputError(refusal);
  }
  const { main, sidecar } = splitReport(reportForFile(report), outputPoints, path.basename(side));
  // the points file first, the results file last: a reader that finds the new results file finds its points too
  const files = [...(sidecar ? [{ file: side, text: serializeReport(sidecar as unknown as RunResult, { pretty: true }) }] : []), { file: output, text: serializeReport(main, { pretty: true }) }];
  // one writer at a time per results file, across processes (an O_EXCL lock file beside it; stale locks removed)
  const lockTarget = await realOrSelf(output);
  try {
    await fsp.mkdir(path.dirname(lockTarget), { recursive: true });
    await withFileLock(lockTarget, async () => {
      const pending: { file: string; tmp: string }[] = [];
      try {
        for (const { file, text } of files) {
          try {
            if ((await fsp.readFile(file, 'utf8')) === text) continue;
          } catch {
            /* not there yet */
          }
          const target = await realOrSelf(file); // a symlinked results file is written through, the link kept
          const dir = path.dirname(target);
          const tmp = tmpName(target, randomBytes(4).toString('hex'));
          await fsp.mkdir(dir, { recursive: true });
          await cleanStaleTemps(target);
          const mode = await fsp.stat(target).then(st => st.mode & 0o7777, () => undefined);
          pending.push({ file: target, tmp });
          await fsp.writeFile(tmp, text, { encoding: 'utf8', ...(mode !== undefined ? { mode } : {}) });
          if (mode !== undefined) await fsp.chmod(tmp, mode);
        }
        while (pending.length) {
          await fsp.rename(pending[0].tmp, pending[0].file);
          pending.shift();
        }
      } catch (e) {
        await Promise.all(pending.map(p => fsp.unlink(p.tmp).catch(() => undefined)));
        throw e;
      }
    }, { waitMs: opts.lockWaitMs });
  } catch (e) {
    if (e instanceof LockBusyError) throw new OutputError(`cannot write the results file ${path.basename(output)}: ${e.message}`);
    const code = (e as NodeJS.ErrnoException).code;
    const why = code === 'EACCES' || code === 'EPERM' ? 'permission denied' : code === 'ENOSPC' ? 'the disk is full' : code === 'ENOTDIR' ? 'a part of the path is a file, not a folder' : code === 'EISDIR' ? 'it is a folder' : (e as Error).message;
    throw new OutputError(`cannot write the results file ${path.basename(output)}: ${why} — check that its folder exists, is writable and has space`);
  }
  return output;
}

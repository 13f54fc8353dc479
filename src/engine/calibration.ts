// The run layer of calibration (docs/calibration.md): reads the unknowns and controls files (inside the workspace, like
// data.file), groups replicate readings by id and dilution, picks the model that reads them, and hands each sample to
// stats/calibration.ts. Also the CSV export of the read-outs (written atomically beside the results file).
import { createHash, randomBytes } from 'crypto';
import { promises as fsp } from 'fs';
import * as path from 'path';
import { compileExpression, formulaIdentifiers } from './formula';
import { DataError, parseNumber, readHeader, readTable } from './data';
import { suggest } from './formula';
import type { ControlReport, ControlsReport, FileLocation, FitReport, JsonPath, LimitsReport, ModelReport, Problem, UnknownReport, UnknownsReport } from './report';
import type { NormalizedReadings, NormalizedSpec } from './spec/types';
import type { ModelAnalysisInput } from './stats/api';
import { detectionLimits, readOff, recovery, standardsRecovery, fmtNum } from './stats/calibration';
import { originalScaleOf } from './stats/calibrationScale';
import { relativePotency } from './stats/calibrationPotency';
import type { ComparisonReport, PotencyReport } from './report';

/** spec.potency from the joint fit and the separate fits of its twin; throws DataError for a group that is not there. */
export function runPotency(spec: NormalizedSpec, models: ModelReport[], comparison: ComparisonReport | null, groupIds: string[], env: Pick<CalibrationEnv, 'locate'>): PotencyReport {
  const p = spec.potency!;
  const e = env as CalibrationEnv;
  const listed = groupIds.slice(0, 12).join(', ') + (groupIds.length > 12 ? ', …' : '');
  if (!groupIds.includes(p.reference)) {
    const s = suggest(p.reference, groupIds);
    fail(`potency.reference '${p.reference}' is not a group of data.groupBy${s ? ` — did you mean '${s}'?` : ''} (groups: ${listed})`, ['potency', 'reference'], e);
  }
  for (const t of p.test ?? [])
    if (!groupIds.includes(t)) {
      const s = suggest(t, groupIds);
      fail(`potency.test names '${t}', which is not a group of data.groupBy${s ? ` — did you mean '${s}'?` : ''} (groups: ${listed})`, ['potency', 'test'], e);
    }
  const tests = (p.test ?? groupIds).filter((g) => g !== p.reference);
  if (tests.length === 0) fail(`potency needs a test group besides the reference '${p.reference}' — data.groupBy gives only ${listed}`, ['potency', 'reference'], e);
  const joint = models.find((m) => m.name === p.model && m.group === null);
  if (!joint || joint.status !== 'converged' || !joint.covariance)
    fail(`potency: the joint fit '${p.model}' did not converge with a covariance, so no potency can be computed — see its problems`, ['potency', 'model'], e);
  const sm = spec.models.find((m) => m.name === p.model)!;
  const twin = spec.models.find((o) => !o.shared && o.builtin === sm.builtin);
  const separate = new Map<string, ModelReport>();
  if (twin) for (const g of [p.reference, ...tests]) {
    const r = models.find((m) => m.name === twin.name && m.group === g);
    if (r) separate.set(g, r);
  }
  const sharing = comparison?.sharing?.find((t) => t.model === p.model) ?? null;
  return relativePotency({
    joint,
    separate,
    mid: sm.builtin === 'logistic5' ? 'xc' : 'ec50',
    reference: p.reference,
    tests,
    confidence: spec.confidence,
    absolute: spec.data.sigmaMode === 'absolute',
    margin: p.margin,
    sharing,
  });
}

/** Every model's predictions and band on the original scale when data.y is a transform of a column (in place). */
export function addOriginalScale(spec: NormalizedSpec, models: ModelReport[]): void {
  for (const m of models) {
    const o = originalScaleOf(m, spec.data.y);
    if (o) m.originalScale = o;
  }
}
import { normalQuantile, tQuantile } from './stats/distributions';
import type { PredictionContext } from './stats/predict';
import { transformOf, type ScaleTransform } from './stats/calibrationScale';
import { cleanStaleTemps, inputRefusal, realOrSelf, tmpName } from './paths';

/** Samples (id × dilution) read off in one run; each is a root search over the curve, so a plate-sized bound. */
export const MAX_SAMPLES = 5000;

export interface CalibrationEnv {
  workspaceRoot: string;
  trustPaths: boolean;
  /** place of a spec key in the spec text */
  locate: (p: JsonPath) => FileLocation | undefined;
  /** the x column's label, for messages */
  xLabel: string;
}

/** data.x as a transform of a column (read-outs then also on the column's scale), or undefined. */
function xScaleOf(spec: NormalizedSpec): { column: string; transform: ScaleTransform } | undefined {
  const v = Object.keys(spec.data.x);
  return v.length === 1 ? (transformOf(spec.data.x[v[0]]) ?? undefined) : undefined;
}

export interface FittedModel {
  input: ModelAnalysisInput;
  report: ModelReport;
}

function fail(message: string, p: JsonPath, env: CalibrationEnv): never {
  throw new DataError(message, env.locate(p), p);
}

/** The model a block reads with: named in the spec, else the best, else the only converged one. */
function pickModel(fitted: FittedModel[], best: string | null, named: string | undefined, key: string, env: CalibrationEnv): { m: FittedModel; from: 'spec' | 'best' | 'only' } {
  const ok = fitted.filter((f) => f.report.status === 'converged' && f.report.covariance !== null);
  if (named !== undefined) {
    const m = fitted.find((f) => f.report.name === named.normalize('NFC') || f.report.name === named);
    if (!m || !ok.includes(m))
      fail(`${key}.model names '${named}', which did not converge with a covariance, so nothing can be read off it — fix that fit (see its problems) or name another model`, [key, 'model'], env);
    return { m, from: 'spec' };
  }
  const b = best !== null ? ok.find((f) => f.report.name === best) : undefined;
  if (b) return { m: b, from: 'best' };
  if (ok.length === 1) return { m: ok[0], from: 'only' };
  fail(
    ok.length === 0
      ? `${key}: no model converged with a covariance, so nothing can be read off the curve — fix the fits first (see their problems)`
      : `${key}: no best model was chosen among ${ok.map((f) => f.report.name).join(', ')} — name the one to read with in ${key}.model`,
    [key],
    env,
  );
}

/** The prediction context of a fitted model, rebuilt from its analysis input and report (as analyzeModel builds it). */
export function contextOf(f: FittedModel, spec: NormalizedSpec): PredictionContext {
  const r = f.report;
  const p = r.paramOrder.length;
  const theta = Float64Array.from(r.paramOrder, (k) => r.params[k].value);
  const cov = new Float64Array(p * p).fill(NaN);
  r.covariance?.forEach((row, j) => row.forEach((v, k) => (cov[j * p + k] = v === null ? NaN : v)));
  const absolute = spec.data.sigmaMode === 'absolute';
  const dof = r.stats.dof;
  const q = absolute ? normalQuantile((1 + spec.confidence) / 2) : dof > 0 ? tQuantile((1 + spec.confidence) / 2, dof) : NaN;
  const s = r.stats.sigma;
  const scale = absolute ? 1 : s !== null ? s * s : NaN;
  const w = f.input.count ? (f.input.precision ?? null) : f.input.w;
  return {
    compiled: f.input.compiled,
    theta,
    cov,
    free: f.input.fixed.map((x) => !x),
    q,
    scale,
    X: f.input.X,
    w,
    ...(spec.predictWeight !== undefined ? { predictWeight: spec.predictWeight } : {}),
  };
}

interface Sample {
  id: string;
  dilution: number;
  rows: number[];
  y: number[];
  nominal?: number;
}

/** Reads one readings file into samples (replicates of an id at one dilution together), in order of first appearance. */
async function readSamples(
  r: NormalizedReadings,
  spec: NormalizedSpec,
  env: CalibrationEnv,
  opts: { nominal?: string; keep: (id: string, nominalCell: string | undefined) => boolean },
): Promise<{ samples: Sample[]; hash: string }> {
  const key = r.key;
  const file = r.file as string;
  const refusal = await inputRefusal(`${key}.file`, file, { root: env.workspaceRoot, trustOutside: env.trustPaths });
  if (refusal) fail(refusal, [key, 'file'], env);
  const label = r.fileGiven ?? path.basename(file);
  const readOpts = { delimiter: spec.data.delimiter, decimal: spec.data.decimal, label };
  let header: string[];
  try {
    header = await readHeader(file, readOpts);
  } catch (e) {
    if (e instanceof DataError) fail(e.message.replace(/data\.file/g, `${key}.file`), [key, 'file'], env);
    throw e;
  }
  const listed = header.length <= 12 ? header.join(', ') : `${header.slice(0, 12).join(', ')}, …`;
  const column = (k: string, name: string, owner: string = key) => {
    if (!header.includes(name)) {
      const s = suggest(name, header);
      fail(`${owner}.${k} names column '${name}', which ${label} does not have${s ? ` — did you mean '${s}'?` : ''} (columns: ${listed})`, [owner, k], env);
    }
  };
  column('id', r.id);
  if (r.dilution !== undefined) column('dilution', r.dilution);
  if (opts.nominal !== undefined) column('nominal', opts.nominal, 'controls');
  const yNames = [...new Set(formulaIdentifiers(r.y).map((u) => u.name))].filter((n) => header.includes(n));
  let yExpr: ReturnType<typeof compileExpression>;
  try {
    yExpr = compileExpression(r.y, header);
  } catch (e) {
    fail(`${key}.y ${JSON.stringify(r.y)} cannot be evaluated on ${label}: ${(e as Error).message}${spec.unknowns && r.y === spec.data.y ? ` (${key}.y defaults to data.y; set it to the reading's column in ${label})` : ''}`, [key, 'y'], env);
  }
  const textCols = [...new Set([r.id, ...(r.dilution ? [r.dilution] : []), ...(opts.nominal ? [opts.nominal] : []), ...yNames])];
  const table = await readTable(file, { columns: [], textColumns: textCols, ...readOpts, badRows: 'fail' });
  const text = table.text ?? {};
  const N = table.row.length;
  const byKey = new Map<string, Sample>();
  const samples: Sample[] = [];
  const cols = yExpr.columns.map(() => new Float64Array(1));
  const out = new Float64Array(1);
  for (let i = 0; i < N; i++) {
    const row = table.row[i];
    const line = table.line[i];
    const at = `${label} line ${line} (data row ${row})`;
    const id = text[r.id][i];
    const nominalCell = opts.nominal !== undefined ? text[opts.nominal][i] : undefined;
    if (id === '') fail(`${at}: the ${key}.id column '${r.id}' is empty — give every reading its sample id`, [key, 'id'], env);
    if (!opts.keep(id, nominalCell)) continue;
    yExpr.columns.forEach((cname, k) => {
      const cell = text[cname][i];
      const v = parseNumber(cell, spec.data.decimal);
      if (!Number.isFinite(v)) fail(`${at}, column '${cname}': ${cell === '' ? 'empty cell' : `'${cell.slice(0, 24)}' is not a number`} — fill in the reading or delete the row`, [key, 'y'], env);
      cols[k][0] = v;
    });
    yExpr.evaluate(cols, out);
    const y = out[0];
    if (!Number.isFinite(y)) fail(`${at}: ${key}.y ${JSON.stringify(r.y)} is not a finite number there (${y}) — check the reading`, [key, 'y'], env);
    let dilution = 1;
    if (r.dilution !== undefined) {
      const cell = text[r.dilution][i];
      dilution = parseNumber(cell, spec.data.decimal);
      if (!Number.isFinite(dilution) || dilution <= 0)
        fail(`${at}, column '${r.dilution}': the dilution factor ${cell === '' ? 'is empty' : `'${cell.slice(0, 24)}'`} must be a positive number (1 = undiluted, 10 = diluted tenfold) — fix ${key}.dilution's column`, [key, 'dilution'], env);
    }
    let nominal: number | undefined;
    if (opts.nominal !== undefined && r.key === 'controls') {
      nominal = parseNumber(nominalCell ?? '', spec.data.decimal);
      if (!Number.isFinite(nominal)) fail(`${at}, column '${opts.nominal}': the nominal value '${(nominalCell ?? '').slice(0, 24)}' is not a number — fix controls.nominal's column`, ['controls', 'nominal'], env);
    }
    const k = JSON.stringify([id, dilution]);
    let s = byKey.get(k);
    if (!s) {
      if (samples.length >= MAX_SAMPLES) fail(`${label} has more than ${MAX_SAMPLES} samples (id and dilution) — split it over several specs`, [key, 'file'], env);
      s = { id, dilution, rows: [], y: [], ...(nominal !== undefined ? { nominal } : {}) };
      byKey.set(k, s);
      samples.push(s);
    } else if (nominal !== undefined && s.nominal !== nominal)
      fail(`${at}: control '${id}' has nominal ${fmtNum(nominal)} here but ${fmtNum(s.nominal!)} on an earlier row — one control id, one nominal value`, ['controls', 'nominal'], env);
    s.rows.push(row);
    s.y.push(y);
  }
  return { samples, hash: table.hash };
}

function isLine(f: FittedModel): boolean {
  return f.input.builtin === 'linear' || f.input.degree === 1;
}

/** The unknowns, controls and limits of a spec (each only when the spec has its block); throws DataError for bad input. */
export async function runCalibration(
  spec: NormalizedSpec,
  fitted: FittedModel[],
  best: string | null,
  env: CalibrationEnv,
): Promise<{ unknowns?: UnknownsReport; controls?: ControlsReport; limits?: LimitsReport; problems: Problem[]; readingsHash?: string }> {
  const out: { unknowns?: UnknownsReport; controls?: ControlsReport; limits?: LimitsReport; problems: Problem[]; readingsHash?: string } = { problems: [] };
  const hashes: string[] = [];
  const read = async (...a: Parameters<typeof readSamples>) => {
    const r = await readSamples(...a);
    if (!hashes.includes(r.hash)) hashes.push(r.hash);
    return r;
  };
  const u = spec.unknowns;
  const k = spec.controls;
  const l = spec.limits;
  const sameFile = !!(u && k && k.file !== null && u.file === k.file);
  const blankId = l?.blanks;
  let blankReadings: number[] | null = null;
  const xScale = xScaleOf(spec);
  const scaleOpt = xScale ? { xScale } : {};

  // limits first: the unknowns' flags say when a value is below them
  if (l) {
    if (xScale)
      fail(`limits need x on its own scale, but data.x is ${xScale.transform}(${xScale.column}) — fit the standards against ${xScale.column} itself for limits, or leave "limits" out`, ['limits'], env);
    const { m, from } = pickModel(fitted, best, l.model, 'limits', env);
    const ctx = contextOf(m, spec);
    let sigma: LimitsReport['sigma'];
    let blankX = 0;
    let blankY: number | null;
    let qBlank = NaN;
    if (blankId !== undefined) {
      const { samples } = await read(u!, spec, env, { keep: (id) => id === blankId });
      blankReadings = samples.flatMap((s) => s.y);
      if (blankReadings.length === 0) fail(`limits.blanks names id '${blankId}', which no row of ${u!.fileGiven} has — give the id of the blank readings`, ['limits', 'blanks'], env);
    } else {
      const X = m.input.X[0];
      const zero: number[] = [];
      for (let i = 0; i < X.length; i++) if (X[i] === 0) zero.push(m.input.y[i]);
      if (zero.length) blankReadings = zero;
    }
    if (l.sigma === 'blanks') {
      if (!blankReadings || blankReadings.length < 2)
        fail(
          `limits.sigma "blanks" needs at least 2 blank readings, but ${blankId !== undefined ? `id '${blankId}' has ${blankReadings?.length ?? 0}` : `the standards have ${blankReadings?.length ?? 0} at x = 0`} — add blank replicates, name them with limits.blanks, or use "sigma": "residual"`,
          ['limits', 'sigma'],
          env,
        );
      const n = blankReadings.length;
      const mu = blankReadings.reduce((a, b) => a + b, 0) / n;
      const sd = Math.sqrt(blankReadings.reduce((a, b) => a + (b - mu) * (b - mu), 0) / (n - 1));
      sigma = { from: 'blanks', value: sd, n };
      blankY = mu;
      qBlank = tQuantile((1 + spec.confidence) / 2, n - 1);
    } else {
      sigma = { from: 'residual', value: m.report.stats.sigma, n: 0 };
      blankY = blankReadings && blankId !== undefined ? blankReadings.reduce((a, b) => a + b, 0) / blankReadings.length : ctx.compiled.at(ctx.theta, Float64Array.of(blankX));
      if (!Number.isFinite(blankY)) blankY = null;
    }
    const slopeName = m.input.builtin === 'linear' ? 'slope' : 'c1';
    out.limits = detectionLimits(ctx, { line: isLine(m), slope: isLine(m) ? m.report.params[slopeName]?.value : undefined, sigma, blankX, blankY, qBlank }, m.report.name, from);
  }
  const lod = out.limits?.lod ?? null;
  const loq = out.limits?.loq ?? null;
  const flagLimits = (r: UnknownReport) => {
    if (r.x === null || !out.limits || r.flags.some((f) => f.kind === 'below-range' || f.kind === 'below-curve')) return;
    if (lod !== null && r.x < lod) r.flags.push({ kind: 'below-lod', message: `the back-calculated ${env.xLabel} ${fmtNum(r.x)} is below the limit of detection ${fmtNum(lod)} (${out.limits.convention === 'ich-line' ? '3.3·σ/slope' : 'blank + 3.3·σ'}): report it as not detected` });
    else if (loq !== null && r.x < loq) r.flags.push({ kind: 'below-loq', message: `the back-calculated ${env.xLabel} ${fmtNum(r.x)} is below the limit of quantitation ${fmtNum(loq)} (${out.limits.convention === 'ich-line' ? '10·σ/slope' : 'blank + 10·σ'}): detected, but not quantified reliably` });
  };

  if (u) {
    const { m, from } = pickModel(fitted, best, u.model, 'unknowns', env);
    const ctx = contextOf(m, spec);
    const { samples } = await read(u, spec, env, {
      ...(sameFile ? { nominal: k!.nominal } : {}),
      // the controls' rows (a nominal value) and the blanks are not unknowns
      keep: (id, nominalCell) => id !== blankId && !(sameFile && nominalCell !== undefined && nominalCell.trim() !== ''),
    });
    const results = samples.map((s) => {
      const r = readOff(ctx, { id: s.id, rows: s.rows, y: s.y, dilution: s.dilution, xLabel: env.xLabel, ...scaleOpt });
      flagLimits(r);
      return r;
    });
    out.unknowns = { model: m.report.name, modelFrom: from, file: u.fileGiven ?? '', ...(u.outputGiven ? { output: u.outputGiven } : {}), results };
    const flagged = results.filter((r) => r.flags.length > 0);
    if (flagged.length)
      out.problems.push({
        code: 'unknown-flagged',
        severity: 'info',
        message: `${flagged.length} of ${results.length} unknown${results.length === 1 ? '' : 's'} read off ${m.report.name} ${flagged.length === 1 ? 'is' : 'are'} flagged (${flagged.slice(0, 6).map((r) => `${r.id}: ${r.flags.map((f) => f.kind).join(', ')}`).join('; ')}${flagged.length > 6 ? '; …' : ''}) — see each unknown's flags`,
        path: ['unknowns'],
      });
  }

  if (k) {
    const { m, from } = pickModel(fitted, best, k.model, 'controls', env);
    const ctx = contextOf(m, spec);
    let results: ControlReport[] = [];
    if (k.file !== null) {
      const { samples } = await read(k, spec, env, {
        nominal: k.nominal,
        keep: (id, nominalCell) => id !== blankId && nominalCell !== undefined && nominalCell.trim() !== '',
      });
      if (samples.length === 0 && k.accept) fail(`controls: no row of ${k.fileGiven} has a nominal value in column '${k.nominal}' — fill in the spiked value of each control, or leave controls.accept out to check only the standards`, ['controls', 'nominal'], env);
      results = samples.map((s) => {
        const r = readOff(ctx, { id: s.id, rows: s.rows, y: s.y, dilution: s.dilution, xLabel: env.xLabel, ...scaleOpt });
        flagLimits(r);
        return { ...r, nominal: s.nominal!, ...recovery(r.value, r.valueInterval, s.nominal!, k.accept) };
      });
    }
    const standards = standardsRecovery(ctx, m.input.y, k.acceptStandards, xScale, m.input.count);
    const verdicts = results.map((r) => r.pass).filter((p): p is boolean => p !== null);
    out.controls = {
      model: m.report.name,
      modelFrom: from,
      file: k.fileGiven,
      accept: k.accept,
      acceptStandards: k.acceptStandards,
      results,
      standards,
      pass: verdicts.length ? verdicts.every(Boolean) : null,
    };
    const failed = results.filter((r) => r.pass === false);
    if (failed.length)
      out.problems.push({
        code: 'control-failed',
        severity: 'error',
        message: `${failed.length} of ${results.length} control${results.length === 1 ? '' : 's'} recovered outside the acceptance range ${k.accept![0]}–${k.accept![1]} % (${failed.slice(0, 6).map((r) => `${r.id}: ${r.recovery === null ? 'no value' : fmtNum(r.recovery) + ' %'}`).join('; ')}) — the run does not meet its acceptance criteria; investigate before reporting its unknowns`,
        path: ['controls', 'accept'],
      });
    const noValue = results.filter((r) => k.accept && r.pass === null);
    if (noValue.length)
      out.problems.push({
        code: 'control-failed',
        severity: 'error',
        message: `${noValue.length} control${noValue.length === 1 ? '' : 's'} could not be read off the curve (${noValue.slice(0, 6).map((r) => `${r.id}: ${r.flags.map((f) => f.kind).join(', ') || 'no value'}`).join('; ')}), so ${noValue.length === 1 ? 'its' : 'their'} recovery cannot be checked`,
        path: ['controls'],
      });
    const badStd = standards.filter((s) => s.pass === false);
    if (badStd.length)
      out.problems.push({
        code: 'standard-recovery',
        severity: 'warning',
        message: `${badStd.length} standard level${badStd.length === 1 ? '' : 's'} back-calculate outside ${k.acceptStandards![0]}–${k.acceptStandards![1]} % of nominal (${badStd.slice(0, 6).map((s) => `${fmtNum(s.x)}: ${s.recovery === null ? 'no value' : fmtNum(s.recovery) + ' %'}`).join('; ')}) — the curve does not fit those standards well; look at the residuals there, or drop a failed standard with a reason (data.exclude)`,
        path: ['controls', 'acceptStandards'],
      });
  }
  if (hashes.length === 1) out.readingsHash = hashes[0];
  else if (hashes.length > 1) out.readingsHash = 'sha256:' + createHash('sha256').update(hashes.join('\n')).digest('hex');
  return out;
}

// ------------------------------------------------------------------ CSV export

/** First line of every read-outs CSV Curvewright writes; an existing file is replaced only when it starts with it. */
export const READOUTS_HEADER = 'type,id,m,mean_y,sd_y,x,x_low,x_high,dilution,value,value_low,value_high,nominal,recovery_pct,recovery_low,recovery_high,pass,flags';

function cell(v: string | number | boolean | null | undefined): string {
  if (v === null || v === undefined) return '';
  if (typeof v === 'number') return Number.isFinite(v) ? String(v) : '';
  if (typeof v === 'boolean') return v ? 'pass' : 'fail';
  // a text cell a spreadsheet would run as a formula starts with a quote (common practice against CSV injection)
  const t = /^[=+\-@\t\r]/.test(v) ? `'${v}` : v;
  return /[",\n\r]/.test(t) ? `"${t.replace(/"/g, '""')}"` : t;
}

/** The unknowns and controls of a report as CSV text (one row per sample), or null when it has none. */
export function readoutsCsv(report: FitReport): string | null {
  if (!report.unknowns && !report.controls?.results.length) return null;
  const lines = [READOUTS_HEADER];
  const row = (type: string, r: UnknownReport, c?: ControlReport) =>
    lines.push(
      [
        type, r.id, r.m, r.meanY, r.sdY, r.x, r.interval?.[0], r.interval?.[1], r.dilution, r.value, r.valueInterval?.[0], r.valueInterval?.[1],
        c?.nominal, c?.recovery, c?.recoveryInterval?.[0], c?.recoveryInterval?.[1], c ? c.pass : null, r.flags.map((f) => f.message).join('; '),
      ]
        .map(cell)
        .join(','),
    );
  for (const r of report.unknowns?.results ?? []) row('unknown', r);
  for (const c of report.controls?.results ?? []) row('control', c, c);
  return lines.join('\n') + '\n';
}

/** Is the file one of our read-outs CSVs (its first line is READOUTS_HEADER)? */
export async function isReadoutsFile(file: string): Promise<boolean> {
  try {
    const handle = await fsp.open(file, 'r');
    try {
      const buf = Buffer.alloc(READOUTS_HEADER.length + 2);
      const { bytesRead } = await handle.read(buf, 0, buf.length, 0);
      const first = buf.subarray(0, bytesRead).toString('utf8').split(/\r?\n/)[0];
      return first === READOUTS_HEADER;
    } finally {
      await handle.close();
    }
  } catch {
    return false;
  }
}

/** Atomic write of text to file (temporary file in the same folder, then rename); an identical file is left untouched. */
export async function writeTextAtomic(file: string, text: string): Promise<void> {
  try {
    if ((await fsp.readFile(file, 'utf8')) === text) return;
  } catch {
    /* not there yet */
  }
  const target = await realOrSelf(file);
  const tmp = tmpName(target, randomBytes(4).toString('hex'));
  await fsp.mkdir(path.dirname(target), { recursive: true });
  await cleanStaleTemps(target);
  try {
    await fsp.writeFile(tmp, text, 'utf8');
    await fsp.rename(tmp, target);
  } catch (e) {
    await fsp.unlink(tmp).catch(() => undefined);
    throw e;
  }
}

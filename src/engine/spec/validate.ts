// Checks a parsed fit spec completely (every problem at once, each with its JSON path and text location) and
// normalises it: defaults filled, data.x always an object, file paths absolute.
import * as path from 'path';
import { formulaIdentifiers, formulaParameters, parseFormula, suggest, FormulaError, CONSTANTS, FUNCTIONS } from '../formula';
import type { ExcludeSpec, VarianceSpec, FileLocation, JsonPath, ParamSpec, PlotAxisSpec, PlotSpec, Problem, ProblemCode, Severity } from '../report';
import { BUILTIN_IDS, BUILTIN_PARAMS, isBuiltinId, polynomialParams } from './catalogue';
import { DEFAULTS, THRESHOLD_KEYS } from './defaults';
import { LIMITS } from './limits';
import { locateInString, locateNearest } from './locate';
import { FORBIDDEN_KEYS, pathText } from './parse';
import type { NormalizedData, NormalizedModel, NormalizedSpec } from './types';

export interface ValidateContext {
  /** spec file path (as shown in messages; resolved against the current directory for absolute paths) */
  file: string;
  /** spec text, to give each problem a line and column */
  text?: string;
  /** header of the data file, to check column names */
  columns?: string[];
  /** root that `output` must stay inside; default: the current directory */
  workspaceRoot?: string;
  /** outputs outside workspaceRoot allowed (the CLI's --trust-paths) */
  trustPaths?: boolean;
  /** display name of the data file in messages (default: data.file as written) */
  dataLabel?: string;
  /** the header must not be quoted (the file is not a table by its name or shape: src/engine/data/csv.ts headerShape);
   *  the reason, e.g. "is not a .csv, .tsv or .txt file" */
  columnsHidden?: string;
  /** the header is one field holding this other delimiter: the spec's delimiter is probably wrong */
  otherDelimiter?: string;
}

export interface ValidateResult {
  /** null when any error-level problem was found */
  spec: NormalizedSpec | null;
  problems: Problem[];
  /**
   * The data file and reading options, whenever data.file itself is valid — also when the spec has other errors, so
   * a caller can read the header and validate again with columns to report every problem in one pass.
   */
  data?: { file: string; fileGiven: string; delimiter: NormalizedData['delimiter']; decimal: NormalizedData['decimal'] };
}

const TOP_KEYS = ['$schema', 'title', 'data', 'models', 'confidence', 'predict', 'solveFor', 'predictWeight', 'output', 'outputPoints', 'expect', 'thresholds', 'derived', 'plot', 'unknowns', 'controls', 'limits', 'potency'];
const DATA_KEYS = ['file', 'x', 'y', 'sigma', 'sigmaX', 'weight', 'count', 'sigmaMode', 'where', 'exclude', 'delimiter', 'decimal', 'badRows', 'groupBy'];
const MODEL_KEYS = ['name', 'builtin', 'polynomial', 'formula', 'params', 'solver', 'shared', 'loss', 'lossScale'];
const PARAM_KEYS = ['start', 'min', 'max', 'fixed'];
const SOLVER_KEYS = ['maxIterations', 'multiStart', 'seconds'];
const EXPECT_KEYS = ['value', 'tol', 'rel'];
const EXCLUDE_KEYS = ['row', 'reason'];

type Obj = Record<string, unknown>;

/** allowed range of each threshold: p-values and levels in [0, 1], correlations in [0, 1], ratios and factors positive */
const THRESHOLD_RANGES: Record<(typeof THRESHOLD_KEYS)[number], { min: number; max?: number; lowOpen?: boolean; highOpen?: boolean; integer?: boolean; text: string; example: number }> = {
  paramCorrelation: { min: 0, max: 1, text: 'a correlation between 0 and 1', example: 0.99 },
  relativeSe: { min: 0, lowOpen: true, text: 'a positive number', example: 1 },
  cvRatio: { min: 1, text: 'a ratio of at least 1 (cross-validated RMSE / RMSE)', example: 1.5 },
  minDof: { min: 0, integer: true, text: 'a whole number of degrees of freedom, 0 or more', example: 2 },
  paramsPerPoint: { min: 0, max: 1, lowOpen: true, text: 'a fraction above 0 and at most 1', example: 0.33 },
  runsP: { min: 0, max: 1, text: 'a p-value between 0 and 1', example: 0.01 },
  normalityP: { min: 0, max: 1, text: 'a p-value between 0 and 1', example: 0.001 },
  cooksFactor: { min: 0, lowOpen: true, text: 'a positive number', example: 4 },
  linearHint: { min: 0, max: 1, text: 'a correlation between 0 and 1', example: 0.7 },
  fTestAlpha: { min: 0, max: 1, lowOpen: true, highOpen: true, text: 'a significance level strictly between 0 and 1', example: 0.05 },
  lossWeight: { min: 0, max: 1, lowOpen: true, text: 'a loss weight above 0 and at most 1', example: 0.25 },
};

/** highest polynomial degree accepted (the model builder's limit) */
export const MAX_DEGREE = 20;

function isObj(v: unknown): v is Obj {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}
function isNum(v: unknown): v is number {
  return typeof v === 'number' && Number.isFinite(v);
}
function typeName(v: unknown): string {
  if (v === null) return 'null';
  if (Array.isArray(v)) return 'a list';
  if (typeof v === 'object') return 'an object';
  if (typeof v === 'string') return `the text ${JSON.stringify(v)}`;
  return `${typeof v} ${JSON.stringify(v)}`;
}
function quoteList(names: readonly string[], max = 8): string {
  const shown = names.slice(0, max).map((n) => `'${n}'`).join(', ');
  return names.length > max ? `${shown}, … (${names.length} in all)` : shown;
}
/** The end of an unknown-column message: the columns (when the header may be quoted) or why they are not shown. */
function columnsNote(ctx: ValidateContext, label: string, columns: readonly string[], extra = ''): string {
  if (ctx.columnsHidden !== undefined) return ` — ${label} ${ctx.columnsHidden}, so none of its content is shown; check that data.file names the CSV table`;
  const delim = ctx.otherDelimiter !== undefined ? ` — the delimiter may be wrong: the header holds ${JSON.stringify(ctx.otherDelimiter)}; set data.delimiter to it` : '';
  return ` (columns: ${quoteList(columns, 12)}${extra})${delim}`;
}
function didYouMean(word: string, candidates: readonly string[]): string {
  const s = suggest(word, candidates);
  return s === undefined ? '' : ` — did you mean '${s}'?`;
}
const PLAIN_IDENT = /^[\p{L}_][\p{L}\p{M}\p{N}_]*$/u;
/** Formula-language spelling of a column name: as is when it is a plain identifier, else in backticks. */
export function columnRef(name: string): string {
  return PLAIN_IDENT.test(name) && !CONSTANTS.includes(name) && !FUNCTIONS.includes(name) && !['and', 'or', 'not'].includes(name)
    ? name
    : '`' + name + '`';
}

export { pathText };

class Checker {
  readonly problems: Problem[] = [];
  constructor(private readonly ctx: ValidateContext) {}

  get errors(): number {
    return this.problems.filter((p) => p.severity === 'error').length;
  }

  add(code: ProblemCode, p: JsonPath, message: string, opts: { severity?: Severity; key?: boolean; charIndex?: number } = {}): void {
    const problem: Problem = { code, severity: opts.severity ?? 'error', message, path: p };
    const text = this.ctx.text;
    if (text !== undefined) {
      const loc = opts.charIndex !== undefined ? locateInString(text, p, opts.charIndex) ?? locateNearest(text, p) : locateNearest(text, p, { key: opts.key });
      if (loc) {
        const location: FileLocation = { file: this.ctx.file, line: loc.line, column: loc.column };
        problem.location = location;
      }
    }
    this.problems.push(problem);
  }

  keys(obj: Obj, allowed: readonly string[], p: JsonPath, where: string): void {
    for (const k of Object.keys(obj)) {
      if (allowed.includes(k)) continue;
      this.add('spec-unknown-key', [...p, k], `unknown key '${k}' in ${where}${didYouMean(k, allowed)} (allowed: ${quoteList(allowed, 12)})`, { key: true });
    }
  }

  type(p: JsonPath, expected: string, got: unknown): void {
    this.add('spec-type', p, `${pathText(p)} must be ${expected}, not ${typeName(got)}`);
  }

  required(p: JsonPath, what: string): void {
    this.add('spec-required', p, `missing ${pathText(p)}: ${what}`);
  }

  /** an optional string; returns it, or undefined (reporting a wrong type) */
  str(obj: Obj, key: string, p: JsonPath, opts: { required?: string; nonEmpty?: boolean } = {}): string | undefined {
    const v = obj[key];
    if (v === undefined) {
      if (opts.required) this.required([...p, key], opts.required);
      return undefined;
    }
    if (typeof v !== 'string') {
      this.type([...p, key], 'a string in double quotes', v);
      return undefined;
    }
    if (opts.nonEmpty && v.trim() === '') {
      this.add('spec-type', [...p, key], `${pathText([...p, key])} is empty — write ${opts.required ?? 'a value'}`);
      return undefined;
    }
    return v;
  }

  num(obj: Obj, key: string, p: JsonPath, opts: { integer?: boolean; min?: number; exclusiveMin?: number } = {}): number | undefined {
    const v = obj[key];
    if (v === undefined) return undefined;
    const q = [...p, key];
    if (!isNum(v)) {
      this.type(q, opts.integer ? 'a whole number' : 'a number', v);
      return undefined;
    }
    if (opts.integer && !Number.isInteger(v)) {
      this.add('spec-type', q, `${pathText(q)} must be a whole number, not ${v}`);
      return undefined;
    }
    if (opts.min !== undefined && v < opts.min) {
      this.add('spec-range', q, `${pathText(q)} must be at least ${opts.min}, not ${v}`);
      return undefined;
    }
    if (opts.exclusiveMin !== undefined && v <= opts.exclusiveMin) {
      this.add('spec-range', q, `${pathText(q)} must be greater than ${opts.exclusiveMin}, not ${v}`);
      return undefined;
    }
    return v;
  }

  oneOf<T extends string>(obj: Obj, key: string, p: JsonPath, values: readonly T[]): T | undefined {
    const v = obj[key];
    if (v === undefined) return undefined;
    const q = [...p, key];
    if (typeof v !== 'string' || !(values as readonly string[]).includes(v)) {
      const shown = values.map((s) => JSON.stringify(s)).join(', ');
      const hint = typeof v === 'string' ? didYouMean(v, values) : '';
      this.add('spec-type', q, `${pathText(q)} must be one of ${shown}, not ${typeName(v)}${hint}`);
      return undefined;
    }
    return v as T;
  }
}

interface ExprEnv {
  /** names an expression may use, besides columns */
  extra: string[];
  logic?: boolean;
}

/** Checks one data expression (syntax, and column names when the header is known). Returns its normalized text. */
function checkExpression(c: Checker, ctx: ValidateContext, text: string, p: JsonPath, role: string, env: ExprEnv): string | undefined {
  const columns = ctx.columns;
  if (columns && columns.includes(text.normalize('NFC'))) return columnRef(text.normalize('NFC'));
  let ids: { name: string; span: { start: number; end: number } }[];
  try {
    parseFormula(text, { logic: env.logic });
    ids = formulaIdentifiers(text, { logic: env.logic });
  } catch (e) {
    if (e instanceof FormulaError) {
      let hint = '';
      const odd = columns?.find((name) => !PLAIN_IDENT.test(name) && text.includes(name));
      if (odd !== undefined) hint = ` (a column name with spaces or symbols is written in backticks: \`${odd}\`)`;
      else if (!columns && !text.includes('`') && /[\p{L}\p{N}_] +[\p{L}\p{N}_]/u.test(text))
        hint = ` (if a column name has spaces or symbols, write it in backticks, e.g. \`${text.trim()}\`)`;
      c.add('spec-expression', p, `${role} ${JSON.stringify(text)} is not a valid expression: ${e.message}${hint}`, { charIndex: e.span.start });
      return undefined;
    }
    throw e;
  }
  if (columns) {
    const known = [...columns, ...env.extra];
    const label = ctx.dataLabel ?? 'the data file';
    for (const id of ids) {
      if (known.includes(id.name)) continue;
      const extra = env.extra.length > 0 ? ` (or ${quoteList(env.extra)})` : '';
      // e.g. log(od-600) reads as od - 600: point at the column name that needs backticks
      const odd = columns.find((name) => !PLAIN_IDENT.test(name) && name.startsWith(id.name) && text.includes(name));
      const hidden = ctx.columnsHidden !== undefined || ctx.otherDelimiter !== undefined;
      const hint = odd !== undefined ? ` — write the column \`${odd}\` in backticks` : hidden ? '' : didYouMean(id.name, known);
      c.add('spec-unknown-column', p, `${role} uses '${id.name}', which is not a column of ${label}${hint}${columnsNote(ctx, label, columns, extra)}`, {
        charIndex: id.span.start,
      });
    }
  }
  return text;
}

/** Parameter names a model has, or undefined when its kind or formula is broken. */
function modelParams(m: Obj, variables: string[]): string[] | undefined {
  if (typeof m.builtin === 'string') return isBuiltinId(m.builtin) ? [...BUILTIN_PARAMS[m.builtin]] : undefined;
  if (typeof m.polynomial === 'number' && Number.isInteger(m.polynomial) && m.polynomial >= 0) return polynomialParams(m.polynomial);
  if (typeof m.formula === 'string') {
    try {
      return formulaParameters(m.formula, variables);
    } catch {
      return undefined;
    }
  }
  return undefined;
}

/**
 * Checks a parsed spec and returns its normalized form (null when an error was found) with every problem:
 * unknown keys, types, required keys, model definitions and formulas, parameters, columns, expressions, output path.
 */
export function validateSpec(raw: unknown, ctx: ValidateContext): ValidateResult {
  const c = new Checker(ctx);
  if (!isObj(raw)) {
    c.add('spec-type', [], `a fit spec must be a JSON object { "data": {...}, "models": [...] }, not ${typeName(raw)}`);
    return { spec: null, problems: c.problems };
  }
  c.keys(raw, TOP_KEYS, [], 'the spec');
  const specFile = path.resolve(ctx.file);
  const specDir = path.dirname(specFile);

  if (raw.title !== undefined && typeof raw.title !== 'string') c.type(['title'], 'a string', raw.title);
  if (raw.$schema !== undefined && typeof raw.$schema !== 'string') c.type(['$schema'], 'a string', raw.$schema);

  // ------------------------------------------------------------------ data
  let data: NormalizedData | undefined;
  let variables: string[] = ['x'];
  const d = raw.data;
  if (d === undefined) c.required(['data'], 'an object { "file": "….csv", "x": "column", "y": "column" }');
  else if (!isObj(d)) c.type(['data'], 'an object { "file": …, "x": …, "y": … }', d);
  else data = checkData(c, ctx, d, specDir, (v) => (variables = v));

  // ------------------------------------------------------------------ models
  const models: NormalizedModel[] = [];
  const paramsByModel = new Map<string, string[] | undefined>();
  const ms = raw.models;
  if (ms === undefined) c.required(['models'], 'a list of models, e.g. [{ "name": "line", "polynomial": 1 }]');
  else if (!Array.isArray(ms)) c.type(['models'], 'a list [ {...}, ... ]', ms);
  else if (ms.length === 0) c.add('spec-required', ['models'], 'models is empty — add at least one model, e.g. { "name": "line", "polynomial": 1 }');
  else if (ms.length > LIMITS.models)
    c.add('spec-limit', ['models'], `models lists ${ms.length} models; the limit is ${LIMITS.models} per spec — split them over several specs`);
  else {
    const seen = new Map<string, number>();
    ms.forEach((m, i) => {
      const nm = checkModel(c, ctx, m, i, variables, seen, isObj(raw.data) && raw.data.groupBy !== undefined, isObj(raw.data) && raw.data.sigmaX !== undefined);
      if (nm) {
        models.push(nm);
      }
      if (isObj(m) && typeof m.name === 'string' && !paramsByModel.has(m.name.normalize('NFC'))) paramsByModel.set(m.name.normalize('NFC'), modelParams(m, variables));
    });
  }

  // ------------------------------------------------------------------ confidence, predict, solveFor
  let confidence: number = DEFAULTS.confidence;
  if (raw.confidence !== undefined) {
    if (!isNum(raw.confidence)) c.type(['confidence'], 'a number between 0 and 1, e.g. 0.95', raw.confidence);
    else if (!(raw.confidence > 0 && raw.confidence < 1)) {
      const hint = raw.confidence > 1 && raw.confidence < 100 ? ` — did you mean ${raw.confidence / 100}?` : ' — e.g. 0.95';
      c.add('spec-range', ['confidence'], `confidence must be strictly between 0 and 1, not ${raw.confidence}${hint}`);
    } else confidence = raw.confidence;
  }

  const predict: (number | Record<string, number>)[] = [];
  if (raw.predict !== undefined) {
    if (!Array.isArray(raw.predict)) c.type(['predict'], 'a list of x values, e.g. [24, 60]', raw.predict);
    else if (raw.predict.length > LIMITS.predict)
      c.add('spec-limit', ['predict'], `predict lists ${raw.predict.length} values; the limit is ${LIMITS.predict} — keep the x values you need`);
    else
      raw.predict.forEach((v, i) => {
        const q: JsonPath = ['predict', i];
        if (isNum(v)) {
          if (variables.length > 1) c.add('spec-predict', q, `predict[${i}] is a number, but data.x defines ${variables.length} variables — write an object ${exampleObj(variables)}`);
          else predict.push(v);
        } else if (isObj(v)) {
          const out: Record<string, number> = Object.create(null);
          let ok = true;
          for (const k of Object.keys(v)) {
            if (!variables.includes(k)) {
              c.add('spec-predict', [...q, k], `predict[${i}] names '${k}', which is not a variable bound in data.x${didYouMean(k, variables)} (variables: ${quoteList(variables)})`, { key: true });
              ok = false;
            } else if (!isNum(v[k])) {
              c.type([...q, k], 'a number', v[k]);
              ok = false;
            } else out[k] = v[k] as number;
          }
          for (const name of variables)
            if (ok && !(name in v)) {
              c.add('spec-predict', q, `predict[${i}] gives no value for variable '${name}' — write ${exampleObj(variables)}`);
              ok = false;
            }
          if (ok) predict.push(variables.length === 1 ? out[variables[0]] : out);
        } else c.type(q, variables.length > 1 ? `an object ${exampleObj(variables)}` : 'a number', v);
      });
  }

  const solveFor: number[] = [];
  if (raw.solveFor !== undefined) {
    if (!Array.isArray(raw.solveFor)) c.type(['solveFor'], 'a list of y values, e.g. [1.0]', raw.solveFor);
    else if (raw.solveFor.length > LIMITS.solveFor)
      c.add('spec-limit', ['solveFor'], `solveFor lists ${raw.solveFor.length} values; the limit is ${LIMITS.solveFor} — keep the y values you need`);
    else {
      if (variables.length > 1 && raw.solveFor.length > 0)
        c.add('spec-solve-for', ['solveFor'], `solveFor reads x off the curve, which needs a single x variable; data.x defines ${quoteList(variables)}`);
      raw.solveFor.forEach((v, i) => {
        if (!isNum(v)) c.type(['solveFor', i], 'a number (a y value)', v);
        else solveFor.push(v);
      });
    }
  }
  // the weight of a new observation in prediction intervals (predict and solveFor); default: nearest observed x
  let predictWeight: number | undefined;
  if (raw.predictWeight !== undefined) {
    if (!isNum(raw.predictWeight)) c.type(['predictWeight'], 'a positive number (the weight of a new observation, on the scale of data.weight or 1/σ²)', raw.predictWeight);
    else if (!(raw.predictWeight > 0) || !Number.isFinite(raw.predictWeight)) c.add('spec-range', ['predictWeight'], `predictWeight must be a positive number, not ${raw.predictWeight} — e.g. 1`);
    else predictWeight = raw.predictWeight;
  }

  // ------------------------------------------------------------------ output
  let output: string | undefined;
  let outputGiven: string | undefined;
  if (raw.output !== undefined) {
    const o = c.str(raw, 'output', [], { nonEmpty: true, required: 'a results file path, e.g. "results/fit.json"' });
    if (o !== undefined) {
      const abs = path.resolve(specDir, o);
      const root = path.resolve(ctx.workspaceRoot ?? process.cwd());
      const rel = path.relative(root, abs);
      const same = (a: string, b: string) => (process.platform === 'win32' || process.platform === 'darwin' ? a.toLowerCase() === b.toLowerCase() : a === b);
      if (!ctx.trustPaths && (rel === '' || rel.startsWith('..') || path.isAbsolute(rel)))
        c.add('spec-output', ['output'], `output ${JSON.stringify(o)} points outside the workspace folder — write a path inside it, relative to the spec file, e.g. "results/fit.json"`);
      else if (same(abs, specFile)) c.add('spec-output', ['output'], `output ${JSON.stringify(o)} is the spec file itself — results would overwrite it; choose another file, e.g. "results/fit.json"`);
      else if (data && same(abs, data.file)) c.add('spec-output', ['output'], `output ${JSON.stringify(o)} is the data file — results would overwrite it; choose another file, e.g. "results/fit.json"`);
      else {
        output = abs;
        outputGiven = o;
      }
    }
  }

  const outputPoints = c.oneOf(raw, 'outputPoints', [], ['inline', 'sidecar', 'omit'] as const);

  // ------------------------------------------------------------------ expect
  const expect: NormalizedSpec['expect'] = Object.create(null);
  if (raw.expect !== undefined) {
    if (!isObj(raw.expect)) c.type(['expect'], 'an object { "model": { "param": { "value": …, "tol": … } } }', raw.expect);
    else {
      const names = [...paramsByModel.keys()];
      for (const [mname, entries] of Object.entries(raw.expect)) {
        const q: JsonPath = ['expect', mname];
        if (!paramsByModel.has(mname)) {
          c.add('spec-expect', q, `expect refers to model '${mname}', which is not in models${didYouMean(mname, names)} (models: ${quoteList(names)})`, { key: true });
          continue;
        }
        if (!isObj(entries)) {
          c.type(q, 'an object { "param": { "value": …, "tol": … } }', entries);
          continue;
        }
        const known = paramsByModel.get(mname);
        const out: Record<string, { value: number; tol: number } | { value: number; rel: number }> = Object.create(null);
        const grouped = isObj(raw.data) && raw.data.groupBy !== undefined;
        for (const [pname, e] of Object.entries(entries)) {
          const qp = [...q, pname];
          // with data.groupBy, 'K[R1]' pins K of group R1 (checked against the groups once the data are read)
          const indexed = grouped ? /^(.+)\[(.+)\]$/.exec(pname) : null;
          if (known && indexed && !known.includes(indexed[1])) {
            c.add('spec-expect', qp, `expect names parameter '${indexed[1]}' (of group '${indexed[2]}'), which model '${mname}' does not have${didYouMean(indexed[1], known)} (parameters: ${quoteList(known)})`, { key: true });
            continue;
          }
          if (known && !indexed && !known.includes(pname)) {
            c.add('spec-expect', qp, `expect names parameter '${pname}', which model '${mname}' does not have${didYouMean(pname, known)} (parameters: ${quoteList(known)})`, { key: true });
            continue;
          }
          if (!isObj(e)) {
            c.type(qp, 'an object { "value": …, "tol": … } or { "value": …, "rel": … }', e);
            continue;
          }
          c.keys(e, EXPECT_KEYS, qp, `expect.${mname}.${pname}`);
          const value = c.num(e, 'value', qp);
          if (e.value === undefined) c.required([...qp, 'value'], 'the expected value');
          const tol = c.num(e, 'tol', qp, { min: 0 });
          const rel = c.num(e, 'rel', qp, { min: 0 });
          if (e.tol !== undefined && e.rel !== undefined) c.add('spec-expect', qp, `expect.${mname}.${pname} gives both "tol" and "rel" — keep one (tol: absolute, rel: relative)`);
          else if (e.tol === undefined && e.rel === undefined) c.add('spec-expect', qp, `expect.${mname}.${pname} needs "tol" (absolute tolerance) or "rel" (relative tolerance)`);
          else if (value !== undefined && tol !== undefined) out[pname] = { value, tol };
          else if (value !== undefined && rel !== undefined) out[pname] = { value, rel };
        }
        expect[mname] = out;
      }
    }
  }

  // ------------------------------------------------------------------ thresholds
  const thresholds: NormalizedSpec['thresholds'] = Object.create(null);
  if (raw.thresholds !== undefined) {
    if (!isObj(raw.thresholds)) c.type(['thresholds'], 'an object of threshold names and numbers', raw.thresholds);
    else {
      c.keys(raw.thresholds, THRESHOLD_KEYS, ['thresholds'], 'thresholds');
      for (const k of THRESHOLD_KEYS) {
        const v = c.num(raw.thresholds, k, ['thresholds'], { integer: THRESHOLD_RANGES[k].integer });
        if (v === undefined) continue;
        const r = THRESHOLD_RANGES[k];
        const low = r.lowOpen ? v <= r.min : v < r.min;
        const high = r.max !== undefined && (r.highOpen ? v >= r.max : v > r.max);
        if (low || high) c.add('spec-range', ['thresholds', k], `thresholds.${k} must be ${r.text}, not ${v} — e.g. ${r.example}`);
        else thresholds[k] = v;
      }
    }
  }

  // ------------------------------------------------------------------ plot
  const plot = raw.plot === undefined ? undefined : checkPlot(c, raw.plot);

  // ------------------------------------------------------------------ derived
  const derived: Record<string, string> = {};
  if (raw.derived !== undefined) {
    if (!isObj(raw.derived)) c.type(['derived'], 'an object { "name": "expression over parameters" }, e.g. { "doubling": "log(2)/r" }', raw.derived);
    else {
      for (const [dname, expr] of Object.entries(raw.derived)) {
        const q: JsonPath = ['derived', dname];
        if (!PLAIN_IDENT.test(dname)) {
          c.add('spec-derived', q, `derived quantity name '${dname}' must be a plain name (letters, digits, _; not starting with a digit)`, { key: true });
          continue;
        }
        if (typeof expr !== 'string' || expr.trim() === '') {
          c.type(q, 'an expression over parameters in double quotes, e.g. "log(2)/r"', expr);
          continue;
        }
        let ids: string[];
        try {
          ids = [...new Set(formulaIdentifiers(expr).map((u) => u.name))];
        } catch (e) {
          if (e instanceof FormulaError) {
            c.add('spec-expression', q, `derived.${dname} ${JSON.stringify(expr)} is not a valid expression: ${e.message}`, { charIndex: e.span.start });
            continue;
          }
          throw e;
        }
        const lists = [...paramsByModel.entries()].filter((e): e is [string, string[]] => e[1] !== undefined);
        if (lists.length > 0 && !lists.some(([, ps]) => ids.every((i) => ps.includes(i)))) {
          const all = [...new Set(lists.flatMap(([, ps]) => ps))];
          const missing = ids.filter((i) => !all.includes(i));
          const hint = missing.length ? ` ('${missing[0]}' is no model's parameter${didYouMean(missing[0], all)})` : ' (no one model has all of them)';
          c.add('spec-derived', q, `derived.${dname} uses ${ids.map((i) => `'${i}'`).join(', ')}, which no model can evaluate${hint} — models and their parameters: ${lists.map(([n, ps]) => `${n} (${ps.join(', ')})`).join('; ')}`);
          continue;
        }
        derived[dname] = expr;
      }
    }
  }

  let dataFile: ValidateResult['data'];
  if (isObj(d) && typeof d.file === 'string' && d.file.trim() !== '') {
    const delimiter = ['auto', ',', ';', '\t'].includes(d.delimiter as string) ? (d.delimiter as NormalizedData['delimiter']) : DEFAULTS.data.delimiter;
    const decimal = ['.', ','].includes(d.decimal as string) ? (d.decimal as NormalizedData['decimal']) : DEFAULTS.data.decimal;
    dataFile = { file: path.resolve(specDir, d.file), fileGiven: d.file, delimiter, decimal };
  }
  const calibration = checkCalibration(c, raw, specDir, data, variables, [...paramsByModel.keys()]);
  const potency = checkPotency(c, raw, models);
  if (c.errors > 0 || !data) return { spec: null, problems: c.problems, ...(dataFile ? { data: dataFile } : {}) };
  const spec: NormalizedSpec = {
    specFile,
    specGiven: ctx.file,
    data,
    models,
    confidence,
    predict,
    solveFor,
    ...(predictWeight !== undefined ? { predictWeight } : {}),
    expect,
    thresholds,
  };
  if (typeof raw.title === 'string') spec.title = raw.title;
  if (output !== undefined) {
    spec.output = output;
    spec.outputGiven = outputGiven;
  }
  if (outputPoints !== undefined) spec.outputPoints = outputPoints;
  if (Object.keys(derived).length > 0) spec.derived = derived;
  if (plot) spec.plot = plot;
  Object.assign(spec, calibration);
  if (potency) spec.potency = potency;
  return { spec, problems: c.problems, ...(dataFile ? { data: dataFile } : {}) };
}

const PLOT_KEYS = ['x', 'y', 'bands'] as const;
const PLOT_AXIS_KEYS = ['scale', 'label', 'unit'] as const;
const PLOT_BANDS = ['confidence', 'prediction'] as const;

/** The plot block: axis scales, titles and units, which bands. Only drawing choices; no result depends on it. */
function checkPlot(c: Checker, raw: unknown): PlotSpec | undefined {
  const P: JsonPath = ['plot'];
  if (!isObj(raw)) {
    c.type(P, 'an object, e.g. { "x": { "scale": "log", "label": "concentration", "unit": "ng/mL" }, "bands": ["confidence"] }', raw);
    return undefined;
  }
  c.keys(raw, PLOT_KEYS, P, 'plot');
  const out: PlotSpec = {};
  for (const axis of ['x', 'y'] as const) {
    const a = raw[axis];
    if (a === undefined) continue;
    const q: JsonPath = ['plot', axis];
    if (!isObj(a)) {
      c.type(q, `an object, e.g. { "scale": "log", "label": "${axis === 'x' ? 'concentration' : 'signal'}", "unit": "${axis === 'x' ? 'ng/mL' : 'AU'}" }`, a);
      continue;
    }
    c.keys(a, PLOT_AXIS_KEYS, q, `plot.${axis}`);
    const spec: PlotAxisSpec = {};
    const scale = c.oneOf(a, 'scale', q, ['auto', 'linear', 'log'] as const);
    if (scale !== undefined) spec.scale = scale;
    const label = c.str(a, 'label', q, { nonEmpty: true });
    if (label !== undefined) spec.label = label;
    const unit = c.str(a, 'unit', q, { nonEmpty: true });
    if (unit !== undefined) spec.unit = unit;
    out[axis] = spec;
  }
  if (raw.bands !== undefined) {
    const q: JsonPath = ['plot', 'bands'];
    if (!Array.isArray(raw.bands)) c.type(q, 'a list of "confidence" and "prediction", e.g. ["confidence"] ([] draws no band)', raw.bands);
    else {
      const bands: ('confidence' | 'prediction')[] = [];
      raw.bands.forEach((b, i) => {
        if (typeof b === 'string' && (PLOT_BANDS as readonly string[]).includes(b)) {
          if (bands.includes(b as 'confidence' | 'prediction')) c.add('spec-type', [...q, i], `plot.bands lists "${b}" twice; give each band once`);
          else bands.push(b as 'confidence' | 'prediction');
        } else c.add('spec-type', [...q, i], `plot.bands[${i}] must be "confidence" or "prediction", not ${typeName(b)}${typeof b === 'string' ? didYouMean(b, PLOT_BANDS) : ''}`);
      });
      out.bands = bands;
    }
  }
  return out;
}

function exampleObj(variables: string[]): string {
  return '{ ' + variables.map((v) => `"${v}": …`).join(', ') + ' }';
}

function checkData(c: Checker, ctx: ValidateContext, d: Obj, specDir: string, setVariables: (v: string[]) => void): NormalizedData | undefined {
  const P: JsonPath = ['data'];
  c.keys(d, DATA_KEYS, P, 'data');
  const errorsBefore = c.errors;
  const file = c.str(d, 'file', P, { required: 'the CSV file, relative to the spec file, e.g. "culture-b.csv"', nonEmpty: true });

  // variables bound by x
  const x: Record<string, string> = Object.create(null);
  let variables: string[] = [];
  const rx = d.x;
  if (rx === undefined) c.required(['data', 'x'], 'the x column or expression, e.g. "hours" (or { "t": "hours", "T": "temp_c" } for several)');
  else if (typeof rx === 'string') {
    variables = ['x'];
  } else if (isObj(rx)) {
    variables = Object.keys(rx);
    if (variables.length === 0) c.add('spec-required', ['data', 'x'], 'data.x is an empty object — bind at least one variable, e.g. { "x": "hours" }');
    for (const v of variables) {
      const q: JsonPath = ['data', 'x', v];
      if (!PLAIN_IDENT.test(v)) c.add('spec-variable', q, `variable name '${v}' must be a plain name (letters, digits, _; not starting with a digit)`, { key: true });
      else if (CONSTANTS.includes(v) || FUNCTIONS.includes(v) || ['and', 'or', 'not'].includes(v))
        c.add('spec-variable', q, `'${v}' cannot be a variable name: it is a ${CONSTANTS.includes(v) ? 'constant' : FUNCTIONS.includes(v) ? 'function' : 'word'} of the formula language — choose another name`, { key: true });
      else if (v === 'y') c.add('spec-variable', q, `'y' cannot be an x variable: it names the response in weight and where expressions — choose another name`, { key: true });
      if (typeof rx[v] !== 'string') c.type(q, 'a column name or expression in double quotes', rx[v]);
    }
  } else c.type(['data', 'x'], 'a column name or expression, or an object { "variable": "column" }', rx);
  if (variables.length > 0) setVariables(variables);

  const y = c.str(d, 'y', P, { required: 'the y column or expression, e.g. "od600"', nonEmpty: true });
  // data.sigma: σ values (a column or expression), or a variance function { "power": θ | "estimate" }
  let variance: VarianceSpec | undefined;
  const sigma = isObj(d.sigma) ? undefined : c.str(d, 'sigma', P, { nonEmpty: true });
  if (isObj(d.sigma)) {
    const q: JsonPath = ['data', 'sigma'];
    c.keys(d.sigma, ['power'], q, 'data.sigma');
    const pw = d.sigma.power;
    if (pw === undefined) c.required([...q, 'power'], 'the power θ of σ ∝ |fitted value|^θ: a number (1 = constant CV, 0.5 = Poisson-like) or "estimate" (from replicates)');
    else if (pw === 'estimate' || (isNum(pw) && Number.isFinite(pw) && Math.abs(pw) <= 5)) variance = { power: pw as number | 'estimate' };
    else c.add('spec-variance', [...q, 'power'], `data.sigma.power must be a number between −5 and 5 (θ in σ ∝ |fitted value|^θ; 1 = constant CV) or "estimate", not ${typeName(pw)}`);
    if (d.sigmaMode === 'absolute')
      c.add('spec-variance', ['data', 'sigmaMode'], 'sigmaMode "absolute" needs known σ values, but data.sigma is a variance function (known only up to a factor) — give σ values in data.sigma, or remove sigmaMode');
    if (d.sigmaX !== undefined)
      c.add('spec-variance', q, 'data.sigmaX (errors in x) needs data.sigma as σ values of y (a column, or a constant such as "1"), not a variance function');
    if (d.count !== undefined) c.add('spec-variance', q, 'a variance function in data.sigma cannot be combined with data.count yet — expand the counted rows (they are the replicates), or give σ values');
  }
  const weight = c.str(d, 'weight', P, { nonEmpty: true });
  const count = c.str(d, 'count', P, { nonEmpty: true });
  if (d.sigma !== undefined && d.weight !== undefined)
    c.add('spec-sigma-weight', ['data', 'weight'], 'data gives both "sigma" and "weight" — keep one: sigma (standard deviations, weights 1/σ²) or weight (weights directly)');
  const sigmaX = c.str(d, 'sigmaX', P, { nonEmpty: true });
  if (d.sigmaX !== undefined) {
    if (d.sigma === undefined && d.weight === undefined)
      c.add('spec-sigma-x', ['data', 'sigmaX'], 'data.sigmaX (errors in x) needs the errors of y too: the orthogonal-distance fit weighs x against y — add data.sigma (a column, or a constant such as "1") or data.weight');
    if (isObj(d.x) && Object.keys(d.x).length > 1)
      c.add('spec-sigma-x', ['data', 'sigmaX'], 'data.sigmaX (errors in x) needs a single x variable, but data.x binds several — fit one x, or drop sigmaX');
    if (d.count !== undefined) c.add('spec-sigma-x', ['data', 'sigmaX'], 'data.sigmaX cannot be combined with data.count yet — expand the counted rows, or drop one of the two');
  }
  const where = c.str(d, 'where', P, { nonEmpty: true });
  let groupBy: string[] | undefined;
  if (d.groupBy !== undefined) {
    const list = typeof d.groupBy === 'string' ? [d.groupBy] : Array.isArray(d.groupBy) ? d.groupBy : null;
    if (!list || list.length === 0 || list.some((g) => typeof g !== 'string' || g.trim() === ''))
      c.type(['data', 'groupBy'], 'a column name, or a non-empty list of column names, e.g. "reactor" or ["plate", "well"]', d.groupBy);
    else if (new Set(list).size !== list.length) c.add('spec-type', ['data', 'groupBy'], 'data.groupBy names a column twice — list each column once');
    else {
      groupBy = list as string[];
      if (ctx.columns) {
        const label = ctx.dataLabel ?? 'the data file';
        groupBy.forEach((g, k) => {
          if (!ctx.columns!.includes(g))
            c.add('spec-unknown-column', typeof d.groupBy === 'string' ? ['data', 'groupBy'] : ['data', 'groupBy', k],
              `data.groupBy names '${g}', which is not a column of ${label}${ctx.columnsHidden !== undefined || ctx.otherDelimiter !== undefined ? '' : didYouMean(g, ctx.columns!)}${columnsNote(ctx, label, ctx.columns!)}`);
        });
      }
    }
  }
  const sigmaMode = c.oneOf(d, 'sigmaMode', P, ['relative', 'absolute'] as const);
  if (sigmaMode === 'absolute' && d.sigma === undefined && d.weight === undefined)
    c.add('spec-sigma-mode', ['data', 'sigmaMode'], 'sigmaMode "absolute" needs data.sigma (the known standard deviations) — add it or remove sigmaMode', { severity: 'warning' });
  const delimiter = c.oneOf(d, 'delimiter', P, ['auto', ',', ';', '\t'] as const);
  const decimal = c.oneOf(d, 'decimal', P, ['.', ','] as const);
  const badRows = c.oneOf(d, 'badRows', P, ['drop', 'fail'] as const);
  if (decimal === ',' && delimiter === ',')
    c.add('spec-delimiter', ['data', 'delimiter'], 'with decimal "," the delimiter cannot also be "," — use ";" or "\\t" (or "auto")');

  const exclude: ExcludeSpec[] = [];
  if (d.exclude !== undefined) {
    if (!Array.isArray(d.exclude)) c.type(['data', 'exclude'], 'a list of { "row": N, "reason": "…" }', d.exclude);
    else {
      const rows = new Set<number>();
      d.exclude.forEach((e, i) => {
        const q: JsonPath = ['data', 'exclude', i];
        if (!isObj(e)) {
          c.type(q, 'an object { "row": N, "reason": "…" }', e);
          return;
        }
        c.keys(e, EXCLUDE_KEYS, q, `data.exclude[${i}]`);
        let row: number | undefined;
        if (e.row === undefined) c.required([...q, 'row'], 'the 1-based data row (the first row after the header is 1)');
        else if (!isNum(e.row) || !Number.isInteger(e.row) || e.row < 1)
          c.add('spec-exclude', [...q, 'row'], `data.exclude[${i}].row must be a positive whole number (the first row after the header is 1), not ${typeName(e.row)}`);
        else row = e.row;
        const reason = c.str(e, 'reason', q, { required: 'a short reason, kept for review (e.g. "bubble in cuvette")', nonEmpty: true });
        if (row !== undefined && rows.has(row)) c.add('spec-exclude', [...q, 'row'], `row ${row} is excluded twice — remove one entry`, { severity: 'warning' });
        if (row !== undefined) rows.add(row);
        if (row !== undefined && reason !== undefined) exclude.push({ row, reason });
      });
    }
  }

  // expressions
  const label = ctx.dataLabel ?? (file !== undefined ? file : undefined);
  const ectx = { ...ctx, dataLabel: label };
  const nx: Record<string, string> = Object.create(null);
  if (typeof rx === 'string') {
    if (rx.trim() === '') c.add('spec-type', ['data', 'x'], 'data.x is empty — write a column name, e.g. "hours"');
    else {
      const t = checkExpression(c, ectx, rx, ['data', 'x'], 'data.x', { extra: [] });
      if (t !== undefined) nx.x = t;
    }
  } else if (isObj(rx)) {
    for (const v of variables) {
      const t = rx[v];
      if (typeof t !== 'string') continue;
      if (t.trim() === '') {
        c.add('spec-type', ['data', 'x', v], `data.x.${v} is empty — write a column name`);
        continue;
      }
      const r = checkExpression(c, ectx, t, ['data', 'x', v], `data.x.${v}`, { extra: [] });
      if (r !== undefined) nx[v] = r;
    }
  }
  Object.assign(x, nx);
  const ny = y !== undefined ? checkExpression(c, ectx, y, ['data', 'y'], 'data.y', { extra: [] }) : undefined;
  const nsigma = sigma !== undefined ? checkExpression(c, ectx, sigma, ['data', 'sigma'], 'data.sigma', { extra: [] }) : undefined;
  const nsigmaX = sigmaX !== undefined ? checkExpression(c, ectx, sigmaX, ['data', 'sigmaX'], 'data.sigmaX', { extra: [] }) : undefined;
  const extra = [...variables, 'y'];
  const nweight = weight !== undefined ? checkExpression(c, ectx, weight, ['data', 'weight'], 'data.weight', { extra }) : undefined;
  const nwhere = where !== undefined ? checkExpression(c, ectx, where, ['data', 'where'], 'data.where', { extra, logic: true }) : undefined;
  const ncount = count !== undefined ? checkExpression(c, ectx, count, ['data', 'count'], 'data.count', { extra }) : undefined;

  if (c.errors > errorsBefore || file === undefined || ny === undefined) return undefined;
  const out: NormalizedData = {
    file: path.resolve(specDir, file),
    fileGiven: file,
    x,
    y: ny,
    sigmaMode: sigmaMode ?? DEFAULTS.data.sigmaMode,
    exclude,
    delimiter: delimiter ?? DEFAULTS.data.delimiter,
    decimal: decimal ?? DEFAULTS.data.decimal,
    badRows: badRows ?? DEFAULTS.data.badRows,
  };
  if (nsigma !== undefined) out.sigma = nsigma;
  if (variance !== undefined) out.variance = variance;
  if (nsigmaX !== undefined) out.sigmaX = nsigmaX;
  if (nweight !== undefined) out.weight = nweight;
  if (nwhere !== undefined) out.where = nwhere;
  if (groupBy !== undefined) out.groupBy = groupBy;
  if (ncount !== undefined) out.count = ncount;
  return out;
}

function checkModel(c: Checker, ctx: ValidateContext, m: unknown, i: number, variables: string[], seen: Map<string, number>, grouped: boolean, sigmaX = false): NormalizedModel | undefined {
  const P: JsonPath = ['models', i];
  if (!isObj(m)) {
    c.type(P, 'an object { "name": …, "builtin" | "polynomial" | "formula": … }', m);
    return undefined;
  }
  const errorsBefore = c.errors;
  c.keys(m, MODEL_KEYS, P, `models[${i}]`);
  const name = c.str(m, 'name', P, { required: 'a unique name for this model, e.g. "logistic"', nonEmpty: true })?.normalize('NFC');
  if (name !== undefined) {
    const first = seen.get(name);
    if (first !== undefined) c.add('spec-duplicate-name', [...P, 'name'], `model name '${name}' is already used by models[${first}] — names must be unique`);
    else seen.set(name, i);
  }
  const who = name !== undefined ? `model '${name}'` : `models[${i}]`;

  const kinds = (['builtin', 'polynomial', 'formula'] as const).filter((k) => m[k] !== undefined);
  let kind: NormalizedModel['kind'] | undefined;
  let params: string[] | undefined;
  if (kinds.length === 0) c.add('spec-model-kind', P, `${who} needs one of "builtin" (a catalogue id), "polynomial" (a degree) or "formula"`);
  else if (kinds.length > 1) c.add('spec-model-kind', [...P, kinds[1]], `${who} gives ${kinds.map((k) => `"${k}"`).join(' and ')} — keep exactly one`);
  else kind = kinds[0];

  let formulaSpans: Map<string, number> | undefined;
  if (kind === 'builtin') {
    const b = m.builtin;
    if (typeof b !== 'string') c.type([...P, 'builtin'], `a catalogue id such as "logistic4"`, b);
    else if (!isBuiltinId(b)) {
      const hint = didYouMean(b, BUILTIN_IDS);
      c.add('spec-unknown-builtin', [...P, 'builtin'], `unknown built-in model '${b}'${hint || ` (available: ${BUILTIN_IDS.join(', ')})`}`);
    }
    else {
      params = [...BUILTIN_PARAMS[b]];
      // the catalogue formulas are in x; the single data variable is bound to x whatever its name
      if (variables.length !== 1)
        c.add('spec-builtin-variable', [...P, 'builtin'], `built-in model '${b}' needs a single x variable, but data.x binds ${quoteList(variables)} — use a formula for several variables`);
    }
  } else if (kind === 'polynomial') {
    const n = m.polynomial;
    if (!isNum(n) || !Number.isInteger(n) || n < 0)
      c.add('spec-polynomial-degree', [...P, 'polynomial'], `"polynomial" is the degree: a whole number 0, 1, 2, …, not ${typeName(n)}`);
    else if (n > MAX_DEGREE)
      c.add('spec-polynomial-degree', [...P, 'polynomial'], `polynomial degree ${n} is above the limit of ${MAX_DEGREE} — raw-basis polynomials that high are numerically meaningless; use a lower degree or a formula`);
    else {
      params = polynomialParams(n);
      if (variables.length !== 1)
        c.add('spec-polynomial-variables', [...P, 'polynomial'], `a polynomial needs a single x variable, but data.x binds ${quoteList(variables)} — use a formula for several variables`);
    }
  } else if (kind === 'formula') {
    const f = m.formula;
    if (typeof f !== 'string') c.type([...P, 'formula'], 'a formula in double quotes, e.g. "a*exp(-k*x)"', f);
    else if (f.trim() === '') c.add('spec-formula', [...P, 'formula'], `the formula of ${who} is empty — write one, e.g. "a*exp(-k*x)"`);
    else {
      try {
        parseFormula(f);
        params = formulaParameters(f, variables);
        formulaSpans = new Map();
        for (const id of formulaIdentifiers(f)) if (!formulaSpans.has(id.name)) formulaSpans.set(id.name, id.span.start);
        if (params.length === 0) c.add('spec-formula', [...P, 'formula'], `the formula of ${who} has no parameters to fit — every name in it is a variable or constant`);
        for (const pn of params.filter((n) => FORBIDDEN_KEYS.includes(n)))
          c.add('spec-reserved-name', [...P, 'formula'], `'${pn}' cannot be a parameter name in the formula of ${who}: ${FORBIDDEN_KEYS.join(', ')} are reserved — rename it, e.g. '${pn.replace(/_/g, '')}1'`, { charIndex: formulaSpans.get(pn) });
        // a formula written in x while data.x binds other names: x would silently become a fitted parameter
        if (params.includes('x') && !variables.includes('x'))
          c.add(
            'spec-param-like-variable',
            [...P, 'formula'],
            `the formula of ${who} uses 'x', but data.x binds ${quoteList(variables)}, so 'x' would be fitted as a parameter — write the formula in ${quoteList(variables)} or bind "x" in data.x`,
            { severity: 'warning', charIndex: formulaSpans.get('x') },
          );
      } catch (e) {
        if (!(e instanceof FormulaError)) throw e;
        c.add('spec-formula', [...P, 'formula'], `the formula of ${who} does not parse: ${e.message}`, { charIndex: e.span.start });
      }
      if (params && ctx.columns)
        for (const pn of params)
          if (ctx.columns.includes(pn))
            c.add(
              'spec-param-named-like-column',
              [...P, 'formula'],
              `'${pn}' in the formula of ${who} is fitted as a parameter, but it is also a column of the data — to use the column, bind it in data.x (e.g. "x": { "x": …, "${pn}": "${pn}" })`,
              { severity: 'warning', charIndex: formulaSpans?.get(pn) },
            );
    }
  }

  if (params && params.length > LIMITS.params) {
    c.add('spec-limit', [...P, kind === 'polynomial' ? 'polynomial' : 'formula'], `${who} has ${params.length} parameters; the limit is ${LIMITS.params} per model — use fewer parameters (fix some, or split the model)`);
    params = undefined;
  }

  // params
  const nparams: Record<string, ParamSpec> = Object.create(null);
  const rp = m.params;
  if (rp !== undefined) {
    if (!isObj(rp)) c.type([...P, 'params'], 'an object { "K": { "start": …, "min": …, "max": …, "fixed": … } }', rp);
    else {
      if (params) {
        for (const pn of Object.keys(rp))
          if (!params.includes(pn)) {
            const hint = didYouMean(pn, params);
            const what = kind === 'formula' ? `is not in the formula of ${who}` : `is not a parameter of ${who}`;
            c.add('spec-unknown-param', [...P, 'params', pn], `parameter '${pn}' ${what}${hint} (parameters: ${quoteList(params)})`, { key: true });
          }
        if (kind === 'formula' && typeof m.formula === 'string')
          for (const pn of params)
            if (!(pn in rp)) {
              const hint = didYouMean(pn, Object.keys(rp));
              c.add(
                'spec-undeclared-param',
                [...P, 'formula'],
                `the formula of ${who} uses '${pn}', which params does not declare${hint} — declare it (e.g. "${pn}": {}) or fix the spelling; names bound in data.x are the variables (${quoteList(variables)})`,
                { charIndex: formulaSpans?.get(pn) },
              );
            }
      }
      for (const [pn, ps] of Object.entries(rp)) {
        const q: JsonPath = [...P, 'params', pn];
        if (!isObj(ps)) {
          if (isNum(ps)) c.type(q, `an object; for a start value write { "start": ${ps} }`, ps);
          else c.type(q, 'an object { "start": …, "min": …, "max": …, "fixed": … }', ps);
          continue;
        }
        c.keys(ps, PARAM_KEYS, q, `params.${pn}`);
        const start = c.num(ps, 'start', q);
        const min = c.num(ps, 'min', q);
        const max = c.num(ps, 'max', q);
        let fixed: boolean | undefined;
        if (ps.fixed !== undefined) {
          if (typeof ps.fixed !== 'boolean') c.type([...q, 'fixed'], 'true or false', ps.fixed);
          else fixed = ps.fixed;
        }
        if (min !== undefined && max !== undefined && min > max) c.add('spec-bounds', [...q, 'min'], `parameter '${pn}' of ${who}: min ${min} is greater than max ${max} — swap them`);
        else if (start !== undefined && ((min !== undefined && start < min) || (max !== undefined && start > max)))
          c.add('spec-start-outside', [...q, 'start'], `parameter '${pn}' of ${who}: start ${start} lies outside [${min ?? '-∞'}, ${max ?? '∞'}] — move it inside the bounds`);
        if (fixed === true && start === undefined) c.add('spec-fixed-no-start', [...q, 'fixed'], `parameter '${pn}' of ${who} is fixed but has no start — give "start": the value to hold it at`);
        const out: ParamSpec = {};
        if (start !== undefined) out.start = start;
        if (min !== undefined) out.min = min;
        if (max !== undefined) out.max = max;
        if (fixed !== undefined) out.fixed = fixed;
        nparams[pn] = out;
      }
    }
  }

  // solver
  const solver = { ...DEFAULTS.solver } as { maxIterations: number; multiStart: number; seconds: number };
  if (m.solver !== undefined) {
    if (!isObj(m.solver)) c.type([...P, 'solver'], 'an object { "maxIterations": …, "multiStart": …, "seconds": … }', m.solver);
    else {
      const q: JsonPath = [...P, 'solver'];
      c.keys(m.solver, SOLVER_KEYS, q, 'solver');
      const it = c.num(m.solver, 'maxIterations', q, { integer: true, min: 1 });
      const ms = c.num(m.solver, 'multiStart', q, { integer: true, min: 1 });
      const s = c.num(m.solver, 'seconds', q, { exclusiveMin: 0 });
      if (it !== undefined) solver.maxIterations = it;
      if (ms !== undefined) solver.multiStart = ms;
      if (s !== undefined) solver.seconds = s;
    }
  }

  // shared: parameters common to all groups (a joint fit of the groups); needs data.groupBy
  let shared: string[] | undefined;
  if (m.shared !== undefined) {
    const q: JsonPath = [...P, 'shared'];
    if (!Array.isArray(m.shared) || m.shared.length === 0 || !m.shared.every((s) => typeof s === 'string' && s !== ''))
      c.type(q, 'a non-empty list of parameter names, e.g. ["r", "x0"]', m.shared);
    else if (new Set(m.shared).size !== m.shared.length) c.add('spec-shared', q, `models[${i}].shared names a parameter twice — list each once`);
    else if (!grouped)
      c.add('spec-shared', q, `models[${i}].shared holds parameters common to all groups, but data.groupBy is not set — add data.groupBy (the column that names the groups) or remove shared`);
    else {
      const known = modelParams(m, variables);
      let ok = true;
      (m.shared as string[]).forEach((s, k) => {
        if (known && !known.includes(s)) {
          c.add('spec-shared', [...q, k], `models[${i}].shared names '${s}', which is not a parameter of model '${String(m.name)}'${didYouMean(s, known)} (parameters: ${quoteList(known)})`);
          ok = false;
        }
      });
      if (ok && known && known.every((p) => (m.shared as string[]).includes(p)))
        c.add('spec-shared', q, `models[${i}].shared names every parameter of the model, so nothing differs between groups — leave at least one parameter out of shared, or drop data.groupBy`);
      else if (ok) shared = [...(m.shared as string[])];
    }
  }

  // loss: least squares (default) or a robust loss; lossScale: where it turns from quadratic (docs/robust.md)
  const loss = c.oneOf(m, 'loss', P, ['squares', 'huber', 'soft_l1', 'cauchy'] as const);
  let lossScale: NormalizedModel['lossScale'];
  if (m.lossScale !== undefined) {
    const q: JsonPath = [...P, 'lossScale'];
    const v = m.lossScale;
    if (v === 'mad' || v === 'mad-iterated') lossScale = v;
    else if (isNum(v) && v > 0 && Number.isFinite(v)) lossScale = v;
    else c.add('spec-loss', q, `models[${i}].lossScale must be a positive number (the residual size where the loss turns from quadratic, in units of y or of the weighted residual), "mad" or "mad-iterated", not ${typeName(v)}`);
    if (loss === undefined || loss === 'squares')
      c.add('spec-loss', q, `models[${i}].lossScale only applies to a robust loss — add "loss": "huber" (or "soft_l1", "cauchy"), or remove lossScale`);
  }
  if (loss !== undefined && loss !== 'squares' && sigmaX)
    c.add('spec-loss', [...P, 'loss'], `models[${i}]: a robust loss cannot be combined with data.sigmaX (errors in x) yet — use one of the two`);
  if (sigmaX && m.shared !== undefined)
    c.add('spec-sigma-x', [...P, 'shared'], `models[${i}]: a joint fit of the groups (shared) cannot be combined with data.sigmaX (errors in x) yet — remove shared, or data.sigmaX`);
  if (loss !== undefined && loss !== 'squares' && m.shared !== undefined)
    c.add('spec-loss', [...P, 'loss'], `models[${i}]: a robust loss is not available for a joint fit of the groups (shared) yet — remove "shared" to fit each group robustly, or use "loss": "squares"`);
  if (c.errors > errorsBefore || name === undefined || kind === undefined) return undefined;
  const out: NormalizedModel = { name, kind, index: i, solver };
  if (shared) out.shared = shared;
  if (loss !== undefined && loss !== 'squares') out.loss = loss;
  if (lossScale !== undefined) out.lossScale = lossScale;
  if (rp !== undefined) out.params = nparams;
  if (kind === 'builtin') out.builtin = m.builtin as string;
  if (kind === 'polynomial') out.polynomial = m.polynomial as number;
  if (kind === 'formula') out.formula = m.formula as string;
  return out;
}

// ------------------------------------------------------------------ calibration: unknowns, controls, limits

const UNKNOWNS_KEYS = ['file', 'id', 'y', 'dilution', 'model', 'output'];
const CONTROLS_KEYS = ['file', 'id', 'y', 'dilution', 'nominal', 'accept', 'acceptStandards', 'model'];
const LIMITS_KEYS = ['sigma', 'blanks', 'model'];

/** The unknowns, controls and limits blocks (docs/calibration.md): shapes, the model they name, file paths. */
function checkCalibration(c: Checker, raw: Obj, specDir: string, data: NormalizedData | undefined, variables: string[], models: string[]): Pick<NormalizedSpec, 'unknowns' | 'controls' | 'limits'> {
  const out: Pick<NormalizedSpec, 'unknowns' | 'controls' | 'limits'> = {};
  const keys = (['unknowns', 'controls', 'limits'] as const).filter((k) => raw[k] !== undefined);
  if (keys.length === 0) return out;
  const first = keys[0];
  if (isObj(raw.data) && raw.data.groupBy !== undefined)
    c.add('spec-calibration', [first], `${first} reads one standard curve, but data.groupBy fits several — fit the standards of one curve in a spec of their own (e.g. with data.where) to read unknowns off it`);
  if (variables.length > 1) c.add('spec-calibration', [first], `${first} reads x off the curve, which needs a single x variable; data.x defines ${quoteList(variables)}`);
  const model = (o: Obj, key: string): string | undefined => {
    const m = c.str(o, 'model', [key], { nonEmpty: true });
    if (m !== undefined && models.length > 0 && !models.includes(m.normalize('NFC')))
      c.add('spec-calibration', [key, 'model'], `${key}.model names '${m}', which is not in models${didYouMean(m, models)} (models: ${quoteList(models)})`);
    return m;
  };
  const range = (o: Obj, key: string, k: string): [number, number] | null => {
    const v = o[k];
    if (v === undefined) return null;
    if (!Array.isArray(v) || v.length !== 2 || !v.every(isNum) || !((v[0] as number) < (v[1] as number)) || (v[0] as number) < 0) {
      c.add('spec-calibration', [key, k], `${key}.${k} must be a range of recovery in % [low, high] with 0 ≤ low < high, e.g. [80, 120], not ${JSON.stringify(v)}`);
      return null;
    }
    return [v[0] as number, v[1] as number];
  };
  const fileOf = (o: Obj, key: string, required: boolean): { file: string | null; fileGiven: string | null } | undefined => {
    const f = c.str(o, 'file', [key], { nonEmpty: true, ...(required ? { required: 'the CSV of the readings, relative to the spec file, e.g. "data/plate-unknowns.csv"' } : {}) });
    if (f === undefined) return required ? undefined : { file: null, fileGiven: null };
    return { file: path.resolve(specDir, f), fileGiven: f };
  };
  const expr = (o: Obj, key: string, k: string): string | undefined => {
    const v = c.str(o, k, [key], { nonEmpty: true });
    if (v === undefined) return undefined;
    try {
      parseFormula(v);
    } catch (e) {
      if (e instanceof FormulaError) {
        c.add('spec-expression', [key, k], `${key}.${k} ${JSON.stringify(v)} is not a valid expression: ${e.message}`, { charIndex: e.span.start });
        return undefined;
      }
      throw e;
    }
    return v;
  };
  const dataY = data?.y ?? '';

  let unknowns: NormalizedSpec['unknowns'];
  const u = raw.unknowns;
  if (u !== undefined) {
    if (!isObj(u)) c.type(['unknowns'], 'an object { "file": "….csv", "id": "sample", "y": "absorbance", "dilution": "dilution" }', u);
    else {
      c.keys(u, UNKNOWNS_KEYS, ['unknowns'], 'unknowns');
      const file = fileOf(u, 'unknowns', true);
      const id = c.str(u, 'id', ['unknowns'], { required: 'the column naming each sample, e.g. "sample"', nonEmpty: true });
      const y = expr(u, 'unknowns', 'y');
      const dilution = c.str(u, 'dilution', ['unknowns'], { nonEmpty: true });
      const m = model(u, 'unknowns');
      const o = c.str(u, 'output', ['unknowns'], { nonEmpty: true });
      let output: string | undefined;
      if (o !== undefined) {
        if (!/\.csv$/i.test(o)) c.add('spec-calibration', ['unknowns', 'output'], `unknowns.output ${JSON.stringify(o)} is not a .csv file — write e.g. "results/unknowns.csv"`);
        else output = path.resolve(specDir, o);
      }
      if (file && file.file !== null && id !== undefined) {
        unknowns = { file: file.file, fileGiven: file.fileGiven, id, y: y ?? dataY, key: 'unknowns' };
        if (dilution !== undefined) unknowns.dilution = dilution;
        if (m !== undefined) unknowns.model = m;
        if (output !== undefined) {
          unknowns.output = output;
          unknowns.outputGiven = o;
        }
      }
    }
  }

  const k = raw.controls;
  if (k !== undefined) {
    if (!isObj(k)) c.type(['controls'], 'an object { "nominal": "spiked_ng_ml", "accept": [80, 120] }', k);
    else {
      c.keys(k, CONTROLS_KEYS, ['controls'], 'controls');
      const own = fileOf(k, 'controls', false);
      const id = c.str(k, 'id', ['controls'], { nonEmpty: true });
      const y = expr(k, 'controls', 'y');
      const dilution = c.str(k, 'dilution', ['controls'], { nonEmpty: true });
      const nominal = c.str(k, 'nominal', ['controls'], { required: 'the column of the nominal (spiked) value, e.g. "nominal_ng_ml"', nonEmpty: true });
      const accept = range(k, 'controls', 'accept');
      const acceptStandards = range(k, 'controls', 'acceptStandards');
      const m = model(k, 'controls');
      const fromUnknowns = own !== undefined && own.file === null;
      const file = fromUnknowns ? (unknowns ? { file: unknowns.file, fileGiven: unknowns.fileGiven } : { file: null, fileGiven: null }) : own;
      const idCol = id ?? (fromUnknowns ? unknowns?.id : undefined);
      if (file && file.file !== null && idCol === undefined) c.required(['controls', 'id'], 'the column naming each control, e.g. "sample"');
      if (file && nominal !== undefined && (idCol !== undefined || file.file === null)) {
        out.controls = {
          ...file,
          id: idCol ?? '',
          y: y ?? (fromUnknowns && unknowns ? unknowns.y : dataY),
          nominal,
          accept,
          acceptStandards,
          fromUnknowns,
          key: 'controls',
        };
        const dil = dilution ?? (fromUnknowns ? unknowns?.dilution : undefined);
        if (dil !== undefined) out.controls.dilution = dil;
        const mm = m ?? unknowns?.model;
        if (mm !== undefined) out.controls.model = mm;
      }
    }
  }

  const l = raw.limits;
  if (l !== undefined) {
    if (!isObj(l)) c.type(['limits'], 'an object { "sigma": "residual" } or { "sigma": "blanks", "blanks": "BLANK" }', l);
    else {
      c.keys(l, LIMITS_KEYS, ['limits'], 'limits');
      const sigma = c.oneOf(l, 'sigma', ['limits'], ['residual', 'blanks'] as const) ?? 'residual';
      const blanks = c.str(l, 'blanks', ['limits'], { nonEmpty: true });
      if (blanks !== undefined && !unknowns) c.add('spec-calibration', ['limits', 'blanks'], 'limits.blanks names an id of the unknowns file, but the spec has no "unknowns" block — add it, or leave blanks out to use the standards at x = 0');
      const m = model(l, 'limits');
      out.limits = { sigma, ...(blanks !== undefined ? { blanks } : {}) };
      const mm = m ?? unknowns?.model;
      if (mm !== undefined) out.limits.model = mm;
    }
  }
  if (unknowns) out.unknowns = unknowns;
  return out;
}

const POTENCY_KEYS = ['model', 'reference', 'test', 'margin'];

/** The potency block: groups, a joint 4PL/5PL with asymptotes and slope shared, a reference group, margins. */
function checkPotency(c: Checker, raw: Obj, models: NormalizedModel[]): NormalizedSpec['potency'] {
  const p = raw.potency;
  if (p === undefined) return undefined;
  if (!isObj(p)) {
    c.type(['potency'], 'an object { "reference": "REF", "margin": { "slope": [0.8, 1.25], "span": [0.8, 1.25] } }', p);
    return undefined;
  }
  c.keys(p, POTENCY_KEYS, ['potency'], 'potency');
  const before = c.errors;
  if (!isObj(raw.data) || raw.data.groupBy === undefined)
    c.add('spec-potency', ['potency'], 'potency compares curves of groups, but data.groupBy is not set — name the column that tells the reference and the test samples apart, e.g. "groupBy": "lot"');
  const need = (m: NormalizedModel) => (m.builtin === 'logistic5' ? ['lower', 'upper', 'slope', 'asym'] : ['lower', 'upper', 'slope']);
  const fits = (m: NormalizedModel) => (m.builtin === 'logistic4' || m.builtin === 'logistic5') && !!m.shared && need(m).every((k) => m.shared!.includes(k));
  const name = c.str(p, 'model', ['potency'], { nonEmpty: true });
  let model: NormalizedModel | undefined;
  if (name !== undefined) {
    model = models.find((m) => m.name === name.normalize('NFC'));
    if (!model) c.add('spec-potency', ['potency', 'model'], `potency.model names '${name}', which is not in models${didYouMean(name, models.map((m) => m.name))}`);
    else if (!fits(model))
      c.add('spec-potency', ['potency', 'model'], `potency.model '${name}' must be a builtin "logistic4" (or "logistic5") with "shared": ${JSON.stringify(need(model))} — the relative potency is a ratio of EC50s only when the curves share their asymptotes and slope`);
  } else {
    const cands = models.filter(fits);
    if (cands.length === 1) model = cands[0];
    else if (models.length > 0)
      c.add('spec-potency', ['potency'], cands.length === 0
        ? 'potency needs a model with the asymptotes and slope shared, e.g. { "name": "4PL-parallel", "builtin": "logistic4", "shared": ["lower", "upper", "slope"] } — add it to models'
        : `several models could give the potency (${quoteList(cands.map((m) => m.name))}) — name one in potency.model`);
  }
  const reference = c.str(p, 'reference', ['potency'], { required: 'the group id of the reference, e.g. "REF"', nonEmpty: true });
  let test: string[] | undefined;
  if (p.test !== undefined) {
    if (!Array.isArray(p.test) || p.test.length === 0 || p.test.some((t) => typeof t !== 'string' || t === '')) c.type(['potency', 'test'], 'a non-empty list of group ids, e.g. ["LOT-2"]', p.test);
    else test = p.test as string[];
  }
  let margin: { slope: [number, number]; span: [number, number] } | null = null;
  if (p.margin !== undefined) {
    const m = p.margin;
    if (!isObj(m)) c.type(['potency', 'margin'], 'an object { "slope": [0.8, 1.25], "span": [0.8, 1.25] }', m);
    else {
      c.keys(m, ['slope', 'span'], ['potency', 'margin'], 'potency.margin');
      const range = (k: 'slope' | 'span'): [number, number] | undefined => {
        const v = m[k];
        if (!Array.isArray(v) || v.length !== 2 || !v.every(isNum) || !((v[0] as number) > 0 && (v[0] as number) < 1 && (v[1] as number) > 1)) {
          c.add('spec-potency', ['potency', 'margin', k], `potency.margin.${k} must be a range of the ratio test/reference around 1, [low, high] with 0 < low < 1 < high, e.g. [0.8, 1.25], not ${JSON.stringify(v)}`);
          return undefined;
        }
        return [v[0] as number, v[1] as number];
      };
      const slope = range('slope');
      const span = range('span');
      if (slope && span) margin = { slope, span };
    }
  }
  if (c.errors > before || reference === undefined || !model) return undefined;
  return { model: model.name, reference, ...(test ? { test } : {}), margin };
}

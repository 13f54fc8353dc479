// Turning a model entry of a fit spec into a compiled, bounded least-squares model, and fitting it with the right
// strategy: linear least squares, LM from given starts, LM from self-starting estimates, or the generic multi-start.
import { canonicalResult } from './canonical';
import type { JsonPath, ModelSpec } from '../report';
import type { CompiledFormula } from '../formula/types';
import type { LsqProblem, SolveResult } from '../solve/types';
import { compileFormula, formulaParameters, suggest } from '../formula';
import { solve, solveLinear, solveNonlinear } from '../solve';
import { blocksOf } from '../solve/block';
import { multiStart } from '../solve/multistart';
import { BUILTINS } from './catalogue';
import { polynomialFormula } from './polynomial';
import { DEFAULTS } from '../spec/defaults';

export type StartSource = 'spec' | 'self-start' | 'multi-start' | 'linear';

export interface BuiltModel {
  name: string;
  kind: 'builtin' | 'polynomial' | 'formula';
  formula: string;
  compiled: CompiledFormula;
  params: string[];
  lower: Float64Array;
  upper: Float64Array;
  fixed: boolean[];
  /** starting values from the spec; undefined where the engine must find one */
  start: (number | undefined)[];
  /** where the starting values will come from */
  startSource: StartSource;
  degree?: number;
  builtin?: string;
}

/** A model entry that cannot be built; `path` is relative to the model's entry in the spec (e.g. ["params", "K2"]). */
export class ModelError extends Error {
  constructor(
    message: string,
    public readonly path: JsonPath = [],
  ) {
    super(message);
    this.name = 'ModelError';
  }
}

export interface FitData {
  X: Float64Array[];
  y: Float64Array;
  w: Float64Array | null;
}

export interface FitOptions {
  maxIterations?: number;
  /** wall-clock budget of the whole fit, seconds (default 20) */
  seconds?: number;
  /** number of local solver runs of the multi-start search */
  multiStart?: number;
  seed?: number;
  shouldStop?: () => boolean;
}

export type FitResult = SolveResult & { startValues: Float64Array; startSource: StartSource };

const list = (names: readonly string[]): string => names.map((n) => `'${n}'`).join(', ');

/** Builds the compiled model of one spec entry; throws FormulaError or ModelError with a message for the user. */
export function buildModel(spec: ModelSpec, variables: string[], data: { X: Float64Array[]; y: Float64Array }): BuiltModel {
  void data; // the data shape is not needed to build; kept in the signature for data-dependent defaults
  const kinds = [spec.builtin !== undefined, spec.polynomial !== undefined, spec.formula !== undefined].filter(Boolean).length;
  if (kinds !== 1) {
    throw new ModelError(
      `model '${spec.name}' must have exactly one of "builtin", "polynomial" or "formula" (it has ${kinds})`,
      [],
    );
  }
  let kind: BuiltModel['kind'];
  let formula: string;
  let params: string[];
  let compiled: CompiledFormula;
  let defaultsLower: Record<string, number> = {};
  let defaultsUpper: Record<string, number> = {};
  let degree: number | undefined;
  let builtin: string | undefined;
  if (spec.builtin !== undefined) {
    kind = 'builtin';
    const b = BUILTINS[spec.builtin];
    if (!b) {
      const hint = suggest(spec.builtin, Object.keys(BUILTINS));
      throw new ModelError(
        `unknown built-in model '${spec.builtin}'${hint ? ` — did you mean '${hint}'?` : ''} (built-ins: ${Object.keys(BUILTINS).join(', ')})`,
        ['builtin'],
      );
    }
    if (variables.length !== 1) {
      throw new ModelError(
        `built-in model '${b.id}' needs a single x variable, but data.x binds ${variables.length} (${list(variables)}): use "formula" for several variables`,
        ['builtin'],
      );
    }
    builtin = b.id;
    formula = b.formula;
    params = [...b.params];
    // the catalogue formulas are written in x; the single data variable is bound to it whatever its name
    compiled = compileFormula(formula, { variables: ['x'], params });
    defaultsLower = b.lower ?? {};
    defaultsUpper = b.upper ?? {};
  } else if (spec.polynomial !== undefined) {
    kind = 'polynomial';
    if (variables.length !== 1) {
      throw new ModelError(
        `a polynomial needs a single x variable, but data.x binds ${variables.length} (${list(variables)}): use "formula" for several variables`,
        ['polynomial'],
      );
    }
    if (!Number.isInteger(spec.polynomial) || spec.polynomial < 0 || spec.polynomial > 20) {
      throw new ModelError(`polynomial degree must be a whole number from 0 to 20, got ${spec.polynomial}`, ['polynomial']);
    }
    degree = spec.polynomial;
    const v = /^[A-Za-z_][A-Za-z0-9_]*$/.test(variables[0]) ? variables[0] : `\`${variables[0]}\``;
    const pf = polynomialFormula(degree, v);
    formula = pf.formula;
    params = pf.params;
    compiled = compileFormula(formula, { variables, params });
  } else {
    kind = 'formula';
    formula = spec.formula as string;
    const used = formulaParameters(formula, variables);
    if (spec.params) {
      const declared = Object.keys(spec.params);
      for (const u of used) {
        if (!declared.includes(u)) {
          const hint = suggest(u, declared);
          throw new ModelError(
            `parameter '${u}' of model '${spec.name}' is used in the formula but not declared in "params"${hint ? ` — did you mean '${hint}'?` : ''}: add "${u}": {} to params (or remove "params" to let every non-variable name be a parameter)`,
            ['params'],
          );
        }
      }
    }
    // declared order when params are declared (the user's order, e.g. b1…b9), else order of first appearance
    params = spec.params ? Object.keys(spec.params).filter((k) => used.includes(k)) : used;
    compiled = compileFormula(formula, { variables, params });
  }

  const p = params.length;
  const lower = new Float64Array(p).fill(-Infinity);
  const upper = new Float64Array(p).fill(Infinity);
  const fixed = new Array<boolean>(p).fill(false);
  const start = new Array<number | undefined>(p).fill(undefined);
  for (let j = 0; j < p; j++) {
    // own keys only: a parameter may be called toString or hasOwnProperty
    if (Object.prototype.hasOwnProperty.call(defaultsLower, params[j])) lower[j] = defaultsLower[params[j]];
    if (Object.prototype.hasOwnProperty.call(defaultsUpper, params[j])) upper[j] = defaultsUpper[params[j]];
  }
  for (const [name, ps] of Object.entries(spec.params ?? {})) {
    const j = params.indexOf(name);
    if (j < 0) {
      const hint = suggest(name, params);
      throw new ModelError(
        `"params" of model '${spec.name}' declares '${name}', which is not a parameter of ${kind === 'formula' ? 'the formula' : `this ${kind} model`}${hint ? ` — did you mean '${hint}'?` : ''} (parameters: ${list(params)})`,
        ['params', name],
      );
    }
    if (ps.min !== undefined) lower[j] = ps.min;
    if (ps.max !== undefined) upper[j] = ps.max;
    if (!(lower[j] <= upper[j])) {
      throw new ModelError(`parameter '${name}' has min ${lower[j]} above max ${upper[j]}: swap them`, ['params', name]);
    }
    if (ps.start !== undefined) {
      if (!Number.isFinite(ps.start)) throw new ModelError(`start of parameter '${name}' must be a finite number`, ['params', name, 'start']);
      if (!ps.fixed && (ps.start < lower[j] || ps.start > upper[j])) {
        throw new ModelError(
          `start ${ps.start} of parameter '${name}' is outside its bounds [${lower[j]}, ${upper[j]}]: move the start inside or widen min/max`,
          ['params', name, 'start'],
        );
      }
      start[j] = ps.start;
    }
    if (ps.fixed) {
      if (ps.start === undefined) {
        throw new ModelError(`parameter '${name}' is fixed but has no start: give "start", the value to hold it at`, ['params', name, 'fixed']);
      }
      fixed[j] = true;
    }
  }
  let startSource: StartSource;
  if (compiled.linear) startSource = 'linear';
  else if (start.every((s, j) => s !== undefined || fixed[j])) startSource = 'spec';
  else startSource = kind === 'builtin' ? 'self-start' : 'multi-start';
  return { name: spec.name, kind, formula, compiled, params, lower, upper, fixed, start, startSource, degree, builtin };
}

/** The least-squares problem of a built model on data. */
export function modelProblem(model: BuiltModel, data: FitData): LsqProblem {
  const { compiled } = model;
  const X = data.X;
  const blocks = blocksOf(compiled, X);
  return {
    n: data.y.length,
    p: model.params.length,
    y: data.y,
    w: data.w ?? undefined,
    ...(blocks ? { blocks } : {}),
    model(theta, f, J) {
      if (J) compiled.evaluateWithJacobian(theta, X, f, J);
      else compiled.evaluate(theta, X, f);
    },
  };
}

function totalSS(y: Float64Array, w: Float64Array | null): number {
  let sw = 0;
  let s = 0;
  for (let i = 0; i < y.length; i++) {
    const wi = w ? w[i] : 1;
    sw += wi;
    s += wi * y[i];
  }
  const m = sw > 0 ? s / sw : 0;
  let t = 0;
  for (let i = 0; i < y.length; i++) t += (w ? w[i] : 1) * (y[i] - m) ** 2;
  return t;
}

/** Pushes a value into [lo, hi]; on a bound of a parameter with a finite other side, a hair inside. */
function clampInside(v: number, lo: number, hi: number): number {
  if (v > lo && v < hi) return v;
  if (Number.isFinite(lo) && Number.isFinite(hi)) return v <= lo ? lo + 1e-6 * (hi - lo) : hi - 1e-6 * (hi - lo);
  if (v <= lo) return lo + Math.max(1e-6 * Math.abs(lo), 1e-12);
  return hi - Math.max(1e-6 * Math.abs(hi), 1e-12);
}

function better(a: FitResult, b: FitResult): FitResult {
  const sa = Number.isFinite(a.sse) ? a.sse : Infinity;
  const sb = Number.isFinite(b.sse) ? b.sse : Infinity;
  if (a.converged !== b.converged && Math.abs(sa - sb) <= 1e-9 * Math.max(sa, sb)) return a.converged ? a : b;
  return sb < sa ? b : a;
}

/** Fits a built model: linear least squares, LM from the spec's starts, self-start, or the generic multi-start. */
/** Fit a built model, then report a built-in's solution in its canonical parameters (models/canonical.ts). */
export function fitModel(model: BuiltModel, data: FitData, opts: FitOptions = {}): FitResult {
  const r = fitModelRaw(model, data, opts);
  if (model.kind !== 'builtin') return r;
  const canon = canonicalResult(model.builtin, model.params, model.fixed, model.lower, model.upper, modelProblem(model, data), r);
  return canon === r ? r : { ...r, ...canon };
}

function fitModelRaw(model: BuiltModel, data: FitData, opts: FitOptions): FitResult {
  const problem = modelProblem(model, data);
  const p = model.params.length;
  const seconds = opts.seconds ?? DEFAULTS.solver.seconds;
  const t0 = Date.now();
  const remaining = (): number => Math.max(0.05, seconds - (Date.now() - t0) / 1000);
  const base = { lower: model.lower, upper: model.upper, fixed: model.fixed, maxIterations: opts.maxIterations, shouldStop: opts.shouldStop };
  // a joint fit with its starts from the separate fits: the block solver
  if (problem.blocks && model.start.every(s => s !== undefined)) {
    const theta0 = Float64Array.from(model.start as number[]);
    return { ...solve(problem, { ...base, theta0, seconds }), startValues: theta0, startSource: 'spec' };
  }

  if (model.compiled.linear) {
    const theta0 = Float64Array.from(model.start, (s, j) => clampInside(s ?? 0, model.lower[j], model.upper[j]));
    for (let j = 0; j < p; j++) if (model.fixed[j]) theta0[j] = model.start[j] as number;
    const r = solveLinear(problem, { ...base, theta0, seconds });
    return { ...r, startValues: theta0, startSource: 'linear' };
  }

  const known = model.start.every((s) => s !== undefined);
  if (known) {
    const theta0 = Float64Array.from(model.start as number[]);
    const r = solveNonlinear(problem, { ...base, theta0, seconds });
    return { ...r, startValues: theta0, startSource: 'spec' };
  }

  const runMultiStart = (): FitResult => {
    const xRanges = data.X.map((col) => range(col));
    const r = multiStart(problem, {
      ...base,
      start: model.start,
      xRanges,
      yRange: range(data.y),
      seed: opts.seed ?? 1,
      seconds: remaining(),
      localRuns: opts.multiStart,
    });
    return { ...r, startSource: 'multi-start' };
  };

  if (model.kind === 'builtin') {
    let self: Record<string, number> | null = null;
    try {
      self = BUILTINS[model.builtin as string].selfStart(data.X[0], data.y);
    } catch {
      self = null; // a self-start never stops a fit: the multi-start takes over
    }
    if (self) {
      const theta0 = new Float64Array(p);
      let ok = true;
      for (let j = 0; j < p; j++) {
        const s = model.start[j] ?? self[model.params[j]];
        if (s === undefined || !Number.isFinite(s)) ok = false;
        theta0[j] = model.fixed[j] ? (model.start[j] as number) : clampInside(s, model.lower[j], model.upper[j]);
      }
      if (ok) {
        const r: FitResult = { ...solveNonlinear(problem, { ...base, theta0, seconds: remaining() }), startValues: theta0, startSource: 'self-start' };
        const bad = !r.converged || !Number.isFinite(r.sse) || r.sse > totalSS(data.y, data.w);
        if (!bad || r.termination === 'cancelled' || (opts.shouldStop && opts.shouldStop())) return r;
        return better(r, runMultiStart());
      }
    }
  }
  return runMultiStart();
}

function range(v: Float64Array): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < v.length; i++) {
    if (Number.isFinite(v[i])) {
      lo = Math.min(lo, v[i]);
      hi = Math.max(hi, v[i]);
    }
  }
  return Number.isFinite(lo) ? [lo, hi] : [0, 1];
}

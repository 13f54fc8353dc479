// Test helper: compile a formula, solve it and build the ModelAnalysisInput that analyzeModel takes.
import { compileFormula } from '../../src/engine/formula';
import { solve } from '../../src/engine/solve';
import type { ModelAnalysisInput } from '../../src/engine/stats/api';
import { DEFAULT_THRESHOLDS } from '../../src/engine/stats/thresholds';

export interface FitCase {
  formula: string;
  params?: string[];
  x: number[] | Record<string, number[]>;
  y: number[];
  w?: number[];
  start?: Record<string, number>;
  fixed?: Record<string, number>;
  lower?: Record<string, number>;
  upper?: Record<string, number>;
  name?: string;
  index?: number;
  kind?: ModelAnalysisInput['kind'];
  builtin?: string;
  degree?: number;
  sigmaMode?: 'relative' | 'absolute';
  predict?: (number | Record<string, number>)[];
  solveFor?: number[];
  confidence?: number;
  options?: ModelAnalysisInput['options'];
  maxIterations?: number;
}

export function makeInput(c: FitCase): ModelAnalysisInput {
  const variables = Array.isArray(c.x) ? ['x'] : Object.keys(c.x);
  const X = Array.isArray(c.x) ? [Float64Array.from(c.x)] : variables.map((v) => Float64Array.from((c.x as Record<string, number[]>)[v]));
  const compiled = compileFormula(c.formula, { variables, params: c.params });
  const params = compiled.params;
  const p = params.length;
  const y = Float64Array.from(c.y);
  const w = c.w ? Float64Array.from(c.w) : null;
  const lower = params.map((n) => c.lower?.[n] ?? -Infinity);
  const upper = params.map((n) => c.upper?.[n] ?? Infinity);
  const fixed = params.map((n) => c.fixed?.[n] !== undefined);
  const theta0 = params.map((n) => c.fixed?.[n] ?? c.start?.[n] ?? 1);
  const result = solve(
    {
      n: y.length, p, y, w: w ?? undefined,
      model: (theta, out, J) => (J ? compiled.evaluateWithJacobian(theta, X, out, J) : compiled.evaluate(theta, X, out)),
    },
    { theta0, lower, upper, fixed, linear: compiled.linear, maxIterations: c.maxIterations },
  );
  return {
    index: c.index ?? 0,
    name: c.name ?? 'm',
    kind: c.kind ?? 'formula',
    formula: c.formula,
    builtin: c.builtin,
    degree: c.degree,
    compiled,
    params,
    lower,
    upper,
    fixed,
    linear: compiled.linear,
    variables,
    X,
    y,
    w,
    rows: Int32Array.from(c.y.map((_, i) => i + 1)),
    sigmaMode: c.sigmaMode ?? 'relative',
    result,
    startValues: theta0,
    startSource: 'spec',
    confidence: c.confidence ?? 0.95,
    predict: c.predict ?? [],
    solveFor: c.solveFor ?? [],
    thresholds: { ...DEFAULT_THRESHOLDS },
    options: c.options,
  };
}

/** Puromycin, treated (Bates & Watts 1988, Appendix A1.3; also R's datasets::Puromycin). */
export const PUROMYCIN = {
  conc: [0.02, 0.02, 0.06, 0.06, 0.11, 0.11, 0.22, 0.22, 0.56, 0.56, 1.1, 1.1],
  rate: [76, 47, 97, 107, 123, 139, 159, 152, 191, 201, 207, 200],
};

/** Seeded standard-normal noise (LCG of Numerical Recipes + Box–Muller), so test data are reproducible. */
export function noise(n: number, seed = 1): number[] {
  let state = seed >>> 0;
  const u = () => {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    return (state + 0.5) / 4294967296;
  };
  const out: number[] = [];
  while (out.length < n) {
    const r = Math.sqrt(-2 * Math.log(u()));
    const t = 2 * Math.PI * u();
    out.push(r * Math.cos(t));
    if (out.length < n) out.push(r * Math.sin(t));
  }
  return out;
}

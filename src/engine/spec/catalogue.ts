// Ids and parameter names of the built-in model catalogue (DESIGN.md "Built-in catalogue"), as the spec checker and the
// JSON schema need them. test/unit/schema.test.ts checks this list against BUILTINS of src/engine/models.

export const BUILTIN_PARAMS = {
  linear: ['intercept', 'slope'],
  exponential: ['A', 'k'],
  exponential_offset: ['A', 'k', 'C'],
  exponential_base: ['a', 'b', 'c'],
  double_exponential: ['A1', 'k1', 'A2', 'k2'],
  logarithmic: ['a', 'b'],
  power: ['a', 'b'],
  michaelis_menten: ['Vmax', 'Km'],
  hill: ['Vmax', 'K', 'n'],
  logistic3: ['K', 'r', 'x0'],
  logistic4: ['lower', 'upper', 'ec50', 'slope'],
  logistic5: ['lower', 'upper', 'xc', 'slope', 'asym'],
  gompertz: ['K', 'r', 'x0'],
  richards: ['K', 'r', 'x0', 'nu'],
  weibull_growth: ['upper', 'y0', 'scale', 'shape'],
  asymptotic: ['upper', 'y0', 'k'],
  gaussian: ['height', 'center', 'width'],
  lorentzian: ['height', 'center', 'hwhm'],
  arrhenius: ['A', 'Ea'],
  steinhart_hart: ['a', 'b', 'c'],
} as const satisfies Record<string, readonly string[]>;

export type BuiltinId = keyof typeof BUILTIN_PARAMS;

export const BUILTIN_IDS = Object.keys(BUILTIN_PARAMS) as BuiltinId[];

export function isBuiltinId(id: string): id is BuiltinId {
  return Object.prototype.hasOwnProperty.call(BUILTIN_PARAMS, id);
}

/** Coefficient names of a polynomial of the given degree: c0 … cn. */
export function polynomialParams(degree: number): string[] {
  return Array.from({ length: degree + 1 }, (_, k) => `c${k}`);
}

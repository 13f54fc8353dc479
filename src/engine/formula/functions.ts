// The vocabulary of the formula language: functions with their arities, and named constants.

/** Function names, in the order they are listed to users. */
export const FUNCTIONS: readonly string[] = Object.freeze([
  'exp', 'log', 'ln', 'log10', 'sqrt', 'abs',
  'sin', 'cos', 'tan', 'asin', 'acos', 'atan',
  'sinh', 'cosh', 'tanh',
  'pow', 'min', 'max',
]);

/** Named constants; they can never be parameters or variables (a backtick-quoted `e` is a name, not the constant). */
export const CONSTANTS: readonly string[] = Object.freeze(['pi', 'e']);

export const CONSTANT_VALUES: Readonly<Record<string, number>> = Object.freeze({ pi: Math.PI, e: Math.E });

/** Words of the logic mode (row filters); reserved in every mode unless backtick-quoted. */
export const LOGIC_WORDS: readonly string[] = Object.freeze(['and', 'or', 'not']);

/** Number of arguments each function takes: [min, max] (max Infinity for min/max). */
export const ARITY: Readonly<Record<string, readonly [number, number]>> = Object.freeze({
  exp: [1, 1], log: [1, 1], ln: [1, 1], log10: [1, 1], sqrt: [1, 1], abs: [1, 1],
  sin: [1, 1], cos: [1, 1], tan: [1, 1], asin: [1, 1], acos: [1, 1], atan: [1, 1],
  sinh: [1, 1], cosh: [1, 1], tanh: [1, 1],
  pow: [2, 2], min: [2, Infinity], max: [2, Infinity],
} as Record<string, readonly [number, number]>);

const FUNCTION_SET = new Set(FUNCTIONS);
const CONSTANT_SET = new Set(CONSTANTS);
const LOGIC_SET = new Set(LOGIC_WORDS);

export function isFunctionName(name: string): boolean {
  return FUNCTION_SET.has(name);
}
export function isConstantName(name: string): boolean {
  return CONSTANT_SET.has(name);
}
export function isLogicWord(name: string): boolean {
  return LOGIC_SET.has(name);
}

/** Unary functions as JavaScript Math members (the only function text the code generator ever emits). */
export const MATH_UNARY: Readonly<Record<string, string>> = Object.freeze({
  exp: 'Math.exp', log: 'Math.log', ln: 'Math.log', log10: 'Math.log10', sqrt: 'Math.sqrt', abs: 'Math.abs',
  sin: 'Math.sin', cos: 'Math.cos', tan: 'Math.tan', asin: 'Math.asin', acos: 'Math.acos', atan: 'Math.atan',
  sinh: 'Math.sinh', cosh: 'Math.cosh', tanh: 'Math.tanh',
});

/** Numeric implementations of the unary functions (constant folding, interpreters). */
export const UNARY_IMPL: Readonly<Record<string, (u: number) => number>> = Object.freeze({
  exp: Math.exp, log: Math.log, ln: Math.log, log10: Math.log10, sqrt: Math.sqrt, abs: Math.abs,
  sin: Math.sin, cos: Math.cos, tan: Math.tan, asin: Math.asin, acos: Math.acos, atan: Math.atan,
  sinh: Math.sinh, cosh: Math.cosh, tanh: Math.tanh,
});

// Fit specs: parse (JSONC), locate JSON paths in the text, validate and normalise.
export { parseSpecText, FORBIDDEN_KEYS } from './parse';
export { LIMITS } from './limits';
export { validateSpec, pathText, columnRef, MAX_DEGREE, type ValidateContext, type ValidateResult } from './validate';
export { locatePath, locateNearest, locateInString, lineColumnAt, type TextLocation } from './locate';
export { DEFAULTS, THRESHOLD_KEYS } from './defaults';
export { BUILTIN_IDS, BUILTIN_PARAMS, isBuiltinId, polynomialParams, type BuiltinId } from './catalogue';
export type { NormalizedSpec, NormalizedData, NormalizedModel } from './types';

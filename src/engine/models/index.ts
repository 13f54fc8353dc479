// Public surface of the model catalogue: built-ins, polynomials, nested pairs, building and fitting spec models.
export { BUILTINS, GAS_CONSTANT, type BuiltinModel } from './catalogue';
export { polynomialFormula } from './polynomial';
export { NESTED, nestedPair, type NestedPair } from './nested';
export { buildModel, fitModel, modelProblem, ModelError, type BuiltModel, type FitData, type FitOptions, type FitResult, type StartSource } from './build';

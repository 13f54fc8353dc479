// Every problem code the program reports, in one table: its severity (the one documented in docs/problems.md, or the
// two a code can take) and a short title; its section there is docs/problems.md#<code> (the anchor is the code, which
// the editor links each diagnostic to). A leaf: it imports nothing, and any engine layer may import it.
// The ProblemCode union is derived from the table, so a code that is not here fails the type check wherever it is
// emitted; test/unit/problem-docs.test.ts checks the table against docs/problems.md (both ways, with severities).
// Add a code: a row here, a `## <code>` section in docs/problems.md, then emit it (DEVELOPERS.md, "Add a problem code").

/** How a problem can be reported: `check` marks one of `curvewright check`'s own reasons (an error there). */
export type ProblemSeverity = 'error' | 'warning' | 'info' | 'check';

/** One row of the PROBLEMS table. */
export interface ProblemInfo {
  /** the severities it is emitted with (most emit sites use one; the first is the usual one) */
  readonly severity: readonly ProblemSeverity[];
  /** a few words for lists and menus; the message of each instance says more */
  readonly title: string;
}

export const PROBLEMS = {
  'no-convergence': { severity: ['error'], title: 'The solver did not converge' },
  'non-finite-values': { severity: ['error'], title: 'The model is NaN or infinite at some rows' },
  'rank-deficient': { severity: ['error'], title: 'Some parameters cannot be determined from the data' },
  'param-at-bound': { severity: ['warning'], title: 'An estimate sits on its min or max' },
  'poorly-determined': { severity: ['warning'], title: 'A parameter is poorly determined' },
  'no-plateau': { severity: ['error'], title: 'The data show no plateau for an asymptote' },
  'asymptote-not-reached': { severity: ['warning'], title: 'An asymptote is not measured by the data' },
  'rate-not-determined': { severity: ['warning'], title: 'A rate is not determined by the data' },
  'profile-incomplete': { severity: ['info'], title: 'Profiling did not finish in time' },
  'cv-incomplete': { severity: ['info'], title: 'Cross-validation did not finish in time' },
  'param-correlation': { severity: ['info'], title: 'Two estimates are highly correlated' },
  'overfit-dof': { severity: ['warning'], title: 'Too few residual degrees of freedom' },
  'overfit-params': { severity: ['warning'], title: 'Too many parameters for the rows' },
  'overfit-degree': { severity: ['warning'], title: 'Polynomial degree high for the distinct x values' },
  'overfit-cv': { severity: ['warning'], title: 'Cross-validated error much larger than expected' },
  'overfit-nested': { severity: ['warning'], title: 'A richer model is preferred without a significant F-test' },
  'systematic-residuals': { severity: ['warning'], title: 'Residuals show a pattern the model misses' },
  'non-normal-residuals': { severity: ['info'], title: 'Residuals are strongly non-normal' },
  'influential-points': { severity: ['info'], title: 'Some rows are influential' },
  'extrapolation': { severity: ['warning'], title: 'A prediction lies outside the data range' },
  'prediction-invalid': { severity: ['warning'], title: 'A prediction does not match the model\'s variables' },
  'inverse-extrapolation': { severity: ['warning'], title: 'The requested y is reached only outside the data' },
  'inverse-no-root': { severity: ['warning'], title: 'No x can be back-calculated' },
  'inverse-unbounded': { severity: ['warning'], title: 'An inverse interval is not bounded within the data' },
  'inverse-flat': { severity: ['warning'], title: 'The curve is flat at the requested y' },
  'inverse-many-roots': { severity: ['warning'], title: 'The curve crosses the requested y many times' },
  'linear-tendency': { severity: ['info'], title: 'y and an x are strongly linearly related' },
  'robust-down-weighted': { severity: ['info'], title: 'A robust loss gave some rows little weight' },
  'robust-no-convergence': { severity: ['warning'], title: 'The robust reweighting did not settle' },
  'robust-no-covariance': { severity: ['warning'], title: 'No sandwich standard errors for the robust fit' },
  'variance-no-convergence': { severity: ['warning'], title: 'The variance-function weights did not settle' },
  'spec-syntax': { severity: ['error'], title: 'The spec is not valid JSON' },
  'spec-too-deep': { severity: ['error'], title: 'The spec nests too deeply' },
  'spec-forbidden-key': { severity: ['error'], title: 'A forbidden key in the spec' },
  'spec-duplicate-key': { severity: ['error'], title: 'A key appears twice in one object' },
  'spec-number-range': { severity: ['error'], title: 'A number beyond the 64-bit floating-point range' },
  'spec-limit': { severity: ['error'], title: 'The spec exceeds a limit' },
  'spec-reserved-name': { severity: ['error'], title: 'A reserved name used as a parameter' },
  'spec-error': { severity: ['error'], title: 'The spec could not be run' },
  'spec-type': { severity: ['error'], title: 'A value has the wrong type' },
  'spec-required': { severity: ['error'], title: 'A required key is missing' },
  'spec-range': { severity: ['error'], title: 'A number outside its allowed range' },
  'spec-unknown-key': { severity: ['error'], title: 'An unknown key' },
  'spec-expression': { severity: ['error'], title: 'A column expression is not valid' },
  'spec-unknown-column': { severity: ['error'], title: 'An expression names an unknown column' },
  'spec-variable': { severity: ['error'], title: 'An x variable name is not usable' },
  'spec-predict': { severity: ['error'], title: 'A predict entry does not match the x variables' },
  'spec-solve-for': { severity: ['error'], title: 'solveFor needs a single x variable' },
  'spec-output': { severity: ['error'], title: 'output points to a place it may not' },
  'spec-expect': { severity: ['error'], title: 'An expect entry is not valid' },
  'spec-sigma-weight': { severity: ['error'], title: 'Both data.sigma and data.weight are given' },
  'spec-sigma-mode': { severity: ['warning'], title: 'sigmaMode absolute without data.sigma' },
  'spec-delimiter': { severity: ['error'], title: 'The decimal separator and the delimiter are both commas' },
  'spec-exclude': { severity: ['error', 'warning'], title: 'A data.exclude entry is not valid' },
  'spec-duplicate-name': { severity: ['error'], title: 'Two models share a name' },
  'spec-model-kind': { severity: ['error'], title: 'A model needs exactly one of builtin, polynomial or formula' },
  'spec-unknown-builtin': { severity: ['error'], title: 'Unknown built-in model' },
  'spec-builtin-variable': { severity: ['error'], title: 'A built-in model needs the variable x' },
  'spec-polynomial-degree': { severity: ['error'], title: 'The polynomial degree is not a whole number' },
  'spec-polynomial-variables': { severity: ['error'], title: 'A polynomial needs a single x variable' },
  'spec-formula': { severity: ['error'], title: 'The formula is not valid' },
  'spec-unknown-param': { severity: ['error'], title: 'params names an unknown parameter' },
  'spec-undeclared-param': { severity: ['error'], title: 'The formula uses an undeclared name' },
  'spec-param-named-like-column': { severity: ['warning'], title: 'A parameter has the name of a column' },
  'spec-param-like-variable': { severity: ['warning'], title: 'The formula uses x, which is not a variable here' },
  'spec-bounds': { severity: ['error'], title: 'A parameter\'s min is greater than its max' },
  'spec-start-outside': { severity: ['error'], title: 'A start value lies outside its bounds' },
  'spec-fixed-no-start': { severity: ['error'], title: 'A fixed parameter has no start value' },
  'bad-cell': { severity: ['warning', 'error'], title: 'A cell is not a number' },
  'data-expression': { severity: ['error'], title: 'A column expression could not be evaluated' },
  'spec-derived': { severity: ['error'], title: 'A derived entry is not valid' },
  'spec-shared': { severity: ['error'], title: 'models[].shared is not valid' },
  'spec-loss': { severity: ['error'], title: 'models[].loss or lossScale is not valid' },
  'spec-sigma-x': { severity: ['error'], title: 'data.sigmaX cannot be used as written' },
  'spec-variance': { severity: ['error'], title: 'The variance function in data.sigma is not valid' },
  'spec-calibration': { severity: ['error'], title: 'An unknowns, controls or limits block is not valid' },
  'spec-potency': { severity: ['error'], title: 'The potency block is not valid' },
  'unknown-flagged': { severity: ['info'], title: 'Some unknowns read off the curve are flagged' },
  'control-failed': { severity: ['error'], title: 'A spiked control is outside its acceptance range' },
  'standard-recovery': { severity: ['warning'], title: 'A standard back-calculates outside its acceptance range' },
  'group-id': { severity: ['error'], title: 'A group id is empty or contains a reserved character' },
  'too-many-groups': { severity: ['error'], title: 'Too many groups' },
  'group-too-few-rows': { severity: ['error'], title: 'A group has too few rows for a model' },
  'text-column-operator': { severity: ['error'], title: 'A text column used with a numeric operator' },
  'non-finite-value': { severity: ['warning'], title: 'An x or y expression is not finite for some rows' },
  'bad-sigma': { severity: ['warning'], title: 'data.sigma is not a positive finite number for some rows' },
  'bad-weight': { severity: ['warning'], title: 'data.weight is not a positive finite number for some rows' },
  'bad-count': { severity: ['warning'], title: 'data.count is not a whole number of at least 1 for some rows' },
  'exclude-missing-row': { severity: ['warning'], title: 'data.exclude names a row not in the file' },
  'no-data': { severity: ['error'], title: 'No rows are left to fit' },
  'fit-failed': { severity: ['error'], title: 'A model could not be fitted' },
  'comparison-failed': { severity: ['warning'], title: 'The models could not be compared' },
  'not-converged': { severity: ['check'], title: 'A model did not converge' },
  'expect-not-met': { severity: ['check'], title: 'An expectation is not met' },
  'stale-results': { severity: ['check'], title: 'The committed results are missing or out of date' },
  'output-failed': { severity: ['check'], title: 'The results file could not be written' },
  'report-points-decimated': { severity: ['info'], title: 'The HTML report shows a decimated set of points' },
} as const satisfies Record<string, ProblemInfo>;

/** A problem code: a key of PROBLEMS (a typo is a type error). */
export type ProblemCode = keyof typeof PROBLEMS;

/** Every code, in table order. */
export const PROBLEM_CODES = Object.keys(PROBLEMS) as ProblemCode[];

/** true when `code` is a known problem code. */
export function isProblemCode(code: string): code is ProblemCode {
  return Object.prototype.hasOwnProperty.call(PROBLEMS, code);
}

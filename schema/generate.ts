// Generates schema/fitspec.schema.json and schema/fitreport.schema.json (JSON Schema draft-07) from the defaults
// constant, the built-in catalogue and the descriptions below. Run: npx tsx schema/generate.ts
// test/unit/schema.test.ts fails when the committed files differ from what this produces.
import * as fs from 'fs';
import * as path from 'path';
import { BUILTINS } from '../src/engine/models';
import { DEFAULTS, THRESHOLD_KEYS } from '../src/engine/spec/defaults';
import { MAX_DEGREE } from '../src/engine/spec/validate';
import { DEFAULT_THRESHOLDS } from '../src/engine/stats/thresholds';
import { TERMINATION_CODES } from '../src/engine/terminations';

type Schema = Record<string, unknown>;

const THRESHOLD_TEXT: Record<(typeof THRESHOLD_KEYS)[number], string> = {
  paramCorrelation: '|r| between two parameter estimates above which they are reported as correlated.',
  relativeSe: 'Fallback only: for a nonlinear parameter whose profile interval was not computed, the relative standard error (se/|value|) above which it is reported as poorly determined.',
  cvRatio: 'Multiple of the cvRMSE/RMSE ratio a correct model gives on these x values (from the leverages) above which a model is flagged as overfitting.',
  minDof: 'Fewer residual degrees of freedom than this is flagged as overfitting.',
  paramsPerPoint: 'More parameters than n times this is flagged as overfitting.',
  runsP: 'Runs-test p-value (exact up to 200 x positions; replicates at one x count once) below which the residuals are reported as systematic (a pattern the model misses).',
  normalityP: 'Normality-test p-value below which the residuals are reported as strongly non-normal.',
  cooksFactor: "Cook's distance above this multiple of 1/n marks an influential point (4 gives the usual 4/n).",
  linearHint: '|r| of y with x at or above which a straight line is suggested.',
  fTestAlpha: 'Significance level of the extra-sum-of-squares F-test between nested models.',
  lossWeight: "A robust loss's final weight (1 = a well-fitting row) below which a row is listed as down-weighted (robust-down-weighted).",
};

const str = (description: string, extra: Schema = {}): Schema => ({ type: 'string', description, ...extra });
const num = (description: string, extra: Schema = {}): Schema => ({ type: 'number', description, ...extra });
const int = (description: string, extra: Schema = {}): Schema => ({ type: 'integer', description, ...extra });
const nnum = (description: string): Schema => ({ type: ['number', 'null'], description });
const bool = (description: string): Schema => ({ type: 'boolean', description });
const obj = (description: string, properties: Record<string, Schema>, required: string[] = [], extra: Schema = {}): Schema => ({
  type: 'object',
  description,
  properties,
  ...(required.length ? { required } : {}),
  additionalProperties: false,
  ...extra,
});
const arr = (description: string, items: Schema, extra: Schema = {}): Schema => ({ type: 'array', description, items, ...extra });

export function fitspecSchema(): Schema {
  const ids = Object.keys(BUILTINS);
  const param = obj(
    'Settings of one parameter. Without "start" the engine finds a starting value itself (self-starting estimates for built-ins, a multi-start search for formulas).',
    {
      start: num('Starting value of the iteration (and the held value when "fixed" is true).'),
      min: num('Lower bound: the estimate is kept at or above this value.'),
      max: num('Upper bound: the estimate is kept at or below this value.'),
      fixed: bool('true holds the parameter at "start" instead of fitting it (e.g. c0 = 0 for a line through the origin).'),
    },
  );
  const solver = obj('Solver settings of this model.', {
    maxIterations: int('Maximum Levenberg–Marquardt iterations of one start.', { minimum: 1, default: DEFAULTS.solver.maxIterations }),
    multiStart: int('Number of short local Levenberg–Marquardt runs the multi-start search makes from its best candidate points (used when a parameter has no "start" and no self-start applies); more runs search wider and take longer.', {
      minimum: 1,
      default: DEFAULTS.solver.multiStart,
    }),
    seconds: num('Time budget of one model fit, in seconds; the fit stops with termination "time-limit" when it is used up.', {
      exclusiveMinimum: 0,
      default: DEFAULTS.solver.seconds,
    }),
  });
  const model: Schema = {
    type: 'object',
    description: 'One candidate model. Give exactly one of "builtin", "polynomial" or "formula".',
    properties: {
      name: str('Name of the model, unique within the spec; "expect", the report and the comparison refer to it.', { minLength: 1 }),
      builtin: {
        type: 'string',
        description: 'Id of a model from the built-in catalogue (formula written in the variable x).',
        enum: ids,
        enumDescriptions: ids.map((id) => `${BUILTINS[id].formula} — parameters ${BUILTINS[id].params.join(', ')}`),
      },
      polynomial: int('Degree n of a polynomial c0 + c1*x + … + cn*x^n in the single x variable (coefficients c0 … cn, raw basis).', { minimum: 0, maximum: MAX_DEGREE }),
      formula: str(
        'A formula in the variables bound by data.x, e.g. "K / (1 + exp(-r*(x - t0)))". Every other name (except the functions and the constants pi and e) is a parameter. Column names with spaces go in backticks.',
        { minLength: 1 },
      ),
      params: {
        type: 'object',
        description:
          'Per parameter: start, min, max, fixed. For a formula, when params is given it must declare every parameter (an undeclared one is an error — it catches typos); left out, all are fitted without starts.',
        additionalProperties: param,
      },
      solver,
      shared: arr(
        'With data.groupBy: parameters common to all groups. The model is fitted once to all groups together (one residual vector, one covariance); every other parameter gets one value per group, reported as name[<group id>], e.g. K[R1].',
        { type: 'string', minLength: 1 },
        { minItems: 1, uniqueItems: true },
      ),
      loss: {
        type: 'string',
        enum: ['squares', 'huber', 'soft_l1', 'cauchy'],
        default: 'squares',
        description:
          'The loss minimised: "squares" (least squares) or a robust loss, fitted by iteratively reweighted least squares from the least-squares fit; standard errors by the sandwich estimator (docs/robust.md).',
        enumDescriptions: [
          'Least squares.',
          'Quadratic up to the threshold, linear beyond (Huber; tuning 1.345).',
          'Smooth approximation to absolute error (pseudo-Huber; tuning 1.345).',
          'Logarithmic beyond the threshold: far points get little weight (tuning 2.385).',
        ],
      },
      lossScale: {
        description:
          'Robust loss only: the residual size where the loss turns from quadratic (SciPy f_scale), in units of the weighted residual; "mad" (default): tuning × 1.4826 × the median absolute least-squares residual; "mad-iterated": re-estimated from the residuals at every step.',
        oneOf: [{ type: 'number', exclusiveMinimum: 0 }, { type: 'string', enum: ['mad', 'mad-iterated'] }],
      },
    },
    required: ['name'],
    additionalProperties: false,
    oneOf: [{ required: ['builtin'] }, { required: ['polynomial'] }, { required: ['formula'] }],
    defaultSnippets: [
      { label: 'built-in model', body: { name: '${1:logistic}', builtin: '${2:logistic3}' } },
      { label: 'polynomial', body: { name: '${1:quadratic}', polynomial: 2 } },
      { label: 'formula', body: { name: '${1:mine}', formula: '${2:A*exp(-k*x)}', params: { A: { start: 1 }, k: { start: 0.1 } } } },
    ],
  };
  const exclude = obj('A data row left out on purpose, with the reason; reviewable in the diff while the data file stays untouched.', {
    row: int('1-based data row (the first row after the header is 1).', { minimum: 1 }),
    reason: str('Why the row is left out, e.g. "bubble in cuvette".', { minLength: 1 }),
  }, ['row', 'reason']);
  const data = obj(
    'The data to fit: a CSV file, the x variable(s), y, and optional weights, filter and exclusions.',
    {
      file: str('CSV file, relative to this spec file. The first row names the columns.', { minLength: 1 }),
      x: {
        description:
          'A string: a column name or an expression over columns, bound to the variable x. An object: variable name -> column or expression, e.g. { "t": "hours", "T": "temp_c" }.',
        oneOf: [
          { type: 'string', minLength: 1, description: 'Column name or expression bound to the variable x.' },
          {
            type: 'object',
            description: 'Variable name -> column or expression.',
            minProperties: 1,
            additionalProperties: { type: 'string', minLength: 1, description: 'Column name or expression over columns.' },
          },
        ],
      },
      y: str('Column name or expression over columns, e.g. "od600" or "log(od600)".', { minLength: 1 }),
      sigma: {
        description:
          'Standard deviations of y: a column or expression (the weights are 1/sigma²), or a variance function { "power": θ | "estimate" } for σ ∝ |fitted value|^θ, refitted until the weights settle (θ estimated from replicate x values with "estimate"). Not together with "weight".',
        oneOf: [
          { type: 'string', minLength: 1 },
          obj('Variance function σ ∝ |fitted|^θ (docs/robust.md).', {
            power: {
              description: 'θ: a number (0 = constant σ, 0.5 = Poisson-like, 1 = constant CV) or "estimate" (from replicates: x values measured two or more times).',
              oneOf: [{ type: 'number', minimum: -5, maximum: 5 }, { type: 'string', enum: ['estimate'] }],
            },
          }, ['power']),
        ],
      },
      sigmaX: str('Errors in x: column or expression (or a constant such as "0.05") of the standard deviations of x, for an orthogonal-distance fit (Deming regression for a straight line with constant σ). Needs "sigma" or "weight" for y and a single x variable (docs/robust.md).', { minLength: 1 }),
      weight: str('Expression of inverse-variance (precision) weights over columns, x and y, e.g. "1/y^2": weight w means y has variance σ²/w. Not together with "sigma". For replicate counts use "count".', { minLength: 1 }),
      count: str('Column or expression of frequency weights: each row stands for that many identical observations (a whole number ≥ 1); dof, standard errors, likelihood and intervals are those of the expanded data. Combines with sigma or weight.', { minLength: 1 }),
      sigmaMode: {
        type: 'string',
        description:
          '"relative": the covariance is scaled by the residual variance (sigma gives relative weights). "absolute": sigma are known measurement errors (covariance unscaled, χ² goodness of fit reported).',
        enum: ['relative', 'absolute'],
        enumDescriptions: ['sigma are relative weights; covariance scaled by the residual variance', 'sigma are known errors; covariance unscaled, χ² reported'],
        default: DEFAULTS.data.sigmaMode,
      },
      where: str('Row filter in the formula language plus < <= > >= == != and the words and, or, not, e.g. "hours <= 48 and reactor == 2".', { minLength: 1 }),
      exclude: arr('Rows left out on purpose, each { "row": N, "reason": "…" }.', exclude),
      delimiter: {
        type: 'string',
        description: 'Field delimiter of the CSV file; "auto" detects ",", ";" or tab from the header line.',
        enum: ['auto', ',', ';', '\t'],
        enumDescriptions: ['detect from the header line', 'comma', 'semicolon', 'tab'],
        default: DEFAULTS.data.delimiter,
      },
      decimal: {
        type: 'string',
        description: 'Decimal separator of the numbers: "." or "," (then the delimiter cannot be ",").',
        enum: ['.', ','],
        enumDescriptions: ['decimal point: 1.5', 'decimal comma: 1,5'],
        default: DEFAULTS.data.decimal,
      },
      badRows: {
        type: 'string',
        description: 'What a cell that is not a number does: "drop" leaves the row out and reports it; "fail" stops the run.',
        enum: ['drop', 'fail'],
        enumDescriptions: ['leave the row out and report it', 'stop with an error'],
        default: DEFAULTS.data.badRows,
      },
      groupBy: {
        description: 'A column, or several, whose distinct values (combinations, joined by "/") are groups: every model is fitted to each group separately. A group id is its value as written in the file; it may not contain "/", "[" or "]".',
        oneOf: [str('Column naming the group of each row.', { minLength: 1 }), arr('Columns whose combination names the group of each row.', { type: 'string', minLength: 1 }, { minItems: 1, uniqueItems: true })],
      },
    },
    ['file', 'x', 'y'],
  );
  const expectEntry: Schema = {
    type: 'object',
    description: 'Expected value of a parameter with an absolute ("tol") or relative ("rel") tolerance; `curvewright check` fails when it is not met.',
    properties: {
      value: num('Expected value of the parameter.'),
      tol: num('Absolute tolerance: ok when |actual − value| <= tol.', { minimum: 0 }),
      rel: num('Relative tolerance: ok when |actual − value| <= rel·|value|.', { minimum: 0 }),
    },
    required: ['value'],
    additionalProperties: false,
    oneOf: [{ required: ['tol'] }, { required: ['rel'] }],
  };
  const thresholds: Schema = obj(
    'Overrides of the problem-detection defaults, by name.',
    Object.fromEntries(THRESHOLD_KEYS.map((k) => [k, num(THRESHOLD_TEXT[k], { minimum: 0, default: DEFAULT_THRESHOLDS[k] })])),
  );
  return {
    $schema: 'http://json-schema.org/draft-07/schema#',
    title: 'Curvewright fit spec',
    description: 'A fit definition: data, candidate models, and what to report and check. JSON with comments and trailing commas.',
    // VS Code's JSON language service reads these two: no warnings for // comments and trailing commas in spec files
    allowComments: true,
    allowTrailingCommas: true,
    type: 'object',
    properties: {
      $schema: str('Path or address of this schema (optional; editors use it for completion and hover help).'),
      title: str('Free-text title shown in the report.'),
      data,
      models: arr('Candidate models, compared on the same data.', model, { minItems: 1 }),
      confidence: num('Confidence level of every interval (parameters, bands, predictions, inverse).', {
        exclusiveMinimum: 0,
        exclusiveMaximum: 1,
        default: DEFAULTS.confidence,
      }),
      predict: arr('x values to predict y at: numbers for a single x variable, objects { "variable": value } for several.', {
        description: 'An x value, or an object with a value for every variable.',
        oneOf: [
          { type: 'number', description: 'x value (single variable).' },
          { type: 'object', description: 'A value for every variable bound in data.x.', additionalProperties: { type: 'number', description: 'Value of this variable.' } },
        ],
      }),
      solveFor: arr('y values to read x off the curve at (inverse prediction, single x variable).', num('A y value.')),
      predictWeight: num('Weight of a new observation in the prediction intervals of predict, solveFor and the band (on the scale of data.weight, or 1/σ² with data.sigma). Default: the weight of the observation nearest in x.', { exclusiveMinimum: 0 }),
      output: str(
        'Results file (FitReport JSON), relative to this spec file. Must stay inside the workspace and may not be the data or spec file.',
        { minLength: 1 },
      ),
      outputPoints: {
        enum: ['inline', 'sidecar', 'omit'],
        description: 'Where the results file keeps the per-point arrays and the band: "inline" in it; "sidecar" in <output minus .json>.points.json beside it (its name in the report\'s pointsFile), so that the main file stays short to review; "omit" leaves them out.',
        default: DEFAULTS.outputPoints,
      },
      expect: {
        type: 'object',
        description: 'Expected parameter values: model name -> parameter -> { "value", "tol" } or { "value", "rel" }.',
        additionalProperties: {
          type: 'object',
          description: 'Parameter name -> expected value with tolerance. With data.groupBy, "K[R1]" pins K of group R1 and a plain name is checked in every group.',
          additionalProperties: expectEntry,
        },
      },
      thresholds,
      derived: {
        type: 'object',
        description: 'Derived quantities: name -> expression over a model\'s parameters in the formula language, e.g. { "doubling": "log(2)/r" }. Reported (value, delta-method SE, Wald interval) for every model, and group, that has all the parameters it uses.',
        additionalProperties: { type: 'string', minLength: 1 },
      },
      plot: plotSchema(),
      unknowns: obj('Unknown samples read off the standard curve (docs/calibration.md): replicate readings of one id (and dilution) averaged, back-calculated with the interval for the mean of m readings, multiplied by the dilution factor.', {
        file: str('CSV of the readings, relative to this spec file (inside the workspace, like data.file).', { minLength: 1 }),
        id: str('Column naming each sample; rows with the same id and dilution are replicate readings.', { minLength: 1 }),
        y: str('Column or expression of the reading, on the scale of data.y. Default: data.y\'s own expression.', { minLength: 1 }),
        dilution: str('Column of the dilution factor (> 0; 1 = undiluted). The reported value is x × dilution.', { minLength: 1 }),
        model: str('Model that reads them. Default: the best model, or the only one that converged.', { minLength: 1 }),
        output: str('CSV file the read-outs (unknowns and controls) are also written to, relative to this spec file; inside the workspace, a .csv file.', { minLength: 1, pattern: '\\.[cC][sS][vV]$' }),
      }, ['file', 'id']),
      controls: obj('Spiked controls: recovery % = 100 · value / nominal with its interval and pass/fail against accept; also the recovery of the back-calculated standards. file, id, y and dilution default to those of unknowns (the rows with a nominal value are then the controls).', {
        file: str('CSV of the control readings (default: the unknowns file).', { minLength: 1 }),
        id: str('Column naming each control (default: unknowns.id).', { minLength: 1 }),
        y: str('Column or expression of the reading (default: unknowns.y, else data.y).', { minLength: 1 }),
        dilution: str('Column of the dilution factor (default: unknowns.dilution).', { minLength: 1 }),
        nominal: str('Column of the nominal (spiked) value, on the scale of the reported value (x × dilution).', { minLength: 1 }),
        accept: arr('Acceptance range of the recovery in %, [low, high], e.g. [80, 120].', { type: 'number', minimum: 0 }, { minItems: 2, maxItems: 2 }),
        acceptStandards: arr('Acceptance range of the back-calculated standards\' recovery in %, [low, high]. Default: none (no pass/fail).', { type: 'number', minimum: 0 }, { minItems: 2, maxItems: 2 }),
        model: str('Model that reads them (default: unknowns.model, else the best model).', { minLength: 1 }),
      }, ['nominal']),
      potency: obj('Relative potency of groups against a reference group from a joint 4PL/5PL fit with the asymptotes and slope shared (models[].shared), and parallelism by equivalence (docs/calibration.md). Needs data.groupBy.', {
        model: str('The joint model: builtin logistic4 (or logistic5) with shared lower, upper, slope (and asym). Default: the only such model.', { minLength: 1 }),
        reference: str('Group id of the reference.', { minLength: 1 }),
        test: arr('Group ids compared with the reference (default: every other group).', { type: 'string', minLength: 1 }, { minItems: 1 }),
        margin: obj('Equivalence margins of the ratios test/reference, each [low, high] with 0 < low < 1 < high.', {
          slope: arr('Margin of the ratio of slopes, e.g. [0.8, 1.25].', { type: 'number', exclusiveMinimum: 0 }, { minItems: 2, maxItems: 2 }),
          span: arr('Margin of the ratio of spans (upper − lower), e.g. [0.8, 1.25].', { type: 'number', exclusiveMinimum: 0 }, { minItems: 2, maxItems: 2 }),
        }, ['slope', 'span']),
      }, ['reference']),
      limits: obj('Limits of detection and quantitation (docs/calibration.md names each convention; validate them under your own procedure).', {
        sigma: { enum: ['residual', 'blanks'], description: 'σ of the limits: the fit\'s residual standard deviation, or the standard deviation of the blank readings.', default: 'residual' },
        blanks: str('Id of the blank readings in the unknowns file. Default: the standards at x = 0.', { minLength: 1 }),
        model: str('Model the limits come from (default: unknowns.model, else the best model).', { minLength: 1 }),
      }),
    },
    required: ['data', 'models'],
    additionalProperties: false,
  };
}

/** The spec's plot block (also echoed in the report): drawing choices only, never a result. */
function plotSchema(): Schema {
  const axis = (name: 'x' | 'y', example: string): Schema => obj(`The ${name} axis of the figure.`, {
    scale: {
      enum: ['auto', 'linear', 'log'],
      description: `"auto": a log axis when every ${name} value is positive and they span more than two decades (ratio above 100), else linear. The panel's log toggle still changes the view.`,
      default: 'auto',
    },
    label: str(`Axis title (default: the column or expression bound to ${name}).`, { minLength: 1 }),
    unit: str(`Unit shown in the axis title in parentheses, e.g. "${example}".`, { minLength: 1 }),
  });
  return obj('How the panel and the HTML report draw the figure. Changes no number in the results.', {
    x: axis('x', 'ng/mL'),
    y: axis('y', 'AU'),
    bands: arr('Bands drawn around the selected model\'s curve (default both; [] draws none).', { enum: ['confidence', 'prediction'] }, { uniqueItems: true }),
  });
}

// ---------------------------------------------------------------- FitReport / ErrorReport

const numOrNull2 = (description: string): Schema => ({
  description,
  oneOf: [{ type: 'null' }, { type: 'array', items: { type: ['number', 'null'] }, minItems: 2, maxItems: 2 }],
});
const interval = (description: string): Schema => ({ type: 'array', description, items: { type: 'number' }, minItems: 2, maxItems: 2 });
const numbers = (description: string): Schema => arr(description, { type: 'number' });

export function fitreportSchema(): Schema {
  const jsonPath = arr('JSON path into the spec: keys and array indices.', { type: ['string', 'integer'] });
  const location = obj('Where in a data file or the spec text.', {
    file: str('File the location is in.'),
    line: int('1-based line in the file.', { minimum: 1 }),
    column: { type: ['integer', 'string'], description: '1-based column in the spec text, or a CSV column name.' },
    row: int('1-based data row (the first row after the header is 1).', { minimum: 1 }),
  }, ['file']);
  const problem = obj('A problem found in the spec, the data or a fit.', {
    code: str('Stable code, documented in docs/problems.md.'),
    severity: { type: 'string', enum: ['error', 'warning', 'info'], description: 'How serious the problem is.' },
    message: str('For the user: what happened, why it matters, what to try.'),
    path: { $ref: '#/definitions/jsonPath', description: 'Where in the spec it belongs.' },
    location: { $ref: '#/definitions/location', description: 'Where in a data file or the spec text, when that applies.' },
    rows: arr('Data rows the problem concerns.', { type: 'integer' }),
    group: str('With data.groupBy: the id of the group the problem concerns.'),
  }, ['code', 'severity', 'message', 'path']);
  const termination = {
    type: 'string',
    description: 'Why the solver stopped.',
    enum: TERMINATION_CODES,
  };
  const paramReport = obj('Estimate of one parameter.', {
    value: num('Estimate.'),
    se: nnum('Standard error (null when undefined).'),
    t: nnum('t statistic value/se.'),
    p: nnum('Two-sided p-value of t.'),
    ci: numOrNull2('Wald interval at the spec confidence.'),
    profileCi: numOrNull2('Profile-likelihood interval; a bound that does not exist is null.'),
    fixed: bool('Held at its start value.'),
    atBound: { type: ['string', 'null'], enum: ['min', 'max', null], description: 'Which bound the estimate sits on, or null.' },
  }, ['value', 'se', 't', 'p', 'ci', 'profileCi', 'fixed', 'atBound']);
  const stats = obj('Goodness-of-fit statistics.', {
    n: int('Points fitted.'),
    dof: int('Residual degrees of freedom.'),
    sse: num('(Weighted) sum of squared residuals.'),
    sigma: nnum('Residual standard error sqrt(SSE/dof).'),
    rmse: num('sqrt(SSE/n).'),
    r2: nnum('Coefficient of determination.'),
    adjR2: nnum('Adjusted R².'),
    r2Uncentred: bool('true when r2 is uncentred (linear model without a constant term).'),
    chi2: nnum('χ² (absolute sigma mode).'),
    reducedChi2: nnum('χ²/dof (absolute sigma mode).'),
    chi2P: nnum('p-value of χ² (absolute sigma mode).'),
    logLik: nnum('Gaussian log-likelihood with σ counted as a parameter.'),
    aic: nnum('Akaike information criterion.'),
    aicc: nnum('AIC with small-sample correction.'),
    bic: nnum('Bayesian information criterion.'),
    cvRmse: nnum('Cross-validated RMSE.'),
    cvFolds: { type: ['integer', 'null'], description: 'Folds of the cross-validation.' },
    cvMethod: {
      type: ['string', 'null'], enum: ['downdate', 'refit', null],
      description: `How the held-out predictions were made: "downdate" = exact block downdate of a linear fit (equal to refitting without each fold, to rounding); "refit" = refits started from the full-data estimate, at most ${DEFAULTS.analysis.cvIterations} Levenberg–Marquardt iterations each. null when not cross-validated.`,
    },
  }, ['n', 'dof', 'sse', 'sigma', 'rmse', 'r2', 'adjR2', 'chi2', 'reducedChi2', 'logLik', 'aic', 'aicc', 'bic', 'cvRmse', 'cvFolds']);
  const residualTests = {
    description: 'Tests on the residuals, or null.',
    oneOf: [
      { type: 'null' },
      obj('Residual tests.', {
        runs: {
          description: 'Wald–Wolfowitz runs test of residual signs.',
          oneOf: [{ type: 'null' }, obj('Runs test.', { runs: int('Observed runs.'), expected: num('Expected runs.'), z: num('z statistic.'), p: num('p-value.') }, ['runs', 'expected', 'z', 'p'])],
        },
        normality: {
          description: 'Normality test of the residuals.',
          oneOf: [
            { type: 'null' },
            obj('Normality test.', {
              test: { type: 'string', enum: ['shapiro-wilk', 'dagostino-pearson'], description: 'Which test.' },
              statistic: num('Test statistic.'),
              p: num('p-value.'),
            }, ['test', 'statistic', 'p']),
          ],
        },
        durbinWatson: nnum('Durbin–Watson statistic of the residuals in row order.'),
      }, ['runs', 'normality', 'durbinWatson']),
    ],
  };
  const points = obj('Per-point results.', {
    row: arr('1-based data row of each point.', { type: 'integer' }),
    x: { type: 'object', description: 'One array per x variable.', additionalProperties: numbers('Values of this variable.') },
    y: numbers('Observed y.'),
    fitted: numbers('Fitted values.'),
    residual: numbers('y − fitted.'),
    standardized: numbers('Standardized residuals.'),
    leverage: numbers('Hat values.'),
    cooks: numbers("Cook's distances."),
    weight: numbers('Weights used (omitted when unweighted): precision weights, data.count not included.'),
    count: numbers('data.count of each row: identical observations it stands for (omitted without data.count).'),
    xAdjusted: numbers('With data.sigmaX: the fitted x of each point, x + δ, of the orthogonal-distance fit.'),
    lossWeight: numbers('With a robust loss: the final loss weight of each row, in (0, 1] (1 = a well-fitting row).'),
  }, ['row', 'x', 'y', 'fitted', 'residual', 'standardized', 'leverage', 'cooks']);
  const band = {
    description: 'Fitted curve with confidence and prediction bands (single-variable models), or null.',
    oneOf: [
      { type: 'null' },
      obj('Bands.', {
        variable: str('The x variable the band runs along.'),
        x: numbers('Grid of x.'),
        fit: numbers('Fitted curve.'),
        ciLow: numbers('Lower confidence band.'),
        ciHigh: numbers('Upper confidence band.'),
        piLow: numbers('Lower prediction band.'),
        piHigh: numbers('Upper prediction band.'),
      }, ['x', 'fit', 'ciLow', 'ciHigh', 'piLow', 'piHigh']),
    ],
  };
  const nullableInterval = (d: string): Schema => ({ description: d, oneOf: [{ type: 'null' }, interval(d)] });
  const prediction = obj('Prediction at one x.', {
    x: { description: 'The x value (a number, or an object for several variables).', oneOf: [{ type: 'number' }, { type: 'object', additionalProperties: { type: 'number' } }] },
    y: nnum('Predicted y.'),
    ci: nullableInterval('Confidence interval of the mean.'),
    pi: nullableInterval('Prediction interval of a new observation.'),
    extrapolated: bool('x lies outside the fitted range.'),
    group: str('A joint fit (models[].shared): the group whose parameters the prediction uses.'),
    weight: obj('Weight of the new observation in pi (weighted fits, or spec predictWeight).', {
      value: num('The weight.'),
      from: { enum: ['spec', 'nearest'], description: '"spec": predictWeight; "nearest": the weight of the observation nearest in x.' },
    }, ['value', 'from']),
  }, ['x', 'y', 'ci', 'pi', 'extrapolated']);
  const inverse = obj('x values read off the curve at one y.', {
    y: num('The y value.'),
    group: str('A joint fit (models[].shared): the group whose curve is read.'),
    roots: arr('Solutions x, each with an interval.', obj('One root.', { x: num('Root.'), interval: numOrNull2('Interval of the root.') }, ['x', 'interval'])),
    extrapolated: bool('y lies outside the fitted range.'),
  }, ['y', 'roots', 'extrapolated']);
  const matrix = (d: string): Schema => ({ description: d, oneOf: [{ type: 'null' }, arr(d, arr('A row.', { type: ['number', 'null'] }))] });
  const modelReport = obj('Results of one model.', {
    name: str('Model name from the spec.'),
    group: { type: ['string', 'null'], description: 'With data.groupBy: the id of the group this fit belongs to; null for a joint fit of all groups (models[].shared).' },
    shared: arr('A joint fit of all groups: the parameters common to all groups; the others are keyed name[<group id>].', { type: 'string' }),
    kind: { type: 'string', enum: ['builtin', 'polynomial', 'formula'], description: 'How the model was defined.' },
    formula: str('The formula as fitted.'),
    linear: bool('Linear in its parameters (solved directly).'),
    status: { type: 'string', enum: ['converged', 'failed'], description: 'Whether the fit converged.' },
    termination,
    iterations: int('Solver iterations.'),
    start: obj('Starting values used and where they came from.', {
      values: { type: 'object', description: 'Parameter -> start value.', additionalProperties: { type: 'number' } },
      source: { type: 'string', enum: ['spec', 'self-start', 'multi-start', 'linear'], description: 'Where the starts came from.' },
    }, ['values', 'source']),
    paramOrder: arr('Parameter names in report order.', { type: 'string' }),
    params: { type: 'object', description: 'Parameter -> estimate.', additionalProperties: paramReport },
    covariance: matrix('Covariance matrix in paramOrder; null where undefined.'),
    correlation: matrix('Correlation matrix in paramOrder.'),
    stats,
    residualTests,
    points,
    pointsOmitted: bool('Points left out of the results file (more than 10,000 rows, or outputPoints "sidecar" / "omit").'),
    bandOmitted: bool('Band left out of the results file (outputPoints "sidecar" / "omit").'),
    band,
    predictions: arr('Predictions at spec.predict.', prediction),
    inverse: arr('Inverse predictions at spec.solveFor.', inverse),
    originalScale: obj('When data.y is log10, log/ln or sqrt of a column: the predictions and band on that column\'s scale (inverse transform, each interval end mapped).', {
      column: str('The column data.y transforms.'),
      transform: { enum: ['log10', 'log', 'sqrt'], description: 'The transform of data.y.' },
      note: str('What the numbers are, in words.'),
      predictions: arr('The predictions at spec.predict, back-transformed.', obj('One prediction on the original scale.', {
        x: { description: 'The x value (a number, or an object for several variables).', oneOf: [{ type: 'number' }, { type: 'object', additionalProperties: { type: 'number' } }] },
        y: nnum('Back-transformed prediction (the median on the original scale).'),
        ci: numOrNull2('Back-transformed confidence interval.'),
        pi: numOrNull2('Back-transformed prediction interval.'),
      }, ['x', 'y', 'ci', 'pi'])),
      band: {
        description: 'The band back-transformed, or null.',
        oneOf: [{ type: 'null' }, obj('Band on the original scale.', {
          x: numbers('Grid of x.'), fit: numbers('Curve.'), ciLow: numbers('Lower confidence limit.'), ciHigh: numbers('Upper confidence limit.'),
          piLow: numbers('Lower prediction limit.'), piHigh: numbers('Upper prediction limit.'),
        }, ['x', 'fit', 'ciLow', 'ciHigh', 'piLow', 'piHigh'])],
      },
    }, ['column', 'transform', 'note', 'predictions', 'band']),
    problems: arr('Problems of this model.', { $ref: '#/definitions/problem' }),
    robust: obj('With a robust loss (models[].loss): how it was fitted and which rows it down-weighted.', {
      loss: { type: 'string', enum: ['huber', 'soft_l1', 'cauchy'], description: 'The loss.' },
      tuning: num('Tuning constant c: the threshold is c × scale.'),
      scale: nnum('Robust scale of the weighted residuals (1.4826 × MAD); null when lossScale gave the threshold.'),
      scaleSource: { type: 'string', enum: ['mad', 'mean-abs', 'exact', 'spec'], description: 'mad: from the MAD; mean-abs: the MAD was 0, mean absolute residual × √(π/2); exact: every residual 0; spec: lossScale.' },
      threshold: num('Residual size where the loss turns from quadratic (c × scale, or lossScale).'),
      iterations: int('Weighted least-squares refits.'),
      converged: bool('The reweighting settled.'),
      objective: num('Σ t²·ρ((r/t)²) at the solution.'),
      weights: obj('Loss weights.', {
        min: num('Smallest.'),
        median: num('Median.'),
        below: num('A row with a weight below this counts as down-weighted.'),
        downWeighted: int('Rows below it.'),
      }, ['min', 'median', 'below', 'downWeighted']),
      downWeightedRows: arr('Data rows with a weight below weights.below.', { type: 'integer' }),
    }, ['loss', 'tuning', 'scale', 'scaleSource', 'threshold', 'iterations', 'converged', 'objective', 'weights', 'downWeightedRows']),
    variance: obj('With data.sigma a variance function: the scheme and θ.', {
      scheme: { type: 'string', enum: ['power'], description: 'σ ∝ |fitted|^θ.' },
      theta: num('The power θ used; weights |fitted|^(−2θ), normalised to mean 1 (points.weight).'),
      estimated: bool('θ estimated from the replicates, or given.'),
      replicateGroups: int('Replicated x values that informed θ (or that exist when θ is given).'),
      iterations: int('Weighted refits.'),
      converged: bool('The weights settled.'),
    }, ['scheme', 'theta', 'estimated', 'replicateGroups', 'iterations', 'converged']),
    errorsInX: obj('With data.sigmaX: the orthogonal-distance (errors-in-x) fit. stats.sse is its objective; points.residual the orthogonal residual in units of y.', {
      method: { type: 'string', enum: ['deming', 'odr'], description: 'deming: straight line, constant σ_x and σ_y (closed form); odr: general orthogonal distance regression.' },
      sigmaX: str('data.sigmaX as written.'),
      lambda: nnum("Deming's λ = σ_y²/σ_x²; null for odr."),
      objective: num('Σ w_y (y − f(x+δ))² + w_x δ² at the solution.'),
      iterations: int('Solver iterations over the parameters (the shifts δ eliminated).'),
      maxShift: num('Largest |δ|, in units of x.'),
    }, ['method', 'sigmaX', 'lambda', 'objective', 'iterations', 'maxShift']),
  }, ['name', 'kind', 'formula', 'linear', 'status', 'termination', 'iterations', 'paramOrder', 'params', 'covariance', 'correlation', 'stats', 'residualTests', 'band', 'predictions', 'inverse', 'problems']);
  const ranking = arr('Models ranked by AICc.', obj('One model.', {
    name: str('Model name.'),
    aicc: nnum('AICc.'),
    deltaAicc: nnum('AICc − best AICc.'),
    weight: nnum('Akaike weight.'),
    cvRmse: nnum('Cross-validated RMSE.'),
  }, ['name', 'aicc', 'deltaAicc', 'weight', 'cvRmse']));
  const fTests = arr('Tests of nested pairs: the extra-sum-of-squares F-test, or with known σ (sigmaMode "absolute") the χ² difference test.', obj('One test.', {
    simpler: str('Simpler model.'),
    richer: str('Richer model.'),
    test: { enum: ['chi2'], description: 'Present ("chi2") for the χ² difference test with known σ; absent for the F-test.' },
    chi2: num('Δχ² of the χ² difference test (test "chi2").'),
    F: num('F statistic (for the χ² test: Δχ²/df1).'),
    df1: num('Numerator degrees of freedom.'),
    df2: num('Denominator degrees of freedom.'),
    p: num('p-value.'),
  }, ['simpler', 'richer', 'F', 'df1', 'df2', 'p']));
  const comparison = {
    description: 'Model comparison, or null with a single model.',
    oneOf: [
      { type: 'null' },
      obj('Comparison.', {
        ranking,
        fTests,
        best: { type: ['string', 'null'], description: 'Best model (null with data.groupBy: see byGroup).' },
        reason: str('Why, in words.'),
        byGroup: {
          type: 'object',
          description: 'With data.groupBy: the comparison within each group, by group id.',
          additionalProperties: obj('The comparison within one group.', {
            ranking,
            fTests,
            best: { type: ['string', 'null'], description: 'Best model in this group.' },
            reason: str('Why, in words.'),
          }, ['ranking', 'fTests', 'best', 'reason']),
        },
        sharing: arr('With models[].shared: each joint fit tested against the separate fits of the same model.', obj('One extra-sum-of-squares F-test of shared parameters.', {
          model: str('The model with shared parameters (its joint fit).'),
          separate: { type: ['string', 'null'], description: 'The spec model of the same builtin/polynomial/formula without shared whose per-group fits are the baseline; null when the baseline was fitted internally.' },
          shared: arr('The shared parameters.', { type: 'string' }),
          F: nnum('F statistic: ((SSE_joint - SSE_separate)/df1) / (SSE_separate/df2).'),
          df1: int('Parameters of the separate fits minus those of the joint fit.'),
          df2: int('Residual degrees of freedom of the separate fits (summed over groups).'),
          p: nnum('Upper-tail p-value of F.'),
          aiccShared: nnum('AICc of the joint fit.'),
          aiccSeparate: nnum('AICc of the separate fits taken together: pooled SSE, all their parameters and one common sigma, on the joint fit\'s rows.'),
          verdict: str('The result in words.'),
        }, ['model', 'separate', 'shared', 'F', 'df1', 'df2', 'p', 'aiccShared', 'aiccSeparate', 'verdict'])),
      }, ['ranking', 'fTests', 'best', 'reason']),
    ],
  };
  const dropped = obj('A row dropped while reading or preparing the data.', {
    row: int('1-based data row.'),
    line: int('1-based file line.'),
    column: str('Column or expression that was bad.'),
    reason: str('Why.'),
  }, ['row', 'line', 'column', 'reason']);
  const range2 = interval('[min, max].');
  const dataReport = obj('What data were used.', {
    file: str('Data file as written in the spec.'),
    rows: int('Data rows in the file.'),
    used: int('Rows fitted.'),
    dropped: arr('Rows dropped for bad values.', dropped),
    excluded: arr('Rows left out by data.exclude.', obj('An excluded row.', { row: int('Data row.'), reason: str('Reason.') }, ['row', 'reason'])),
    filtered: int('Rows left out by data.where.'),
    range: obj('Ranges of x and y.', {
      x: { description: 'Range of x, or per variable.', oneOf: [range2, { type: 'object', additionalProperties: range2 }] },
      y: range2,
    }, ['x', 'y']),
    droppedTotal: int('All rows dropped for bad values, when the dropped list is capped.'),
    correlation: { type: 'object', description: 'Pearson r of y with each x variable.', additionalProperties: { type: ['number', 'null'] } },
    labels: obj('What each plotted quantity is, as the spec wrote it: for axis titles.', {
      x: { type: 'object', description: 'Variable name -> its column or expression.', additionalProperties: { type: 'string' } },
      y: str('The column or expression of y.'),
    }, ['x', 'y']),
  }, ['file', 'rows', 'used', 'dropped', 'excluded', 'range', 'correlation']);
  const reason = obj('One reason check fails a spec, or a warning it does not count.', {
    code: str('Problem code, or not-converged, expect-not-met, stale-results, output-failed, spec-error.'),
    severity: { enum: ['error', 'warning'], description: 'error: fails the check; warning: not counted without --strict.' },
    message: str('For the user: what is wrong and the fix.'),
    file: str('File it belongs to, relative to the current directory: the spec or a data file.'),
    line: int('1-based line in that file.'),
    column: int('1-based column in that line.'),
    path: { $ref: '#/definitions/jsonPath', description: 'Where in the spec.' },
  }, ['code', 'severity', 'message', 'file']);
  const check = obj('The verdict of `curvewright check --json` (only in its output, never in results files).', {
    ok: bool('The spec passed.'),
    spec: str('Spec path relative to the current directory, forward slashes.'),
    strict: bool('Run with --strict (warnings count).'),
    reasons: arr('What fails the spec; empty when ok.', { $ref: '#/definitions/checkReason' }),
    warnings: arr('Warnings not counted (without --strict).', { $ref: '#/definitions/checkReason' }),
    shard: str('K/N when run with --shard.'),
  }, ['ok', 'spec', 'strict', 'reasons', 'warnings']);
  const fitReport = obj('Results of a fit spec.', {
    version: { const: 1, description: 'Report format version.' },
    spec: str('Spec file name as given.'),
    title: str('Spec title.'),
    plot: plotSchema(),
    meta: obj('Provenance.', {
      engine: str('Engine name and version.'),
      specHash: str('sha256 of the spec text.'),
      dataHash: str('sha256 of the data file.'),
      readingsHash: str('With unknowns or controls files: sha256 of their bytes (of their hashes when several), so check sees them change.'),
      seed: int('Seed of the multi-start search.'),
    }, ['engine', 'specHash', 'dataHash', 'seed']),
    data: dataReport,
    groups: arr('With data.groupBy: the groups, in order of first appearance in the file.', obj('One group.', {
      id: str('Group id: the value as written in the file, several columns joined by "/".'),
      key: { type: 'object', description: 'groupBy column -> its value in this group.', additionalProperties: { type: 'string' } },
      rows: int('Data rows of the group that passed data.where and data.exclude.'),
      used: int('Rows fitted.'),
    }, ['id', 'key', 'rows', 'used'])),
    models: arr('One report per model, in spec order; with data.groupBy one per model per group (group by group).', modelReport),
    comparison,
    best: { type: ['string', 'null'], description: 'Best model, or null.' },
    problems: arr('Spec and data problems.', { $ref: '#/definitions/problem' }),
    expect: arr('Outcome of each spec.expect entry.', obj('One expectation.', {
      model: str('Model name.'),
      group: str('With data.groupBy: the group checked.'),
      param: str('Parameter name.'),
      value: num('Expected value.'),
      tol: num('Absolute tolerance.'),
      rel: num('Relative tolerance.'),
      actual: nnum('Estimate.'),
      ok: bool('Met.'),
    }, ['model', 'param', 'value', 'actual', 'ok'])),
    derived: arr('With spec.derived: each derived quantity for each model (and group) that has its parameters.', obj('One derived quantity of one fit.', {
      name: str('Name from spec.derived.'),
      model: str('Model name.'),
      group: { type: ['string', 'null'], description: 'Group id, or null without data.groupBy.' },
      value: nnum('Value at the estimates.'),
      se: nnum('Delta-method standard error sqrt(gᵀCg), g the exact gradient; null without a covariance.'),
      ci: numOrNull2('Wald interval at the spec confidence.'),
    }, ['name', 'model', 'group', 'value', 'se', 'ci'])),
    unknowns: obj('With spec.unknowns: every sample read off the curve.', {
      model: str('The model that read them.'),
      modelFrom: { enum: ['spec', 'best', 'only'], description: 'Why this model: named in the spec, the best by the comparison, or the only converged one.' },
      file: str('The readings file as the spec names it.'),
      output: str('The CSV file written beside the results (spec unknowns.output).'),
      results: arr('One entry per sample (id and dilution), in order of first appearance.', { $ref: '#/definitions/readout' }),
    }, ['model', 'modelFrom', 'file', 'results']),
    controls: obj('With spec.controls: the spiked controls\' and the standards\' recovery.', {
      model: str('The model that read them.'),
      modelFrom: { enum: ['spec', 'best', 'only'], description: 'Why this model.' },
      file: { type: ['string', 'null'], description: 'The controls file, or null (standards only).' },
      accept: numOrNull2('Acceptance range of the recovery, %.'),
      acceptStandards: numOrNull2('Acceptance range of the standards\' recovery, %.'),
      results: arr('One entry per control.', { $ref: '#/definitions/readout' }),
      standards: arr('Each standard level back-calculated from the mean of its readings.', obj('One standard level.', {
        x: num('Nominal x of the level.'),
        m: int('Readings at the level.'),
        meanY: num('Mean reading.'),
        back: nnum('Back-calculated x.'),
        interval: numOrNull2('Interval of the back-calculated x (an end that does not exist is null).'),
        recovery: nnum('100 · back / x (null at x = 0).'),
        pass: { type: ['boolean', 'null'], description: 'Recovery within acceptStandards; null without it.' },
      }, ['x', 'm', 'meanY', 'back', 'interval', 'recovery', 'pass'])),
      pass: { type: ['boolean', 'null'], description: 'Every control with a verdict passed; null without accept or controls.' },
    }, ['model', 'modelFrom', 'file', 'accept', 'acceptStandards', 'results', 'standards', 'pass']),
    limits: obj('With spec.limits: limits of detection and quantitation, with the convention each follows.', {
      model: str('The model the limits come from.'),
      modelFrom: { enum: ['spec', 'best', 'only'], description: 'Why this model.' },
      sigma: obj('σ used.', {
        from: { enum: ['residual', 'blanks'], description: 'The fit\'s residual SD, or the SD of the blank readings.' },
        value: nnum('The value of σ.'),
        n: int('Blank readings (0 for residual).'),
      }, ['from', 'value', 'n']),
      blank: obj('The blank.', { x: num('Its x (0).'), y: nnum('Its response: the fitted value at x, or the mean of the blank readings.') }, ['x', 'y']),
      convention: { enum: ['ich-line', 'response'], description: '"ich-line": LOD = 3.3·σ/|slope|, LOQ = 10·σ/|slope| (ICH Q2(R1)); "response": the x where the curve reaches the blank response ± 3.3·σ and ± 10·σ.' },
      lod: nnum('Limit of detection, in x above the blank.'),
      loq: nnum('Limit of quantitation, in x above the blank.'),
      detection: obj('Hubaux–Vos detection limit.', {
        decisionY: nnum('Decision level: the blank\'s upper prediction limit.'),
        x: nnum('Smallest x whose lower prediction limit reaches the decision level.'),
      }, ['decisionY', 'x']),
      note: str('The conventions and the caution, in words.'),
    }, ['model', 'modelFrom', 'sigma', 'blank', 'convention', 'lod', 'loq', 'detection', 'note']),
    potency: obj('With spec.potency: relative potency of each test group, and parallelism by equivalence.', {
      model: str('The joint model the potency comes from.'),
      separate: { type: ['string', 'null'], description: 'The separate fits the parallelism check uses, or null.' },
      reference: str('Group id of the reference.'),
      confidence: num('Level of the potency interval.'),
      method: { enum: ['fieller'], description: 'Interval of a ratio: Fieller\'s theorem.' },
      results: arr('One entry per test group.', obj('One test group.', {
        test: str('Group id.'),
        ratio: nnum('Midpoint of the reference / midpoint of the test (above 1: the test is more potent).'),
        interval: numOrNull2('Fieller interval at the spec confidence; null ends when unbounded.'),
        reference: num('Midpoint (ec50 or xc) of the reference in the joint fit.'),
        testValue: num('Midpoint of the test group in the joint fit.'),
        parallelism: {
          description: 'Equivalence of slopes and spans from the separate fits, or null without them.',
          oneOf: [{ type: 'null' }, obj('Parallelism by equivalence.', {
            level: num('Level of the intervals: 2·confidence − 1 (two one-sided tests).'),
            slopeRatio: obj('A ratio and its Fieller interval.', { value: num('The ratio test/reference.'), interval: numOrNull2('Fieller interval; null ends when unbounded.') }, ['value', 'interval']),
            spanRatio: obj('A ratio and its Fieller interval.', { value: num('The ratio test/reference.'), interval: numOrNull2('Fieller interval; null ends when unbounded.') }, ['value', 'interval']),
            verdict: { enum: ['equivalent', 'not-equivalent', 'inconclusive', null], description: 'Both intervals within the margins / one outside / neither; null without a margin.' },
          }, ['level', 'slopeRatio', 'spanRatio', 'verdict'])],
        },
      }, ['test', 'ratio', 'interval', 'reference', 'testValue', 'parallelism'])),
      note: str('The method, the margins and which test to read, in words.'),
    }, ['model', 'separate', 'reference', 'confidence', 'method', 'results', 'note']),
    confidence: num('Confidence level of every interval.'),
    pointsFile: str('The sidecar file with every model\'s points and band (outputPoints "sidecar"), relative to this file.'),
    check: { $ref: '#/definitions/checkVerdict', description: 'Only in check --json output: the verdict.' },
  }, ['version', 'spec', 'meta', 'data', 'models', 'comparison', 'best', 'problems', 'expect', 'confidence']);
  const readout = obj('One sample read off the curve (an unknown, or a control with nominal, recovery and pass).', {
    id: str('Sample id.'),
    rows: arr('1-based data rows of its readings.', { type: 'integer' }),
    m: int('Readings averaged.'),
    y: numbers('The readings, on the scale of data.y.'),
    meanY: num('Mean reading.'),
    sdY: nnum('Standard deviation of the readings (null for one).'),
    x: nnum('Back-calculated x of the mean reading, in the measured solution; null when there is none.'),
    xOriginal: obj('When data.x is log10, log/ln or sqrt of a column: x and its interval on that column\'s scale (the value uses it).', {
      column: str('The column data.x transforms.'),
      transform: { enum: ['log10', 'log', 'sqrt'], description: 'The transform of data.x.' },
      x: nnum('x back-transformed.'),
      interval: numOrNull2('The interval back-transformed.'),
    }, ['column', 'transform', 'x', 'interval']),
    interval: numOrNull2('Interval of x for the mean of m readings (prediction variance with σ²/m); an end that does not exist is null.'),
    dilution: num('Dilution factor.'),
    value: nnum('x × dilution: the value in the original sample.'),
    valueInterval: numOrNull2('The interval times the dilution.'),
    flags: arr('What to look at, in words.', obj('One flag.', {
      kind: { enum: ['above-curve', 'below-curve', 'above-range', 'below-range', 'open-interval', 'no-interval', 'several-roots', 'below-lod', 'below-loq'], description: 'Stable kind (docs/calibration.md).' },
      message: str('In words: what and what to do.'),
    }, ['kind', 'message'])),
    nominal: num('Controls: the nominal value.'),
    recovery: nnum('Controls: 100 · value / nominal.'),
    recoveryInterval: numOrNull2('Controls: the interval of the recovery.'),
    pass: { type: ['boolean', 'null'], description: 'Controls: recovery within accept; null without accept or value.' },
  }, ['id', 'rows', 'm', 'y', 'meanY', 'sdY', 'x', 'interval', 'dilution', 'value', 'valueInterval', 'flags']);
  const errorReport = obj('A spec that could not be run.', {
    version: { const: 1, description: 'Report format version.' },
    spec: str('Spec file name as given.'),
    error: obj('What went wrong.', {
      message: str('For the user: what, where, and the fix.'),
      path: { $ref: '#/definitions/jsonPath', description: 'Where in the spec the error belongs.' },
      location: { $ref: '#/definitions/location', description: 'Where in the spec text or data file.' },
      problems: arr('All problems found.', { $ref: '#/definitions/problem' }),
    }, ['message']),
    check: { $ref: '#/definitions/checkVerdict', description: 'Only in check --json output: the verdict.' },
  }, ['version', 'spec', 'error']);
  return {
    $schema: 'http://json-schema.org/draft-07/schema#',
    title: 'Curvewright fit report',
    description: 'What `curvewright fit --json` prints and a spec\'s "output" file holds: a FitReport, or an ErrorReport when the spec could not be run.',
    definitions: { jsonPath, location, problem, checkReason: reason, checkVerdict: check, readout, fitReport, errorReport },
    oneOf: [{ $ref: '#/definitions/fitReport' }, { $ref: '#/definitions/errorReport' }],
  };
}

export function schemaText(schema: Schema): string {
  return JSON.stringify(schema, null, 2) + '\n';
}

if (require.main === module) {
  const dir = __dirname;
  fs.writeFileSync(path.join(dir, 'fitspec.schema.json'), schemaText(fitspecSchema()));
  fs.writeFileSync(path.join(dir, 'fitreport.schema.json'), schemaText(fitreportSchema()));
  process.stdout.write('wrote schema/fitspec.schema.json and schema/fitreport.schema.json\n');
}

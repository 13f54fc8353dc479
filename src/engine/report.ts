// The contract everything downstream reads: fit-spec input types and the FitReport output (see DESIGN.md).
// Keep in step with schema/fitspec.schema.json and schema/fitreport.schema.json (test/unit/schema.test.ts checks).
import type { ProblemCode } from './problems';
import type { Termination } from './terminations';

export type { ProblemCode };

/** A JSON path into the spec: keys and array indices, e.g. ["models", 0, "params", "K"]. */
export type JsonPath = (string | number)[];

// ---------------------------------------------------------------- fit spec (*.fitspec.json)

export interface ParamSpec {
  start?: number;
  min?: number;
  max?: number;
  /** true holds the parameter at `start`. */
  fixed?: boolean;
}

export interface SolverSpec {
  maxIterations?: number;
  /** number of starts for the generic multi-start search */
  multiStart?: number;
  /** time budget of one fit, seconds */
  seconds?: number;
}

export interface ModelSpec {
  name: string;
  builtin?: string;
  polynomial?: number;
  formula?: string;
  params?: Record<string, ParamSpec>;
  solver?: SolverSpec;
  /** with data.groupBy: parameters common to all groups; the model is fitted once to all groups together */
  shared?: string[];
  /** "squares" (default, least squares) or a robust loss fitted by iteratively reweighted least squares */
  loss?: 'squares' | 'huber' | 'soft_l1' | 'cauchy';
  /** robust loss: the residual size where the loss turns from quadratic (a positive number, in units of the weighted residual), or "mad" (default: tuning × 1.4826·MAD of the least-squares residuals) or "mad-iterated" (re-estimated every step) */
  lossScale?: number | 'mad' | 'mad-iterated';
}

export interface ExcludeSpec {
  row: number;
  reason: string;
}

export interface DataSpec {
  file: string;
  /** string: column or expression bound to `x`; object: variable name -> column or expression */
  x: string | Record<string, string>;
  y: string;
  /**
   * standard deviations of y: a column or expression, or a variance function estimated with the fit,
   * { "power": θ | "estimate" } for σ ∝ |fitted value|^θ (θ estimated from replicates with "estimate")
   */
  sigma?: string | VarianceSpec;
  /**
   * errors in x: the standard deviation of each x value (a column or expression, or a constant such as "0.05"),
   * for an orthogonal-distance fit (Deming regression for a straight line); needs data.sigma or data.weight for y
   */
  sigmaX?: string;
  /** inverse-variance (precision) weights: weight w means the row's y has variance σ²/w */
  weight?: string;
  /**
   * frequency weights: each row stands for this many identical observations (a whole number ≥ 1); dof, standard
   * errors, likelihood and intervals are those of the expanded data. Combines with sigma or weight.
   */
  count?: string;
  sigmaMode?: 'relative' | 'absolute';
  where?: string;
  exclude?: ExcludeSpec[];
  delimiter?: 'auto' | ',' | ';' | '\t';
  decimal?: '.' | ',';
  badRows?: 'drop' | 'fail';
  /** a column or several: each distinct value (combination, joined by '/') is a group, fitted separately */
  groupBy?: string | string[];
}

/** data.sigma as a variance function: σ_i = σ·|μ_i|^θ, μ the fitted value; θ a number or "estimate" (from replicates). */
export interface VarianceSpec {
  power: number | 'estimate';
}

/**
 * Unknown samples read off the standard curve (docs/calibration.md): each id's readings are averaged and
 * back-calculated with the interval for the mean of m readings, then multiplied by its dilution factor.
 */
export interface UnknownsSpec {
  /** CSV of the readings, relative to the spec file (inside the workspace, like data.file) */
  file: string;
  /** column naming the sample; rows with the same id (and dilution) are replicate readings of one sample */
  id: string;
  /** column or expression of the reading on the scale of data.y (default: data.y's own expression) */
  y?: string;
  /** column of the dilution factor (> 0; default 1): the reported value is x × dilution */
  dilution?: string;
  /** the model that reads them (default: the best model, or the only one) */
  model?: string;
  /** CSV file the results are also written to (inside the workspace, a .csv file) */
  output?: string;
}

/**
 * Spiked controls with a nominal value: recovery % = 100 · reported value / nominal, with its interval and pass/fail
 * against `accept`; also the recovery of the back-calculated standards. file, id, y and dilution default to unknowns'.
 */
export interface ControlsSpec {
  file?: string;
  id?: string;
  y?: string;
  dilution?: string;
  /** column of the nominal (spiked) value, on the scale of the reported value (x × dilution) */
  nominal: string;
  /** acceptance range of the recovery, in %, e.g. [80, 120] */
  accept?: [number, number];
  /** acceptance range of the standards' recovery, in % (default: none, no pass/fail) */
  acceptStandards?: [number, number];
  model?: string;
}

/** Limits of detection and quantitation from the calibration (docs/calibration.md names each convention). */
export interface LimitsSpec {
  /** σ of the limits: the fit's residual SD (default) or the SD of the blank readings */
  sigma?: 'residual' | 'blanks';
  /** id of the blank readings in the unknowns file (default: the standards at x = 0) */
  blanks?: string;
  model?: string;
}

/**
 * Relative potency of groups against a reference group, from a joint 4PL/5PL fit with the asymptotes and slope shared
 * (models[].shared), and a parallelism check by equivalence (docs/calibration.md).
 */
export interface PotencySpec {
  /** the joint model (builtin logistic4 or logistic5 with shared lower, upper, slope — and asym for logistic5); default: the only such model */
  model?: string;
  /** group id of the reference */
  reference: string;
  /** group ids compared with it (default: every other group) */
  test?: string[];
  /** equivalence margins of the ratios test/reference: of the slopes and of the spans (upper − lower), e.g. [0.8, 1.25] */
  margin?: { slope: [number, number]; span: [number, number] };
}

export type ExpectSpec = { value: number; tol: number } | { value: number; rel: number };

export interface FitSpec {
  title?: string;
  data: DataSpec;
  models: ModelSpec[];
  confidence?: number;
  predict?: (number | Record<string, number>)[];
  solveFor?: number[];
  /**
   * weight of a new observation in the prediction intervals of `predict` and `solveFor` (on the scale of data.weight,
   * or 1/σ² with data.sigma); without it the weight of the observation nearest in x is used
   */
  predictWeight?: number;
  output?: string;
  /** where the results file keeps the per-point arrays and the band: "inline" (default), "sidecar" (a separate
   *  <output>.points.json beside it, named by the report's pointsFile) or "omit" */
  outputPoints?: 'inline' | 'sidecar' | 'omit';
  expect?: Record<string, Record<string, ExpectSpec>>;
  thresholds?: Partial<Thresholds>;
  /** name -> expression over a model's parameters (e.g. "log(2)/r"), reported for every model that has them */
  derived?: Record<string, string>;
  unknowns?: UnknownsSpec;
  controls?: ControlsSpec;
  limits?: LimitsSpec;
  potency?: PotencySpec;
  /** how the panel and the HTML report draw the figure: axis scales, titles with units, which bands */
  plot?: PlotSpec;
}

/** One axis of the figure (`plot.x`, `plot.y`). */
export interface PlotAxisSpec {
  /** "auto" (default): log when every value is positive and they span more than two decades; else linear */
  scale?: 'auto' | 'linear' | 'log';
  /** axis title (default: the column or expression the spec bound) */
  label?: string;
  /** unit shown in the axis title, e.g. "ng/mL" */
  unit?: string;
}

/** The `plot` block of a spec. It changes how the figure is drawn, never a number in the results. */
export interface PlotSpec {
  x?: PlotAxisSpec;
  y?: PlotAxisSpec;
  /** bands drawn around the selected model's curve (default both; [] draws none) */
  bands?: ('confidence' | 'prediction')[];
}

/** A derived quantity of one fitted model (and group): value, delta-method SE and Wald interval. */
export interface DerivedReport {
  name: string;
  model: string;
  /** the group of the fit, or null without data.groupBy */
  group: string | null;
  value: number;
  /** delta-method standard error sqrt(gᵀ C g), g the exact gradient of the expression; null without a covariance */
  se: number | null;
  /** Wald interval value ± q·se at the spec's confidence (q from t with the fit's dof, or normal with known σ) */
  ci: [number, number] | null;
}

/** Problem-detection defaults; one table, documented in docs/problems.md, overridable by `thresholds` in a spec. */
export interface Thresholds {
  /** |r| between two parameter estimates above which they are reported as correlated */
  paramCorrelation: number;
  /** fallback for a nonlinear parameter without a profile interval: relative standard error above which it is poorly determined */
  relativeSe: number;
  /** multiple of the cvRMSE / RMSE ratio a correct model gives (from the leverages) above which the model is flagged as overfitting */
  cvRatio: number;
  /** fewer residual degrees of freedom than this is overfitting */
  minDof: number;
  /** more parameters than n times this is overfitting */
  paramsPerPoint: number;
  /** runs-test p-value below which residuals are systematic */
  runsP: number;
  /** normality-test p-value below which residuals are strongly non-normal */
  normalityP: number;
  /** Cook's distance above this multiple of 1/n marks an influential point (4 gives the usual 4/n) */
  cooksFactor: number;
  /** |r| of y with an x at or above which a straight line is suggested (common practice) */
  linearHint: number;
  /** significance level of the extra-sum-of-squares F-test */
  fTestAlpha: number;
  /** a robust loss's weight below which a row is listed as down-weighted */
  lossWeight: number;
}

// ---------------------------------------------------------------- FitReport

/** How much a problem matters: `error` fails `check`, `warning` fails it only with --strict, `info` never does. */
export type Severity = 'error' | 'warning' | 'info';

/** A place in a file the user can open: the spec (line, column) or a data file (line, row, column name). */
export interface FileLocation {
  file: string;
  /** 1-based line in the file */
  line?: number;
  /** 1-based column (character) in the line, for spec text; or a CSV column name */
  column?: number | string;
  /** 1-based data row (first row after the header is 1) */
  row?: number;
}

/** One finding about the spec, the data or a fit, with a stable code (docs/problems.md) and a place. */
export interface Problem {
  /** stable code, documented in docs/problems.md (the PROBLEMS table in src/engine/problems.ts) */
  code: ProblemCode;
  severity: Severity;
  /** written for the user: what happened, why it matters, what to try */
  message: string;
  /** where in the spec it belongs */
  path: JsonPath;
  /** where in a data file or the spec text, when that applies */
  location?: FileLocation;
  /** data rows it concerns (dropped, influential, ...) */
  rows?: number[];
  /** the group it concerns (data.groupBy), by id */
  group?: string;
}

/** Why the solver stopped (the TERMINATIONS table, src/engine/terminations.ts); `relative-reduction`, `step-size`,
 * `gradient` and `exact` count as converged. */
export type { Termination };

/** One parameter's estimate and uncertainty (se, t, p and intervals are null where they do not exist). */
export interface ParamReport {
  value: number;
  /** standard error */
  se: number | null;
  /** value/se and its two-sided p-value on dof degrees of freedom */
  t: number | null;
  p: number | null;
  /** Wald interval at the spec's confidence */
  ci: [number | null, number | null] | null;
  /** profile-likelihood interval; a bound that does not exist is null */
  profileCi: [number | null, number | null] | null;
  fixed: boolean;
  /** which bound the estimate sits on, or null */
  atBound: 'min' | 'max' | null;
}

/** Goodness of fit and information criteria of one model (null where undefined, e.g. no residual degrees of freedom). */
export interface FitStats {
  /** rows used */
  n: number;
  /** residual degrees of freedom: n minus the rank of the free parameters */
  dof: number;
  /** (weighted) sum of squared residuals */
  sse: number;
  /** residual standard error, sqrt(sse/dof) */
  sigma: number | null;
  /** sqrt(sse/n) */
  rmse: number;
  r2: number | null;
  adjR2: number | null;
  /** true when r2 is uncentred (linear model with no constant term) */
  r2Uncentred?: boolean;
  chi2: number | null;
  reducedChi2: number | null;
  /** p-value of chi2 (absolute sigma mode only) */
  chi2P?: number | null;
  logLik: number | null;
  aic: number | null;
  aicc: number | null;
  bic: number | null;
  /** cross-validated RMSE and the number of folds it used */
  cvRmse: number | null;
  cvFolds: number | null;
  /**
   * how the held-out predictions were made: 'downdate' = exact block downdate of a linear fit (the same numbers as
   * refitting without each fold, to rounding); 'refit' = refits from the full-data estimate, at most
   * DEFAULTS.analysis.cvIterations Levenberg–Marquardt iterations each; null when not cross-validated
   */
  cvMethod?: 'downdate' | 'refit' | null;
}

/** Tests on the residuals in row order: runs (pattern), normality and Durbin–Watson (autocorrelation); each null when it cannot be computed. */
export interface ResidualTests {
  runs: { runs: number; expected: number; z: number; p: number } | null;
  normality: { test: 'shapiro-wilk' | 'dagostino-pearson'; statistic: number; p: number } | null;
  /** Durbin–Watson d of the weighted residuals in data row order (the order of the observations) */
  durbinWatson: number | null;
}

/** Per-row diagnostics of one model, in data order (the rows used in the fit). */
export interface PointsReport {
  row: number[];
  /** one array per x variable */
  x: Record<string, number[]>;
  y: number[];
  fitted: number[];
  residual: number[];
  standardized: number[];
  leverage: number[];
  cooks: number[];
  /** weights used (omitted when unweighted): precision weights, data.count not included */
  weight?: number[];
  /** data.count of each row (omitted without data.count) */
  count?: number[];
  /** with a robust loss (models[].loss): the loss's final weight of each row, in (0, 1] (1 = a well-fitting row) */
  lossWeight?: number[];
  /** with data.sigmaX: the fitted ("true") x of each point, x + δ, of the orthogonal-distance fit */
  xAdjusted?: number[];
}

/** Fitted curve with confidence (ciLow/ciHigh) and prediction (piLow/piHigh) bands on a grid of x. */
export interface BandReport {
  /** the x variable the band runs along (single-variable models only) */
  variable?: string;
  x: number[];
  fit: number[];
  ciLow: number[];
  ciHigh: number[];
  piLow: number[];
  piHigh: number[];
}

/** The model evaluated at one x from the spec's `predict`, with its intervals. */
export interface PredictionReport {
  /** a number for a single x variable, an object for several */
  x: number | Record<string, number>;
  /** a joint fit (models[].shared): the group whose parameters the prediction uses */
  group?: string;
  y: number | null;
  ci: [number, number] | null;
  pi: [number, number] | null;
  extrapolated: boolean;
  /**
   * weighted fits, or spec predictWeight given: the weight of the new observation in `pi` ("spec": predictWeight;
   * "nearest": the weight of the observation nearest in x)
   */
  weight?: { value: number; from: 'spec' | 'nearest' };
}

/** The x values at which the model reaches one y from the spec's `solveFor`, each with its interval. */
export interface InverseReport {
  y: number;
  /** a joint fit (models[].shared): the group whose curve is read */
  group?: string;
  roots: { x: number; interval: [number | null, number | null] }[];
  extrapolated: boolean;
  /** [a, b] where the curve equals y over a whole stretch of x (no single root there) */
  flat?: [number, number];
  /** crossings found beyond the first LIMITS.rootsPerValue listed in roots */
  moreRoots?: number;
}

/**
 * data.y is log10, log/ln or sqrt of one column: the predictions and band on that column's scale, by the inverse
 * transform with each interval end mapped (docs/calibration.md "Original scale").
 */
export interface OriginalScaleReport {
  /** the column data.y transforms */
  column: string;
  transform: 'log10' | 'log' | 'sqrt';
  /** what the numbers are, in words */
  note: string;
  predictions: { x: number | Record<string, number>; y: number | null; ci: [number, number] | null; pi: [number, number] | null }[];
  band: { x: number[]; fit: number[]; ciLow: number[]; ciHigh: number[]; piLow: number[]; piHigh: number[] } | null;
}

/** Everything known about one fitted model: how the solver ended, parameters, statistics, diagnostics and problems. */
export interface ModelReport {
  name: string;
  /** with data.groupBy: the id of the group this fit belongs to; null for a joint fit of all groups (shared) */
  group?: string | null;
  /** a joint fit of all groups: the parameters common to all groups (the others are keyed name[<id>]) */
  shared?: string[];
  kind: 'builtin' | 'polynomial' | 'formula';
  /** the formula as fitted, in the formula language */
  formula: string;
  /** linear in its parameters (solved directly) */
  linear: boolean;
  status: 'converged' | 'failed';
  termination: Termination;
  iterations: number;
  /** starting values actually used, and where they came from */
  start?: { values: Record<string, number>; source: 'spec' | 'self-start' | 'multi-start' | 'linear' };
  paramOrder: string[];
  params: Record<string, ParamReport>;
  /** in paramOrder; null where undefined (singular fit) */
  covariance: (number | null)[][] | null;
  correlation: (number | null)[][] | null;
  stats: FitStats;
  residualTests: ResidualTests | null;
  points?: PointsReport;
  pointsOmitted?: boolean;
  /** the band was left out of the results file (outputPoints "sidecar" or "omit") */
  bandOmitted?: boolean;
  band: BandReport | null;
  predictions: PredictionReport[];
  inverse: InverseReport[];
  /** when data.y is a transform of a column: predictions and band on the column's own scale */
  originalScale?: OriginalScaleReport;
  problems: Problem[];
  /** with models[].loss other than "squares": the robust fit's loss, scale and weights (docs/robust.md) */
  robust?: RobustReport;
  /** with data.sigma a variance function: the scheme, θ and how it was found (docs/robust.md) */
  variance?: VarianceReport;
  /** with data.sigmaX: the errors-in-x (orthogonal distance) fit (docs/robust.md) */
  errorsInX?: ErrorsInXReport;
}

/** Weights from a variance function σ ∝ |fitted|^θ (data.sigma { "power": … }), fitted by iterative reweighting. */
export interface VarianceReport {
  scheme: 'power';
  /** the power θ used: σ_i ∝ |μ̂_i|^θ, weights |μ̂_i|^(−2θ) (normalised to mean 1, in points.weight) */
  theta: number;
  /** θ estimated from the replicates (data.sigma.power "estimate"), or given */
  estimated: boolean;
  /** replicate groups (x values measured two or more times) that informed θ, or that exist when θ is given */
  replicateGroups: number;
  /** weighted refits */
  iterations: number;
  converged: boolean;
}

/**
 * An errors-in-x fit: min Σ w_y (y − f(x+δ))² + w_x δ² over the parameters and every δ. stats.sse is that sum;
 * points.residual is the orthogonal residual in units of y, e·(1 + w_y f′²/w_x), whose weighted squares add to it.
 */
export interface ErrorsInXReport {
  /** deming: a straight line with constant σ_x and σ_y (closed form, then confirmed by the general solve); odr: the general orthogonal-distance fit */
  method: 'deming' | 'odr';
  /** data.sigmaX as written */
  sigmaX: string;
  /** Deming's λ = σ_y²/σ_x², null for odr */
  lambda: number | null;
  /** Σ w_y (y − f(x+δ))² + w_x δ² at the solution (= stats.sse) */
  objective: number;
  /** solver iterations over the parameters (the shifts δ eliminated) */
  iterations: number;
  /** the largest |δ|, the shift of an x value, in units of x */
  maxShift: number;
}

/** A robust-loss fit (models[].loss): iteratively reweighted least squares, standard errors by the sandwich. */
export interface RobustReport {
  loss: 'huber' | 'soft_l1' | 'cauchy';
  /** tuning constant c: the loss turns from quadratic at |r| = c·scale */
  tuning: number;
  /** robust scale s of the weighted residuals (1.4826·MAD), null when lossScale gave the threshold */
  scale: number | null;
  /** where the scale comes from: mad (of the least-squares residuals, or re-estimated with lossScale "mad-iterated"), mean-abs (MAD was 0), exact (all residuals 0), spec (lossScale a number) */
  scaleSource: 'mad' | 'mean-abs' | 'exact' | 'spec';
  /** the residual size t = c·s where the loss turns from quadratic (SciPy's f_scale) */
  threshold: number;
  /** weighted least-squares refits of the reweighting */
  iterations: number;
  converged: boolean;
  /** Σ t²·ρ((r/t)²) at the solution */
  objective: number;
  /** loss weights: smallest, median, the cut below which a row counts as down-weighted, and how many are below it */
  weights: { min: number; median: number; below: number; downWeighted: number };
  /** data rows with a loss weight below weights.below */
  downWeightedRows: number[];
}

/** The models ranked by AICc (Akaike weights), F-tests between nested pairs, and the pick with its reason. */
export interface ComparisonReport {
  ranking: { name: string; aicc: number | null; deltaAicc: number | null; weight: number | null; cvRmse: number | null }[];
  /**
   * nested pairs: the extra-sum-of-squares F-test, or with known σ (sigmaMode "absolute") the χ² difference test
   * (test: "chi2", chi2 = Δχ², p from χ²(df1); F = Δχ²/df1)
   */
  fTests: { simpler: string; richer: string; F: number; df1: number; df2: number; p: number; test?: 'chi2'; chi2?: number }[];
  best: string | null;
  reason: string;
  /** with data.groupBy: the usual comparison within each group, by group id */
  byGroup?: Record<string, GroupComparison>;
  /** with models[].shared: each joint fit against the separate fits of the same model */
  sharing?: SharingTest[];
}

/** Extra-sum-of-squares F-test of a joint fit (shared parameters) against the separate fits of the same model. */
export interface SharingTest {
  model: string;
  /** the spec model fitted separately per group it is tested against, or null when fitted internally for the test */
  separate: string | null;
  shared: string[];
  F: number | null;
  df1: number;
  df2: number;
  p: number | null;
  aiccShared: number | null;
  /** from the separate fits' pooled SSE and total parameter count (see docs/fitspec.md) */
  aiccSeparate: number | null;
  verdict: string;
}

/** The comparison of the models within one group. */
export interface GroupComparison {
  ranking: ComparisonReport['ranking'];
  fTests: ComparisonReport['fTests'];
  best: string | null;
  reason: string;
}

/** One group of data.groupBy: its id (values joined by '/'), the value of each groupBy column, rows read and used. */
export interface GroupReport {
  id: string;
  key: Record<string, string>;
  /** data rows of the group that passed data.where and data.exclude */
  rows: number;
  /** rows fitted (after dropping rows with values that are not finite) */
  used: number;
}

/** What was read from the data file: rows read, used, dropped (bad cells) and excluded (by the spec), and the ranges. */
export interface DataReport {
  file: string;
  rows: number;
  used: number;
  dropped: { row: number; line: number; column: string; reason: string }[];
  /** number of rows dropped for bad cells, when `dropped` lists only the first of them */
  droppedTotal?: number;
  excluded: { row: number; reason: string }[];
  /** rows left out by `where` */
  filtered?: number;
  range: { x: Record<string, [number, number]> | [number, number]; y: [number, number] };
  /** Pearson r of y with each x variable */
  correlation: Record<string, number | null>;
  /** what each plotted quantity is, as the spec wrote it (column or expression), for axis titles */
  labels?: { x: Record<string, string>; y: string };
}

/** One `expect` entry of the spec checked against the fitted value (`ok` false fails `check`). */
export interface ExpectResult {
  model: string;
  /** with data.groupBy: the group checked */
  group?: string;
  param: string;
  value: number;
  tol?: number;
  rel?: number;
  actual: number | null;
  ok: boolean;
}

/** Something about one read-out worth a look: a stable kind (docs/calibration.md) and the words. */
export interface ReadoutFlag {
  kind:
    | 'above-curve'
    | 'below-curve'
    | 'above-range'
    | 'below-range'
    | 'open-interval'
    | 'no-interval'
    | 'several-roots'
    | 'below-lod'
    | 'below-loq';
  message: string;
}

/** One sample (id and dilution) read off the curve: the mean of its m readings back-calculated, with its interval. */
export interface UnknownReport {
  id: string;
  /** 1-based data rows of its readings in the file */
  rows: number[];
  /** readings averaged */
  m: number;
  /** the readings, on the scale of data.y */
  y: number[];
  meanY: number;
  /** standard deviation of the readings (null for one reading) */
  sdY: number | null;
  /** the back-calculated x of the mean reading (in the measured solution), null when there is none */
  x: number | null;
  /** when data.x is log10, log/ln or sqrt of a column: x and its interval on that column's scale (value uses it) */
  xOriginal?: { column: string; transform: 'log10' | 'log' | 'sqrt'; x: number | null; interval: [number | null, number | null] | null };
  /** interval of x for the mean of m readings (the prediction variance uses σ²/m); an end that does not exist is null */
  interval: [number | null, number | null] | null;
  dilution: number;
  /** x × dilution (x on the original scale when data.x is transformed), the value in the original sample */
  value: number | null;
  valueInterval: [number | null, number | null] | null;
  flags: ReadoutFlag[];
}

/** spec.unknowns read off one model. */
export interface UnknownsReport {
  model: string;
  /** why this model: named in the spec, the best by the comparison, or the only converged one */
  modelFrom: 'spec' | 'best' | 'only';
  file: string;
  /** the CSV file written beside the results (spec unknowns.output), relative to the spec */
  output?: string;
  results: UnknownReport[];
}

/** A spiked control: the unknown's read-out with its nominal value, recovery % and its interval, and pass/fail. */
export interface ControlReport extends UnknownReport {
  nominal: number;
  /** 100 · value / nominal */
  recovery: number | null;
  recoveryInterval: [number | null, number | null] | null;
  /** recovery within controls.accept; null without accept or without a value */
  pass: boolean | null;
}

/** One standard level back-calculated from the mean of its readings: recovery against its nominal x. */
export interface StandardRecovery {
  x: number;
  m: number;
  meanY: number;
  back: number | null;
  interval: [number | null, number | null] | null;
  /** 100 · back / x (null at x = 0) */
  recovery: number | null;
  pass: boolean | null;
}

export interface ControlsReport {
  model: string;
  modelFrom: 'spec' | 'best' | 'only';
  file: string | null;
  accept: [number, number] | null;
  acceptStandards: [number, number] | null;
  results: ControlReport[];
  standards: StandardRecovery[];
  /** every control with a pass/fail passed (null without accept or without controls) */
  pass: boolean | null;
}

/** Limits of detection and quantitation, with the convention each follows. */
export interface LimitsReport {
  model: string;
  modelFrom: 'spec' | 'best' | 'only';
  /** σ used and where it came from: the fit's residual SD, or the SD of n blank readings */
  sigma: { from: 'residual' | 'blanks'; value: number | null; n: number };
  /** the blank: its x and its response (the fitted value at x, or the mean of the blank readings) */
  blank: { x: number; y: number | null };
  /**
   * "ich-line": LOD = 3.3·σ/|slope|, LOQ = 10·σ/|slope| (a straight line); "response": the x where the curve
   * reaches the blank's response ± 3.3·σ and ± 10·σ (a curve)
   */
  convention: 'ich-line' | 'response';
  lod: number | null;
  loq: number | null;
  /**
   * Hubaux–Vos detection limit: the decision level yC (the upper prediction limit of the blank) and the smallest x whose
   * lower prediction limit reaches it
   */
  detection: { decisionY: number | null; x: number | null };
  /** the conventions and the caution, in words */
  note: string;
}

/** spec.potency: relative potency of each test group against the reference, and parallelism by equivalence. */
export interface PotencyReport {
  /** the joint model the potency comes from */
  model: string;
  /** the separate fits the parallelism check uses (the same model without shared), or null when the spec has none */
  separate: string | null;
  reference: string;
  confidence: number;
  /** how the interval of a ratio is computed: Fieller's theorem */
  method: 'fieller';
  results: {
    test: string;
    /** midpoint[reference] / midpoint[test]: above 1, the test group is more potent (needs less) */
    ratio: number | null;
    /** Fieller interval at the spec's confidence; null ends when unbounded */
    interval: [number | null, number | null] | null;
    /** the midpoints (ec50 or xc) of the reference and the test group in the joint fit */
    reference: number;
    testValue: number;
    /** equivalence of slopes and spans from the separate fits; null without them */
    parallelism: {
      /** level of the intervals: 2·confidence − 1 (two one-sided tests) */
      level: number;
      slopeRatio: { value: number; interval: [number | null, number | null] };
      spanRatio: { value: number; interval: [number | null, number | null] };
      /** both intervals within the margins / one outside / neither; null without potency.margin */
      verdict: 'equivalent' | 'not-equivalent' | 'inconclusive' | null;
    } | null;
  }[];
  /** the method, the margins and which test to read, in words */
  note: string;
}

/** What the results depend on: engine version, hashes of the spec and the data, and the random seed. */
export interface ReportMeta {
  /** ENGINE_VERSION */
  engine: string;
  /** hash of the spec's content and of the data file's bytes: `check` reports results older than either as stale */
  specHash: string;
  dataHash: string;
  /** with unknowns/controls files: the hash of their bytes (several files: of their hashes), so `check` sees them change */
  readingsHash?: string;
  /** seed of the engine's random draws (the same for every run, so results do not depend on the machine) */
  seed: number;
}

/** One reason `check` fails a spec (or a warning it does not count), placed for CI annotations. */
export interface CheckReason {
  /** problem code, or one of check's own: not-converged, expect-not-met, stale-results, output-failed, spec-error */
  code: ProblemCode;
  severity: 'error' | 'warning';
  /** for the user: what is wrong and the fix */
  message: string;
  /** the file it belongs to, relative to the current directory (the spec, or a data file) */
  file: string;
  /** 1-based line and column in that file, when known */
  line?: number;
  column?: number;
  /** where in the spec, when it belongs to a key */
  path?: JsonPath;
}

/** The verdict `check --json` adds to each line (never written to results files). */
export interface CheckVerdict {
  ok: boolean;
  /** the spec's path relative to the current directory, with forward slashes */
  spec: string;
  /** with --strict, warnings count as failures (they are then in reasons) */
  strict: boolean;
  /** what fails the spec; empty when ok */
  reasons: CheckReason[];
  /** warnings not counted (without --strict) */
  warnings: CheckReason[];
  /** "K/N" when run with --shard */
  shard?: string;
}

/** The results of one spec: the contract between the engine, the results file, the panel, the report and the CLI. */
export interface FitReport {
  /** format version of this object; a change that breaks readers raises it */
  version: 1;
  /** spec file name as given (relative path) */
  spec: string;
  title?: string;
  /** the spec's plot block as checked, only when the spec has one */
  plot?: PlotSpec;
  meta: ReportMeta;
  data: DataReport;
  /** with data.groupBy: the groups, in order of first appearance in the file */
  groups?: GroupReport[];
  models: ModelReport[];
  comparison: ComparisonReport | null;
  /** the best model overall; null with data.groupBy (see comparison.byGroup[id].best) */
  best: string | null;
  /** problems of the spec and the data (each model's are in its own ModelReport) */
  problems: Problem[];
  expect: ExpectResult[];
  /** with spec.derived: each derived quantity for each model (and group) that has its parameters */
  derived?: DerivedReport[];
  /** with spec.unknowns: every unknown sample read off the curve */
  unknowns?: UnknownsReport;
  /** with spec.controls: spiked controls' and standards' recovery */
  controls?: ControlsReport;
  /** with spec.limits: limits of detection and quantitation */
  limits?: LimitsReport;
  /** with spec.potency: relative potency and parallelism */
  potency?: PotencyReport;
  /** confidence level of every interval */
  confidence: number;
  /** the sidecar file holding every model's points and band (outputPoints "sidecar"), relative to this file */
  pointsFile?: string;
  /** only in `check --json` output */
  check?: CheckVerdict;
}

/** The results of a spec that could not be fitted at all (unreadable spec or data): what failed and where. */
export interface ErrorReport {
  version: 1;
  spec: string;
  error: { message: string; path?: JsonPath; location?: FileLocation; problems?: Problem[] };
  /** only in `check --json` output */
  check?: CheckVerdict;
}

/** What running a spec produces: a FitReport, or an ErrorReport when nothing could be fitted. */
export type RunResult = FitReport | ErrorReport;

/**
 * The separate fits of one group of a spec with data.groupBy (not part of a FitReport): what a worker of the CLI
 * pool sends back for the groups it fitted (run.ts runSpecGroups); structured-clone safe.
 */
export interface GroupFit {
  models: ModelReport[];
  /** separate fits of models with `shared`: the starts and baseline of the joint fit, not reported */
  hidden: { index: number; report: ModelReport }[];
  comparison: GroupComparison;
  /** problems of the run found while fitting this group (a comparison that failed) */
  problems: Problem[];
}

/** True when the run produced no fit (narrows a RunResult). */
export function isErrorReport(r: RunResult): r is ErrorReport {
  return (r as ErrorReport).error !== undefined;
}

/** Written into every results file's meta.engine. */
export const ENGINE_VERSION = 'curvewright 0.1.0';

// Input types of the statistics layer (analyzeModel / compareModels); the run layer builds these from a BuiltModel + data + SolveResult.
import type { Thresholds } from '../report';
import type { CompiledFormula } from '../formula/types';
import type { SolveResult } from '../solve/types';

export type StartSource = 'spec' | 'self-start' | 'multi-start' | 'linear';

/** Everything analyzeModel needs about one fitted model. All arrays are over the rows used in the fit. */
export interface ModelAnalysisInput {
  /** index of the model in spec.models (used in JSON paths of problems: ['models', index, ...]) */
  index: number;
  name: string;
  kind: 'builtin' | 'polynomial' | 'formula';
  /** the formula as fitted, in the formula language */
  formula: string;
  /** catalogue id when kind = 'builtin' */
  builtin?: string;
  /** degree when kind = 'polynomial' */
  degree?: number;
  compiled: CompiledFormula;
  /** parameter names in order (= compiled.params) */
  params: string[];
  /** box bounds per parameter, ±Infinity for none */
  lower: ArrayLike<number>;
  upper: ArrayLike<number>;
  /** fixed[j]: θ_j held at its start value */
  fixed: boolean[];
  /** linear in its parameters (solved directly) */
  linear: boolean;
  /** x variable names (in compiled.variables order) */
  variables: string[];
  /** X[v][i]: value of variable v at row i */
  X: Float64Array[];
  y: Float64Array;
  /** weights 1/σ², or null for unweighted */
  w: Float64Array | null;
  /** 1-based data row of each point */
  rows: Int32Array | ArrayLike<number>;
  /** 'relative' (default): covariance scaled by s²; 'absolute': σ are known, covariance unscaled, χ² test reported */
  sigmaMode: 'relative' | 'absolute';
  /** the solver's answer for the full data */
  result: SolveResult;
  /** start values actually used, and where they came from (reported as ModelReport.start) */
  startValues?: ArrayLike<number>;
  startSource?: StartSource;
  /** level of every interval, e.g. 0.95 */
  confidence: number;
  /** x values to predict at (numbers for one variable, objects for several) */
  predict: (number | Record<string, number>)[];
  /** y values to invert the curve at */
  solveFor: number[];
  /** data.count: identical observations per row (w then includes it: w = count × precision weight), or null */
  count?: Float64Array | null;
  /** with count: the precision weights alone (1/σ² or data.weight), or null when none were given */
  precision?: Float64Array | null;
  /** weight of a new observation in prediction intervals (spec predictWeight); absent: nearest observed x's weight */
  predictWeight?: number;
  /** effective thresholds (DEFAULT_THRESHOLDS merged with the spec's overrides; see resolveThresholds) */
  thresholds: Thresholds;
  /** options for refits (profile likelihood, cross-validation) */
  solverOptions?: { maxIterations?: number; seconds?: number };
  /** polled during refits; when true, profiling and CV stop early (their results become null) */
  shouldStop?: () => boolean;
  /** analysis switches (all default true); for tests and the CLI's fast paths */
  options?: AnalysisOptions;
  /**
   * a joint fit (models[].shared): the group ids in order and the model's own x variables; the last column of X holds
   * each row's group number, and predictions and inverse predictions are made for every group
   */
  jointGroups?: { ids: string[]; variables: string[] };
}

export interface AnalysisOptions {
  /** profile-likelihood intervals (nonlinear models only; for linear models they equal Wald exactly) */
  profile?: boolean;
  /** wall-clock guard of profiling one model, seconds (default DEFAULTS.analysis.profileSeconds) */
  profileSeconds?: number;
  /** k-fold cross-validation */
  crossValidate?: boolean;
  /** wall-clock guard of cross-validating one model, seconds (default DEFAULTS.analysis.cvSeconds) */
  cvSeconds?: number;
  /** number of points of the plotting band (default 200) */
  bandPoints?: number;
}

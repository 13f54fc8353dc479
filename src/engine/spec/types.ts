// The checked, defaulted form of a fit spec that everything after validation reads.
import type { DataSpec, VarianceSpec, ExcludeSpec, FitSpec, ModelSpec, ParamSpec, SolverSpec, Thresholds } from '../report';

export interface NormalizedData extends DataSpec {
  /** absolute path of the CSV file (resolved against the spec file's folder) */
  file: string;
  /** data.file exactly as written in the spec */
  fileGiven: string;
  /** variable name -> column or expression; a string `x` in the spec becomes { x: "..." } */
  x: Record<string, string>;
  sigmaMode: 'relative' | 'absolute';
  exclude: ExcludeSpec[];
  delimiter: 'auto' | ',' | ';' | '\t';
  decimal: '.' | ',';
  badRows: 'drop' | 'fail';
  /** data.sigma as σ values (a column or expression); a variance function is in `variance` instead */
  sigma?: string;
  /** data.sigma as a variance function { power: θ | "estimate" } */
  variance?: VarianceSpec;
  /** data.groupBy as a list of columns (absent without groups) */
  groupBy?: string[];
}

export interface NormalizedModel extends ModelSpec {
  /** which of builtin / polynomial / formula the model uses */
  kind: 'builtin' | 'polynomial' | 'formula';
  /** position in the spec's models array (for JSON paths) */
  index: number;
  /**
   * per-parameter settings, only when the spec gives `params` (for a formula, a missing params means every
   * non-variable name is a parameter, while {} would declare none)
   */
  params?: Record<string, ParamSpec>;
  solver: Required<SolverSpec>;
  /** a robust loss (absent for least squares: "squares" is normalised away) */
  loss?: 'huber' | 'soft_l1' | 'cauchy';
}

export interface NormalizedSpec extends Omit<FitSpec, 'unknowns' | 'controls' | 'limits' | 'potency'> {
  /** absolute path of the spec file */
  specFile: string;
  /** the spec file name as given to validateSpec */
  specGiven: string;
  title?: string;
  data: NormalizedData;
  models: NormalizedModel[];
  confidence: number;
  predict: (number | Record<string, number>)[];
  solveFor: number[];
  /** weight of a new observation in prediction intervals; absent: the weight of the nearest observed x */
  predictWeight?: number;
  /** absolute path of the results file, when `output` is set */
  output?: string;
  /** output exactly as written in the spec */
  outputGiven?: string;
  expect: Record<string, Record<string, { value: number; tol: number } | { value: number; rel: number }>>;
  thresholds: Partial<Thresholds>;
  unknowns?: NormalizedReadings & { output?: string; outputGiven?: string };
  controls?: NormalizedReadings & { nominal: string; accept: [number, number] | null; acceptStandards: [number, number] | null; fromUnknowns: boolean };
  limits?: { sigma: 'residual' | 'blanks'; blanks?: string; model?: string };
  potency?: { model?: string; reference: string; test?: string[]; margin: { slope: [number, number]; span: [number, number] } | null };
}

/** A file of readings to read off the curve (unknowns, controls), its paths resolved. */
export interface NormalizedReadings {
  /** absolute path; null for controls without a file of their own (only the standards' recovery) */
  file: string | null;
  fileGiven: string | null;
  id: string;
  /** expression of the reading (default data.y) */
  y: string;
  dilution?: string;
  model?: string;
  /** the spec key the block came from, for messages and paths */
  key: 'unknowns' | 'controls';
}

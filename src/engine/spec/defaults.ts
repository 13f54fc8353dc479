// Defaults of every optional fit-spec key, in one constant. schema/fitspec.schema.json repeats them as "default"
// values and test/unit/schema.test.ts keeps the two equal.

export const DEFAULTS = {
  confidence: 0.95,
  outputPoints: 'inline',
  data: {
    delimiter: 'auto',
    decimal: '.',
    badRows: 'drop',
    sigmaMode: 'relative',
  },
  solver: {
    /** Levenberg–Marquardt iterations of one start */
    maxIterations: 500,
    /** number of starts of the generic multi-start search (formulas without start values) */
    multiStart: 20,
    /** wall-clock budget of one model fit, seconds */
    seconds: 20,
  },
} as const;

/** Names of the problem-detection thresholds a spec may override (keys of Thresholds in report.ts). */
export const THRESHOLD_KEYS = [
  'paramCorrelation',
  'relativeSe',
  'cvRatio',
  'minDof',
  'paramsPerPoint',
  'runsP',
  'normalityP',
  'cooksFactor',
  'linearHint',
  'fTestAlpha',
] as const;

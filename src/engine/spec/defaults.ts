// Defaults of every optional fit-spec key and of the budgets that bound the work of a run, in one constant: the spec
// validator, the solvers (lm, linear, multi-start, fitModel), the analysis and run layers read them from here;
// schema/fitspec.schema.json repeats them as "default" values (test/unit/schema.test.ts) and docs/fitspec.md and
// docs/problems.md state them (test/unit/defaults-docs.test.ts keeps the figures equal).

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
    /**
     * Levenberg–Marquardt iterations of one start. 2000 so that every NIST StRD problem converges from both certified
     * starts with no `solver` key (the slowest, Bennett5 from Start 1, needs about 750; MGH17 Start 1 about 500); the
     * cap is a count of work, so where a fit stops never depends on the machine's speed.
     */
    maxIterations: 2000,
    /** number of starts of the generic multi-start search (formulas without start values) */
    multiStart: 20,
    /**
     * wall-clock guard of one model fit, seconds: it only stops a runaway fit (termination `time-limit`, reported as a
     * problem); the work counts above bound every fit that finishes
     */
    seconds: 20,
  },
  /** budgets of the analysis of one fitted model (profile-likelihood intervals and cross-validation) */
  analysis: {
    /** Levenberg–Marquardt iterations of each constrained refit while profiling (a count of work) */
    profileIterations: 200,
    /** Gauss–Newton steps of one profile point by continuation before it falls back to a Levenberg–Marquardt refit */
    profileSteps: 10,
    /** profile points (τ evaluations) per side of one parameter: the walk outwards and the root search together */
    profilePoints: 40,
    /** Levenberg–Marquardt iterations of each cross-validation refit (a count of work) */
    cvIterations: 8,
    /**
     * work budget of profiling a joint fit (models[].shared), in model evaluations × rows: with many groups it bounds
     * the profile by work, not time, so the report does not depend on the machine (problem `profile-incomplete`)
     */
    jointProfileWork: 20_000_000,
    /** wall-clock guard of profiling one model, seconds: stops only a runaway profile (problem `profile-incomplete`) */
    profileSeconds: 10,
    /** wall-clock guard of cross-validating one model, seconds: stops only a runaway run (problem `cv-incomplete`) */
    cvSeconds: 10,
    /** points of the plotted confidence/prediction band */
    bandPoints: 200,
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
  'lossWeight',
] as const;

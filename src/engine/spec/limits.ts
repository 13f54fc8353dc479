// Size limits of a fit spec, in one place (docs/fitspec.md "Limits" lists them). Each keeps the work a spec can ask
// for bounded, so a spec from an unknown repository fails fast with a clear message instead of running for minutes
// or overflowing the stack. The figures are our own choice (common practice: far above any real spec, far below
// what exhausts memory or time).

export const LIMITS = {
  /** deepest nesting of [ ] and { } in the spec text */
  jsonDepth: 64,
  /** models in one spec */
  models: 100,
  /** fitted parameters of one model (a formula's exact Jacobian grows with their square) */
  params: 200,
  /** entries of `predict` */
  predict: 1000,
  /** entries of `solveFor` */
  solveFor: 100,
  /** x values reported for one `solveFor` value; more crossings are summarised in a note */
  rootsPerValue: 10,
} as const;

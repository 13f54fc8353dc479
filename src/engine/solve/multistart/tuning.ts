// The multi-start search's constants, in one frozen object (common practice; the figures were tuned on the NIST
// StRD problems without starting values, test/reference/nist-nostart.test.ts). A leaf of the multistart folder.

/** Search constants (one place, frozen: the search reads them, nothing changes them). */
export const TUNING: Readonly<{
  /** share of candidates of an unbounded parameter drawn over the x range (location-like parameters) */
  locationShare: number;
  /** default number of short local runs */
  localRuns: number;
  /** iteration cap of one short local run */
  localIterations: number;
  /** the search rejects points whose linear terms sum (in norm) to more than this multiple of the fit */
  cancellation: number;
  /** cap on screened candidates */
  maxCandidates: number;
  /** differential-evolution population per sampled parameter */
  dePopulation: number;
  /** generations of differential evolution on the projected SSE (0: none) */
  deGenerations: number;
  /** candidates screened per redrawn subset in a hop */
  hopSamples: number;
  /** rounds of coordinate-resampling basin hopping, and local runs per round */
  hopRounds: number;
  hopRuns: number;
}> = Object.freeze({ locationShare: 0.4, localRuns: 8, localIterations: 100, hopRounds: 4, hopRuns: 24, hopSamples: 400, deGenerations: 150, cancellation: 1e3, maxCandidates: 4096, dePopulation: 10 });

/** The exponent range of the broad magnitude draws: ±10^[LOG_LO, LOG_HI]. */
export const LOG_LO = -6;
export const LOG_HI = 6;

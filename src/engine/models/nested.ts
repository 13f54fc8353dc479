// Nested model pairs for the extra-sum-of-squares F-test: the richer model with some parameters held at fixed values
// equals the simpler one at every x (DESIGN.md "Nested pairs"; each pair checked numerically in test/unit/models.test.ts).

export interface NestedPair {
  /** id of the simpler model (a built-in id, or "polynomial:k") */
  simpler: string;
  /** id of the richer model */
  richer: string;
  /** richer-model parameters and the values that reduce it to the simpler one */
  fix: Record<string, number>;
  /** simpler-model parameter → richer-model parameter of the same meaning, where the names differ */
  rename?: Record<string, string>;
  /** richer-model parameters that are a function of the simpler model's (a reparametrisation), where needed */
  map?: Record<string, (simpler: Record<string, number>) => number>;
}

/**
 * Built-in nested pairs. `linear` = `polynomial:1` (intercept ↔ c0, slope ↔ c1) is an identity, not a nesting: the
 * comparison code treats a pair with an empty `fix` as "the same model".
 */
export const NESTED: NestedPair[] = [
  { simpler: 'exponential', richer: 'exponential_offset', fix: { C: 0 } },
  { simpler: 'logistic3', richer: 'richards', fix: { nu: 1 } },
  { simpler: 'logistic4', richer: 'logistic5', fix: { asym: 1 }, rename: { ec50: 'xc' } },
  { simpler: 'linear', richer: 'polynomial:1', fix: {}, rename: { intercept: 'c0', slope: 'c1' } },
  // Vmax*x^1/(K^1 + x^1) = Vmax*x/(K + x)
  { simpler: 'michaelis_menten', richer: 'hill', fix: { n: 1 }, rename: { Km: 'K' } },
  // upper - (upper - y0)*exp(-(x/scale)^1) is the asymptotic model with k = 1/scale: nested for k > 0 (scale ≥ 0).
  { simpler: 'asymptotic', richer: 'weibull_growth', fix: { shape: 1 }, map: { scale: (p) => 1 / p.k } },
];

/** The pair (simpler, richer) if the two ids are nested either way round, else undefined. */
export function nestedPair(a: string, b: string): NestedPair | undefined {
  return NESTED.find((p) => (p.simpler === a && p.richer === b) || (p.simpler === b && p.richer === a));
}

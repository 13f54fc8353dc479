// Gaussian log-likelihood and information criteria with σ counted as a parameter (R's logLik.lm / AIC / BIC
// convention): logLik = ½(Σ log w − n(log 2π + 1 − log n + log Σ w e²)), k = p_free + 1; with known σ_i (sigmaMode
// "absolute", w = 1/σ²) the known-σ likelihood logLik = ½(Σ log w − n log 2π − Σ w e²), k = p_free; Akaike weights.

export interface InformationCriteria {
  logLik: number | null;
  aic: number | null;
  aicc: number | null;
  bic: number | null;
  /** number of estimated parameters counted (free parameters + σ) */
  k: number;
}

/**
 * @param sse weighted residual sum of squares Σ w e² over the rows with w > 0
 * @param n number of rows with w > 0
 * @param pFree number of free (estimated) parameters
 * @param sumLogW Σ log w over those rows (0 when unweighted)
 */
export function informationCriteria(sse: number, n: number, pFree: number, sumLogW = 0): InformationCriteria {
  const k = pFree + 1;
  if (!(n > 0) || !(sse > 0) || !Number.isFinite(sse)) return { logLik: null, aic: null, aicc: null, bic: null, k };
  const logLik = 0.5 * (sumLogW - n * (Math.log(2 * Math.PI) + 1 - Math.log(n) + Math.log(sse)));
  const aic = -2 * logLik + 2 * k;
  const bic = -2 * logLik + k * Math.log(n);
  const aicc = n - k - 1 > 0 ? aic + (2 * k * (k + 1)) / (n - k - 1) : null;
  return { logLik, aic, aicc, bic, k };
}

/** Δ_i = AICc_i − min AICc and Akaike weights exp(−Δ_i/2)/Σ exp(−Δ_j/2); null entries stay null. */
/**
 * Known-σ version (sigmaMode "absolute"): every σ_i is given, so none is estimated and k = p_free; equals
 * Σ log φ(e_i; 0, σ_i), R's sum(dnorm(y, fitted, sigma, log = TRUE)).
 * @param chi2 Σ w e² with w = 1/σ²
 */
export function informationCriteriaKnownSigma(chi2: number, n: number, pFree: number, sumLogW: number): InformationCriteria {
  const k = pFree;
  if (!(n > 0) || !Number.isFinite(chi2) || !Number.isFinite(sumLogW)) return { logLik: null, aic: null, aicc: null, bic: null, k };
  const logLik = 0.5 * (sumLogW - n * Math.log(2 * Math.PI) - chi2);
  const aic = -2 * logLik + 2 * k;
  const bic = -2 * logLik + k * Math.log(n);
  const aicc = n - k - 1 > 0 ? aic + (2 * k * (k + 1)) / (n - k - 1) : null;
  return { logLik, aic, aicc, bic, k };
}

export function akaikeWeights(aicc: (number | null)[]): { delta: (number | null)[]; weight: (number | null)[] } {
  let min = Infinity;
  for (const a of aicc) if (a !== null && Number.isFinite(a) && a < min) min = a;
  const delta = aicc.map((a) => (a !== null && Number.isFinite(a) ? a - min : null));
  let sum = 0;
  for (const d of delta) if (d !== null) sum += Math.exp(-d / 2);
  const weight = delta.map((d) => (d !== null && sum > 0 ? Math.exp(-d / 2) / sum : null));
  return { delta, weight };
}

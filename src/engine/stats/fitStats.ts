// Fit statistics of one model (docs/problems.md "How the numbers are computed"): R² (uncentred, the NIST convention,
// for a linear model whose columns span no constant), adjusted R², χ² and its p-value with known σ, and logLik,
// AIC, AICc, BIC after R's conventions (information.ts).
import type { FitStats } from '../report';
import { hasConstantColumn } from './analysisData';
import { chi2Sf } from './distributions';
import { informationCriteria, informationCriteriaKnownSigma } from './information';

/** What the fit statistics read: the data, weights (with data.count), the Jacobian and the fit's SSE and dof. */
export interface FitStatsInput {
  y: ArrayLike<number>;
  /** weights including the counts, or null */
  w: ArrayLike<number> | null | undefined;
  count: ArrayLike<number> | null;
  /** the precision weight of one observation, or null */
  wPrec: ArrayLike<number> | null;
  weighted: boolean;
  /** sigmaMode "absolute" with data.sigma */
  absolute: boolean;
  linear: boolean;
  J: Float64Array;
  n: number;
  p: number;
  free: boolean[];
  sse: number;
  dof: number;
  nObs: number;
  pFree: number;
}

/** The statistics that exist before any inference (n, dof, SSE, σ, RMSE); the rest null. */
export function emptyStats(n: number, dof: number, sse: number): FitStats {
  return {
    n, dof, sse,
    sigma: dof > 0 && Number.isFinite(sse) ? Math.sqrt(sse / dof) : null,
    rmse: n > 0 ? Math.sqrt(sse / n) : NaN,
    r2: null, adjR2: null, chi2: null, reducedChi2: null, logLik: null, aic: null, aicc: null, bic: null,
    cvRmse: null, cvFolds: null, cvMethod: null,
  };
}

/** Fills R², adjusted R², χ² and the information criteria of `stats` in place. */
export function fitStatistics(stats: FitStats, k: FitStatsInput): void {
  const { y, w, count, wPrec, weighted, absolute, J, n, p, free, sse, dof, nObs, pFree } = k;
  let sw = 0;
  let swy = 0;
  let swy2 = 0;
  let nPos = 0;
  let sumLogW = 0;
  for (let i = 0; i < n; i++) {
    const wi = w ? w[i] : 1;
    const ci = count ? count[i] : 1;
    sw += wi;
    swy += wi * y[i];
    swy2 += wi * y[i] * y[i];
    if (wi > 0) {
      nPos += ci;
      if (weighted) sumLogW += ci * Math.log(wPrec![i]);
    }
  }
  const uncentred = k.linear && !hasConstantColumn(J, n, p, free);
  const ybar = sw > 0 ? swy / sw : NaN;
  let sst = 0;
  for (let i = 0; i < n; i++) sst += (w ? w[i] : 1) * (y[i] - ybar) ** 2;
  const denom = uncentred ? swy2 : sst;
  if (denom > 0) {
    stats.r2 = 1 - sse / denom;
    if (dof > 0) stats.adjR2 = 1 - ((1 - stats.r2) * (nObs - (uncentred ? 0 : 1))) / dof;
  }
  if (uncentred) stats.r2Uncentred = true;
  if (weighted) {
    stats.chi2 = sse;
    stats.reducedChi2 = dof > 0 ? sse / dof : null;
    stats.chi2P = absolute && dof > 0 ? chi2Sf(sse, dof) : null;
  }
  const ic = absolute ? informationCriteriaKnownSigma(sse, nPos, pFree, sumLogW) : informationCriteria(sse, nPos, pFree, sumLogW);
  stats.logLik = ic.logLik;
  stats.aic = ic.aic;
  stats.aicc = ic.aicc;
  stats.bic = ic.bic;
}

// Public entry of the statistics layer: model analysis, comparison, thresholds, distributions and residual tests.
export type { ModelAnalysisInput, AnalysisOptions, StartSource } from './api';
export { analyzeModel } from './analyze';
export { lsqProblem, hasConstantColumn } from './analysisData';
export { compareModels, extraSumOfSquaresF, nestedRelation, type FTest } from './compare';
export { DEFAULT_THRESHOLDS, resolveThresholds } from './thresholds';
export { dataCorrelation, pearson } from './correlation';
export { informationCriteria, akaikeWeights } from './information';
export { runsTest, durbinWatson, shapiroWilk, dagostinoPearson, normalityTest } from './residualTests';
export { cvFolds, crossValidate } from './crossval';
export { profileIntervals } from './profile';
export { bandGrid, computeBand, computePrediction, computeInverse } from './predict';
export {
  normalCdf, normalSf, normalQuantile, tCdf, tQuantile, tTwoSidedP, fCdf, fSf, fQuantile, chi2Cdf, chi2Sf, chi2Quantile,
  betaInc, betaIncBoth, betaQuantile, gammaIncBoth, gammaQuantile, logGamma, logBeta,
} from './distributions';
export { covarianceFromJacobian, leverage } from './covariance';

// The one table of problem-detection defaults (documented in docs/problems.md), and merging a spec's overrides.
import type { Thresholds } from '../report';

export const DEFAULT_THRESHOLDS: Thresholds = Object.freeze({
  paramCorrelation: 0.99,
  relativeSe: 1,
  cvRatio: 1.5,
  minDof: 2,
  paramsPerPoint: 1 / 3,
  runsP: 0.01,
  normalityP: 0.001,
  cooksFactor: 4,
  linearHint: 0.7,
  fTestAlpha: 0.05,
  lossWeight: 0.25,
}) as Thresholds;

/** DEFAULT_THRESHOLDS with the spec's overrides applied (non-finite or missing overrides are ignored). */
export function resolveThresholds(overrides?: Partial<Thresholds> | null): Thresholds {
  const t: Thresholds = { ...DEFAULT_THRESHOLDS };
  if (overrides) {
    for (const key of Object.keys(DEFAULT_THRESHOLDS) as (keyof Thresholds)[]) {
      const v = overrides[key];
      if (typeof v === 'number' && Number.isFinite(v)) t[key] = v;
    }
  }
  return t;
}

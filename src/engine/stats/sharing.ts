// Extra-sum-of-squares F-test of nested least-squares models (Bates & Watts 1988, §3.5; R's anova.nls): a joint fit
// with shared parameters against the separate fits of the same model; AICc of both with one common σ.

import type { ModelReport, SharingTest } from '../report';
import { fSf } from './distributions';

const free = (r: ModelReport): number => r.stats.n - r.stats.dof;
const fmtP = (p: number): string => (p < 1e-4 ? p.toExponential(1) : p < 0.01 ? p.toPrecision(2) : p.toFixed(3));
const words = (names: string[]): string => (names.length === 1 ? names[0] : `${names.slice(0, -1).join(', ')} and ${names[names.length - 1]}`);

/** AICc of the pooled separate fits from the joint fit's log-likelihood (same rows and weights, one common σ). */
function aiccFrom(joint: ModelReport, sseSep: number, kSep: number, absolute: boolean): number | null {
  const L = joint.stats.logLik;
  const n = joint.stats.n;
  const sseJ = joint.stats.sse;
  if (L === null || !(sseSep > 0) || !(sseJ > 0)) return null;
  const Ls = absolute ? L + (sseJ - sseSep) / 2 : L + (n / 2) * Math.log(sseJ / sseSep);
  const k = absolute ? kSep : kSep + 1;
  return n - k - 1 > 0 ? -2 * Ls + 2 * k + (2 * k * (k + 1)) / (n - k - 1) : null;
}

/**
 * @param joint the joint fit's report (group null)
 * @param separate the separate fit of each group, in the groups' order (null where not fitted)
 */
export function sharingTest(model: string, separateName: string | null, shared: string[], joint: ModelReport, separate: (ModelReport | null)[], absolute: boolean): SharingTest {
  const base = { model, separate: separateName, shared, F: null, df1: 0, df2: 0, p: null, aiccShared: joint.stats.aicc ?? null, aiccSeparate: null };
  const what = words(shared);
  if (joint.status !== 'converged') return { ...base, verdict: `the joint fit did not converge, so whether ${what} can be common to the groups is not tested` };
  const missing = separate.filter(r => !r || r.status !== 'converged').length;
  if (missing > 0)
    return { ...base, verdict: `${missing} group${missing === 1 ? '' : 's'} could not be fitted separately, so the joint fit is not tested against the separate fits` };
  const seps = separate as ModelReport[];
  const sseSep = seps.reduce((a, r) => a + r.stats.sse, 0);
  const pSep = seps.reduce((a, r) => a + free(r), 0);
  const df2 = seps.reduce((a, r) => a + r.stats.dof, 0);
  const df1 = pSep - free(joint);
  const aiccSeparate = aiccFrom(joint, sseSep, pSep, absolute);
  if (!(df1 > 0) || !(df2 > 0) || !(sseSep > 0))
    return { ...base, df1, df2, aiccSeparate, verdict: `no residual degrees of freedom are left beside the separate fits (df1 = ${df1}, df2 = ${df2}), so the F-test cannot be made` };
  const F = Math.max(0, (joint.stats.sse - sseSep) / df1) / (sseSep / df2);
  const p = fSf(F, df1, df2);
  const verdict =
    p < 0.05
      ? `${what} ${shared.length === 1 ? "differs" : "differ"} between groups (p = ${fmtP(p)}): the separate fits describe the data better than one common ${what}`
      : `the data are consistent with one common ${what} across groups (p = ${fmtP(p)})`;
  return { ...base, F, df1, df2, p, aiccSeparate, verdict };
}

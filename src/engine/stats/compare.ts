// Model comparison: ranking by AICc with ΔAICc and Akaike weights (Burnham & Anderson 2002), the extra-sum-of-squares
// F-test F = ((S_s − S_r)/(ν_s − ν_r)) / (S_r/ν_r) for every nested pair found, and the choice of `best` by the rule
// documented in docs/problems.md ("How the best model is chosen").
import type { ComparisonReport, ModelReport, Problem, Thresholds } from '../report';
import type { ModelAnalysisInput } from './api';
import { NESTED } from '../models';
import { chi2Sf, fSf } from './distributions';
import { akaikeWeights } from './information';
import { fmtMessage as fmt } from '../../shared/numberFormat';

export interface NestedRelation {
  simpler: number;
  richer: number;
  /** how the nesting was recognised */
  via: 'polynomial' | 'builtin' | 'fixed';
}

function freeCount(input: ModelAnalysisInput): number {
  return input.fixed.filter((f) => !f).length;
}

/** Fixed parameters and their values, by name (renamed into the richer model's names when `rename` is given). */
function fixedValues(input: ModelAnalysisInput, rename?: Record<string, string>): Map<string, number> {
  const m = new Map<string, number>();
  input.params.forEach((name, j) => {
    if (input.fixed[j]) m.set(rename?.[name] ?? name, input.result.theta[j]);
  });
  return m;
}

/** Polynomial degree of a model, treating the `linear` built-in as degree 1 (intercept ↔ c0, slope ↔ c1). */
function polyDegree(input: ModelAnalysisInput): { degree: number; rename?: Record<string, string> } | null {
  if (input.kind === 'polynomial' && input.degree !== undefined) return { degree: input.degree };
  if (input.kind === 'builtin' && input.builtin === 'linear') return { degree: 1, rename: { intercept: 'c0', slope: 'c1' } };
  return null;
}

function sameFormula(a: ModelAnalysisInput, b: ModelAnalysisInput): boolean {
  const norm = (s: string) => s.replace(/\s+/g, '');
  return norm(a.formula) === norm(b.formula) && a.variables.join(',') === b.variables.join(',') && a.params.join(',') === b.params.join(',');
}

/** Is model s nested in model r (r with some parameters held at values equals s)? */
export function nestedRelation(s: ModelAnalysisInput, r: ModelAnalysisInput, si: number, ri: number): NestedRelation | null {
  if (s.variables.join(',') !== r.variables.join(',')) return null;
  const ds = polyDegree(s);
  const dr = polyDegree(r);
  if (ds && dr) {
    if (ds.degree > dr.degree || freeCount(s) >= freeCount(r)) return null;
    const fs = fixedValues(s, ds.rename);
    const fr = fixedValues(r, dr.rename);
    for (const [name, v] of fr) {
      const k = Number(name.slice(1));
      if (k > ds.degree) {
        if (v !== 0) return null;
      } else if (fs.get(name) !== v) return null;
    }
    return { simpler: si, richer: ri, via: 'polynomial' };
  }
  const id = (m: ModelAnalysisInput) => (m.kind === 'builtin' ? m.builtin : m.kind === 'polynomial' ? `polynomial:${m.degree}` : undefined);
  const is = id(s);
  const ir = id(r);
  if (is && ir) {
    const pair = NESTED.find((q) => q.simpler === is && q.richer === ir && Object.keys(q.fix).length > 0);
    if (pair) {
      const fs = fixedValues(s, pair.rename);
      const fr = fixedValues(r);
      for (const [name, v] of fr) {
        if (pair.fix[name] !== undefined ? pair.fix[name] !== v : fs.get(name) !== v) return null;
      }
      return { simpler: si, richer: ri, via: 'builtin' };
    }
  }
  if (sameFormula(s, r)) {
    const fs = fixedValues(s);
    const fr = fixedValues(r);
    if (fs.size <= fr.size) return null;
    for (const [name, v] of fr) if (fs.get(name) !== v) return null;
    return { simpler: si, richer: ri, via: 'fixed' };
  }
  return null;
}

export interface FTest {
  simpler: string;
  richer: string;
  F: number;
  df1: number;
  df2: number;
  p: number;
  /** 'chi2' when σ is known (sigmaMode "absolute"): the χ² difference test; absent for the F-test */
  test?: 'chi2';
  /** Δχ² of the χ² difference test */
  chi2?: number;
}

/** the test as the messages name it */
function testName(ft: FTest): string {
  return ft.test === 'chi2' ? 'χ² difference test (σ known)' : 'extra-sum-of-squares F-test';
}
function testFigures(ft: FTest, alpha: number): string {
  return ft.test === 'chi2'
    ? `Δχ² = ${fmt(ft.chi2!)}, df = ${ft.df1}, p = ${fmt(ft.p, 3)} ≥ ${alpha}`
    : `F = ${fmt(ft.F)}, df = ${ft.df1}, ${ft.df2}, p = ${fmt(ft.p, 3)} ≥ ${alpha}`;
}

/**
 * With known σ (sigmaMode "absolute"): the χ² difference test Δχ² = χ²_s − χ²_r on ν_s − ν_r degrees of freedom
 * (the likelihood-ratio test of nested Gaussian models with known variances); F is reported as Δχ²/df1, the F
 * statistic's limit as σ is known. Null when undefined.
 */
export function chi2DifferenceTest(chi2S: number, dofS: number, chi2R: number, dofR: number): { F: number; df1: number; df2: number; p: number; test: 'chi2'; chi2: number } | null {
  const df1 = dofS - dofR;
  if (!(df1 > 0) || !Number.isFinite(chi2S) || !Number.isFinite(chi2R)) return null;
  const chi2 = Math.max(0, chi2S - chi2R);
  return { F: chi2 / df1, df1, df2: dofR, p: chi2 === 0 ? 1 : chi2Sf(chi2, df1), test: 'chi2', chi2 };
}

/** Extra-sum-of-squares F-test of a simpler model against a richer one; null when undefined. */
export function extraSumOfSquaresF(sseS: number, dofS: number, sseR: number, dofR: number): { F: number; df1: number; df2: number; p: number } | null {
  const df1 = dofS - dofR;
  if (!(df1 > 0) || !(dofR > 0) || !(sseR > 0) || !Number.isFinite(sseS)) return null;
  const F = Math.max(0, (sseS - sseR) / df1) / (sseR / dofR);
  return { F, df1, df2: dofR, p: F === 0 ? 1 : fSf(F, df1, dofR) };
}

function usable(r: ModelReport): boolean {
  return r.status === 'converged' && r.stats.aicc !== null && Number.isFinite(r.stats.aicc);
}

export function compareModels(inputs: ModelAnalysisInput[], reports: ModelReport[], thresholds: Thresholds): ComparisonReport {
  const m = reports.length;
  const aicc = reports.map((r) => (usable(r) ? r.stats.aicc : null));
  const { delta, weight } = akaikeWeights(aicc);
  const order = reports.map((_, i) => i).sort((a, b) => {
    const da = delta[a];
    const db = delta[b];
    if (da === null && db === null) return a - b;
    if (da === null) return 1;
    if (db === null) return -1;
    return da - db || a - b;
  });
  const ranking = order.map((i) => ({ name: reports[i].name, aicc: aicc[i], deltaAicc: delta[i], weight: weight[i], cvRmse: reports[i].stats.cvRmse }));

  // nested pairs and their F-tests
  const fTests: FTest[] = [];
  const fByPair = new Map<string, FTest>();
  for (let s = 0; s < m; s++) {
    for (let r = 0; r < m; r++) {
      if (s === r || reports[s].status !== 'converged' || reports[r].status !== 'converged') continue;
      if (!nestedRelation(inputs[s], inputs[r], s, r)) continue;
      const knownSigma = inputs[s].sigmaMode === 'absolute' && inputs[s].w !== null;
      const t = knownSigma
        ? chi2DifferenceTest(reports[s].stats.sse, reports[s].stats.dof, reports[r].stats.sse, reports[r].stats.dof)
        : extraSumOfSquaresF(reports[s].stats.sse, reports[s].stats.dof, reports[r].stats.sse, reports[r].stats.dof);
      if (!t) continue;
      const ft: FTest = { simpler: reports[s].name, richer: reports[r].name, ...t };
      fTests.push(ft);
      fByPair.set(`${s}:${r}`, ft);
    }
  }
  const alpha = thresholds.fTestAlpha;

  // comparison problems: a richer model preferred by AICc although its nested simpler model is not rejected
  for (const [key, ft] of fByPair) {
    const [s, r] = key.split(':').map(Number);
    if (ft.p >= alpha && aicc[r] !== null && aicc[s] !== null && aicc[r]! < aicc[s]!) {
      const problem: Problem = {
        code: 'overfit-nested',
        severity: 'warning',
        message:
          `${reports[r].name} has a lower AICc than ${reports[s].name}, but the ${testName(ft)} does not reject the simpler ${reports[s].name} ` +
          `(${testFigures(ft, alpha)}): the extra parameter${ft.df1 > 1 ? 's do' : ' does'} not improve the fit by more than noise would. ` +
          `Prefer ${reports[s].name} unless there is a reason for the richer form.`,
        path: ['models', inputs[r].index],
      };
      reports[r].problems.push(problem);
    }
  }

  // the choice of best
  const candidates = reports.map((_, i) => i).filter((i) => aicc[i] !== null);
  if (candidates.length === 0) {
    return { ranking, fTests, best: null, reason: m === 0 ? 'No models to compare.' : 'No model converged, so none can be recommended.' };
  }
  let cur = order[0];
  const minAicc = aicc[cur]!;
  const nameOf = (i: number) => reports[i].name;
  const reasons: string[] = [
    candidates.length === 1
      ? `${nameOf(cur)} is the only model that converged.`
      : `${nameOf(cur)} has the lowest AICc (${fmt(minAicc, 6)}, Akaike weight ${fmt(weight[cur]!, 3)}).`,
  ];
  const visited = new Set<number>([cur]);
  for (let guard = 0; guard < m; guard++) {
    // (a) a simpler nested model not rejected by the F-test
    const notRejected = candidates.filter((s) => {
      const ft = fByPair.get(`${s}:${cur}`);
      return ft !== undefined && ft.p >= alpha && !visited.has(s);
    });
    if (notRejected.length > 0) {
      notRejected.sort((a, b) => freeCount(inputs[a]) - freeCount(inputs[b]) || aicc[a]! - aicc[b]!);
      const s = notRejected[0];
      const ft = fByPair.get(`${s}:${cur}`)!;
      reasons.push(
        `The simpler nested ${nameOf(s)} is not rejected against ${nameOf(cur)} by the ${ft.test === 'chi2' ? 'χ² difference test' : 'F-test'} (${ft.test === 'chi2' ? `Δχ² = ${fmt(ft.chi2!)}` : `F = ${fmt(ft.F)}`}, p = ${fmt(ft.p, 3)} ≥ ${alpha}), so ${nameOf(s)} is preferred.`,
      );
      cur = s;
      visited.add(s);
      continue;
    }
    // (b) a model with fewer parameters within ΔAICc < 2 (unless the F-test rejects it as nested in the current one)
    const close = candidates.filter((c) => {
      if (visited.has(c) || freeCount(inputs[c]) >= freeCount(inputs[cur])) return false;
      if (aicc[c]! - minAicc >= 2) return false;
      const ft = fByPair.get(`${c}:${cur}`);
      return !(ft && ft.p < alpha);
    });
    if (close.length > 0) {
      close.sort((a, b) => freeCount(inputs[a]) - freeCount(inputs[b]) || aicc[a]! - aicc[b]!);
      const c = close[0];
      reasons.push(
        `${nameOf(c)} is within ΔAICc < 2 (Δ = ${fmt(aicc[c]! - minAicc, 3)}) with fewer parameters (${freeCount(inputs[c])} vs ${freeCount(inputs[cur])}), so the simpler ${nameOf(c)} is preferred.`,
      );
      cur = c;
      visited.add(c);
      continue;
    }
    break;
  }
  return { ranking, fTests, best: nameOf(cur), reason: reasons.join(' ') };
}

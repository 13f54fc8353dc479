// Relative potency and parallelism of two 4PL/5PL curves (groups). Potency ρ = EC50_ref / EC50_test from the joint fit
// with asymptotes and slope shared (models[].shared), its interval by Fieller's theorem (Fieller 1954, J. R. Stat. Soc. B
// 16:175) on the joint covariance; parallelism by equivalence: the ratios of slopes and of spans (upper − lower) from
// the separate fits, each with a Fieller interval at level 2·confidence − 1 (two one-sided tests), within a margin.
import type { ModelReport, PotencyReport, SharingTest } from '../report';
import { normalQuantile, tQuantile } from './distributions';
import { fmtNum } from './calibration';

/**
 * Fieller interval of a/b with variances va, vb and covariance c, t the quantile: the ρ with
 * (a − ρb)² ≤ t²(va − 2ρc + ρ²vb). Null ends when b is not significantly different from 0 (g ≥ 1: unbounded).
 */
export function fieller(a: number, b: number, va: number, vb: number, c: number, t: number): [number | null, number | null] {
  const rho = a / b;
  const g = (t * t * vb) / (b * b);
  if (!Number.isFinite(g) || g >= 1) return [null, null];
  // vb = 0 (an exact denominator): g = 0 and the terms in c/vb vanish
  const inner = va - 2 * rho * c + rho * rho * vb - (vb > 0 ? g * (va - (c * c) / vb) : 0);
  if (!(inner >= 0)) return [null, null];
  const centre = rho - (vb > 0 ? (g * c) / vb : 0);
  const half = (t / Math.abs(b)) * Math.sqrt(inner);
  return [(centre - half) / (1 - g), (centre + half) / (1 - g)];
}

function cov(m: ModelReport, p: string, q: string): number {
  const i = m.paramOrder.indexOf(p);
  const j = m.paramOrder.indexOf(q);
  const v = i >= 0 && j >= 0 ? m.covariance?.[i]?.[j] : null;
  return v === null || v === undefined ? NaN : v;
}

function quantile(level: number, dof: number, absolute: boolean): number {
  return absolute ? normalQuantile((1 + level) / 2) : dof > 0 ? tQuantile((1 + level) / 2, dof) : NaN;
}

export interface PotencyInput {
  joint: ModelReport;
  /** the separate fits per group of the same model (for parallelism), by group id; absent when the spec has none */
  separate: Map<string, ModelReport>;
  /** the midpoint parameter: ec50 (4PL) or xc (5PL; with slope and asym shared, the ratio of xc is that of EC50s) */
  mid: 'ec50' | 'xc';
  reference: string;
  tests: string[];
  confidence: number;
  absolute: boolean;
  margin: { slope: [number, number]; span: [number, number] } | null;
  sharing: SharingTest | null;
}

export function relativePotency(input: PotencyInput): PotencyReport {
  const { joint, mid, reference } = input;
  const level = Number((2 * input.confidence - 1).toPrecision(12));
  const q = quantile(input.confidence, joint.stats.dof, input.absolute);
  const rk = `${mid}[${reference}]`;
  const results: PotencyReport['results'] = input.tests.map((test) => {
    const tk = `${mid}[${test}]`;
    const a = joint.params[rk]?.value ?? NaN;
    const b = joint.params[tk]?.value ?? NaN;
    const ratio = a / b;
    const interval = Number.isFinite(ratio) ? fieller(a, b, cov(joint, rk, rk), cov(joint, tk, tk), cov(joint, rk, tk), q) : null;
    const ref = input.separate.get(reference);
    const tst = input.separate.get(test);
    let parallelism: PotencyReport['results'][number]['parallelism'] = null;
    if (ref && tst && ref.status === 'converged' && tst.status === 'converged') {
      // separate fits are independent: covariance 0 between them; the smaller residual dof of the two (conservative)
      const qe = quantile(level, Math.min(ref.stats.dof, tst.stats.dof), input.absolute);
      const sr = tst.params.slope.value / ref.params.slope.value;
      const slopeI = fieller(tst.params.slope.value, ref.params.slope.value, cov(tst, 'slope', 'slope'), cov(ref, 'slope', 'slope'), 0, qe);
      const span = (m: ModelReport) => m.params.upper.value - m.params.lower.value;
      const spanVar = (m: ModelReport) => cov(m, 'upper', 'upper') + cov(m, 'lower', 'lower') - 2 * cov(m, 'upper', 'lower');
      const spr = span(tst) / span(ref);
      const spanI = fieller(span(tst), span(ref), spanVar(tst), spanVar(ref), 0, qe);
      let verdict: 'equivalent' | 'not-equivalent' | 'inconclusive' | null = null;
      if (input.margin) {
        const within = (i: [number | null, number | null], m: [number, number]) => i[0] !== null && i[1] !== null && i[0] >= m[0] && i[1] <= m[1];
        const outside = (i: [number | null, number | null], m: [number, number]) => (i[0] !== null && i[0] > m[1]) || (i[1] !== null && i[1] < m[0]);
        if (within(slopeI, input.margin.slope) && within(spanI, input.margin.span)) verdict = 'equivalent';
        else if (outside(slopeI, input.margin.slope) || outside(spanI, input.margin.span)) verdict = 'not-equivalent';
        else verdict = 'inconclusive';
      }
      parallelism = { level, slopeRatio: { value: sr, interval: slopeI }, spanRatio: { value: spr, interval: spanI }, verdict };
    }
    return { test, ratio: Number.isFinite(ratio) ? ratio : null, interval, reference: a, testValue: b, parallelism };
  });
  const pct = (v: number) => `${fmtNum(100 * v)} %`;
  const f = input.sharing;
  const fText = f && f.p !== null ? `The F-test of the shared fit against the separate fits gives p = ${fmtNum(f.p)} (comparison.sharing). ` : '';
  const note =
    `Relative potency = ${mid}[${reference}] / ${mid}[test] from the joint fit of ${joint.name} (lower, upper and slope shared${mid === 'xc' ? ', and asym: the ratio of xc is then the ratio of EC50s' : ''}); ` +
    `its ${pct(input.confidence)} interval is Fieller's, from the joint covariance. ` +
    `Parallelism by equivalence: the ratios test/reference of the slopes and of the spans (upper − lower) from the separate fits, each with a ${pct(level)} Fieller interval (two one-sided tests at ${pct((1 - level) / 2)} each), ` +
    `${input.margin ? `compared with the margins slope ${fmtNum(input.margin.slope[0])}–${fmtNum(input.margin.slope[1])} and span ${fmtNum(input.margin.span[0])}–${fmtNum(input.margin.span[1])}` : 'with no margin given (set potency.margin to get a verdict)'}. ` +
    fText +
    `Read the equivalence check to decide parallelism: the F-test asks whether the data can tell the curves apart, so it rejects precise assays for differences too small to matter and passes noisy ones with real differences; equivalence asks whether the difference is within the margin you chose (common practice in bioassay). The margins are the laboratory's to justify and validate.`;
  return { model: joint.name, separate: input.separate.size ? [...input.separate.values()][0].name : null, reference, confidence: input.confidence, method: 'fieller', results, note };
}

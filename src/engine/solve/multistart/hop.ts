// Stage 6 of the multi-start search: basin hopping by coordinate resampling (common practice, own variant): from the
// incumbent, redraw one or two sampled parameters (the others kept), screen by projected SSE, and run local fits from
// the best few; repeat while it improves. This escapes the minima where one term of a sum is wrong while the others
// are right (common in sums of peaks or exponentials). Subsets beyond 24 are drawn by seeded Fisher–Yates.
import type { Candidate, Search } from './context';
import type { Sampler } from './candidates';
import { project } from './project';
import { sampleWithoutReplacement } from './random';
import type { Incumbent, LocalSolver } from './refine';
import { TUNING } from './tuning';

/** Hops from `start` (the incumbent of the local runs); returns the improved incumbent. */
export function hop(s: Search, local: LocalSolver, start: Incumbent | null, samplers: Sampler[]): Incumbent | null {
  const { c, L, Lset, N, unknown, work, rand, stop, apart } = s;
  const { remaining } = local;
  let best = start;
  const sampledNL = N.filter((j) => !Lset.has(j));
  const samplerOf = new Map<number, Sampler>();
  unknown.forEach((j, a) => samplerOf.set(j, samplers[a]));
  const subsets: number[][] = sampledNL.map((j) => [j]);
  for (let a = 0; a < sampledNL.length; a++) for (let b = a + 1; b < sampledNL.length; b++) subsets.push([sampledNL[a], sampledNL[b]]);
  const maxSubsets = 24;
  for (let round = 0; best && round < TUNING.hopRounds && !stop() && sampledNL.length > 0; round++) {
    const inc = best;
    const pick = subsets.length > maxSubsets ? sampleWithoutReplacement(subsets, maxSubsets, rand) : subsets;
    const found: Candidate[] = [];
    for (const S of pick) {
      if (stop()) break;
      let top: Candidate | null = null;
      const m = TUNING.hopSamples;
      for (let k = 0; k < m; k++) {
        const t = Float64Array.from(inc.theta);
        for (const j of S) t[j] = (samplerOf.get(j) as Sampler)((k + rand()) / m, rand);
        // only moves that change the redrawn parameters materially (else the local run returns to the incumbent)
        if (!S.every((j) => apart(t[j], inc.theta[j], 0.2))) continue;
        const sse = project(c, t, L, work);
        s.screened++;
        if (Number.isFinite(sse) && (!top || sse < top.sse)) top = { theta: t, sse };
      }
      if (top) found.push(top);
    }
    found.sort((x, y) => x.sse - y.sse);
    let improved = false;
    for (const cand of found.slice(0, TUNING.hopRuns)) {
      if (stop()) break;
      const r = local.run(cand.theta, remaining() / 4);
      s.localRunsDone++;
      if (r && r.sse < (best as { sse: number }).sse * (1 - 1e-5)) {
        best = { start: inc.start, ...r }; // startValues name where the winning chain began
        improved = true;
      }
    }
    if (!improved) break;
  }
  return best;
}

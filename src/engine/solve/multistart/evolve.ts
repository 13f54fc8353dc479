// Stage 4 of the multi-start search: differential evolution (Storn & Price 1997, DE/rand/1/bin) on the projected
// SSE over the sampled parameters, seeded with the best distinct screened candidates: cheap evaluations, good at
// multimodal landscapes.
import type { Candidate, Search } from './context';
import { project } from './project';
import { TUNING } from './tuning';

/** Evolves a population drawn from the pool (trial values kept within `limit`); the survivors join the pool, sorted again. */
export function evolve(s: Search, pool: Candidate[], limit: (j: number) => number): void {
  const { c, L, work, lower, upper, rand, stop, apart } = s;
  const sampledIdx = s.N;
  if (sampledIdx.length > 0 && pool.length >= 4 && TUNING.deGenerations > 0) {
    const P = Math.min(pool.length, Math.max(20, TUNING.dePopulation * sampledIdx.length));
    const pop: { theta: Float64Array; sse: number }[] = [];
    for (const cand of pool) {
      if (pop.length >= P) break;
      if (pop.every((q) => sampledIdx.some((j) => apart(q.theta[j], cand.theta[j], 0.05)))) pop.push(cand);
    }
    const m = pop.length;
    for (let g = 0; g < TUNING.deGenerations && m >= 4 && !stop(); g++) {
      for (let i = 0; i < m; i++) {
        let r1: number, r2: number, r3: number;
        do r1 = Math.floor(rand() * m); while (r1 === i);
        do r2 = Math.floor(rand() * m); while (r2 === i || r2 === r1);
        do r3 = Math.floor(rand() * m); while (r3 === i || r3 === r1 || r3 === r2);
        const F = 0.5 + 0.5 * rand();
        const t = Float64Array.from(pop[i].theta);
        const jr = Math.floor(rand() * sampledIdx.length);
        sampledIdx.forEach((j, a) => {
          if (a === jr || rand() < 0.9) {
            // trial values stay within the sampled magnitudes (else the population can drift to degenerate infinities)
            const lim = limit(j);
            const v = pop[r1].theta[j] + F * (pop[r2].theta[j] - pop[r3].theta[j]);
            t[j] = Math.min(upper[j], lim, Math.max(lower[j], -lim, v));
          }
        });
        const sse = project(c, t, L, work);
        s.screened++;
        if (Number.isFinite(sse) && sse <= pop[i].sse) pop[i] = { theta: t, sse };
      }
    }
    pool.unshift(...pop);
    pool.sort((a, b) => a.sse - b.sse);
  }
}

// Stages 2 and 3 of the multi-start search: the candidate distribution of each parameter (bounds, signed
// log-magnitudes, a sensitivity scale, the data locations), the sensitivity scales themselves (the change that moves f
// by the span of y, median over points), and Latin-hypercube screening by projected SSE (McKay, Beckman & Conover
// 1979; strata shuffled by Fisher–Yates with the seeded generator).
import { evalF, type Candidate, type Search } from './context';
import { project } from './project';
import { LOG_HI, LOG_LO, TUNING } from './tuning';

/** A candidate draw of one parameter: u in [0, 1) places it in its distribution, rand breaks the mixture. */
export type Sampler = (u: number, rand: () => number) => number;

/** The candidate distribution of one parameter, from its bounds, a sensitivity scale and the data locations. */
export function sampler(lo: number, hi: number, scale: number, locations: [number, number][]): Sampler {
  const logU = (a: number, b: number, u: number): number => 10 ** (a + (b - a) * u);
  if (Number.isFinite(lo) && Number.isFinite(hi)) {
    if (lo > 0 && hi / lo > 1e3) return (u) => logU(Math.log10(lo), Math.log10(hi), u);
    if (hi < 0 && lo / hi > 1e3) return (u) => -logU(Math.log10(-hi), Math.log10(-lo), u);
    return (u) => lo + (hi - lo) * u;
  }
  const ls = Math.log10(scale);
  const magnitude = (u: number, rand: () => number): number => {
    const k = rand();
    if (k < 0.45) return logU(ls - 2.5, ls + 2.5, u);
    return logU(LOG_LO, LOG_HI, u);
  };
  if (Number.isFinite(lo)) return (u, rand) => lo + magnitude(u, rand);
  if (Number.isFinite(hi)) return (u, rand) => hi - magnitude(u, rand);
  return (u, rand) => {
    const k = rand();
    if (k < TUNING.locationShare && locations.length > 0) {
      const [a, b] = locations[Math.floor(rand() * locations.length)];
      const s = b - a > 0 ? b - a : Math.abs(a) || 1;
      return a - 0.25 * s + 1.5 * s * u;
    }
    const sign = rand() < 0.5 ? -1 : 1;
    return sign * magnitude(u, rand);
  };
}

/** Transformed coordinate used to tell candidates apart: signed log magnitude. */
export function coord(v: number): number {
  const a = Math.abs(v);
  return a < 1e-12 ? 0 : Math.sign(v) * (Math.log10(a) + 13);
}

/** A point with the given starts and every unknown parameter drawn (u from `us`, else fresh draws). */
export function draw(s: Search, samplers: Sampler[], us: number[] | null): Float64Array {
  const t = Float64Array.from(s.base);
  s.unknown.forEach((j, a) => (t[j] = samplers[a](us ? us[a] : s.rand(), s.rand)));
  return t;
}

/** Stage 2: sensitivity scale of each sampled parameter (10^[LOG_LO, LOG_HI]), from broad draws. */
export function sensitivityScales(s: Search, broad: Sampler[], yScale: number): Map<number, number> {
  const { c, L, N, work, stop } = s;
  const { n, sw } = c;
  const scaleOf = new Map<number, number[]>();
  for (let k = 0; k < 64 && !stop(); k++) {
    const t = draw(s, broad, null);
    if (!Number.isFinite(project(c, t, L, work))) continue;
    if (!evalF(c, t, true)) continue;
    for (const j of N) {
      let sum = 0;
      for (let i = 0; i < n; i++) sum += (sw[i] * c.J[j * n + i]) ** 2;
      const rms = Math.sqrt(sum / n);
      if (rms > 0 && Number.isFinite(rms)) {
        const list = scaleOf.get(j) ?? [];
        list.push(Math.log10(yScale / rms));
        scaleOf.set(j, list);
      }
    }
  }
  const scales = new Map<number, number>();
  for (const [j, list] of scaleOf) {
    list.sort((a, b) => a - b);
    scales.set(j, 10 ** Math.min(LOG_HI, Math.max(LOG_LO, list[Math.floor(list.length / 2)])));
  }
  return scales;
}

/**
 * Stage 3: screen nCand candidates (the neutral point 0 and ±1 of the sampled parameters first, then a Latin
 * hypercube in the unit cube of the sampled parameters) by projected SSE. Returns the pool, best first, and the
 * special points (the neutral one first). Sets s.screened.
 */
export function screen(s: Search, samplers: Sampler[], nCand: number): { pool: Candidate[]; special: Float64Array[] } {
  const { c, L, N, work, lower, upper, base, unknown, rand, stop } = s;
  const d = N.length;
  const pool: Candidate[] = [];
  const special: Float64Array[] = [];
  if (d > 0) {
    for (const v of [0, 1, -1]) {
      const t = Float64Array.from(base);
      for (const j of N) t[j] = Math.min(upper[j], Math.max(lower[j], v));
      special.push(t);
    }
  } else special.push(Float64Array.from(base));
  for (const t of special) {
    const sse = project(c, t, L, work);
    if (Number.isFinite(sse)) pool.push({ theta: t, sse });
  }
  const batch = 256;
  s.screened = special.length;
  for (let start = 0; start < nCand - special.length && !stop(); start += batch) {
    const m = Math.min(batch, nCand - special.length - start);
    // Latin hypercube: one stratum per candidate in every dimension, strata shuffled per dimension
    const perms = unknown.map(() => {
      const a = Array.from({ length: m }, (_, k) => k);
      for (let k = m - 1; k > 0; k--) {
        const r = Math.floor(rand() * (k + 1));
        [a[k], a[r]] = [a[r], a[k]];
      }
      return a;
    });
    for (let k = 0; k < m; k++) {
      const us = unknown.map((_, a) => (perms[a][k] + rand()) / m);
      const t = draw(s, samplers, us);
      const sse = project(c, t, L, work);
      s.screened++;
      if (Number.isFinite(sse)) pool.push({ theta: t, sse });
    }
    // keep the pool small: the best 4·localRuns·8
    if (pool.length > 2048) {
      pool.sort((a, b) => a.sse - b.sse);
      pool.length = 512;
    }
  }
  pool.sort((a, b) => a.sse - b.sse);
  return { pool, special };
}

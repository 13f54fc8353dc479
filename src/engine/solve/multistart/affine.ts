// Stage 1 of the multi-start search: which parameters the model is affine in, by second differences at reference
// points (common practice; they are then solved by variable projection, Golub & Pereyra 1973).
import { evalF, type Ctx } from './context';

/**
 * Which free, unbounded parameters the model is jointly affine in, tested numerically at reference points: every
 * pure second difference along θ_j and every mixed difference along (θ_j, θ_k) within the set must vanish to
 * round-off at every observation. Greedy in parameter order.
 */
export function affineParameters(c: Ctx, refs: Float64Array[], candidates: number[]): number[] {
  const { n } = c;
  const f0 = new Float64Array(n);
  const fa = new Float64Array(n);
  const fb = new Float64Array(n);
  const fab = new Float64Array(n);
  const small = (d: (i: number) => number, scale: (i: number) => number): boolean => {
    for (let i = 0; i < n; i++) if (!(Math.abs(d(i)) <= 1e-7 * scale(i) + 1e-300)) return false;
    return true;
  };
  const at = (theta: Float64Array, out: Float64Array): boolean => {
    if (!evalF(c, theta, false)) return false;
    out.set(c.f);
    return true;
  };
  const usable = refs.filter((r) => at(r, f0));
  if (usable.length === 0) return [];
  // a reference point is informative for θ_j when moving θ_j changes f there; at least two informative points are
  // required (else θ_j is treated as nonlinear, the safe side), and every informative one must show no curvature
  const pure = (j: number): boolean => {
    let informative = 0;
    for (const r of usable) {
      const h = Math.max(1, Math.abs(r[j]));
      const t = Float64Array.from(r);
      if (!at(t, f0)) return false;
      t[j] = r[j] + h;
      if (!at(t, fa)) return false;
      t[j] = r[j] + 2 * h;
      if (!at(t, fb)) return false;
      let moved = false;
      for (let i = 0; i < n && !moved; i++) if (Math.abs(fa[i] - f0[i]) > 1e-6 * (Math.abs(fa[i]) + Math.abs(f0[i]))) moved = true;
      if (!moved) continue;
      informative++;
      const flat = small(
        (i) => fb[i] - 2 * fa[i] + f0[i],
        (i) => Math.abs(fb[i]) + 2 * Math.abs(fa[i]) + Math.abs(f0[i]),
      );
      if (!flat) return false;
    }
    return informative >= 2;
  };
  const mixed = (j: number, k: number): boolean =>
    usable.every((r) => {
      const hj = Math.max(1, Math.abs(r[j]));
      const hk = Math.max(1, Math.abs(r[k]));
      const t = Float64Array.from(r);
      if (!at(t, f0)) return false;
      t[j] = r[j] + hj;
      if (!at(t, fa)) return false;
      t[k] = r[k] + hk;
      if (!at(t, fab)) return false;
      t[j] = r[j];
      if (!at(t, fb)) return false;
      return small(
        (i) => fab[i] - fa[i] - fb[i] + f0[i],
        (i) => Math.abs(fab[i]) + Math.abs(fa[i]) + Math.abs(fb[i]) + Math.abs(f0[i]),
      );
    });
  const L: number[] = [];
  for (const j of candidates) {
    if (!pure(j)) continue;
    if (L.every((k) => mixed(j, k))) L.push(j);
  }
  return L;
}

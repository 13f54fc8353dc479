// Seeded randomness of the multi-start search: the mulberry32 generator and a Fisher–Yates draw without replacement
// (Durstenfeld 1964; Knuth, TAOCP vol. 2, 3.4.2), so every JS engine makes the same draws for the same seed.

/** Small seeded PRNG: mulberry32 (T. Ettinger, public domain; common practice). Returns u in [0, 1). */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * k items of xs drawn uniformly without replacement, in draw order: the first k steps of a Fisher–Yates shuffle
 * (Durstenfeld 1964; Knuth, TAOCP vol. 2, 3.4.2, algorithm P) driven by the seeded generator, so every JS engine
 * draws the same items (unlike sorting with a random comparator, which is neither uniform nor portable).
 */
export function sampleWithoutReplacement<T>(xs: readonly T[], k: number, rand: () => number): T[] {
  const a = xs.slice();
  const m = Math.min(k, a.length);
  for (let i = 0; i < m; i++) {
    const j = i + Math.floor(rand() * (a.length - i));
    const t = a[i];
    a[i] = a[j];
    a[j] = t;
  }
  return a.slice(0, m);
}

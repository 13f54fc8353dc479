// "Did you mean" suggestions: optimal-string-alignment edit distance (Damerau 1964, restricted form).

/** Edit distance counting insertions, deletions, substitutions and transpositions of adjacent characters. */
export function editDistance(a: string, b: string): number {
  const m = a.length;
  const n = b.length;
  if (m === 0) return n;
  if (n === 0) return m;
  let prev2 = new Array<number>(n + 1).fill(0);
  let prev = new Array<number>(n + 1);
  let cur = new Array<number>(n + 1);
  for (let j = 0; j <= n; j++) prev[j] = j;
  for (let i = 1; i <= m; i++) {
    cur[0] = i;
    for (let j = 1; j <= n; j++) {
      const cost = a[i - 1] === b[j - 1] ? 0 : 1;
      let d = Math.min(prev[j] + 1, cur[j - 1] + 1, prev[j - 1] + cost);
      if (i > 1 && j > 1 && a[i - 1] === b[j - 2] && a[i - 2] === b[j - 1]) d = Math.min(d, prev2[j - 2] + 1);
      cur[j] = d;
    }
    const t = prev2;
    prev2 = prev;
    prev = cur;
    cur = t;
  }
  return prev[n];
}

/**
 * The candidate closest to `word`, or undefined when none is close enough.
 * A case-insensitive exact match wins; otherwise the smallest edit distance, at most 1 for words of up to
 * 3 characters, 2 up to 6, 3 beyond, and always less than the word's length (so 'b' never suggests 'a').
 * Ties go to the earlier candidate. Failing that, the only candidate that starts with the word (2+ characters).
 */
export function suggest(word: string, candidates: readonly string[]): string | undefined {
  if (word.length === 0) return undefined;
  const lower = word.toLowerCase();
  for (const c of candidates) if (c !== word && c.toLowerCase() === lower) return c;
  const limit = Math.min(word.length <= 3 ? 1 : word.length <= 6 ? 2 : 3, word.length - 1);
  let best: string | undefined;
  let bestD = Infinity;
  for (const c of candidates) {
    if (c === word) continue;
    if (Math.abs(c.length - word.length) > limit) continue;
    const d = editDistance(word, c);
    if (d <= limit && d < bestD) {
      best = c;
      bestD = d;
    }
  }
  if (best !== undefined || word.length < 2) return best;
  // a unique candidate that starts with the word ('od' -> 'od600')
  const prefixed = candidates.filter((c) => c.toLowerCase().startsWith(lower));
  return prefixed.length === 1 ? prefixed[0] : undefined;
}

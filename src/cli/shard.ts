// `check --shard K/N`: which specs the K-th of N machines runs. The rule: drop repeated specs, sort the rest by their
// path relative to the current directory (forward slashes, compared character code by character code, so every
// machine and locale agrees), and give spec i (0-based) to shard (i mod N) + 1. Every spec lands in exactly one
// shard, shard sizes differ by at most one, and the split depends only on the list of specs.
import * as path from 'path';
import { UsageError } from './args';
import { shown } from './io';

export interface Shard {
  index: number;
  count: number;
}

export function parseShard(value: string): Shard {
  const m = /^(\d+)\/(\d+)$/.exec(value.trim());
  const k = m ? Number(m[1]) : NaN;
  const n = m ? Number(m[2]) : NaN;
  if (!m || !(n >= 1) || !(k >= 1) || k > n)
    throw new UsageError(`option '--shard' needs K/N with 1 ≤ K ≤ N (the K-th of N shards), e.g. --shard 2/4; got '${value}'`);
  return { index: k, count: n };
}

/** The specs of one shard, in the sorted order the rule uses. */
export function shardSpecs(specs: string[], cwd: string, shard: Shard): string[] {
  const seen = new Set<string>();
  const unique: { spec: string; key: string }[] = [];
  for (const s of specs) {
    const abs = path.resolve(cwd, s);
    if (seen.has(abs)) continue;
    seen.add(abs);
    unique.push({ spec: s, key: shown(abs, cwd) });
  }
  unique.sort((a, b) => (a.key < b.key ? -1 : a.key > b.key ? 1 : 0));
  return unique.filter((_, i) => i % shard.count === shard.index - 1).map(u => u.spec);
}

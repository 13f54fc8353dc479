// Pearson correlation of y with each x variable, and the "linear tendency" hint (|r| ≥ 0.7: common practice, no source).
import type { Problem, Thresholds } from '../report';
import { centredMoments } from '../solve/linalg';

/** Pearson r of a and b (two-pass, centred); null when either has zero variance or n < 2. */
export function pearson(a: ArrayLike<number>, b: ArrayLike<number>): number | null {
  const n = Math.min(a.length, b.length);
  if (n < 2) return null;
  const { saa, sbb, sab } = centredMoments(a, b, n);
  if (!(saa > 0) || !(sbb > 0)) return null;
  const r = sab / Math.sqrt(saa * sbb);
  return Math.max(-1, Math.min(1, r));
}

/** DataReport.correlation plus an info problem per variable with |r| ≥ thresholds.linearHint. */
export function dataCorrelation(
  variables: string[],
  X: ArrayLike<number>[],
  y: ArrayLike<number>,
  thresholds: Thresholds,
): { correlation: Record<string, number | null>; problems: Problem[] } {
  const correlation: Record<string, number | null> = {};
  const problems: Problem[] = [];
  variables.forEach((v, k) => {
    const r = pearson(X[k], y);
    correlation[v] = r;
    if (r !== null && Math.abs(r) >= thresholds.linearHint) {
      problems.push({
        code: 'linear-tendency',
        severity: 'info',
        message:
          `y and ${v} are strongly correlated (Pearson r = ${r.toPrecision(3)}, |r| ≥ ${thresholds.linearHint}). ` +
          `A straight line may describe the data well: consider adding { "builtin": "linear" } as a baseline model to compare against.`,
        path: ['data', 'x'],
      });
    }
  });
  return { correlation, problems };
}

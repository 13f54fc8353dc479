// Back on the original scale: when data.y (or data.x) is log10, log/ln or sqrt of one column, predictions, bands and
// read-outs are also given on that column's scale by the inverse transform, interval ends mapped one by one (a monotone
// map keeps their coverage; the back-transformed fit is the median on the original scale, not the mean).
import { parseFormula } from '../formula';
import type { BandReport, ModelReport, OriginalScaleReport } from '../report';

export type ScaleTransform = OriginalScaleReport['transform'];

/** The transform and column of an expression `fn(column)` (fn one of log10, log, ln, sqrt), or null. */
export function transformOf(expr: string): { transform: ScaleTransform; column: string } | null {
  let ast;
  try {
    ast = parseFormula(expr);
  } catch {
    return null;
  }
  if (ast.type !== 'call' || ast.args.length !== 1 || ast.args[0].type !== 'ident') return null;
  const fn = ast.fn === 'ln' ? 'log' : ast.fn;
  if (fn !== 'log10' && fn !== 'log' && fn !== 'sqrt') return null;
  return { transform: fn, column: ast.args[0].name };
}

/** The inverse of a transform: 10^v, e^v, v² (v < 0 maps to 0: a square root is never negative). */
export function inverseOf(t: ScaleTransform): (v: number) => number {
  if (t === 'log10') return (v) => 10 ** v;
  if (t === 'log') return Math.exp;
  return (v) => (v < 0 ? 0 : v * v);
}

export function transformWords(t: ScaleTransform, column: string, fitted: string): string {
  const inv = t === 'log10' ? `10^(${fitted})` : t === 'log' ? `exp(${fitted})` : `(${fitted})²`;
  return `${column} = ${inv}: the fitted ${t}(${column}) back-transformed; intervals are the fitted-scale intervals with each end transformed (a monotone map keeps their coverage); the back-transformed curve is the median of ${column}, not its mean, when the errors are symmetric on the fitted scale`;
}

/** The original-scale predictions and band of one model when data.y is a transform of a column; null otherwise. */
export function originalScaleOf(m: ModelReport, yExpr: string): OriginalScaleReport | null {
  const t = transformOf(yExpr);
  if (!t) return null;
  const inv = inverseOf(t.transform);
  const pair = (p: [number, number] | null): [number, number] | null => (p ? [inv(p[0]), inv(p[1])] : null);
  const band = (b: BandReport | null): OriginalScaleReport['band'] =>
    b ? { x: b.x, fit: b.fit.map(inv), ciLow: b.ciLow.map(inv), ciHigh: b.ciHigh.map(inv), piLow: b.piLow.map(inv), piHigh: b.piHigh.map(inv) } : null;
  return {
    column: t.column,
    transform: t.transform,
    note: transformWords(t.transform, t.column, yExpr),
    predictions: m.predictions.map((p) => ({ x: p.x, y: p.y === null ? null : inv(p.y), ci: pair(p.ci), pi: pair(p.pi) })),
    band: band(m.band),
  };
}

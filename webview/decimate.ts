// Display decimation for large data: a point per occupied pixel cell plus the minimum and maximum y of every pixel
// column (min/max per bucket, common practice for plotting), so the plot looks the same and extremes are never lost.
// Works on indices, so every kept point still knows its data row.

/** Above this many points the panel draws a decimated set. */
export const DECIMATE_THRESHOLD = 5000;

export interface DecimateOptions {
  /** pixel columns of the plot area (buckets along x) */
  columns: number;
  /** pixel rows of the plot area */
  rows: number;
  /** cell size in pixels for the occupancy grid (default 2) */
  cell?: number;
  /** bucket in log10 space (a log axis); non-positive values are dropped */
  logX?: boolean;
  logY?: boolean;
  /** return every usable point when there are at most this many (default DECIMATE_THRESHOLD) */
  threshold?: number;
}

function usable(v: number, log: boolean | undefined): boolean {
  return Number.isFinite(v) && (!log || v > 0);
}

/**
 * Indices of the points to draw, sorted by x (ties by index). Non-finite points (and non-positive ones on a log
 * axis) are left out. At or below the threshold every usable point is kept. Above it, each pixel column keeps its
 * lowest and highest y, and each occupied cell of the pixel grid keeps its first point; the global extremes of x
 * and y are therefore always kept.
 */
export function decimateScatter(x: ArrayLike<number>, y: ArrayLike<number>, opts: DecimateOptions): Int32Array {
  const n = Math.min(x.length, y.length);
  // Usable indices in x order (tie: index); data usually arrive sorted, so the sort is skipped then.
  let idx = new Int32Array(n);
  let m = 0, sorted = true;
  for (let i = 0; i < n; i++) {
    if (!usable(x[i]!, opts.logX) || !usable(y[i]!, opts.logY)) continue;
    if (m > 0 && x[i]! < x[idx[m - 1]!]!) sorted = false;
    idx[m++] = i;
  }
  idx = idx.slice(0, m);
  if (!sorted) idx.sort((a, b) => x[a]! - x[b]! || a - b);
  const threshold = opts.threshold ?? DECIMATE_THRESHOLD;
  if (m <= threshold) return idx;

  const tx = (v: number) => (opts.logX ? Math.log10(v) : v);
  const ty = (v: number) => (opts.logY ? Math.log10(v) : v);
  const x0 = tx(x[idx[0]!]!), x1 = tx(x[idx[m - 1]!]!);
  let y0 = Infinity, y1 = -Infinity;
  for (let k = 0; k < m; k++) {
    const b = ty(y[idx[k]!]!);
    if (b < y0) y0 = b;
    if (b > y1) y1 = b;
  }
  const columns = Math.max(1, Math.floor(opts.columns));
  const cell = Math.max(1, opts.cell ?? 2);
  const gx = Math.max(1, Math.floor(columns / cell));
  const gy = Math.max(1, Math.floor(Math.max(1, opts.rows) / cell));
  const sx = x1 > x0 ? 1 / (x1 - x0) : 0;
  const sy = y1 > y0 ? 1 / (y1 - y0) : 0;
  const colMin = new Int32Array(columns).fill(-1);
  const colMax = new Int32Array(columns).fill(-1);
  const seen = new Uint8Array(gx * gy);
  const keep = new Uint8Array(m); // by position k in idx
  for (let k = 0; k < m; k++) {
    const i = idx[k]!;
    const fx = (tx(x[i]!) - x0) * sx, fy = (ty(y[i]!) - y0) * sy;
    const c = Math.min(columns - 1, Math.floor(fx * columns));
    const yi = y[i]!;
    if (colMin[c]! < 0 || yi < y[idx[colMin[c]!]!]!) colMin[c] = k;
    if (colMax[c]! < 0 || yi > y[idx[colMax[c]!]!]!) colMax[c] = k;
    const key = Math.min(gx - 1, Math.floor(fx * gx)) * gy + Math.min(gy - 1, Math.floor(fy * gy));
    if (!seen[key]) { seen[key] = 1; keep[k] = 1; }
  }
  // The first and last point along x (extremes of x) and each column's lowest and highest y are always drawn.
  keep[0] = 1;
  keep[m - 1] = 1;
  for (let c = 0; c < columns; c++) {
    if (colMin[c]! >= 0) keep[colMin[c]!] = 1;
    if (colMax[c]! >= 0) keep[colMax[c]!] = 1;
  }
  let count = 0;
  for (let k = 0; k < m; k++) count += keep[k]!;
  const out = new Int32Array(count);
  for (let k = 0, j = 0; k < m; k++) if (keep[k]) out[j++] = idx[k]!;
  return out;
}

/**
 * Indices of a line (already sorted by x) to draw: per x bucket the first, lowest, highest and last point, in their
 * original order, so a curve keeps its envelope. At or below 4 × buckets points every usable point is kept.
 */
export function decimateLine(x: ArrayLike<number>, y: ArrayLike<number>, buckets: number, log?: { x?: boolean; y?: boolean }): Int32Array {
  const n = Math.min(x.length, y.length);
  const idx: number[] = [];
  for (let i = 0; i < n; i++) if (usable(x[i]!, log?.x) && usable(y[i]!, log?.y)) idx.push(i);
  const b = Math.max(1, Math.floor(buckets));
  if (idx.length <= 4 * b) return Int32Array.from(idx);
  const tx = (v: number) => (log?.x ? Math.log10(v) : v);
  const first = tx(x[idx[0]!]!), last = tx(x[idx[idx.length - 1]!]!);
  const span = last - first || 1;
  const out: number[] = [];
  let cur = -1, f = -1, lo = -1, hi = -1, l = -1;
  const flush = () => {
    if (f < 0) return;
    for (const i of [...new Set([f, lo, hi, l])].sort((p, q) => p - q)) out.push(i);
  };
  for (const i of idx) {
    const bucket = Math.min(b - 1, Math.max(0, Math.floor(((tx(x[i]!) - first) / span) * b)));
    if (bucket !== cur) { flush(); cur = bucket; f = lo = hi = l = i; continue; }
    if (y[i]! < y[lo]!) lo = i;
    if (y[i]! > y[hi]!) hi = i;
    l = i;
  }
  flush();
  return Int32Array.from(out);
}

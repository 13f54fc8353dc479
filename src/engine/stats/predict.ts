// Predictions with delta-method intervals: Var(ŷ0) = gᵀVg (g = ∂f/∂θ at x0, V the parameter covariance), prediction
// interval adding the variance of a new observation; pointwise bands; inverse prediction by grid bracketing + Brent,
// with an interval from inverting the prediction band (the x whose prediction interval contains y0).
import type { CompiledFormula } from '../formula/types';
import type { BandReport, InverseReport, PredictionReport } from '../report';
import { LIMITS } from '../spec/limits';
import { brent, bisectBoundary } from './roots';

/** What the prediction code needs about a fitted model. */
export interface PredictionContext {
  compiled: CompiledFormula;
  theta: Float64Array;
  /** p×p row-major covariance (NaN where undefined) */
  cov: Float64Array;
  free: boolean[];
  /** interval multiplier (t or z quantile at the spec's confidence) */
  q: number;
  /** variance of a new observation with unit weight: s² (relative) or 1 (absolute sigma mode) */
  scale: number;
  /** data, for the range and the weight of the nearest observed x */
  X: Float64Array[];
  w: Float64Array | null;
  /** weight of a new observation (spec predictWeight); absent: the weight of the nearest observed x */
  predictWeight?: number;
  /** the new value is the mean of this many readings (variance σ²/m); absent: one reading */
  replicates?: number;
}

export interface PointPrediction {
  y: number;
  /** standard error of the fitted mean, NaN when the covariance is undefined */
  seFit: number;
  /** standard deviation of a new observation (√(gᵀVg + σ²_new)) */
  sePred: number;
}

export function variableRange(X: Float64Array[]): [number, number][] {
  return X.map((col) => {
    let lo = Infinity;
    let hi = -Infinity;
    for (let i = 0; i < col.length; i++) {
      if (col[i] < lo) lo = col[i];
      if (col[i] > hi) hi = col[i];
    }
    return [lo, hi] as [number, number];
  });
}

/** 1/w of the observation nearest to x0 (in the first variable, or standardised Euclidean for several). */
function nearestInverseWeight(ctx: PredictionContext, x0: ArrayLike<number>, ranges: [number, number][]): number {
  const w = ctx.w;
  if (!w) return ctx.predictWeight !== undefined ? 1 / ctx.predictWeight : 1;
  if (ctx.predictWeight !== undefined) return 1 / ctx.predictWeight;
  const n = w.length;
  let best = -1;
  let bestD = Infinity;
  for (let i = 0; i < n; i++) {
    let d = 0;
    for (let v = 0; v < ctx.X.length; v++) {
      const span = ranges[v][1] - ranges[v][0] || 1;
      const dv = (ctx.X[v][i] - x0[v]) / span;
      d += dv * dv;
    }
    if (d < bestD) {
      bestD = d;
      best = i;
    }
  }
  return best >= 0 && w[best] > 0 ? 1 / w[best] : NaN;
}

export function makePredictor(ctx: PredictionContext): (x0: ArrayLike<number>) => PointPrediction {
  const p = ctx.theta.length;
  const g = new Float64Array(p);
  const ranges = variableRange(ctx.X);
  const freeIdx: number[] = [];
  for (let j = 0; j < p; j++) if (ctx.free[j]) freeIdx.push(j);
  return (x0) => {
    const y = ctx.compiled.gradientAt(ctx.theta, x0, g);
    let v = 0;
    for (const j of freeIdx) {
      if (g[j] === 0) continue;
      for (const k of freeIdx) {
        if (g[k] === 0) continue;
        v += g[j] * ctx.cov[j * p + k] * g[k];
      }
    }
    if (v < 0) v = 0;
    const newVar = (ctx.scale * nearestInverseWeight(ctx, x0, ranges)) / (ctx.replicates ?? 1);
    return { y, seFit: Math.sqrt(v), sePred: Math.sqrt(v + newVar) };
  };
}

/** m points over [lo, hi], log-spaced when lo > 0 and hi/lo > 100 (more than two decades). */
export function bandGrid(lo: number, hi: number, m: number): number[] {
  const out: number[] = [];
  if (!(hi > lo)) return [lo];
  const logSpaced = lo > 0 && hi / lo > 100;
  for (let i = 0; i < m; i++) {
    const t = m === 1 ? 0 : i / (m - 1);
    out.push(logSpaced ? Math.exp(Math.log(lo) + t * (Math.log(hi) - Math.log(lo))) : lo + t * (hi - lo));
  }
  out[0] = lo;
  out[m - 1] = hi;
  return out;
}

/** Pointwise confidence and prediction bands over the data range (single-variable models). */
export function computeBand(ctx: PredictionContext, variable: string, m = 200): BandReport | null {
  if (ctx.X.length !== 1 || ctx.X[0].length === 0) return null;
  const [lo, hi] = variableRange(ctx.X)[0];
  const predict = makePredictor(ctx);
  const band: BandReport = { variable, x: [], fit: [], ciLow: [], ciHigh: [], piLow: [], piHigh: [] };
  const xv = new Float64Array(1);
  for (const x of bandGrid(lo, hi, m)) {
    xv[0] = x;
    const pr = predict(xv);
    band.x.push(x);
    band.fit.push(pr.y);
    band.ciLow.push(pr.y - ctx.q * pr.seFit);
    band.ciHigh.push(pr.y + ctx.q * pr.seFit);
    band.piLow.push(pr.y - ctx.q * pr.sePred);
    band.piHigh.push(pr.y + ctx.q * pr.sePred);
  }
  return band;
}

/** Resolve one `predict` entry into a point in variable order; null (with a reason) when it does not fit the variables. */
export function predictionPoint(entry: number | Record<string, number>, variables: string[]): { x: Float64Array } | { error: string } {
  if (typeof entry === 'number') {
    if (variables.length !== 1) {
      return { error: `needs one value per variable (${variables.join(', ')}), e.g. { ${variables.map((v) => `"${v}": 1`).join(', ')} }` };
    }
    return { x: Float64Array.of(entry) };
  }
  const x = new Float64Array(variables.length);
  const missing: string[] = [];
  variables.forEach((v, k) => {
    const val = entry[v];
    if (typeof val === 'number' && Number.isFinite(val)) x[k] = val;
    else missing.push(v);
  });
  if (missing.length) return { error: `has no numeric value for ${missing.map((m) => `'${m}'`).join(', ')}` };
  return { x };
}

export function computePrediction(ctx: PredictionContext, entry: number | Record<string, number>, x0: Float64Array): PredictionReport {
  const ranges = variableRange(ctx.X);
  let extrapolated = false;
  for (let v = 0; v < x0.length; v++) if (x0[v] < ranges[v][0] || x0[v] > ranges[v][1]) extrapolated = true;
  const pr = makePredictor(ctx)(x0);
  const y = Number.isFinite(pr.y) ? pr.y : null;
  const out: PredictionReport = {
    x: entry,
    y,
    ci: y !== null && Number.isFinite(pr.seFit) ? [y - ctx.q * pr.seFit, y + ctx.q * pr.seFit] : null,
    pi: y !== null && Number.isFinite(pr.sePred) ? [y - ctx.q * pr.sePred, y + ctx.q * pr.sePred] : null,
    extrapolated,
  };
  if (ctx.predictWeight !== undefined) out.weight = { value: ctx.predictWeight, from: 'spec' };
  else if (ctx.w) out.weight = { value: 1 / nearestInverseWeight(ctx, x0, ranges), from: 'nearest' };
  return out;
}

const INVERSE_GRID = 1000;

/**
 * Every x where the fitted curve equals y0: sign changes of f − y0 on a fine grid over the data range, refined by
 * Brent. When there is none inside the range, the search extends one range-width beyond each end (log-spaced, or all x ≥ 0: not below lo/10)
 * and such roots are extrapolated. Each root's interval is the connected set of x around it whose prediction
 * interval contains y0 — the classical (Fieller) limits for a straight line, Draper & Smith §3.2: walked on a grid
 * over the extended range and then, if still inside, outward in doubling steps up to 2^40 range-widths, stopping where
 * the curve is undefined; a limit that does not exist there is null (e.g. a slope not significantly different from 0).
 */
export function computeInverse(ctx: PredictionContext, y0: number): InverseReport {
  const out: InverseReport = { y: y0, roots: [], extrapolated: false };
  if (ctx.X.length !== 1 || ctx.X[0].length === 0 || !Number.isFinite(y0)) return out;
  const [lo, hi] = variableRange(ctx.X)[0];
  if (!(hi > lo)) return out;
  const logSpaced = lo > 0 && hi / lo > 100;
  // never extend across 0 when the data are all ≥ 0 (a positive quantity): stop at lo/10, or at lo when lo = 0
  const extLo = logSpaced || lo > 0 ? Math.max(lo / 10, logSpaced ? 0 : lo - (hi - lo)) : lo === 0 ? lo : lo - (hi - lo);
  const extHi = logSpaced ? hi * 10 : hi + (hi - lo);
  const predict = makePredictor(ctx);
  const xv = new Float64Array(1);
  const f = (x: number): number => {
    xv[0] = x;
    return ctx.compiled.at(ctx.theta, xv);
  };
  // f within this of y0 counts as equal (a constant curve fitted to constant y is y0 up to rounding)
  const flatTol = 1e-12 * Math.max(1, Math.abs(y0));
  let flat: [number, number] | null = null;
  const findRoots = (a: number, b: number, m: number): number[] => {
    const grid = bandGrid(a, b, m);
    const roots: number[] = [];
    let prevX = grid[0];
    let prevG = f(prevX) - y0;
    if (Math.abs(prevG) <= flatTol) prevG = 0;
    if (prevG === 0) roots.push(prevX);
    for (let i = 1; i < grid.length; i++) {
      const x = grid[i];
      let g = f(x) - y0;
      if (Math.abs(g) <= flatTol) g = 0;
      if (g === 0 && prevG === 0) {
        // two neighbouring grid points on y0: the curve is flat there, a segment rather than roots
        if (roots.length > 0 && roots[roots.length - 1] === prevX) roots.pop();
        flat = flat ? [Math.min(flat[0], prevX), Math.max(flat[1], x)] : [prevX, x];
      } else if (g === 0) roots.push(x);
      else if (Number.isFinite(g) && Number.isFinite(prevG) && prevG !== 0 && (g > 0) !== (prevG > 0)) {
        const r = brent((t) => f(t) - y0, prevX, x, 1e-13);
        // a sign change across a pole is not a root: require the curve to actually reach y0 there
        if (r !== null && Math.abs(f(r) - y0) <= 1e-6 * (Math.abs(y0) + Math.abs(g) + Math.abs(prevG))) roots.push(r);
      }
      prevX = x;
      prevG = g;
    }
    return roots;
  };
  let roots = findRoots(lo, hi, INVERSE_GRID);
  let extrapolated = false;
  if (roots.length === 0 && (flat as [number, number] | null) === null) {
    const left = findRoots(extLo, lo, INVERSE_GRID / 2).filter((r) => r < lo);
    const right = findRoots(hi, extHi, INVERSE_GRID / 2).filter((r) => r > hi);
    roots = [...left, ...right];
    extrapolated = roots.length > 0;
  }
  if (flat) out.flat = flat;
  if (roots.length > LIMITS.rootsPerValue) {
    out.moreRoots = roots.length - LIMITS.rootsPerValue;
    roots = roots.slice(0, LIMITS.rootsPerValue);
  }
  // outside the prediction band: h > 0
  const h = (x: number): number => {
    xv[0] = x;
    const pr = predict(xv);
    const v = Math.abs(pr.y - y0) - ctx.q * pr.sePred;
    return Number.isFinite(v) ? v : Infinity;
  };
  const searchGrid = bandGrid(extLo, extHi, 2 * INVERSE_GRID);
  const width = hi - lo;
  /** beyond the grid: from `from` (inside the band) outward in doubling steps until outside; null when never */
  const expand = (from: number, dir: -1 | 1): number | null => {
    let inside = from;
    for (let k = 0; k <= 40; k++) {
      const x = from + dir * width * 2 ** k;
      xv[0] = x;
      const pr = predict(xv);
      const v = Math.abs(pr.y - y0) - ctx.q * pr.sePred;
      if (!Number.isFinite(v)) return null; // the curve is not defined out there: no limit on this side
      if (v >= 0) return bisectBoundary(h, inside, x);
      inside = x;
    }
    return null;
  };
  for (const r of roots) {
    let low: number | null = null;
    let high: number | null = null;
    xv[0] = r;
    const atRoot = predict(xv);
    if (atRoot.sePred === 0) {
      // an exact fit: the band has zero width
      low = r;
      high = r;
    } else if (h(r) < 0) {
      // walk left and right on the grid to the first point outside the band
      let k = searchGrid.findIndex((x) => x > r);
      if (k < 0) k = searchGrid.length;
      for (let i = k - 1; i >= 0; i--) {
        if (searchGrid[i] >= r) continue;
        if (h(searchGrid[i]) >= 0) {
          low = bisectBoundary(h, i + 1 < searchGrid.length && searchGrid[i + 1] < r ? searchGrid[i + 1] : r, searchGrid[i]);
          break;
        }
      }
      if (low === null && h(searchGrid[0]) < 0) low = expand(Math.min(searchGrid[0], r), -1);
      let highFound = false;
      for (let i = k; i < searchGrid.length; i++) {
        if (h(searchGrid[i]) >= 0) {
          high = bisectBoundary(h, i - 1 >= 0 && searchGrid[i - 1] > r ? searchGrid[i - 1] : r, searchGrid[i]);
          highFound = true;
          break;
        }
      }
      if (!highFound && h(searchGrid[searchGrid.length - 1]) < 0) high = expand(Math.max(searchGrid[searchGrid.length - 1], r), 1);
    }
    out.roots.push({ x: r, interval: [low, high] });
  }
  out.extrapolated = extrapolated || roots.some((r) => r < lo || r > hi);
  return out;
}


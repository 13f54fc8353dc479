// Calibration read-outs on a fitted single-x model. Unknowns: the mean of m readings inverted through the curve, its
// interval the x whose prediction interval for a mean of m readings (variance gᵀVg + σ²/m) contains it — the classical
// (Fieller) limits of Draper & Smith §3.2 generalised by inverting the band; recovery % = 100·value/nominal; limits of
// detection by ICH Q2(R1) (3.3σ/slope, 10σ/slope) for a line, the blank response ± 3.3σ / ± 10σ read off a curve, and
// the Hubaux & Vos (1970) detection limit (smallest x whose lower prediction limit reaches the blank's upper one).
import type { LimitsReport, ReadoutFlag, StandardRecovery, UnknownReport } from '../report';
import { computeInverse, makePredictor, variableRange, type PredictionContext } from './predict';
import { bisectBoundary } from './roots';
import { inverseOf, type ScaleTransform } from './calibrationScale';

/** Shortest form of a number for messages (4 significant digits). */
export function fmtNum(v: number): string {
  if (!Number.isFinite(v)) return String(v);
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e-3 && a < 1e6) return String(Number(v.toPrecision(4)));
  return v.toExponential(3);
}

/** Mean of v, each value counted f[i] times (frequency weights; default once each). */
function mean(v: number[], f?: number[]): number {
  let s = 0;
  let n = 0;
  v.forEach((x, i) => {
    const w = f ? f[i] : 1;
    s += w * x;
    n += w;
  });
  return s / n;
}

function sd(v: number[], f?: number[]): number | null {
  const n = f ? f.reduce((a, b) => a + b, 0) : v.length;
  if (n < 2) return null;
  const mu = mean(v, f);
  let s = 0;
  v.forEach((x, i) => (s += (f ? f[i] : 1) * (x - mu) * (x - mu)));
  return Math.sqrt(s / (n - 1));
}

/** The curve's value at the ends of the data range and whether it rises with x there (for words about direction). */
function curveEnds(ctx: PredictionContext): { lo: number; hi: number; fLo: number; fHi: number } {
  const [lo, hi] = variableRange(ctx.X)[0];
  const at = (x: number) => ctx.compiled.at(ctx.theta, Float64Array.of(x));
  return { lo, hi, fLo: at(lo), fHi: at(hi) };
}

export interface ReadOffInput {
  id: string;
  rows: number[];
  y: number[];
  dilution: number;
  /** what x is called in messages, e.g. "conc_ng_ml" */
  xLabel: string;
  /** frequency of each reading (data.count of the standards); default 1 each */
  freq?: number[];
  /** data.x is a transform of a column: x is also given on the column's scale, and the value uses that */
  xScale?: { column: string; transform: ScaleTransform };
}

/**
 * Back-calculate one sample: x where the curve equals the mean of its readings, with the interval for the mean of m
 * readings, and the value times its dilution. Roots: the one inside the standards' range; if none is inside, the one
 * found beyond it (extrapolated, flagged); several inside: no single answer (flagged).
 */
export function readOff(ctx: PredictionContext, input: ReadOffInput): UnknownReport {
  const m = input.freq ? input.freq.reduce((a, b) => a + b, 0) : input.y.length;
  const meanY = mean(input.y, input.freq);
  const flags: ReadoutFlag[] = [];
  const inv = computeInverse({ ...ctx, replicates: m }, meanY);
  const { lo, hi, fLo, fHi } = curveEnds(ctx);
  const reading = m === 1 ? `the reading ${fmtNum(meanY)}` : `the mean reading ${fmtNum(meanY)} (${m} readings)`;
  let x: number | null = null;
  let interval: [number | null, number | null] | null = null;
  const inside = inv.roots.filter((r) => r.x >= lo && r.x <= hi);
  if (inside.length > 1 || (inside.length === 0 && inv.roots.length > 1)) {
    flags.push({
      kind: 'several-roots',
      message: `${reading} is met by the curve at ${inv.roots.length} values of ${input.xLabel} (${inv.roots.map((r) => fmtNum(r.x)).join(', ')}), so no single value reads off — the curve is not monotone there; fit a monotone model or restrict the standards' range`,
    });
  } else if (inv.roots.length === 1 || inside.length === 1) {
    const r = inside.length === 1 ? inside[0] : inv.roots[0];
    x = r.x;
    interval = r.interval;
    if (r.x > hi)
      flags.push({
        kind: 'above-range',
        message: `${reading} reads off at ${input.xLabel} = ${fmtNum(r.x)}, above the highest standard (${fmtNum(hi)}): the value is extrapolated — dilute the sample further and assay it again`,
      });
    else if (r.x < lo)
      flags.push({
        kind: 'below-range',
        message: `${reading} reads off at ${input.xLabel} = ${fmtNum(r.x)}, below the lowest standard (${fmtNum(lo)}): the value is extrapolated — report it as below the calibrated range, or assay it less diluted`,
      });
  } else {
    // no x gives the reading: beyond the curve's reach at one end (a plateau, or a reading past the asymptote)
    const nearHigh = Math.abs(meanY - fHi) <= Math.abs(meanY - fLo);
    const flat = inv.flat ? ` (the curve is flat at this reading over ${input.xLabel} ${fmtNum(inv.flat[0])} to ${fmtNum(inv.flat[1])})` : '';
    flags.push(
      nearHigh
        ? {
            kind: 'above-curve',
            message: `${reading} is beyond what the curve reaches at its high end (${fmtNum(fHi)} at ${input.xLabel} = ${fmtNum(hi)})${flat}: there is no finite value — dilute the sample and assay it again`,
          }
        : {
            kind: 'below-curve',
            message: `${reading} is beyond what the curve reaches at its low end (${fmtNum(fLo)} at ${input.xLabel} = ${fmtNum(lo)})${flat}: there is no finite value — report it as below the lowest standard`,
          },
    );
  }
  if (x !== null && interval) {
    if (interval[0] === null && interval[1] === null)
      flags.push({
        kind: 'no-interval',
        message: `the interval of ${input.xLabel} for ${reading} has no finite limit: the prediction band is wider than the curve's rise here (a plateau) — the value is not determined; dilute or concentrate the sample into the steep part of the curve`,
      });
    else if (interval[0] === null || interval[1] === null) {
      const end = interval[1] === null ? 'upper' : 'lower';
      flags.push({
        kind: 'open-interval',
        message: `the interval of ${input.xLabel} for ${reading} has no ${end} limit: the reading cannot be told apart from the curve's ${(end === 'upper') === fHi >= fLo ? 'top' : 'bottom'} plateau — move the sample into the steep part of the curve by ${end === 'upper' ? 'diluting' : 'concentrating'} it`,
      });
    }
  } else if (x !== null) interval = null;
  const d = input.dilution;
  const back = input.xScale ? inverseOf(input.xScale.transform) : (v: number) => v;
  const orig = (v: number | null) => (v === null ? null : back(v));
  const xo = orig(x);
  const io: [number | null, number | null] | null = interval ? [orig(interval[0]), orig(interval[1])] : null;
  const scaleEnd = (v: number | null) => (v === null ? null : v * d);
  return {
    id: input.id,
    rows: input.rows,
    m,
    y: input.y,
    meanY,
    sdY: sd(input.y, input.freq),
    x,
    ...(input.xScale ? { xOriginal: { column: input.xScale.column, transform: input.xScale.transform, x: xo, interval: io } } : {}),
    interval,
    dilution: d,
    value: xo === null ? null : xo * d,
    valueInterval: io ? [scaleEnd(io[0]), scaleEnd(io[1])] : null,
    flags,
  };
}

/** Recovery % of a value against its nominal, and pass/fail against an acceptance range in %. */
export function recovery(
  value: number | null,
  interval: [number | null, number | null] | null,
  nominal: number,
  accept: [number, number] | null,
): { recovery: number | null; recoveryInterval: [number | null, number | null] | null; pass: boolean | null } {
  if (value === null || !(nominal !== 0) || !Number.isFinite(nominal)) return { recovery: null, recoveryInterval: null, pass: null };
  const pct = (v: number | null) => (v === null ? null : (100 * v) / nominal);
  const r = (100 * value) / nominal;
  let ri: [number | null, number | null] | null = interval ? [pct(interval[0]), pct(interval[1])] : null;
  // a negative nominal swaps the ends
  if (ri && nominal < 0) ri = [ri[1], ri[0]];
  return { recovery: r, recoveryInterval: ri, pass: accept ? r >= accept[0] && r <= accept[1] : null };
}

/** Each standard level (distinct x) back-calculated from the mean of its readings, and its recovery against x. */
export function standardsRecovery(ctx: PredictionContext, ys: ArrayLike<number>, accept: [number, number] | null, xScale?: ReadOffInput['xScale'], count?: ArrayLike<number> | null): StandardRecovery[] {
  const inv = xScale ? inverseOf(xScale.transform) : (v: number) => v;
  const X = ctx.X[0];
  const levels = new Map<number, number[]>();
  for (let i = 0; i < X.length; i++) {
    const list = levels.get(X[i]);
    if (list) list.push(i);
    else levels.set(X[i], [i]);
  }
  const out: StandardRecovery[] = [];
  for (const x of [...levels.keys()].sort((a, b) => a - b)) {
    const idx = levels.get(x)!;
    const y = idx.map((i) => ys[i]);
    const freq = count ? idx.map((i) => count[i]) : undefined;
    const r = readOff(ctx, { id: String(x), rows: [], y, dilution: 1, xLabel: 'x', ...(xScale ? { xScale } : {}), ...(freq ? { freq } : {}) });
    // on the original scale when x is transformed: the recovery of the concentration, not of its logarithm
    const nominal = inv(x);
    const rec = nominal !== 0 ? recovery(r.value, r.valueInterval, nominal, accept) : { recovery: null, pass: null };
    // a level on a plateau (an interval with an open end) cannot be quantified, so it is not judged (pass null)
    const open = !r.interval || r.interval[0] === null || r.interval[1] === null;
    out.push({ x, m: r.m, meanY: r.meanY, back: r.x, interval: r.interval, recovery: rec.recovery, pass: open ? null : rec.pass });
  }
  return out;
}

export interface LimitsInput {
  /** true for a straight line (builtin linear, polynomial 1): the ICH Q2(R1) formulas apply */
  line: boolean;
  /** the slope of the line (line only) */
  slope?: number;
  /** σ from the residuals or the blanks, with the blank readings' count (0 for residual) */
  sigma: { from: 'residual' | 'blanks'; value: number | null; n: number };
  /** blank x (0) and its response: the fitted value there (residual σ) or the mean of the blank readings */
  blankX: number;
  blankY: number | null;
  /** interval multiplier at the spec's confidence (t on the fit's dof, or t on n−1 for blanks) */
  qBlank: number;
}

/**
 * LOD and LOQ. A line: ICH Q2(R1) LOD = 3.3·σ/|slope|, LOQ = 10·σ/|slope|. A curve: the x where the curve reaches
 * yB ± 3.3σ and yB ± 10σ (the sign of the curve's rise), found by bisection on the band grid. Both: the Hubaux–Vos
 * detection limit — the decision level yC = the blank's upper prediction limit (residual σ: the band at x = blank;
 * blanks: ȳB + q·sB·√(1 + 1/nB)), then the smallest x whose lower prediction limit reaches yC.
 */
export function detectionLimits(ctx: PredictionContext, input: LimitsInput, model: string, modelFrom: LimitsReport['modelFrom']): LimitsReport {
  const { lo, hi, fLo, fHi } = curveEnds(ctx);
  const rising = fHi >= fLo;
  const sign = rising ? 1 : -1;
  const s = input.sigma.value;
  const yB = input.blankY;
  const predict = makePredictor(ctx);
  const xv = new Float64Array(1);
  const f = (x: number) => ctx.compiled.at(ctx.theta, Float64Array.of(x));
  const extHi = hi + (hi - lo);
  const start = input.blankX;
  /** smallest x in (start, extHi] where g(x) ≥ 0 (g(start) < 0), by a grid and bisection; null when none */
  const firstCrossing = (g: (x: number) => number): number | null => {
    const m = 2000;
    let prev = start;
    if (!(g(prev) < 0)) return g(prev) >= 0 ? prev : null;
    for (let k = 1; k <= m; k++) {
      const x = start + ((extHi - start) * k) / m;
      const v = g(x);
      if (v >= 0) return bisectBoundary(g, prev, x);
      prev = x;
    }
    return null;
  };
  let lod: number | null = null;
  let loq: number | null = null;
  let convention: LimitsReport['convention'] = 'response';
  if (s !== null && Number.isFinite(s) && s > 0) {
    if (input.line && input.slope !== undefined && input.slope !== 0 && Number.isFinite(input.slope)) {
      convention = 'ich-line';
      lod = (3.3 * s) / Math.abs(input.slope);
      loq = (10 * s) / Math.abs(input.slope);
    } else if (yB !== null) {
      lod = firstCrossing((x) => sign * (f(x) - yB) - 3.3 * s);
      loq = firstCrossing((x) => sign * (f(x) - yB) - 10 * s);
      if (lod !== null) lod -= input.blankX;
      if (loq !== null) loq -= input.blankX;
    }
  }
  // Hubaux–Vos: decision level, then the smallest x whose lower (rising) prediction limit reaches it
  let decisionY: number | null = null;
  if (input.sigma.from === 'residual') {
    xv[0] = input.blankX;
    const pr = predict(xv);
    if (Number.isFinite(pr.sePred)) decisionY = pr.y + sign * ctx.q * pr.sePred;
  } else if (yB !== null && s !== null && input.sigma.n >= 2) {
    decisionY = yB + sign * input.qBlank * s * Math.sqrt(1 + 1 / input.sigma.n);
  }
  let xD: number | null = null;
  if (decisionY !== null && Number.isFinite(ctx.q)) {
    const yC = decisionY;
    xD = firstCrossing((x) => {
      xv[0] = x;
      const pr = predict(xv);
      const v = sign * (pr.y - sign * ctx.q * pr.sePred - yC);
      return Number.isFinite(v) ? v : -Infinity;
    });
    if (xD !== null) xD -= input.blankX;
  }
  const sigmaWords =
    input.sigma.from === 'residual' ? `σ = the fit's residual standard deviation (${s !== null ? fmtNum(s) : 'not available'})` : `σ = the standard deviation of ${input.sigma.n} blank readings (${s !== null ? fmtNum(s) : 'not available'})`;
  const conv =
    convention === 'ich-line'
      ? 'LOD = 3.3·σ/|slope| and LOQ = 10·σ/|slope| of the straight line (ICH Q2(R1), "based on the standard deviation of the response and the slope")'
      : `LOD and LOQ are the x where the curve moves 3.3·σ and 10·σ away from the blank's response ${yB !== null ? fmtNum(yB) : ''} (the same rule as 3.3·σ/slope for a line, read off the curve; common practice)`;
  const note =
    `${conv}, with ${sigmaWords}. The detection limit (Hubaux & Vos 1970) is the smallest x whose lower prediction limit clears the blank's upper prediction limit ` +
    `at the spec's confidence. These are conventions, not properties of the method: validate any limit under your laboratory's own procedure and local regulations before reporting results with it.`;
  return {
    model,
    modelFrom,
    sigma: input.sigma,
    blank: { x: input.blankX, y: yB },
    convention,
    lod,
    loq,
    detection: { decisionY, x: xD },
    note,
  };
}

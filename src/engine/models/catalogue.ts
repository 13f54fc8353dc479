// Built-in model catalogue (DESIGN.md table): formula text, parameter meanings, default bounds and self-starting
// estimates. Self-starts use the classical linearisation of each model (log, log-log, Lineweaver–Burk, Arrhenius plot,
// curve peeling, Steinhart–Hart in 1/T) as one candidate and a coarse profile grid over the model's nonlinear
// parameters as the others, the linear parameters solved exactly by least squares for every candidate (common
// practice for conditionally linear models); the candidate of least SSE is returned, unrefined — the solver takes it
// from there. Every self-start ignores rows with non-finite x or y, accepts unsorted x, and returns null when the data
// cannot support an estimate (too few points, or x outside the model's domain everywhere).
import { column, lineFit, linSpace, logSpace, product, profileSearch, smallLsq, summarize, type XYSummary } from './lsq';

export interface BuiltinModel {
  id: string;
  /** formula text in the formula language; part of the interface (DESIGN.md) */
  formula: string;
  /** parameter names in the order reported */
  params: string[];
  description: string;
  /** what each parameter means, with a units hint */
  meanings: Record<string, string>;
  /** self-starting estimate from the data (single x variable); null when none can be formed */
  selfStart(x: Float64Array, y: Float64Array): Record<string, number> | null;
  /** default bounds, only where the formula is undefined otherwise (documented per model) */
  lower?: Record<string, number>;
  upper?: Record<string, number>;
  /** how the self-start works and where it comes from */
  selfStartNote: string;
}

/** Gas constant in J/(mol·K), CODATA 2018 exact value (as in the arrhenius formula text). */
export const GAS_CONSTANT = 8.314462618;

/** Signed rates: ± m log-spaced magnitudes from 1e-3/span to 30/span (covering a negligible to a very fast change over the x range). */
function signedRates(span: number, m: number): number[] {
  const s = span > 0 ? span : 1;
  const mags = logSpace(1e-3 / s, 30 / s, m);
  return [...mags, ...mags.map((v) => -v)];
}

/** Locations from somewhat before the first x to somewhat after the last. */
function locations(d: XYSummary, m: number, margin = 0.5): number[] {
  const s = d.span > 0 ? d.span : Math.abs(d.xmin) || 1;
  return linSpace(d.xmin - margin * s, d.xmax + margin * s, m);
}

/** Positive scales (half-saturation, ec50, Weibull scale): log-spaced from a tenth of the smallest positive x to ten times the largest. */
function positiveScales(d: XYSummary, m: number): number[] {
  if (!(d.xmax > 0)) return [];
  const lo = Number.isFinite(d.xposMin) ? d.xposMin / 10 : d.xmax / 1000;
  return logSpace(lo, d.xmax * 10, m);
}

function finiteRecord(r: Record<string, number>): Record<string, number> | null {
  for (const k of Object.keys(r)) if (!Number.isFinite(r[k])) return null;
  return r;
}

/** Indices of x sorted ascending. */
function order(x: Float64Array): number[] {
  return Array.from(x.keys()).sort((a, b) => x[a] - x[b]);
}

/** Log-linear fit ln|y| = a + b·x over the rows where y has the majority sign; null when too few. */
function logLinear(x: ArrayLike<number>, y: ArrayLike<number>): { sign: number; a: number; b: number } | null {
  let pos = 0;
  let neg = 0;
  for (let i = 0; i < y.length; i++) {
    if (y[i] > 0) pos++;
    else if (y[i] < 0) neg++;
  }
  const sign = pos >= neg ? 1 : -1;
  const xs: number[] = [];
  const ls: number[] = [];
  for (let i = 0; i < y.length; i++) {
    if (sign * y[i] > 0) {
      xs.push(x[i]);
      ls.push(Math.log(sign * y[i]));
    }
  }
  if (xs.length < 2) return null;
  const f = lineFit(xs, ls);
  return f ? { sign, a: f.a, b: f.b } : null;
}

const ONE = (d: XYSummary): Float64Array => new Float64Array(d.n).fill(1);

// ---------------------------------------------------------------------------------------------- the models

const linear: BuiltinModel = {
  id: 'linear',
  formula: 'intercept + slope*x',
  params: ['intercept', 'slope'],
  description: 'Straight line.',
  meanings: { intercept: 'value of y at x = 0 (units of y)', slope: 'change of y per unit x (units of y per unit x)' },
  selfStartNote: 'Ordinary least squares (exact; the model is linear).',
  selfStart(x, y) {
    const d = summarize(x, y, 2);
    if (!d) return null;
    const f = lineFit(d.x, d.y);
    return f ? finiteRecord({ intercept: f.a, slope: f.b }) : null;
  },
};

const exponential: BuiltinModel = {
  id: 'exponential',
  formula: 'A*exp(k*x)',
  params: ['A', 'k'],
  description: 'Exponential growth (k > 0) or decay (k < 0) without offset.',
  meanings: { A: 'value of y at x = 0 (units of y)', k: 'rate constant (per unit x); doubling/halving x is ln 2/|k|' },
  selfStartNote: 'Log-linear fit of ln|y| on x (common practice), plus a profile over k with A by least squares.',
  selfStart(x, y) {
    const d = summarize(x, y, 2);
    if (!d) return null;
    const ks = [0, ...signedRates(d.span, 25)];
    const ll = logLinear(d.x, d.y);
    if (ll) ks.push(ll.b);
    const best = profileSearch(ks.map((k) => [k]), ([k]) => [column(d.x, (xi) => Math.exp(k * xi))], d.y);
    return best ? finiteRecord({ A: best.coef[0], k: best.q[0] }) : null;
  },
};

const exponentialOffset: BuiltinModel = {
  id: 'exponential_offset',
  formula: 'A*exp(k*x) + C',
  params: ['A', 'k', 'C'],
  description: 'Exponential growth or decay towards / away from an offset C.',
  meanings: { A: 'amplitude: y − C at x = 0 (units of y)', k: 'rate constant (per unit x)', C: 'offset, the asymptote when k < 0 (units of y)' },
  selfStartNote: 'Offset estimated from the tail then ln|y − C| on x (common practice), plus a profile over k with A and C by least squares.',
  selfStart(x, y) {
    const d = summarize(x, y, 3);
    if (!d) return null;
    const ks = signedRates(d.span, 30);
    const idx = order(d.x);
    const tail = d.y[idx[idx.length - 1]];
    const head = d.y[idx[0]];
    // asymptote from the tail: just beyond the last value, on the side away from the first one
    const C0 = tail + 0.05 * (tail - head);
    const ll = logLinear(d.x, Array.from(d.y, (v) => v - C0));
    if (ll) ks.push(ll.b);
    const best = profileSearch(ks.map((k) => [k]), ([k]) => [column(d.x, (xi) => Math.exp(k * xi)), ONE(d)], d.y);
    return best ? finiteRecord({ A: best.coef[0], k: best.q[0], C: best.coef[1] }) : null;
  },
};

const exponentialBase: BuiltinModel = {
  id: 'exponential_base',
  formula: 'a + b*c^x',
  params: ['a', 'b', 'c'],
  description: 'Exponential with an explicit base c and an offset a.',
  meanings: { a: 'offset, the asymptote when c < 1 (units of y)', b: 'y − a at x = 0 (units of y)', c: 'growth factor per unit x (dimensionless, > 0)' },
  lower: { c: 0 },
  selfStartNote: 'As exponential_offset with c = e^k: profile over c with a and b by least squares. Bound c ≥ 0 because c^x is undefined for c < 0 and non-integer x.',
  selfStart(x, y) {
    const e = exponentialOffset.selfStart(x, y);
    if (!e) return null;
    return finiteRecord({ a: e.C, b: e.A, c: Math.exp(e.k) });
  },
};

const doubleExponential: BuiltinModel = {
  id: 'double_exponential',
  formula: 'A1*exp(-k1*x) + A2*exp(-k2*x)',
  params: ['A1', 'k1', 'A2', 'k2'],
  description: 'Sum of two exponentials (bi-exponential decay); the self-start labels the slower phase 1.',
  meanings: {
    A1: 'amplitude of the slow phase (phase 1) at x = 0 (units of y)',
    k1: 'rate constant of the slow phase, reported below k2 (per unit x)',
    A2: 'amplitude of the fast phase (phase 2) at x = 0 (units of y)',
    k2: 'rate constant of the fast phase (per unit x)',
  },
  selfStartNote:
    'Curve peeling (method of residuals: log-linear fit of the tail, then of the early residuals; common practice in pharmacokinetics) plus a profile over (k1 < k2) with the amplitudes by least squares.',
  selfStart(x, y) {
    const d = summarize(x, y, 4);
    if (!d) return null;
    const rates = [0, ...signedRates(d.span, 16)].map((v) => -v); // k in the formula multiplies −x
    const grid: number[][] = [];
    for (const k1 of rates) for (const k2 of rates) if (k1 < k2) grid.push([k1, k2]);
    // curve peeling
    const idx = order(d.x);
    const half = Math.floor(idx.length / 2);
    const lateX = idx.slice(half).map((i) => d.x[i]);
    const lateY = idx.slice(half).map((i) => d.y[i]);
    const slow = logLinear(lateX, lateY);
    if (slow) {
      const k1 = -slow.b;
      const A1 = slow.sign * Math.exp(slow.a);
      const earlyX = idx.slice(0, half).map((i) => d.x[i]);
      const earlyR = idx.slice(0, half).map((i) => d.y[i] - A1 * Math.exp(-k1 * d.x[i]));
      const fast = logLinear(earlyX, earlyR);
      if (fast && Number.isFinite(k1) && Number.isFinite(-fast.b) && -fast.b !== k1) {
        grid.push(k1 < -fast.b ? [k1, -fast.b] : [-fast.b, k1]);
      }
    }
    const best = profileSearch(
      grid,
      ([k1, k2]) => [column(d.x, (xi) => Math.exp(-k1 * xi)), column(d.x, (xi) => Math.exp(-k2 * xi))],
      d.y,
    );
    return best ? finiteRecord({ A1: best.coef[0], k1: best.q[0], A2: best.coef[1], k2: best.q[1] }) : null;
  },
};

const logarithmic: BuiltinModel = {
  id: 'logarithmic',
  formula: 'a + b*log(x)',
  params: ['a', 'b'],
  description: 'Linear in the natural logarithm of x (x > 0).',
  meanings: { a: 'value of y at x = 1 (units of y)', b: 'change of y per e-fold of x (units of y)' },
  selfStartNote: 'Ordinary least squares of y on ln x over the rows with x > 0 (exact; the model is linear).',
  selfStart(x, y) {
    const d = summarize(x, y, 2);
    if (!d) return null;
    const xs: number[] = [];
    const ys: number[] = [];
    for (let i = 0; i < d.n; i++) if (d.x[i] > 0) (xs.push(Math.log(d.x[i])), ys.push(d.y[i]));
    const f = lineFit(xs, ys);
    return f ? finiteRecord({ a: f.a, b: f.b }) : null;
  },
};

const power: BuiltinModel = {
  id: 'power',
  formula: 'a*x^b',
  params: ['a', 'b'],
  description: 'Power law (allometric) relation.',
  meanings: { a: 'value of y at x = 1 (units of y)', b: 'exponent (dimensionless)' },
  selfStartNote: 'Log-log fit of ln|y| on ln x (common practice), plus a profile over b with a by least squares.',
  selfStart(x, y) {
    const d = summarize(x, y, 2);
    if (!d) return null;
    const bs = linSpace(-4, 4, 33);
    const lx: number[] = [];
    const yy: number[] = [];
    for (let i = 0; i < d.n; i++) if (d.x[i] > 0) (lx.push(Math.log(d.x[i])), yy.push(d.y[i]));
    const ll = logLinear(lx, yy);
    if (ll) bs.push(ll.b);
    const best = profileSearch(bs.map((b) => [b]), ([b]) => [column(d.x, (xi) => xi ** b)], d.y);
    return best ? finiteRecord({ a: best.coef[0], b: best.q[0] }) : null;
  },
};

const michaelisMenten: BuiltinModel = {
  id: 'michaelis_menten',
  formula: 'Vmax*x/(Km + x)',
  params: ['Vmax', 'Km'],
  description: 'Michaelis–Menten saturation (enzyme kinetics, binding, uptake).',
  meanings: { Vmax: 'limiting rate as x → ∞ (units of y)', Km: 'x at half of Vmax (units of x)' },
  selfStartNote: 'Lineweaver–Burk double-reciprocal line (Lineweaver & Burk 1934) plus a profile over Km with Vmax by least squares.',
  selfStart(x, y) {
    const d = summarize(x, y, 2);
    if (!d) return null;
    const kms = positiveScales(d, 40);
    const rx: number[] = [];
    const ry: number[] = [];
    for (let i = 0; i < d.n; i++) if (d.x[i] > 0 && d.y[i] !== 0) (rx.push(1 / d.x[i]), ry.push(1 / d.y[i]));
    const lb = lineFit(rx, ry);
    if (lb && lb.a !== 0 && lb.b / lb.a > 0) kms.push(lb.b / lb.a);
    const best = profileSearch(kms.map((k) => [k]), ([Km]) => [column(d.x, (xi) => xi / (Km + xi))], d.y);
    return best ? finiteRecord({ Vmax: best.coef[0], Km: best.q[0] }) : null;
  },
};

const hill: BuiltinModel = {
  id: 'hill',
  formula: 'Vmax*x^n/(K^n + x^n)',
  params: ['Vmax', 'K', 'n'],
  description: 'Hill equation: cooperative saturation with Hill coefficient n.',
  meanings: { Vmax: 'limiting response as x → ∞ (units of y)', K: 'x at half of Vmax (units of x, > 0)', n: 'Hill coefficient (dimensionless)' },
  lower: { K: 0 },
  selfStartNote: 'Profile over (K, n) with Vmax by least squares (common practice). Bound K ≥ 0 because K^n is undefined for K < 0 and non-integer n.',
  selfStart(x, y) {
    const d = summarize(x, y, 3);
    if (!d) return null;
    const ns = [0.5, 0.75, 1, 1.5, 2, 3, 4, 6];
    const grid = product(positiveScales(d, 25), [...ns, ...ns.map((v) => -v)]);
    const best = profileSearch(grid, ([K, n]) => [column(d.x, (xi) => xi ** n / (K ** n + xi ** n))], d.y);
    return best ? finiteRecord({ Vmax: best.coef[0], K: best.q[0], n: best.q[1] }) : null;
  },
};

function sigmoidGrid(d: XYSummary, m: number, l: number): number[][] {
  return product(signedRates(d.span, m), locations(d, l));
}

const logistic3: BuiltinModel = {
  id: 'logistic3',
  formula: 'K/(1 + exp(-r*(x - x0)))',
  params: ['K', 'r', 'x0'],
  description: 'Three-parameter logistic growth from 0 to the carrying capacity K.',
  meanings: { K: 'upper asymptote, carrying capacity (units of y)', r: 'growth rate (per unit x)', x0: 'x at the inflection point, y = K/2 (units of x)' },
  selfStartNote: 'Profile over (r, x0) with K by least squares; the grid contains the logit line of y/K on x (common practice).',
  selfStart(x, y) {
    const d = summarize(x, y, 3);
    if (!d) return null;
    const grid = sigmoidGrid(d, 14, 25);
    // logit linearisation with K just above the largest |y|
    const K0 = 1.05 * Math.max(Math.abs(d.ymax), Math.abs(d.ymin));
    if (K0 > 0) {
      const xs: number[] = [];
      const ls: number[] = [];
      for (let i = 0; i < d.n; i++) {
        const p = d.y[i] / K0;
        if (p > 0 && p < 1) (xs.push(d.x[i]), ls.push(Math.log(p / (1 - p))));
      }
      const f = lineFit(xs, ls);
      if (f && f.b !== 0) grid.push([f.b, -f.a / f.b]);
    }
    const best = profileSearch(grid, ([r, x0]) => [column(d.x, (xi) => 1 / (1 + Math.exp(-r * (xi - x0))))], d.y);
    return best ? finiteRecord({ K: best.coef[0], r: best.q[0], x0: best.q[1] }) : null;
  },
};

const SLOPES = [0.25, 0.5, 0.75, 1, 1.5, 2, 3, 4, 6, 10];

const logistic4: BuiltinModel = {
  id: 'logistic4',
  formula: 'lower + (upper - lower)/(1 + (ec50/x)^slope)',
  params: ['lower', 'upper', 'ec50', 'slope'],
  description: 'Four-parameter logistic dose–response curve in x (x > 0).',
  meanings: {
    lower: 'the lower asymptote, reported below upper: the response as x → 0 when slope > 0, as x → ∞ when slope < 0 (units of y)',
    upper: 'the upper asymptote: the response as x → ∞ when slope > 0, as x → 0 when slope < 0 (units of y)',
    ec50: 'x at the midpoint between lower and upper (units of x, > 0)',
    slope: 'steepness on a log-x scale: > 0 for a rising curve, < 0 for a falling one (dimensionless)',
  },
  lower: { ec50: 0 },
  selfStartNote:
    'Profile over (ec50, slope) with lower and upper by least squares (common practice), reported with slope > 0 (the same curve with lower and upper swapped). Bound ec50 ≥ 0 because (ec50/x)^slope is undefined for ec50/x < 0.',
  selfStart(x, y) {
    const d = summarize(x, y, 4);
    if (!d) return null;
    const grid = product(positiveScales(d, 30), [...SLOPES, ...SLOPES.map((v) => -v)]);
    const best = profileSearch(
      grid,
      ([c, s]) => {
        const g = column(d.x, (xi) => 1 / (1 + (c / xi) ** s));
        return [column(g, (gi) => 1 - gi), g];
      },
      d.y,
    );
    if (!best) return null;
    // (lower, upper, ec50, slope) and (upper, lower, ec50, −slope) are the same curve: report slope > 0 (the usual
    // convention, and the side users bound)
    const [lo, up] = best.q[1] > 0 ? best.coef : [best.coef[1], best.coef[0]];
    return finiteRecord({ lower: lo, upper: up, ec50: best.q[0], slope: Math.abs(best.q[1]) });
  },
};

const logistic5: BuiltinModel = {
  id: 'logistic5',
  formula: 'lower + (upper - lower)/(1 + (xc/x)^slope)^asym',
  params: ['lower', 'upper', 'xc', 'slope', 'asym'],
  description: 'Five-parameter (asymmetric) logistic dose–response curve in x (x > 0).',
  meanings: {
    lower: 'response as x → 0 when slope > 0 (units of y)',
    upper: 'response as x → ∞ when slope > 0 (units of y)',
    xc: 'location on the x axis; the midpoint when asym = 1 (units of x, > 0)',
    slope: 'steepness on a log-x scale (dimensionless)',
    asym: 'asymmetry exponent; 1 gives logistic4 (dimensionless)',
  },
  lower: { xc: 0 },
  selfStartNote: 'Profile over (xc, slope, asym) with lower and upper by least squares (common practice). Bound xc ≥ 0 as ec50 in logistic4.',
  selfStart(x, y) {
    const d = summarize(x, y, 5);
    if (!d) return null;
    const sl = [0.5, 1, 2, 4, 8];
    const grid = product(positiveScales(d, 20), [...sl, ...sl.map((v) => -v)], [0.25, 0.5, 1, 2, 4]);
    const best = profileSearch(
      grid,
      ([c, s, a]) => {
        const g = column(d.x, (xi) => (1 + (c / xi) ** s) ** -a);
        return [column(g, (gi) => 1 - gi), g];
      },
      d.y,
    );
    return best
      ? finiteRecord({ lower: best.coef[0], upper: best.coef[1], xc: best.q[0], slope: best.q[1], asym: best.q[2] })
      : null;
  },
};

const gompertz: BuiltinModel = {
  id: 'gompertz',
  formula: 'K*exp(-exp(-r*(x - x0)))',
  params: ['K', 'r', 'x0'],
  description: 'Gompertz growth curve (asymmetric sigmoid, inflection at y = K/e).',
  meanings: { K: 'upper asymptote (units of y)', r: 'growth rate (per unit x)', x0: 'x at the inflection point (units of x)' },
  selfStartNote: 'Profile over (r, x0) with K by least squares (common practice).',
  selfStart(x, y) {
    const d = summarize(x, y, 3);
    if (!d) return null;
    const best = profileSearch(sigmoidGrid(d, 14, 25), ([r, x0]) => [column(d.x, (xi) => Math.exp(-Math.exp(-r * (xi - x0))))], d.y);
    return best ? finiteRecord({ K: best.coef[0], r: best.q[0], x0: best.q[1] }) : null;
  },
};

const richards: BuiltinModel = {
  id: 'richards',
  formula: 'K/(1 + nu*exp(-r*(x - x0)))^(1/nu)',
  params: ['K', 'r', 'x0', 'nu'],
  description: 'Richards generalised logistic; nu = 1 gives logistic3, nu → 0 approaches Gompertz.',
  meanings: {
    K: 'upper asymptote (units of y)',
    r: 'growth rate (per unit x)',
    x0: 'location on the x axis; the inflection point when nu = 1 (units of x)',
    nu: 'shape exponent (dimensionless, ≠ 0)',
  },
  selfStartNote: 'Profile over (r, x0, nu) with K by least squares (common practice).',
  selfStart(x, y) {
    const d = summarize(x, y, 4);
    if (!d) return null;
    const grid = product(signedRates(d.span, 10), locations(d, 17), [0.25, 0.5, 1, 2, 4]);
    const best = profileSearch(
      grid,
      ([r, x0, nu]) => [column(d.x, (xi) => (1 + nu * Math.exp(-r * (xi - x0))) ** (-1 / nu))],
      d.y,
    );
    return best ? finiteRecord({ K: best.coef[0], r: best.q[0], x0: best.q[1], nu: best.q[2] }) : null;
  },
};

const weibullGrowth: BuiltinModel = {
  id: 'weibull_growth',
  formula: 'upper - (upper - y0)*exp(-(x/scale)^shape)',
  params: ['upper', 'y0', 'scale', 'shape'],
  description: 'Weibull-type growth from y0 at x = 0 to the asymptote upper (x ≥ 0).',
  meanings: {
    upper: 'asymptote as x → ∞ (units of y)',
    y0: 'value at x = 0 (units of y)',
    scale: 'x at which 1 − 1/e of the rise is done (units of x, > 0)',
    shape: 'shape exponent; 1 gives the asymptotic model (dimensionless)',
  },
  lower: { scale: 0 },
  selfStartNote:
    'Asymptote and start solved by least squares over a profile of (scale, shape) (common practice). Bound scale ≥ 0 because (x/scale)^shape is undefined for negative x/scale.',
  selfStart(x, y) {
    const d = summarize(x, y, 4);
    if (!d) return null;
    const grid = product(positiveScales(d, 25), [0.5, 0.75, 1, 1.5, 2, 3, 4, 6]);
    const best = profileSearch(
      grid,
      ([s, k]) => {
        const E = column(d.x, (xi) => Math.exp(-((xi / s) ** k)));
        return [column(E, (e) => 1 - e), E];
      },
      d.y,
    );
    return best ? finiteRecord({ upper: best.coef[0], y0: best.coef[1], scale: best.q[0], shape: best.q[1] }) : null;
  },
};

const asymptotic: BuiltinModel = {
  id: 'asymptotic',
  formula: 'upper - (upper - y0)*exp(-k*x)',
  params: ['upper', 'y0', 'k'],
  description: 'Asymptotic regression (monomolecular growth / first-order approach to a plateau).',
  meanings: { upper: 'asymptote as x → ∞ when k > 0 (units of y)', y0: 'value at x = 0 (units of y)', k: 'rate constant (per unit x)' },
  selfStartNote: 'Asymptote from the tail and ln|upper − y| on x (common practice), plus a profile over k with upper and y0 by least squares.',
  selfStart(x, y) {
    const d = summarize(x, y, 3);
    if (!d) return null;
    const ks = signedRates(d.span, 30);
    const idx = order(d.x);
    const tail = d.y[idx[idx.length - 1]];
    const head = d.y[idx[0]];
    const U0 = tail + 0.05 * (tail - head);
    const ll = logLinear(d.x, Array.from(d.y, (v) => U0 - v));
    if (ll) ks.push(-ll.b);
    const best = profileSearch(
      ks.map((k) => [k]),
      ([k]) => {
        const E = column(d.x, (xi) => Math.exp(-k * xi));
        return [column(E, (e) => 1 - e), E];
      },
      d.y,
    );
    return best ? finiteRecord({ upper: best.coef[0], y0: best.coef[1], k: best.q[0] }) : null;
  },
};

/** Peak grid: centres across the x range plus the x of the largest |y|, widths log-spaced. */
function peakGrid(d: XYSummary): number[][] {
  let iPeak = 0;
  for (let i = 1; i < d.n; i++) if (Math.abs(d.y[i]) > Math.abs(d.y[iPeak])) iPeak = i;
  const s = d.span > 0 ? d.span : Math.abs(d.xmin) || 1;
  const centres = [...linSpace(d.xmin, d.xmax, 41), d.x[iPeak]];
  return product(centres, logSpace(s / 200, 2 * s, 25));
}

const gaussian: BuiltinModel = {
  id: 'gaussian',
  formula: 'height*exp(-(x - center)^2/(2*width^2))',
  params: ['height', 'center', 'width'],
  description: 'Gaussian peak without baseline.',
  meanings: { height: 'peak height (units of y)', center: 'peak position (units of x)', width: 'standard deviation of the peak, reported > 0; FWHM = 2.3548·width (units of x)' },
  selfStartNote: 'Peak position from the largest |y|, then a profile over (center, width) with height by least squares (common practice).',
  selfStart(x, y) {
    const d = summarize(x, y, 3);
    if (!d) return null;
    const best = profileSearch(peakGrid(d), ([c, s]) => [column(d.x, (xi) => Math.exp(-((xi - c) ** 2) / (2 * s * s)))], d.y);
    return best ? finiteRecord({ height: best.coef[0], center: best.q[0], width: best.q[1] }) : null;
  },
};

const lorentzian: BuiltinModel = {
  id: 'lorentzian',
  formula: 'height/(1 + ((x - center)/hwhm)^2)',
  params: ['height', 'center', 'hwhm'],
  description: 'Lorentzian (Cauchy) peak without baseline.',
  meanings: { height: 'peak height (units of y)', center: 'peak position (units of x)', hwhm: 'half width at half maximum, reported > 0 (units of x)' },
  selfStartNote: 'Peak position from the largest |y|, then a profile over (center, hwhm) with height by least squares (common practice).',
  selfStart(x, y) {
    const d = summarize(x, y, 3);
    if (!d) return null;
    const best = profileSearch(peakGrid(d), ([c, h]) => [column(d.x, (xi) => 1 / (1 + ((xi - c) / h) ** 2))], d.y);
    return best ? finiteRecord({ height: best.coef[0], center: best.q[0], hwhm: best.q[1] }) : null;
  },
};

const arrhenius: BuiltinModel = {
  id: 'arrhenius',
  formula: 'A*exp(-Ea/(8.314462618*x))',
  params: ['A', 'Ea'],
  description: 'Arrhenius temperature dependence of a rate (x: absolute temperature in kelvin).',
  meanings: { A: 'pre-exponential factor (units of y)', Ea: 'activation energy (J/mol)' },
  selfStartNote: 'Arrhenius plot: ln y on 1/x, slope −Ea/R (Arrhenius 1889; common practice), plus a profile over Ea with A by least squares.',
  selfStart(x, y) {
    const d = summarize(x, y, 2);
    if (!d) return null;
    const inv: number[] = [];
    const yy: number[] = [];
    for (let i = 0; i < d.n; i++) if (d.x[i] !== 0) (inv.push(1 / d.x[i]), yy.push(d.y[i]));
    if (inv.length < 2) return null;
    const du = Math.max(...inv) - Math.min(...inv);
    // Ea/R such that Ea/(R·x) changes by 0.01 … 60 over the data: a negligible to a very strong dependence
    const mags = du > 0 ? logSpace(0.01 / du, 60 / du, 30) : [];
    const eas = [...mags, ...mags.map((v) => -v)];
    const ll = logLinear(inv, yy);
    if (ll) eas.push(-ll.b);
    const best = profileSearch(eas.map((e) => [e]), ([eR]) => [column(d.x, (xi) => Math.exp(-eR / xi))], d.y);
    return best ? finiteRecord({ A: best.coef[0], Ea: best.q[0] * GAS_CONSTANT }) : null;
  },
};

const steinhartHart: BuiltinModel = {
  id: 'steinhart_hart',
  formula: '1/(a + b*log(x) + c*log(x)^3)',
  params: ['a', 'b', 'c'],
  description: 'Steinhart–Hart thermistor equation (x: resistance in ohm, y: temperature in kelvin).',
  meanings: { a: 'coefficient (1/K)', b: 'coefficient of ln R (1/K)', c: 'coefficient of (ln R)³ (1/K)' },
  selfStartNote:
    'Linear least squares of 1/y on ln x and (ln x)³ (Steinhart & Hart 1968), weighted by y⁴ so the linearised residuals match those in y (common practice).',
  selfStart(x, y) {
    const d = summarize(x, y, 3);
    if (!d) return null;
    const L: number[] = [];
    const inv: number[] = [];
    const w: number[] = [];
    let ymax = 0;
    for (let i = 0; i < d.n; i++) ymax = Math.max(ymax, Math.abs(d.y[i]));
    for (let i = 0; i < d.n; i++) {
      if (d.x[i] > 0 && d.y[i] !== 0) {
        L.push(Math.log(d.x[i]));
        inv.push(1 / d.y[i]);
        w.push((d.y[i] / ymax) ** 4);
      }
    }
    if (L.length < 3) return null;
    const s = smallLsq([L.map(() => 1), L, L.map((l) => l ** 3)], inv, w);
    return s ? finiteRecord({ a: s.coef[0], b: s.coef[1], c: s.coef[2] }) : null;
  },
};

/** Every built-in model by id (DESIGN.md "Built-in catalogue"). */
export const BUILTINS: Record<string, BuiltinModel> = Object.fromEntries(
  [
    linear,
    exponential,
    exponentialOffset,
    exponentialBase,
    doubleExponential,
    logarithmic,
    power,
    michaelisMenten,
    hill,
    logistic3,
    logistic4,
    logistic5,
    gompertz,
    richards,
    weibullGrowth,
    asymptotic,
    gaussian,
    lorentzian,
    arrhenius,
    steinhartHart,
  ].map((m) => [m.id, m]),
);

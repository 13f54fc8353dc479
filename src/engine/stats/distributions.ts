// Distributions: log-gamma (Lanczos, g = 7), regularized incomplete beta and gamma (Numerical Recipes §6.2/§6.4:
// series + Lentz continued fraction), normal/t/F/χ² cdf and quantiles (normal quantile by Acklam's rational
// approximation refined by one Halley step; t, F, χ² quantiles by safeguarded Halley inversion of the incomplete beta/gamma).

const LANCZOS = [
  0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
  12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
];

/** ln Γ(x) for x > 0 (Lanczos approximation, g = 7, n = 9; reflection for x < 0.5). */
export function logGamma(x: number): number {
  if (x < 0.5) return Math.log(Math.PI / Math.abs(Math.sin(Math.PI * x))) - logGamma(1 - x);
  x -= 1;
  let a = LANCZOS[0];
  const t = x + 7.5;
  for (let i = 1; i < 9; i++) a += LANCZOS[i] / (x + i);
  return 0.5 * Math.log(2 * Math.PI) + (x + 0.5) * Math.log(t) - t + Math.log(a);
}

/** ln B(a, b) */
export function logBeta(a: number, b: number): number {
  return logGamma(a) + logGamma(b) - logGamma(a + b);
}

const FPMIN = 1e-300;
const EPS = 1e-16;

/** Continued fraction of the incomplete beta (NR betacf), modified Lentz. */
function betacf(a: number, b: number, x: number): number {
  const qab = a + b;
  const qap = a + 1;
  const qam = a - 1;
  let c = 1;
  let d = 1 - (qab * x) / qap;
  if (Math.abs(d) < FPMIN) d = FPMIN;
  d = 1 / d;
  let h = d;
  for (let m = 1; m <= 10000; m++) {
    const m2 = 2 * m;
    let aa = (m * (b - m) * x) / ((qam + m2) * (a + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < FPMIN) d = FPMIN;
    c = 1 + aa / c;
    if (Math.abs(c) < FPMIN) c = FPMIN;
    d = 1 / d;
    h *= d * c;
    aa = (-(a + m) * (qab + m) * x) / ((a + m2) * (qap + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < FPMIN) d = FPMIN;
    c = 1 + aa / c;
    if (Math.abs(c) < FPMIN) c = FPMIN;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < EPS) break;
  }
  return h;
}

/**
 * Regularized incomplete beta I_x(a, b) and its complement 1 − I_x(a, b), both computed without cancellation.
 */
export function betaIncBoth(x: number, a: number, b: number): { lower: number; upper: number } {
  if (!(a > 0) || !(b > 0) || Number.isNaN(x)) return { lower: NaN, upper: NaN };
  if (x <= 0) return { lower: 0, upper: 1 };
  if (x >= 1) return { lower: 1, upper: 0 };
  const lnFront = a * Math.log(x) + b * Math.log1p(-x) - logBeta(a, b);
  if (x < (a + 1) / (a + b + 2)) {
    const lower = (Math.exp(lnFront) * betacf(a, b, x)) / a;
    return { lower, upper: 1 - lower };
  }
  const upper = (Math.exp(lnFront) * betacf(b, a, 1 - x)) / b;
  return { lower: 1 - upper, upper };
}

/** Regularized incomplete beta I_x(a, b). */
export function betaInc(x: number, a: number, b: number): number {
  return betaIncBoth(x, a, b).lower;
}

/** Regularized lower and upper incomplete gamma P(a, x), Q(a, x) (NR gser / gcf). */
export function gammaIncBoth(a: number, x: number): { lower: number; upper: number } {
  if (!(a > 0) || Number.isNaN(x)) return { lower: NaN, upper: NaN };
  if (x <= 0) return { lower: 0, upper: 1 };
  if (x === Infinity) return { lower: 1, upper: 0 };
  const gln = logGamma(a);
  if (x < a + 1) {
    let ap = a;
    let sum = 1 / a;
    let del = sum;
    for (let k = 0; k < 100000; k++) {
      ap += 1;
      del *= x / ap;
      sum += del;
      if (Math.abs(del) < Math.abs(sum) * EPS) break;
    }
    const lower = sum * Math.exp(-x + a * Math.log(x) - gln);
    return { lower, upper: 1 - lower };
  }
  let b = x + 1 - a;
  let c = 1 / FPMIN;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < 100000; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < FPMIN) d = FPMIN;
    c = b + an / c;
    if (Math.abs(c) < FPMIN) c = FPMIN;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < EPS) break;
  }
  const upper = Math.exp(-x + a * Math.log(x) - gln) * h;
  return { lower: 1 - upper, upper };
}

// ---------------------------------------------------------------- normal

/** Standard normal cdf Φ(z) (via erfc = Q(1/2, z²/2)). */
export function normalCdf(z: number): number {
  if (Number.isNaN(z)) return NaN;
  if (z === 0) return 0.5;
  const q = 0.5 * gammaIncBoth(0.5, (z * z) / 2).upper; // P(Z > |z|)
  return z < 0 ? q : 1 - q;
}

/** Upper tail 1 − Φ(z), accurate for large z. */
export function normalSf(z: number): number {
  return normalCdf(-z);
}

export function normalPdf(z: number): number {
  return Math.exp(-0.5 * z * z) / Math.sqrt(2 * Math.PI);
}

const A_ = [-3.969683028665376e1, 2.209460984245205e2, -2.759285104469687e2, 1.38357751867269e2, -3.066479806614716e1, 2.506628277459239];
const B_ = [-5.447609879822406e1, 1.615858368580409e2, -1.556989798598866e2, 6.680131188771972e1, -1.328068155288572e1];
const C_ = [-7.784894002430293e-3, -3.223964580411365e-1, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783];
const D_ = [7.784695709041462e-3, 3.224671290700398e-1, 2.445134137142996, 3.754408661907416];

/** Standard normal quantile Φ⁻¹(p): Acklam's approximation (relative error 1.15e-9) plus one Halley step. */
export function normalQuantile(p: number): number {
  if (Number.isNaN(p) || p < 0 || p > 1) return NaN;
  if (p === 0) return -Infinity;
  if (p === 1) return Infinity;
  const pLow = 0.02425;
  let x: number;
  if (p < pLow) {
    const q = Math.sqrt(-2 * Math.log(p));
    x = (((((C_[0] * q + C_[1]) * q + C_[2]) * q + C_[3]) * q + C_[4]) * q + C_[5]) / ((((D_[0] * q + D_[1]) * q + D_[2]) * q + D_[3]) * q + 1);
  } else if (p <= 1 - pLow) {
    const q = p - 0.5;
    const r = q * q;
    x = ((((((A_[0] * r + A_[1]) * r + A_[2]) * r + A_[3]) * r + A_[4]) * r + A_[5]) * q) /
      (((((B_[0] * r + B_[1]) * r + B_[2]) * r + B_[3]) * r + B_[4]) * r + 1);
  } else {
    const q = Math.sqrt(-2 * Math.log1p(-p));
    x = -(((((C_[0] * q + C_[1]) * q + C_[2]) * q + C_[3]) * q + C_[4]) * q + C_[5]) / ((((D_[0] * q + D_[1]) * q + D_[2]) * q + D_[3]) * q + 1);
  }
  // Halley refinement on the tail that keeps precision
  const e = x < 0 ? normalCdf(x) - p : -(normalSf(x) - (1 - p));
  const u = (e * Math.sqrt(2 * Math.PI)) * Math.exp((x * x) / 2);
  x = x - u / (1 + (x * u) / 2);
  return x;
}

// ---------------------------------------------------------------- Student t

/** cdf of Student's t with ν degrees of freedom (ν may be non-integer; ν = Infinity gives the normal). */
export function tCdf(t: number, nu: number): number {
  if (Number.isNaN(t) || !(nu > 0)) return NaN;
  if (nu === Infinity) return normalCdf(t);
  if (t === Infinity) return 1;
  if (t === -Infinity) return 0;
  const x = nu / (nu + t * t);
  // P(T > |t|) = ½ I_x(ν/2, ½); for small t use the complement form to keep precision
  const both = t * t < nu ? betaIncBoth((t * t) / (nu + t * t), 0.5, nu / 2) : null;
  const tail = both ? 0.5 * both.upper : 0.5 * betaInc(x, nu / 2, 0.5);
  return t > 0 ? 1 - tail : tail;
}

/** Two-sided p-value P(|T| ≥ |t|). */
export function tTwoSidedP(t: number, nu: number): number {
  if (Number.isNaN(t) || !(nu > 0)) return NaN;
  if (nu === Infinity) return 2 * normalSf(Math.abs(t));
  const t2 = t * t;
  if (t2 < nu) return betaIncBoth(t2 / (nu + t2), 0.5, nu / 2).upper;
  return betaInc(nu / (nu + t2), nu / 2, 0.5);
}

/** Quantile of Student's t: the t with P(T ≤ t) = p. */
export function tQuantile(p: number, nu: number): number {
  if (Number.isNaN(p) || p < 0 || p > 1 || !(nu > 0)) return NaN;
  if (nu === Infinity) return normalQuantile(p);
  if (p === 0) return -Infinity;
  if (p === 1) return Infinity;
  if (p === 0.5) return 0;
  const q = p < 0.5 ? p : 1 - p; // one tail
  const sign = p < 0.5 ? -1 : 1;
  if (nu === 1) return sign / Math.tan(Math.PI * q); // Cauchy: cot(πq), no cancellation near π/2
  if (nu === 2) return (sign * (1 - 2 * q)) / Math.sqrt(2 * q * (1 - q));
  const twoQ = 2 * q; // = P(|T| > t) = I_x(ν/2, ½) with x = ν/(ν+t²)
  let t2: number;
  if (twoQ < 0.5) {
    const x = betaQuantile(twoQ, nu / 2, 0.5);
    t2 = (nu * (1 - x)) / x;
  } else {
    // 1 − x = I⁻¹(1 − 2q; ½, ν/2)
    const y = betaQuantile(1 - twoQ, 0.5, nu / 2);
    t2 = (nu * y) / (1 - y);
  }
  return sign * Math.sqrt(t2);
}

// ---------------------------------------------------------------- F and χ²

/** I_x(d1/2, d2/2) and its complement at x = d1F/(d1F + d2), using 1 − x = d2/(d1F + d2) directly when x is near 1. */
function fBoth(F: number, d1: number, d2: number): { lower: number; upper: number } {
  const den = d1 * F + d2;
  const x = (d1 * F) / den;
  if (x <= 0.5) return betaIncBoth(x, d1 / 2, d2 / 2);
  const c = betaIncBoth(d2 / den, d2 / 2, d1 / 2);
  return { lower: c.upper, upper: c.lower };
}

export function fCdf(F: number, d1: number, d2: number): number {
  if (Number.isNaN(F) || !(d1 > 0) || !(d2 > 0)) return NaN;
  if (F <= 0) return 0;
  if (F === Infinity) return 1;
  return fBoth(F, d1, d2).lower;
}

/** Upper tail P(F' > F). */
export function fSf(F: number, d1: number, d2: number): number {
  if (Number.isNaN(F) || !(d1 > 0) || !(d2 > 0)) return NaN;
  if (F <= 0) return 1;
  if (F === Infinity) return 0;
  return fBoth(F, d1, d2).upper;
}

export function fQuantile(p: number, d1: number, d2: number): number {
  if (Number.isNaN(p) || p < 0 || p > 1 || !(d1 > 0) || !(d2 > 0)) return NaN;
  if (p === 0) return 0;
  if (p === 1) return Infinity;
  const x = betaQuantile(p, d1 / 2, d2 / 2);
  if (x <= 0.5) return (d2 * x) / (d1 * (1 - x));
  // near x = 1 solve for y = 1 − x instead: I_y(b, a) = 1 − p keeps the digits of 1 − x
  const y = betaQuantile(1 - p, d2 / 2, d1 / 2);
  return (d2 * (1 - y)) / (d1 * y);
}

export function chi2Cdf(x: number, k: number): number {
  return gammaIncBoth(k / 2, x / 2).lower;
}

/** Upper tail P(χ²_k > x). */
export function chi2Sf(x: number, k: number): number {
  return gammaIncBoth(k / 2, x / 2).upper;
}

export function chi2Quantile(p: number, k: number): number {
  if (Number.isNaN(p) || p < 0 || p > 1 || !(k > 0)) return NaN;
  if (p === 0) return 0;
  if (p === 1) return Infinity;
  return 2 * gammaQuantile(p, k / 2);
}

// ---------------------------------------------------------------- inverses (NR invbetai / invgammp, safeguarded)

/** x with I_x(a, b) = p. Halley iteration from the NR initial guess, kept inside a shrinking bracket. */
export function betaQuantile(p: number, a: number, b: number): number {
  if (Number.isNaN(p) || p < 0 || p > 1 || !(a > 0) || !(b > 0)) return NaN;
  if (p === 0) return 0;
  if (p === 1) return 1;
  const a1 = a - 1;
  const b1 = b - 1;
  let x: number;
  if (a >= 1 && b >= 1) {
    const pp = p < 0.5 ? p : 1 - p;
    const t = Math.sqrt(-2 * Math.log(pp));
    let z = (2.30753 + t * 0.27061) / (1 + t * (0.99229 + t * 0.04481)) - t;
    if (p < 0.5) z = -z;
    const al = (z * z - 3) / 6;
    const h = 2 / (1 / (2 * a - 1) + 1 / (2 * b - 1));
    const w = (z * Math.sqrt(al + h)) / h - (1 / (2 * b - 1) - 1 / (2 * a - 1)) * (al + 5 / 6 - 2 / (3 * h));
    x = a / (a + b * Math.exp(2 * w));
  } else {
    const lna = Math.log(a / (a + b));
    const lnb = Math.log(b / (a + b));
    const t = Math.exp(a * lna) / a;
    const u = Math.exp(b * lnb) / b;
    const w = t + u;
    x = p < t / w ? Math.pow(a * w * p, 1 / a) : 1 - Math.pow(b * w * (1 - p), 1 / b);
  }
  if (!(x > 0 && x < 1)) x = 0.5;
  const afac = -logBeta(a, b);
  let lo = 0;
  let hi = 1;
  for (let j = 0; j < 200; j++) {
    const both = betaIncBoth(x, a, b);
    // use the tail that is small for precision
    const err = p < 0.5 ? both.lower - p : (1 - p) - both.upper;
    if (err === 0) return x;
    if (err > 0) hi = x;
    else lo = x;
    const dens = Math.exp(a1 * Math.log(x) + b1 * Math.log1p(-x) + afac);
    let xNew = x;
    if (dens > 0 && Number.isFinite(dens)) {
      const u = err / dens;
      const step = u / (1 - 0.5 * Math.min(1, u * (a1 / x - b1 / (1 - x))));
      xNew = x - step;
    }
    if (!(xNew > lo && xNew < hi) || !Number.isFinite(xNew)) {
      // bisect (geometrically near 0 where the quantile may be tiny)
      xNew = lo === 0 && hi < 1e-3 ? hi * 1e-6 : 0.5 * (lo + hi);
      if (xNew === 0) return 0; // the quantile underflows
      if (lo > 0 && hi / lo > 4) xNew = Math.sqrt(lo * hi);
    }
    if (Math.abs(xNew - x) <= 1e-15 * Math.max(x, 1e-300) || hi - lo <= 1e-16 * hi) return xNew;
    x = xNew;
  }
  return x;
}

/** x with P(a, x) = p (regularized lower incomplete gamma). */
export function gammaQuantile(p: number, a: number): number {
  if (Number.isNaN(p) || p < 0 || p > 1 || !(a > 0)) return NaN;
  if (p === 0) return 0;
  if (p === 1) return Infinity;
  const gln = logGamma(a);
  const a1 = a - 1;
  let x: number;
  if (a > 1) {
    const pp = p < 0.5 ? p : 1 - p;
    const t = Math.sqrt(-2 * Math.log(pp));
    let z = (2.30753 + t * 0.27061) / (1 + t * (0.99229 + t * 0.04481)) - t;
    if (p < 0.5) z = -z;
    x = Math.max(1e-3, a * Math.pow(1 - 1 / (9 * a) - z / (3 * Math.sqrt(a)), 3));
  } else {
    const t = 1 - a * (0.253 + a * 0.12);
    x = p < t ? Math.pow(p / t, 1 / a) : 1 - Math.log(1 - (p - t) / (1 - t));
  }
  let lo = 0;
  let hi = Infinity;
  for (let j = 0; j < 200; j++) {
    const both = gammaIncBoth(a, x);
    const err = p < 0.5 ? both.lower - p : (1 - p) - both.upper;
    if (err === 0) return x;
    if (err > 0) hi = x;
    else lo = x;
    const dens = Math.exp(-x + a1 * Math.log(x) - gln);
    let xNew = x;
    if (dens > 0 && Number.isFinite(dens)) {
      const u = err / dens;
      const step = u / (1 - 0.5 * Math.min(1, u * (a1 / x - 1)));
      xNew = x - step;
    }
    if (!(xNew > lo && xNew < hi) || !Number.isFinite(xNew)) {
      xNew = hi === Infinity ? 2 * x + 1 : lo === 0 ? hi / 4 : 0.5 * (lo + hi);
    }
    if (Math.abs(xNew - x) <= 1e-15 * Math.max(x, 1e-300)) return xNew;
    x = xNew;
  }
  return x;
}

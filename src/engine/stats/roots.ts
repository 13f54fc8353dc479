// Root finding on a bracket: Brent's method (Brent 1973, "Algorithms for Minimization without Derivatives", ch. 4).

/** A root of g in [a, b] where g(a) and g(b) differ in sign (or one is 0); null when not bracketed or non-finite. */
export function brent(g: (x: number) => number, a: number, b: number, tol = 1e-12, maxIter = 200): number | null {
  let fa = g(a);
  let fb = g(b);
  if (!Number.isFinite(fa) || !Number.isFinite(fb)) return null;
  if (fa === 0) return a;
  if (fb === 0) return b;
  if (fa * fb > 0) return null;
  let c = a;
  let fc = fa;
  let d = b - a;
  let e = d;
  for (let iter = 0; iter < maxIter; iter++) {
    if (fb * fc > 0) {
      c = a;
      fc = fa;
      d = b - a;
      e = d;
    }
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    const tol1 = 2 * Number.EPSILON * Math.abs(b) + 0.5 * tol * Math.max(1, Math.abs(b));
    const xm = 0.5 * (c - b);
    if (Math.abs(xm) <= tol1 || fb === 0) return b;
    if (Math.abs(e) >= tol1 && Math.abs(fa) > Math.abs(fb)) {
      const s = fb / fa;
      let p: number;
      let q: number;
      if (a === c) {
        p = 2 * xm * s;
        q = 1 - s;
      } else {
        const qq = fa / fc;
        const r = fb / fc;
        p = s * (2 * xm * qq * (qq - r) - (b - a) * (r - 1));
        q = (qq - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      p = Math.abs(p);
      if (2 * p < Math.min(3 * xm * q - Math.abs(tol1 * q), Math.abs(e * q))) {
        e = d;
        d = p / q;
      } else {
        d = xm;
        e = d;
      }
    } else {
      d = xm;
      e = d;
    }
    a = b;
    fa = fb;
    b += Math.abs(d) > tol1 ? d : xm > 0 ? tol1 : -tol1;
    fb = g(b);
    if (!Number.isFinite(fb)) return null;
  }
  return b;
}

/** Bisection for the boundary between g < 0 at `inside` and g ≥ 0 at `outside` (g may be non-finite outside). */
export function bisectBoundary(g: (x: number) => number, inside: number, outside: number, iterations = 60): number {
  let a = inside;
  let b = outside;
  for (let i = 0; i < iterations; i++) {
    const m = 0.5 * (a + b);
    if (m === a || m === b) break;
    const v = g(m);
    if (v < 0) a = m;
    else b = m;
  }
  return 0.5 * (a + b);
}

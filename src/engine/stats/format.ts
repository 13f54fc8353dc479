// Number formatting for user messages (the JSON keeps full precision; only message text rounds).

/** A short human form of v with `digits` significant digits (default 4), no trailing zeros. */
export function fmt(v: number, digits = 4): string {
  if (v === null || v === undefined || Number.isNaN(v)) return 'NaN';
  if (!Number.isFinite(v)) return v > 0 ? '∞' : '−∞';
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e-4 && a < 1e7) {
    const s = Number(v.toPrecision(digits)).toString();
    return s;
  }
  const [m, e] = v.toExponential(digits - 1).split('e');
  return `${Number(m)}e${e}`;
}

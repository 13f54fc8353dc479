// Every number formatter for people to read, in one place (the FitReport JSON, the results file and the exported
// CSV/JSON never round; only these labels do). Each surface has its own rules, kept as distinct functions because
// their output is relied on byte for byte (messages in results files, the CLI summary, the panel):
//   fmtNum & co.   the panel and the HTML report: U+2212 minus, em dash for missing, exponent below 1e-4 and from 1e6
//   fmtMessage     problem messages written by the engine (and so into results files): ASCII minus, 'NaN', exponent
//                  below 1e-4 and from 1e7
//   fmtLabel       the editor's hovers, lenses and status bar: U+2212 minus, exponent mantissa not trimmed
//   fmtCli         the CLI's summary and diff: integers in full up to 1e9, exponent below 1e-3

const MINUS = '\u2212';
export const MISSING = '\u2014';

function isNum(v: unknown): v is number {
  return typeof v === 'number' && !Number.isNaN(v);
}

/** Strip trailing zeros of a fixed or exponential decimal string ("1.2300e+5" -> "1.23e+5"). */
function trimZeros(s: string): string {
  const [mant, exp] = s.split('e');
  let m = mant!;
  if (m.includes('.')) m = m.replace(/0+$/, '').replace(/\.$/, '');
  return exp === undefined ? m : `${m}e${exp}`;
}

function signed(s: string): string {
  return s.startsWith('-') ? MINUS + s.slice(1) : s;
}

/**
 * A number with `sig` significant digits (default 4), trailing zeros dropped; scientific notation ("1.23e-7")
 * below 1e-4 and from 1e6 in magnitude. null/undefined/NaN give an em dash; ±Infinity gives ±∞.
 */
export function fmtNum(v: number | null | undefined, sig = 4): string {
  if (!isNum(v)) return MISSING;
  if (!Number.isFinite(v)) return v > 0 ? '\u221e' : MINUS + '\u221e';
  if (v === 0) return '0';
  const digits = Math.min(Math.max(Math.round(sig), 1), 17);
  const a = Math.abs(v);
  let s: string;
  if (a < 1e-4 || a >= 1e6) {
    s = trimZeros(v.toExponential(digits - 1)).replace('e+', 'e');
  } else {
    s = trimZeros(v.toPrecision(digits));
    if (s.includes('e')) {
      // toPrecision goes exponential when sig < integer digits: write 123000, but 1e6 once rounding reaches it
      const r = Number(s);
      s = Math.abs(r) < 1e6 ? r.toString() : trimZeros(r.toExponential(digits - 1)).replace('e+', 'e');
    }
  }
  return signed(s);
}

/**
 * An estimate shown to the digit its standard error supports: two significant digits of the SE decide the last
 * decimal place (common practice for reporting a value with its uncertainty), within 3 to 8 significant digits.
 */
export function fmtEstimate(value: number | null | undefined, se?: number | null): string {
  if (!isNum(value) || !Number.isFinite(value) || value === 0) return fmtNum(value);
  if (!isNum(se) || !Number.isFinite(se) || se <= 0) return fmtNum(value, 6);
  const lastPlace = Math.floor(Math.log10(se)) - 1; // decimal exponent of the SE's second significant digit
  const lead = Math.floor(Math.log10(Math.abs(value)));
  const sig = Math.min(8, Math.max(3, lead - lastPlace + 1));
  return fmtNum(value, sig);
}

/**
 * A coefficient of determination: at least 4 significant digits, and enough that a value just below 1 never shows
 * as "1" (0.99999912 -> "0.9999991"): the digits run to the first digit that is not a 9.
 */
export function fmtR2(r2: number | null | undefined): string {
  if (!isNum(r2) || !Number.isFinite(r2) || r2 >= 1 || r2 <= 0) return fmtNum(r2, 4);
  const nines = Math.floor(-Math.log10(1 - r2)); // 0.9991 -> 3
  return fmtNum(r2, Math.min(15, Math.max(4, nines + 1)));
}

/** A p-value: three significant digits down to 0.001, then scientific; exactly 0 shows as "< 1e-300". */
export function fmtP(p: number | null | undefined): string {
  if (!isNum(p)) return MISSING;
  if (p <= 0) return '< 1e-300';
  if (p < 0.001) return fmtNum(p, 2);
  return fmtNum(p, 3);
}

/** A ratio as a percentage with two significant digits and at most one decimal place above 10 % ("0.57 %", "12 %"). */
export function fmtPct(ratio: number | null | undefined): string {
  if (!isNum(ratio)) return MISSING;
  if (!Number.isFinite(ratio)) return '\u221e %';
  const pct = ratio * 100;
  const a = Math.abs(pct);
  const s = a >= 100 ? Math.round(pct).toString() : a >= 10 ? trimZeros(pct.toFixed(1)) : fmtNum(pct, 2);
  return `${signed(s)}\u2009%`;
}

/** An interval "[low, high]" with the given formatter; a missing bound shows as "—" (open). */
export function fmtInterval(iv: readonly (number | null)[] | null | undefined, f: (v: number | null) => string = v => fmtNum(v)): string {
  if (!iv) return MISSING;
  return `${f(iv[0] ?? null)} \u2026 ${f(iv[1] ?? null)}`;
}

/** A count with thin-space thousands separators ("100 000"). */
export function fmtInt(n: number | null | undefined): string {
  if (!isNum(n)) return MISSING;
  if (!Number.isFinite(n)) return fmtNum(n);
  const s = Math.round(Math.abs(n)).toString().replace(/\B(?=(\d{3})+(?!\d))/g, '\u2009');
  return n < 0 ? MINUS + s : s;
}

/** Problem-message numbers (src/engine): `digits` significant digits (default 4), no trailing zeros. */
export function fmtMessage(v: number, digits = 4): string {
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

/** Hover, lens and status-bar numbers (src/host): `digits` significant digits; em dash when missing. */
export function fmtLabel(v: number | null | undefined, digits = 4): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e6 || a < 1e-4) return v.toExponential(digits - 1).replace('-', '−');
  return Number(v.toPrecision(digits)).toString().replace('-', '−');
}

/** CLI numbers (src/cli): `digits` significant digits, in exponent form when very large or small. */
export function fmtCli(v: number | null | undefined, digits = 4): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 10 ** digits && a < 1e9) return String(Math.round(v));
  if (a >= 1e9 || a < 1e-3) {
    const [m, e] = v.toExponential(digits - 1).split('e');
    return `${trimFixedZeros(m)}e${e.replace('+', '')}`;
  }
  return trimFixedZeros(v.toPrecision(digits));
}

function trimFixedZeros(s: string): string {
  return s.includes('.') && !s.includes('e') ? s.replace(/0+$/, '').replace(/\.$/, '') : s;
}

// Numeric fast path of the CSV reader: a hand-written line splitter and strict number scanner for plain rows (no
// quotes, ASCII numbers, the spec's delimiter and decimal); anything unusual is handed to the general (papaparse) path.
// Numbers: Clinger's fast path (an integer mantissa < 2^53 times or divided by an exact power of ten 10^0..10^22 is
// correctly rounded, W. D. Clinger, "How to read floating point numbers accurately", PLDI 1990), else Number().
import { PassThrough, type Readable } from 'stream';

const POW10: number[] = [];
for (let k = 0, p = 1; k <= 22; k++, p *= 10) POW10.push(p);
const TWO53 = 2 ** 53;

/** papaparse's line-ending guess on its first chunk (same rule, so both paths split lines the same way) */
export function guessNewline(chunk: string): '\n' | '\r\n' | '\r' {
  const input = chunk.substring(0, 1024 * 1024).replace(/"([^]*?)"/gm, '');
  const r = input.split('\r');
  const n = input.split('\n');
  if (r.length === 1 || (n.length > 1 && n[0].length < r[0].length)) return '\n';
  let withN = 0;
  for (const p of r) if (p[0] === '\n') withN++;
  return withN >= r.length / 2 ? '\r\n' : '\r';
}

/**
 * Scans the plain row s[a, b) with exactly `fields` fields separated by `delim` (a char code) and writes the numbers
 * of field f to out[want[f]] (want[f] = -1: not read). Returns false (nothing to trust in `out`) when the row is not plain: a quote,
 * a carriage return, a space, another field count, or a wanted cell that is not a strict ASCII number.
 */
export function scanNumericRow(s: string, a: number, b: number, delim: number, decimal: number, fields: number, want: Int32Array, out: Float64Array): boolean {
  let field = 0;
  let i = a;
  for (;;) {
    const k = want[field];
    if (k >= 0) {
      // strict number: [+-]? (digits [sep digits?] | sep digits) ([eE][+-]?digits)?
      const start = i;
      let neg = false;
      let c = i < b ? s.charCodeAt(i) : -1;
      if (c === 43 || c === 45) {
        neg = c === 45;
        c = ++i < b ? s.charCodeAt(i) : -1;
      }
      let m = 0;
      let digits = 0;
      let frac = 0;
      let exact = true;
      while (c >= 48 && c <= 57) {
        m = m * 10 + (c - 48);
        digits++;
        c = ++i < b ? s.charCodeAt(i) : -1;
      }
      if (c === decimal) {
        c = ++i < b ? s.charCodeAt(i) : -1;
        while (c >= 48 && c <= 57) {
          m = m * 10 + (c - 48);
          digits++;
          frac++;
          c = ++i < b ? s.charCodeAt(i) : -1;
        }
      }
      if (digits === 0) return false;
      if (m >= TWO53) exact = false;
      let e = 0;
      if (c === 101 || c === 69) {
        c = ++i < b ? s.charCodeAt(i) : -1;
        let eneg = false;
        if (c === 43 || c === 45) {
          eneg = c === 45;
          c = ++i < b ? s.charCodeAt(i) : -1;
        }
        let ed = 0;
        while (c >= 48 && c <= 57) {
          if (e < 100000) e = e * 10 + (c - 48);
          ed++;
          c = ++i < b ? s.charCodeAt(i) : -1;
        }
        if (ed === 0) return false;
        if (eneg) e = -e;
      }
      if (c !== -1 && c !== delim) return false;
      const p = e - frac;
      if (exact && p >= 0 && p <= 22) out[k] = neg ? -(m * POW10[p]) : m * POW10[p];
      else if (exact && p < 0 && p >= -22) out[k] = neg ? -(m / POW10[-p]) : m / POW10[-p];
      else {
        const t = s.slice(start, i);
        out[k] = Number(decimal === 46 ? t : t.replace(String.fromCharCode(decimal), '.'));
      }
      if (c === -1) break;
      i++;
    } else {
      for (;;) {
        if (i >= b) break;
        const c = s.charCodeAt(i);
        if (c === delim) break;
        if (c === 34 || c === 13) return false;
        i++;
      }
      if (i >= b) break;
      i++;
    }
    field++;
    if (field >= fields) return false;
  }
  return field === fields - 1;
}

export interface PlainHandlers {
  /** the first chunk arrived: returns the delimiter the general path would use */
  delimiter(firstChunk: string): string;
  /** one line s[a, b) without its line break; returns 'next', 'stop', or 'general' (hand this line and the rest over) */
  line(s: string, a: number, b: number): 'next' | 'stop' | 'general';
  /** run the general parser on the rest of the text, with the delimiter and line break already chosen */
  general(rest: Readable, delimiter: string, newline: string): void;
  end(): void;
  error(e: unknown): void;
}

/** Drives `text` (a stream of strings) line by line through `h`, switching to h.general on the first unusual line. */
export function streamPlain(text: Readable, h: PlainHandlers): void {
  let first = true;
  let partial = '';
  let newline: '\n' | '\r\n' | '\r' = '\n';
  let delimiter = ',';
  let rest: PassThrough | undefined;
  let stopped = false;
  const toGeneral = (from: string) => {
    rest = new PassThrough({ objectMode: true });
    h.general(rest, delimiter, newline);
    if (from.length > 0) rest.write(from);
  };
  // returns false when stopped or switched
  const lines = (s: string, final: boolean): boolean => {
    let a = 0;
    for (;;) {
      let e = s.indexOf('\n', a);
      if (e === -1) {
        if (!final) {
          partial = s.slice(a);
          return true;
        }
        e = s.length;
        if (e === a) return true;
      }
      let b = e;
      if (newline === '\r\n' && e < s.length) {
        if (b === a || s.charCodeAt(b - 1) !== 13) {
          toGeneral(s.slice(a));
          return false;
        }
        b--;
      }
      const r = h.line(s, a, b);
      if (r === 'stop') {
        stopped = true;
        return false;
      }
      if (r === 'general') {
        toGeneral(s.slice(a));
        return false;
      }
      a = e + 1;
      if (e === s.length) return true;
    }
  };
  const onData = (chunk: string) => {
    if (stopped) return;
    try {
      if (rest) {
        rest.write(chunk);
        return;
      }
      if (first) {
        first = false;
        newline = guessNewline(chunk);
        delimiter = h.delimiter(chunk);
        if (newline === '\r') {
          toGeneral(chunk);
          return;
        }
      }
      const s = partial.length > 0 ? partial + chunk : chunk;
      partial = '';
      lines(s, false);
    } catch (e) {
      stopped = true;
      h.error(e);
    }
  };
  text.on('data', onData);
  text.on('end', () => {
    if (stopped) return;
    if (rest) {
      rest.end();
      return;
    }
    try {
      if (partial.length > 0 && !lines(partial, true)) {
        if (rest) (rest as PassThrough).end();
        return;
      }
      h.end();
    } catch (e) {
      h.error(e);
    }
  });
}

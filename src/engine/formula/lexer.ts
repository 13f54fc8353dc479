// Tokenizer of the formula language: numbers, names (plain or `backtick quoted`), operators, parentheses, commas.

import { FormulaError } from './types';

export type TokenKind = 'num' | 'ident' | 'str' | 'op' | '(' | ')' | ',' | 'eof';

export interface Token {
  kind: TokenKind;
  /** source text of the token (for a quoted name: the name without backticks; for a text literal: its value) */
  text: string;
  start: number;
  end: number;
  /** value of a number token */
  value?: number;
  /** true for a `backtick quoted` name */
  quoted?: boolean;
}

/** 1-based column of a 0-based offset, as shown in messages. */
export function col(offset: number): number {
  return offset + 1;
}

const IDENT_START = /[\p{L}_]/u;
const IDENT_PART = /[\p{L}\p{M}\p{N}_]/u;

export function isPlainIdentifier(name: string): boolean {
  return /^[\p{L}_][\p{L}\p{M}\p{N}_]*$/u.test(name);
}

function isDigit(c: string | undefined): boolean {
  return c !== undefined && c >= '0' && c <= '9';
}

export interface TokenizeOptions {
  /** accept "double-quoted" text literals (row filters: state == "treated"); a '"' inside is written '""' */
  strings?: boolean;
}

export function tokenize(text: string, opts: TokenizeOptions = {}): Token[] {
  const tokens: Token[] = [];
  let i = 0;
  const n = text.length;
  while (i < n) {
    const c = text[i];
    if (c === ' ' || c === '\t' || c === '\n' || c === '\r' || c === '\u00a0') {
      i++;
      continue;
    }
    const start = i;
    if (isDigit(c) || (c === '.' && isDigit(text[i + 1]))) {
      tokens.push(readNumber(text, i));
      i = tokens[tokens.length - 1].end;
      continue;
    }
    if (c === '.' && i > 0 && IDENT_PART.test(text[i - 1]) && text[i + 1] !== undefined && IDENT_START.test(text[i + 1])) {
      // 'temp.c': a dotted column name
      let a = i - 1;
      while (a > 0 && (IDENT_PART.test(text[a - 1]) || text[a - 1] === '.')) a--;
      let b = i + 1;
      while (b < n && (IDENT_PART.test(text[b]) || text[b] === '.')) b++;
      const name = text.slice(a, b);
      throw new FormulaError(
        `unexpected '.' at column ${col(i)} — a name containing '.' must be quoted in backticks, e.g. \`${name}\``,
        { start: i, end: i + 1 },
      );
    }
    if (c === '.') {
      throw new FormulaError(
        `unexpected '.' at column ${col(i)} — a decimal point must be followed by digits, e.g. '0.5'`,
        { start: i, end: i + 1 },
      );
    }
    if (c === '"' && opts.strings) {
      let j = i + 1;
      let value = '';
      for (;;) {
        if (j >= n) {
          throw new FormulaError(
            `unterminated text starting at column ${col(i)} — add the closing '"' (a '"' inside the text is written '""')`,
            { start: i, end: n },
          );
        }
        if (text[j] === '"') {
          if (text[j + 1] === '"') {
            value += '"';
            j += 2;
            continue;
          }
          break;
        }
        value += text[j];
        j++;
      }
      tokens.push({ kind: 'str', text: value, start, end: j + 1 });
      i = j + 1;
      continue;
    }
    if (c === '`') {
      let j = i + 1;
      let name = '';
      for (;;) {
        if (j >= n) {
          throw new FormulaError(
            `unterminated quoted name starting at column ${col(i)} — add the closing backtick (\`)`,
            { start: i, end: n },
          );
        }
        if (text[j] === '`') {
          if (text[j + 1] === '`') {
            name += '`';
            j += 2;
            continue;
          }
          break;
        }
        name += text[j];
        j++;
      }
      if (name.trim() === '') {
        throw new FormulaError(
          `empty quoted name at column ${col(i)} — put a column name between the backticks, e.g. \`OD 600\``,
          { start: i, end: j + 1 },
        );
      }
      tokens.push({ kind: 'ident', text: name.normalize('NFC'), start, end: j + 1, quoted: true });
      i = j + 1;
      continue;
    }
    if (IDENT_START.test(c)) {
      let j = i + 1;
      while (j < n && IDENT_PART.test(text[j])) j++;
      tokens.push({ kind: 'ident', text: text.slice(i, j).normalize('NFC'), start, end: j });
      i = j;
      continue;
    }
    const two = text.slice(i, i + 2);
    if (two === '**' || two === '<=' || two === '>=' || two === '==' || two === '!=') {
      tokens.push({ kind: 'op', text: two, start, end: i + 2 });
      i += 2;
      continue;
    }
    if (two === '&&' || two === '||') {
      const word = two === '&&' ? 'and' : 'or';
      throw new FormulaError(
        `unexpected '${two}' at column ${col(i)} — write '${word}' (allowed in 'where' filters)`,
        { start: i, end: i + 2 },
      );
    }
    if (c === '+' || c === '-' || c === '*' || c === '/' || c === '^' || c === '<' || c === '>' || c === '=') {
      tokens.push({ kind: 'op', text: c, start, end: i + 1 });
      i++;
      continue;
    }
    if (c === '(' || c === ')' || c === ',') {
      tokens.push({ kind: c, text: c, start, end: i + 1 });
      i++;
      continue;
    }
    const hint =
      c === '!' ? "write 'not' (allowed in 'where' filters) or '!=' for 'not equal'"
        : c === '&' ? "write 'and' (allowed in 'where' filters)"
        : c === '|' ? "write 'or' (allowed in 'where' filters), or abs(...) for an absolute value"
        : c === '[' || c === '{' ? "use '(' and ')' for grouping"
        : c === ']' || c === '}' ? "use '(' and ')' for grouping"
        : c === "'" && opts.strings ? 'write text in double quotes, e.g. state == "treated"; quote a column name with backticks, e.g. `OD 600`'
        : c === '"' || c === "'" ? 'quote a column name with backticks, e.g. `OD 600` (text in double quotes is only allowed in \'where\' filters)'
        : c === '×' || c === '·' ? "write '*' for a product"
        : c === '−' ? "write '-' (ASCII minus)"
        : 'remove it';
    const shown = String.fromCodePoint(text.codePointAt(i) ?? 0);
    throw new FormulaError(`unexpected character '${shown}' at column ${col(i)} — ${hint}`, {
      start: i,
      end: i + shown.length,
    });
  }
  tokens.push({ kind: 'eof', text: '', start: n, end: n });
  return tokens;
}

function readNumber(text: string, start: number): Token {
  let j = start;
  const n = text.length;
  while (isDigit(text[j])) j++;
  if (text[j] === '.') {
    j++;
    while (isDigit(text[j])) j++;
  }
  if (text[j] === 'e' || text[j] === 'E') {
    let k = j + 1;
    if (text[k] === '+' || text[k] === '-') k++;
    if (isDigit(text[k])) {
      while (isDigit(text[k])) k++;
      j = k;
    } else if (!(k === j + 1 && text[k] !== undefined && IDENT_PART.test(text[k]) && !isDigit(text[k]))) {
      // '1e', '1e+', '1e-x': an exponent without digits
      let end = k;
      while (end < n && IDENT_PART.test(text[end])) end++;
      throw new FormulaError(
        `malformed number '${text.slice(start, Math.max(end, k))}' at column ${col(start)} — an exponent needs digits, e.g. '1e-3'`,
        { start, end: Math.max(end, k) },
      );
    } else {
      // '2ex' etc.: a letter run glued to the number
      let end = j;
      while (end < n && IDENT_PART.test(text[end])) end++;
      throw new FormulaError(
        `malformed number '${text.slice(start, end)}' at column ${col(start)} — write '*' between a number and a name, e.g. '2*e'`,
        { start, end },
      );
    }
  }
  if (text[j] === '.' || (text[j - 1] === '.' && isDigit(text[j]))) {
    let end = j;
    while (end < n && (isDigit(text[end]) || text[end] === '.')) end++;
    throw new FormulaError(
      `malformed number '${text.slice(start, end)}' at column ${col(start)} — a number has at most one decimal point`,
      { start, end },
    );
  }
  const src = text.slice(start, j);
  const value = Number(src);
  if (!Number.isFinite(value)) {
    throw new FormulaError(
      `number '${src}' at column ${col(start)} is too large for double precision — use a value below 1.8e308`,
      { start, end: j },
    );
  }
  return { kind: 'num', text: src, start, end: j, value };
}

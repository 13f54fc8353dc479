// Streaming CSV reader (papaparse fed from fs.createReadStream): only the requested columns are parsed, strictly, into
// growing Float64Array buffers, with each row's 1-based data row and file line, and a sha256 of the bytes.
import { createHash } from 'crypto';
import * as fs from 'fs';
import { Transform, type TransformCallback } from 'stream';
import Papa from 'papaparse';
import { suggest } from '../formula';
import type { Problem } from '../report';
import { DataError } from './errors';
import { scanNumericRow, streamPlain } from './csvFast';
import type { Table } from './types';

export type Delimiter = 'auto' | ',' | ';' | '\t';
export type Decimal = '.' | ',';

export interface ReadOptions {
  /** "auto" (default) detects ',', ';' or tab from the header line */
  delimiter?: Delimiter;
  /** decimal separator, '.' (default) or ',' */
  decimal?: Decimal;
  /** name of the file in messages (default: the path as given) */
  label?: string;
}

export interface ReadTableOptions extends ReadOptions {
  /** columns to parse as numbers (other columns are skipped) */
  columns: string[];
  /** columns kept as text, trimmed, never dropped for their content (group ids, text compared in data.where) */
  textColumns?: string[];
  /** "drop" (default): drop a row with a bad cell and report it; "fail": throw a DataError */
  badRows?: 'drop' | 'fail';
  /** refuse files larger than this many bytes */
  maxBytes?: number;
  /** refuse a line longer than this many characters (default 64 Mi: a file without line breaks is not a table) */
  maxLineLength?: number;
  /** spec path each column's problems belong to (default ['data', 'file']) */
  columnPaths?: Record<string, (string | number)[]>;
  /** individual 'bad-cell' problems reported before they are summarised (default 20) */
  maxProblems?: number;
}

/** dropped-row records kept in a Table (a file of millions of bad rows must not exhaust memory) */
const MAX_DROPPED_LISTED = 10000;
/** data rows listed in one summary problem */
const MAX_ROWS_LISTED = 1000;

const NUMBER_DOT = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
const NUMBER_COMMA = /^[+-]?(?:\d+,?\d*|,\d+)(?:[eE][+-]?\d+)?$/;

/**
 * Strict number parsing of one cell: optional sign, digits with one decimal separator, optional exponent.
 * Rejects '', 'n/a', hex, 'Infinity', 'NaN' and thousands separators. Returns NaN when the text is not a number.
 */
export function parseNumber(text: string, decimal: Decimal = '.'): number {
  const t = text.trim();
  if (decimal === '.') return NUMBER_DOT.test(t) ? Number(t) : NaN;
  return NUMBER_COMMA.test(t) ? Number(t.replace(',', '.')) : NaN;
}

function badCellReason(text: string, decimal: Decimal): string {
  const t = text.trim();
  if (t === '') return 'empty cell';
  // at most a short, escaped excerpt of the cell: a data file's content is not echoed into logs
  const shown = JSON.stringify(t.length > 24 ? t.slice(0, 24) + '…' : t).slice(1, -1).replace(/[\u007f-\u009f\u200e\u200f\u202a-\u202e\u2066-\u2069]/g, (c) => '\\u' + c.charCodeAt(0).toString(16).padStart(4, '0'));
  if (decimal === '.' && NUMBER_COMMA.test(t) && t.includes(',')) return `not a number: '${shown}' (a decimal comma? set data.decimal to ",")`;
  if (decimal === ',' && NUMBER_DOT.test(t) && t.includes('.')) return `not a number: '${shown}' (a decimal point? data.decimal is ",")`;
  return `not a number: '${shown}'`;
}

/** Counts delimiter candidates outside double quotes in one line. */
export function detectDelimiter(line: string, decimal: Decimal): ',' | ';' | '\t' {
  const counts = { ',': 0, ';': 0, '\t': 0 };
  let quoted = false;
  for (const ch of line) {
    if (ch === '"') quoted = !quoted;
    else if (!quoted && (ch === ',' || ch === ';' || ch === '\t')) counts[ch]++;
  }
  const order: (',' | ';' | '\t')[] = decimal === ',' ? ['\t', ';'] : ['\t', ';', ','];
  let best: ',' | ';' | '\t' = decimal === ',' ? ';' : ',';
  let bestCount = 0;
  for (const d of order)
    if (counts[d] > bestCount) {
      best = d;
      bestCount = counts[d];
    }
  return best;
}

/**
 * Bytes -> text: hashes every byte, rejects binary content (NUL bytes or invalid UTF-8), strips a UTF-8 BOM, and
 * emits strings (object mode) so that multi-byte characters are never split between chunks.
 */
class TextStage extends Transform {
  private readonly hash = createHash('sha256');
  private readonly decoder = new TextDecoder('utf-8', { fatal: true });
  private first = true;
  bytes = 0;

  /** characters since the last line break */
  private lineLength = 0;
  /** line breaks decoded so far (for the line of a bad byte) */
  private lines = 0;

  constructor(
    private readonly label: string,
    private readonly maxBytes: number | undefined,
    private readonly maxLineLength: number,
  ) {
    super({ readableObjectMode: true });
  }

  override _transform(chunk: Buffer, _enc: BufferEncoding, done: TransformCallback): void {
    this.hash.update(chunk);
    this.bytes += chunk.length;
    if (this.maxBytes !== undefined && this.bytes > this.maxBytes) {
      done(new DataError(`${this.label} is larger than the limit of ${this.maxBytes} bytes — use a smaller file or raise the limit`, { file: this.label }));
      return;
    }
    let text: string;
    const wasFirst = this.first;
    try {
      if (this.first && chunk.indexOf(0) !== -1) throw new Error('NUL');
      text = this.decoder.decode(chunk, { stream: true });
    } catch {
      // binary (NUL bytes, or not UTF-8 already in the first line): not a text file; a bad byte further on (a file
      // saved in another encoding, e.g. Latin-1 'é' in a later row): its line and column
      const nul = wasFirst && chunk.indexOf(0) !== -1;
      const at = nul ? null : this.badByteAt(chunk);
      done(
        nul || !at || at.line === 1
          ? new DataError(`${this.label} does not look like a text CSV file (it contains ${nul ? 'NUL bytes' : 'bytes that are not UTF-8 text'}) — export the data as CSV (UTF-8) and point data.file at it`, { file: this.label })
          : new DataError(`${this.label} line ${at.line}, column ${at.column}: bytes that are not UTF-8 text — save the file as UTF-8 CSV`, { file: this.label, line: at.line }),
      );
      return;
    }
    if (this.first) {
      if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
      this.first = false;
    }
    this.lines += countLines(text);
    const lastBreak = Math.max(text.lastIndexOf('\n'), text.lastIndexOf('\r'));
    this.lineLength = lastBreak === -1 ? this.lineLength + text.length : text.length - lastBreak - 1;
    if (this.lineLength > this.maxLineLength) {
      done(new DataError(`${this.label} has a line longer than ${this.maxLineLength} characters — it does not look like a table of rows; check that data.file is a CSV file`, { file: this.label }));
      return;
    }
    if (text.length > 0) this.push(text);
    done();
  }

  override _flush(done: TransformCallback): void {
    try {
      const rest = this.decoder.decode();
      if (rest.length > 0) this.push(rest);
      done();
    } catch {
      done(new DataError(`${this.label} ends in the middle of a UTF-8 character — save the file as UTF-8 CSV`, { file: this.label }));
    }
  }

  /** 1-based line and column of the first byte of `chunk` that is not UTF-8 (the text before it decoded leniently) */
  private badByteAt(chunk: Buffer): { line: number; column: number } {
    const lenient = new TextDecoder('utf-8').decode(chunk);
    const before = lenient.slice(0, Math.max(0, lenient.indexOf('\ufffd')));
    const breaks = countLines(before);
    const lastBreak = Math.max(before.lastIndexOf('\n'), before.lastIndexOf('\r'));
    const column = breaks === 0 ? this.lineLength + before.length + 1 : before.length - lastBreak;
    return { line: this.lines + breaks + 1, column };
  }

  digest(): string {
    return 'sha256:' + this.hash.digest('hex');
  }
}

/** Grows a typed array by doubling. */
class Growing<T extends Float64Array | Int32Array> {
  length = 0;
  constructor(public data: T, private readonly make: (n: number) => T) {}
  push(v: number): void {
    if (this.length === this.data.length) {
      const next = this.make(Math.max(16, this.data.length * 2));
      next.set(this.data);
      this.data = next;
    }
    this.data[this.length++] = v;
  }
  done(): T {
    return this.data.slice(0, this.length) as T;
  }
}

interface RowSink {
  /** called with the header fields; return false to stop */
  header(fields: string[], line: number): boolean | void;
  /** called with each non-blank data row */
  row(fields: string[], line: number, lines: number): boolean | void;
  /** optional numeric fast path for the plain data row s[a, b); returns false to have it handled by row() */
  fast?(s: string, a: number, b: number, line: number, delimiter: string): boolean;
}

/** Streams the file through papaparse and calls the sink per row; resolves with hash and row counts. */
function streamRows(file: string, opts: ReadOptions & { maxBytes?: number; maxLineLength?: number; headerOnly?: boolean }, sink: RowSink): Promise<{ hash: string; bytes: number; sawHeader: boolean }> {
  const label = opts.label ?? file;
  return new Promise((resolve, reject) => {
    let settled = false;
    const fail = (e: unknown) => {
      if (settled) return;
      settled = true;
      input.destroy();
      text.destroy();
      reject(e instanceof DataError ? e : new DataError(`could not read ${label}: ${e instanceof Error ? e.message : String(e)}`, { file: label }));
    };
    const input = fs.createReadStream(file, { highWaterMark: 1 << 20 });
    const text = new TextStage(label, opts.maxBytes, opts.maxLineLength ?? 64 * 2 ** 20);
    input.on('error', (e: NodeJS.ErrnoException) => {
      if (e.code === 'ENOENT') fail(new DataError(`data file not found: ${label} — check data.file in the spec (it is relative to the spec file)`, { file: label }));
      else if (e.code === 'EISDIR') fail(new DataError(`${label} is a folder, not a CSV file — point data.file at the CSV file`, { file: label }));
      else if (e.code === 'EACCES' || e.code === 'EPERM') fail(new DataError(`${label} cannot be read (permission denied) — check the file's permissions`, { file: label }));
      else fail(e);
    });
    text.on('error', fail);
    input.pipe(text);

    let line = 1;
    let sawHeader = false;
    let newline = '\n';
    let delimiter: string | undefined = opts.delimiter && opts.delimiter !== 'auto' ? opts.delimiter : undefined;
    const finish = () => {
      if (settled) return;
      settled = true;
      resolve({ hash: text.digest(), bytes: text.bytes, sawHeader });
    };
    const stop = (parser?: Papa.Parser) => {
      parser?.abort();
      input.destroy();
      if (!settled) {
        settled = true;
        text.destroy();
        resolve({ hash: '', bytes: text.bytes, sawHeader });
      }
    };

    /** one row of fields from either path; false: stop reading */
    const handle = (fields: string[], at: number, lines: number): boolean => {
      const blank = fields.length === 1 && fields[0].trim() === '';
      if (blank) return true;
      if (!sawHeader) {
        sawHeader = true;
        return !(sink.header(fields, at) === false || opts.headerOnly);
      }
      return sink.row(fields, at, lines) !== false;
    };

    const config = {
      header: false,
      newline: undefined as string | undefined,
      skipEmptyLines: false,
      dynamicTyping: false,
      // papaparse calls a delimiter function with the first chunk: detect from the first non-blank line
      delimiter: (chunk: string) => {
        if (!delimiter) {
          const firstLine = chunk.split(/\r\n|\n|\r/).find((l) => l.trim() !== '') ?? '';
          delimiter = detectDelimiter(firstLine, opts.decimal ?? '.');
        }
        return delimiter;
      },
      step: (r: Papa.ParseStepResult<string[]>, parser: Papa.Parser) => {
        if (settled) return;
        try {
          if (r.meta.linebreak) newline = r.meta.linebreak;
          const fields = r.data;
          const nl = newline === '\r' ? '\r' : '\n';
          let spanned = 0;
          for (const f of fields) if (f.indexOf(nl) !== -1) for (let k = 0; k < f.length; k++) if (f[k] === nl) spanned++;
          const at = line;
          line += 1 + spanned;
          if (r.errors.length > 0) {
            const q = r.errors.find((e) => e.type === 'Quotes');
            if (q) {
              const what = q.code === 'MissingQuotes' ? `a quoted field is never closed (a '"' is missing)` : `a quoted field is malformed (text after its closing '"')`;
              fail(new DataError(`${label} line ${at}: ${what} — fix the quotes in the file (a '"' inside a quoted field is written '""')`, { file: label, line: at }));
              parser.abort();
              return;
            }
          }
          if (!handle(fields, at, 1 + spanned)) stop(parser);
        } catch (e) {
          fail(e);
          parser.abort();
        }
      },
      // called once the stream has ended (every byte hashed), or after abort (then already settled)
      complete: () => finish(),
      error: (e: Error) => fail(e),
    };
    // plain lines go through the numeric fast path; from the first line with a quote or a stray carriage return on,
    // papaparse reads the rest (a Node readable stream of strings) with the same delimiter and line break
    streamPlain(text, {
      delimiter: (chunk) => config.delimiter(chunk),
      line: (s, a, b) => {
        if (settled) return 'stop';
        const at = line;
        if (sawHeader && sink.fast && sink.fast(s, a, b, at, delimiter as string)) {
          line++;
          return 'next';
        }
        const str = s.slice(a, b);
        if (str.includes('"') || str.includes('\r')) return 'general';
        line++;
        if (handle(str.split(delimiter as string), at, 1)) return 'next';
        stop();
        return 'stop';
      },
      general: (rest, _delimiter, nl) => {
        config.newline = nl;
        newline = nl;
        (Papa.parse as unknown as (input: unknown, config: unknown) => void)(rest, config);
      },
      end: () => finish(),
      error: (e) => fail(e),
    });
  });
}

/** Line breaks in text (\r\n counts once). */
function countLines(text: string): number {
  let n = 0;
  for (let i = text.indexOf('\n'); i !== -1; i = text.indexOf('\n', i + 1)) n++;
  for (let i = text.indexOf('\r'); i !== -1; i = text.indexOf('\r', i + 1)) if (text.charCodeAt(i + 1) !== 10) n++;
  return n;
}

function checkHeader(fields: string[], label: string, line: number): string[] {
  // names in Unicode NFC, as the spec's identifiers and keys are: a name typed on another system matches
  const names = fields.map((f) => f.trim().normalize('NFC'));
  const seen = new Map<string, number>();
  names.forEach((n, i) => {
    if (n === '') return;
    const prev = seen.get(n);
    if (prev !== undefined)
      throw new DataError(`${label} has the column name '${n}' twice (columns ${prev + 1} and ${i + 1} of the header, line ${line}) — rename one of them`, { file: label, line });
    seen.set(n, i);
  });
  return names;
}

function statFile(file: string, label: string): fs.Stats {
  let st: fs.Stats;
  try {
    st = fs.statSync(file);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code === 'ENOENT') throw new DataError(`data file not found: ${label} — check data.file in the spec (it is relative to the spec file)`, { file: label });
    throw new DataError(`could not read ${label}: ${(e as Error).message}`, { file: label });
  }
  if (st.isDirectory()) throw new DataError(`${label} is a folder, not a CSV file — point data.file at the CSV file`, { file: label });
  if (st.size === 0) throw new DataError(`${label} is empty — it needs a header row with column names and at least one data row`, { file: label });
  return st;
}

/** The file changed while it was read (size, modification time or the file itself differ before and after, or fewer
 *  or more bytes were read than it had): its rows may mix two versions, so nothing of it is used. */
function changedWhileRead(file: string, before: fs.Stats, bytesRead: number | null, label: string): DataError | null {
  let after: fs.Stats | undefined;
  try {
    after = fs.statSync(file);
  } catch {
    /* removed meanwhile */
  }
  const same = !!after && after.size === before.size && after.mtimeMs === before.mtimeMs && after.ino === before.ino && (bytesRead === null || bytesRead === before.size);
  return same ? null : new DataError(`${label} changed while being read (its size or modification time differ before and after the read); run again once whatever writes it has finished`, { file: label });
}

const TABLE_EXT = /\.(csv|tsv|txt)$/i;
/** A header name longer than this is not a column name (a line of text, a key, a token). */
const MAX_NAME_SHOWN = 100;

export type HeaderShape = { shown: true; otherDelimiter?: string } | { shown: false; why: string };

/**
 * May a message quote this file's header? Only when the file is a table by its name (.csv, .tsv, .txt, also after
 * following links) and its first line has the shape of column names: several fields, or one field holding another
 * delimiter (then `otherDelimiter`). Anything else — a key file, a credentials or .env file named as data — has its
 * first line kept out of every message.
 */
export function headerShape(file: string, header: readonly string[]): HeaderShape {
  let real = file;
  try {
    real = fs.realpathSync(file);
  } catch {
    /* the name as given */
  }
  if (!TABLE_EXT.test(file) || !TABLE_EXT.test(real)) return { shown: false, why: 'is not a .csv, .tsv or .txt file' };
  if (header.some((h) => h.length > MAX_NAME_SHOWN)) return { shown: false, why: 'has a first line that is not a row of column names' };
  if (header.length >= 2) return { shown: true };
  const other = [';', ',', '\t', '|'].find((d) => (header[0] ?? '').includes(d));
  if (other) return { shown: true, otherDelimiter: other };
  return { shown: false, why: 'has a single column in its first line' };
}

/** The header row's column names (trimmed). Throws DataError for a missing, empty, binary file or duplicate names. */
export async function readHeader(file: string, opts: ReadOptions = {}): Promise<string[]> {
  const label = opts.label ?? file;
  statFile(file, label);
  let names: string[] | undefined;
  await streamRows(file, { ...opts, headerOnly: true }, {
    header: (fields, line) => {
      names = checkHeader(fields, label, line);
      return false;
    },
    row: () => false,
  });
  if (!names) throw new DataError(`${label} has no header row — the first line must name the columns, e.g. "hours,od600"`, { file: label });
  return names;
}

/**
 * Reads the requested columns of a CSV file, streamed. A row with a bad cell in a requested column (not a number,
 * empty) or with too few fields is dropped and reported (badRows "drop") or fails the read ("fail").
 * Throws DataError, whose message names the file and the fix, for unreadable input.
 */
export async function readTable(file: string, opts: ReadTableOptions): Promise<Table> {
  const label = opts.label ?? file;
  const decimal = opts.decimal ?? '.';
  if (decimal === ',' && opts.delimiter === ',')
    throw new DataError(`with decimal "," the delimiter of ${label} cannot also be "," — set data.delimiter to ";" or "\\t"`, { file: label });
  const before = statFile(file, label);
  const badRows = opts.badRows ?? 'drop';
  const maxProblems = opts.maxProblems ?? 20;
  const wanted = [...new Set(opts.columns)];
  const wantedText = [...new Set(opts.textColumns ?? [])];
  let header: string[] = [];
  let index: number[] = [];
  let textIndex: number[] = [];
  const textOut: string[][] = wantedText.map(() => []);
  let want = new Int32Array(0);
  const decimalCode = decimal.charCodeAt(0);
  const buffers = wanted.map(() => new Growing(new Float64Array(1024), (n) => new Float64Array(n)));
  const rowsOut = new Growing(new Int32Array(1024), (n) => new Int32Array(n));
  const linesOut = new Growing(new Int32Array(1024), (n) => new Int32Array(n));
  const dropped: Table['dropped'] = [];
  let droppedTotal = 0;
  const problems: Problem[] = [];
  const ragged: number[] = [];
  let raggedFields = 0;
  let dataRow = 0;
  const values = new Float64Array(wanted.length);
  const pathOf = (col: string) => opts.columnPaths?.[col] ?? ['data', 'file'];

  const drop = (row: number, line: number, column: string, reason: string) => {
    if (badRows === 'fail')
      throw new DataError(`${label} line ${line} (data row ${row}), column '${column}': ${reason} — fix the cell, or set data.badRows to "drop" to leave such rows out`, {
        file: label,
        line,
        column,
        row,
      });
    droppedTotal++;
    if (dropped.length < MAX_DROPPED_LISTED) dropped.push({ row, line, column, reason });
    if (droppedTotal <= maxProblems)
      problems.push({
        code: 'bad-cell',
        severity: 'warning',
        message: `${label} line ${line}, column '${column}': ${reason} — data row ${row} was left out`,
        path: pathOf(column),
        location: { file: label, line, column, row },
        rows: [row],
      });
  };

  const { hash, bytes, sawHeader } = await streamRows(file, { ...opts }, {
    header: (fields, line) => {
      header = checkHeader(fields, label, line);
      index = wanted.map((c) => header.indexOf(c));
      textIndex = wantedText.map((c) => header.indexOf(c));
      const missing = [...wanted.filter((_, k) => index[k] === -1), ...wantedText.filter((c, k) => textIndex[k] === -1 && !wanted.includes(c))];
      want = new Int32Array(header.length).fill(-1);
      index.forEach((ix, k) => {
        if (ix >= 0) want[ix] = k;
      });
      if (missing.length > 0) {
        const shape = headerShape(file, header);
        if (!shape.shown)
          throw new DataError(`${label} has no column ${missing.map((m) => `'${m}'`).join(', ')} — ${label} ${shape.why}, so none of its content is shown; check that data.file names the CSV table`, { file: label, line, column: missing[0] });
        const parts = missing.map((m) => {
          const s = shape.otherDelimiter ? undefined : suggest(m, header);
          return s !== undefined ? `'${m}' (did you mean '${s}'?)` : `'${m}'`;
        });
        const shown = header.slice(0, 15).map((h) => `'${h}'`).join(', ') + (header.length > 15 ? ', …' : '');
        const hint = shape.otherDelimiter ? ` — the delimiter may be wrong: the header holds ${JSON.stringify(shape.otherDelimiter)}; set data.delimiter to it` : '';
        throw new DataError(`${label} has no column ${parts.join(', ')} — its columns are ${shown}${hint}`, { file: label, line, column: missing[0] });
      }
    },
    fast: (s, a, b, line, delimiter) => {
      if (ragged.length > 0 || wantedText.length > 0 || !scanNumericRow(s, a, b, delimiter.charCodeAt(0), decimalCode, header.length, want, values)) return false;
      dataRow++;
      for (let k = 0; k < wanted.length; k++) buffers[k].push(values[k]);
      rowsOut.push(dataRow);
      linesOut.push(line);
      return true;
    },
    row: (fields, line) => {
      dataRow++;
      if (fields.length > header.length) {
        let extraFilled = false;
        for (let k = header.length; k < fields.length; k++) if (fields[k].trim() !== '') extraFilled = true;
        if (extraFilled) {
          ragged.push(line);
          raggedFields = Math.max(raggedFields, fields.length);
          return ragged.length < 5;
        }
      }
      if (ragged.length > 0) return;
      if (fields.length < header.length) {
        const firstMissing = [...index, ...textIndex].find((ix) => ix >= fields.length);
        const column = firstMissing !== undefined ? header[firstMissing] : header[fields.length];
        drop(dataRow, line, column, `the row has ${fields.length} field${fields.length === 1 ? '' : 's'}, the header has ${header.length}`);
        return;
      }
      for (let k = 0; k < wanted.length; k++) {
        const cell = fields[index[k]];
        const v = parseNumber(cell, decimal);
        if (Number.isNaN(v)) {
          drop(dataRow, line, wanted[k], badCellReason(cell, decimal));
          return;
        }
        values[k] = v;
      }
      for (let k = 0; k < wanted.length; k++) buffers[k].push(values[k]);
      for (let k = 0; k < wantedText.length; k++) textOut[k].push(fields[textIndex[k]].trim());
      rowsOut.push(dataRow);
      linesOut.push(line);
    },
  });
  // read to the end (a hash) or stopped early (ragged rows): compare what was read with the file before and after
  const changed = changedWhileRead(file, before, hash ? bytes : null, label);
  if (changed) throw changed;
  if (!sawHeader) throw new DataError(`${label} is empty — it needs a header row with column names and at least one data row`, { file: label });
  if (ragged.length > 0)
    throw new DataError(
      `${label} has rows with more fields (up to ${raggedFields}) than its header (${header.length}) at line${ragged.length > 1 ? 's' : ''} ${ragged.join(', ')}${ragged.length === 5 ? ', …' : ''} — ` +
        (decimal === '.' ? 'a value may contain the delimiter (quote it, or set data.decimal "," with a ";" delimiter), or a header name is missing' : 'quote values that contain the delimiter, or add the missing header names'),
      { file: label, line: ragged[0] },
    );
  if (dataRow === 0) throw new DataError(`${label} has a header but no data rows — add rows below the header line`, { file: label });
  if (droppedTotal > maxProblems)
    problems.push({
      code: 'bad-cell',
      severity: 'warning',
      message: `${label}: ${droppedTotal - maxProblems} more rows with bad cells were left out (${droppedTotal} in all) — see data.dropped in the report`,
      path: ['data', 'file'],
      location: { file: label },
      rows: dropped.slice(maxProblems, maxProblems + MAX_ROWS_LISTED).map((d) => d.row),
    });
  const out: Record<string, Float64Array> = Object.create(null);
  wanted.forEach((c, k) => (out[c] = buffers[k].done()));
  const text: Record<string, string[]> = {};
  wantedText.forEach((c, k) => (text[c] = textOut[k]));
  return {
    file,
    columns: header,
    values: out,
    ...(wantedText.length ? { text } : {}),
    row: rowsOut.done(),
    line: linesOut.done(),
    totalRows: dataRow,
    dropped,
    droppedTotal,
    problems,
    hash,
  };
}


// A table read from a CSV file: strictly numeric columns plus where each row came from.
import type { Problem } from '../report';

export interface Table {
  /** path of the file as given to the reader */
  file: string;
  /** all header names in file order */
  columns: string[];
  /** the columns that were asked for, parsed strictly as numbers; length = kept rows. NaN never appears:
   *  a bad cell in a requested column drops the row (reported in `dropped`) or fails the read. Other columns are not parsed. */
  values: Record<string, Float64Array>;
  /** the columns asked for as text (ReadTableOptions.textColumns): each kept row's cell, trimmed, as written */
  text?: Record<string, string[]>;
  /** 1-based data row of each kept row (first row after the header is 1) */
  row: Int32Array;
  /** 1-based file line of each kept row */
  line: Int32Array;
  /** total data rows in the file, kept or dropped */
  totalRows: number;
  /** rows dropped for bad cells (the first 10,000 when there are more; see droppedTotal) */
  dropped: { row: number; line: number; column: string; reason: string }[];
  /** number of rows dropped for bad cells, also beyond those listed in `dropped` */
  droppedTotal?: number;
  /** data problems found while reading */
  problems: Problem[];
  /** sha256 of the file bytes, as "sha256:<hex>" */
  hash: string;
}

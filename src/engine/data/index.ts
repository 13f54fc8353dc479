// Data: streamed CSV reading, column expressions, filters, weights and data problems.
export { DataError } from './errors';
export { headerShape, readHeader, readTable, parseNumber, type HeaderShape, type ReadOptions, type ReadTableOptions, type Delimiter, type Decimal } from './csv';
export { prepareData, columnsNeeded, columnPaths, whereTextColumns, type PreparedData } from './prepare';
export type { Table } from './types';

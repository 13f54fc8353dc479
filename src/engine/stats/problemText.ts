// Wording helpers of the problem messages: row lists, quoted names, points and ranges (numbers through the one
// message formatter, src/shared/numberFormat.ts).
import { fmtMessage as fmt } from '../../shared/numberFormat';


export function listRows(rows: number[], max = 10): string {
  const shown = rows.slice(0, max).join(', ');
  return rows.length > max ? `${shown} and ${rows.length - max} more` : shown;
}

export function quoteList(names: string[]): string {
  return names.map((s) => `'${s}'`).join(', ');
}

export function describePoint(entry: number | Record<string, number>): string {
  return typeof entry === 'number' ? `x = ${fmt(entry)}` : Object.entries(entry).map(([k, v]) => `${k} = ${fmt(v)}`).join(', ');
}

export function describeRanges(vars: string[], ranges: [number, number][]): string {
  return vars.map((v, k) => `${v} from ${fmt(ranges[k][0])} to ${fmt(ranges[k][1])}`).join('; ');
}

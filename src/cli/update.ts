// `check --update`: set each expect value in the spec text to the current estimate, keeping comments, layout and
// the tolerance (jsonc-parser modify + applyEdits edit only the numbers).
import { applyEdits, modify, parse } from 'jsonc-parser';
import type { ExpectResult } from '../engine/report';

/**
 * The estimate rounded to a tenth of the allowed deviation (a readable pin that still passes by a wide margin):
 * tol 0.02 → 3 decimals; rel 0.05 of 0.0011292 → 6 decimals.
 */
export function roundedPin(actual: number, e: { tol?: number; rel?: number }): number {
  const allowed = e.tol !== undefined ? e.tol : (e.rel ?? 0) * Math.abs(actual);
  if (!(allowed > 0) || !Number.isFinite(allowed)) return actual;
  const decimals = -Math.floor(Math.log10(allowed / 10));
  if (decimals <= 0) {
    const unit = 10 ** -decimals;
    return Math.round(actual / unit) * unit;
  }
  if (decimals <= 20) return Number(actual.toFixed(decimals));
  const digits = Math.min(17, Math.max(1, decimals + Math.floor(Math.log10(Math.abs(actual))) + 1));
  return Number(actual.toPrecision(digits));
}

/** New spec text with every expect value that has an estimate set to it (rounded); unchanged text when nothing moves. */
export function updateExpectText(text: string, results: ExpectResult[]): { text: string; changed: { model: string; param: string; from: number; to: number }[] } {
  let out = text;
  const changed: { model: string; param: string; from: number; to: number }[] = [];
  for (const r of results) {
    if (r.actual === null || !Number.isFinite(r.actual)) continue;
    // a group's pin is its own key "K[R1]"; a plain "K" checked in every group has no one value to take
    const key = r.group !== undefined ? `${r.param}[${r.group}]` : r.param;
    if (r.group !== undefined && !hasKey(out, r.model, key)) continue;
    const to = roundedPin(r.actual, r);
    if (to === r.value) continue;
    const edits = modify(out, ['expect', r.model, key, 'value'], to, { formattingOptions: { insertSpaces: true, tabSize: 2 } });
    out = applyEdits(out, edits);
    changed.push({ model: r.model, param: r.param, from: r.value, to });
  }
  return { text: out, changed };
}

/** Whether the spec text has expect.<model>.<key>. */
function hasKey(text: string, model: string, key: string): boolean {
  const raw = parse(text, [], { allowTrailingComma: true }) as { expect?: Record<string, Record<string, unknown>> } | undefined;
  const entries = raw?.expect?.[model];
  return !!entries && typeof entries === 'object' && Object.prototype.hasOwnProperty.call(entries, key);
}

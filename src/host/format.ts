// Number formatting for hovers, lenses and the status bar (the JSON never rounds; these labels do).
export function fmt(v: number | null | undefined, digits = 4): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e6 || a < 1e-4) return v.toExponential(digits - 1).replace('-', '−');
  return Number(v.toPrecision(digits)).toString().replace('-', '−');
}

// Seeded synthetic data shared by behaviour tests (our own invented curves; no reference values are claimed).
import { mulberry32, normalSource } from '../../scripts/generate-demo';

/** y = Vmax x / (Km + x) + N(0, 0.05²), Vmax = 5, Km = 2, on 24 points — seeded. */
export function saturatingCsv(seed: number): string {
  const z = normalSource(mulberry32(seed));
  const rows = ['conc,rate'];
  for (let i = 1; i <= 24; i++) {
    const x = 0.25 * i * (1 + i / 8);
    rows.push(`${x.toFixed(4)},${((5 * x) / (2 + x) + 0.05 * z()).toFixed(5)}`);
  }
  return rows.join('\n') + '\n';
}

// Derived quantities of fitted parameters (e.g. doubling time log(2)/r): value h(θ̂), delta-method standard error
// sqrt(gᵀ C g) with g = ∇h(θ̂) from the compiled expression's exact symbolic derivatives and C the parameter
// covariance, and the Wald interval h(θ̂) ± q·se (delta method: e.g. Seber & Wild, Nonlinear Regression, §5.1).
import { compileFormula, formulaIdentifiers } from '../formula';
import type { DerivedReport, ModelReport } from '../report';
import { normalQuantile, tQuantile } from './distributions';

/** The parameters an expression uses (pi and e are constants, functions are not names). */
export function derivedParameters(text: string): string[] {
  return [...new Set(formulaIdentifiers(text).map(u => u.name))];
}

/**
 * Each derived quantity for one fitted model, in the order of `defs`; one whose parameters the model lacks is left
 * out (no problem: another model may have them). Nothing for a failed fit.
 */
export function derivedFor(
  defs: Record<string, string>,
  m: ModelReport,
  opts: { confidence: number; absolute: boolean },
): DerivedReport[] {
  if (m.status !== 'converged') return [];
  const out: DerivedReport[] = [];
  const names = m.paramOrder;
  const p = names.length;
  const theta = new Float64Array(p);
  names.forEach((n, j) => (theta[j] = m.params[n]?.value ?? NaN));
  const dof = m.stats.dof;
  const q = opts.absolute ? normalQuantile((1 + opts.confidence) / 2) : dof > 0 ? tQuantile((1 + opts.confidence) / 2, dof) : NaN;
  for (const [name, text] of Object.entries(defs)) {
    const uses = derivedParameters(text);
    if (!uses.every(u => names.includes(u))) continue;
    const f = compileFormula(text, { variables: [], params: names });
    const g = new Float64Array(p);
    const value = f.gradientAt(theta, [], g);
    let se: number | null = null;
    const C = m.covariance;
    if (C && Number.isFinite(value)) {
      let v = 0;
      let ok = true;
      for (let a = 0; a < p && ok; a++) {
        if (g[a] === 0) continue;
        for (let b = 0; b < p; b++) {
          if (g[b] === 0) continue;
          const c = C[a]?.[b];
          // a fixed parameter has no variance (its row and column are null or 0): it contributes nothing
          if (c === null || c === undefined) {
            if (m.params[names[a]]?.fixed || m.params[names[b]]?.fixed) continue;
            ok = false;
            break;
          }
          v += g[a] * c * g[b];
        }
      }
      se = ok && Number.isFinite(v) && v >= 0 ? Math.sqrt(v) : null;
    }
    const ci: [number, number] | null = se !== null && Number.isFinite(q) ? [value - q * se, value + q * se] : null;
    out.push({ name, model: m.name, group: m.group ?? null, value, se, ci });
  }
  return out;
}

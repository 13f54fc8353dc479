// Joint fit of all groups with some parameters common (models[].shared): the model's formula rewritten so each
// per-group parameter p becomes sum_g p[g]·I_g (I_g the 0/1 indicator of group g), fitted by the usual solver as one
// least-squares problem — the Jacobian columns of p[g] are exactly zero outside group g's rows (dense; common practice).

import { identUses } from './formula/compile';
import { parseFormula } from './formula/parser';
import type { ModelSpec, ParamSpec } from './report';

/** A name written in backticks in the formula language (a backtick inside is doubled). */
const bq = (name: string): string => `\`${name.replace(/`/g, '``')}\``;

export interface JointFormula {
  /** the rewritten formula */
  text: string;
  /** the indicator variables, one per group, in the groups' order */
  indicators: string[];
  /** the joint model's parameters: shared ones as named (first), the others name[<id>] per group */
  params: string[];
}

/** The per-group parameter name of the report: K[R1]. */
export const groupParam = (p: string, id: string): string => `${p}[${id}]`;

/** Rewrites `formula` (parameters `params`) so that the parameters not in `shared` take one value per group. */
export function jointFormula(formula: string, params: string[], shared: string[], ids: string[], taken: string[]): JointFormula {
  const indicators = ids.map((_, g) => {
    let name = `.in group ${g + 1}`;
    while (taken.includes(name)) name = `.${name}`;
    return name;
  });
  const perGroup = new Set(params.filter(p => !shared.includes(p)));
  const uses = identUses(parseFormula(formula)).filter(u => perGroup.has(u.name));
  let text = '';
  let at = 0;
  for (const u of uses) {
    text += formula.slice(at, u.span.start);
    text += `(${ids.map((id, g) => `${bq(groupParam(u.name, id))}*${bq(indicators[g])}`).join(' + ')})`;
    at = u.span.end;
  }
  text += formula.slice(at);
  // the shared parameters first (in the model's order), then each per-group parameter group by group: with many
  // groups the profile-likelihood budget is spent on the common parameters before the per-group ones
  const out: string[] = params.filter(p => !perGroup.has(p));
  for (const p of params) if (perGroup.has(p)) for (const id of ids) out.push(groupParam(p, id));
  return { text, indicators, params: out };
}

/** Median of finite values, or undefined. */
function median(v: number[]): number | undefined {
  const s = v.filter(Number.isFinite).sort((a, b) => a - b);
  if (s.length === 0) return undefined;
  const h = s.length >> 1;
  return s.length % 2 ? s[h] : (s[h - 1] + s[h]) / 2;
}

/**
 * The spec entry of the joint model: each parameter's bounds and fixing as written for the model, starts from the
 * separate fits (a shared parameter: the median across groups; a per-group one: its group's estimate).
 */
export function jointModelSpec(
  name: string,
  joint: JointFormula,
  params: string[],
  shared: string[],
  ids: string[],
  written: Record<string, ParamSpec> | undefined,
  separate: (Record<string, number> | null)[],
): ModelSpec {
  const out: Record<string, ParamSpec> = {};
  for (const p of params) {
    const base: ParamSpec = { ...(written?.[p] ?? {}) };
    if (shared.includes(p)) {
      const start = base.fixed ? base.start : median(separate.map(s => (s ? s[p] : NaN)));
      out[p] = { ...base, ...(start !== undefined ? { start } : {}) };
    } else {
      const fallback = median(separate.map(s => (s ? s[p] : NaN)));
      ids.forEach((id, g) => {
        const own = separate[g]?.[p];
        const start = base.fixed ? base.start : own !== undefined && Number.isFinite(own) ? own : fallback;
        out[groupParam(p, id)] = { ...base, ...(start !== undefined ? { start } : {}) };
      });
    }
  }
  return { name, formula: joint.text, params: Object.fromEntries(joint.params.map(k => [k, out[k]])) };
}

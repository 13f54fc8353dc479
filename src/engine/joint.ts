// Joint fit of all groups with some parameters common (models[].shared): the model's formula with each per-group
// parameter p read as p[g] on group g's rows (the same model as sum_g p[g]·I_g with I_g the 0/1 indicator of group g).
// The joint model is evaluated group by group with the model's own compiled formula (jointCompiled) and carries its
// block structure (solve/block.ts), so that the solver and the covariance never factor the dense
// n × (groups·p_local + p_shared) Jacobian.

import type { CompiledFormula } from './formula/types';
import type { BuiltModel } from './models/build';
import type { BlockStructure } from './solve/block';

/** The per-group parameter name of the report: K[R1]. */
export const groupParam = (p: string, id: string): string => `${p}[${id}]`;

/** Median of finite values, or undefined. */
function median(v: number[]): number | undefined {
  const s = v.filter(Number.isFinite).sort((a, b) => a - b);
  if (s.length === 0) return undefined;
  const h = s.length >> 1;
  return s.length % 2 ? s[h] : (s[h - 1] + s[h]) / 2;
}

/** Layout of a joint model over the base model's parameters: which are shared, and each joint parameter's base index. */
export interface JointLayout {
  /** base parameter indices held common, in the base order */
  shared: number[];
  /** base parameter indices taking one value per group, in the base order */
  local: number[];
  G: number;
  /** joint parameter index of base parameter k in group g */
  index(k: number, g: number): number;
}

/** The layout matching jointFormula's parameter order: shared ones first, then each per-group parameter group by group. */
export function jointLayout(params: string[], shared: string[], G: number): JointLayout {
  const sh = params.map((_, k) => k).filter(k => shared.includes(params[k]));
  const lo = params.map((_, k) => k).filter(k => !shared.includes(params[k]));
  const at = new Map<number, number>();
  sh.forEach((k, t) => at.set(k, t));
  return { shared: sh, local: lo, G, index: (k, g) => at.get(k) ?? sh.length + lo.indexOf(k) * G + g };
}

interface Split {
  /** the base variables' columns it was split from */
  cols: ArrayLike<number>[];
  group: Int32Array;
  rows: Int32Array[];
  /** each group's rows of the base variables */
  X: Float64Array[][];
  /** scratch of one group's evaluation */
  fg: Float64Array[];
  Jg: Float64Array[];
}

/**
 * The joint model as a compiled formula over [base variables…, group number]: each group's rows evaluated with the
 * base formula at (shared, that group's own) parameters. `blocks(X)` gives the solver its block structure on X.
 */
export function jointCompiled(base: CompiledFormula, lay: JointLayout, params: string[], groupVar: string): CompiledFormula & { blocks(X: ArrayLike<number>[]): BlockStructure } {
  const pb = base.params.length;
  const P = params.length;
  const nv = base.variables.length;
  const cache = new WeakMap<object, Split>();
  const split = (X: ArrayLike<number>[]): Split => {
    const gcol = X[nv];
    const hit = cache.get(gcol as object);
    if (hit && hit.cols.every((c, v) => c === X[v])) return hit;
    const n = gcol.length;
    const group = new Int32Array(n);
    const count = new Int32Array(lay.G);
    for (let i = 0; i < n; i++) {
      const g = gcol[i];
      if (!(Number.isInteger(g) && g >= 0 && g < lay.G)) throw new Error(`row ${i + 1} has no group`);
      group[i] = g;
      count[g]++;
    }
    const rows = Array.from(count, c => new Int32Array(c));
    const at = new Int32Array(lay.G);
    for (let i = 0; i < n; i++) rows[group[i]][at[group[i]]++] = i;
    const Xg = rows.map(r => Array.from({ length: nv }, (_, v) => Float64Array.from(r, i => X[v][i])));
    const s = { cols: X.slice(0, nv), group, rows, X: Xg, fg: rows.map(r => new Float64Array(r.length)), Jg: rows.map(r => new Float64Array(r.length * pb)) };
    cache.set(gcol as object, s);
    return s;
  };
  const thetaOf = (theta: ArrayLike<number>, g: number, out: Float64Array): void => {
    for (let k = 0; k < pb; k++) out[k] = theta[lay.index(k, g)];
  };
  const tg = new Float64Array(pb);
  /** f and, with Jc, the compact Jacobian (n × pb, base parameter k in column colOf[k]) */
  const baseOrder = Array.from({ length: pb }, (_, k) => k);
  const evalCompact = (theta: ArrayLike<number>, X: ArrayLike<number>[], f: Float64Array, Jc: Float64Array | null, colOf: number[] = baseOrder): void => {
    const s = split(X);
    const n = s.group.length;
    for (let g = 0; g < lay.G; g++) {
      const r = s.rows[g];
      const ng = r.length;
      if (ng === 0) continue;
      thetaOf(theta, g, tg);
      const fg = s.fg[g];
      if (Jc) {
        const Jg = s.Jg[g];
        base.evaluateWithJacobian(tg, s.X[g], fg, Jg);
        for (let k = 0; k < pb; k++) {
          const c = colOf[k] * n;
          for (let a = 0; a < ng; a++) Jc[c + r[a]] = Jg[k * ng + a];
        }
      } else base.evaluate(tg, s.X[g], fg);
      for (let a = 0; a < ng; a++) f[r[a]] = fg[a];
    }
  };
  // compact columns of the block structure: shared base parameters, then the per-group ones (base order within each)
  const compactCol: number[] = new Array(pb);
  [...lay.shared, ...lay.local].forEach((k, t) => (compactCol[k] = t));
  return {
    text: base.text,
    ast: base.ast,
    variables: [...base.variables, groupVar],
    params,
    linear: base.linear,
    hasConstantTerm: base.hasConstantTerm,
    evaluate: (theta, X, out) => evalCompact(theta, X, out, null),
    evaluateWithJacobian(theta, X, out, J) {
      const n = out.length;
      const Jc = new Float64Array(n * pb);
      evalCompact(theta, X, out, Jc);
      const s = split(X);
      J.fill(0, 0, n * P);
      for (let i = 0; i < n; i++) for (let k = 0; k < pb; k++) J[lay.index(k, s.group[i]) * n + i] = Jc[k * n + i];
    },
    at(theta, x) {
      const t = new Float64Array(pb);
      thetaOf(theta, x[nv], t);
      return base.at(t, Array.prototype.slice.call(x, 0, nv));
    },
    gradientAt(theta, x, grad) {
      const g = x[nv];
      const t = new Float64Array(pb);
      thetaOf(theta, g, t);
      const gb = new Float64Array(pb);
      const v = base.gradientAt(t, Array.prototype.slice.call(x, 0, nv), gb);
      grad.fill(0, 0, P);
      for (let k = 0; k < pb; k++) grad[lay.index(k, g)] = gb[k];
      return v;
    },
    blocks(X) {
      const s = split(X);
      return {
        G: lay.G,
        group: s.group,
        shared: lay.shared.map(k => lay.index(k, 0)),
        local: Array.from({ length: lay.G }, (_, g) => lay.local.map(k => lay.index(k, g))),
        evaluate: (theta, f, Jc) => evalCompact(theta, X, f, Jc, compactCol),
      };
    },
  };
}

/**
 * The joint model built from the base model (its bounds and fixing per parameter), starts from the separate fits
 * (a shared parameter: the median across groups; a per-group one: its group's estimate, else the median).
 */
export function jointBuiltModel(base: BuiltModel, shared: string[], ids: string[], separate: (Record<string, number> | null)[], groupVar: string): BuiltModel {
  const G = ids.length;
  const lay = jointLayout(base.params, shared, G);
  const P = base.params.length;
  const names: string[] = new Array(lay.shared.length + lay.local.length * G);
  const lower = new Float64Array(names.length);
  const upper = new Float64Array(names.length);
  const fixed: boolean[] = new Array(names.length).fill(false);
  const start: (number | undefined)[] = new Array(names.length);
  for (let k = 0; k < P; k++) {
    const p = base.params[k];
    const med = median(separate.map(s => (s ? s[p] : NaN)));
    const isShared = lay.shared.includes(k);
    for (let g = 0; g < (isShared ? 1 : G); g++) {
      const j = lay.index(k, g);
      names[j] = isShared ? p : groupParam(p, ids[g]);
      lower[j] = base.lower[k];
      upper[j] = base.upper[k];
      fixed[j] = base.fixed[k];
      const own = isShared ? undefined : separate[g]?.[p];
      const s0 = base.fixed[k] ? base.start[k] : own !== undefined && Number.isFinite(own) ? own : med ?? base.start[k];
      start[j] = s0 === undefined ? undefined : Math.min(upper[j], Math.max(lower[j], s0));
    }
  }
  const compiled = jointCompiled(base.compiled, lay, names, groupVar);
  return { name: base.name, kind: 'formula', formula: base.formula, compiled, params: names, lower, upper, fixed, start, startSource: 'spec' };
}

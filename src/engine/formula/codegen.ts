// Code generation: JavaScript source built ONLY from the checked expression graph — identifiers become array
// indices (theta[j], X[k][i]), numbers round-trip literals, functions come from a fixed table — then `new Function`.
// One loop over the points per call; subexpressions free of the variables are hoisted out of the loop; common
// subexpressions are shared by the hash-consed graph, and a power a^(b−1) of the power rule reuses a^b already
// computed in the same kernel as a^b / a (one Math.pow per power; Math.pow itself where a = 0 or a^b is not a normal
// finite number, so zeros, subnormals and overflow keep their exact limits).
// Large graphs (a product of hundreds of parameters has a Jacobian of O(p²) nodes) keep their intermediate values in
// one Float64Array instead of local constants: a function with a hundred thousand locals overflows the stack when
// called, an array slot per node does not.

import { MATH_UNARY } from './functions';
import { Graph, GNode } from './graph';
import { reachable } from './derive';

/** A JavaScript literal that evaluates to exactly `v` (ECMAScript Number::toString is shortest round-trip). */
export function numberLiteral(v: number): string {
  if (Number.isNaN(v)) return 'NaN';
  if (v === Infinity) return 'Infinity';
  if (v === -Infinity) return '(-Infinity)';
  if (Object.is(v, -0)) return '(-0)';
  const s = String(v);
  return v < 0 ? `(${s})` : s;
}

const CMP_JS: Readonly<Record<string, string>> = { '<': '<', '<=': '<=', '>': '>', '>=': '>=', '==': '===', '!=': '!==' };

export interface Kernels {
  evaluate(theta: ArrayLike<number>, X: ArrayLike<number>[], out: Float64Array): void;
  evaluateWithJacobian(theta: ArrayLike<number>, X: ArrayLike<number>[], out: Float64Array, J: Float64Array): void;
  at(theta: ArrayLike<number>, x: ArrayLike<number>): number;
  gradientAt(theta: ArrayLike<number>, x: ArrayLike<number>, grad: Float64Array): number;
  /** generated source, for inspection and tests */
  source: { evaluate: string; evaluateWithJacobian: string; at: string; gradientAt: string };
}

/** above this many intermediate values a kernel keeps them in an array, not in local constants */
export const SLOT_THRESHOLD = 4000;

export class Emitter {
  /** node id → index in the slot array `s`, when intermediate values live in an array */
  private slots: Map<number, number> | null = null;
  /** nodes emitted so far in the current kernel (see begin) */
  private emitted = new Set<number>();

  constructor(private readonly g: Graph) {}

  /** Keep the values of `ids` (non-leaf nodes) in the array `s`; returns its length. */
  useSlots(ids: readonly number[]): number {
    this.slots = new Map();
    for (const id of ids) if (!this.slots.has(id)) this.slots.set(id, this.slots.size);
    return this.slots.size;
  }

  /** start a new kernel: nothing computed yet */
  begin(): this {
    this.emitted.clear();
    return this;
  }

  /** a^b computed already in this kernel, for the power a^e with e = b − 1 */
  private sharedPower(base: number, expo: number): number | undefined {
    const e = this.g.get(expo);
    let b: number | undefined;
    if (e.op === 'const') b = this.g.findConst(e.value + 1);
    else if (e.op === 'sub' && this.g.isConst(e.args[1], 1)) b = e.args[0];
    if (b === undefined) return undefined;
    const w = this.g.find('pow', [base, b]);
    return w !== undefined && this.emitted.has(w) ? w : undefined;
  }

  ref(id: number): string {
    const n = this.g.get(id);
    switch (n.op) {
      case 'const': return numberLiteral(n.value);
      case 'param': return `t${n.index | 0}`;
      case 'var': return `x${n.index | 0}`;
      default: {
        const k = this.slots?.get(id);
        return k !== undefined ? `s[${k | 0}]` : `${n.hasVar ? 'v' : 'h'}${id | 0}`;
      }
    }
  }

  expr(n: GNode): string {
    const r = (k: number) => this.ref(n.args[k]);
    switch (n.op) {
      case 'add': return `${r(0)} + ${r(1)}`;
      case 'sub': return `${r(0)} - ${r(1)}`;
      case 'mul': return `${r(0)} * ${r(1)}`;
      case 'div': return `${r(0)} / ${r(1)}`;
      case 'neg': return `-${r(0)}`;
      case 'pow': {
        const e = this.g.get(n.args[1]);
        if (e.op === 'const') {
          const a = r(0);
          if (e.value === 2) return `${a} * ${a}`;
          if (e.value === 3) return `${a} * ${a} * ${a}`;
          if (e.value === -1) return `1 / ${a}`;
          if (e.value === -2) return `1 / (${a} * ${a})`;
        }
        const w = this.sharedPower(n.args[0], n.args[1]);
        if (w !== undefined) {
          const a = r(0);
          const v = this.ref(w);
          return `(${a} !== 0 && Math.abs(${v}) >= 2.2250738585072014e-308 && Math.abs(${v}) < Infinity ? ${v} / ${a} : Math.pow(${a}, ${r(1)}))`;
        }
        return `Math.pow(${r(0)}, ${r(1)})`;
      }
      case 'fn': {
        const f = MATH_UNARY[n.fn];
        if (f === undefined) throw new Error(`internal: no code for function ${n.fn}`);
        return `${f}(${r(0)})`;
      }
      case 'min': return `Math.min(${r(0)}, ${r(1)})`;
      case 'max': return `Math.max(${r(0)}, ${r(1)})`;
      case 'sign': return `Math.sign(${r(0)})`;
      case 'cmp': {
        const op = CMP_JS[n.fn];
        if (op === undefined) throw new Error(`internal: no code for comparison ${n.fn}`);
        return `(${r(0)} ${op} ${r(1)} ? 1 : 0)`;
      }
      case 'and': return `(${r(0)} && ${r(1)} ? 1 : 0)`;
      case 'or': return `(${r(0)} || ${r(1)} ? 1 : 0)`;
      case 'not': return `(${r(0)} ? 0 : 1)`;
      case 'select': return `(${r(0)} ? ${r(1)} : ${r(2)})`;
      case 'mulz': return `(${r(1)} === 0 ? 0 : ${r(0)} * ${r(1)})`;
      default: throw new Error(`internal: no code for ${n.op}`);
    }
  }

  /** Statements computing every non-leaf node of `ids` (in order). */
  statements(ids: readonly number[], indent: string): string[] {
    const out: string[] = [];
    for (const id of ids) {
      const n = this.g.get(id);
      if (n.op === 'const' || n.op === 'param' || n.op === 'var') continue;
      out.push(`${indent}${this.slots ? '' : 'const '}${this.ref(id)} = ${this.expr(n)};`);
      this.emitted.add(id);
    }
    return out;
  }
}

interface Plan {
  params: number[];
  vars: number[];
  hoisted: number[];
  inner: number[];
}

function plan(g: Graph, roots: readonly number[]): Plan {
  const ids = reachable(g, roots);
  const p: Plan = { params: [], vars: [], hoisted: [], inner: [] };
  for (const id of ids) {
    const n = g.get(id);
    if (n.op === 'param') p.params.push(n.index);
    else if (n.op === 'var') p.vars.push(n.index);
    else if (n.op !== 'const') (n.hasVar ? p.inner : p.hoisted).push(id);
  }
  p.params.sort((a, b) => a - b);
  p.vars.sort((a, b) => a - b);
  return p;
}

/**
 * Generate the four evaluators for f (node `f`) and its derivatives (`d[j]` = ∂f/∂θ_j) over `nvars` variables.
 */
export function generateKernels(g: Graph, f: number, d: readonly number[], slotThreshold = SLOT_THRESHOLD): Kernels {
  const loadParams = (pl: Plan) => pl.params.map((j) => `  const t${j} = +theta[${j}];`);
  // one emitter per kernel: slots (when used) are numbered per kernel
  const emitter = (pl: Plan): { e: Emitter; alloc: string[] } => {
    const e = new Emitter(g);
    if (pl.hoisted.length + pl.inner.length <= slotThreshold) return { e, alloc: [] };
    const size = e.useSlots([...pl.hoisted, ...pl.inner]);
    return { e, alloc: [`  const s = new Float64Array(${size | 0});`] };
  };

  // evaluate(theta, X, out)
  const pe = plan(g, [f]);
  const ee = emitter(pe);
  let e = ee.e.begin();
  const evaluate = [
    '"use strict";',
    'return function evaluate(theta, X, out) {',
    '  const n = out.length;',
    ...ee.alloc,
    ...loadParams(pe),
    ...pe.vars.map((k) => `  const X${k} = X[${k}];`),
    ...e.statements(pe.hoisted, '  '),
    '  for (let i = 0; i < n; i++) {',
    ...pe.vars.map((k) => `    const x${k} = X${k}[i];`),
    ...e.statements(pe.inner, '    '),
    `    out[i] = ${e.ref(f)};`,
    '  }',
    '};',
  ].join('\n');

  // evaluateWithJacobian(theta, X, out, J): J column-major, J[j*n + i]
  const pj = plan(g, [f, ...d]);
  const ej = emitter(pj);
  e = ej.e.begin();
  const jac = [
    '"use strict";',
    'return function evaluateWithJacobian(theta, X, out, J) {',
    '  const n = out.length;',
    ...ej.alloc,
    ...loadParams(pj),
    ...pj.vars.map((k) => `  const X${k} = X[${k}];`),
    ...d.map((_, j) => `  const o${j} = ${j} * n;`),
    ...e.statements(pj.hoisted, '  '),
    '  for (let i = 0; i < n; i++) {',
    ...pj.vars.map((k) => `    const x${k} = X${k}[i];`),
    ...e.statements(pj.inner, '    '),
    `    out[i] = ${e.ref(f)};`,
    ...d.map((dj, j) => `    J[o${j} + i] = ${e.ref(dj)};`),
    '  }',
    '};',
  ].join('\n');

  // at(theta, x)
  e = ee.e.begin();
  const at = [
    '"use strict";',
    'return function at(theta, x) {',
    ...ee.alloc,
    ...loadParams(pe),
    ...pe.vars.map((k) => `  const x${k} = +x[${k}];`),
    ...e.statements(pe.hoisted, '  '),
    ...e.statements(pe.inner, '  '),
    `  return ${e.ref(f)};`,
    '};',
  ].join('\n');

  // gradientAt(theta, x, grad) -> f
  e = ej.e.begin();
  const grad = [
    '"use strict";',
    'return function gradientAt(theta, x, grad) {',
    ...ej.alloc,
    ...loadParams(pj),
    ...pj.vars.map((k) => `  const x${k} = +x[${k}];`),
    ...e.statements(pj.hoisted, '  '),
    ...e.statements(pj.inner, '  '),
    ...d.map((dj, j) => `  grad[${j}] = ${e.ref(dj)};`),
    `  return ${e.ref(f)};`,
    '};',
  ].join('\n');

  const make = <T>(src: string): T => new Function(src)() as T;
  return {
    evaluate: make(evaluate),
    evaluateWithJacobian: make(jac),
    at: make(at),
    gradientAt: make(grad),
    source: { evaluate, evaluateWithJacobian: jac, at, gradientAt: grad },
  };
}

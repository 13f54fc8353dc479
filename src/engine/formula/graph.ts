// Hash-consed expression graph (a DAG): structurally equal subexpressions share one node, which gives
// common-subexpression elimination for free; smart constructors fold constants and apply algebraic identities.

import { UNARY_IMPL } from './functions';

export type Op =
  | 'const' | 'var' | 'param'
  | 'add' | 'sub' | 'mul' | 'div' | 'neg' | 'pow'
  | 'fn' /* unary Math function, name in fn */
  | 'min' | 'max'
  | 'sign'
  | 'cmp' /* comparison, operator in fn; 1 or 0 */
  | 'and' | 'or' | 'not'
  | 'select' /* args[0] ? args[1] : args[2] (args[0] is 0/1) */
  | 'mulz' /* args[1] === 0 ? 0 : args[0]*args[1] — chain-rule product where a zero inner derivative wins over an infinite outer one */;

export interface GNode {
  readonly id: number;
  readonly op: Op;
  readonly args: readonly number[];
  /** constant value (op 'const') */
  readonly value: number;
  /** variable or parameter index (op 'var' / 'param') */
  readonly index: number;
  /** function name (op 'fn') or comparison operator (op 'cmp') */
  readonly fn: string;
  /** depends on some variable */
  readonly hasVar: boolean;
  /** depends on some parameter */
  readonly hasParam: boolean;
}

function constKey(v: number): string {
  return Object.is(v, -0) ? '-0' : String(v);
}

export function compare(fn: string, a: number, b: number): number {
  switch (fn) {
    case '<': return a < b ? 1 : 0;
    case '<=': return a <= b ? 1 : 0;
    case '>': return a > b ? 1 : 0;
    case '>=': return a >= b ? 1 : 0;
    case '==': return a === b ? 1 : 0;
    case '!=': return a !== b ? 1 : 0;
  }
  throw new Error(`internal: unknown comparison ${fn}`);
}

/** Numeric meaning of every operation (constant folding; reference interpreter). Logic: a number is true when nonzero and not NaN. */
export function applyOp(op: Op, fn: string, v: readonly number[]): number {
  switch (op) {
    case 'add': return v[0] + v[1];
    case 'sub': return v[0] - v[1];
    case 'mul': return v[0] * v[1];
    case 'div': return v[0] / v[1];
    case 'neg': return -v[0];
    case 'pow': return Math.pow(v[0], v[1]);
    case 'fn': return UNARY_IMPL[fn](v[0]);
    case 'min': return Math.min(v[0], v[1]);
    case 'max': return Math.max(v[0], v[1]);
    case 'sign': return Math.sign(v[0]);
    case 'cmp': return compare(fn, v[0], v[1]);
    case 'and': return v[0] && v[1] ? 1 : 0;
    case 'or': return v[0] || v[1] ? 1 : 0;
    case 'not': return v[0] ? 0 : 1;
    case 'select': return v[0] ? v[1] : v[2];
    case 'mulz': return v[1] === 0 ? 0 : v[0] * v[1];
    default: throw new Error(`internal: cannot apply ${op}`);
  }
}

export class Graph {
  readonly nodes: GNode[] = [];
  private readonly table = new Map<string, number>();

  get(id: number): GNode {
    return this.nodes[id];
  }

  isConst(id: number, v?: number): boolean {
    const n = this.nodes[id];
    return n.op === 'const' && (v === undefined || n.value === v);
  }

  /** the node op(args) if the graph has it, without creating it (code generation looks for shared powers) */
  find(op: Op, args: readonly number[], fn = ''): number | undefined {
    return this.table.get(`${op}|${fn}|-1|${args.join(',')}`);
  }

  /** the constant node of value v if the graph has it */
  findConst(v: number): number | undefined {
    return this.table.get('c' + constKey(v));
  }

  private intern(op: Op, args: readonly number[], value: number, index: number, fn: string): number {
    const key = op === 'const' ? 'c' + constKey(value) : `${op}|${fn}|${index}|${args.join(',')}`;
    const hit = this.table.get(key);
    if (hit !== undefined) return hit;
    let hasVar = op === 'var';
    let hasParam = op === 'param';
    for (const a of args) {
      hasVar ||= this.nodes[a].hasVar;
      hasParam ||= this.nodes[a].hasParam;
    }
    const id = this.nodes.length;
    this.nodes.push({ id, op, args, value, index, fn, hasVar, hasParam });
    this.table.set(key, id);
    return id;
  }

  private zeroId = -1;
  private oneId = -1;

  num(v: number): number {
    if (v === 0 && !Object.is(v, -0)) return this.zeroId >= 0 ? this.zeroId : (this.zeroId = this.intern('const', [], 0, -1, ''));
    if (v === 1) return this.oneId >= 0 ? this.oneId : (this.oneId = this.intern('const', [], 1, -1, ''));
    return this.intern('const', [], v, -1, '');
  }
  variable(k: number): number {
    return this.intern('var', [], NaN, k, '');
  }
  param(j: number): number {
    return this.intern('param', [], NaN, j, '');
  }

  /** An operation exactly as written (constants folded, nothing else): keeps the user's formula's IEEE semantics. */
  raw(op: Op, args: readonly number[], fn = ''): number {
    if (args.every((a) => this.nodes[a].op === 'const')) {
      return this.num(applyOp(op, fn, args.map((a) => this.nodes[a].value)));
    }
    return this.intern(op, args, NaN, -1, fn);
  }

  // ---- smart constructors for derivative expressions (identities valid for finite values) ----

  /** operands of commutative operations in a canonical order (constants first, then by id) improve sharing */
  private order(a: number, b: number): [number, number] {
    return a <= b ? [a, b] : [b, a];
  }

  add(a: number, b: number): number {
    if (this.isConst(a, 0)) return b;
    if (this.isConst(b, 0)) return a;
    const na = this.nodes[a];
    const nb = this.nodes[b];
    if (nb.op === 'neg') return this.sub(a, nb.args[0]);
    if (na.op === 'neg') return this.sub(b, na.args[0]);
    const [x, y] = this.order(a, b);
    return this.raw('add', [x, y]);
  }

  sub(a: number, b: number): number {
    if (this.isConst(b, 0)) return a;
    if (this.isConst(a, 0)) return this.neg(b);
    if (a === b) return this.num(0);
    const nb = this.nodes[b];
    if (nb.op === 'neg') return this.add(a, nb.args[0]);
    return this.raw('sub', [a, b]);
  }

  neg(a: number): number {
    const na = this.nodes[a];
    if (na.op === 'const') return this.num(-na.value);
    if (na.op === 'neg') return na.args[0];
    if (na.op === 'sub') return this.raw('sub', [na.args[1], na.args[0]]);
    return this.raw('neg', [a]);
  }

  mul(a: number, b: number): number {
    if (this.isConst(a, 0) || this.isConst(b, 0)) return this.num(0);
    if (this.isConst(a, 1)) return b;
    if (this.isConst(b, 1)) return a;
    if (this.isConst(a, -1)) return this.neg(b);
    if (this.isConst(b, -1)) return this.neg(a);
    const na = this.nodes[a];
    const nb = this.nodes[b];
    if (na.op === 'neg' && nb.op === 'neg') return this.mul(na.args[0], nb.args[0]);
    // c1*(c2*u) -> (c1*c2)*u
    if (na.op === 'const' && nb.op === 'mul' && this.isConst(nb.args[0])) {
      return this.mul(this.num(na.value * this.nodes[nb.args[0]].value), nb.args[1]);
    }
    if (nb.op === 'const' && na.op === 'mul' && this.isConst(na.args[0])) {
      return this.mul(this.num(nb.value * this.nodes[na.args[0]].value), na.args[1]);
    }
    if (a === b) return this.raw('pow', [a, this.num(2)]);
    const [x, y] = this.order(a, b);
    return this.raw('mul', [x, y]);
  }

  div(a: number, b: number): number {
    if (this.isConst(a, 0)) return this.num(0);
    if (this.isConst(b, 1)) return a;
    if (this.isConst(b, -1)) return this.neg(a);
    const na = this.nodes[a];
    const nb = this.nodes[b];
    if (na.op === 'neg') return this.neg(this.div(na.args[0], b));
    if (nb.op === 'neg') return this.neg(this.div(a, nb.args[0]));
    if (nb.op === 'const' && nb.value !== 0 && Number.isFinite(1 / nb.value) && isPowerOfTwo(nb.value)) {
      return this.mul(this.num(1 / nb.value), a);
    }
    return this.raw('div', [a, b]);
  }

  /**
   * p*q, except that q = 0 gives 0 even when p is infinite or NaN: used for chain-rule products outer'·inner'
   * where the outer derivative can be infinite at a point where the inner function does not move
   * (e.g. ∂/∂scale of (x/scale)^shape at x = 0, or u^b·ln u at u = 0 with b > 0: the limits are 0).
   */
  mulz(p: number, q: number): number {
    if (this.isConst(q)) return this.get(q).value === 0 ? this.num(0) : this.mul(p, q);
    const np = this.nodes[p];
    if (np.op === 'const' && Number.isFinite(np.value)) return this.mul(p, q);
    return this.raw('mulz', [p, q]);
  }

  pow(a: number, b: number): number {
    if (this.isConst(b, 1)) return a;
    if (this.isConst(b, 0)) return this.num(1);
    if (this.isConst(a, 1)) return this.num(1);
    return this.raw('pow', [a, b]);
  }

  call(fn: string, a: number): number {
    return this.raw('fn', [a], fn);
  }
}

function isPowerOfTwo(v: number): boolean {
  const m = Math.abs(v);
  return Number.isFinite(m) && m > 0 && Math.log2(m) === Math.round(Math.log2(m));
}

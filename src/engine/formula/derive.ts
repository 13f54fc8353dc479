// Exact symbolic derivatives on the expression graph (chain rule, one pass in topological order), with
// power rule n*u^(n-1) for exponents free of the parameter (no log of a negative base), subgradients for abs/min/max,
// and the convention 0·∞ = 0 in chain-rule products whose inner derivative is exactly 0 (limits at u = 0 of u^b, ln, sqrt).

import { Graph } from './graph';

/**
 * ∂f/∂θ_j as a graph node, for every node reachable from `root` (returned: derivative of root).
 * `j` is the parameter index. Nodes are visited in increasing id order, which is topological (arguments are
 * always created before their users).
 */
export function derivative(g: Graph, root: number, j: number, plan?: DerivativePlan): number {
  const reach = plan ? plan.reach : reachable(g, [root]);
  const depends = plan ? plan.depends : () => true;
  const zero = g.num(0);
  const one = g.num(1);
  // d[id] = node of ∂(node id)/∂θ_j; only nodes that existed before this pass are looked up
  const d = new Int32Array(g.nodes.length).fill(zero);
  const isZero = (x: number) => x === zero;
  for (const id of reach) {
    const n = g.get(id);
    if (!n.hasParam || !depends(id, j)) continue;
    const a = n.args[0];
    const b = n.args[1];
    const da = a === undefined ? zero : d[a];
    const db = b === undefined ? zero : d[b];
    let r: number;
    switch (n.op) {
      case 'param':
        r = n.index === j ? one : zero;
        break;
      case 'add':
        r = g.add(da, db);
        break;
      case 'sub':
        r = g.sub(da, db);
        break;
      case 'neg':
        r = g.neg(da);
        break;
      case 'mul':
        r = g.add(g.mul(da, b), g.mul(a, db));
        break;
      case 'div':
        // (a/b)' = a'*(1/b) + (-(a/b)*(1/b))*b': the quotient, the reciprocal and their product are shared by
        // every parameter, so each column costs multiplications, not divisions. Where b has overflowed to ±∞
        // (exp(u) with large u, (c/x)^s at x = 0) the factor -(a/b)/b is 0 and wins over an infinite b'
        // (the limit -a·b'/b² → 0 when b grows like its derivative), so such points get 0, not NaN.
        r = g.add(g.mul(da, reciprocal(g, b)), isZero(db) ? zero : g.mulz(db, g.neg(g.mul(id, reciprocal(g, b)))));
        break;
      case 'pow': {
        if (isZero(db)) {
          // exponent free of θ_j: b*a^(b-1)*a'
          const nb = g.get(b);
          const expo = nb.op === 'const' ? g.num(nb.value - 1) : g.raw('sub', [b, one]);
          r = g.mulz(g.mul(b, g.pow(a, expo)), da);
        } else if (isZero(da)) {
          // base free of θ_j: a^b * ln(a) * b', with a^b*ln(a) = 0 where a^b = 0 (the limit at a = 0, b > 0)
          r = g.mul(g.mulz(g.call('log', a), id), db);
        } else {
          // general: a^b * (b' ln a + b a'/a)
          r = g.mul(id, g.add(g.mul(db, g.call('log', a)), g.div(g.mul(b, da), a)));
        }
        break;
      }
      case 'fn':
        if (isZero(da)) r = zero;
        else if (n.fn === 'log' || n.fn === 'sqrt' || n.fn === 'log10') r = unaryQuotient(g, n.fn, a, id, da);
        else if (n.fn === 'asin' || n.fn === 'acos') r = g.mulz(unaryDerivative(g, n.fn, a, id), da);
        // exp(u) that underflowed to 0 wins over an infinite u' (exp(-c/x) at x = 0: the limit is 0)
        else if (n.fn === 'exp') r = g.mulz(da, id);
        else r = g.mul(unaryDerivative(g, n.fn, a, id), da);
        break;
      case 'min':
      case 'max': {
        if (da === db) {
          r = da;
        } else {
          // subgradient: the derivative of the argument that is selected (the first one on ties)
          const test = g.raw('cmp', [a, b], n.op === 'min' ? '<=' : '>=');
          r = g.raw('select', [test, da, db]);
        }
        break;
      }
      case 'select': {
        const dx = d[n.args[1]];
        const dy = d[n.args[2]];
        r = dx === dy ? dx : g.raw('select', [a, dx, dy]);
        break;
      }
      case 'mulz':
        r = g.add(g.mul(da, b), g.mul(a, db));
        break;
      case 'sign':
      case 'cmp':
      case 'and':
      case 'or':
      case 'not':
        r = zero; // piecewise constant
        break;
      default:
        r = zero; // const, var
    }
    d[id] = r;
  }
  return d[root];
}

function reciprocal(g: Graph, b: number): number {
  const n = g.get(b);
  return n.op === 'const' ? g.num(1 / n.value) : g.raw('div', [g.num(1), b]);
}

/** f'(u) for f(u) = node (u = argument), for the functions whose derivative is a factor. */
function unaryDerivative(g: Graph, fn: string, u: number, node: number): number {
  const one = g.num(1);
  switch (fn) {
    case 'exp': return node;
    case 'abs': return g.raw('sign', [u]);
    case 'sin': return g.call('cos', u);
    case 'cos': return g.neg(g.call('sin', u));
    case 'tan': return g.add(one, g.pow(node, g.num(2)));
    case 'asin': return g.div(one, g.call('sqrt', g.sub(one, g.pow(u, g.num(2)))));
    case 'acos': return g.neg(g.div(one, g.call('sqrt', g.sub(one, g.pow(u, g.num(2))))));
    case 'atan': return g.div(one, g.add(one, g.pow(u, g.num(2))));
    case 'sinh': return g.call('cosh', u);
    case 'cosh': return g.call('sinh', u);
    case 'tanh': return g.sub(one, g.pow(node, g.num(2)));
  }
  throw new Error(`internal: no derivative rule for ${fn}`);
}

/** u'/u, u'/(u ln 10), u'/(2 sqrt u) — as (1/…)·u' with a zero u' winning (mulz) */
function unaryQuotient(g: Graph, fn: string, u: number, node: number, du: number): number {
  switch (fn) {
    case 'log': return g.mulz(reciprocal(g, u), du);
    case 'log10': return g.mulz(reciprocal(g, g.mul(g.num(Math.LN10), u)), du);
    case 'sqrt': return g.mulz(reciprocal(g, g.mul(g.num(2), node)), du);
  }
  throw new Error(`internal: no quotient rule for ${fn}`);
}

/** Shared work for the derivatives of one root with respect to every parameter. */
export interface DerivativePlan {
  reach: number[];
  /** does node `id` depend on parameter j */
  depends: (id: number, j: number) => boolean;
}

/** Reachable nodes of `root` and a bitset of the parameters each depends on: each ∂/∂θ_j then visits only its nodes. */
export function derivativePlan(g: Graph, root: number, p: number): DerivativePlan {
  const reach = reachable(g, [root]);
  const W = Math.max(1, Math.ceil(p / 32));
  const row = new Map<number, number>();
  reach.forEach((id, k) => row.set(id, k));
  const bits = new Uint32Array(reach.length * W);
  reach.forEach((id, k) => {
    const n = g.get(id);
    if (n.op === 'param' && n.index < p) bits[k * W + (n.index >>> 5)] |= 1 << (n.index & 31);
    for (const a of n.args) {
      const ka = row.get(a) as number;
      for (let w = 0; w < W; w++) bits[k * W + w] |= bits[ka * W + w];
    }
  });
  const rowOf = new Int32Array(g.nodes.length).fill(-1);
  reach.forEach((id, k) => (rowOf[id] = k));
  return {
    reach,
    depends: (id, j) => {
      const k = rowOf[id];
      return k >= 0 && (bits[k * W + (j >>> 5)] & (1 << (j & 31))) !== 0;
    },
  };
}

/** Ids of the nodes reachable from `roots`, in increasing (topological) order. */
export function reachable(g: Graph, roots: readonly number[]): number[] {
  const seen = new Uint8Array(g.nodes.length);
  const stack = [...roots];
  while (stack.length > 0) {
    const id = stack.pop() as number;
    if (seen[id]) continue;
    seen[id] = 1;
    for (const a of g.get(id).args) if (!seen[a]) stack.push(a);
  }
  const out: number[] = [];
  for (let id = 0; id < seen.length; id++) if (seen[id]) out.push(id);
  return out;
}

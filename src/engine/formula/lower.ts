// Lowering of a checked AST to the expression graph, with identifiers resolved to variable/parameter indices.

import { CONSTANT_VALUES } from './functions';
import { Graph } from './graph';
import { FormulaError, Node } from './types';

export type Resolved = { kind: 'var'; index: number } | { kind: 'param'; index: number } | { kind: 'const'; value: number };

/** Lower `node` into `g` exactly as written (only constants are folded). */
export function lower(g: Graph, node: Node, resolve: (name: string, quoted: boolean) => Resolved): number {
  switch (node.type) {
    case 'num':
      return g.num(node.value);
    case 'str':
      // row filters replace text comparisons by codes before compiling (data/prepare.ts); elsewhere text is an error
      throw new FormulaError(
        `text ${JSON.stringify(node.value)} at column ${node.span.start + 1} can only be compared with a text column in data.where, e.g. state == ${JSON.stringify(node.value)}`,
        node.span,
      );
    case 'ident': {
      if (!node.quoted && Object.prototype.hasOwnProperty.call(CONSTANT_VALUES, node.name)) {
        return g.num(CONSTANT_VALUES[node.name]);
      }
      const r = resolve(node.name, !!node.quoted);
      return r.kind === 'var' ? g.variable(r.index) : r.kind === 'param' ? g.param(r.index) : g.num(r.value);
    }
    case 'unary': {
      const a = lower(g, node.arg, resolve);
      if (node.op === '+') return a;
      return g.raw(node.op === '-' ? 'neg' : 'not', [a]);
    }
    case 'binary': {
      const a = lower(g, node.left, resolve);
      const b = lower(g, node.right, resolve);
      switch (node.op) {
        case '+': return g.raw('add', [a, b]);
        case '-': return g.raw('sub', [a, b]);
        case '*': return g.raw('mul', [a, b]);
        case '/': return g.raw('div', [a, b]);
        case '^': return g.raw('pow', [a, b]);
        case 'and': return g.raw('and', [a, b]);
        case 'or': return g.raw('or', [a, b]);
        default: return g.raw('cmp', [a, b], node.op);
      }
    }
    case 'call': {
      const args = node.args.map((a) => lower(g, a, resolve));
      switch (node.fn) {
        case 'pow':
          return g.raw('pow', [args[0], args[1]]);
        case 'min':
        case 'max':
          return args.slice(1).reduce((acc, b) => g.raw(node.fn as 'min' | 'max', [acc, b]), args[0]);
        case 'ln':
          return g.raw('fn', [args[0]], 'log');
        default:
          return g.raw('fn', [args[0]], node.fn);
      }
    }
  }
}

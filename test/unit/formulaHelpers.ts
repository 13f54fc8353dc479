// Test helpers for the formula language: an independent AST interpreter (JavaScript Math as reference),
// central differences with Richardson extrapolation, and random formula generators for property tests.

import * as fc from 'fast-check';
import { Node } from '../../src/engine/formula';

const UNARY: Record<string, (u: number) => number> = {
  exp: Math.exp, log: Math.log, ln: Math.log, log10: Math.log10, sqrt: Math.sqrt, abs: Math.abs,
  sin: Math.sin, cos: Math.cos, tan: Math.tan, asin: Math.asin, acos: Math.acos, atan: Math.atan,
  sinh: Math.sinh, cosh: Math.cosh, tanh: Math.tanh,
};

/** Direct recursive evaluation of an AST with JavaScript Math (the reference the compiled code must match). */
export function interpret(node: Node, env: Record<string, number>): number {
  switch (node.type) {
    case 'num':
      return node.value;
    case 'str':
      throw new Error('test: a text literal has no numeric value');
    case 'ident':
      if (!node.quoted && node.name === 'pi') return Math.PI;
      if (!node.quoted && node.name === 'e') return Math.E;
      if (!(node.name in env)) throw new Error(`test: no value for ${node.name}`);
      return env[node.name];
    case 'unary': {
      const a = interpret(node.arg, env);
      return node.op === '-' ? -a : node.op === '+' ? a : a ? 0 : 1;
    }
    case 'binary': {
      const a = interpret(node.left, env);
      const b = interpret(node.right, env);
      switch (node.op) {
        case '+': return a + b;
        case '-': return a - b;
        case '*': return a * b;
        case '/': return a / b;
        case '^': return Math.pow(a, b);
        case '<': return a < b ? 1 : 0;
        case '<=': return a <= b ? 1 : 0;
        case '>': return a > b ? 1 : 0;
        case '>=': return a >= b ? 1 : 0;
        case '==': return a === b ? 1 : 0;
        case '!=': return a !== b ? 1 : 0;
        case 'and': return a && b ? 1 : 0;
        case 'or': return a || b ? 1 : 0;
      }
      throw new Error('test: unknown op');
    }
    case 'call': {
      const v = node.args.map((a) => interpret(a, env));
      if (node.fn === 'pow') return Math.pow(v[0], v[1]);
      if (node.fn === 'min') return Math.min(...v);
      if (node.fn === 'max') return Math.max(...v);
      return UNARY[node.fn](v[0]);
    }
  }
}

/**
 * ∂f/∂θ_j by central differences with one Richardson extrapolation step, D = (4 D(h/2) − D(h)) / 3, truncation
 * error O(h⁴) (standard numerical analysis, e.g. Burden & Faires, "Numerical Analysis", §4.2).
 */
export function centralDifference(f: (theta: number[]) => number, theta: number[], j: number, h0 = 1e-4): number {
  // relative step, with a floor so that a parameter near 0 still gets a step that rounding does not swamp
  const h = h0 * Math.max(Math.abs(theta[j]), 1e-3);
  const D = (s: number) => {
    const up = theta.slice();
    const dn = theta.slice();
    up[j] += s;
    dn[j] -= s;
    return (f(up) - f(dn)) / (2 * s);
  };
  return (4 * D(h / 2) - D(h)) / 3;
}

/** Smooth one-argument templates (finite for every real argument), U is the slot. */
export const SMOOTH_TEMPLATES = [
  'sin(U)', 'cos(U)', 'atan(U)', 'tanh(U)', 'exp(tanh(U))', 'sqrt(1 + (U)^2)', 'log(1 + (U)^2)', 'ln(2 + sin(U))',
  '1/(1 + (U)^2)', '(U)^2', '(U)^3', '-(U)', '(2 + sin(U))^cos(U)', 'pow(1.5 + cos(U), 2 - sin(U))', 'log10(3 + (U)^2)',
  'sinh(tanh(U))', 'cosh(tanh(U))', 'asin(tanh(U)/2)', 'acos(tanh(U)/2)', 'tan(tanh(U))', '(U)/(2 + cos(U))', 'e^tanh(U)',
];
/** Templates with kinks (for agreement tests between two exact methods, not against differences). */
export const KINK_TEMPLATES = ['abs(U)', 'min(U, 0.5)', 'max(U, -0.25, a*x)'];

const leaf = fc.oneof(
  fc.constantFrom('a', 'b', 'c', 'x', 'y', 'pi'),
  fc.integer({ min: 1, max: 40 }).map((k) => String(k / 8)),
);

/** Random formula text over parameters a, b, c and variables x, y, built from the given templates. */
export function formulaArbitrary(templates: readonly string[], maxDepth = 4): fc.Arbitrary<string> {
  const { node } = fc.letrec<{ node: string; bin: string; un: string }>((tie) => ({
    node: fc.oneof({ maxDepth, depthSize: 'small' }, leaf, tie('bin'), tie('un')),
    bin: fc
      .tuple(tie('node'), fc.constantFrom('+', '-', '*'), tie('node'))
      .map(([l, op, r]) => `(${l} ${op} ${r})`),
    un: fc.tuple(fc.constantFrom(...templates), tie('node')).map(([t, u]) => t.replace(/U/g, u)),
  }));
  return node;
}

export const smallReal = fc.double({ min: -2, max: 2, noNaN: true, noDefaultInfinity: true });

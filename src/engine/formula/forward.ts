// Forward-mode automatic differentiation (dual numbers, Griewank & Walther 2008, ch. 3) as generated code over the
// same expression graph: one value and one tangent per parameter for each node, local partials computed once.
// Kept as the alternative measured in bench/formula-derivatives.ts and as an independent cross-check in tests.
// Same conventions as the symbolic derivatives: a zero tangent wins over an infinite local partial (0·∞ = 0), and in
// a quotient a zero partial -(a/b)/b (b overflowed) wins over an infinite tangent of b.

import { Emitter, numberLiteral } from './codegen';
import { reachable } from './derive';
import { Graph } from './graph';
import { prepareFormula } from './compile';
import { CompileOptions } from './types';

export type JacobianKernel = (theta: ArrayLike<number>, X: ArrayLike<number>[], out: Float64Array, J: Float64Array) => void;

export function generateForwardJacobian(g: Graph, f: number, p: number): { kernel: JacobianKernel; source: string } {
  const e = new Emitter(g);
  const ids = reachable(g, [f]);
  const deps = new Map<number, number[]>();
  const hoisted: string[] = [];
  const inner: string[] = [];
  const params = new Set<number>();
  const vars = new Set<number>();
  const tangent = (id: number, j: number): string | null => {
    const n = g.get(id);
    if (n.op === 'param') return n.index === j ? '1' : null;
    return (deps.get(id) as number[]).includes(j) ? `d${id}_${j}` : null;
  };
  for (const id of ids) {
    const n = g.get(id);
    const out = n.hasVar ? inner : hoisted;
    if (n.op === 'const') { deps.set(id, []); continue; }
    if (n.op === 'var') { vars.add(n.index); deps.set(id, []); continue; }
    if (n.op === 'param') { params.add(n.index); deps.set(id, [n.index]); continue; }
    out.push(`const ${e.ref(id)} = ${e.expr(n)};`);
    const piecewiseConstant = n.op === 'cmp' || n.op === 'and' || n.op === 'or' || n.op === 'not' || n.op === 'sign';
    const args = n.op === 'select' ? n.args.slice(1) : n.args;
    const dj = piecewiseConstant ? [] : [...new Set(args.flatMap((a) => deps.get(a) as number[]))].sort((x, y) => x - y);
    deps.set(id, dj);
    if (dj.length === 0) continue;
    const v = e.ref(id);
    const a = n.args[0];
    const b = n.args[1];
    const va = a === undefined ? '' : e.ref(a);
    const vb = b === undefined ? '' : e.ref(b);
    /** Σ c·d over terms; absorb 'tangent': a zero tangent d wins (0·∞ = 0); 'partial': a zero partial c wins. */
    const lin = (terms: [string, string | null, ('tangent' | 'partial')?][], absorb?: 'tangent'): string => {
      const parts = terms
        .filter((t) => t[1] !== null)
        .map(([c, d, own]) => {
          const mode = own ?? absorb;
          if (c === '1') return d as string;
          if (c === '-1') return `-${d}`;
          if (d === '1') return c;
          if (mode === 'tangent') return `(${d} === 0 ? 0 : ${c} * ${d})`;
          if (mode === 'partial') return `(${c} === 0 ? 0 : ${c} * ${d})`;
          return `${c} * ${d}`;
        });
      return parts.length === 0 ? '0' : parts.join(' + ');
    };
    const local = (name: string, expr: string) => {
      out.push(`const ${name}${id} = ${expr};`);
      return `${name}${id}`;
    };
    let rule: (j: number) => string;
    switch (n.op) {
      case 'add': rule = (j) => lin([['1', tangent(a, j)], ['1', tangent(b, j)]]); break;
      case 'sub': rule = (j) => lin([['1', tangent(a, j)], ['-1', tangent(b, j)]]); break;
      case 'neg': rule = (j) => lin([['-1', tangent(a, j)]]); break;
      case 'mul': rule = (j) => lin([[vb, tangent(a, j)], [va, tangent(b, j)]]); break;
      case 'div': {
        const r = local('r', `1 / ${vb}`);
        const q = local('q', `-${v} * ${r}`);
        rule = (j) => lin([[r, tangent(a, j)], [q, tangent(b, j), 'partial']]);
        break;
      }
      case 'pow': {
        const pa = (deps.get(a) as number[]).length ? local('pa', `${vb} * Math.pow(${va}, ${vb} - 1)`) : '0';
        const pb = (deps.get(b) as number[]).length ? local('pb', `(${v} === 0 ? 0 : ${v} * Math.log(${va}))`) : '0';
        rule = (j) => lin([[pa, tangent(a, j)], [pb, tangent(b, j)]], 'tangent');
        break;
      }
      case 'fn': {
        const partial: Record<string, string> = {
          exp: v, log: `1 / ${va}`, log10: `1 / (${va} * ${numberLiteral(Math.LN10)})`, sqrt: `0.5 / ${v}`,
          abs: `Math.sign(${va})`, sin: `Math.cos(${va})`, cos: `-Math.sin(${va})`, tan: `1 + ${v} * ${v}`,
          asin: `1 / Math.sqrt(1 - ${va} * ${va})`, acos: `-1 / Math.sqrt(1 - ${va} * ${va})`, atan: `1 / (1 + ${va} * ${va})`,
          sinh: `Math.cosh(${va})`, cosh: `Math.sinh(${va})`, tanh: `1 - ${v} * ${v}`,
        };
        const pu = n.fn === 'exp' ? v : local('pu', partial[n.fn]);
        const absorb = ['log', 'log10', 'sqrt', 'asin', 'acos'].includes(n.fn);
        rule = (j) => lin([[pu, tangent(a, j), n.fn === 'exp' ? 'partial' : absorb ? 'tangent' : undefined]]);
        break;
      }
      case 'min':
      case 'max': {
        const s = local('s', `${va} ${n.op === 'min' ? '<=' : '>='} ${vb}`);
        rule = (j) => `(${s} ? ${tangent(a, j) ?? '0'} : ${tangent(b, j) ?? '0'})`;
        break;
      }
      case 'select':
        rule = (j) => `(${va} ? ${tangent(n.args[1], j) ?? '0'} : ${tangent(n.args[2], j) ?? '0'})`;
        break;
      default:
        throw new Error(`internal: no tangent rule for ${n.op}`);
    }
    for (const j of dj) out.push(`const d${id}_${j} = ${rule(j)};`);
  }
  const cols: string[] = [];
  for (let j = 0; j < p; j++) cols.push(`    J[o${j} + i] = ${tangent(f, j) ?? '0'};`);
  const src = [
    '"use strict";',
    'return function forwardJacobian(theta, X, out, J) {',
    '  const n = out.length;',
    ...[...params].sort((x, y) => x - y).map((j) => `  const t${j} = +theta[${j}];`),
    ...[...vars].sort((x, y) => x - y).map((k) => `  const X${k} = X[${k}];`),
    ...Array.from({ length: p }, (_, j) => `  const o${j} = ${j} * n;`),
    ...hoisted.map((s) => '  ' + s),
    '  for (let i = 0; i < n; i++) {',
    ...[...vars].sort((x, y) => x - y).map((k) => `    const x${k} = X${k}[i];`),
    ...inner.map((s) => '    ' + s),
    `    out[i] = ${e.ref(f)};`,
    ...cols,
    '  }',
    '};',
  ].join('\n');
  return { kernel: new Function(src)() as JacobianKernel, source: src };
}

/** Forward-mode Jacobian evaluator of formula text (same checks and parameter order as compileFormula). */
export function compileForwardJacobian(text: string, opts: CompileOptions): { kernel: JacobianKernel; source: string; params: string[] } {
  const prep = prepareFormula(text, opts);
  return { ...generateForwardJacobian(prep.g, prep.f, prep.params.length), params: prep.params };
}

// Compilation of a formula: identifier resolution, lowering to the expression graph, exact symbolic derivatives
// and generated evaluators.

import { generateKernels } from './codegen';
import { derivative, derivativePlan } from './derive';
import { isConstantName, isFunctionName, isLogicWord } from './functions';
import { Graph } from './graph';
import { col, isPlainIdentifier } from './lexer';
import { lower, Resolved } from './lower';
import { parseFormula } from './parser';
import { suggest } from './suggest';
import { CompileOptions, CompiledFormula, FormulaError, Node, Span } from './types';

export interface IdentUse {
  name: string;
  span: Span;
  quoted: boolean;
}

/** Identifier occurrences (not functions, not unquoted constants) in source order. */
export function identUses(node: Node, out: IdentUse[] = []): IdentUse[] {
  switch (node.type) {
    case 'num':
    case 'str':
      break;
    case 'ident':
      if (node.quoted || !isConstantName(node.name)) out.push({ name: node.name, span: node.span, quoted: !!node.quoted });
      break;
    case 'unary':
      identUses(node.arg, out);
      break;
    case 'binary':
      identUses(node.left, out);
      identUses(node.right, out);
      break;
    case 'call':
      for (const a of node.args) identUses(a, out);
      break;
  }
  return out;
}

export function quoteName(name: string, quoted: boolean): string {
  return quoted ? `\`${name}\`` : `'${name}'`;
}

/** How a suggested name is written in a formula: plain, or in backticks when it is not an identifier. */
export function writtenName(name: string): string {
  return isPlainIdentifier(name) && !isFunctionName(name) && !isConstantName(name) && !isLogicWord(name)
    ? `'${name}'`
    : `\`${name.replace(/`/g, '``')}\``;
}

/** Compile formula text to evaluators of f and its exact Jacobian; throws FormulaError. */
export function compileFormula(text: string, opts: CompileOptions): CompiledFormula {
  const { ast, variables, params, g, f } = prepareFormula(text, opts);
  return finishCompile(text, ast, variables, params, g, f);
}

/** Parsed, checked and lowered formula: the expression graph of f with identifiers resolved. */
export interface PreparedFormula {
  ast: Node;
  variables: string[];
  params: string[];
  g: Graph;
  f: number;
}

export function prepareFormula(text: string, opts: CompileOptions): PreparedFormula {
  const ast = parseFormula(text, { logic: opts.logic });
  const variables = [...opts.variables];
  const varIndex = new Map<string, number>();
  variables.forEach((v, k) => {
    if (!varIndex.has(v)) varIndex.set(v, k);
  });
  const uses = identUses(ast);

  let params: string[];
  if (opts.params) {
    params = [...opts.params];
    const seen = new Set<string>();
    for (const p of params) {
      if (seen.has(p)) throw new FormulaError(`parameter '${p}' is listed twice — list each parameter once`, { start: 0, end: 0 });
      seen.add(p);
      if (varIndex.has(p)) {
        throw new FormulaError(`'${p}' is a variable and cannot also be a parameter — rename the parameter`, { start: 0, end: 0 });
      }
      if (isConstantName(p)) {
        throw new FormulaError(`'${p}' is a constant and cannot be a parameter — choose another name`, { start: 0, end: 0 });
      }
    }
    const known = new Set(params);
    for (const u of uses) {
      if (varIndex.has(u.name) || known.has(u.name)) continue;
      const s = suggest(u.name, [...params, ...variables]);
      const fix = s ? `did you mean ${writtenName(s)}?` : `declare it under params${variables.length ? ` or bind it as a variable (${variables.join(', ')})` : ''}`;
      throw new FormulaError(`unknown identifier ${quoteName(u.name, u.quoted)} at column ${col(u.span.start)} — ${fix}`, u.span, s ? `did you mean ${writtenName(s)}?` : undefined);
    }
  } else {
    params = [];
    const seen = new Set<string>();
    for (const u of uses) {
      if (varIndex.has(u.name) || seen.has(u.name)) continue;
      seen.add(u.name);
      params.push(u.name);
    }
  }
  const paramIndex = new Map(params.map((p, j) => [p, j] as const));
  const resolve = (name: string): Resolved => {
    const k = varIndex.get(name);
    if (k !== undefined) return { kind: 'var', index: k };
    const j = paramIndex.get(name);
    if (j !== undefined) return { kind: 'param', index: j };
    throw new Error(`internal: unresolved identifier ${name}`);
  };

  const g = new Graph();
  const f = lower(g, ast, resolve);
  return { ast, variables, params, g, f };
}

function finishCompile(text: string, ast: Node, variables: string[], params: string[], g: Graph, f: number): CompiledFormula {
  const plan = derivativePlan(g, f, params.length);
  const d = params.map((_, j) => derivative(g, f, j, plan));
  const linear = d.every((dj) => !g.get(dj).hasParam);
  const hasConstantTerm = d.some((dj) => {
    const n = g.get(dj);
    return n.op === 'const' && n.value !== 0 && Number.isFinite(n.value);
  });
  const k = generateKernels(g, f, d);
  const nv = variables.length;
  const np = params.length;

  const checkX = (X: ArrayLike<number>[], what: string) => {
    if (X.length < nv) throw new Error(`${what}: expected ${nv} variable column(s) (${variables.join(', ')}), got ${X.length}`);
  };
  const checkTheta = (theta: ArrayLike<number>, what: string) => {
    if (theta.length < np) throw new Error(`${what}: expected ${np} parameter value(s) (${params.join(', ')}), got ${theta.length}`);
  };

  const compiled: CompiledFormula & { source: typeof k.source } = {
    text,
    ast,
    variables,
    params,
    linear,
    hasConstantTerm,
    evaluate(theta, X, out) {
      checkTheta(theta, 'evaluate');
      checkX(X, 'evaluate');
      k.evaluate(theta, X, out);
    },
    evaluateWithJacobian(theta, X, out, J) {
      checkTheta(theta, 'evaluateWithJacobian');
      checkX(X, 'evaluateWithJacobian');
      if (J.length < out.length * np) throw new Error(`evaluateWithJacobian: J needs ${out.length * np} entries, got ${J.length}`);
      k.evaluateWithJacobian(theta, X, out, J);
    },
    at(theta, x) {
      return k.at(theta, x);
    },
    gradientAt(theta, x, grad) {
      return k.gradientAt(theta, x, grad);
    },
    source: k.source,
  };
  return compiled;
}


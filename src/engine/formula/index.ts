// Public API of the formula language: parse, inspect, format and compile formulas to fast evaluators with exact
// derivatives (symbolic differentiation on a hash-consed graph + JavaScript code generation; see bench/formula-derivatives.ts).

import { generateKernels } from './codegen';
import { derivative } from './derive';
import { CONSTANTS, FUNCTIONS, isConstantName } from './functions';
import { Graph } from './graph';
import { col } from './lexer';
import { lower, Resolved } from './lower';
import { parseFormula } from './parser';
import { suggest } from './suggest';
import { CompileOptions, CompiledFormula, FormulaError, Node, Span } from './types';

export { parseFormula } from './parser';
export { formatFormula } from './format';
export { suggest } from './suggest';
export { FUNCTIONS, CONSTANTS } from './functions';
export { FormulaError } from './types';
export type { Node, Span, CompileOptions, CompiledFormula } from './types';

interface IdentUse {
  name: string;
  span: Span;
  quoted: boolean;
}

/** Identifier occurrences (not functions, not unquoted constants) in source order. */
function identUses(node: Node, out: IdentUse[] = []): IdentUse[] {
  switch (node.type) {
    case 'num':
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

function quoteName(name: string, quoted: boolean): string {
  return quoted ? `\`${name}\`` : `'${name}'`;
}

/** Every identifier used (every occurrence, in source order), excluding functions and the constants pi and e. */
export function formulaIdentifiers(text: string, opts: { logic?: boolean } = {}): { name: string; span: Span }[] {
  return identUses(parseFormula(text, opts)).map(({ name, span }) => ({ name, span }));
}

/** Parameters of a formula: identifiers that are not variables, in order of first appearance. */
export function formulaParameters(text: string, variables: string[]): string[] {
  const vars = new Set(variables);
  const seen = new Set<string>();
  const out: string[] = [];
  for (const u of identUses(parseFormula(text))) {
    if (vars.has(u.name) || seen.has(u.name)) continue;
    seen.add(u.name);
    out.push(u.name);
  }
  return out;
}

/** Compile formula text to evaluators of f and its exact Jacobian; throws FormulaError. */
export function compileFormula(text: string, opts: CompileOptions): CompiledFormula {
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
      const fix = s ? `did you mean '${s}'?` : `declare it under params${variables.length ? ` or bind it as a variable (${variables.join(', ')})` : ''}`;
      throw new FormulaError(`unknown identifier ${quoteName(u.name, u.quoted)} at column ${col(u.span.start)} — ${fix}`, u.span, s ? `did you mean '${s}'?` : undefined);
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
  const d = params.map((_, j) => derivative(g, f, j));
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

export interface CompiledExpression {
  /** cols[k] is the data of columns[k]; all of length out.length */
  evaluate(cols: ArrayLike<number>[], out: Float64Array): void;
  /** the columns the expression uses, in the order `cols` must be given (first appearance) */
  columns: string[];
  text: string;
  ast: Node;
}

/**
 * A parameter-free formula over column names (data.x / data.y / data.where expressions). Every identifier must
 * be one of `columns`; an unknown one is a FormulaError with a did-you-mean among the columns.
 */
export function compileExpression(text: string, columns: string[], opts: { logic?: boolean } = {}): CompiledExpression {
  const ast = parseFormula(text, opts);
  const known = new Set(columns);
  const used: string[] = [];
  for (const u of identUses(ast)) {
    if (!known.has(u.name)) {
      const s = suggest(u.name, columns);
      const listed = columns.length <= 12 ? columns.join(', ') : `${columns.slice(0, 12).join(', ')}, …`;
      const fix = s
        ? `did you mean '${s}'?`
        : columns.length
          ? `the columns are: ${listed}; quote a name with spaces in backticks, e.g. \`OD 600\``
          : 'the table has no columns';
      throw new FormulaError(`unknown column ${quoteName(u.name, u.quoted)} at column ${col(u.span.start)} — ${fix}`, u.span, s ? `did you mean '${s}'?` : undefined);
    }
    if (!used.includes(u.name)) used.push(u.name);
  }
  const c = compileFormula(text, { variables: used, params: [], logic: opts.logic });
  const none: number[] = [];
  return {
    text,
    ast,
    columns: used,
    evaluate(cols, out) {
      c.evaluate(none, cols, out);
    },
  };
}

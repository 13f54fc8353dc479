// Public API of the formula language: parse, inspect, format and compile formulas to fast evaluators with exact
// derivatives (symbolic differentiation on a hash-consed graph + JavaScript code generation; see bench/formula-derivatives.ts).

import { compileFormula, identUses, quoteName, writtenName } from './compile';
import { col } from './lexer';
import { parseFormula } from './parser';
import { suggest } from './suggest';
import { FormulaError, Node, Span } from './types';

export { parseFormula } from './parser';
export { formatFormula } from './format';
export { suggest } from './suggest';
export { FUNCTIONS, CONSTANTS } from './functions';
export { compileFormula } from './compile';
export { FormulaError } from './types';
export type { Node, Span, CompileOptions, CompiledFormula } from './types';

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
        ? `did you mean ${writtenName(s)}?`
        : columns.length
          ? `the columns are: ${listed}; quote a name with spaces in backticks, e.g. \`OD 600\``
          : 'the table has no columns';
      throw new FormulaError(`unknown column ${quoteName(u.name, u.quoted)} at column ${col(u.span.start)} — ${fix}`, u.span, s ? `did you mean ${writtenName(s)}?` : undefined);
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

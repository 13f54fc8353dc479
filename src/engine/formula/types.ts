// Types of the formula language: AST with source positions, errors, and compiled evaluators.

/** Half-open range of 0-based character offsets into the formula text. */
export interface Span {
  start: number;
  end: number;
}

export type Node =
  | { type: 'num'; value: number; span: Span }
  | {
      type: 'ident';
      name: string;
      span: Span;
      /** written in backticks (`OD 600`): always a name, even when spelled like a constant or function */
      quoted?: boolean;
    }
  /** a "double-quoted" text literal: only in row filters, only as an operand of == or != (see parser) */
  | { type: 'str'; value: string; span: Span }
  | { type: 'unary'; op: '-' | '+' | 'not'; arg: Node; span: Span }
  | {
      type: 'binary';
      op: '+' | '-' | '*' | '/' | '^' | '<' | '<=' | '>' | '>=' | '==' | '!=' | 'and' | 'or';
      left: Node;
      right: Node;
      span: Span;
    }
  | { type: 'call'; fn: string; args: Node[]; span: Span };

/** A user-facing formula error: message names the 1-based column and suggests a fix. */
export class FormulaError extends Error {
  constructor(
    message: string,
    public readonly span: Span,
    /** e.g. "did you mean 'exp'?" — already included in message */
    public readonly hint?: string,
  ) {
    super(message);
    this.name = 'FormulaError';
  }
  /** 1-based column of the start of the span */
  get column(): number {
    return this.span.start + 1;
  }
}

export interface CompileOptions {
  /** names bound to data columns, e.g. ['x'] or ['t', 'T'] */
  variables: string[];
  /** parameter order; default: order of first appearance. Must list every parameter of the formula. */
  params?: string[];
  /** allow comparison and logic operators (row filters); the result is 1 for true, 0 for false */
  logic?: boolean;
}

/**
 * A formula compiled to fast evaluators, generated only from the checked AST (never from user text).
 * Data layout: X[v] is the column of variable v (in `variables` order), all of length n.
 * Jacobian layout: column-major n×p, J[j*n + i] = ∂f(x_i; θ)/∂θ_j, j in `params` order.
 */
export interface CompiledFormula {
  readonly text: string;
  readonly ast: Node;
  readonly variables: string[];
  readonly params: string[];
  /** true when every ∂f/∂θ_j is free of θ (the model is linear in its parameters) */
  readonly linear: boolean;
  /**
   * true when some ∂f/∂θ_j is a nonzero constant, independent of the variables and of θ (an intercept-like
   * column, e.g. c0 in c0 + c1*x), decided symbolically; used for the R² convention
   */
  readonly hasConstantTerm: boolean;
  evaluate(theta: ArrayLike<number>, X: ArrayLike<number>[], out: Float64Array): void;
  evaluateWithJacobian(theta: ArrayLike<number>, X: ArrayLike<number>[], out: Float64Array, J: Float64Array): void;
  /** evaluate at a single point; x in `variables` order */
  at(theta: ArrayLike<number>, x: ArrayLike<number>): number;
  /** gradient with respect to θ at a single point (length p) */
  gradientAt(theta: ArrayLike<number>, x: ArrayLike<number>, grad: Float64Array): number;
}

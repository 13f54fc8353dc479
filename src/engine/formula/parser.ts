// Recursive-descent parser of the formula language, precedence as in ordinary mathematics (ISO 80000-2):
//   or < and < not < comparison < + - < * / < unary + - < ^ (right-associative; its exponent may carry a sign).

import { ARITY, FUNCTIONS, isConstantName, isFunctionName, isLogicWord } from './functions';
import { col, Token, tokenize } from './lexer';
import { suggest } from './suggest';
import { FormulaError, Node, Span } from './types';

export interface ParseOptions {
  /** allow comparisons and the words and/or/not (row filters and column expressions) */
  logic?: boolean;
}

const MAX_DEPTH = 200;
/** longest formula text accepted (keeps compile time and recursion depth bounded) */
const MAX_LENGTH = 20000;
/** deepest AST accepted: every tree walk (here and in callers) stays far from the stack limit, also in workers */
const MAX_TREE_DEPTH = 1000;
const COMPARISONS = new Set(['<', '<=', '>', '>=', '==', '!=']);

function describe(t: Token): string {
  if (t.kind === 'eof') return 'end of formula';
  if (t.kind === 'ident' && t.quoted) return `\`${t.text}\``;
  return `'${t.text}'`;
}

class Parser {
  private pos = 0;
  private depth = 0;
  constructor(
    private readonly text: string,
    private readonly tokens: Token[],
    private readonly logic: boolean,
  ) {}

  private peek(): Token {
    return this.tokens[this.pos];
  }
  private next(): Token {
    return this.tokens[this.pos++];
  }
  private isOp(t: Token, ...ops: string[]): boolean {
    return t.kind === 'op' && ops.includes(t.text);
  }
  private isWord(t: Token, word: string): boolean {
    return t.kind === 'ident' && !t.quoted && t.text === word;
  }

  parse(): Node {
    const first = this.peek();
    if (first.kind === 'eof') {
      throw new FormulaError("empty formula — write an expression such as 'a*exp(b*x)'", { start: 0, end: this.text.length });
    }
    const node = this.parseOr();
    const t = this.peek();
    if (t.kind !== 'eof') throw this.unexpectedAfterValue(t);
    return node;
  }

  /** A token that cannot follow a complete value. */
  private unexpectedAfterValue(t: Token): FormulaError {
    const span = { start: t.start, end: t.end };
    if (t.kind === ')') {
      return new FormulaError(`unexpected ')' at column ${col(t.start)} — remove it or add a matching '('`, span);
    }
    if (t.kind === ',') {
      return new FormulaError(
        `unexpected ',' at column ${col(t.start)} — commas only separate the arguments of a function, e.g. min(a, b)`,
        span,
      );
    }
    if (t.kind === 'op' && t.text === '=') {
      return this.equalsError(t);
    }
    if (t.kind === 'num' || t.kind === 'ident' || t.kind === '(') {
      return new FormulaError(
        `unexpected ${describe(t)} at column ${col(t.start)} — insert '*' for a product (e.g. '2*x') or an operator before it`,
        span,
      );
    }
    return new FormulaError(`unexpected ${describe(t)} at column ${col(t.start)} — remove it`, span);
  }

  private equalsError(t: Token): FormulaError {
    const span = { start: t.start, end: t.end };
    if (this.logic) {
      return new FormulaError(`unexpected '=' at column ${col(t.start)} — write '==' to test equality`, span);
    }
    return new FormulaError(
      `unexpected '=' at column ${col(t.start)} — write only the right-hand side, e.g. 'a*exp(b*x)' rather than 'y = a*exp(b*x)'`,
      span,
    );
  }

  private logicWordError(t: Token): FormulaError {
    return new FormulaError(
      `'${t.text}' at column ${col(t.start)}: the words and/or/not are only allowed in 'where' filters — ` +
        `quote it as \`${t.text}\` if it is a name`,
      { start: t.start, end: t.end },
    );
  }

  private parseOr(): Node {
    let left = this.parseAnd();
    for (;;) {
      const t = this.peek();
      if (!this.isWord(t, 'or')) return left;
      if (!this.logic) throw this.logicWordError(t);
      this.next();
      const right = this.parseAnd();
      left = { type: 'binary', op: 'or', left, right, span: { start: left.span.start, end: right.span.end } };
    }
  }

  private parseAnd(): Node {
    let left = this.parseNot();
    for (;;) {
      const t = this.peek();
      if (!this.isWord(t, 'and')) return left;
      if (!this.logic) throw this.logicWordError(t);
      this.next();
      const right = this.parseNot();
      left = { type: 'binary', op: 'and', left, right, span: { start: left.span.start, end: right.span.end } };
    }
  }

  private parseNot(): Node {
    const t = this.peek();
    if (this.isWord(t, 'not')) {
      if (!this.logic) throw this.logicWordError(t);
      this.next();
      const arg = this.enter(() => this.parseNot());
      return { type: 'unary', op: 'not', arg, span: { start: t.start, end: arg.span.end } };
    }
    return this.parseComparison();
  }

  private parseComparison(): Node {
    const left = this.parseAdditive();
    const t = this.peek();
    if (t.kind !== 'op' || !COMPARISONS.has(t.text)) {
      if (this.isOp(t, '=')) throw this.equalsError(t);
      return left;
    }
    if (!this.logic) {
      throw new FormulaError(
        `'${t.text}' at column ${col(t.start)}: comparisons are only allowed in 'where' filters — remove the comparison or move it to data.where`,
        { start: t.start, end: t.end },
      );
    }
    this.next();
    const right = this.parseAdditive();
    const after = this.peek();
    if (after.kind === 'op' && COMPARISONS.has(after.text)) {
      throw new FormulaError(
        `chained comparison at column ${col(after.start)} — write 'a < b and b < c' instead of 'a < b < c'`,
        { start: after.start, end: after.end },
      );
    }
    const op = t.text as '<' | '<=' | '>' | '>=' | '==' | '!=';
    return { type: 'binary', op, left, right, span: { start: left.span.start, end: right.span.end } };
  }

  private parseAdditive(): Node {
    let left = this.parseMultiplicative();
    for (;;) {
      const t = this.peek();
      if (!this.isOp(t, '+', '-')) return left;
      this.next();
      const right = this.parseMultiplicative();
      left = { type: 'binary', op: t.text as '+' | '-', left, right, span: { start: left.span.start, end: right.span.end } };
    }
  }

  private parseMultiplicative(): Node {
    let left = this.parseUnary();
    for (;;) {
      const t = this.peek();
      if (!this.isOp(t, '*', '/')) return left;
      this.next();
      const right = this.parseUnary();
      left = { type: 'binary', op: t.text as '*' | '/', left, right, span: { start: left.span.start, end: right.span.end } };
    }
  }

  /** unary := ('-' | '+') unary | power  — so -x^2 is -(x^2) */
  private parseUnary(): Node {
    const t = this.peek();
    if (this.isOp(t, '-', '+')) {
      this.next();
      const arg = this.enter(() => this.parseUnary());
      return { type: 'unary', op: t.text as '-' | '+', arg, span: { start: t.start, end: arg.span.end } };
    }
    return this.parsePower();
  }

  /** power := primary (('^' | '**') unary)?  — right-associative, and 2^-1 is 2^(-1) */
  private parsePower(): Node {
    const base = this.parsePrimary();
    const t = this.peek();
    if (!this.isOp(t, '^', '**')) return base;
    this.next();
    const exponent = this.enter(() => this.parseUnary());
    return { type: 'binary', op: '^', left: base, right: exponent, span: { start: base.span.start, end: exponent.span.end } };
  }

  private enter<T>(f: () => T): T {
    if (++this.depth > MAX_DEPTH) {
      const t = this.peek();
      throw new FormulaError(
        `formula nested too deeply at column ${col(t.start)} (more than ${MAX_DEPTH} levels) — simplify it`,
        { start: t.start, end: t.end },
      );
    }
    try {
      return f();
    } finally {
      this.depth--;
    }
  }

  private parsePrimary(): Node {
    const t = this.next();
    const span: Span = { start: t.start, end: t.end };
    switch (t.kind) {
      case 'num':
        return { type: 'num', value: t.value as number, span };
      case 'str':
        return { type: 'str', value: t.text, span };
      case '(': {
        if (this.peek().kind === ')') {
          const r = this.peek();
          throw new FormulaError(`empty parentheses at column ${col(t.start)} — put an expression between '(' and ')'`, {
            start: t.start,
            end: r.end,
          });
        }
        const inner = this.enter(() => this.parseOr());
        const close = this.peek();
        if (close.kind !== ')') {
          if (close.kind === 'eof') {
            throw new FormulaError(
              `unexpected end of formula at column ${col(close.start)} — add ')' to close the '(' at column ${col(t.start)}`,
              { start: close.start, end: close.end },
            );
          }
          throw this.unexpectedAfterValue(close);
        }
        this.next();
        return { ...inner, span: { start: t.start, end: close.end } } as Node;
      }
      case 'ident':
        return this.parseName(t);
      case 'eof': {
        const prev = this.tokens[this.pos - 2];
        const after = prev ? ` after '${prev.text}'` : '';
        this.pos--;
        throw new FormulaError(
          `unexpected end of formula at column ${col(t.start)} — complete the expression${after}`,
          { start: t.start, end: t.end },
        );
      }
      case ')':
        throw new FormulaError(
          `unexpected ')' at column ${col(t.start)} — a value is missing before it`,
          span,
        );
      case ',':
        throw new FormulaError(`unexpected ',' at column ${col(t.start)} — a value is missing before it`, span);
      case 'op': {
        if (t.text === '=') throw this.equalsError(t);
        if (COMPARISONS.has(t.text)) {
          throw new FormulaError(`unexpected '${t.text}' at column ${col(t.start)} — a value is missing before it`, span);
        }
        if (t.text === '^' || t.text === '**') {
          throw new FormulaError(`unexpected '${t.text}' at column ${col(t.start)} — a base is missing before it, e.g. 'x^2'`, span);
        }
        throw new FormulaError(`unexpected '${t.text}' at column ${col(t.start)} — a value is missing before it`, span);
      }
    }
  }

  private parseName(t: Token): Node {
    const span: Span = { start: t.start, end: t.end };
    const callFollows = this.peek().kind === '(';
    if (t.quoted) {
      if (callFollows) {
        const p = this.peek();
        throw new FormulaError(
          `unexpected '(' at column ${col(p.start)} after the name \`${t.text}\` — insert '*' for a product`,
          { start: p.start, end: p.end },
        );
      }
      return { type: 'ident', name: t.text, span, quoted: true };
    }
    const name = t.text;
    if (isLogicWord(name)) {
      if (!this.logic) throw this.logicWordError(t);
      throw new FormulaError(`unexpected '${name}' at column ${col(t.start)} — a value is missing before it`, span);
    }
    if (isConstantName(name)) {
      if (callFollows) {
        const fix = name === 'e' ? "write exp(...) for the exponential function or 'e*(...)' for a product" : "write 'pi*(...)' for a product";
        throw new FormulaError(`'${name}' at column ${col(t.start)} is a constant, not a function — ${fix}`, span);
      }
      return { type: 'ident', name, span };
    }
    if (isFunctionName(name)) {
      if (!callFollows) {
        throw new FormulaError(
          `'${name}' at column ${col(t.start)} is a function — call it with parentheses, e.g. ${name}(${name === 'pow' ? 'x, 2' : name === 'min' || name === 'max' ? 'a, b' : 'x'})`,
          span,
        );
      }
      return this.parseCall(t);
    }
    if (callFollows) {
      const s = suggest(name, FUNCTIONS);
      const fix = s ? `did you mean '${s}'?` : `insert '*' for a product, e.g. '${name}*(...)'`;
      throw new FormulaError(`unknown function '${name}' at column ${col(t.start)} — ${fix}`, span, s ? `did you mean '${s}'?` : undefined);
    }
    return { type: 'ident', name, span };
  }

  private parseCall(nameTok: Token): Node {
    const open = this.next(); // '('
    const args: Node[] = [];
    if (this.peek().kind !== ')') {
      for (;;) {
        const a = this.enter(() => this.parseOr());
        args.push(a);
        const t = this.peek();
        if (t.kind === ',') {
          this.next();
          continue;
        }
        if (t.kind === ')') break;
        if (t.kind === 'eof') {
          throw new FormulaError(
            `unexpected end of formula at column ${col(t.start)} — add ')' to close '${nameTok.text}(' at column ${col(open.start)}`,
            { start: t.start, end: t.end },
          );
        }
        throw this.unexpectedAfterValue(t);
      }
    }
    const close = this.next();
    const fn = nameTok.text;
    const span = { start: nameTok.start, end: close.end };
    const [lo, hi] = ARITY[fn];
    if (args.length < lo || args.length > hi) {
      const want = lo === hi ? `${lo} argument${lo === 1 ? '' : 's'}` : `at least ${lo} arguments`;
      const fix =
        fn === 'pow' ? 'write pow(base, exponent)'
          : (fn === 'log' || fn === 'ln') && args.length === 2 ? 'for a logarithm to base b write log(x)/log(b)'
          : fn === 'min' || fn === 'max' ? `write ${fn}(a, b, ...)`
          : args.length > hi ? 'remove the extra arguments'
          : `write ${fn}(x)`;
      throw new FormulaError(`'${fn}' at column ${col(nameTok.start)} takes ${want}, got ${args.length} — ${fix}`, span);
    }
    return { type: 'call', fn, args, span };
  }
}

/** Parse formula text into an AST with 0-based spans; throws FormulaError. */
export function parseFormula(text: string, opts: ParseOptions = {}): Node {
  if (typeof text !== 'string') {
    throw new FormulaError('a formula must be text, e.g. "a*exp(b*x)"', { start: 0, end: 0 });
  }
  if (text.length > MAX_LENGTH) {
    throw new FormulaError(
      `formula too long at column ${MAX_LENGTH + 1} (${text.length} characters, the limit is ${MAX_LENGTH}) — split it into simpler parts`,
      { start: MAX_LENGTH, end: text.length },
    );
  }
  const tokens = tokenize(text, { strings: !!opts.logic });
  const ast = new Parser(text, tokens, !!opts.logic).parse();
  checkTextLiterals(ast, null);
  const deepest = deepestNode(ast);
  if (deepest) {
    throw new FormulaError(
      `formula nested too deeply at column ${col(deepest.span.start)} (more than ${MAX_TREE_DEPTH} operations inside one another or in one chain) — split it into simpler parts`,
      deepest.span,
    );
  }
  return ast;
}

function describeOp(op: string): string {
  return op === 'not' ? "'not'" : op === 'and' || op === 'or' ? `'${op}'` : `'${op}'`;
}

/** Text literals are values only for == and != (state == "treated"); anywhere else they are an error. */
function checkTextLiterals(root: Node, parent0: Node | null): void {
  const stack: [Node, Node | null][] = [[root, parent0]];
  while (stack.length > 0) {
    const [n, parent] = stack.pop() as [Node, Node | null];
    if (n.type === 'str') {
      const shown = JSON.stringify(n.value.length > 30 ? n.value.slice(0, 30) + '…' : n.value);
      if (parent && parent.type === 'binary' && (parent.op === '==' || parent.op === '!=')) {
        const other = parent.left === n ? parent.right : parent.left;
        if (other.type === 'str')
          throw new FormulaError(
            `two texts compared at column ${col(parent.span.start)} — compare a text column with a text, e.g. state == ${shown}`,
            parent.span,
          );
        if (other.type !== 'ident')
          throw new FormulaError(
            `text ${shown} at column ${col(n.span.start)} is compared with an expression — compare it with a text column by name, e.g. state ${parent.op} ${shown}`,
            parent.span,
          );
        continue;
      }
      const where =
        parent === null ? 'on its own'
          : parent.type === 'call' ? `as an argument of ${parent.fn}()`
          : parent.type === 'binary' || parent.type === 'unary' ? `with ${describeOp(parent.op)}`
          : 'here';
      throw new FormulaError(
        `text ${shown} at column ${col(n.span.start)} is used ${where} — text can only be compared with == or != to a text column, e.g. state == ${shown}`,
        n.span,
      );
    }
    if (n.type === 'unary') stack.push([n.arg, n]);
    else if (n.type === 'binary') stack.push([n.left, n], [n.right, n]);
    else if (n.type === 'call') for (const a of n.args) stack.push([a, n]);
  }
}

/** The first node deeper than MAX_TREE_DEPTH (iterative walk, so it cannot overflow the stack), or null. */
function deepestNode(root: Node): Node | null {
  const stack: [Node, number][] = [[root, 1]];
  while (stack.length > 0) {
    const [n, d] = stack.pop() as [Node, number];
    if (d > MAX_TREE_DEPTH) return n;
    if (n.type === 'unary') stack.push([n.arg, d + 1]);
    else if (n.type === 'binary') stack.push([n.left, d + 1], [n.right, d + 1]);
    else if (n.type === 'call') for (const a of n.args) stack.push([a, d + 1]);
  }
  return null;
}

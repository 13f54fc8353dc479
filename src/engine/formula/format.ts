// Canonical text of an AST: minimal parentheses by precedence, spaces around + - and the logic operators.

import { isConstantName, isFunctionName, isLogicWord } from './functions';
import { isPlainIdentifier } from './lexer';
import { Node } from './types';

const PREC: Record<string, number> = {
  or: 1, and: 2, not: 3,
  '<': 4, '<=': 4, '>': 4, '>=': 4, '==': 4, '!=': 4,
  '+': 5, '-': 5, '*': 6, '/': 6, neg: 7, '^': 8,
};
const ATOM = 9;

function needsQuotes(name: string, quoted: boolean | undefined): boolean {
  if (!isPlainIdentifier(name)) return true;
  if (isLogicWord(name) || isFunctionName(name)) return true;
  if (isConstantName(name)) return !!quoted;
  return false;
}

function formatNumber(v: number): string {
  if (Number.isNaN(v)) return '(0/0)';
  if (v === Infinity) return '(1/0)';
  if (v === -Infinity) return '(-1/0)';
  if (v < 0 || Object.is(v, -0)) return `(-${formatNumber(-v)})`;
  return String(v);
}

function prec(node: Node): number {
  switch (node.type) {
    case 'num':
      return node.value < 0 || Object.is(node.value, -0) || !Number.isFinite(node.value) ? ATOM : ATOM;
    case 'ident':
    case 'str':
    case 'call':
      return ATOM;
    case 'unary':
      return node.op === 'not' ? PREC.not : PREC.neg;
    case 'binary':
      return PREC[node.op];
  }
}

function wrap(node: Node, min: number): string {
  const s = formatFormula(node);
  return prec(node) < min ? `(${s})` : s;
}

/** Canonical text of an AST; parsing it again gives the same tree (spans aside). */
export function formatFormula(node: Node): string {
  switch (node.type) {
    case 'num':
      return formatNumber(node.value);
    case 'str':
      return '"' + node.value.replace(/"/g, '""') + '"';
    case 'ident':
      return needsQuotes(node.name, node.quoted) ? '`' + node.name.replace(/`/g, '``') + '`' : node.name;
    case 'call':
      return `${node.fn}(${node.args.map((a) => formatFormula(a)).join(', ')})`;
    case 'unary':
      if (node.op === 'not') return `not ${wrap(node.arg, PREC.not)}`;
      // unary minus binds looser than ^ and tighter than * /; a nested sign is parenthesised for readability
      return `${node.op}${node.arg.type === 'unary' ? `(${formatFormula(node.arg)})` : wrap(node.arg, PREC.neg)}`;
    case 'binary': {
      const p = PREC[node.op];
      if (node.op === '^') {
        // right-associative: the base needs parentheses at equal precedence, the exponent does not
        const base = node.left.type === 'unary' ? `(${formatFormula(node.left)})` : wrap(node.left, p + 1);
        const expo = node.right.type === 'unary' && node.right.op !== 'not' ? formatFormula(node.right) : wrap(node.right, p);
        return `${base}^${expo}`;
      }
      const cmp = p === 4;
      const left = wrap(node.left, cmp ? p + 1 : p);
      const right = wrap(node.right, p + 1);
      const sep = node.op === '*' || node.op === '/' ? node.op : ` ${node.op} `;
      return `${left}${sep}${right}`;
    }
  }
}

// Parser of the formula language: precedence, numbers, names, logic mode, canonical formatting, and every error.

import { strict as assert } from 'assert';
import * as fc from 'fast-check';
import {
  CONSTANTS, FUNCTIONS, FormulaError, formatFormula, formulaIdentifiers, formulaParameters, Node, parseFormula, suggest,
} from '../../src/engine/formula';
import { tokenize } from '../../src/engine/formula/lexer';
import { formulaArbitrary, interpret, KINK_TEMPLATES, SMOOTH_TEMPLATES } from './formulaHelpers';

/** AST without spans, for structural comparison. */
function shape(n: Node): unknown {
  switch (n.type) {
    case 'num': return n.value;
    case 'ident': return n.quoted ? { q: n.name } : n.name;
    case 'unary': return [n.op, shape(n.arg)];
    case 'binary': return [n.op, shape(n.left), shape(n.right)];
    case 'call': return [n.fn, ...n.args.map(shape)];
  }
}
const S = (text: string, logic = false) => shape(parseFormula(text, { logic }));
const value = (text: string, env: Record<string, number> = {}) => interpret(parseFormula(text), env);

const short = (t: string) => JSON.stringify(t.length > 60 ? t.slice(0, 57) + '...' : t);

function expectError(text: string, re: RegExp, column: number, opts: { logic?: boolean } = {}): FormulaError {
  let err: unknown;
  try {
    parseFormula(text, opts);
  } catch (e) {
    err = e;
  }
  assert.ok(err instanceof FormulaError, `expected a FormulaError for ${short(text)}, got ${String(err)}`);
  assert.match(err.message, re);
  assert.equal(err.column, column, `column of ${short(text)}: ${err.message}`);
  if (text.trim() !== '') assert.match(err.message, new RegExp(`column ${column}\\b`), 'the message names the column');
  assert.match(err.message, / — /, 'the message suggests a fix after a dash');
  return err;
}

describe('formula parser: precedence (ordinary mathematical convention, e.g. ISO 80000-2; values hand-computed)', () => {
  const table: [string, number][] = [
    ['-2^2', -4], // -(2^2): power binds tighter than unary minus
    ['2^3^2', 512], // right-associative: 2^(3^2) = 2^9
    ['2**3', 8], // ** is a synonym of ^
    ['2**3**2', 512],
    ['1-2-3', -4], // left-associative
    ['8/4/2', 1], // left-associative
    ['2*3^2', 18],
    ['(2*3)^2', 36],
    ['2^-1', 0.5], // the exponent may carry a sign: 2^(-1)
    ['2^-2^2', 1 / 16], // 2^(-(2^2))
    ['-2^-2', -0.25],
    ['--2', 2],
    ['-+-2', 2],
    ['+3', 3],
    ['1+2*3', 7],
    ['(1+2)*3', 9],
    ['2*-3', -6],
    ['6/-2*3', -9], // (6/(-2))*3
    ['10-4/2', 8],
    ['(-2)^2', 4],
    ['2^(1+1)', 4],
    ['.5 + 1.5e-3 + 2E+4 + 1e2', 0.5 + 1.5e-3 + 2e4 + 100],
    ['pi', Math.PI],
    ['e', Math.E],
    ['e^1', Math.E],
  ];
  for (const [text, expected] of table) {
    it(`${text} = ${expected}`, () => assert.equal(value(text), expected));
  }
  it('-x^2 is -(x^2), not (-x)^2', () => {
    assert.deepEqual(S('-x^2'), ['-', ['^', 'x', 2]]);
    assert.equal(value('-x^2', { x: 3 }), -9);
  });
  it('2^3^2 is 2^(3^2)', () => assert.deepEqual(S('2^3^2'), ['^', 2, ['^', 3, 2]]));
  it('a*b/c is (a*b)/c and a-b+c is (a-b)+c', () => {
    assert.deepEqual(S('a*b/c'), ['/', ['*', 'a', 'b'], 'c']);
    assert.deepEqual(S('a-b+c'), ['+', ['-', 'a', 'b'], 'c']);
  });
  it('function calls bind like atoms: exp(x)^2 is (exp(x))^2, -exp(x) is -(exp(x))', () => {
    assert.deepEqual(S('exp(x)^2'), ['^', ['exp', 'x'], 2]);
    assert.deepEqual(S('-exp(x)'), ['-', ['exp', 'x']]);
  });
  it('logic mode: comparisons below arithmetic, not below comparisons, and below not, or lowest', () => {
    assert.deepEqual(S('a + 1 > 2*b', true), ['>', ['+', 'a', 1], ['*', 2, 'b']]);
    assert.deepEqual(S('not a < b and c or d', true), ['or', ['and', ['not', ['<', 'a', 'b']], 'c'], 'd']);
    assert.deepEqual(S('a or b and c', true), ['or', 'a', ['and', 'b', 'c']]);
    assert.deepEqual(S('not not a', true), ['not', ['not', 'a']]);
    for (const op of ['<', '<=', '>', '>=', '==', '!=']) assert.deepEqual(S(`a ${op} b`, true), [op, 'a', 'b']);
  });
});

describe('formula parser: numbers, names, spans', () => {
  it('reads numbers in every notation (JavaScript Number() as reference)', () => {
    for (const t of ['1', '1.5', '.5', '1.5e-3', '2E+4', '1e10', '0.000123', '1.', '123456789012345678']) {
      assert.equal((parseFormula(t) as { value: number }).value, Number(t), t);
    }
  });
  it('backtick-quoted names are names, even when spelled like constants or functions', () => {
    assert.deepEqual(S('`OD 600` * 2'), ['*', { q: 'OD 600' }, 2]);
    assert.deepEqual(S('`e` + e'), ['+', { q: 'e' }, 'e']);
    assert.deepEqual(S('`exp` + 1'), ['+', { q: 'exp' }, 1]);
    assert.deepEqual(S('`a``b`'), { q: 'a`b' }, 'a doubled backtick stands for one backtick');
  });
  it('spans are 0-based half-open offsets; parentheses are part of a node', () => {
    const n = parseFormula('a + exp(b*x)');
    assert.deepEqual(n.span, { start: 0, end: 12 });
    assert.ok(n.type === 'binary');
    assert.deepEqual(n.right.span, { start: 4, end: 12 });
    const p = parseFormula(' (a+b) ');
    assert.deepEqual(p.span, { start: 1, end: 6 });
    const q = parseFormula('`OD 600`');
    assert.deepEqual(q.span, { start: 0, end: 8 });
  });
  it('unicode letters are allowed in names', () => assert.deepEqual(S('α*x + µ'), ['+', ['*', 'α', 'x'], 'µ']));
  it('tokenizer: ** and comparison operators are single tokens', () => {
    assert.deepEqual(tokenize('a**b<=c').map((t) => t.text), ['a', '**', 'b', '<=', 'c', '']);
  });
  it('FUNCTIONS and CONSTANTS list the vocabulary', () => {
    assert.deepEqual([...CONSTANTS], ['pi', 'e']);
    for (const f of ['exp', 'log', 'ln', 'log10', 'sqrt', 'abs', 'sin', 'cos', 'tan', 'asin', 'acos', 'atan', 'sinh', 'cosh', 'tanh', 'pow', 'min', 'max']) {
      assert.ok(FUNCTIONS.includes(f), f);
    }
    assert.equal(FUNCTIONS.length, 18);
  });
});

describe('formula parser: errors name the column and suggest a fix', () => {
  it('unexpected closing parenthesis', () => {
    expectError('a*(b+c))', /^unexpected '\)' at column 8 — remove it or add a matching '\('$/, 8);
    expectError('(a+b))+1', /unexpected '\)' at column 6/, 6);
  });
  it('unknown function with did-you-mean by edit distance', () => {
    const e = expectError('a + b * exq(x)', /^unknown function 'exq' at column 9 — did you mean 'exp'\?$/, 9);
    assert.equal(e.hint, "did you mean 'exp'?");
    expectError('sqr(x)', /did you mean 'sqrt'\?/, 1);
    expectError('Exp(x)', /did you mean 'exp'\?/, 1);
    expectError('a(b + c)', /unknown function 'a' at column 1 — insert '\*' for a product/, 1);
  });
  it('function name used without parentheses', () => {
    expectError('a*exp', /'exp' at column 3 is a function — call it with parentheses, e\.g\. exp\(x\)/, 3);
    expectError('log + 1', /'log' at column 1 is a function/, 1);
  });
  it('wrong number of arguments', () => {
    expectError('pow(x)', /'pow' at column 1 takes 2 arguments, got 1 — write pow\(base, exponent\)/, 1);
    expectError('1 + log(x, 10)', /'log' at column 5 takes 1 argument, got 2 — for a logarithm to base b write log\(x\)\/log\(b\)/, 5);
    expectError('min(x)', /'min' at column 1 takes at least 2 arguments, got 1/, 1);
    expectError('exp()', /'exp' at column 1 takes 1 argument, got 0/, 1);
    expectError('sin(a, b)', /takes 1 argument, got 2 — remove the extra arguments/, 1);
  });
  it('malformed and non-finite numbers', () => {
    expectError('1.2.3', /^malformed number '1\.2\.3' at column 1 — a number has at most one decimal point$/, 1);
    expectError('x + 1e', /malformed number '1e' at column 5 — an exponent needs digits/, 5);
    expectError('1e+', /an exponent needs digits/, 1);
    expectError('2 * 1e999', /number '1e999' at column 5 is too large for double precision/, 5);
    expectError('a + .', /unexpected '\.' at column 5 — a decimal point must be followed by digits/, 5);
  });
  it('constants used as functions', () => {
    expectError('e(x)', /^'e' at column 1 is a constant, not a function — write exp\(\.\.\.\)/, 1);
    expectError('2*pi(x)', /'pi' at column 3 is a constant, not a function — write 'pi\*\(\.\.\.\)'/, 3);
  });
  it('empty formula and empty parentheses', () => {
    expectError('', /^empty formula — write an expression/, 1);
    expectError('   ', /^empty formula/, 1);
    expectError('a*()', /empty parentheses at column 3/, 3);
  });
  it('unexpected end', () => {
    expectError('a +', /^unexpected end of formula at column 4 — complete the expression after '\+'$/, 4);
    expectError('(a + b', /unexpected end of formula at column 7 — add '\)' to close the '\(' at column 1/, 7);
    expectError('exp(a', /unexpected end of formula at column 6 — add '\)' to close 'exp\(' at column 4/, 6);
  });
  it('values without an operator between them', () => {
    expectError('2x', /unexpected 'x' at column 2 — insert '\*' for a product/, 2);
    expectError('a b', /unexpected 'b' at column 3/, 3);
    expectError('(a)(b)', /unexpected '\(' at column 4/, 4);
    expectError('`OD 600`(2)', /after the name `OD 600` — insert '\*'/, 9);
  });
  it('operators without operands', () => {
    expectError('*a', /unexpected '\*' at column 1 — a value is missing before it/, 1);
    expectError('a*/b', /unexpected '\/' at column 3/, 3);
    expectError('^2', /a base is missing/, 1);
    expectError('min(a,)', /unexpected '\)' at column 7 — a value is missing before it/, 7);
    expectError('a, b', /unexpected ',' at column 2 — commas only separate the arguments of a function/, 2);
  });
  it('comparisons and logic words outside logic mode', () => {
    expectError('a < b', /^'<' at column 3: comparisons are only allowed in 'where' filters — /, 3);
    expectError('x >= 2', /comparisons are only allowed in 'where' filters/, 3);
    expectError('a and b', /'and' at column 3: the words and\/or\/not are only allowed in 'where' filters — quote it as `and`/, 3);
    expectError('not a', /'not' at column 1/, 1);
  });
  it('equation signs and C-style operators', () => {
    expectError('y = a*x', /unexpected '=' at column 3 — write only the right-hand side/, 3);
    expectError('a = 2', /write '==' to test equality/, 3, { logic: true });
    expectError('a && b', /unexpected '&&' at column 3 — write 'and'/, 3, { logic: true });
    expectError('a || b', /write 'or'/, 3, { logic: true });
    expectError('!a', /write 'not'/, 1, { logic: true });
    expectError('a < b < c', /chained comparison at column 7 — write 'a < b and b < c'/, 7, { logic: true });
  });
  it('stray characters and quoting mistakes', () => {
    expectError('a # b', /unexpected character '#' at column 3 — remove it/, 3);
    expectError('a*[b]', /use '\(' and '\)' for grouping/, 3);
    expectError('"OD 600"*2', /quote a column name with backticks/, 1);
    expectError('`OD 600 * 2', /unterminated quoted name starting at column 1 — add the closing backtick/, 1);
    expectError('`` + 1', /empty quoted name at column 1/, 1);
    expectError('a − b', /write '-' \(ASCII minus\)/, 3);
    expectError('2*temp.c', /unexpected '\.' at column 7 — a name containing '\.' must be quoted in backticks, e\.g\. `temp\.c`/, 7);
  });
  it('excessive nesting is an error, not a stack overflow', () => {
    expectError('('.repeat(5000) + 'x' + ')'.repeat(5000), /nested too deeply/, 202);
    assert.throws(() => parseFormula('-'.repeat(100000) + 'x'), FormulaError);
    assert.throws(() => parseFormula(Array(1001).fill('x').join('+')), /formula nested too deeply at column \d+ \(more than 1000 operations/);
    assert.doesNotThrow(() => parseFormula(Array(1000).fill('x').join('+')));
    expectError('x+'.repeat(10001) + 'x', /^formula too long at column 20001 \(20003 characters, the limit is 20000\)/, 20001);
  });
  it('bad input never throws anything but FormulaError (property, random printable text)', () => {
    fc.assert(
      fc.property(fc.string({ unit: fc.constantFrom(...'ab x1.2e()+-*/^,<=>!&|`_ pi'.split('')), maxLength: 30 }), fc.boolean(), (s, logic) => {
        try {
          parseFormula(s, { logic });
        } catch (e) {
          assert.ok(e instanceof FormulaError, `${JSON.stringify(s)}: ${String(e)}`);
          assert.ok(e.span.start >= 0 && e.span.start <= s.length && e.span.end <= s.length, `span inside the text for ${JSON.stringify(s)}`);
          if (s.trim() !== '') assert.match(e.message, new RegExp(`column ${e.column}\\b`), `${JSON.stringify(s)}: ${e.message}`);
        }
      }),
      { numRuns: 3000 },
    );
  });
});

describe('formula helpers: identifiers, parameters, suggestions', () => {
  it('formulaParameters: non-variables in order of first appearance, without functions and constants', () => {
    assert.deepEqual(formulaParameters('Vmax*x^n/(K^n + x^n)', ['x']), ['Vmax', 'n', 'K']);
    assert.deepEqual(formulaParameters('a*exp(-b*t) + pi*e + c*T', ['t', 'T']), ['a', 'b', 'c']);
    assert.deepEqual(formulaParameters('`e`*x', ['x']), ['e'], 'a quoted `e` is a name');
  });
  it('formulaIdentifiers: every occurrence with its span', () => {
    assert.deepEqual(formulaIdentifiers('a*x + a'), [
      { name: 'a', span: { start: 0, end: 1 } },
      { name: 'x', span: { start: 2, end: 3 } },
      { name: 'a', span: { start: 6, end: 7 } },
    ]);
    assert.deepEqual(formulaIdentifiers('`OD 600` > 0.5 and hours <= 48', { logic: true }).map((i) => i.name), ['OD 600', 'hours']);
  });
  it('suggest: closest candidate by edit distance, case-insensitive match first, unique prefix last', () => {
    assert.equal(suggest('exq', FUNCTIONS), 'exp');
    assert.equal(suggest('K2', ['K', 'n']), 'K');
    assert.equal(suggest('Vmx', ['Vmax', 'K']), 'Vmax');
    assert.equal(suggest('lgo', ['log']), 'log', 'a transposition counts as one edit');
    assert.equal(suggest('hours', ['Hours', 'houts']), 'Hours');
    assert.equal(suggest('od', ['od600', 'hours']), 'od600');
    assert.equal(suggest('b', ['a']), undefined, 'a one-letter word never suggests a different letter');
    assert.equal(suggest('zzzz', ['exp', 'log']), undefined);
  });
});

describe('formatFormula: canonical text', () => {
  const cases: [string, string][] = [
    ['K/(1+exp(-r*(x-x0)))', 'K/(1 + exp(-r*(x - x0)))'],
    ['-x^2', '-x^2'],
    ['(-x)^2', '(-x)^2'],
    ['2^3^2', '2^3^2'],
    ['(2^3)^2', '(2^3)^2'],
    ['2**-1', '2^-1'],
    ['a-(b-c)', 'a - (b - c)'],
    ['a-(b+c)', 'a - (b + c)'],
    ['(a-b)+c', 'a - b + c'],
    ['a/(b*c)', 'a/(b*c)'],
    ['(a*b)/c', 'a*b/c'],
    ['-(a*b)', '-(a*b)'],
    ['min(a,b,  c)', 'min(a, b, c)'],
    ['`OD 600`*`e`+e', '`OD 600`*`e` + e'],
  ];
  for (const [text, canon] of cases) it(`${text} -> ${canon}`, () => assert.equal(formatFormula(parseFormula(text)), canon));
  it('logic mode formatting', () => {
    assert.equal(formatFormula(parseFormula('not(a<b)and(c>=1 or d)', { logic: true })), 'not a < b and (c >= 1 or d)');
  });
  it('round trip: parsing the canonical text gives the same tree (property over random formulas)', () => {
    fc.assert(
      fc.property(formulaArbitrary([...SMOOTH_TEMPLATES, ...KINK_TEMPLATES]), (text) => {
        const a = parseFormula(text);
        const canon = formatFormula(a);
        assert.deepEqual(shape(parseFormula(canon)), shape(a), `${text} -> ${canon}`);
        assert.equal(formatFormula(parseFormula(canon)), canon, 'canonical text is a fixed point');
      }),
      { numRuns: 400 },
    );
  });
});

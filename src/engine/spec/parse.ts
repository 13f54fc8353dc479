// Reads fit-spec text as JSON with comments and trailing commas (jsonc-parser's scanner and tree); syntax errors,
// too deep nesting, duplicated and forbidden keys and numbers beyond the double range become located Problems.
// Objects are built without a prototype, so no key of a spec can reach Object.prototype.
import { pathText as sharedPathText } from '../../shared/reportText';
import { createScanner, parseTree, printParseErrorCode, SyntaxKind, type Node as JsonNode, type ParseError } from 'jsonc-parser';
import type { JsonPath, Problem } from '../report';
import { LIMITS } from './limits';

/** 1-based line and column of an offset (a plain scan: locate's cached parse tree is not built for a too deep text) */
function lineColumnAt(text: string, offset: number): { line: number; column: number } {
  let line = 1;
  let start = 0;
  for (let i = 0; i < offset && i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c === 10 || (c === 13 && text.charCodeAt(i + 1) !== 10)) {
      line++;
      start = i + 1;
    }
  }
  return { line, column: offset - start + 1 };
}

/** keys refused anywhere in a spec: they name JavaScript's object machinery, never a spec setting */
export const FORBIDDEN_KEYS: readonly string[] = ['__proto__', 'constructor', 'prototype'];

/** Readable form of a JSON path in a message: models[0].params.K, or "(the whole spec)" for the empty path. */
export function pathText(p: JsonPath): string {
  return sharedPathText(p) || '(the whole spec)';
}

/** A key or short value as quoted in a message: JSON string syntax (escapes control characters), at most 40 characters. */
export function quoteKey(k: string): string {
  const q = JSON.stringify(k.length > 40 ? k.slice(0, 40) + '…' : k).slice(1, -1);
  return `'${q.replace(/[\u0080-\u009f\u200e\u200f\u202a-\u202e\u2066-\u2069]/g, (c) => '\\u' + c.charCodeAt(0).toString(16).padStart(4, '0'))}'`;
}

function describe(error: ParseError, text: string): { what: string; fix: string } {
  const token = text.substr(error.offset, Math.max(1, Math.min(error.length, 20)));
  const found = error.offset >= text.length ? 'the end of the file' : `'${token}'`;
  switch (printParseErrorCode(error.error)) {
    case 'InvalidSymbol':
      return { what: `unexpected ${found}`, fix: token === ',' ? 'remove it' : 'remove it or put it in double quotes' };
    case 'InvalidNumberFormat':
      return { what: `malformed number ${found}`, fix: 'write it like 12, 0.5 or 1e-3' };
    case 'PropertyNameExpected':
      return token === ','
        ? { what: `unexpected ','`, fix: 'remove it' }
        : { what: `expected a key in double quotes but found ${found}`, fix: 'write keys as "name"' };
    case 'ValueExpected':
      return token === ','
        ? { what: `unexpected ','`, fix: 'remove it or put a value before it' }
        : { what: `expected a value but found ${found}`, fix: 'write a number, "text", true/false, [...] or {...}' };
    case 'ColonExpected':
      return { what: `expected ':' but found ${found}`, fix: 'separate each key from its value with a colon' };
    case 'CommaExpected':
      return { what: `expected ',' but found ${found}`, fix: 'put a comma between entries' };
    case 'CloseBraceExpected':
      return { what: `expected '}' but found ${found}`, fix: 'close the object or add the missing comma' };
    case 'CloseBracketExpected':
      return { what: `expected ']' but found ${found}`, fix: 'close the list or add the missing comma' };
    case 'EndOfFileExpected':
      return { what: `unexpected ${found} after the end of the spec`, fix: 'remove it; a spec is a single {...} object' };
    case 'InvalidCommentToken':
      return { what: `malformed comment`, fix: 'use // to the end of the line or /* ... */' };
    case 'UnexpectedEndOfComment':
      return { what: `unclosed /* comment`, fix: 'close it with */' };
    case 'UnexpectedEndOfString':
      return { what: `unclosed string`, fix: 'add the closing double quote' };
    case 'UnexpectedEndOfNumber':
      return { what: `incomplete number`, fix: 'complete the number' };
    case 'InvalidUnicode':
      return { what: `malformed \\u escape`, fix: 'write \\u followed by four hex digits' };
    case 'InvalidEscapeCharacter':
      return { what: `unknown escape in a string`, fix: 'write a backslash as \\\\' };
    case 'InvalidCharacter':
      return { what: `a control character inside a string`, fix: 'write a tab as \\t and a new line as \\n' };
    default:
      return { what: `syntax error near ${found}`, fix: 'check the JSON syntax' };
  }
}

/**
 * Offset of the first [ or { that opens a level deeper than LIMITS.jsonDepth, or -1. Iterative (the scanner reads
 * tokens one by one), so any depth of input is safe.
 */
function tooDeepAt(text: string): number {
  const scanner = createScanner(text, false);
  let depth = 0;
  for (let kind = scanner.scan(); kind !== SyntaxKind.EOF; kind = scanner.scan()) {
    if (kind === SyntaxKind.OpenBraceToken || kind === SyntaxKind.OpenBracketToken) {
      if (++depth > LIMITS.jsonDepth) return scanner.getTokenOffset();
    } else if (kind === SyntaxKind.CloseBraceToken || kind === SyntaxKind.CloseBracketToken) depth = Math.max(0, depth - 1);
  }
  return -1;
}

/** Parses spec text (JSONC). Never throws: syntax errors come back as Problems with line and column. */
export function parseSpecText(text: string, file: string): { raw: unknown; problems: Problem[] } {
  const problems: Problem[] = [];
  const at = (offset: number) => ({ file, ...lineColumnAt(text, Math.min(offset, text.length)) });
  if (text.trim() === '') {
    problems.push({
      code: 'spec-syntax',
      severity: 'error',
      message: `${file} is empty — a fit spec is a JSON object like { "data": {...}, "models": [...] }`,
      path: [],
      location: { file, line: 1, column: 1 },
    });
    return { raw: undefined, problems };
  }
  const deep = tooDeepAt(text);
  if (deep >= 0) {
    const location = at(deep);
    problems.push({
      code: 'spec-too-deep',
      severity: 'error',
      message: `the spec is nested more than ${LIMITS.jsonDepth} levels deep at line ${location.line}, column ${location.column} of ${file} — a fit spec needs a few levels; remove the extra [ ] or { }`,
      path: [],
      location,
    });
    return { raw: undefined, problems };
  }
  const errors: ParseError[] = [];
  let root: JsonNode | undefined;
  try {
    root = parseTree(text, errors, { allowTrailingComma: true, disallowComments: false, allowEmptyContent: false });
  } catch (e) {
    errors.push({ error: 0 as ParseError['error'], offset: 0, length: 1 });
  }
  // Keep the first error of each line, and errors at the end of the file only when nothing came before
  // (an earlier mistake makes the parser report a cascade of follow-ups there).
  const end = text.trimEnd().length;
  let lastLine = -1;
  for (const error of errors) {
    const { line, column } = lineColumnAt(text, Math.min(error.offset, text.length));
    if (line === lastLine || (problems.length > 0 && error.offset >= end)) continue;
    lastLine = line;
    const { what, fix } = describe(error, text);
    problems.push({
      code: 'spec-syntax',
      severity: 'error',
      message: `${what} at line ${line}, column ${column} of ${file} — ${fix}`,
      path: [],
      location: { file, line, column },
    });
  }
  const raw = root ? build(root, [], text, at, problems) : undefined;
  return { raw, problems };
}

/** The value of a parse-tree node; objects without prototype; depth is bounded by tooDeepAt. */
function build(node: JsonNode, p: JsonPath, text: string, at: (offset: number) => { file: string; line: number; column: number }, problems: Problem[]): unknown {
  switch (node.type) {
    case 'object': {
      const obj: Record<string, unknown> = Object.create(null);
      const first = new Map<string, JsonNode>();
      for (const prop of node.children ?? []) {
        const [keyNode, valueNode] = prop.children ?? [];
        if (!keyNode || typeof keyNode.value !== 'string') continue;
        const key = keyNode.value.normalize('NFC');
        const q = [...p, key];
        if (FORBIDDEN_KEYS.includes(key)) {
          const location = at(keyNode.offset);
          problems.push({
            code: 'spec-forbidden-key',
            severity: 'error',
            message: `key '${key}' at line ${location.line}, column ${location.column} (${pathText(q)}) is not allowed in a fit spec — remove it`,
            path: q,
            location,
          });
          continue;
        }
        const earlier = first.get(key);
        if (earlier) {
          const a = at(earlier.offset);
          const b = at(keyNode.offset);
          const message = `key ${quoteKey(key)} appears twice in ${p.length === 0 ? 'the spec' : pathText(p)} (line ${a.line} and line ${b.line}); keep one`;
          problems.push({ code: 'spec-duplicate-key', severity: 'error', message, path: q, location: a });
          problems.push({ code: 'spec-duplicate-key', severity: 'error', message, path: q, location: b });
        } else first.set(key, keyNode);
        obj[key] = valueNode ? build(valueNode, q, text, at, problems) : undefined;
      }
      return obj;
    }
    case 'array':
      return (node.children ?? []).map((child, i) => build(child, [...p, i], text, at, problems));
    case 'number': {
      const v = node.value as number;
      if (!Number.isFinite(v)) {
        const location = at(node.offset);
        const written = text.substr(node.offset, Math.min(node.length, 24));
        problems.push({
          code: 'spec-number-range',
          severity: 'error',
          message: `number ${written} at line ${location.line}, column ${location.column} (${pathText(p)}) is too large — numbers must lie within ±1.7e308; write a smaller one`,
          path: p,
          location,
        });
      }
      return v;
    }
    default:
      return node.value;
  }
}

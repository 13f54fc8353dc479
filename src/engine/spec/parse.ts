// Reads fit-spec text as JSON with comments and trailing commas (jsonc-parser); syntax errors become located Problems.
import { parse, printParseErrorCode, type ParseError } from 'jsonc-parser';
import type { Problem } from '../report';
import { lineColumnAt } from './locate';

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

/** Parses spec text (JSONC). Never throws: syntax errors come back as Problems with line and column. */
export function parseSpecText(text: string, file: string): { raw: unknown; problems: Problem[] } {
  const problems: Problem[] = [];
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
  const errors: ParseError[] = [];
  let raw: unknown;
  try {
    raw = parse(text, errors, { allowTrailingComma: true, disallowComments: false, allowEmptyContent: false });
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
  return { raw, problems };
}

// Escapes user-given text (titles, model, parameter, column and file names, messages quoting them) for terminals and
// CI logs: C0 and C1 control characters, DEL, ESC sequences and the bidirectional overrides and isolates
// (U+202A–U+202E, U+2066–U+2069) become visible \u escapes, so text cannot move the cursor, recolour, hide or reorder
// output, or fake a line of its own. Pure: no Node or DOM dependency.

// C0 (except tab and line breaks, handled per function), DEL, C1, bidi embeddings/overrides/isolates, LRM/RLM/ALM
const UNSAFE = /[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f-\u009f\u061c\u200e\u200f\u202a-\u202e\u2066-\u2069]/g;

function escape(c: string): string {
  return '\\u' + c.charCodeAt(0).toString(16).padStart(4, '0');
}

/** Text safe to print in a terminal; line breaks and tabs are kept (for multi-line messages). */
export function terminalText(text: string): string {
  return String(text).replace(UNSAFE, escape);
}

/** Text safe to print as one line: additionally CR, LF and tab become \r, \n and \t (no fake lines in a log). */
export function oneLine(text: string): string {
  return terminalText(text).replace(/\r/g, '\\r').replace(/\n/g, '\\n').replace(/\t/g, '\\t').replace(/[\u2028\u2029]/g, escape);
}

// Maps a JSON path to a place in the spec text (jsonc-parser parse tree), with 1-based line and column.
import { findNodeAtLocation, parseTree, type Node as JsonNode } from 'jsonc-parser';
import type { JsonPath } from '../report';

export interface TextLocation {
  /** 0-based character offset of the node */
  offset: number;
  /** length of the node in characters */
  length: number;
  /** 1-based line */
  line: number;
  /** 1-based column (UTF-16 characters) */
  column: number;
}

let cachedText: string | undefined;
let cachedTree: JsonNode | undefined;
let cachedLineStarts: number[] = [];

function treeOf(text: string): { root: JsonNode | undefined; lineStarts: number[] } {
  if (text !== cachedText) {
    cachedText = text;
    cachedTree = parseTree(text, [], { allowTrailingComma: true, disallowComments: false });
    cachedLineStarts = lineStartsOf(text);
  }
  return { root: cachedTree, lineStarts: cachedLineStarts };
}

function lineStartsOf(text: string): number[] {
  const starts = [0];
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c === 10) starts.push(i + 1);
    else if (c === 13) {
      if (text.charCodeAt(i + 1) === 10) i++;
      starts.push(i + 1);
    }
  }
  return starts;
}

/** 1-based line and column of a 0-based offset. */
export function lineColumnAt(text: string, offset: number): { line: number; column: number } {
  const { lineStarts } = treeOf(text);
  let lo = 0;
  let hi = lineStarts.length - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (lineStarts[mid] <= offset) lo = mid;
    else hi = mid - 1;
  }
  return { line: lo + 1, column: offset - lineStarts[lo] + 1 };
}

function at(text: string, offset: number, length: number): TextLocation {
  return { offset, length, ...lineColumnAt(text, offset) };
}

/**
 * Where the value at `path` sits in `text` (for a property, its value), or null when the path does not exist.
 * With `key: true` and a path ending in a property name, the property's key is located instead.
 */
export function locatePath(text: string, path: JsonPath, opts: { key?: boolean } = {}): TextLocation | null {
  const { root } = treeOf(text);
  if (!root) return null;
  const node = findNodeAtLocation(root, path);
  if (!node) return null;
  if (opts.key && node.parent?.type === 'property' && node.parent.children?.[0]) {
    const k = node.parent.children[0];
    return at(text, k.offset, k.length);
  }
  return at(text, node.offset, node.length);
}

/** Like locatePath, but falls back to the deepest existing ancestor (e.g. the object a required key is missing from). */
export function locateNearest(text: string, path: JsonPath, opts: { key?: boolean } = {}): TextLocation | null {
  for (let k = path.length; k >= 0; k--) {
    const loc = locatePath(text, path.slice(0, k), k === path.length ? opts : {});
    if (loc) return loc;
  }
  return null;
}

/**
 * Location of character `index` of the decoded string value at `path` (e.g. a formula column), accounting for
 * JSON escapes in the source text. Returns the string's location when the index cannot be mapped.
 */
export function locateInString(text: string, path: JsonPath, index: number): TextLocation | null {
  const loc = locatePath(text, path);
  if (!loc) return null;
  if (text.charAt(loc.offset) !== '"') return loc;
  let src = loc.offset + 1;
  const end = loc.offset + loc.length - 1;
  for (let decoded = 0; decoded < index && src < end; decoded++) {
    if (text.charAt(src) === '\\') src += text.charAt(src + 1) === 'u' ? 6 : 2;
    else src += 1;
  }
  return at(text, src, 1);
}

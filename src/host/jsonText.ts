// Ranges of JSON paths in live spec text (jsonc-parser), and small reads of a spec's keys the host needs
// (data.file, output) without running the engine.
import * as jsonc from 'jsonc-parser';
import type { JsonPath } from '../engine/report';

export interface TextSpan { offset: number; length: number }

/** Offset and length of the node at `path` in `text`. An object/array value of a property is located by its key
 *  (less noisy than the whole block); a path that does not exist falls back to its nearest existing ancestor.
 *  Returns null only when the text is not parseable at all. */
export function locateInText(text: string, path: JsonPath): (TextSpan & { exact: boolean }) | null {
  const root = jsonc.parseTree(text, [], { allowTrailingComma: true, disallowComments: false });
  if (!root) return null;
  for (let k = path.length; k >= 0; k--) {
    const node = jsonc.findNodeAtLocation(root, path.slice(0, k));
    if (!node) continue;
    const exact = k === path.length;
    if ((node.type === 'object' || node.type === 'array') && node.parent?.type === 'property' && node.parent.children?.[0]) {
      const key = node.parent.children[0];
      return { offset: key.offset, length: key.length, exact };
    }
    if (node === root) return { offset: root.offset, length: 1, exact };
    if (node.type === 'object' && node.parent?.type === 'array') {
      // an array element such as models[i]: point at its name rather than the whole block
      const name = jsonc.findNodeAtLocation(node, ['name']);
      if (name) return { offset: name.offset, length: name.length, exact };
      return { offset: node.offset, length: 1, exact };
    }
    return { offset: node.offset, length: node.length, exact };
  }
  return { offset: 0, length: 0, exact: false };
}

/** Map offsets to 0-based line/character for a text that may not be an open document. */
export class LineIndex {
  private readonly starts: number[] = [0];
  constructor(readonly text: string) {
    for (let i = 0; i < text.length; i++) if (text.charCodeAt(i) === 10) this.starts.push(i + 1);
  }
  positionAt(offset: number): { line: number; character: number } {
    let lo = 0, hi = this.starts.length - 1;
    while (lo < hi) { const mid = (lo + hi + 1) >> 1; if (this.starts[mid] <= offset) lo = mid; else hi = mid - 1; }
    return { line: lo, character: offset - this.starts[lo] };
  }
  offsetAt(line: number, character: number): number {
    const l = Math.max(0, Math.min(line, this.starts.length - 1));
    return Math.min(this.text.length, this.starts[l] + Math.max(0, character));
  }
}

/** data.file and output of a spec text, when present as strings (used to watch the CSV and ignore own writes). */
export function specFiles(text: string): { dataFile?: string; output?: string } {
  const raw = jsonc.parse(text, [], { allowTrailingComma: true }) as unknown;
  if (!raw || typeof raw !== 'object') return {};
  const o = raw as { data?: { file?: unknown }; output?: unknown };
  return {
    dataFile: typeof o.data?.file === 'string' ? o.data.file : undefined,
    output: typeof o.output === 'string' ? o.output : undefined,
  };
}

/** The JSON path at an offset and whether the offset is on a property key. */
export function pathAt(text: string, offset: number): { path: JsonPath; isKey: boolean; node?: jsonc.Node } {
  const loc = jsonc.getLocation(text, offset);
  return { path: loc.path, isKey: loc.isAtPropertyKey, node: loc.previousNode };
}

export function parseTree(text: string): jsonc.Node | undefined {
  return jsonc.parseTree(text, [], { allowTrailingComma: true, disallowComments: false });
}

// Workspace Trust and the workspace boundary in the editor: in an untrusted workspace Curvewright fits in memory and
// writes nothing (no results files) and never reads or writes outside the workspace folder; in a trusted one a spec
// whose data file or output lies outside the folder runs only after the user allowed it once for this workspace
// (a modal question, the answer kept in workspace state). No vscode import, so that the decisions can be tested on
// their own and through the extension's API.
import * as path from 'path';
import { isInside, realOrSelf } from '../engine/paths';

/** Whether a fit may write its results file: trusted workspace, the setting on, and the spec saved. */
export function mayWriteResults(o: { trusted: boolean; setting: boolean; dirty: boolean }): boolean {
  return o.trusted && o.setting && !o.dirty;
}

/** The workspace-state key that remembers the answer to the outside-the-workspace question. */
export const OUTSIDE_PERMISSION_KEY = 'curvewright.outsideWorkspace';

/** The user's answer for this workspace: allowed (specs may use files outside it) or declined (keep them inside). */
export type OutsidePermission = 'allowed' | 'declined';

/**
 * What to do with a spec's files outside the workspace:
 * - 'inside': nothing lies outside; run as usual;
 * - 'confined': run inside the boundary (the engine refuses the outside file with an error naming the key);
 * - 'trusted': run with the boundary lifted (the user allowed it for this workspace);
 * - 'ask': ask the user once (trusted workspace, no answer remembered yet).
 */
export type OutsideDecision = 'inside' | 'confined' | 'trusted' | 'ask';

export function decideOutside(o: { outside: readonly string[]; trusted: boolean; permission?: OutsidePermission | string }): OutsideDecision {
  if (o.outside.length === 0) return 'inside';
  if (!o.trusted) return 'confined'; // never asked, never lifted in an untrusted workspace
  if (o.permission === 'allowed') return 'trusted';
  if (o.permission === 'declined') return 'confined';
  return 'ask';
}

export interface OutsideFile {
  /** the spec key: "data.file" or "output" */
  key: 'data.file' | 'output';
  /** the absolute path after following symlinks */
  resolved: string;
}

/** Which of a spec's data file and output resolve (after following symlinks) outside `root`. Reads no file. */
export async function outsideFiles(root: string, files: { dataFile?: string; output?: string }): Promise<OutsideFile[]> {
  const realRoot = await realOrSelf(root);
  const out: OutsideFile[] = [];
  for (const [key, file] of [['data.file', files.dataFile], ['output', files.output]] as const) {
    if (!file) continue;
    const resolved = await realOrSelf(path.resolve(root, file));
    if (!isInside(realRoot, resolved)) out.push({ key, resolved });
  }
  return out;
}

/** The modal question's text. */
export function outsideQuestion(spec: string, files: readonly OutsideFile[]): { message: string; detail: string } {
  return {
    message: `${spec} uses files outside this workspace. Allow specs in this workspace to read and write outside it?`,
    detail:
      files.map(f => `${f.key}: ${f.resolved}`).join('\n') +
      '\n\nCurvewright asks once per workspace and remembers the answer (command "Curvewright: Forget the Answer about Files Outside the Workspace" asks again). Allow only if you trust the specs of this repository.',
  };
}

/** The advice the engine's boundary errors give in the editor (instead of the CLI's --trust-paths). */
export function boundaryHint(trusted: boolean): string {
  return trusted
    ? 'or allow files outside the workspace (command "Curvewright: Forget the Answer about Files Outside the Workspace", then refit and choose Allow) if you trust this spec'
    : 'or trust the workspace first (files outside an untrusted workspace are never used)';
}

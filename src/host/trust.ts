// Workspace Trust: in an untrusted workspace Curvewright fits in memory and writes nothing (no results files).
// Pure (no vscode import) so that the decision can be tested on its own and through the extension's API.

/** Whether a fit may write its results file: trusted workspace, the setting on, and the spec saved. */
export function mayWriteResults(o: { trusted: boolean; setting: boolean; dirty: boolean }): boolean {
  return o.trusted && o.setting && !o.dirty;
}

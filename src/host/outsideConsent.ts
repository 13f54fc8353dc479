// The editor's side of the workspace boundary: a spec whose data file or output lies outside the workspace folder is
// fitted with the boundary lifted only after the user allowed it once for this workspace (a modal question; the
// answer kept in workspaceState). Untrusted workspaces are never asked and never lifted (src/host/trust.ts decides).
import * as vscode from 'vscode';
import * as path from 'path';
import { log } from './log';
import { OUTSIDE_PERMISSION_KEY, boundaryHint, decideOutside, outsideFiles, outsideQuestion, type OutsideDecision, type OutsideFile, type OutsidePermission } from './trust';

export const ALLOW = 'Allow in This Workspace';
export const KEEP_INSIDE = 'Keep Inside';

export interface OutsideVerdict {
  decision: OutsideDecision;
  outside: OutsideFile[];
}

export class OutsideConsent {
  /** one question at a time: every spec that needs the answer while it is open waits for the same one */
  private pending: Promise<OutsidePermission | undefined> | undefined;
  /** the question was dismissed (Escape) in this session: not asked again until a forced refit or a reload */
  private dismissed = false;

  constructor(private readonly state: vscode.Memento) {}

  get permission(): OutsidePermission | undefined {
    const v = this.state.get<string>(OUTSIDE_PERMISSION_KEY);
    return v === 'allowed' || v === 'declined' ? v : undefined;
  }

  async setPermission(p: OutsidePermission | undefined): Promise<void> {
    await this.state.update(OUTSIDE_PERMISSION_KEY, p);
    this.dismissed = false;
  }

  /** The decision for a spec's files (no question asked): the function the fit service calls before every run. */
  async verdict(root: string, files: { dataFile?: string; output?: string }, trusted: boolean): Promise<OutsideVerdict> {
    const outside = await outsideFiles(root, files);
    const decision = decideOutside({ outside: outside.map(f => f.key), trusted, permission: this.permission });
    return { decision: decision === 'ask' && this.dismissed ? 'confined' : decision, outside };
  }

  /** Resolve a spec's files to run options: asks the modal question when the verdict is 'ask'. */
  async resolve(spec: vscode.Uri, root: string, files: { dataFile?: string; output?: string }, opts: { force?: boolean } = {}): Promise<{ trustPaths: boolean; trustHint: string }> {
    const trusted = vscode.workspace.isTrusted;
    if (opts.force) this.dismissed = false;
    const v = await this.verdict(root, files, trusted);
    let trustPaths = v.decision === 'trusted';
    if (v.decision === 'ask') trustPaths = (await this.ask(spec, v.outside)) === 'allowed';
    return { trustPaths, trustHint: boundaryHint(trusted) };
  }

  private ask(spec: vscode.Uri, outside: OutsideFile[]): Promise<OutsidePermission | undefined> {
    if (!this.pending) {
      const q = outsideQuestion(path.basename(spec.fsPath), outside);
      this.pending = Promise.resolve(vscode.window.showWarningMessage(q.message, { modal: true, detail: q.detail }, ALLOW, KEEP_INSIDE)).then(async pick => {
        const answer: OutsidePermission | undefined = pick === ALLOW ? 'allowed' : pick === KEEP_INSIDE ? 'declined' : undefined;
        if (answer) await this.setPermission(answer);
        else this.dismissed = true;
        log.info(`files outside the workspace: ${answer ?? 'question dismissed (asked again on the next forced refit)'}`);
        return answer;
      }).finally(() => { this.pending = undefined; });
    }
    return this.pending;
  }
}

// The workspace boundary in the editor: a spec whose output or data file lies outside the workspace folder is used
// only after the user allowed it for this workspace (asked once, kept in workspace state), and never in an untrusted
// workspace. The modal question cannot be answered from the extension host (its buttons live in the workbench), so
// the suite sets the remembered answer through the API, exactly as the buttons do, and checks what the real fit
// service then does: the refusal, the results file written outside, and the decision for an untrusted workspace
// (the harness runs VS Code with Workspace Trust disabled, so that case goes through the decision function the fit
// service calls, with trusted = false).
import * as assert from 'assert';
import * as vscode from 'vscode';
import * as fs from 'fs';
import * as path from 'path';
import { api, closeAll, workspaceDir } from './util';
import { isErrorReport } from '../../src/engine/report';

describe('files outside the workspace', () => {
  const ws = () => workspaceDir();
  const outsideDir = () => path.join(path.dirname(ws()), 'outside-the-workspace');
  const outSpec = () => path.join(ws(), 'outside-output.fitspec.json');
  const dataSpec = () => path.join(ws(), 'outside-data.fitspec.json');
  const outFile = () => path.join(outsideDir(), 'outside-output.fitresult.json');

  before(async () => {
    const a = await api();
    await a.setOutsidePermission('declined'); // set before any spec runs: no modal question can open in this suite
    fs.mkdirSync(outsideDir(), { recursive: true });
    fs.copyFileSync(path.join(ws(), 'growth.csv'), path.join(outsideDir(), 'growth.csv'));
    const spec = (data: string, output?: string) => JSON.stringify({
      data: { file: data, x: 'hours', y: 'od600' },
      models: [{ name: 'logistic', builtin: 'logistic3' }],
      ...(output ? { output } : {}),
    }, null, 2);
    fs.writeFileSync(outSpec(), spec('growth.csv', '../outside-the-workspace/outside-output.fitresult.json'));
    fs.writeFileSync(dataSpec(), spec('../outside-the-workspace/growth.csv'));
  });

  after(async () => {
    await closeAll();
    for (const f of [outSpec(), dataSpec()]) fs.rmSync(f, { force: true });
    fs.rmSync(outsideDir(), { recursive: true, force: true });
    // the command resets the answer; the specs are gone, so no run (and no question) follows
    await vscode.commands.executeCommand('curvewright.forgetOutsideAnswer');
    assert.strictEqual((await api()).outsidePermission(), undefined, 'the command forgets the answer');
  });

  it('declined: an output outside the workspace is refused with the key and the editor\'s advice, nothing written', async () => {
    const a = await api();
    const uri = vscode.Uri.file(outSpec());
    const v = await a.outsideVerdict(uri);
    assert.strictEqual(v.decision, 'confined');
    assert.deepStrictEqual(v.outside.map(f => f.key), ['output']);
    const r = await a.refit(uri);
    assert.ok(r, 'the spec ran');
    assert.ok(isErrorReport(r.result), 'a refusal, not a fit');
    if (!isErrorReport(r.result)) return;
    assert.match(r.result.error.message, /output/);
    assert.match(r.result.error.message, /outside the workspace/);
    assert.doesNotMatch(r.result.error.message, /--trust-paths/, 'the editor gives its own advice, not the CLI flag');
    assert.ok(!fs.existsSync(outFile()), 'nothing was written outside the workspace');
  });

  it('declined: a data file outside the workspace is not read', async () => {
    const a = await api();
    const uri = vscode.Uri.file(dataSpec());
    const v = await a.outsideVerdict(uri);
    assert.deepStrictEqual(v.outside.map(f => f.key), ['data.file']);
    const r = await a.refit(uri);
    assert.ok(r && isErrorReport(r.result));
    if (!isErrorReport(r.result)) return;
    assert.match(r.result.error.message, /"data\.file" names a file outside the workspace/);
    assert.deepStrictEqual(r.result.error.path, ['data', 'file']);
  });

  it('allowed (the answer remembered in workspace state): the results file is written outside, the data read', async () => {
    const a = await api();
    await a.setOutsidePermission('allowed');
    assert.strictEqual(a.outsidePermission(), 'allowed');
    assert.strictEqual((await a.outsideVerdict(vscode.Uri.file(outSpec()))).decision, 'trusted');
    const r = await a.refit(vscode.Uri.file(outSpec()));
    assert.ok(r);
    if (isErrorReport(r.result)) throw new Error(r.result.error.message);
    assert.ok(fs.existsSync(outFile()), 'the results file outside the workspace was written');
    const written = JSON.parse(fs.readFileSync(outFile(), 'utf8')) as { version: number; meta: unknown };
    assert.strictEqual(written.version, 1);
    assert.ok(written.meta);
    const d = await a.refit(vscode.Uri.file(dataSpec()));
    assert.ok(d);
    if (isErrorReport(d.result)) throw new Error(d.result.error.message);
    assert.strictEqual(d.result.models[0].status, 'converged');
  });

  it('untrusted workspace: never asked and never lifted, whatever the remembered answer', async () => {
    const a = await api();
    for (const p of ['allowed', 'declined', undefined] as const) {
      await a.setOutsidePermission(p);
      for (const spec of [outSpec(), dataSpec()]) {
        const v = await a.outsideVerdict(vscode.Uri.file(spec), { trusted: false });
        assert.strictEqual(v.decision, 'confined', `untrusted, answer ${p}: ${path.basename(spec)}`);
      }
    }
    // control: in a trusted workspace with no answer yet, the fit service would ask
    assert.strictEqual((await a.outsideVerdict(vscode.Uri.file(outSpec()), { trusted: true })).decision, 'ask');
    // and a spec whose files are all inside is never asked about
    assert.strictEqual((await a.outsideVerdict(vscode.Uri.file(path.join(ws(), 'growth.fitspec.json')), { trusted: true })).decision, 'inside');
    await a.setOutsidePermission('declined');
  });
});

// The panel as the live loop shows it, in the real extension host: problems grouped (one line for a fact that
// several models share), the last good result kept dimmed under the error of a broken edit, and no absolute path of
// this machine in any message the host posts to the webview.
import * as assert from 'assert';
import * as os from 'os';
import * as vscode from 'vscode';
import { api, openSpec, until, closeAll, revert, workspaceDir } from './util';
import { isErrorReport } from '../../src/engine/report';
import type { HostToWebview } from '../../src/shared/protocol';

/** Strings in a message that look like an absolute path or name this machine's folders. */
function absoluteBits(m: HostToWebview): string[] {
  const bad: string[] = [];
  const forbidden = [workspaceDir(), os.tmpdir(), os.homedir()].filter(p => p.length > 1);
  const walk = (v: unknown): void => {
    if (typeof v === 'string') {
      if (forbidden.some(p => v.includes(p)) || /file:\/\//.test(v) || /(^|[\s'"(])\/[^\s/'"()]+\/[^\s'"()]+/.test(v) || /[A-Za-z]:\\/.test(v)) bad.push(v);
    } else if (v && typeof v === 'object' && !ArrayBuffer.isView(v)) for (const x of Object.values(v)) walk(x);
  };
  walk(m);
  return bad;
}

describe('panel view: grouped problems, broken edits, relative paths', () => {
  after(closeAll);

  it('counts a prediction beyond the data once for both models, in one line', async () => {
    const a = await api();
    const { uri } = await openSpec('beyond.fitspec.json');
    const { result } = await a.waitForReport(uri);
    if (isErrorReport(result)) throw new Error(result.error.message);
    const perModel = result.models.map(m => m.problems.filter(p => p.code === 'extrapolation').length);
    assert.deepStrictEqual(perModel, [2, 2], 'the engine says it per model and prediction');
    await vscode.commands.executeCommand('curvewright.showPanel', uri);
    const snap = await until('the panel with its problems', async () => {
      const s = await a.panelSnapshot(uri);
      return /Problems/.test(s.text) && /extrapolation/.test(s.text) ? s : null;
    }, 30000, 300);
    const lines = snap.text.split('\n').filter(l => /extrapolation/.test(l));
    assert.deepStrictEqual(lines.map(l => l.trim()).filter(l => /\u2014/.test(l)), ['extrapolation \u2014 logistic and gompertz, predictions at 60 and 80'], snap.text.slice(0, 600));
    assert.match(snap.text, /\u25b2\s*1 warning\b|\u25b2\s*\d+ warnings/, 'a status chip counts warnings in the header');
    assert.match(snap.text, /time \(h\)|optical density \(OD600\)/, 'the plot block titles the axes (in the plot description)');
    const order = [snap.text.indexOf('Model comparison'), snap.text.indexOf('Problems'), snap.text.lastIndexOf('rows used')];
    assert.ok(order.every(i => i >= 0) && order[0]! < order[1]! && order[1]! < order[2]!, `tables, then problems, then data: ${order}`);
  });

  it('keeps the last good result, dimmed, while an edit breaks the spec; the next good result replaces it', async () => {
    const a = await api();
    const { doc, uri } = await openSpec('beyond.fitspec.json');
    const good = await a.waitForReport(uri);
    await vscode.commands.executeCommand('curvewright.showPanel', uri);
    await until('panel has the good report', () => (a.panelState(uri).postedVersion ?? -1) >= good.version, 30000);
    const edit = new vscode.WorkspaceEdit();
    const at = doc.getText().indexOf('"od600"');
    edit.replace(uri, new vscode.Range(doc.positionAt(at), doc.positionAt(at + '"od600"'.length)), '"od6"');
    assert.ok(await vscode.workspace.applyEdit(edit));
    const broken = await a.waitForReport(uri, { afterVersion: good.version });
    assert.ok(isErrorReport(broken.result), 'the half-typed column is an error');
    const snap = await until('the stale panel', async () => {
      const s = await a.panelSnapshot(uri);
      return s.version === broken.version && /last result that could/.test(s.text) ? s : null;
    }, 30000, 300);
    assert.ok(snap.canvases >= 1, 'the last good plot stays');
    assert.match(snap.text, /Fixture predictions beyond the data/, 'the last good title stays');
    assert.match(snap.text, /od6/, 'the banner names the error');
    await revert(doc);
    const fixed = await a.waitForReport(uri, { afterVersion: broken.version });
    assert.ok(!isErrorReport(fixed.result));
    await until('the panel without the banner', async () => { const s = await a.panelSnapshot(uri); return s.version === fixed.version && !/last result that could/.test(s.text) ? s : null; }, 30000, 300);
  });

  it('posts no absolute path to the webview: reports, errors, busy and export notes', async () => {
    const a = await api();
    for (const name of ['beyond.fitspec.json', 'bad-column.fitspec.json', 'growth.fitspec.json']) {
      const { uri } = await openSpec(name);
      await a.waitForReport(uri);
      await vscode.commands.executeCommand('curvewright.showPanel', uri);
      await until(`${name}: a report posted`, () => a.panelState(uri).postedVersion !== null, 30000);
      await a.refit(uri);
      const msgs = await until(`${name}: messages`, () => { const m = a.panelMessages(uri); return m.some(x => x.type === 'report') ? m : null; });
      const reports = msgs.filter(m => m.type === 'report');
      assert.ok(reports.length >= 1);
      for (const m of msgs) assert.deepStrictEqual(absoluteBits(m), [], `${name}: ${m.type} message carries an absolute path`);
      const r = reports[reports.length - 1]! as Extract<HostToWebview, { type: 'report' }>;
      assert.strictEqual(r.specUri, name, 'the spec is named relative to the workspace');
      if (name === 'bad-column.fitspec.json') assert.ok(isErrorReport(r.report), 'an error report was among them');
    }
  });
});

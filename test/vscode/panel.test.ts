// The fit panel opens beside the spec, completes the Ready handshake and receives the report; refits update it in
// place. Hover and CodeLens show the current estimates.
import * as assert from 'assert';
import * as vscode from 'vscode';
import { api, openSpec, until, closeAll } from './util';
import { isErrorReport } from '../../src/engine/report';

describe('panel and edit help', () => {
  after(closeAll);

  it('opens the panel, which says ready and receives the report', async () => {
    const a = await api();
    const { uri } = await openSpec('growth.fitspec.json');
    const { result, version } = await a.waitForReport(uri);
    assert.ok(!isErrorReport(result), isErrorReport(result) ? result.error.message : '');
    await vscode.commands.executeCommand('curvewright.showPanel', uri);
    const st = await until('the panel to receive a report', () => { const s = a.panelState(uri); return s.ready && s.postedVersion !== null ? s : null; }, 30000);
    assert.strictEqual(st.open, true);
    assert.ok(st.postedVersion! >= version);
  });

  it('shows a chart and the parameter table in the panel', async function () {
    const a = await api();
    const { uri } = await openSpec('growth.fitspec.json');
    await vscode.commands.executeCommand('curvewright.showPanel', uri);
    await until('panel ready', () => a.panelState(uri).postedVersion !== null, 30000);
    const snap = await until('a snapshot with a chart', async () => { const s = await a.panelSnapshot(uri); return s.canvases > 0 && /logistic/.test(s.text) ? s : null; }, 20000, 500);
    assert.ok(snap.canvases >= 1);
    assert.match(snap.text, /\bK\b/, 'the parameter table lists K');
  });

  it('updates the open panel in place on a refit', async () => {
    const a = await api();
    const { uri } = await openSpec('growth.fitspec.json');
    await vscode.commands.executeCommand('curvewright.showPanel', uri);
    const before = await until('panel has a report', () => { const s = a.panelState(uri); return s.postedVersion !== null ? s : null; }, 30000);
    const ev = await a.refit(uri);
    assert.ok(ev);
    const after = await until('a newer report posted', () => { const s = a.panelState(uri); return s.postedVersion! > before.postedVersion! ? s : null; });
    assert.strictEqual(after.readyCount, before.readyCount, 'the webview was not reloaded');
  });

  it('shows the estimate ± SE when hovering a parameter name', async () => {
    const a = await api();
    const { doc, uri } = await openSpec('growth.fitspec.json');
    const { result } = await a.waitForReport(uri);
    if (isErrorReport(result)) throw new Error(result.error.message);
    const K = result.models.find(m => m.name === 'logistic')!.params.K;
    const keyOffset = doc.getText().indexOf('"K": {') + 1;
    const hovers = await vscode.commands.executeCommand<vscode.Hover[]>('vscode.executeHoverProvider', uri, doc.positionAt(keyOffset));
    const text = hovers.flatMap(h => h.contents.map(c => (typeof c === 'string' ? c : 'value' in c ? c.value : ''))).join('\n');
    assert.match(text, /\*\*K\*\* = [0-9.]+/, `hover shows the estimate (got: ${text})`);
    assert.ok(text.includes(String(Number(K.value.toPrecision(6)))), `hover shows K = ${K.value}`);
    assert.match(text, /± [0-9.]+ \(standard error\)/, 'hover shows the standard error');
  });

  it('puts a CodeLens with status, R² and AICc above each model', async () => {
    const a = await api();
    const { doc, uri } = await openSpec('growth.fitspec.json');
    await a.waitForReport(uri);
    const lenses = await until('code lenses', async () => {
      const l = await vscode.commands.executeCommand<vscode.CodeLens[]>('vscode.executeCodeLensProvider', uri, 10);
      return l.length >= 3 && l.every(x => x.command && /R²/.test(x.command.title) || /converge/.test(x.command?.title ?? '')) ? l : null;
    });
    const logistic = lenses.find(l => /logistic/.test(l.command!.title))!;
    assert.match(logistic.command!.title, /converged · R² [0-9.]+ · AICc/);
    assert.strictEqual(logistic.command!.command, 'curvewright.showPanel');
    assert.strictEqual(logistic.range.start.line, doc.positionAt(doc.getText().indexOf('{ "name": "logistic"')).line);
  });
});

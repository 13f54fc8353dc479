// Live refits: unsaved edits refit after the debounce with the editor's text, a newer edit cancels the older fit,
// a CSV change on disk refits, the results file is written after a fit of the saved spec, and the extension's own
// writes do not trigger refits.
import * as assert from 'assert';
import * as vscode from 'vscode';
import * as fs from 'fs';
import * as path from 'path';
import { api, openSpec, closeAll, sleep, workspaceDir, until, revert } from './util';
import { isErrorReport } from '../../src/engine/report';

describe('live refits', () => {
  afterEach(closeAll);

  it('refits unsaved editor text after an edit', async () => {
    const a = await api();
    const { doc, uri } = await openSpec('growth.fitspec.json');
    const first = await a.waitForReport(uri);
    const edit = new vscode.WorkspaceEdit();
    const at = doc.getText().indexOf('"predict": [24]');
    edit.replace(uri, new vscode.Range(doc.positionAt(at), doc.positionAt(at + '"predict": [24]'.length)), '"predict": [30]');
    assert.ok(await vscode.workspace.applyEdit(edit));
    assert.ok(doc.isDirty);
    const next = await a.waitForReport(uri, { afterVersion: first.version });
    assert.strictEqual(next.dirty, true);
    if (isErrorReport(next.result)) throw new Error(next.result.error.message);
    assert.strictEqual(next.result.models[0].predictions[0].x, 30, 'the refit saw the unsaved predict value');
    await revert(doc);
  });

  it('a burst of edits ends with one result for the last text (latest wins)', async () => {
    const a = await api();
    const { doc, uri } = await openSpec('growth.fitspec.json');
    const first = await a.waitForReport(uri);
    for (const v of [25, 26, 27, 28, 29]) {
      const text = doc.getText();
      const m = /"predict": \[\d+\]/.exec(text)!;
      const e = new vscode.WorkspaceEdit();
      e.replace(uri, new vscode.Range(doc.positionAt(m.index), doc.positionAt(m.index + m[0].length)), `"predict": [${v}]`);
      await vscode.workspace.applyEdit(e);
      await sleep(40);
    }
    const next = await a.waitForReport(uri, { afterVersion: first.version });
    await sleep(1500);
    const last = a.getLastReport(uri)!;
    if (isErrorReport(last)) throw new Error(last.error.message);
    assert.strictEqual(last.models[0].predictions[0].x, 29);
    assert.ok(next.version <= first.version + 2, `debounce coalesced the burst (versions ${first.version} -> ${next.version})`);
    await revert(doc);
  });

  it('writes the results file after fitting the saved spec, and its own write does not refit', async () => {
    const a = await api();
    const { uri } = await openSpec('growth.fitspec.json');
    const out = path.join(workspaceDir(), 'results', 'growth.fitresult.json');
    const r = await a.refit(uri);
    assert.ok(r);
    await until('the results file', () => fs.existsSync(out), 10000);
    const written = JSON.parse(fs.readFileSync(out, 'utf8')) as { version: number; models: unknown[] };
    assert.strictEqual(written.version, 1);
    assert.strictEqual(written.models.length, 3);
    const v = r!.version;
    await sleep(2000);
    const now = await a.waitForReport(uri);
    assert.strictEqual(now.version, v, 'no refit was triggered by the results file');
  });

  it('refits when the CSV changes on disk', async () => {
    const a = await api();
    const { uri } = await openSpec('growth.fitspec.json');
    const first = await a.waitForReport(uri);
    if (isErrorReport(first.result)) throw new Error(first.result.error.message);
    const csv = path.join(workspaceDir(), 'growth.csv');
    const original = fs.readFileSync(csv, 'utf8');
    try {
      fs.writeFileSync(csv, original + '50,1.91\n52,1.89\n');
      const next = await a.waitForReport(uri, { afterVersion: first.version, timeoutMs: 20000 });
      if (isErrorReport(next.result)) throw new Error(next.result.error.message);
      assert.strictEqual(next.result.data.rows, first.result.data.rows + 2);
    } finally {
      fs.writeFileSync(csv, original);
    }
  });

  it('shows the fit state in the status bar', async () => {
    const a = await api();
    const { uri } = await openSpec('growth.fitspec.json');
    await a.waitForReport(uri);
    await until('status bar text', () => /Curvewright: (fitted|problems)/.test(a.statusText()), 5000);
  });
});

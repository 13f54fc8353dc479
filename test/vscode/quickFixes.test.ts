// Quick fixes for fit problems: relax a bound the estimate sits on, remove an overfitting model.
import * as assert from 'assert';
import * as vscode from 'vscode';
import * as jsonc from 'jsonc-parser/lib/esm/main.js'; // the ES module build: the UMD main cannot be bundled
import { api, openSpec, until, ours, codeOf, closeAll, revert } from './util';

async function fixesFor(uri: vscode.Uri, d: vscode.Diagnostic): Promise<vscode.CodeAction[]> {
  return vscode.commands.executeCommand<vscode.CodeAction[]>('vscode.executeCodeActionProvider', uri, d.range, vscode.CodeActionKind.QuickFix.value);
}

describe('quick fixes', () => {
  afterEach(closeAll);

  it('removes a max bound the estimate sits on', async () => {
    const a = await api();
    const { doc, uri } = await openSpec('bounded.fitspec.json');
    await a.waitForReport(uri);
    const d = await until('a param-at-bound diagnostic', () => ours(uri).find(x => codeOf(x) === 'param-at-bound'));
    assert.strictEqual(doc.getText(d.range), '"K"', 'the diagnostic sits on the parameter K');
    const fix = (await fixesFor(uri, d)).find(x => /Remove the max bound of 'K'/.test(x.title));
    assert.ok(fix?.edit, 'a fix removes the bound');
    assert.ok(await vscode.workspace.applyEdit(fix!.edit!));
    const spec = jsonc.parse(doc.getText()) as { models: { params?: { K?: { max?: number } } }[] };
    assert.strictEqual(spec.models[0].params?.K?.max, undefined);
    await revert(doc);
  });

  it('removes a model flagged as overfitting', async () => {
    const a = await api();
    const { doc, uri } = await openSpec('bounded.fitspec.json');
    await a.waitForReport(uri);
    const d = await until('an overfitting diagnostic', () => ours(uri).find(x => /^overfit/.test(codeOf(x))));
    assert.strictEqual(doc.getText(d.range), '"wiggly"', 'the diagnostic sits on the model name');
    const fix = (await fixesFor(uri, d)).find(x => x.title === "Remove model 'wiggly' from the spec");
    assert.ok(fix?.edit);
    assert.ok(await vscode.workspace.applyEdit(fix!.edit!));
    const spec = jsonc.parse(doc.getText()) as { models: { name: string }[] };
    assert.deepStrictEqual(spec.models.map(m => m.name), ['capped']);
    await revert(doc);
  });

  it('points related information at the CSV rows a problem concerns', async () => {
    const a = await api();
    const { uri } = await openSpec('growth.fitspec.json');
    await a.waitForReport(uri);
    const d = await until('an influential-points diagnostic', () => ours(uri).find(x => codeOf(x) === 'influential-points'));
    assert.ok(d.relatedInformation?.length, 'has related information');
    const r = d.relatedInformation![0];
    assert.ok(r.location.uri.fsPath.endsWith('growth.csv'));
    const row = Number(/data row (\d+)/.exec(r.message)![1]);
    assert.strictEqual(r.location.range.start.line, row, 'data row r is on 0-based line r (after the header)');
  });
});

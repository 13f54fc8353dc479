// Problems of a fit become diagnostics on the exact JSON ranges of the spec, with a documented code and quick fixes.
import * as assert from 'assert';
import * as vscode from 'vscode';
import { api, openSpec, until, ours, codeOf, closeAll, revert } from './util';
import { isErrorReport } from '../../src/engine/report';

describe('diagnostics', () => {
  afterEach(closeAll);

  it('puts a misspelled column on the data.y range, with the did-you-mean and a link to the problem docs', async () => {
    const a = await api();
    const { doc, uri } = await openSpec('bad-column.fitspec.json');
    await a.waitForReport(uri);
    const d = await until('a diagnostic on bad-column.fitspec.json', () => ours(uri).find(x => /od60/.test(x.message)));
    assert.strictEqual(doc.getText(d.range), '"od60"', 'the range is exactly the data.y value');
    assert.match(d.message, /did you mean 'od600'/);
    assert.strictEqual(d.severity, vscode.DiagnosticSeverity.Error);
    assert.strictEqual(d.source, 'curvewright');
    assert.ok(typeof d.code === 'object' && d.code.target.path.endsWith('/docs/problems.md'), 'code links to docs/problems.md');
    assert.strictEqual((d.code as { target: vscode.Uri }).target.fragment, codeOf(d));
  });

  it('offers a quick fix for the misspelled column, and the fix makes the spec fit', async () => {
    const a = await api();
    const { doc, uri } = await openSpec('bad-column.fitspec.json');
    const first = await a.waitForReport(uri);
    const d = await until('the column diagnostic', () => ours(uri).find(x => /od60/.test(x.message)));
    const actions = await vscode.commands.executeCommand<vscode.CodeAction[]>('vscode.executeCodeActionProvider', uri, d.range, vscode.CodeActionKind.QuickFix.value);
    const fix = actions.find(x => x.title === "Change 'od60' to 'od600'");
    assert.ok(fix?.edit, `quick fix offered (got: ${actions.map(x => x.title).join(' | ') || 'none'})`);
    assert.ok(await vscode.workspace.applyEdit(fix!.edit!));
    assert.match(doc.getText(), /"y": "od600"/);
    const next = await a.waitForReport(uri, { afterVersion: first.version });
    assert.ok(!isErrorReport(next.result), 'the fixed spec runs');
    assert.strictEqual(next.dirty, true, 'the refit used the unsaved editor text');
    await until('the column diagnostic to go away', () => !ours(uri).some(x => /od60/.test(x.message)));
    await revert(doc);
  });

  it('reports a model that cannot converge on that model in the spec', async () => {
    const a = await api();
    const { doc, uri } = await openSpec('stubborn.fitspec.json');
    const { result } = await a.waitForReport(uri);
    assert.ok(!isErrorReport(result), isErrorReport(result) ? result.error.message : '');
    if (isErrorReport(result)) return;
    assert.strictEqual(result.models[0].status, 'failed');
    const d = await until('a no-convergence diagnostic', () => ours(uri).find(x => /converge|iteration/i.test(codeOf(x) + ' ' + x.message)));
    assert.ok(d.severity === vscode.DiagnosticSeverity.Error || d.severity === vscode.DiagnosticSeverity.Warning);
    const modelStart = doc.getText().indexOf('"name": "decay"');
    const modelEnd = doc.getText().indexOf(']', doc.getText().indexOf('"solver"'));
    const off = doc.offsetAt(d.range.start);
    assert.ok(off >= doc.getText().lastIndexOf('{', modelStart) && off <= modelEnd, `the diagnostic sits inside the model (at ${d.range.start.line + 1}:${d.range.start.character + 1})`);
    const actions = await vscode.commands.executeCommand<vscode.CodeAction[]>('vscode.executeCodeActionProvider', uri, d.range, vscode.CodeActionKind.QuickFix.value);
    const raise = actions.find(x => /maxIterations/.test(x.title));
    assert.ok(raise?.edit, `a quick fix raises solver.maxIterations (got: ${actions.map(x => x.title).join(' | ') || 'none'})`);
    assert.ok(await vscode.workspace.applyEdit(raise!.edit!));
    assert.match(doc.getText(), /"maxIterations": 1000/);
    await revert(doc);
  });

  it('shows unreadable CSV cells on the CSV lines too, linked from the spec', async () => {
    const a = await api();
    const { uri } = await openSpec('gappy.fitspec.json');
    await a.waitForReport(uri);
    const csv = vscode.Uri.joinPath(uri, '..', 'gappy.csv');
    const onCsv = await until('diagnostics on gappy.csv', () => { const d = ours(csv); return d.length >= 2 ? d : null; });
    assert.deepStrictEqual(onCsv.map(d => d.range.start.line).sort((x, y) => x - y), [4, 8], 'on file lines 5 and 9');
    assert.ok(onCsv.every(d => d.severity === vscode.DiagnosticSeverity.Warning && codeOf(d) === 'bad-cell'));
    assert.match(onCsv.find(d => d.range.start.line === 4)!.message, /n\/a/);
    const inSpec = ours(uri).find(d => codeOf(d) === 'bad-cell' && /n\/a/.test(d.message))!;
    assert.ok(inSpec, 'the spec has the problem as well');
    const rel = inSpec.relatedInformation?.[0];
    assert.ok(rel && rel.location.uri.fsPath === csv.fsPath && rel.location.range.start.line === 4, 'related information points at line 5 of the CSV');
  });

  it('clears its diagnostics when the spec is closed', async () => {
    const a = await api();
    const { uri } = await openSpec('bad-column.fitspec.json');
    await a.waitForReport(uri);
    await until('a diagnostic', () => ours(uri).length > 0);
    await closeAll();
    await until('diagnostics cleared after closing', () => ours(uri).length === 0, 10000);
  });
});

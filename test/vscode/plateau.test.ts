// A logistic fitted to growth that never levels off: the editor shows the plateau problem in the trade's words
// (no-plateau, "the data do not reach the upper plateau: K is not determined") on the model's line of the spec.
import * as assert from 'assert';
import * as vscode from 'vscode';
import { api, openSpec, until, ours, codeOf, closeAll } from './util';
import { isErrorReport } from '../../src/engine/report';

describe('plateau not reached', () => {
  afterEach(closeAll);

  it('puts no-plateau on the logistic model of a spec whose data have no plateau', async () => {
    const a = await api();
    const { doc, uri } = await openSpec('early.fitspec.json');
    const { result } = await a.waitForReport(uri);
    assert.ok(!isErrorReport(result), isErrorReport(result) ? result.error.message : '');
    if (isErrorReport(result)) return;
    assert.ok(result.models[0].problems.some(p => p.code === 'no-plateau'), `report problems: ${result.models[0].problems.map(p => p.code).join(', ')}`);
    const d = await until('a no-plateau diagnostic', () => ours(uri).find(x => codeOf(x) === 'no-plateau'));
    assert.strictEqual(d.severity, vscode.DiagnosticSeverity.Error);
    assert.match(d.message, /the data do not reach the upper plateau: K is not determined/);
    const modelLine = doc.getText().split('\n').findIndex(l => l.includes('"name": "logistic"'));
    assert.strictEqual(d.range.start.line, modelLine, `on the model's line (${modelLine + 1}), got line ${d.range.start.line + 1}`);
    assert.ok(typeof d.code === 'object' && (d.code as { target: vscode.Uri }).target.fragment === 'no-plateau', 'links to its section of docs/problems.md');
  });
});

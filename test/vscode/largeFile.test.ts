// curvewright.largeFileBytes: a data file above it is not fitted until the user confirms.
import * as assert from 'assert';
import * as vscode from 'vscode';
import { api, openSpec, closeAll, sleep } from './util';

describe('large data files', () => {
  after(async () => {
    await vscode.workspace.getConfiguration('curvewright').update('largeFileBytes', undefined, vscode.ConfigurationTarget.Workspace);
    await closeAll();
  });

  it('does not fit a spec whose CSV is above curvewright.largeFileBytes without asking', async () => {
    const a = await api();
    await vscode.workspace.getConfiguration('curvewright').update('largeFileBytes', 100, vscode.ConfigurationTarget.Workspace);
    const { uri } = await openSpec('stubborn.fitspec.json');
    await sleep(5000);
    assert.strictEqual(a.getLastReport(uri), undefined, 'no fit ran while the question is open');
    // control: with the default limit the same spec fits at once
    await vscode.workspace.getConfiguration('curvewright').update('largeFileBytes', undefined, vscode.ConfigurationTarget.Workspace);
    const r = await a.refit(uri);
    assert.ok(r && a.getLastReport(uri), 'the spec fits once the file is under the limit');
  });
});

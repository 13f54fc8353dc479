// "Fit a curve to this CSV…" driven with arguments (no quick picks): writes a spec beside the CSV, never
// overwrites an existing one silently, opens it and fits it.
import * as assert from 'assert';
import * as vscode from 'vscode';
import * as fs from 'fs';
import * as path from 'path';
import * as jsonc from 'jsonc-parser/lib/esm/main.js'; // the ES module build: the UMD main cannot be bundled
import { api, fixture, workspaceDir, closeAll, until } from './util';
import { isErrorReport } from '../../src/engine/report';

type Result = { csv: string; spec: string | null; created: boolean; reason?: string }[];

describe('fit-CSV command', () => {
  const made: string[] = [];
  afterEach(closeAll);
  after(() => { for (const f of made) fs.rmSync(f, { force: true }); });

  it('writes <name>.fitspec.json beside the CSV with the chosen columns and models, and fits it', async () => {
    const a = await api();
    const res = await vscode.commands.executeCommand<Result>('curvewright.fitCsv', fixture('samples.csv'), undefined,
      { x: 'substrate_mm', y: 'rate', models: ['michaelis_menten', 'linear'], overwrite: false });
    assert.strictEqual(res.length, 1);
    assert.strictEqual(res[0].spec, path.join(workspaceDir(), 'samples.fitspec.json'), res[0].reason);
    made.push(res[0].spec!);
    const spec = jsonc.parse(fs.readFileSync(res[0].spec!, 'utf8')) as { data: { file: string; x: unknown; y: string }; models: { builtin?: string }[] };
    assert.strictEqual(spec.data.file, 'samples.csv');
    assert.strictEqual(spec.data.y, 'rate');
    assert.deepStrictEqual(spec.models.map(m => m.builtin), ['michaelis_menten', 'linear']);
    const uri = vscode.Uri.file(res[0].spec!);
    await until('the new spec open in an editor', () => vscode.window.activeTextEditor?.document.uri.fsPath === uri.fsPath);
    const { result } = await a.waitForReport(uri, { timeoutMs: 30000 });
    assert.ok(!isErrorReport(result), isErrorReport(result) ? result.error.message : '');
    if (!isErrorReport(result)) assert.strictEqual(result.models.find(m => m.name && /michaelis|mm/i.test(m.name + m.formula))?.status, 'converged');
    await until('the panel to show it', () => a.panelState(uri).postedVersion !== null, 30000);
  });

  it('never overwrites an existing spec: it picks a new name and leaves the old one byte for byte', async () => {
    const existing = path.join(workspaceDir(), 'growth.fitspec.json');
    const before = fs.readFileSync(existing, 'utf8');
    const res = await vscode.commands.executeCommand<Result>('curvewright.fitCsv', { csv: fixture('growth.csv').fsPath, x: 'hours', y: 'od600', models: ['logistic3'], overwrite: false, open: false });
    assert.strictEqual(res[0].spec, path.join(workspaceDir(), 'growth-2.fitspec.json'), res[0].reason);
    made.push(res[0].spec!);
    assert.strictEqual(fs.readFileSync(existing, 'utf8'), before, 'growth.fitspec.json is unchanged');
    assert.ok(fs.existsSync(res[0].spec!));
  });

  it('handles several selected CSVs at once (as the explorer passes them)', async () => {
    const uris = [fixture('samples.csv'), fixture('decay.csv')];
    const res = await vscode.commands.executeCommand<Result>('curvewright.fitCsv', uris[0], uris, { models: ['linear'], overwrite: false, open: false });
    assert.strictEqual(res.length, 2);
    for (const r of res) { assert.ok(r.spec, r.reason); made.push(r.spec!); assert.ok(fs.existsSync(r.spec!)); }
    assert.strictEqual(path.basename(res[1].spec!), 'decay.fitspec.json');
  });

  it('does not write anything for a column the CSV does not have', async () => {
    const res = await vscode.commands.executeCommand<Result>('curvewright.fitCsv', { csv: fixture('decay.csv').fsPath, x: 'minutes', y: 'sgnal', models: ['linear'], overwrite: false, open: false });
    assert.strictEqual(res[0].spec, null);
    assert.match(res[0].reason ?? '', /no column 'sgnal'/);
  });
});

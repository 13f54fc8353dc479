// The extension activates in a real VS Code, registers its commands, contributes the fit-spec schema and language
// association, and declares that it runs in untrusted workspaces in a limited mode (fits in memory, writes nothing).
import * as assert from 'assert';
import * as vscode from 'vscode';
import * as fs from 'fs';
import * as path from 'path';
import { api, EXTENSION_ID, fixture, closeAll } from './util';

interface Contributes {
  commands: { command: string; title: string; category?: string }[];
  menus: Record<string, { command: string; when?: string }[]>;
  jsonValidation: { fileMatch: string | string[]; url: string }[];
  languages: { id: string; filenamePatterns?: string[] }[];
  configuration: { properties: Record<string, { default: unknown }> };
}

describe('activation', () => {
  after(closeAll);

  it('activates and returns its test API', async () => {
    const a = await api();
    const ext = vscode.extensions.getExtension(EXTENSION_ID)!;
    assert.strictEqual(ext.isActive, true);
    assert.strictEqual(typeof a.waitForReport, 'function');
    assert.strictEqual(typeof a.getLastReport, 'function');
  });

  it('registers every contributed command', async () => {
    await api();
    const all = new Set(await vscode.commands.getCommands(true));
    const pkg = vscode.extensions.getExtension(EXTENSION_ID)!.packageJSON as { contributes: Contributes };
    const ids = pkg.contributes.commands.map(c => c.command);
    for (const id of ['curvewright.fitCsv', 'curvewright.showPanel', 'curvewright.refit', 'curvewright.showLog']) assert.ok(ids.includes(id), `${id} is contributed`);
    for (const id of ids) assert.ok(all.has(id), `${id} is registered`);
    const fit = pkg.contributes.commands.find(c => c.command === 'curvewright.fitCsv')!;
    assert.strictEqual(fit.title, 'Fit a curve to this CSV…');
    assert.strictEqual(fit.category, 'Curvewright');
  });

  it('offers "Fit a curve" on data files (.csv, .tsv, .txt) in the explorer and editor menus only', () => {
    const pkg = vscode.extensions.getExtension(EXTENSION_ID)!.packageJSON as { contributes: Contributes };
    for (const menu of ['explorer/context', 'editor/title/context']) {
      const item = pkg.contributes.menus[menu]?.find(m => m.command === 'curvewright.fitCsv');
      assert.ok(item, `fitCsv is in ${menu}`);
      assert.strictEqual(item!.when, 'resourceExtname =~ /^\\.(csv|tsv|txt)$/i');
      const [, body, flags] = /=~ \/(.*)\/(\w*)$/.exec(item!.when)!;   // the clause's own regular expression
      const re = new RegExp(body, flags);
      for (const ext of ['.csv', '.TSV', '.txt']) assert.ok(re.test(ext), ext);
      for (const ext of ['.json', '.csvx', '.xlsx']) assert.ok(!re.test(ext), ext);
    }
  });

  it('contributes the fit-spec JSON schema, and the schema file exists and is JSON', () => {
    const ext = vscode.extensions.getExtension(EXTENSION_ID)!;
    const pkg = ext.packageJSON as { contributes: Contributes };
    const v = pkg.contributes.jsonValidation.find(j => ([] as string[]).concat(j.fileMatch).includes('*.fitspec.json'));
    assert.ok(v, 'jsonValidation has an entry for *.fitspec.json');
    const file = path.join(ext.extensionPath, v!.url);
    assert.ok(fs.existsSync(file), `${v!.url} exists in the extension`);
    const schema = JSON.parse(fs.readFileSync(file, 'utf8')) as { properties?: Record<string, unknown> };
    assert.ok(schema.properties && 'data' in schema.properties && 'models' in schema.properties, 'the schema describes data and models');
  });

  it('opens *.fitspec.json as JSON with comments', async () => {
    const pkg = vscode.extensions.getExtension(EXTENSION_ID)!.packageJSON as { contributes: Contributes };
    assert.ok(pkg.contributes.languages.some(l => l.id === 'jsonc' && l.filenamePatterns?.includes('*.fitspec.json')));
    const doc = await vscode.workspace.openTextDocument(fixture('growth.fitspec.json'));
    assert.strictEqual(doc.languageId, 'jsonc');
    assert.ok((await vscode.languages.getLanguages()).includes('jsonc'));
  });

  it('declares support for untrusted workspaces with a description, and activates only on CSVs, specs or commands', () => {
    const pkg = vscode.extensions.getExtension(EXTENSION_ID)!.packageJSON as {
      capabilities: { untrustedWorkspaces: { supported: boolean | string; description?: string } }; activationEvents: string[];
    };
    // limited: an untrusted workspace is fitted in memory and nothing is written (src/host/trust.ts)
    assert.strictEqual(pkg.capabilities.untrustedWorkspaces.supported, 'limited');
    assert.match(pkg.capabilities.untrustedWorkspaces.description ?? '', /never executed/);
    assert.match(pkg.capabilities.untrustedWorkspaces.description ?? '', /writes no results files/);
    assert.ok(!pkg.activationEvents.includes('*'), 'no activation on startup');
    assert.ok(pkg.activationEvents.includes('workspaceContains:**/*.csv'));
    assert.ok(pkg.activationEvents.includes('workspaceContains:**/*.fitspec.json'));
  });

  it('declares its settings with the documented defaults', () => {
    const pkg = vscode.extensions.getExtension(EXTENSION_ID)!.packageJSON as { contributes: Contributes };
    const p = pkg.contributes.configuration.properties;
    assert.strictEqual(p['curvewright.debounceMs'].default, 300);
    assert.strictEqual(p['curvewright.writeResults'].default, true);
    assert.ok('curvewright.workers' in p && 'curvewright.largeFileBytes' in p);
    assert.strictEqual(vscode.workspace.getConfiguration('curvewright').get('debounceMs'), 300);
  });
});

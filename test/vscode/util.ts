// Helpers shared by the integration suites (bundled into each suite by the harness; not a suite itself).
import * as vscode from 'vscode';
import * as path from 'path';
import type { CurvewrightApi } from '../../src/host/extension';

export const EXTENSION_ID = 'curvewright.curvewright';

export function workspaceDir(): string {
  const env = process.env.CURVEWRIGHT_TEST_WORKSPACE;
  if (env) return env;
  const f = vscode.workspace.workspaceFolders?.[0];
  if (!f) throw new Error('the integration tests need the fixture workspace open');
  return f.uri.fsPath;
}

export function fixture(name: string): vscode.Uri {
  return vscode.Uri.file(path.join(workspaceDir(), name));
}

export async function api(): Promise<CurvewrightApi> {
  const ext = vscode.extensions.getExtension<CurvewrightApi>(EXTENSION_ID);
  if (!ext) throw new Error(`extension ${EXTENSION_ID} is not installed in this extension host`);
  return ext.isActive ? ext.exports : await ext.activate();
}

export async function openSpec(name: string): Promise<{ doc: vscode.TextDocument; editor: vscode.TextEditor; uri: vscode.Uri }> {
  const uri = fixture(name);
  const doc = await vscode.workspace.openTextDocument(uri);
  const editor = await vscode.window.showTextDocument(doc, { preview: false, viewColumn: vscode.ViewColumn.One });
  return { doc, editor, uri };
}

/** Poll `fn` until it returns a truthy value or the time is up. */
export async function until<T>(what: string, fn: () => T | Promise<T>, timeoutMs = 20000, everyMs = 100): Promise<NonNullable<T>> {
  const end = Date.now() + timeoutMs;
  let last: unknown;
  for (;;) {
    try { const v = await fn(); if (v) return v as NonNullable<T>; } catch (e) { last = e; }
    if (Date.now() > end) throw new Error(`timed out after ${timeoutMs} ms waiting for ${what}${last ? ` (last error: ${(last as Error).message})` : ''}`);
    await sleep(everyMs);
  }
}

export const sleep = (ms: number) => new Promise(r => setTimeout(r, ms));

export function ours(uri: vscode.Uri): vscode.Diagnostic[] {
  return vscode.languages.getDiagnostics(uri).filter(d => d.source === 'curvewright');
}

export function codeOf(d: vscode.Diagnostic): string {
  return typeof d.code === 'object' && d.code ? String(d.code.value) : String(d.code ?? '');
}

export async function closeAll(): Promise<void> {
  await vscode.commands.executeCommand('workbench.action.closeAllEditors');
}

/** Revert and close a document we edited, so later suites see the file as on disk. */
export async function revert(doc: vscode.TextDocument): Promise<void> {
  if (doc.isClosed) return;
  await vscode.window.showTextDocument(doc);
  await vscode.commands.executeCommand('workbench.action.files.revert');
}

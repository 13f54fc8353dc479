// Typed access to the curvewright.* settings (defaults declared once here and in package.json contributes.configuration).
import * as vscode from 'vscode';
import * as os from 'os';

export const SETTING_DEFAULTS = {
  debounceMs: 300,
  /** 0 = automatic: min(2, cores - 1), at least 1 */
  workers: 0,
  writeResults: true,
  largeFileBytes: 50_000_000,
  cancelTimeoutMs: 500,
};

export function settings(scope?: vscode.Uri) {
  const c = vscode.workspace.getConfiguration('curvewright', scope);
  const workers = c.get<number>('workers', SETTING_DEFAULTS.workers);
  return {
    debounceMs: Math.max(0, c.get<number>('debounceMs', SETTING_DEFAULTS.debounceMs)),
    workers: workers > 0 ? Math.min(8, Math.floor(workers)) : Math.max(1, Math.min(2, os.cpus().length - 1)),
    writeResults: c.get<boolean>('writeResults', SETTING_DEFAULTS.writeResults),
    largeFileBytes: c.get<number>('largeFileBytes', SETTING_DEFAULTS.largeFileBytes),
    cancelTimeoutMs: Math.max(50, c.get<number>('cancelTimeoutMs', SETTING_DEFAULTS.cancelTimeoutMs)),
  };
}

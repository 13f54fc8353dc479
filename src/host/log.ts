// The "Curvewright" output channel, shared by every host module.
import * as vscode from 'vscode';

let channel: vscode.LogOutputChannel | undefined;

export function initLog(): vscode.LogOutputChannel {
  channel ??= vscode.window.createOutputChannel('Curvewright', { log: true });
  return channel;
}

export const log = {
  info: (m: string) => channel?.info(m),
  warn: (m: string) => channel?.warn(m),
  error: (m: string) => channel?.error(m),
  show: () => channel?.show(true),
  dispose: () => { channel?.dispose(); channel = undefined; },
};

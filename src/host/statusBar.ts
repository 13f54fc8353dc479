// One status bar item: fitting / fitted / problems for the spec in the active editor (or the last one fitted);
// clicking it opens the panel.
import * as vscode from 'vscode';
import * as path from 'path';
import { Disposable } from './disposable';
import { FitService, isSpecUri, summary } from './fitService';
import { allProblems } from './diagnostics';

export class FitStatusBar extends Disposable {
  private readonly item = this._register(vscode.window.createStatusBarItem('curvewright.status', vscode.StatusBarAlignment.Left, 50));
  private current?: vscode.Uri;

  constructor(private readonly fits: FitService) {
    super();
    this.item.name = 'Curvewright';
    this.item.command = 'curvewright.showPanel';
    this._register(fits.onDidChangeState(e => { if (!this.current || e.uri.toString() === this.current.toString() || !this.activeSpec()) { this.current = this.activeSpec() ?? e.uri; this.render(e.message); } }));
    this._register(vscode.window.onDidChangeActiveTextEditor(() => { const a = this.activeSpec(); if (a) { this.current = a; this.render(); } }));
    this.current = this.activeSpec();
    this.render();
  }

  private activeSpec(): vscode.Uri | undefined {
    const u = vscode.window.activeTextEditor?.document.uri;
    return u && isSpecUri(u) ? u : undefined;
  }

  /** what the item shows now (tests read it) */
  get text(): string { return this.item.text; }

  private render(message?: string): void {
    const uri = this.current;
    if (!uri) { this.item.hide(); return; }
    const name = path.basename(uri.fsPath);
    const state = this.fits.state(uri);
    const last = this.fits.last(uri);
    this.item.command = { command: 'curvewright.showPanel', title: 'Show fit panel', arguments: [uri] };
    this.item.backgroundColor = undefined;
    switch (state) {
      case 'fitting': this.item.text = '$(sync~spin) Curvewright: fitting'; this.item.tooltip = `Fitting ${name}${message && message !== 'fitting' ? ` — ${message}` : ''}`; break;
      case 'fitted': this.item.text = '$(check) Curvewright: fitted'; this.item.tooltip = `${name}: ${last ? summary(last.result) : ''}`; break;
      case 'problems': {
        const errors = !!last && allProblems(last.result).some(p => p.problem.severity === 'error');
        this.item.text = errors ? '$(error) Curvewright: problems' : '$(warning) Curvewright: problems';
        this.item.tooltip = `${name}: ${last ? summary(last.result) : ''}`;
        this.item.backgroundColor = new vscode.ThemeColor(errors ? 'statusBarItem.errorBackground' : 'statusBarItem.warningBackground'); break;
      }
      case 'error': this.item.text = '$(error) Curvewright: spec error'; this.item.tooltip = `${name}: ${last ? summary(last.result) : ''}`;
        this.item.backgroundColor = new vscode.ThemeColor('statusBarItem.errorBackground'); break;
      default: this.item.text = '$(graph-line) Curvewright'; this.item.tooltip = `${name}: not fitted yet`;
    }
    this.item.show();
  }
}

// Disposable base class: everything that listens registers its subscriptions with _register and is torn down once.
import * as vscode from 'vscode';

export abstract class Disposable implements vscode.Disposable {
  private readonly _disposables: vscode.Disposable[] = [];
  protected _isDisposed = false;

  protected _register<T extends vscode.Disposable>(d: T): T {
    if (this._isDisposed) { d.dispose(); return d; }
    this._disposables.push(d);
    return d;
  }

  dispose(): void {
    if (this._isDisposed) return;
    this._isDisposed = true;
    while (this._disposables.length) {
      try { this._disposables.pop()!.dispose(); } catch { /* keep disposing the rest */ }
    }
  }
}

// Files the extension itself wrote recently (results files, new specs): watcher events for them are ignored for a
// short window so the extension never triggers itself.
import * as path from 'path';

export class OwnWrites {
  private readonly until = new Map<string, number>();
  constructor(private readonly windowMs = 2000) {}

  mark(fsPath: string): void { this.until.set(norm(fsPath), Date.now() + this.windowMs); }

  isOwn(fsPath: string): boolean {
    const key = norm(fsPath);
    const t = this.until.get(key);
    if (t === undefined) return false;
    if (Date.now() > t) { this.until.delete(key); return false; }
    return true;
  }
}

function norm(p: string): string { return path.normalize(p); }

// Where the command line writes: stdout for results, stderr for problems (every line through toTerminal), and the
// folder it runs in.
import { promises as fsp } from 'fs';
import * as path from 'path';
import { randomBytes } from 'crypto';
import { cleanStaleTemps, realOrSelf, tmpName, withFileLock } from '../engine/paths';
import { terminalText } from '../shared/terminalText';

export interface Io {
  out(text: string): void;
  err(text: string): void;
  cwd: string;
}

/**
 * Every line the CLI prints to a terminal passes here: control characters, DEL, C1 and bidirectional controls become
 * visible \u escapes (src/shared/terminalText.ts) and a carriage return not followed by a line feed becomes \r, so
 * nothing printed can move the cursor, recolour, hide or reorder text, or overwrite a line — a backstop behind the
 * per-field escaping of the summary and the annotations. JSON lines stay valid JSON (an escape inside a string is the
 * same character; JSON has no such characters outside strings). Ends the text with a line break.
 */
export function toTerminal(text: string): string {
  const t = terminalText(text).replace(/\r(?!\n)/g, '\\r');
  return t.endsWith('\n') ? t : t + '\n';
}

export const processIo: Io = {
  out: text => { process.stdout.write(toTerminal(text)); },
  err: text => { process.stderr.write(toTerminal(text)); },
  cwd: process.cwd(),
};

/** A user's I/O mistake in words (permission, full disk, a file where a folder should be). */
export function ioReason(e: unknown): string {
  const code = (e as NodeJS.ErrnoException).code;
  if (code === 'EACCES' || code === 'EPERM' || code === 'EROFS') return 'permission denied';
  if (code === 'ENOSPC') return 'the disk is full';
  if (code === 'ENOTDIR') return 'a part of the path is a file, not a folder';
  if (code === 'EISDIR') return 'it is a folder';
  return (e as Error).message;
}

/**
 * Writes a file atomically: a temporary file (.<name>.curvewright-tmp-<pid>-<random>) in the same folder, then
 * rename, one writer at a time (the lock file of src/engine/paths.ts withFileLock). A symlink is written through (its
 * target replaced, the link kept); the file's mode is kept.
 */
export async function writeAtomic(file: string, text: string): Promise<void> {
  const target = await realOrSelf(file);
  const dir = path.dirname(target);
  const tmp = tmpName(target, randomBytes(4).toString('hex'));
  await fsp.mkdir(dir, { recursive: true });
  await withFileLock(target, async () => {
    await cleanStaleTemps(target);
    const mode = await fsp.stat(target).then(st => st.mode & 0o7777, () => undefined);
    try {
      await fsp.writeFile(tmp, text, { encoding: 'utf8', ...(mode !== undefined ? { mode } : {}) });
      if (mode !== undefined) await fsp.chmod(tmp, mode);
      await fsp.rename(tmp, target);
    } catch (e) {
      await fsp.unlink(tmp).catch(() => undefined);
      throw e;
    }
  });
}

/** Path for messages: relative to the working folder when inside it, with forward slashes. */
export function shown(file: string, cwd: string): string {
  const rel = path.relative(cwd, path.resolve(cwd, file));
  return (rel && !rel.startsWith('..') && !path.isAbsolute(rel) ? rel : file).split(path.sep).join('/');
}

// Where the command line writes: stdout for results, stderr for problems, and the folder it runs in.
import { promises as fsp } from 'fs';
import * as path from 'path';
import { randomBytes } from 'crypto';

export interface Io {
  out(text: string): void;
  err(text: string): void;
  cwd: string;
}

export const processIo: Io = {
  out: text => { process.stdout.write(text.endsWith('\n') ? text : text + '\n'); },
  err: text => { process.stderr.write(text.endsWith('\n') ? text : text + '\n'); },
  cwd: process.cwd(),
};

/** Writes a file atomically: a temporary file in the same folder, then rename. */
export async function writeAtomic(file: string, text: string): Promise<void> {
  const dir = path.dirname(file);
  const tmp = path.join(dir, `.${path.basename(file)}.${process.pid}.${randomBytes(4).toString('hex')}.tmp`);
  await fsp.mkdir(dir, { recursive: true });
  try {
    await fsp.writeFile(tmp, text, 'utf8');
    await fsp.rename(tmp, file);
  } catch (e) {
    await fsp.unlink(tmp).catch(() => undefined);
    throw e;
  }
}

/** Path for messages: relative to the working folder when inside it, with forward slashes. */
export function shown(file: string, cwd: string): string {
  const rel = path.relative(cwd, path.resolve(cwd, file));
  return (rel && !rel.startsWith('..') && !path.isAbsolute(rel) ? rel : file).split(path.sep).join('/');
}

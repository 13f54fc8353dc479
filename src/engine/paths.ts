// The workspace boundary: which files a spec may read and which it may write. Pure path logic on node:fs (no vscode),
// shared by the CLI (root = the current directory or --root) and the extension host (root = the workspace folder).
// Every check follows symlinks (fs.realpath of the deepest existing ancestor) before comparing with the root.
import { promises as fsp } from 'fs';
import * as path from 'path';

/** Marker every HTML report written by Curvewright carries, so that `report -o` may replace its own reports only. */
export const REPORT_MARKER = '<meta name="generator" content="curvewright-report">';

export interface BoundaryOptions {
  /** folder inputs and outputs must stay inside */
  root: string;
  /** the user passed --trust-paths (CLI) or allowed it once (extension): files outside the root are allowed */
  trustOutside?: boolean;
  /** how the user lifts the boundary, for the refusal's advice (default: the CLI's "run with --trust-paths …") */
  trustHint?: string;
}

/** Case-insensitive file systems (Windows, macOS default) compare paths without case. */
function samePath(a: string, b: string): boolean {
  return process.platform === 'win32' || process.platform === 'darwin' ? a.toLowerCase() === b.toLowerCase() : a === b;
}

export function isInside(root: string, file: string): boolean {
  const fold = (s: string) => (process.platform === 'win32' || process.platform === 'darwin' ? s.toLowerCase() : s);
  const rel = path.relative(fold(root), fold(file));
  return rel === '' || (!rel.startsWith('..' + path.sep) && rel !== '..' && !path.isAbsolute(rel));
}

/** The path with symlinks of its deepest existing ancestor resolved (the rest appended as written). */
export async function realOrSelf(p: string): Promise<string> {
  let head = path.resolve(p);
  const tail: string[] = [];
  for (;;) {
    try {
      const real = await fsp.realpath(head);
      return path.join(real, ...tail.reverse());
    } catch {
      const parent = path.dirname(head);
      if (parent === head) return path.resolve(p);
      tail.push(path.basename(head));
      head = parent;
    }
  }
}

/** A path for messages: relative to the root with forward slashes when inside it, else "outside the workspace". */
function shownFromRoot(root: string, real: string): string {
  return isInside(root, real) ? path.relative(root, real).split(path.sep).join('/') || '.' : '(a path outside the workspace)';
}

function keyText(key: string): string {
  return `"${key}"`;
}

/** Why an input file (data.file …) may not be read, or null when it may. Nothing is read to decide. */
export async function inputRefusal(key: string, file: string, opts: BoundaryOptions): Promise<string | null> {
  if (opts.trustOutside) return null;
  const root = await realOrSelf(opts.root);
  const real = await realOrSelf(file);
  if (!isInside(root, real))
    return `${keyText(key)} names a file outside the workspace (after following links) — a spec may only read files inside the folder it runs in; move the file into the workspace, ${opts.trustHint ?? 'or run with --trust-paths if you trust this spec'}`;
  return null;
}

/** results: a JSON results file; report: an HTML report; table: a CSV export (its owner check is opts.isOwn) */
export type OutputKind = 'results' | 'report' | 'table';

/** Is the existing file one Curvewright wrote (results: JSON with its own version and meta keys; report: the marker)? */
async function isOwnFile(file: string, kind: OutputKind): Promise<boolean> {
  let text: string;
  try {
    const handle = await fsp.open(file, 'r');
    try {
      const buf = Buffer.alloc(kind === 'report' ? 4096 : 1 << 16);
      const { bytesRead } = await handle.read(buf, 0, buf.length, 0);
      text = buf.subarray(0, bytesRead).toString('utf8');
    } finally {
      await handle.close();
    }
  } catch {
    return false;
  }
  if (kind === 'report') return text.includes(REPORT_MARKER);
  // a results file starts with its version and spec, then meta (deterministic key order); read its whole text when small
  try {
    const full = await fsp.readFile(file, 'utf8');
    const v = JSON.parse(full) as unknown;
    return !!v && typeof v === 'object' && !Array.isArray(v) && 'version' in v && ('meta' in v || 'error' in v);
  } catch {
    return false;
  }
}

/**
 * Why an output file may not be written, or null when it may. `inputs` are every input of every spec in the run
 * (spec files and data files); `claimed` the outputs already taken in this run.
 */
export async function outputRefusal(
  key: string,
  file: string,
  kind: OutputKind,
  opts: BoundaryOptions & { inputs?: string[]; claimed?: Set<string>; isOwn?: (file: string) => Promise<boolean> },
): Promise<string | null> {
  const root = await realOrSelf(opts.root);
  const real = await realOrSelf(file);
  const where = shownFromRoot(root, real);
  const ext = kind === 'results' ? '.json' : kind === 'table' ? '.csv' : '.html';
  if (!real.toLowerCase().endsWith(ext))
    return `${keyText(key)} ${where} is not a ${ext} file — ${kind === 'results' ? 'results go to a .json file such as "results/<name>.fitresult.json"' : kind === 'table' ? 'a table goes to a .csv file such as "results/unknowns.csv"' : 'a report goes to an .html file such as report.html'}`;
  if (/\.fitspec\.json$/i.test(real)) return `${keyText(key)} ${where} is a spec file name — results go to a separate file such as "results/<name>.fitresult.json"`;
  if (!opts.trustOutside && !isInside(root, real))
    return `${keyText(key)} ${where} — outputs must stay inside the workspace; give a path inside it (e.g. "results/<name>.fitresult.json"), ${opts.trustHint ?? 'or run with --trust-paths if you really want this file'}`;
  if (isInside(root, real)) {
    const dot = path.relative(root, real).split(path.sep).slice(0, -1).find(s => s.startsWith('.'));
    if (dot) return `${keyText(key)} ${where} is inside the hidden folder ${dot}/ (such as .git) — write outputs to a visible folder, e.g. "results/"`;
  }
  for (const input of opts.inputs ?? []) {
    if (samePath(await realOrSelf(input), real))
      return `${keyText(key)} ${where} is an input of this run (a spec or data file) — it would be overwritten; write to a separate file such as "results/<name>.fitresult.json"`;
  }
  if (opts.claimed) {
    for (const c of opts.claimed) if (samePath(c, real)) return `${keyText(key)} ${where} is already the output of another spec in this run — give each spec its own output file`;
  }
  // the parent chain: a regular file where a folder should be
  let dir = path.dirname(real);
  for (;;) {
    try {
      const st = await fsp.stat(dir);
      if (!st.isDirectory()) return `${keyText(key)} ${where} lies under ${shownFromRoot(root, dir)}, which is a file, not a folder — choose another output path`;
      break;
    } catch {
      const up = path.dirname(dir);
      if (up === dir) break;
      dir = up;
    }
  }
  try {
    const st = await fsp.stat(real);
    if (st.isDirectory()) return `${keyText(key)} ${where} is a folder — name a file inside it, e.g. "${where.replace(/\/$/, '')}/results.json"`;
    if (!(kind === 'table' ? (opts.isOwn ? await opts.isOwn(real) : false) : await isOwnFile(real, kind)))
      return `${keyText(key)} ${where} exists and is not a Curvewright ${kind === 'results' ? 'results file' : kind === 'table' ? 'table' : 'report'} — it is left untouched; choose another output path or remove that file yourself`;
  } catch {
    /* does not exist yet: fine */
  }
  opts.claimed?.add(real);
  return null;
}

/** Temporary-file names of our atomic writes: `.<name>.curvewright-tmp-<pid>-<random>`. */
export function tmpName(file: string, random: string): string {
  return path.join(path.dirname(file), `.${path.basename(file)}.curvewright-tmp-${process.pid}-${random}`);
}

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/** Removes stale temporaries of `file` left by processes that no longer run (kill -9 between write and rename). */
export async function cleanStaleTemps(file: string): Promise<number> {
  const dir = path.dirname(file);
  const prefix = `.${path.basename(file)}.curvewright-tmp-`;
  let names: string[];
  try {
    names = await fsp.readdir(dir);
  } catch {
    return 0;
  }
  let removed = 0;
  for (const n of names) {
    if (!n.startsWith(prefix)) continue;
    const pid = Number(n.slice(prefix.length).split('-')[0]);
    if (!Number.isInteger(pid) || pid === process.pid || alive(pid)) continue;
    await fsp.unlink(path.join(dir, n)).then(() => removed++, () => undefined);
  }
  return removed;
}

/** Lock-file name of `file`'s writers: `.<name>.curvewright-lock` beside it (holds the writer's pid). */
export function lockName(file: string): string {
  return path.join(path.dirname(file), `.${path.basename(file)}.curvewright-lock`);
}

/** A lock older than this is stale even when its pid seems alive (a pid reused, or a lock from another machine). */
export const LOCK_STALE_MS = 10 * 60 * 1000;

/** Another live process holds the lock of a file beyond the wait. */
export class LockBusyError extends Error {
  /** as a Node I/O error: the file is busy (the CLI reports it as a user's I/O problem, exit 2) */
  readonly code = 'EBUSY';
  readonly path: string;
  constructor(readonly file: string, readonly lock: string, readonly pid: number | null) {
    super(
      `another Curvewright process${pid !== null ? ` (pid ${pid})` : ''} is writing ${path.basename(file)} — run again when it has finished` +
        ` (if no such process runs, remove ${path.basename(lock)} beside it)`,
    );
    this.path = file;
  }
}

/** Create the lock file with its pid already in it: written beside it, then hard-linked to the lock's name (link
 *  fails if the name exists, so taking the lock is atomic and no other writer ever reads an empty lock). Where the
 *  file system has no hard links, an exclusive create then a write. */
async function takeLock(file: string, lock: string): Promise<boolean> {
  const body = `${process.pid}\n`;
  // named like the results' temporaries, so cleanStaleTemps removes one a killed writer left behind
  const tmp = path.join(path.dirname(file), `.${path.basename(file)}.curvewright-tmp-${process.pid}-lock-${Math.random().toString(36).slice(2, 10)}`);
  let linked: boolean | null = null;
  try {
    await fsp.writeFile(tmp, body, { encoding: 'utf8', flag: 'wx' });
    try {
      await fsp.link(tmp, lock);
      linked = true;
    } catch (e) {
      const code = (e as NodeJS.ErrnoException).code;
      if (code === 'EEXIST') linked = false;
      else if (code !== 'EPERM' && code !== 'ENOTSUP' && code !== 'EOPNOTSUPP' && code !== 'EXDEV') throw e;
    }
  } finally {
    await fsp.unlink(tmp).catch(() => undefined);
  }
  if (linked !== null) return linked;
  try {
    const h = await fsp.open(lock, 'wx');
    try {
      await h.writeFile(body, 'utf8');
    } finally {
      await h.close();
    }
    return true;
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw e;
    return false;
  }
}

/**
 * Runs `fn` holding an exclusive lock on `file` (created with O_EXCL: one writer at a time, across processes).
 * A lock whose process no longer runs, or older than LOCK_STALE_MS, is removed and taken; a live one is waited for
 * (polling every 25 ms) up to `waitMs` (default 10 s), then LockBusyError. The lock is removed when `fn` settles.
 */
export async function withFileLock<T>(file: string, fn: () => Promise<T>, opts: { waitMs?: number } = {}): Promise<T> {
  const lock = lockName(file);
  const deadline = Date.now() + (opts.waitMs ?? 10000);
  for (;;) {
    if (await takeLock(file, lock)) break;
    let pid: number | null = null;
    let stale = false;
    try {
      const [text, st] = await Promise.all([fsp.readFile(lock, 'utf8'), fsp.stat(lock)]);
      const n = Number(text.trim());
      pid = Number.isInteger(n) && n > 0 ? n : null;
      const age = Date.now() - st.mtimeMs;
      // no pid yet: a writer between open and write (give it a second), or a lock left half-written
      stale = age > LOCK_STALE_MS || (pid === null ? age > 1000 : pid !== process.pid && !alive(pid));
    } catch {
      continue; // removed meanwhile: try again at once
    }
    if (stale) {
      await fsp.unlink(lock).catch(() => undefined);
      continue;
    }
    if (Date.now() > deadline) throw new LockBusyError(file, lock, pid);
    await new Promise(r => setTimeout(r, 25));
  }
  try {
    return await fn();
  } finally {
    await fsp.unlink(lock).catch(() => undefined);
  }
}

// Spec arguments to spec files: a file as is, a folder to its *.fitspec.json files, a pattern with * or ? (in the
// last path segment) to the matching files, sorted — for shells that do not expand patterns themselves.
import * as fs from 'fs';
import * as path from 'path';
import { UsageError } from './args';

function patternRegex(glob: string): RegExp {
  const body = glob.replace(/[.+^${}()|[\]\\]/g, '\\$&').replace(/\*/g, '[^/\\\\]*').replace(/\?/g, '[^/\\\\]');
  return new RegExp(`^${body}$`, process.platform === 'win32' ? 'i' : '');
}

export function expandSpecs(args: string[], cwd: string): string[] {
  const out: string[] = [];
  for (const arg of args) {
    const abs = path.resolve(cwd, arg);
    let stat: fs.Stats | undefined;
    try { stat = fs.statSync(abs); } catch { stat = undefined; }
    if (stat?.isDirectory()) {
      const found = fs.readdirSync(abs).filter(f => f.endsWith('.fitspec.json')).sort();
      if (!found.length) throw new UsageError(`the folder ${arg} holds no *.fitspec.json file — give spec files or a folder that has some`);
      out.push(...found.map(f => path.join(arg, f)));
      continue;
    }
    if (!stat && /[*?]/.test(path.basename(arg)) && !/[*?]/.test(path.dirname(arg))) {
      const dir = path.dirname(arg);
      let entries: string[] = [];
      try { entries = fs.readdirSync(path.resolve(cwd, dir)); } catch { entries = []; }
      const re = patternRegex(path.basename(arg));
      const found = entries.filter(f => re.test(f)).sort();
      if (!found.length) throw new UsageError(`no file matches ${arg} — check the folder and the pattern`);
      out.push(...found.map(f => (dir === '.' ? f : path.join(dir, f))));
      continue;
    }
    out.push(arg); // a missing file is reported by the run, with the spec's name
  }
  return out;
}

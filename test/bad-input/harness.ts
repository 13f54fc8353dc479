// Table-driven bad-input corpus: each case's files go into a fresh temporary workspace, the REAL CLI
// (bin/curvewright.js, built by `node esbuild.js`) runs there, and the harness asserts the exit code, the place named,
// the fix suggested, no stack trace or internal error, no file written or changed, and nothing secret echoed.
import { strict as assert } from 'assert';
import { spawnSync } from 'child_process';
import { createHash } from 'crypto';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';

export interface BadInputCase {
  /** short unique name */
  name: string;
  /** class of bad input (for the README figures) */
  cls: string;
  /** files of the workspace, relative path → content */
  files: Record<string, string | Buffer>;
  /** CLI arguments (default: check h.fitspec.json) */
  args?: string[];
  /** expected exit code (default 2) */
  exit?: number;
  /** the place the output must name: JSON path, line:column or CSV line */
  place: RegExp;
  /** the fix the output must suggest */
  fix: RegExp;
  /** text that must not appear in the output (e.g. a credential in a file) */
  secret?: string;
}

const REPO = path.resolve(__dirname, '..', '..');
export const CLI = path.join(REPO, 'bin', 'curvewright.js');

/** sha256 of every file under dir, by relative path */
export function snapshot(dir: string): Record<string, string> {
  const out: Record<string, string> = {};
  const walk = (d: string) => {
    for (const e of fs.readdirSync(d, { withFileTypes: true })) {
      const f = path.join(d, e.name);
      if (e.isDirectory()) walk(f);
      else out[path.relative(dir, f)] = createHash('sha256').update(fs.readFileSync(f)).digest('hex');
    }
  };
  walk(dir);
  return out;
}

/** Runs one case in a fresh workspace and asserts everything the case promises. Returns the combined output. */
export function runCase(c: BadInputCase): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-bad-'));
  try {
    for (const [rel, text] of Object.entries(c.files)) {
      fs.mkdirSync(path.dirname(path.join(dir, rel)), { recursive: true });
      fs.writeFileSync(path.join(dir, rel), text);
    }
    const before = snapshot(dir);
    const r = spawnSync(process.execPath, [CLI, ...(c.args ?? ['check', 'h.fitspec.json'])], { cwd: dir, encoding: 'utf8', timeout: 60000 });
    const out = `${r.stdout ?? ''}${r.stderr ?? ''}`;
    const show = `\n--- output of ${c.name} ---\n${out}`;
    assert.strictEqual(r.status, c.exit ?? 2, `exit code${show}`);
    assert.match(out, c.place, `place named${show}`);
    assert.match(out, c.fix, `fix suggested${show}`);
    assert.doesNotMatch(out, /^\s{4}at |internal error|Maximum call stack/m, `no stack trace${show}`);
    assert.doesNotMatch(out, /\u001b|[\u202a-\u202e\u2066-\u2069]/, `no raw control characters${show}`);
    if (c.secret) assert.ok(!out.includes(c.secret), `secret echoed${show}`);
    assert.deepStrictEqual(snapshot(dir), before, `no file written or changed${show}`);
    return out;
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

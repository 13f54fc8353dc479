// Bad input of the workspace-boundary class, run through the real CLI (bin/curvewright.js → dist/cli.js, built with
// `node esbuild.js`): each case writes a spec and files into a fresh temporary workspace (with a sibling "outside"
// folder holding a secret), runs one command, and asserts the exit code, the place named, the fix suggested, no stack
// trace, nothing from outside echoed, and — from snapshots of both trees before and after — no file written or
// changed anywhere but where the case allows. A small local harness (the shared bad-input harness was not on main).
import * as assert from 'assert';
import { spawnSync } from 'child_process';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';

const repo = path.resolve(__dirname, '..', '..');
const cli = path.join(repo, 'bin', 'curvewright.js');
const SECRET = 'TOPSECRET-line-of-a-credentials-file';
const CSV = 'hours,od\n0,0.1\n1,0.21\n2,0.39\n3,0.62\n4,0.79\n5,1.02\n';

interface Case {
  name: string;
  /** files of the workspace (relative path → text); "spec" is the spec's text, written as s.fitspec.json */
  spec?: unknown;
  files?: Record<string, string>;
  /** prepare links and other special entries (ws = workspace, outside = sibling folder) */
  setup?: (ws: string, outside: string) => void;
  args: string[];
  code: number;
  /** words the message must contain: the place and the fix */
  says: (string | RegExp)[];
  /** workspace paths allowed to be created or changed by the run */
  mayWrite?: string[];
}

function spec(extra: Record<string, unknown>, data: Record<string, unknown> = {}): Record<string, unknown> {
  return { data: { file: 'd.csv', x: 'hours', y: 'od', ...data }, models: [{ name: 'line', builtin: 'linear' }], ...extra };
}

function snapshot(dir: string): Map<string, string> {
  const out = new Map<string, string>();
  const walk = (d: string) => {
    for (const e of fs.readdirSync(d, { withFileTypes: true })) {
      const p = path.join(d, e.name);
      const rel = path.relative(dir, p);
      if (e.isSymbolicLink()) out.set(rel, 'link:' + fs.readlinkSync(p));
      else if (e.isDirectory()) { out.set(rel, 'dir'); walk(p); }
      else out.set(rel, fs.readFileSync(p, 'latin1') + ':' + (fs.statSync(p).mode & 0o777));
    }
  };
  walk(dir);
  return out;
}

function changed(a: Map<string, string>, b: Map<string, string>): string[] {
  const keys = new Set([...a.keys(), ...b.keys()]);
  return [...keys].filter(k => a.get(k) !== b.get(k)).sort();
}

const CASES: Case[] = [
  // ---- inputs outside the boundary
  { name: 'data.file climbing out with ../', spec: spec({}, { file: '../outside/secret.csv' }), args: ['fit'], code: 2, says: ['"data.file"', 'outside the workspace', '--trust-paths'] },
  { name: 'data.file as an absolute path outside', spec: spec({}, { file: '<OUT>/secret.csv' }), args: ['fit'], code: 2, says: ['"data.file"', 'outside the workspace'] },
  { name: 'data.file a symlink to a file outside', spec: spec({}, { file: 'link.csv' }), setup: (ws, out) => fs.symlinkSync(path.join(out, 'secret.csv'), path.join(ws, 'link.csv')), args: ['fit'], code: 2, says: ['"data.file"', 'after following links'] },
  { name: 'data.file under a symlinked folder that leaves the workspace', spec: spec({}, { file: 'sub/secret.csv' }), setup: (ws, out) => fs.symlinkSync(out, path.join(ws, 'sub')), args: ['fit'], code: 2, says: ['"data.file"', 'outside the workspace'] },
  { name: 'data.file outside under check', spec: spec({}, { file: '../outside/secret.csv' }), args: ['check'], code: 2, says: ['data.file', 'outside the workspace'] },
  { name: 'data.file outside under report', spec: spec({}, { file: '../outside/secret.csv' }), args: ['report', '-o', 'r.html'], code: 2, says: ['data.file', 'outside the workspace'], mayWrite: ['r.html'] },
  { name: 'data.file outside of a narrower --root', spec: spec({}, { file: 'd.csv' }), files: { 'inner/.keep': '' }, args: ['fit', '--root', 'inner'], code: 2, says: ['"data.file"', 'outside the workspace'] },
  // ---- outputs
  { name: 'output climbing out of the workspace', spec: spec({ output: '../outside/r.json' }), args: ['fit'], code: 2, says: ['output', 'outside the workspace'] },
  { name: 'output absolute outside', spec: spec({ output: '<OUT>/r.json' }), args: ['fit'], code: 2, says: ['output', 'outside the workspace'] },
  { name: 'output through a symlinked folder outside', spec: spec({ output: 'res/r.json' }), setup: (ws, out) => fs.symlinkSync(out, path.join(ws, 'res')), args: ['fit'], code: 2, says: ['"output"', 'outputs must stay inside the workspace'] },
  { name: 'output inside .git', spec: spec({ output: '.git/hooks/r.json' }), files: { '.git/HEAD': 'ref: x\n' }, args: ['fit'], code: 2, says: ['"output"', 'hidden folder .git/', 'visible folder'] },
  { name: 'output inside another dot-folder', spec: spec({ output: '.vscode/r.json' }), args: ['fit'], code: 2, says: ['hidden folder .vscode/'] },
  { name: 'output not .json (a shell script)', spec: spec({ output: 'run.sh' }), files: { 'run.sh': 'echo hi\n' }, args: ['fit'], code: 2, says: ['"output"', 'not a .json file', 'results go to a .json file'] },
  { name: 'output .JSON in upper case onto an existing non-results file', spec: spec({ output: 'package.JSON' }), files: { 'package.JSON': '{"name":"x"}' }, args: ['fit'], code: 2, says: ['exists and is not a Curvewright results file', 'choose another output path'] },
  { name: 'output onto an existing non-results JSON', spec: spec({ output: 'config.json' }), files: { 'config.json': '{"a":1}\n' }, args: ['fit'], code: 2, says: ['config.json exists and is not a Curvewright results file'] },
  { name: 'output onto the data file of another spec in the run', spec: spec({ output: 'other.json' }), files: { 'other.json': '[1,2]', 'o.fitspec.json': JSON.stringify({ data: { file: 'other.json', x: 'hours', y: 'od' }, models: [{ name: 'l', builtin: 'linear' }] }) }, args: ['fit', 's.fitspec.json', 'o.fitspec.json'], code: 2, says: ['"output" other.json', 'left untouched'] },
  { name: 'output onto a spec file name', spec: spec({ output: 'x.fitspec.json' }), args: ['fit'], code: 2, says: ['output', 'spec'] },
  { name: 'output is a folder', spec: spec({ output: 'results.json' }), files: { 'results.json/.keep': '' }, args: ['fit'], code: 2, says: ['results.json is a folder', 'name a file inside it'] },
  { name: 'output under a regular file', spec: spec({ output: 'notes.txt/r.json' }), files: { 'notes.txt': 'mine\n' }, args: ['fit'], code: 2, says: ['lies under notes.txt, which is a file, not a folder'] },
  { name: 'two specs naming the same output', spec: spec({ output: 'r.json' }), files: { 't.fitspec.json': JSON.stringify(spec({ output: 'r.json' })) }, args: ['fit', 's.fitspec.json', 't.fitspec.json'], code: 2, says: ['already the output of another spec in this run', 'its own output file'], mayWrite: ['r.json'] },
  { name: 'output outside even with --trust-paths stays out of dot-folders', spec: spec({ output: '.git/r.json' }), args: ['fit', '--trust-paths'], code: 2, says: ['hidden folder .git/'] },
  // ---- concurrent writers of one results file (an O_EXCL lock file beside it)
  { name: 'results file locked by a live writer', spec: spec({ output: 'r.json' }), setup: ws => fs.writeFileSync(path.join(ws, '.r.json.curvewright-lock'), `${process.pid}\n`), args: ['fit'], code: 2, says: ['another Curvewright process', `pid ${process.pid}`, 'run again when it has finished'] },
  { name: 'stale lock of a writer that no longer runs is cleaned', spec: spec({ output: 'r.json' }), setup: ws => fs.writeFileSync(path.join(ws, '.r.json.curvewright-lock'), '999999999\n'), args: ['fit'], code: 0, says: ['line'], mayWrite: ['r.json', '.r.json.curvewright-lock'] },
  { name: 'report -o locked by a live writer', spec: spec({}), setup: ws => fs.writeFileSync(path.join(ws, '.r.html.curvewright-lock'), `${process.pid}\n`), args: ['report', '-o', 'r.html'], code: 2, says: ['cannot write the report r.html', 'another Curvewright process', 'run again when it has finished'] },
  // ---- report -o
  { name: 'report -o onto the data file', spec: spec({}), args: ['report', '-o', 'd.csv'], code: 2, says: ['"-o"', 'not a .html file'] },
  { name: 'report -o onto a spec', spec: spec({}), args: ['report', 's.fitspec.json', '-o', 's.fitspec.json'], code: 2, says: ['"-o"', 'not a .html file'] },
  { name: 'report -o onto an existing HTML page not ours', spec: spec({}), files: { 'index.html': '<html>mine</html>' }, args: ['report', '-o', 'index.html'], code: 2, says: ['index.html exists and is not a Curvewright report'] },
  { name: 'report -o outside the workspace', spec: spec({}), args: ['report', '-o', '../outside/r.html'], code: 2, says: ['"-o"', 'outputs must stay inside the workspace'] },
  { name: 'report -o into .git', spec: spec({}), args: ['report', '-o', '.git/r.html'], code: 2, says: ['hidden folder .git/'] },
  { name: 'report -o at a folder', spec: spec({}), files: { 'out.html/.keep': '' }, args: ['report', '-o', 'out.html'], code: 2, says: ['out.html is a folder'] },
  // ---- the flags themselves
  { name: '--root that does not exist', spec: spec({}), args: ['fit', '--root', 'nope'], code: 2, says: ['--root nope is not an existing folder'] },
  { name: '--root given a file', spec: spec({}), args: ['fit', '--root', 'd.csv'], code: 2, says: ['is not an existing folder'] },
];

describe('bad input: workspace boundary (real CLI)', function () {
  this.timeout(120000);
  before(function () {
    if (!fs.existsSync(path.join(repo, 'dist', 'cli.js'))) throw new Error('dist/cli.js is missing — run `node esbuild.js` first');
  });

  it(`has at least 25 cases (${CASES.length})`, () => assert.ok(CASES.length >= 25));

  for (const c of CASES) {
    it(c.name, () => {
      const base = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-boundary-'));
      const ws = path.join(base, 'ws');
      const outside = path.join(base, 'outside');
      try {
        fs.mkdirSync(ws);
        fs.mkdirSync(outside);
        fs.writeFileSync(path.join(outside, 'secret.csv'), `hours,od\n${SECRET},1\n`);
        fs.writeFileSync(path.join(ws, 'd.csv'), CSV);
        for (const [rel, text] of Object.entries(c.files ?? {})) {
          fs.mkdirSync(path.dirname(path.join(ws, rel)), { recursive: true });
          fs.writeFileSync(path.join(ws, rel), text);
        }
        if (c.spec !== undefined) fs.writeFileSync(path.join(ws, 's.fitspec.json'), JSON.stringify(c.spec, null, 2).split('<OUT>').join(outside.split(path.sep).join('/')));
        c.setup?.(ws, outside);
        const beforeWs = snapshot(ws);
        const beforeOut = snapshot(outside);
        const args = c.args.some(a => a.endsWith('.fitspec.json')) ? c.args : [...c.args.slice(0, 1), 's.fitspec.json', ...c.args.slice(1)];
        const r = spawnSync(process.execPath, [cli, ...args], { cwd: ws, encoding: 'utf8', env: { ...process.env, CURVEWRIGHT_DEBUG: '' } });
        const text = r.stdout + r.stderr;
        assert.strictEqual(r.status, c.code, `exit code\n${text}`);
        for (const s of c.says) assert.ok(typeof s === 'string' ? text.includes(s) : s.test(text), `says ${String(s)}\n${text}`);
        assert.ok(!/\n\s+at .+:\d+:\d+\)?/.test(text), `no stack trace\n${text}`);
        assert.ok(!text.includes('internal error'), `not an internal error\n${text}`);
        assert.ok(!text.includes(SECRET), 'nothing from outside the workspace echoed');
        assert.deepStrictEqual(changed(beforeOut, snapshot(outside)), [], 'nothing written outside');
        assert.deepStrictEqual(changed(beforeWs, snapshot(ws)).filter(f => !(c.mayWrite ?? []).includes(f)), [], 'nothing else written in the workspace');
      } finally {
        fs.rmSync(base, { recursive: true, force: true });
      }
    });
  }
});

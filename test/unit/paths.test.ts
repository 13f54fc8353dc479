// The workspace boundary's pure path logic (src/engine/paths.ts): symlink escapes, "..", absolute paths, case,
// dot-folders, output kinds, inputs of the run, outputs claimed twice, stale temporaries.
import * as assert from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { boundaryHint, decideOutside, mayWriteResults, outsideFiles } from '../../src/host/trust';
import { escapeMarkdown } from '../../src/host/markdownText';
import { cleanStaleTemps, inputRefusal, isInside, LockBusyError, lockName, LOCK_STALE_MS, outputRefusal, REPORT_MARKER, tmpName, withFileLock } from '../../src/engine/paths';

describe('workspace boundary (engine paths)', () => {
  let base: string, ws: string, out: string;
  beforeEach(() => {
    base = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'cw-paths-')));
    ws = path.join(base, 'ws');
    out = path.join(base, 'outside');
    fs.mkdirSync(ws);
    fs.mkdirSync(out);
    fs.writeFileSync(path.join(out, 's.csv'), 'a,b\n');
    fs.writeFileSync(path.join(ws, 'd.csv'), 'a,b\n');
  });
  afterEach(() => fs.rmSync(base, { recursive: true, force: true }));
  const root = () => ({ root: ws });

  it('isInside: the root itself and below are inside; "..", siblings with a common prefix and other roots are not', () => {
    assert.ok(isInside('/a/b', '/a/b'));
    assert.ok(isInside('/a/b', '/a/b/c/d.json'));
    assert.ok(isInside('/a/b', '/a/b/..c.json'), 'a name starting with two dots is not a climb');
    assert.ok(!isInside('/a/b', '/a/bc/d.json'));
    assert.ok(!isInside('/a/b', '/a/d.json'));
    assert.ok(!isInside('/a/b', '/etc/passwd'));
  });

  it('inputs: inside passes; "..", absolute and symlinked escapes are refused with the key named; --trust-paths allows', async () => {
    assert.strictEqual(await inputRefusal('data.file', path.join(ws, 'd.csv'), root()), null);
    assert.match((await inputRefusal('data.file', path.join(ws, '..', 'outside', 's.csv'), root()))!, /"data.file" names a file outside/);
    assert.match((await inputRefusal('data.file', path.join(out, 's.csv'), root()))!, /outside the workspace/);
    fs.symlinkSync(path.join(out, 's.csv'), path.join(ws, 'l.csv'));
    assert.match((await inputRefusal('data.file', path.join(ws, 'l.csv'), root()))!, /after following links/);
    assert.strictEqual(await inputRefusal('data.file', path.join(ws, 'l.csv'), { root: ws, trustOutside: true }), null);
    // a link that stays inside is fine
    fs.symlinkSync(path.join(ws, 'd.csv'), path.join(ws, 'in.csv'));
    assert.strictEqual(await inputRefusal('data.file', path.join(ws, 'in.csv'), root()), null);
  });

  it('outputs: extension by kind, dot-folders at any depth, a spec file name', async () => {
    assert.strictEqual(await outputRefusal('output', path.join(ws, 'results', 'r.json'), 'results', root()), null);
    assert.match((await outputRefusal('output', path.join(ws, 'r.sh'), 'results', root()))!, /not a \.json file/);
    assert.match((await outputRefusal('-o', path.join(ws, 'r.json'), 'report', root()))!, /not a \.html file/);
    assert.match((await outputRefusal('output', path.join(ws, 'a', '.git', 'r.json'), 'results', root()))!, /hidden folder \.git\//);
    assert.match((await outputRefusal('output', path.join(ws, 'x.fitspec.json'), 'results', root()))!, /spec file name/);
    assert.match((await outputRefusal('output', path.join(out, 'r.json'), 'results', root()))!, /outputs must stay inside the workspace/);
    assert.strictEqual(await outputRefusal('output', path.join(out, 'r.json'), 'results', { root: ws, trustOutside: true }), null);
  });

  it('outputs: an input of the run, a second claim, a folder, under a file, someone else\'s file; our own files may be replaced', async () => {
    const r = path.join(ws, 'r.json');
    assert.match((await outputRefusal('output', r, 'results', { root: ws, inputs: [r] }))!, /is an input of this run/);
    const claimed = new Set<string>();
    assert.strictEqual(await outputRefusal('output', r, 'results', { root: ws, claimed }), null);
    assert.match((await outputRefusal('output', r, 'results', { root: ws, claimed }))!, /already the output of another spec/);
    fs.mkdirSync(path.join(ws, 'dir.json'));
    assert.match((await outputRefusal('output', path.join(ws, 'dir.json'), 'results', root()))!, /is a folder/);
    fs.writeFileSync(path.join(ws, 'f'), 'x');
    assert.match((await outputRefusal('output', path.join(ws, 'f', 'r.json'), 'results', root()))!, /lies under f, which is a file/);
    fs.writeFileSync(path.join(ws, 'pkg.json'), '{"name":"x"}');
    assert.match((await outputRefusal('output', path.join(ws, 'pkg.json'), 'results', root()))!, /not a Curvewright results file/);
    fs.writeFileSync(path.join(ws, 'ours.json'), JSON.stringify({ version: 1, spec: 's', meta: {} }));
    assert.strictEqual(await outputRefusal('output', path.join(ws, 'ours.json'), 'results', root()), null);
    fs.writeFileSync(path.join(ws, 'page.html'), '<html><head></head></html>');
    assert.match((await outputRefusal('-o', path.join(ws, 'page.html'), 'report', root()))!, /not a Curvewright report/);
    fs.writeFileSync(path.join(ws, 'rep.html'), `<html><head>\n${REPORT_MARKER}</head></html>`);
    assert.strictEqual(await outputRefusal('-o', path.join(ws, 'rep.html'), 'report', root()), null);
  });

  it('case: on a case-insensitive platform a differently cased input is the same file', async function () {
    if (process.platform !== 'win32' && process.platform !== 'darwin') this.skip();
    const r = path.join(ws, 'R.json');
    assert.match((await outputRefusal('output', path.join(ws, 'r.json'), 'results', { root: ws, inputs: [r] }))!, /input/);
  });

  it('stale temporaries of dead processes are removed; those of live ones are kept', async () => {
    const file = path.join(ws, 'r.json');
    const live = tmpName(file, 'aaaa');
    const dead = path.join(ws, `.r.json.curvewright-tmp-999999999-bbbb`);
    fs.writeFileSync(live, 'x');
    fs.writeFileSync(dead, 'x');
    fs.writeFileSync(path.join(ws, '.other.curvewright-tmp-999999999-c'), 'x');
    assert.strictEqual(await cleanStaleTemps(file), 1);
    assert.ok(fs.existsSync(live));
    assert.ok(!fs.existsSync(dead));
    assert.ok(fs.existsSync(path.join(ws, '.other.curvewright-tmp-999999999-c')), 'other files\' temporaries are not touched');
  });
});

describe('results-file lock (withFileLock)', () => {
  let base: string;
  before(() => { base = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-lock-')); });
  after(() => fs.rmSync(base, { recursive: true, force: true }));

  it('serialises writers of one file: the second starts only after the first has finished', async () => {
    const f = path.join(base, 'r.fitresult.json');
    const log: string[] = [];
    const job = (name: string, ms: number) => withFileLock(f, async () => {
      log.push(`${name} start`);
      assert.ok(fs.existsSync(lockName(f)), 'the lock file exists while a writer holds it');
      await new Promise(r => setTimeout(r, ms));
      log.push(`${name} end`);
    });
    await Promise.all([job('a', 60), job('b', 0)]);
    assert.deepStrictEqual(log, ['a start', 'a end', 'b start', 'b end']);
    assert.ok(!fs.existsSync(lockName(f)), 'the lock is removed afterwards');
  });

  it('a lock of a live process is waited for, then refused with the pid and the fix', async () => {
    const f = path.join(base, 'busy.fitresult.json');
    fs.writeFileSync(lockName(f), `${process.ppid}\n`); // the parent process: alive
    await assert.rejects(withFileLock(f, async () => assert.fail('must not run'), { waitMs: 100 }), (e: unknown) => {
      assert.ok(e instanceof LockBusyError);
      assert.match(e.message, new RegExp(`pid ${process.ppid}`));
      assert.match(e.message, /run again when it has finished/);
      return true;
    });
    assert.ok(fs.existsSync(lockName(f)), 'a live lock is left alone');
    fs.unlinkSync(lockName(f));
  });

  it('a stale lock (its process gone, or older than LOCK_STALE_MS) is removed and taken', async () => {
    const f = path.join(base, 'stale.fitresult.json');
    fs.writeFileSync(lockName(f), '999999999\n');
    assert.strictEqual(await withFileLock(f, async () => 'ran', { waitMs: 0 }), 'ran');
    fs.writeFileSync(lockName(f), `${process.ppid}\n`);
    const old = new Date(Date.now() - LOCK_STALE_MS - 1000);
    fs.utimesSync(lockName(f), old, old);
    assert.strictEqual(await withFileLock(f, async () => 'ran', { waitMs: 0 }), 'ran');
    assert.ok(!fs.existsSync(lockName(f)));
  });

  it('the lock is released when the writer fails', async () => {
    const f = path.join(base, 'fails.fitresult.json');
    await assert.rejects(withFileLock(f, async () => { throw new Error('boom'); }), /boom/);
    assert.ok(!fs.existsSync(lockName(f)));
  });
});

describe('Workspace Trust decision (src/host/trust.ts)', () => {
  it('writes results only in a trusted workspace, with the setting on and the spec saved', () => {
    assert.strictEqual(mayWriteResults({ trusted: true, setting: true, dirty: false }), true);
    assert.strictEqual(mayWriteResults({ trusted: false, setting: true, dirty: false }), false);
    assert.strictEqual(mayWriteResults({ trusted: true, setting: false, dirty: false }), false);
    assert.strictEqual(mayWriteResults({ trusted: true, setting: true, dirty: true }), false);
  });

  it('files outside the workspace: asked once in a trusted workspace, never lifted in an untrusted one', () => {
    const out = ['output'];
    assert.strictEqual(decideOutside({ outside: [], trusted: true }), 'inside');
    assert.strictEqual(decideOutside({ outside: [], trusted: false }), 'inside');
    assert.strictEqual(decideOutside({ outside: out, trusted: true }), 'ask');
    assert.strictEqual(decideOutside({ outside: out, trusted: true, permission: 'allowed' }), 'trusted');
    assert.strictEqual(decideOutside({ outside: out, trusted: true, permission: 'declined' }), 'confined');
    for (const permission of ['allowed', 'declined', undefined, 'junk'])
      assert.strictEqual(decideOutside({ outside: out, trusted: false, permission }), 'confined', `untrusted, ${permission}`);
    assert.strictEqual(decideOutside({ outside: out, trusted: true, permission: 'junk' }), 'ask', 'an unknown stored value asks again');
    assert.doesNotMatch(boundaryHint(true) + boundaryHint(false), /--trust-paths/);
  });

  it('outsideFiles follows symlinks: a link inside the workspace to a file outside counts as outside', async () => {
    const base = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-outside-'));
    const ws = path.join(base, 'ws');
    fs.mkdirSync(path.join(ws, 'results'), { recursive: true });
    fs.writeFileSync(path.join(base, 'secret.csv'), 'a,b\n1,2\n');
    fs.writeFileSync(path.join(ws, 'in.csv'), 'a,b\n1,2\n');
    fs.symlinkSync(path.join(base, 'secret.csv'), path.join(ws, 'link.csv'));
    const keys = async (f: { dataFile?: string; output?: string }) => (await outsideFiles(ws, f)).map(o => o.key);
    assert.deepStrictEqual(await keys({ dataFile: path.join(ws, 'in.csv'), output: path.join(ws, 'results', 'r.json') }), []);
    assert.deepStrictEqual(await keys({ dataFile: path.join(ws, 'link.csv') }), ['data.file']);
    assert.deepStrictEqual(await keys({ dataFile: path.join(ws, '..', 'secret.csv'), output: path.join(base, 'r.json') }), ['data.file', 'output']);
    const [o] = await outsideFiles(ws, { dataFile: path.join(ws, 'link.csv') });
    assert.strictEqual(o.resolved, fs.realpathSync(path.join(base, 'secret.csv')));
    fs.rmSync(base, { recursive: true, force: true });
  });
});

describe('hover Markdown escaping (src/host/markdownText.ts)', () => {
  it('a name cannot add links, images, HTML, icons or new lines', () => {
    const e = escapeMarkdown('[x](command:evil) ![i](http://h/p.png) <b>$(gear)\n# H `c`');
    assert.ok(!/(^|[^\\])[[\]()<>`$#]/.test(e), e);
    assert.ok(!e.includes('\n'));
    assert.strictEqual(escapeMarkdown('K'), 'K');
    assert.strictEqual(escapeMarkdown('a'.repeat(300)).length, 201);
  });
});

// What the host posts to the panel carries no absolute path of this machine: paths under the workspace become
// relative, others are cut to their file name; typed arrays and unchanged parts are passed through as they are.
import * as assert from 'assert';
import * as os from 'os';
import * as path from 'path';
import { relativePaths, relativeText } from '../../src/host/panelPaths';

const root = path.join(os.tmpdir(), 'cw-ws');

describe('panel paths: relative to the workspace', () => {
  it('rewrites paths under the workspace, file URIs and the root itself', () => {
    assert.strictEqual(relativeText(`cannot read ${root}/examples/data/fade.csv: no such file`, [root]), 'cannot read examples/data/fade.csv: no such file');
    assert.strictEqual(relativeText(`file://${root}/a%20b/x.fitspec.json`, [root]), 'a b/x.fitspec.json');
    assert.strictEqual(relativeText(`the workspace ${root}`, [root]), 'the workspace .');
  });

  it('cuts other absolute paths to their name and leaves units, ratios and formulas alone', () => {
    assert.strictEqual(relativeText('outside: /home/someone/lab/raw.csv is not in the workspace', [root]), 'outside: \u2026/raw.csv is not in the workspace');
    assert.strictEqual(relativeText('C:\\Users\\lab\\raw.csv', [root]), '\u2026/raw.csv');
    for (const s of ['ng/mL', 'K/(1 + exp(-r*(x - x0)))', 'a ratio 1/x', 'and/or', 'models[0].params.K', 'https is not a path']) assert.strictEqual(relativeText(s, [root]), s);
  });

  it('walks a message: strings anywhere, keys kept, typed arrays and path-free parts shared', () => {
    const y = Float64Array.from([1, 2, 3]);
    const points = { y, row: [1, 2, 3] };
    const msg = { type: 'report', specUri: `file://${root}/g.fitspec.json`, report: { spec: 'g.fitspec.json', error: { message: `bad ${root}/d.csv`, location: { file: `${root}/d.csv`, line: 2 } }, points } };
    const out = relativePaths(msg, [root]);
    assert.strictEqual(out.specUri, 'g.fitspec.json');
    assert.deepStrictEqual(out.report.error, { message: 'bad d.csv', location: { file: 'd.csv', line: 2 } });
    assert.strictEqual(out.report.points, points, 'unchanged part shared');
    assert.strictEqual(out.report.points.y, y, 'typed array kept');
    assert.strictEqual(msg.report.error.message, `bad ${root}/d.csv`, 'the input is not modified');
    const clean = { a: 1, b: ['x', { c: 'y' }] };
    assert.strictEqual(relativePaths(clean, [root]), clean);
    assert.ok(!JSON.stringify(out).includes(root));
  });
});

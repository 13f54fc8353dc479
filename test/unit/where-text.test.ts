// Text in data.where: text columns compared with quoted strings (== and !=), and the errors when text meets a numeric
// operator. Behaviour tests on small hand-written tables (the kept rows are counted by hand).
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { parseFormula, formatFormula, compileFormula } from '../../src/engine/formula';
import { runSpecFile } from '../../src/engine/run';
import { asReport, asError } from './reports';

function workspace(files: Record<string, string>): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-where-'));
  for (const [rel, text] of Object.entries(files)) fs.writeFileSync(path.join(dir, rel), text);
  return dir;
}

// 12 rows: treated rows follow y = 2x + 1 exactly, control rows y = -x + 10, blanks y = 0
const CSV = [
  'x,y,state,sample',
  ...[1, 2, 3, 4, 5].map((x) => `${x},${2 * x + 1},treated,s${x}`),
  ...[1, 2, 3, 4, 5].map((x) => `${x},${10 - x},control,s${x}`),
  '1,0,"treated",blank',
  '2,0, treated ,blank',
].join('\n');

function run(where: string, extra = '') {
  const dir = workspace({
    'd.csv': CSV,
    's.fitspec.json': JSON.stringify({ data: { file: 'd.csv', x: 'x', y: 'y', where }, models: [{ name: 'line', builtin: 'linear' }], ...(extra ? JSON.parse(extra) : {}) }),
  });
  return runSpecFile(path.join(dir, 's.fitspec.json'), { workspaceRoot: dir });
}

describe('where: text comparisons', function () {
  this.timeout(60000);

  it('parses "text" only in logic mode, and formats it back', () => {
    const ast = parseFormula('state == "a ""b"""', { logic: true });
    assert.equal(formatFormula(ast), 'state == "a ""b"""');
    assert.throws(() => parseFormula('"treated"*2'), /backticks/);
    assert.throws(() => parseFormula('state == "x', { logic: true }), /unterminated text/);
    assert.throws(() => parseFormula('state < "x"', { logic: true }), /text "x" at column 9 is used with '<'.*== or !=/);
    assert.throws(() => parseFormula('"a" == "b"', { logic: true }), /two texts compared/);
    assert.throws(() => parseFormula('state + 1 == "b"', { logic: true }), /compared with an expression/);
    assert.throws(() => compileFormula('x == "a"', { variables: ['x'], params: [], logic: true }), /can only be compared with a text column/);
  });

  it('keeps the rows whose text matches (==), trimmed as written', async () => {
    const r = asReport(await run('state == "treated" and sample != "blank"'));
    assert.equal(r.data.used, 5);
    assert.equal(r.data.filtered, 7);
    const p = r.models[0].params;
    assert.ok(Math.abs(p.slope.value - 2) < 1e-12 && Math.abs(p.intercept.value - 1) < 1e-12, JSON.stringify(p));
  });

  it('!= keeps the others; a text no row has matches nothing', async () => {
    const r = asReport(await run('state != "treated"'));
    assert.equal(r.data.used, 5);
    assert.ok(Math.abs(r.models[0].params.slope.value + 1) < 1e-12);
    const none = asError(await run('state == "Treated"'));
    assert.match(none.error.message, /no data rows are left/);
  });

  it('mixes text and numeric conditions', async () => {
    const r = asReport(await run('state == "control" and x >= 2'));
    assert.equal(r.data.used, 4);
  });

  it('a text column with a numeric operator is an error naming the column and the operator, with the fix', async () => {
    const e = asError(await run('state > 2'));
    const all = [e.error.message, ...(e.error.problems ?? []).map((p) => p.message)].join('\n');
    assert.match(all, /column 'state' with '>', but the column holds text \(e\.g\. 'treated'\).*state == "treated"/);
    const both = asError(await run('state == "treated" or state < 3'));
    assert.match(both.error.message, /column 'state' holds text .* used with '<' at column 23 .* == or != and a quoted string/);
  });
});

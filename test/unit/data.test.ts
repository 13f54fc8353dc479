// prepareData and columnsNeeded: expressions for x, y, sigma and weight, the where filter, exclusions, and rows
// dropped for values that are not finite — each reported with its data rows.
import * as assert from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { columnPaths, columnsNeeded, prepareData, readHeader, readTable } from '../../src/engine/data';
import type { Table } from '../../src/engine/data';
import { parseSpecText, validateSpec, type NormalizedSpec } from '../../src/engine/spec';

let dir: string;
before(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-data-'));
});
after(() => {
  fs.rmSync(dir, { recursive: true, force: true });
});

/** writes the CSV and the spec, validates against the header, reads the needed columns */
async function setup(csv: string, data: Record<string, unknown>, models: unknown[] = [{ name: 'line', polynomial: 1 }]): Promise<{ spec: NormalizedSpec; table: Table }> {
  const csvFile = path.join(dir, 'd.csv');
  fs.writeFileSync(csvFile, csv);
  const text = JSON.stringify({ data: { file: 'd.csv', ...data }, models }, null, 2);
  const specFile = path.join(dir, 'd.fitspec.json');
  const parsed = parseSpecText(text, specFile);
  const header = await readHeader(csvFile);
  const v = validateSpec(parsed.raw, { file: specFile, text, columns: header, workspaceRoot: dir });
  assert.ok(v.spec, JSON.stringify(v.problems));
  const table = await readTable(v.spec.data.file, { columns: columnsNeeded(v.spec, header) });
  return { spec: v.spec, table };
}

const CSV = 'hours,od600,od_sd,reactor,temp_c\n0,0.05,0.01,1,30\n2,0.10,0.01,2,31\n4,0.20,0.02,1,30\n6,0.40,0.02,2,32\n8,0.80,0.04,1,30\n';

describe('data: columnsNeeded', () => {
  it('lists the columns of every data expression once, in first-use order', async () => {
    const { spec } = await setup(CSV, { x: { t: 'hours', T: 'temp_c + 273.15' }, y: 'log(od600)', sigma: 'od_sd/od600', where: 'reactor == 1 and t > 0' }, [{ name: 'm', formula: 'a*t + b*T' }]);
    assert.deepStrictEqual(columnsNeeded(spec), ['hours', 'temp_c', 'od600', 'od_sd', 'reactor']);
  });
  it('x variables and y in weight/where are not columns unless the header has them', async () => {
    const { spec } = await setup(CSV, { x: 'hours', y: 'od600', weight: '1/y^2', where: 'x < 6' });
    assert.deepStrictEqual(columnsNeeded(spec), ['hours', 'od600']);
    assert.deepStrictEqual(columnsNeeded(spec, ['hours', 'od600', 'x']), ['hours', 'od600', 'x'], 'a real column named x is read');
  });
});

describe('data: columnPaths', () => {
  it('maps each column to the first data key that reads it', async () => {
    const { spec } = await setup(CSV, { x: { t: 'hours', T: 'temp_c' }, y: 'od600 / od_sd', sigma: 'od_sd', where: 'reactor == 1' }, [{ name: 'm', formula: 'a*t + b*T' }]);
    assert.deepStrictEqual(columnPaths(spec), {
      hours: ['data', 'x', 't'],
      temp_c: ['data', 'x', 'T'],
      od600: ['data', 'y'],
      od_sd: ['data', 'y'],
      reactor: ['data', 'where'],
    });
  });
});

describe('data: prepareData', () => {
  it('a column x and y, unweighted: every row, with data rows and file lines', async () => {
    const { spec, table } = await setup(CSV, { x: 'hours', y: 'od600' });
    const d = prepareData(spec, table);
    assert.deepStrictEqual(d.variables, ['x']);
    assert.deepStrictEqual([...d.X[0]], [0, 2, 4, 6, 8]);
    assert.deepStrictEqual([...d.y], [0.05, 0.1, 0.2, 0.4, 0.8]);
    assert.strictEqual(d.w, null);
    assert.deepStrictEqual([...d.rows], [1, 2, 3, 4, 5]);
    assert.deepStrictEqual([...d.lines], [2, 3, 4, 5, 6]);
    assert.deepStrictEqual(d.problems, []);
    assert.strictEqual(d.filtered, 0);
  });

  it('expressions for x and y, several variables', async () => {
    const { spec, table } = await setup(CSV, { x: { t: 'hours / 24', T: 'temp_c + 273.15' }, y: 'log(od600)' }, [{ name: 'm', formula: 'a*t + b*T' }]);
    const d = prepareData(spec, table);
    assert.deepStrictEqual(d.variables, ['t', 'T']);
    assert.deepStrictEqual([...d.X[0]], [0, 2 / 24, 4 / 24, 6 / 24, 8 / 24]);
    assert.deepStrictEqual([...d.X[1]], [303.15, 304.15, 303.15, 305.15, 303.15]);
    assert.deepStrictEqual([...d.y], [0.05, 0.1, 0.2, 0.4, 0.8].map(Math.log));
  });

  it('sigma gives weights 1/σ²', async () => {
    const { spec, table } = await setup(CSV, { x: 'hours', y: 'od600', sigma: 'od_sd' });
    const d = prepareData(spec, table);
    assert.ok(d.w);
    assert.deepStrictEqual([...d.w], [0.01, 0.01, 0.02, 0.02, 0.04].map((s) => 1 / (s * s)));
  });

  it('weight is an expression over columns, x and y', async () => {
    const { spec, table } = await setup(CSV, { x: 'hours', y: 'od600', weight: '1/y^2 + 0*x' });
    const d = prepareData(spec, table);
    assert.ok(d.w);
    const want = [0.05, 0.1, 0.2, 0.4, 0.8].map((y) => 1 / y ** 2);
    d.w.forEach((w, i) => assert.ok(Math.abs(w - want[i]) <= 1e-12 * want[i], `${w} vs ${want[i]}`));
  });

  it('where filters rows (logic mode) and counts them', async () => {
    const { spec, table } = await setup(CSV, { x: 'hours', y: 'od600', where: 'reactor == 1 and not (hours > 6)' });
    const d = prepareData(spec, table);
    assert.deepStrictEqual([...d.rows], [1, 3]);
    assert.strictEqual(d.filtered, 3);
    const r2 = await setup(CSV, { x: 'hours', y: 'od600', where: 'y >= 0.2 or x == 0' });
    assert.deepStrictEqual([...prepareData(r2.spec, r2.table).rows], [1, 3, 4, 5]);
  });

  it('exclude leaves rows out by data row; a row not in the file is a warning', async () => {
    const { spec, table } = await setup(CSV, { x: 'hours', y: 'od600', exclude: [{ row: 2, reason: 'bubble in cuvette' }, { row: 9, reason: 'typo' }] });
    const d = prepareData(spec, table);
    assert.deepStrictEqual([...d.rows], [1, 3, 4, 5]);
    assert.deepStrictEqual(d.excluded, [{ row: 2, reason: 'bubble in cuvette' }]);
    const w = d.problems.find((p) => p.code === 'exclude-missing-row');
    assert.ok(w);
    assert.strictEqual(w.severity, 'warning');
    assert.deepStrictEqual(w.path, ['data', 'exclude', 1, 'row']);
    assert.match(w.message, /row 9, but d\.csv has only 5 data rows/);
  });

  it('non-finite results (log of a non-positive value) drop the rows and name them', async () => {
    const csv = 'x,y\n1,1\n2,0\n3,-1\n4,2\n';
    const { spec, table } = await setup(csv, { x: 'x', y: 'log(y)' });
    const d = prepareData(spec, table);
    assert.deepStrictEqual([...d.rows], [1, 4]);
    assert.deepStrictEqual(d.dropped.map((r) => [r.row, r.line]), [[2, 3], [3, 4]]);
    const p = d.problems.find((q) => q.code === 'non-finite-value');
    assert.ok(p);
    assert.deepStrictEqual(p.path, ['data', 'y']);
    assert.deepStrictEqual(p.rows, [2, 3]);
    assert.match(p.message, /data\.y = log\(y\) is not a finite number in 2 rows \(data rows 2, 3\)/);
  });

  it('σ ≤ 0 or non-finite drops the row with a bad-sigma problem; so does a non-positive weight', async () => {
    const csv = 'x,y,s\n1,1,0.1\n2,2,0\n3,3,-1\n4,4,0.2\n';
    const { spec, table } = await setup(csv, { x: 'x', y: 'y', sigma: 's' });
    const d = prepareData(spec, table);
    assert.deepStrictEqual([...d.rows], [1, 4]);
    const p = d.problems.find((q) => q.code === 'bad-sigma');
    assert.ok(p);
    assert.deepStrictEqual(p.rows, [2, 3]);
    assert.deepStrictEqual(p.path, ['data', 'sigma']);
    const r2 = await setup(csv, { x: 'x', y: 'y', weight: 's' });
    const d2 = prepareData(r2.spec, r2.table);
    assert.deepStrictEqual(d2.problems.find((q) => q.code === 'bad-weight')?.rows, [2, 3]);
  });

  it('many non-finite rows: counted in full, listed up to a limit', async () => {
    const lines = ['x,y'];
    for (let i = 1; i <= 3000; i++) lines.push(`${i},${i % 3 === 0 ? 1 : -1}`);
    const { spec, table } = await setup(lines.join('\n'), { x: 'x', y: 'log(y)' });
    const d = prepareData(spec, table);
    assert.strictEqual(d.y.length, 1000);
    const p = d.problems.find((q) => q.code === 'non-finite-value');
    assert.ok(p && p.rows);
    assert.strictEqual(p.rows.length, 1000);
    assert.match(p.message, /in 2000 rows \(data rows 1, 2, 4, 5, 7, 8, 10, 11, …\)/);
    assert.strictEqual(d.dropped.length, 2000);
  });

  it('rows dropped while reading are kept in dropped, merged in row order', async () => {
    const csv = 'x,y\n1,1\n2,n/a\n3,0\n4,2\n';
    const { spec, table } = await setup(csv, { x: 'x', y: 'log(y)' });
    const d = prepareData(spec, table);
    assert.deepStrictEqual(d.dropped.map((r) => r.row), [2, 3]);
    assert.ok(d.problems.some((p) => p.code === 'bad-cell'));
    assert.ok(d.problems.some((p) => p.code === 'non-finite-value'));
  });

  it('filtered or excluded rows are not reported as non-finite', async () => {
    const csv = 'x,y\n1,1\n2,0\n3,2\n';
    const { spec, table } = await setup(csv, { x: 'x', y: 'log(y)', where: 'y > 0' });
    const d = prepareData(spec, table);
    assert.deepStrictEqual([...d.rows], [1, 3]);
    assert.ok(!d.problems.some((p) => p.code === 'non-finite-value'));
  });

  it('nothing left to fit is an error problem (never a throw)', async () => {
    const { spec, table } = await setup(CSV, { x: 'hours', y: 'od600', where: 'hours > 100' });
    const d = prepareData(spec, table);
    assert.strictEqual(d.y.length, 0);
    const p = d.problems.find((q) => q.code === 'no-data');
    assert.ok(p);
    assert.strictEqual(p.severity, 'error');
    assert.deepStrictEqual(p.path, ['data', 'where']);
    assert.match(p.message, /no data rows are left to fit.*5 filtered out by data\.where/);
  });

  it('a column name with a space (backticked by the normaliser) and a plain column equal to the text', async () => {
    const csv = 'OD 600,t h\n0.1,1\n0.2,2\n';
    const { spec, table } = await setup(csv, { x: 't h', y: 'log(`OD 600`)' });
    const d = prepareData(spec, table);
    assert.deepStrictEqual([...d.X[0]], [1, 2]);
    assert.deepStrictEqual([...d.y], [Math.log(0.1), Math.log(0.2)]);
  });

  it('decimal-comma data end to end', async () => {
    const csvFile = path.join(dir, 'c.csv');
    fs.writeFileSync(csvFile, 'T;R\n25,0;10000\n30,5;8000,5\n');
    const text = JSON.stringify({ data: { file: 'c.csv', x: 'R', y: 'T + 273,15'.replace(',', '.'), decimal: ',' }, models: [{ name: 'sh', builtin: 'steinhart_hart' }] });
    const v = validateSpec(parseSpecText(text, 'c.fitspec.json').raw, { file: path.join(dir, 'c.fitspec.json'), text, columns: await readHeader(csvFile, { decimal: ',' }), workspaceRoot: dir });
    assert.ok(v.spec, JSON.stringify(v.problems));
    const t = await readTable(csvFile, { columns: columnsNeeded(v.spec), decimal: v.spec.data.decimal, delimiter: v.spec.data.delimiter });
    const d = prepareData(v.spec, t);
    assert.deepStrictEqual([...d.X[0]], [10000, 8000.5]);
    assert.deepStrictEqual([...d.y], [25 + 273.15, 30.5 + 273.15]);
  });
});

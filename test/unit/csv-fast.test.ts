// The CSV reader's numeric fast path (src/engine/data/csvFast.ts) must give the same tables as the general papaparse
// path. A file whose header is quoted goes through papaparse from its first line on, so the same rows under a quoted
// and an unquoted header compare the two paths.
import * as assert from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import fc from 'fast-check';
import { DataError, readTable } from '../../src/engine/data';
import type { Table } from '../../src/engine/data/types';

let dir: string;
before(() => (dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-csvfast-'))));
after(() => fs.rmSync(dir, { recursive: true, force: true }));

const cellArb = fc.oneof(
  fc.double({ noNaN: true, noDefaultInfinity: true }).map(String),
  fc.integer({ min: -1e6, max: 1e6 }).map(String),
  fc.tuple(fc.integer({ min: -999, max: 999 }), fc.nat(99999), fc.integer({ min: -30, max: 30 })).map(([a, b, e]) => `${a}.${b}e${e}`),
  fc.constantFrom('', ' 1.5 ', 'n/a', '1,5', '-0', '+.5', '5.', '1e', '1e999', '12345678901234567890.5', '0.1', '.', '-', 'NaN', '0x1F', '١'),
);

async function read(file: string, delimiter: ',' | ';', decimal: '.' | ','): Promise<Table | string> {
  try {
    return await readTable(file, { columns: ['x', 'y'], delimiter, decimal, label: 'data.csv' });
  } catch (e) {
    if (e instanceof DataError) return e.message;
    throw e;
  }
}

describe('csv fast path: same tables as the general path (property test, fast-check)', () => {
  it('plain generated CSVs read identically with and without a quoted header', async () => {
    let n = 0;
    await fc.assert(
      fc.asyncProperty(
        fc.array(fc.oneof({ weight: 8, arbitrary: fc.array(cellArb, { minLength: 3, maxLength: 3 }) }, { weight: 1, arbitrary: fc.array(cellArb, { minLength: 0, maxLength: 5 }) }), { minLength: 1, maxLength: 40 }),
        fc.constantFrom('\n', '\r\n'),
        fc.boolean(),
        fc.boolean(),
        async (rows, eol, comma, finalEol) => {
          const delimiter = comma ? ';' : ',';
          const decimal = comma ? ',' : '.';
          const body = rows.map((r) => r.map((c) => (comma ? c.replace('.', ',') : c.replace(',', ';'))).join(delimiter)).join(eol) + (finalEol ? eol : '');
          const plain = path.join(dir, `p${n}.csv`);
          const quoted = path.join(dir, `q${n++}.csv`);
          fs.writeFileSync(plain, ['x', 'note', 'y'].join(delimiter) + eol + body);
          fs.writeFileSync(quoted, ['"x"', '"note"', '"y"'].join(delimiter) + eol + body);
          const a = await read(plain, delimiter, decimal);
          const b = await read(quoted, delimiter, decimal);
          if (typeof a === 'string' || typeof b === 'string') return assert.strictEqual(a, b);
          assert.deepStrictEqual({ ...a, hash: '', file: '' }, { ...b, hash: '', file: '' });
          for (const c of ['x', 'y']) a.values[c].forEach((v, i) => assert.ok(Object.is(v, b.values[c][i]), `${c}[${i}]: ${v} vs ${b.values[c][i]}`));
        },
      ),
      { seed: 12012, numRuns: 300 },
    );
  });

  it('switches to the general path at the first quoted row and keeps line numbers', async () => {
    const file = path.join(dir, 'switch.csv');
    fs.writeFileSync(file, 'x,note,y\n1,a,2\n3,"two\nlines",4\n5,b,n/a\n7,c,8\n');
    const t = await readTable(file, { columns: ['x', 'y'] });
    assert.deepStrictEqual([...t.values.x], [1, 3, 7]);
    assert.deepStrictEqual([...t.line], [2, 3, 6]);
    assert.strictEqual(t.problems[0].message, `${file} line 5, column 'y': not a number: 'n/a' — data row 3 was left out`);
  });
});

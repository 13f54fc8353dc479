// Property-based fuzzing (fast-check) of the three readers of untrusted text: the JSONC spec reader + validator, the
// formula parser and the CSV reader. Seeded; FUZZ_RUNS raises the number of runs per property (npm run fuzz).
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import fc from 'fast-check';
import { parseSpecText, validateSpec } from '../../src/engine/spec';
import { formatFormula, parseFormula, FormulaError } from '../../src/engine/formula';
import { readHeader, readTable } from '../../src/engine/data/csv';
import { DataError } from '../../src/engine/data/errors';

const RUNS = Number(process.env.FUZZ_RUNS ?? 1000);
const SEED = Number(process.env.FUZZ_SEED ?? 20261202);
const FILE = 'fuzz.fitspec.json';

const jsonish = fc.oneof(
  fc.string(),
  fc.json(),
  fc.jsonValue().map((v) => JSON.stringify({ data: { file: 'd.csv', x: 'x', y: 'y' }, models: [{ name: 'm', polynomial: 1 }], extra: v })),
  fc.array(fc.constantFrom('{', '}', '[', ']', '"__proto__"', '"constructor"', ':', ',', '1e999', '"data"', '"models"', '//', '/*', '"x"', '0', 'null', ' ', '\n'), { maxLength: 60 }).map((a) => a.join('')),
);

describe('fuzz: spec reader and validator', () => {
  it('always returns a report: problems with a location, or a value for the validator, never a throw', () => {
    fc.assert(
      fc.property(jsonish, (text) => {
        const r = parseSpecText(text, FILE);
        for (const p of r.problems) assert.ok(p.location && (p.location.line as number) >= 1 && typeof p.message === 'string');
        if (r.problems.some((p) => p.severity === 'error')) return;
        const v = validateSpec(r.raw, { file: FILE, text, columns: ['x', 'y'] });
        assert.ok(Array.isArray(v.problems));
        if (v.spec === null) assert.ok(v.problems.some((p) => p.severity === 'error'));
        assert.strictEqual(({} as Record<string, unknown>).output, undefined, 'Object.prototype untouched');
      }),
      { numRuns: RUNS, seed: SEED },
    );
  });
});

const names = fc.constantFrom('a', 'b', 'x', 'K', 'r', '`OD 600`', 'hasOwnProperty', 'é', 'pi', 'e');
const expr: fc.Arbitrary<string> = fc.letrec<{ e: string }>((tie) => ({
  e: fc.oneof(
    { depthSize: 'small' },
    names,
    fc.double({ min: 0, max: 1e6, noNaN: true }).map((v) => String(v)),
    fc.tuple(tie('e'), fc.constantFrom('+', '-', '*', '/', '^'), tie('e')).map(([a, o, b]) => `(${a})${o}(${b})`),
    fc.tuple(fc.constantFrom('exp', 'log', 'sqrt', 'sin', 'abs', '-'), tie('e')).map(([f, a]) => `${f}(${a})`),
  ),
})).e;

describe('fuzz: formula parser', () => {
  it('throws only FormulaError on any text', () => {
    fc.assert(
      fc.property(fc.oneof(fc.string(), fc.array(fc.constantFrom('(', ')', '^', '*', '-', 'exp', 'x', '1e', '`', ',', ' ', '.', 'and', '<'), { maxLength: 40 }).map((a) => a.join(''))), (text) => {
        try {
          parseFormula(text, { logic: text.length % 2 === 0 });
        } catch (e) {
          assert.ok(e instanceof FormulaError, String(e));
        }
      }),
      { numRuns: RUNS, seed: SEED },
    );
  });

  it('print → parse round-trips to the same canonical text', () => {
    fc.assert(
      fc.property(expr, (text) => {
        const once = formatFormula(parseFormula(text));
        assert.strictEqual(formatFormula(parseFormula(once)), once);
      }),
      { numRuns: RUNS, seed: SEED },
    );
  });
});

describe('fuzz: CSV reader', () => {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-fuzz-'));
  after(() => fs.rmSync(dir, { recursive: true, force: true }));
  it('arbitrary bytes give a table or a located DataError, never a crash', async () => {
    let k = 0;
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(
          fc.uint8Array({ maxLength: 300 }),
          fc.array(fc.constantFrom('x', 'y', ',', ';', '\t', '"', '\n', '\r\n', '1', '2.5', '-', 'e', '\u00ff', '\ufeff', ' '), { maxLength: 80 }).map((a) => Buffer.from(a.join(''))),
        ),
        async (bytes) => {
          const f = path.join(dir, `f${k++}.csv`);
          fs.writeFileSync(f, bytes);
          try {
            await readHeader(f, { label: 'f.csv' });
            const t = await readTable(f, { columns: ['x', 'y'], label: 'f.csv' });
            assert.strictEqual(t.values.x.length, t.row.length);
          } catch (e) {
            assert.ok(e instanceof DataError, String(e));
            assert.match((e as Error).message, /f\.csv/);
          } finally {
            fs.rmSync(f, { force: true });
          }
        },
      ),
      { numRuns: RUNS, seed: SEED },
    );
  });
});

// The input classes of the bad-input corpus through the real CLI (see harness.ts).
import { strict as assert } from 'assert';
import * as fs from 'fs';
import { CLI, runCase } from './harness';
import { INPUT_CASES } from './cases-input';

describe('bad input: spec, formula and CSV classes through the real CLI', () => {
  before(() => assert.ok(fs.existsSync(CLI), 'run `node esbuild.js` first'));
  it('has at least 60 cases with unique names', () => {
    assert.ok(INPUT_CASES.length >= 60, String(INPUT_CASES.length));
    assert.strictEqual(new Set(INPUT_CASES.map((c) => c.name)).size, INPUT_CASES.length);
  });
  for (const c of INPUT_CASES) it(`${c.cls}: ${c.name}`, () => void runCase(c));
});

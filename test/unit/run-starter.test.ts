// Starter specs (`curvewright new`, the editor's "fit this CSV"): column guesses, the shape rule of src/engine/starter.ts,
// and the spec text. Seeded synthetic curves of known shape (behaviour tests; no reference values are claimed).
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { parse } from 'jsonc-parser';
import { candidatesFor, classifyShape, starterSpecText, suggestSpec } from '../../src/engine/starter';
import { mulberry32, normalSource } from '../../scripts/generate-demo';

function curve(f: (x: number) => number, n = 30, x0 = 0.5, x1 = 30, sd = 0.01, seed = 5): { x: number[]; y: number[] } {
  const z = normalSource(mulberry32(seed));
  const x = Array.from({ length: n }, (_, i) => x0 + ((x1 - x0) * i) / (n - 1));
  return { x, y: x.map(v => f(v) + sd * z()) };
}

describe('starter: shape rule', () => {
  it('classifies sigmoid, saturating, decaying, peaked and straight data', () => {
    const s = curve(x => 2 / (1 + Math.exp(-0.5 * (x - 15))));
    assert.equal(classifyShape(s.x, s.y), 'sigmoid');
    const m = curve(x => (5 * x) / (2 + x));
    assert.equal(classifyShape(m.x, m.y), 'saturating');
    const d = curve(x => 1 + 3 * Math.exp(-0.2 * x));
    assert.equal(classifyShape(d.x, d.y), 'decaying');
    const g = curve(x => 3 * Math.exp(-((x - 14) ** 2) / 8));
    assert.equal(classifyShape(g.x, g.y), 'peaked');
    const l = curve(x => 1 + 0.1 * x);
    assert.equal(classifyShape(l.x, l.y), 'other');
    assert.equal(classifyShape([1, 2, 3], [1, 2, 3]), 'other', 'too few points to judge');
  });
  it('always recommends a line and a quadratic, plus the shape\'s models, respecting the x domain', () => {
    const rec = (shape: Parameters<typeof candidatesFor>[0], xMin: number) => candidatesFor(shape, xMin).filter(c => c.recommended).map(c => c.id);
    assert.deepEqual(rec('other', 0), ['linear', 'quadratic']);
    assert.deepEqual(rec('sigmoid', 0.1), ['linear', 'quadratic', 'logistic4']);
    assert.deepEqual(rec('sigmoid', -2), ['linear', 'quadratic', 'logistic3'], 'logistic4 needs x > 0');
    assert.ok(!candidatesFor('sigmoid', -2).some(c => c.id === 'logistic4'));
    assert.deepEqual(rec('saturating', 0), ['linear', 'quadratic', 'michaelis_menten']);
    assert.deepEqual(rec('decaying', 0), ['linear', 'quadratic', 'exponential_offset']);
    assert.deepEqual(rec('peaked', 0), ['linear', 'quadratic', 'gaussian']);
  });
});

describe('starter: suggestSpec and starterSpecText', () => {
  let dir: string;
  before(() => {
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-starter-'));
  });
  it('guesses x as the first steadily rising numeric column and y as the next numeric one', async () => {
    const c = curve(x => 1 + 3 * Math.exp(-0.2 * x));
    const rows = c.x.map((x, i) => `S${i},${(i * 7) % 5},${x.toFixed(3)},${c.y[i].toFixed(4)}`);
    const file = path.join(dir, 'decay.csv');
    fs.writeFileSync(file, ['sample,batch,minutes,signal', ...rows].join('\n') + '\n');
    const s = await suggestSpec(file);
    assert.deepEqual(s.columns, ['sample', 'batch', 'minutes', 'signal']);
    assert.equal(s.x, 'minutes');
    assert.equal(s.y, 'signal');
    assert.ok(s.candidates.find(k => k.id === 'exponential_offset')?.recommended);
    const forced = await suggestSpec(file, { x: 'batch', y: 'minutes' });
    assert.equal(forced.x, 'batch');
    assert.equal(forced.y, 'minutes');
  });
  it('rejects a file without two numeric columns, naming it', async () => {
    const file = path.join(dir, 'words.csv');
    fs.writeFileSync(file, 'a,b\nx,y\nz,w\n');
    await assert.rejects(suggestSpec(file), /words\.csv has no numeric column/);
  });
  it('writes JSONC with a comment header, data.file relative to the spec, output under results/, quoted odd names', () => {
    const text = starterSpecText({
      csvPath: path.join(dir, 'data', 'run 1.csv'),
      specPath: path.join(dir, 'specs', 'run1.fitspec.json'),
      x: 'time (h)',
      y: 'od600',
      models: [{ name: 'linear', builtin: 'linear' }, { name: 'quadratic', polynomial: 2 }],
    });
    assert.match(text, /^\/\/ Curvewright fit spec for run 1\.csv/);
    const errors: unknown[] = [];
    const spec = parse(text, errors as never[]) as { data: { file: string; x: string; y: string }; models: unknown[]; output: string };
    assert.deepEqual(errors, []);
    assert.equal(spec.data.file, '../data/run 1.csv');
    assert.equal(spec.data.x, '`time (h)`');
    assert.equal(spec.data.y, 'od600');
    assert.deepEqual(spec.models, [{ name: 'linear', builtin: 'linear' }, { name: 'quadratic', polynomial: 2 }]);
    assert.equal(spec.output, 'results/run1.fitresult.json');
  });
});

// The demo workspace is reproducible: the seeded generator rewrites examples/data byte for byte, its noise is the
// standard normal it claims to be, and every demo spec names data that exist and a results file that is committed.
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as path from 'path';
import { DEFAULT_SEED, generateDemo, mulberry32, normalSource } from '../../scripts/generate-demo';

const EXAMPLES = path.resolve(__dirname, '..', '..', 'examples');

describe('demo generator', () => {
  it('regenerates the committed data files exactly from the default seed', () => {
    const { files } = generateDemo(DEFAULT_SEED);
    assert.ok(Object.keys(files).length >= 5);
    for (const [rel, text] of Object.entries(files)) assert.equal(fs.readFileSync(path.join(EXAMPLES, rel), 'utf8'), text, rel);
  });
  it('another seed gives other noise on the same design', () => {
    const a = generateDemo(DEFAULT_SEED).files['data/cell-capacity-fade.csv'];
    const b = generateDemo(DEFAULT_SEED + 1).files['data/cell-capacity-fade.csv'];
    assert.notEqual(a, b);
    assert.equal(a.split('\n').length, b.split('\n').length);
  });
  it('Box–Muller draws have mean ≈ 0 and variance ≈ 1 (20,000 draws; 5-sigma bands)', () => {
    const z = normalSource(mulberry32(12345));
    const n = 20000;
    let s = 0, s2 = 0;
    for (let i = 0; i < n; i++) { const v = z(); s += v; s2 += v * v; }
    const mean = s / n, variance = s2 / n - mean * mean;
    assert.ok(Math.abs(mean) < 5 / Math.sqrt(n), `mean ${mean}`);
    assert.ok(Math.abs(variance - 1) < 5 * Math.sqrt(2 / n), `variance ${variance}`); // var of s² ≈ 2σ⁴/n (normal theory)
  });
  it('the unknown samples in the assay spec are the generated ones', () => {
    const { unknowns } = generateDemo(DEFAULT_SEED);
    const spec = fs.readFileSync(path.join(EXAMPLES, 'assay-standard-curve.fitspec.json'), 'utf8');
    const m = /"solveFor": \[([^\]]+)\]/.exec(spec);
    assert.ok(m);
    assert.deepEqual(m![1].split(',').map(Number), unknowns.map(u => u.absorbance));
  });
  it('every demo spec has a title, a committed results file and a caution in the README', () => {
    const specs = fs.readdirSync(EXAMPLES).filter(f => f.endsWith('.fitspec.json'));
    assert.equal(specs.length, 8);
    for (const s of specs) {
      const text = fs.readFileSync(path.join(EXAMPLES, s), 'utf8');
      assert.match(text, /^\/\/ /, `${s} starts with a comment`);
      assert.match(text, /"title": "/);
      assert.match(text, /"expect": \{/);
      const out = /"output": "([^"]+)"/.exec(text)![1];
      assert.ok(fs.existsSync(path.join(EXAMPLES, out)), `${s}: ${out} is committed`);
    }
    assert.match(fs.readFileSync(path.join(EXAMPLES, 'README.md'), 'utf8'), /validated under your\s+(> )?local regulations/);
  });
});

// Hostile and odd spec input: forbidden and duplicated keys, depth and size limits, numbers beyond the double range,
// identifiers named like Object.prototype members, NFC/NFD names, terminal escapes, big Jacobians, flat solveFor.
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { parseSpecText, validateSpec, LIMITS } from '../../src/engine/spec';
import { compileFormula } from '../../src/engine/formula';
import { generateKernels } from '../../src/engine/formula/codegen';
import { prepareFormula } from '../../src/engine/formula/compile';
import { derivative } from '../../src/engine/formula/derive';
import { runSpecFile } from '../../src/engine/run';
import { isErrorReport, type FitReport, type RunResult } from '../../src/engine/report';
import { oneLine, terminalText } from '../../src/shared/terminalText';
import { readTable } from '../../src/engine/data/csv';

const FILE = 'h.fitspec.json';
const lineCsv = (h: string) => [h, ...Array.from({ length: 12 }, (_, k) => `${k + 1},${(2 + 3 * (k + 1) + 0.1 * Math.sin(7 * (k + 1))).toFixed(4)}`)].join('\n') + '\n';
function workspace(files: Record<string, string | Buffer>): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-hard-'));
  for (const [rel, text] of Object.entries(files)) fs.writeFileSync(path.join(dir, rel), text);
  return dir;
}
async function run(dir: string, spec: unknown): Promise<RunResult> {
  const f = path.join(dir, FILE);
  fs.writeFileSync(f, typeof spec === 'string' ? spec : JSON.stringify(spec, null, 2));
  return runSpecFile(f, { workspaceRoot: dir });
}
function report(r: RunResult): FitReport {
  if (isErrorReport(r)) assert.fail(r.error.message);
  return r as FitReport;
}
function errorMessages(r: RunResult): string {
  assert.ok(isErrorReport(r), 'expected an error report');
  return [r.error.message, ...(r.error.problems ?? []).map((p) => p.message)].join('\n');
}

describe('input hardening: the spec reader', () => {
  it('refuses __proto__, constructor and prototype keys anywhere, with line:column and JSON path', () => {
    for (const key of ['__proto__', 'constructor', 'prototype']) {
      const text = `{\n  "data": { "file": "d.csv", "x": "x", "y": "y" },\n  "models": [{ "name": "m", "polynomial": 1, "${key}": { "output": "x.json" } }]\n}`;
      const r = parseSpecText(text, FILE);
      const p = r.problems.find((q) => q.code === 'spec-forbidden-key');
      assert.ok(p, key);
      assert.deepStrictEqual(p.path, ['models', 0, key]);
      assert.deepStrictEqual(p.location, { file: FILE, line: 3, column: 46 });
      assert.match(p.message, /line 3, column 46 \(models\[0\]\./);
      assert.match(p.message, /remove it/);
      // nothing reached Object.prototype, nothing was smuggled into the model
      assert.strictEqual(({} as Record<string, unknown>).output, undefined);
      const models = (r.raw as { models: Record<string, unknown>[] }).models;
      assert.strictEqual(models[0].output, undefined);
    }
  });

  it('reports a duplicated key at both places and builds objects without a prototype', () => {
    const text = '{\n  "confidence": 0.9,\n  "title": "t",\n  "confidence": 0.99\n}';
    const r = parseSpecText(text, FILE);
    const dup = r.problems.filter((p) => p.code === 'spec-duplicate-key');
    assert.strictEqual(dup.length, 2);
    assert.deepStrictEqual(dup.map((p) => p.location?.line), [2, 4]);
    assert.match(dup[0].message, /key 'confidence' appears twice in the spec \(line 2 and line 4\); keep one/);
    assert.strictEqual(Object.getPrototypeOf(r.raw), null);
  });

  it('stops at the nesting limit without recursion (100 000 levels)', () => {
    const text = '['.repeat(100000) + ']'.repeat(100000);
    const r = parseSpecText(text, FILE);
    assert.strictEqual(r.problems[0].code, 'spec-too-deep');
    assert.match(r.problems[0].message, new RegExp(`more than ${LIMITS.jsonDepth} levels deep at line 1, column ${LIMITS.jsonDepth + 1}`));
    const ok = parseSpecText('['.repeat(LIMITS.jsonDepth) + ']'.repeat(LIMITS.jsonDepth), FILE);
    assert.deepStrictEqual(ok.problems, []);
  });

  it('calls 1e999 too large, not "number null"', () => {
    const r = parseSpecText('{\n  "confidence": 1e999\n}', FILE);
    const p = r.problems.find((q) => q.code === 'spec-number-range');
    assert.ok(p);
    assert.match(p.message, /number 1e999 at line 2, column 17 \(confidence\) is too large/);
    assert.doesNotMatch(p.message, /null/);
  });

  it('rejects thresholds outside their ranges (p-values above 1, negative counts)', () => {
    const base = { data: { file: 'd.csv', x: 'x', y: 'y' }, models: [{ name: 'm', polynomial: 1 }] };
    const bad: [string, number, RegExp][] = [
      ['runsP', 1.5, /a p-value between 0 and 1/],
      ['normalityP', -0.1, /a p-value between 0 and 1/],
      ['fTestAlpha', 1, /strictly between 0 and 1/],
      ['minDof', 1.5, /whole number/],
      ['paramCorrelation', 2, /between 0 and 1/],
      ['cooksFactor', 0, /positive/],
      ['cvRatio', 0.5, /at least 1/],
    ];
    for (const [k, v, re] of bad) {
      const text = JSON.stringify({ ...base, thresholds: { [k]: v } });
      const res = validateSpec(parseSpecText(text, FILE).raw, { file: FILE, text });
      assert.strictEqual(res.spec, null, k);
      assert.ok(res.problems.some((p) => p.path.join('.') === `thresholds.${k}` && re.test(p.message)), `${k}: ${res.problems.map((p) => p.message).join(' | ')}`);
    }
    const text = JSON.stringify({ ...base, thresholds: { runsP: 0.05, minDof: 0, cvRatio: 1 } });
    assert.ok(validateSpec(parseSpecText(text, FILE).raw, { file: FILE, text }).spec);
  });

  it('fails fast above the limits on models, parameters, predict and solveFor', () => {
    const t0 = Date.now();
    const models = Array.from({ length: 20000 }, (_, i) => ({ name: `m${i}`, polynomial: 1 }));
    const text = JSON.stringify({ data: { file: 'd.csv', x: 'x', y: 'y' }, models, predict: Array(2000).fill(1), solveFor: Array(200).fill(1) });
    const res = validateSpec(parseSpecText(text, FILE).raw, { file: FILE, text });
    const limits = res.problems.filter((p) => p.code === 'spec-limit').map((p) => p.message);
    assert.strictEqual(limits.length, 3, limits.join('\n'));
    assert.match(limits.join('\n'), /20000 models; the limit is 100/);
    assert.ok(Date.now() - t0 < 20000);
    const ps = Array.from({ length: LIMITS.params + 1 }, (_, i) => `p${i}`).join('+');
    const t2 = JSON.stringify({ data: { file: 'd.csv', x: 'x', y: 'y' }, models: [{ name: 'big', formula: `${ps}*x` }] });
    const r2 = validateSpec(parseSpecText(t2, FILE).raw, { file: FILE, text: t2 });
    assert.ok(r2.problems.some((p) => p.code === 'spec-limit' && /201 parameters; the limit is 200/.test(p.message)));
  });
});

describe('input hardening: names like Object.prototype members', () => {
  for (const col of ['__proto__', 'constructor', 'hasOwnProperty']) {
    it(`fits a column named ${col}`, async () => {
      const dir = workspace({ 'd.csv': lineCsv(`${col},y`) });
      const r = report(await run(dir, { data: { file: 'd.csv', x: col, y: 'y' }, models: [{ name: 'line', polynomial: 1 }] }));
      assert.strictEqual(r.models[0].status, 'converged');
      assert.ok(Math.abs((r.models[0].params.c1.value as number) - 3) < 0.05);
    });
  }

  it('fits parameters and variables named hasOwnProperty, toString, valueOf', async () => {
    const dir = workspace({ 'd.csv': lineCsv('x,y') });
    const r = report(
      await run(dir, {
        data: { file: 'd.csv', x: { hasOwnProperty: 'x' }, y: 'y' },
        models: [{ name: 'f', formula: 'toString + valueOf*hasOwnProperty', params: { toString: { start: 1 }, valueOf: {} } }],
        expect: { f: { valueOf: { value: 3, tol: 0.1 } } },
      }),
    );
    assert.strictEqual(r.models[0].status, 'converged');
    assert.deepStrictEqual(r.models[0].paramOrder, ['toString', 'valueOf']);
    assert.ok(r.expect[0].ok);
  });

  it('refuses __proto__ and constructor as formula parameters with a clear message', async () => {
    const dir = workspace({ 'd.csv': lineCsv('x,y') });
    for (const name of ['__proto__', 'constructor']) {
      const msg = errorMessages(await run(dir, { data: { file: 'd.csv', x: 'x', y: 'y' }, models: [{ name: 'f', formula: `${name} + b*x` }] }));
      assert.match(msg, new RegExp(`'${name}' cannot be a parameter name .* rename it`));
      assert.doesNotMatch(msg, /internal error/);
    }
  });
});

describe('input hardening: messages that say the right thing', () => {
  it('matches a column name written in NFD to the header written in NFC', async () => {
    const nfc = 'temp\u00e9';
    const nfd = 'tempe\u0301';
    const dir = workspace({ 'd.csv': lineCsv(`${nfc},y`) });
    const r = report(await run(dir, { data: { file: 'd.csv', x: nfd, y: 'y' }, models: [{ name: 'line', polynomial: 1 }] }));
    assert.strictEqual(r.models[0].status, 'converged');
  });

  it('reports a flat curve at the solveFor value instead of enumerating roots', async () => {
    const dir = workspace({ 'd.csv': 'x,y\n1,5\n2,5\n3,5\n4,5\n5,5\n6,5\n' });
    const r = report(await run(dir, { data: { file: 'd.csv', x: 'x', y: 'y' }, models: [{ name: 'c', polynomial: 0 }], solveFor: [5] }));
    const inv = r.models[0].inverse[0];
    assert.deepStrictEqual(inv.roots, []);
    assert.deepStrictEqual(inv.flat, [1, 6]);
    assert.ok(r.models[0].problems.some((p) => p.code === 'inverse-flat' && /the curve is flat at y = 5 over \[1, 6\]/.test(p.message)));
  });

  it('caps the roots listed per solveFor value', async () => {
    const rows = ['x,y'];
    for (let i = 0; i <= 200; i++) rows.push(`${i / 10},${Math.sin(3 * (i / 10)).toFixed(6)}`);
    const dir = workspace({ 'd.csv': rows.join('\n') + '\n' });
    const r = report(await run(dir, { data: { file: 'd.csv', x: 'x', y: 'y' }, models: [{ name: 's', formula: 'a*sin(b*x)', params: { a: { start: 1 }, b: { start: 3 } } }], solveFor: [0.1] }));
    const inv = r.models[0].inverse[0];
    assert.strictEqual(inv.roots.length, LIMITS.rootsPerValue);
    assert.ok((inv.moreRoots ?? 0) > 0);
    assert.ok(r.models[0].problems.some((p) => p.code === 'inverse-many-roots'));
  });

  it('names the line and column of non-UTF-8 bytes late in a file, and escapes a bad cell', async () => {
    const head = Buffer.from('x,y\n' + Array.from({ length: 200000 }, (_, i) => `${i},${i}`).join('\n') + '\n12,');
    const dir = workspace({ 'd.csv': Buffer.concat([head, Buffer.from([0xff, 0xfe]), Buffer.from('\n')]), 'e.csv': 'x,y\n1,\u001b[31mred\u001b[0m\u202eevil-text-that-goes-on-and-on\n2,3\n3,4\n' });
    await assert.rejects(readTable(path.join(dir, 'd.csv'), { columns: ['x', 'y'], label: 'd.csv' }), (e: Error) => /d\.csv line 200002, column 4: bytes that are not UTF-8/.test(e.message));
    const t = await readTable(path.join(dir, 'e.csv'), { columns: ['x', 'y'], label: 'e.csv' });
    const m = t.problems[0].message;
    assert.doesNotMatch(m, /[\u001b\u202e]/);
    assert.match(m, /\\u001b\[31mred/);
    assert.ok(m.length < 160, m);
  });
});

describe('input hardening: big formulas', () => {
  it('evaluates the Jacobian of a product of 200 parameters, array slots equal local constants', () => {
    const n = LIMITS.params;
    const ps = Array.from({ length: n }, (_, i) => `p${i}`);
    const c = compileFormula(`${ps.join('*')}*x`, { variables: ['x'] });
    const theta = new Float64Array(n).fill(1);
    theta[3] = 2;
    const out = new Float64Array(3);
    const J = new Float64Array(3 * n);
    c.evaluateWithJacobian(theta, [new Float64Array([1, 2, 3])], out, J);
    assert.deepStrictEqual([...out], [2, 4, 6]);
    assert.deepStrictEqual([...J.subarray(0, 3)], [2, 4, 6]);
    assert.deepStrictEqual([...J.subarray(9, 12)], [1, 2, 3]);
    // the same kernels with every value in the slot array
    const pf = prepareFormula('a*exp(-k*x) + c*x^2', { variables: ['x'] });
    const d = pf.params.map((_, j) => derivative(pf.g, pf.f, j));
    const locals = generateKernels(pf.g, pf.f, d);
    const slots = generateKernels(pf.g, pf.f, d, 0);
    assert.match(slots.source.evaluateWithJacobian, /s\[0\]/);
    const th = [1.5, 0.3, 0.2];
    const X = [new Float64Array([0, 0.5, 2, 7])];
    const o1 = new Float64Array(4), o2 = new Float64Array(4), J1 = new Float64Array(12), J2 = new Float64Array(12);
    locals.evaluateWithJacobian(th, X, o1, J1);
    slots.evaluateWithJacobian(th, X, o2, J2);
    assert.deepStrictEqual([...o2], [...o1]);
    assert.deepStrictEqual([...J2], [...J1]);
  });
});

describe('terminalText', () => {
  it('escapes C0, C1, DEL, ESC and bidi controls; oneLine also line breaks', () => {
    const s = 'a\u001b[2Kb\u0007c\u009bd\u007fe\u202ef\u2066g\tz';
    assert.strictEqual(terminalText(s), 'a\\u001b[2Kb\\u0007c\\u009bd\\u007fe\\u202ef\\u2066g\tz');
    assert.strictEqual(oneLine('m\ncheck: 9 passed, 0 failed\r'), 'm\\ncheck: 9 passed, 0 failed\\r');
    assert.strictEqual(oneLine('µ² Tarnwell ± é'), 'µ² Tarnwell ± é');
  });
});

// Bad input of the robust, errors-in-x and variance-function keys (models[].loss, lossScale, data.sigmaX,
// data.sigma as a variance function) through the real CLI (harness.ts): each names the key and the fix.
import { strict as assert } from 'assert';
import * as fs from 'fs';
import { CLI, runCase, type BadInputCase } from './harness';

const rows = (n: number, f: (x: number) => number) => Array.from({ length: n }, (_, i) => `${i + 1},${f(i + 1).toFixed(4)}`).join('\n');
const CSV = `hours,od600\n${rows(12, (x) => 2 + 3 * x + 0.1 * Math.sin(7 * x))}\n`;
const DATA = { file: 'd.csv', x: 'hours', y: 'od600' };
const files = (spec: object, csv = CSV) => ({ 'h.fitspec.json': JSON.stringify(spec, null, 2), 'd.csv': csv });
const c = (name: string, spec: object, place: RegExp, fix: RegExp, more: Partial<BadInputCase> = {}, csv?: string): BadInputCase => ({ name, cls: 'robust', files: files(spec, csv), place, fix, ...more });
const line = (extra: object = {}) => [{ name: 'line', builtin: 'linear', ...extra }];

export const FITS_CASES: BadInputCase[] = [
  c('unknown loss', { data: DATA, models: line({ loss: 'hubber' }) }, /models\[0\]\.loss/, /did you mean "huber"|"huber"/),
  c('negative lossScale', { data: DATA, models: line({ loss: 'huber', lossScale: -1 }) }, /models\[0\]\.lossScale/, /positive number/),
  c('lossScale as text', { data: DATA, models: line({ loss: 'cauchy', lossScale: 'median' }) }, /models\[0\]\.lossScale/, /"mad" or "mad-iterated"/),
  c('lossScale without a robust loss', { data: DATA, models: line({ lossScale: 2 }) }, /models\[0\]\.lossScale/, /add "loss": "huber"/),
  c('robust loss with a joint fit', { data: { ...DATA, groupBy: 'g' }, models: [{ name: 'l', formula: 'a + b*x', shared: ['b'], loss: 'huber' }] }, /models\[0\]\.loss/, /remove "shared"/, {}, `hours,od600,g\n${rows(12, (x) => 2 + 3 * x).split('\n').map((r, k) => `${r},${k % 2 ? 'A' : 'B'}`).join('\n')}\n`),
  c('sigmaX without sigma', { data: { ...DATA, sigmaX: '0.1' }, models: line() }, /data\.sigmaX/, /add data\.sigma/),
  c('sigmaX with two x variables', { data: { ...DATA, x: { t: 'hours', u: 'od600' }, y: 'od600', sigma: '1', sigmaX: '0.1' }, models: [{ name: 'f', formula: 'a + b*t + c*u' }] }, /data\.sigmaX/, /fit one x, or drop sigmaX/),
  c('sigmaX with a robust loss', { data: { ...DATA, sigma: '1', sigmaX: '0.1' }, models: line({ loss: 'huber' }) }, /models\[0\]\.loss/, /use one of the two/),
  c('sigmaX unknown column', { data: { ...DATA, sigma: '1', sigmaX: 'sx' }, models: line() }, /data\.sigmaX/, /column|did you mean/),
  c('negative sigmaX in a row', { data: { ...DATA, sigma: '1', sigmaX: 'sx' }, models: line() }, /data\.sigmaX/, /left out/, { args: ['fit', 'h.fitspec.json'], exit: 0 },
    `hours,od600,sx\n1,5,-0.1\n${rows(11, (x) => 2 + 3 * x + 0.1 * Math.sin(7 * x)).split('\n').map((r, k) => `${k + 2},${r.split(',')[1]},0.1`).join('\n')}\n`),
  c('variance power misspelt', { data: { ...DATA, sigma: { power: 'estimat' } }, models: line() }, /data\.sigma\.power/, /"estimate"/),
  c('variance power out of range', { data: { ...DATA, sigma: { power: 12 } }, models: line() }, /data\.sigma\.power/, /between −5 and 5/),
  c('variance function without power', { data: { ...DATA, sigma: { theta: 1 } }, models: line() }, /data\.sigma/, /power|remove it/),
  c('variance function with absolute sigmaMode', { data: { ...DATA, sigma: { power: 1 }, sigmaMode: 'absolute' }, models: line() }, /data\.sigmaMode/, /give σ values|remove sigmaMode/),
  c('variance to estimate without replicates', { data: { ...DATA, sigma: { power: 'estimate' } }, models: line() }, /data\.sigma\.power/, /measure replicates, give θ as a number/, { args: ['fit', 'h.fitspec.json'] }),
];

describe('bad input: robust loss, errors in x and variance functions through the real CLI', () => {
  before(() => assert.ok(fs.existsSync(CLI), 'run `node esbuild.js` first'));
  it('has unique case names', () => assert.strictEqual(new Set(FITS_CASES.map((x) => x.name)).size, FITS_CASES.length));
  for (const x of FITS_CASES) it(`${x.cls}: ${x.name}`, () => void runCase(x));
});

// Bad input of the calibration blocks (unknowns, controls, limits; docs/calibration.md) through the real CLI (see
// harness.ts): each names the key (or the file line) and the fix, exits 2, writes nothing.
import { strict as assert } from 'assert';
import * as fs from 'fs';
import { CLI, runCase, type BadInputCase } from './harness';

const STD = 'conc,signal\n' + [0, 1, 2, 4, 8, 16].flatMap((x) => [`${x},${(0.1 + 0.2 * x + 0.01).toFixed(3)}`, `${x},${(0.1 + 0.2 * x - 0.01).toFixed(3)}`]).join('\n') + '\n';
const UNK = 'sample,reading,dilution,nominal\nA,1.2,2,\nA,1.3,2,\nB,0.6,1,\nQC,1.0,1,4.5\nBL,0.1,1,\n';
const base = { data: { file: 's.csv', x: 'conc', y: 'signal' }, models: [{ name: 'line', builtin: 'linear' }] };
const spec = (o: Record<string, unknown>, data: Record<string, unknown> = {}) => JSON.stringify({ ...base, data: { ...base.data, ...data }, ...o }, null, 2);
const files = (text: string, unk = UNK): Record<string, string> => ({ 'h.fitspec.json': text, 's.csv': STD, 'u.csv': unk });
const U = { file: 'u.csv', id: 'sample', y: 'reading', dilution: 'dilution' };
const c = (name: string, f: Record<string, string | Buffer>, place: RegExp, fix: RegExp, more: Partial<BadInputCase> = {}): BadInputCase => ({ name, cls: 'calibration', files: f, place, fix, ...more });

const LOTS = 'lot,conc,signal\n' + ['R', 'T'].flatMap((lot, k) => [0.5, 1, 3, 10, 30, 100].flatMap((x) => [0, 1].map((r) => `${lot},${x},${(0.1 + 1.8 / (1 + ((4 + 3 * k) / x) ** 1.2) + (r ? 0.01 : -0.01)).toFixed(4)}`))).join('\n') + '\n';
const P4 = [{ name: '4PL', builtin: 'logistic4', params: { slope: { min: 0 } } }, { name: 'par', builtin: 'logistic4', params: { slope: { min: 0 } }, shared: ['lower', 'upper', 'slope'] }];
const pot = (potency: unknown, models: unknown = P4, groupBy: unknown = 'lot') =>
  ({ 'h.fitspec.json': JSON.stringify({ data: { file: 'l.csv', x: 'conc', y: 'signal', ...(groupBy ? { groupBy } : {}) }, models, potency }, null, 2), 'l.csv': LOTS });

export const CALIBRATION_CASES: BadInputCase[] = [
  c('potency without groupBy', pot({ reference: 'R' }, [P4[0]], null), /\[potency\]|potency/, /name the column that tells the reference/),
  c('potency model without shared slope', pot({ reference: 'R', model: 'par' }, [P4[0], { ...P4[1], shared: ['lower', 'upper'] }]), /potency\.model/, /"shared": \["lower","upper","slope"\]/),
  c('potency without a joint model', pot({ reference: 'R' }, [P4[0]]), /\[potency\]|potency/, /add it to models/),
  c('potency reference not a group', pot({ reference: 'REF' }), /potency\.reference/, /did you mean 'R'|groups: R, T/),
  c('potency test not a group', pot({ reference: 'R', test: ['TT'] }), /potency\.test/, /did you mean 'T'/),
  c('potency margin not around 1', pot({ reference: 'R', margin: { slope: [1.1, 1.3], span: [0.8, 1.25] } }), /potency\.margin\.slope/, /0 < low < 1 < high/),
  c('potency without reference', pot({ margin: { slope: [0.8, 1.25], span: [0.8, 1.25] } }), /potency\.reference/, /the group id of the reference/),
  c('unknown id column missing', files(spec({ unknowns: { ...U, id: 'sampel' } })), /unknowns\.id/, /did you mean 'sample'/),
  c('dilution column missing', files(spec({ unknowns: { ...U, dilution: 'dil' } })), /unknowns\.dilution/, /did you mean 'dilution'/),
  c('negative dilution', files(spec({ unknowns: U }), UNK.replace('B,0.6,1,', 'B,0.6,-5,')), /u\.csv line 4 \(data row 3\)[\s\S]*unknowns\.dilution|unknowns\.dilution[\s\S]*u\.csv line 4/, /must be a positive number/),
  c('zero dilution', files(spec({ unknowns: U }), UNK.replace('B,0.6,1,', 'B,0.6,0,')), /u\.csv line 4/, /must be a positive number/),
  c('empty dilution cell', files(spec({ unknowns: U }), UNK.replace('B,0.6,1,', 'B,0.6,,')), /u\.csv line 4/, /dilution factor is empty/),
  c('reading not a number', files(spec({ unknowns: U }), UNK.replace('B,0.6,1,', 'B,n/a,1,')), /u\.csv line 4 \(data row 3\), column 'reading'/, /fill in the reading/),
  c('empty sample id', files(spec({ unknowns: U }), UNK.replace('B,0.6,1,', ',0.6,1,')), /u\.csv line 4/, /give every reading its sample id/),
  c('reading column missing (default data.y)', files(spec({ unknowns: { file: 'u.csv', id: 'sample' } })), /unknowns\.y/, /defaults to data\.y/),
  c('unknowns file missing', files(spec({ unknowns: { ...U, file: 'nope.csv' } })), /unknowns\.file/, /check unknowns\.file in the spec/),
  c('unknowns file outside the workspace', files(spec({ unknowns: { ...U, file: '../outside.csv' } })), /unknowns\.file/, /--trust-paths/),
  c('unknowns without id', files(spec({ unknowns: { file: 'u.csv' } })), /unknowns\.id/, /the column naming each sample/),
  c('unknowns model not in models', files(spec({ unknowns: { ...U, model: 'lnie' } })), /unknowns\.model/, /did you mean 'line'/),
  c('unknowns output not csv', files(spec({ unknowns: { ...U, output: 'out.json' } })), /unknowns\.output/, /results\/unknowns\.csv/),
  c('unknowns output onto the readings file', files(spec({ unknowns: { ...U, output: 'u.csv' } })), /unknowns\.output/, /write to a separate file|input of this run/, { args: ['fit', 'h.fitspec.json'] }),
  c('unknowns with groupBy', files(spec({ unknowns: U }, { groupBy: 'conc' })), /\[unknowns\]|unknowns/, /in a spec of their own/),
  c('accept range reversed', files(spec({ unknowns: U, controls: { nominal: 'nominal', accept: [120, 80] } })), /controls\.accept/, /\[80, 120\]/),
  c('controls nominal missing', files(spec({ unknowns: U, controls: { accept: [80, 120] } })), /controls\.nominal/, /column of the nominal/),
  c('controls nominal column missing', files(spec({ unknowns: U, controls: { nominal: 'nominl' } })), /controls\.nominal/, /did you mean 'nominal'/),
  c('nominal not a number', files(spec({ unknowns: U, controls: { nominal: 'nominal' } }), UNK.replace('4.5', 'x4')), /u\.csv line 5/, /fix controls\.nominal/),
  c('limits sigma blanks with one blank', files(spec({ unknowns: U, limits: { sigma: 'blanks', blanks: 'BL' } })), /limits\.sigma/, /add blank replicates/),
  c('limits blanks id absent', files(spec({ unknowns: U, limits: { blanks: 'BLANK' } })), /limits\.blanks/, /give the id of the blank readings/),
  c('limits sigma unknown', files(spec({ limits: { sigma: 'blank' } })), /limits\.sigma/, /did you mean "blanks"|did you mean 'blanks'/),
  c('limits blanks without unknowns', files(spec({ limits: { blanks: 'BL' } })), /limits\.blanks/, /add it, or leave blanks out/),
];

describe('bad input: calibration blocks through the real CLI', () => {
  before(() => assert.ok(fs.existsSync(CLI), 'run `node esbuild.js` first'));
  it('has unique names', () => assert.strictEqual(new Set(CALIBRATION_CASES.map((x) => x.name)).size, CALIBRATION_CASES.length));
  for (const x of CALIBRATION_CASES) it(`${x.cls}: ${x.name}`, () => void runCase(x));
});

// Keeps schema/*.schema.json, the contract types in src/engine/report.ts, DEFAULTS and the built-in catalogue in step,
// and checks that the schemas accept real specs and reports and reject broken ones.
import * as assert from 'assert';
import * as fs from 'fs';
import * as path from 'path';
import Ajv from 'ajv';
import { parse as parseJsonc } from 'jsonc-parser';
import { BUILTINS } from '../../src/engine/models';
import type { DataSpec, ExcludeSpec, FitSpec, ModelSpec, ParamSpec, SolverSpec, Thresholds } from '../../src/engine/report';
import { BUILTIN_IDS, BUILTIN_PARAMS, DEFAULTS, THRESHOLD_KEYS, parseSpecText, validateSpec } from '../../src/engine/spec';
import { DEFAULT_THRESHOLDS } from '../../src/engine/stats/thresholds';
import { fitreportSchema, fitspecSchema, schemaText } from '../../schema/generate';

const root = path.resolve(__dirname, '..', '..');
const specSchema = JSON.parse(fs.readFileSync(path.join(root, 'schema', 'fitspec.schema.json'), 'utf8'));
const reportSchema = JSON.parse(fs.readFileSync(path.join(root, 'schema', 'fitreport.schema.json'), 'utf8'));

// Every key of the contract types, listed once; `satisfies` rejects a listed key the type does not have, and the
// Exact<> checks below reject a key of the type that is not listed (tsc --noEmit runs over tests).
const FIT_KEYS = ['title', 'data', 'models', 'confidence', 'predict', 'solveFor', 'predictWeight', 'output', 'outputPoints', 'expect', 'thresholds', 'derived', 'plot', 'unknowns', 'controls', 'limits', 'potency'] as const satisfies readonly (keyof FitSpec)[];
const DATA_KEYS = ['file', 'x', 'y', 'sigma', 'sigmaX', 'weight', 'count', 'sigmaMode', 'where', 'exclude', 'delimiter', 'decimal', 'badRows', 'groupBy'] as const satisfies readonly (keyof DataSpec)[];
const MODEL_KEYS = ['name', 'builtin', 'polynomial', 'formula', 'params', 'solver', 'shared', 'loss', 'lossScale'] as const satisfies readonly (keyof ModelSpec)[];
const PARAM_KEYS = ['start', 'min', 'max', 'fixed'] as const satisfies readonly (keyof ParamSpec)[];
const SOLVER_KEYS = ['maxIterations', 'multiStart', 'seconds'] as const satisfies readonly (keyof SolverSpec)[];
const EXCLUDE_KEYS = ['row', 'reason'] as const satisfies readonly (keyof ExcludeSpec)[];
type Exact<T, L extends readonly unknown[]> = [Exclude<keyof T, L[number]>] extends [never] ? true : { missing: Exclude<keyof T, L[number]> };
const exact: [
  Exact<FitSpec, typeof FIT_KEYS>,
  Exact<DataSpec, typeof DATA_KEYS>,
  Exact<ModelSpec, typeof MODEL_KEYS>,
  Exact<ParamSpec, typeof PARAM_KEYS>,
  Exact<SolverSpec, typeof SOLVER_KEYS>,
  Exact<ExcludeSpec, typeof EXCLUDE_KEYS>,
  Exact<Thresholds, typeof THRESHOLD_KEYS>,
] = [true, true, true, true, true, true, true];

/** Member names of an exported interface in report.ts, read from its text (a second, run-time check of the lists above). */
function interfaceKeys(name: string): string[] {
  const text = fs.readFileSync(path.join(root, 'src', 'engine', 'report.ts'), 'utf8');
  const m = new RegExp(`export interface ${name} \\{([\\s\\S]*?)\\n\\}`).exec(text);
  assert.ok(m, `interface ${name} not found in report.ts`);
  return [...m[1].matchAll(/^\s{2}(\w+)\??:/gm)].map((x) => x[1]);
}

function ajv(): Ajv {
  const a = new Ajv({ allErrors: true, strict: true, strictRequired: false, allowUnionTypes: true }) // oneOf: [{ required: [k] }] names properties defined beside it;
  // editor-only annotations VS Code reads
  a.addVocabulary(['enumDescriptions', 'markdownDescription', 'defaultSnippets', 'allowComments', 'allowTrailingCommas']);
  return a;
}

const modelItem = () => specSchema.properties.models.items;

describe('schema: fitspec.schema.json', () => {
  it('is exactly what schema/generate.ts produces (regenerate with npx tsx schema/generate.ts)', () => {
    assert.strictEqual(fs.readFileSync(path.join(root, 'schema', 'fitspec.schema.json'), 'utf8'), schemaText(fitspecSchema()));
    assert.strictEqual(fs.readFileSync(path.join(root, 'schema', 'fitreport.schema.json'), 'utf8'), schemaText(fitreportSchema()));
  });

  it('tells VS Code that spec files may have comments and trailing commas', () => {
    assert.strictEqual(specSchema.allowComments, true);
    assert.strictEqual(specSchema.allowTrailingCommas, true);
  });

  it('the type-level key lists are exhaustive', () => {
    assert.deepStrictEqual(exact, [true, true, true, true, true, true, true]);
  });

  it('lists every key of the contract types (report.ts), and no other (besides $schema)', () => {
    assert.deepStrictEqual(interfaceKeys('FitSpec').sort(), [...FIT_KEYS].sort());
    assert.deepStrictEqual(interfaceKeys('DataSpec').sort(), [...DATA_KEYS].sort());
    assert.deepStrictEqual(interfaceKeys('ModelSpec').sort(), [...MODEL_KEYS].sort());
    assert.deepStrictEqual(interfaceKeys('ParamSpec').sort(), [...PARAM_KEYS].sort());
    assert.deepStrictEqual(interfaceKeys('SolverSpec').sort(), [...SOLVER_KEYS].sort());
    assert.deepStrictEqual(interfaceKeys('Thresholds').sort(), [...THRESHOLD_KEYS].sort());
    const keys = (s: { properties: object }) => Object.keys(s.properties).sort();
    assert.deepStrictEqual(keys(specSchema), ['$schema', ...FIT_KEYS].sort());
    assert.deepStrictEqual(keys(specSchema.properties.data), [...DATA_KEYS].sort());
    assert.deepStrictEqual(keys(modelItem()), [...MODEL_KEYS].sort());
    assert.deepStrictEqual(keys(modelItem().properties.params.additionalProperties), [...PARAM_KEYS].sort());
    assert.deepStrictEqual(keys(modelItem().properties.solver), [...SOLVER_KEYS].sort());
    assert.deepStrictEqual(keys(specSchema.properties.data.properties.exclude.items), [...EXCLUDE_KEYS].sort());
    assert.deepStrictEqual(keys(specSchema.properties.thresholds), [...THRESHOLD_KEYS].sort());
  });

  it('closes every object (additionalProperties false or a schema) and describes every property', () => {
    const missing: string[] = [];
    const open: string[] = [];
    const walk = (s: unknown, where: string) => {
      if (Array.isArray(s)) return s.forEach((x, i) => walk(x, `${where}[${i}]`));
      if (typeof s !== 'object' || s === null) return;
      const o = s as Record<string, unknown>;
      if (o.properties) {
        if (o.additionalProperties === undefined) open.push(where);
        for (const [k, v] of Object.entries(o.properties as Record<string, Record<string, unknown>>)) {
          if (typeof v.description !== 'string' || v.description.length < 3) missing.push(`${where}.${k}`);
        }
      }
      for (const [k, v] of Object.entries(o)) if (k !== 'enum' && k !== 'default') walk(v, `${where}/${k}`);
    };
    walk(specSchema, 'fitspec');
    walk(reportSchema, 'fitreport');
    assert.deepStrictEqual(missing, [], 'properties without a description');
    assert.deepStrictEqual(open, [], 'objects without additionalProperties');
  });

  it('the built-in enum equals the catalogue ids, and the checker knows the same parameter names', () => {
    assert.deepStrictEqual(modelItem().properties.builtin.enum, Object.keys(BUILTINS));
    assert.deepStrictEqual([...BUILTIN_IDS].sort(), Object.keys(BUILTINS).sort());
    for (const id of BUILTIN_IDS) assert.deepStrictEqual([...BUILTIN_PARAMS[id]], BUILTINS[id].params, id);
    // the DESIGN.md catalogue table, in its order
    assert.deepStrictEqual(BUILTIN_IDS, [
      'linear', 'exponential', 'exponential_offset', 'exponential_base', 'double_exponential', 'logarithmic', 'power',
      'michaelis_menten', 'hill', 'logistic3', 'logistic4', 'logistic5', 'gompertz', 'richards', 'weibull_growth',
      'asymptotic', 'gaussian', 'lorentzian', 'arrhenius', 'steinhart_hart',
    ]);
    assert.strictEqual(modelItem().properties.builtin.enumDescriptions.length, BUILTIN_IDS.length);
  });

  it('defaults equal DEFAULTS and DEFAULT_THRESHOLDS', () => {
    const d = specSchema.properties.data.properties;
    assert.strictEqual(specSchema.properties.confidence.default, DEFAULTS.confidence);
    assert.strictEqual(d.delimiter.default, DEFAULTS.data.delimiter);
    assert.strictEqual(d.decimal.default, DEFAULTS.data.decimal);
    assert.strictEqual(d.badRows.default, DEFAULTS.data.badRows);
    assert.strictEqual(d.sigmaMode.default, DEFAULTS.data.sigmaMode);
    const s = modelItem().properties.solver.properties;
    assert.strictEqual(s.maxIterations.default, DEFAULTS.solver.maxIterations);
    assert.strictEqual(s.multiStart.default, DEFAULTS.solver.multiStart);
    assert.strictEqual(s.seconds.default, DEFAULTS.solver.seconds);
    assert.strictEqual(DEFAULTS.confidence, 0.95);
    assert.strictEqual(DEFAULTS.solver.seconds, 20);
    for (const k of THRESHOLD_KEYS) assert.strictEqual(specSchema.properties.thresholds.properties[k].default, DEFAULT_THRESHOLDS[k], k);
    // the normalised spec uses the same defaults
    const v = validateSpec({ data: { file: 'a.csv', x: 'x', y: 'y' }, models: [{ name: 'm', polynomial: 1 }] }, { file: 'a.fitspec.json' });
    assert.ok(v.spec);
    assert.strictEqual(v.spec.confidence, specSchema.properties.confidence.default);
    assert.strictEqual(v.spec.data.delimiter, d.delimiter.default);
    assert.strictEqual(v.spec.data.decimal, d.decimal.default);
    assert.strictEqual(v.spec.data.badRows, d.badRows.default);
    assert.strictEqual(v.spec.data.sigmaMode, d.sigmaMode.default);
    assert.deepStrictEqual(v.spec.models[0].solver, { maxIterations: s.maxIterations.default, multiStart: s.multiStart.default, seconds: s.seconds.default });
  });

  const validate = ajv().compile(specSchema);
  const designExample = `{
    "title": "Culture B optical density",
    "data": { "file": "culture-b.csv", "x": "hours", "y": "od600", "sigma": "od_sd",
      "where": "hours <= 48 and reactor == 2", "exclude": [{ "row": 17, "reason": "bubble in cuvette" }] },
    "models": [
      { "name": "logistic", "builtin": "logistic3" },
      { "name": "cubic", "polynomial": 3 },
      { "name": "mine", "formula": "K / (1 + exp(-r*(x - t0)))",
        "params": { "K": { "start": 2, "min": 0 }, "r": { "start": 0.3 }, "t0": { "start": 12 } } }
    ],
    "confidence": 0.95, "predict": [24, 60], "solveFor": [1.0],
    "output": "results/culture-b.fitresult.json",
    "expect": { "logistic": { "K": { "value": 1.93, "tol": 0.02 } } },
  }`;

  it('accepts the DESIGN.md example and every demo spec', () => {
    assert.ok(validate(parseJsonc(designExample)), JSON.stringify(validate.errors));
    const dir = path.join(root, 'examples');
    const files = fs.readdirSync(dir).filter((f) => f.endsWith('.fitspec.json'));
    assert.ok(files.length >= 3, 'demo specs present');
    for (const f of files) assert.ok(validate(parseJsonc(fs.readFileSync(path.join(dir, f), 'utf8'))), `${f}: ${JSON.stringify(validate.errors)}`);
  });

  // Each broken spec must be rejected by both the schema and validateSpec (the checker is at least as strict).
  const base = () => ({ data: { file: 'a.csv', x: 'hours', y: 'od' } as Record<string, unknown>, models: [{ name: 'm', builtin: 'logistic3' }] as Record<string, unknown>[] } as Record<string, unknown>);
  const broken: [string, (s: Record<string, unknown>) => void][] = [
    ['unknown top-level key', (s) => (s.modles = [])],
    ['unknown data key', (s) => ((s.data as Record<string, unknown>).delimter = ',')],
    ['no data', (s) => delete s.data],
    ['no models', (s) => delete s.models],
    ['empty models', (s) => (s.models = [])],
    ['two model kinds', (s) => ((s.models as Record<string, unknown>[])[0].polynomial = 2)],
    ['no model kind', (s) => delete (s.models as Record<string, unknown>[])[0].builtin],
    ['unknown builtin', (s) => ((s.models as Record<string, unknown>[])[0].builtin = 'logistic7')],
    ['negative degree', (s) => (s.models = [{ name: 'p', polynomial: -1 }])],
    ['fractional degree', (s) => (s.models = [{ name: 'p', polynomial: 1.5 }])],
    ['degree 21', (s) => (s.models = [{ name: 'p', polynomial: 21 }])],
    ['model without name', (s) => (s.models = [{ builtin: 'linear' }])],
    ['confidence 95', (s) => (s.confidence = 95)],
    ['confidence 1', (s) => (s.confidence = 1)],
    ['bad delimiter', (s) => ((s.data as Record<string, unknown>).delimiter = '|')],
    ['exclude row 0', (s) => ((s.data as Record<string, unknown>).exclude = [{ row: 0, reason: 'x' }])],
    ['exclude without reason', (s) => ((s.data as Record<string, unknown>).exclude = [{ row: 3 }])],
    ['expect with tol and rel', (s) => (s.expect = { m: { K: { value: 1, tol: 0.1, rel: 0.1 } } })],
    ['expect without tolerance', (s) => (s.expect = { m: { K: { value: 1 } } })],
    ['unknown threshold', (s) => (s.thresholds = { paramCorr: 0.9 })],
    ['unknown param key', (s) => ((s.models as Record<string, unknown>[])[0].params = { K: { strat: 1 } })],
    ['solver seconds 0', (s) => ((s.models as Record<string, unknown>[])[0].solver = { seconds: 0 })],
    ['solveFor text', (s) => (s.solveFor = ['1'])],
  ];
  for (const [what, mutate] of broken) {
    it(`rejects: ${what} (schema and validateSpec agree)`, () => {
      const s = base();
      mutate(s);
      assert.strictEqual(validate(s), false, 'schema accepted it');
      const v = validateSpec(s, { file: 'a.fitspec.json' });
      assert.strictEqual(v.spec, null, 'validateSpec accepted it');
      assert.ok(v.problems.some((p) => p.severity === 'error'));
    });
  }
  it('accepts the base spec (both)', () => {
    assert.ok(validate(base()));
    assert.ok(validateSpec(base(), { file: 'a.fitspec.json' }).spec);
  });
});

describe('schema: fitreport.schema.json', () => {
  const validate = ajv().compile(reportSchema);

  it('accepts every committed demo results file (real reports of the engine)', () => {
    const dir = path.join(root, 'examples', 'results');
    const files = fs.readdirSync(dir).filter((f) => f.endsWith('.json'));
    assert.ok(files.length >= 3);
    for (const f of files) assert.ok(validate(JSON.parse(fs.readFileSync(path.join(dir, f), 'utf8'))), `${f}: ${JSON.stringify(validate.errors?.slice(0, 3))}`);
  });

  it('accepts an ErrorReport and rejects malformed reports', () => {
    const { problems } = parseSpecText('{ "data": 1,, }', 'x.fitspec.json');
    const err = { version: 1, spec: 'x.fitspec.json', error: { message: problems[0].message, location: problems[0].location, problems } };
    assert.ok(validate(err), JSON.stringify(validate.errors));
    assert.strictEqual(validate({ version: 2, spec: 'x', error: { message: 'm' } }), false);
    assert.strictEqual(validate({ version: 1, spec: 'x', error: { message: 'm', extra: 1 } }), false);
    const dir = path.join(root, 'examples', 'results');
    const f = fs.readdirSync(dir).find((n) => n.endsWith('.json')) as string;
    const good = JSON.parse(fs.readFileSync(path.join(dir, f), 'utf8'));
    const bad = structuredClone(good);
    bad.models[0].status = 'maybe';
    assert.strictEqual(validate(bad), false);
    const bad2 = structuredClone(good);
    delete bad2.meta.dataHash;
    assert.strictEqual(validate(bad2), false);
  });
});

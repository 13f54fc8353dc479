// Fit-spec parsing (JSONC), path location and validation: every bad-input case names the problem, its JSON path and
// its line:column; good specs normalise with defaults filled.
import * as assert from 'assert';
import * as path from 'path';
import fc from 'fast-check';
import { locatePath, locateInString, parseSpecText, validateSpec, type NormalizedSpec } from '../../src/engine/spec';
import type { Problem } from '../../src/engine/report';

const FILE = 'culture-b.fitspec.json';
const ROOT = path.resolve('spec-test-root');
const SPEC = path.join(ROOT, FILE);
const COLUMNS = ['hours', 'od600', 'od_sd', 'reactor', 'OD 600', 'temp_c'];

/** validate text; returns problems and spec */
function check(text: string, opts: { columns?: string[] | null } = {}) {
  const parsed = parseSpecText(text, FILE);
  assert.deepStrictEqual(parsed.problems, [], 'test spec must parse');
  return validateSpec(parsed.raw, { file: SPEC, text, columns: opts.columns === null ? undefined : opts.columns ?? COLUMNS, workspaceRoot: ROOT });
}

/** the single problem with this code (fails listing all problems otherwise) */
function one(problems: Problem[], code: string): Problem {
  const found = problems.filter((p) => p.code === code);
  assert.strictEqual(found.length, 1, `expected one '${code}', got: ${JSON.stringify(problems.map((p) => [p.code, p.message]), null, 1)}`);
  return found[0];
}

function lineColOf(text: string, needle: string, occurrence = 0): { line: number; column: number } {
  let at = -1;
  for (let k = 0; k <= occurrence; k++) at = text.indexOf(needle, at + 1);
  assert.ok(at >= 0, `'${needle}' in text`);
  const before = text.slice(0, at).split('\n');
  return { line: before.length, column: before[before.length - 1].length + 1 };
}

/** a spec with `models` and `extra` top-level text spliced in */
function spec(models: string, extra = '', data = '"file": "culture-b.csv", "x": "hours", "y": "od600"'): string {
  return `{\n  "data": { ${data} },\n  "models": [\n    ${models}\n  ]${extra ? ',\n  ' + extra : ''}\n}\n`;
}

describe('spec: parseSpecText', () => {
  it('accepts comments and trailing commas', () => {
    const r = parseSpecText('{\n // a comment\n "a": [1, 2,], /* block */\n "b": { "c": 3, },\n}', FILE);
    assert.deepStrictEqual(r.problems, []);
    // objects come without a prototype (no key of a spec can reach Object.prototype): compare the plain JSON
    assert.deepStrictEqual(JSON.parse(JSON.stringify(r.raw)), { a: [1, 2], b: { c: 3 } });
    assert.strictEqual(Object.getPrototypeOf(r.raw), null);
  });

  it('reports a stray comma with line, column, file and the fix', () => {
    const text = '{\n  "data": {\n    "file": "x.csv",\n    "x": "hours",,\n  }\n}';
    const r = parseSpecText(text, FILE);
    assert.strictEqual(r.problems.length, 1);
    const p = r.problems[0];
    assert.strictEqual(p.code, 'spec-syntax');
    assert.strictEqual(p.severity, 'error');
    assert.deepStrictEqual(p.location, { file: FILE, line: 4, column: 18 });
    assert.match(p.message, /unexpected ',' at line 4, column 18 of culture-b\.fitspec\.json — remove it/);
  });

  it('reports a missing comma, a missing colon, an unclosed string and an empty file', () => {
    const a = parseSpecText('{ "a": 1\n  "b": 2 }', FILE).problems;
    assert.strictEqual(a.length, 1);
    assert.match(a[0].message, /expected ',' .* at line 2, column 3/);
    const b = parseSpecText('{ "a" 1 }', FILE).problems;
    assert.match(b[0].message, /expected ':' .*line 1, column 7/);
    const c = parseSpecText('{ "a": "x }', FILE).problems;
    assert.match(c[0].message, /unclosed string at line 1, column 8/);
    const d = parseSpecText('  \n', FILE).problems;
    assert.match(d[0].message, /culture-b\.fitspec\.json is empty/);
  });

  it('never throws on garbage input', () => {
    for (const t of ['}', '{{{{', '[1,2', '"\\u12"', '\u0000\u0001', '{"a":1}}', '/*', 'null', '{"a": 01}']) {
      const r = parseSpecText(t, FILE);
      assert.ok(Array.isArray(r.problems));
    }
    // a non-object parses but fails validation, with a clear message
    const v = validateSpec(parseSpecText('[1, 2]', FILE).raw, { file: FILE });
    assert.strictEqual(v.spec, null);
    assert.match(v.problems[0].message, /must be a JSON object/);
  });
});

describe('spec: locatePath', () => {
  const text = '{\n  "models": [\n    { "name": "a", "params": { "K": { "start": 2 } } }\n  ],\n  "x": "he\\"llo"\n}';
  it('points at the value of a property, 1-based', () => {
    const loc = locatePath(text, ['models', 0, 'params', 'K', 'start']);
    assert.ok(loc);
    assert.strictEqual(loc.line, 3);
    assert.strictEqual(text.substr(loc.offset, loc.length), '2');
    assert.strictEqual(loc.column, text.split('\n')[2].indexOf('2') + 1);
    const obj = locatePath(text, ['models', 0]);
    assert.ok(obj);
    assert.strictEqual(text.charAt(obj.offset), '{');
  });
  it('returns null for a path that does not exist, and maps characters inside strings across escapes', () => {
    assert.strictEqual(locatePath(text, ['models', 3]), null);
    assert.strictEqual(locatePath('{ broken', ['a']), null);
    const l = locateInString(text, ['x'], 3); // decoded 'he"l' -> index 3 is 'l', after the escape
    assert.ok(l);
    assert.strictEqual(text.charAt(l.offset), 'l');
  });
  it('handles CRLF line ends', () => {
    const t = '{\r\n  "a": 1,\r\n  "b": 2\r\n}';
    const loc = locatePath(t, ['b']);
    assert.deepStrictEqual([loc?.line, loc?.column], [3, 8]);
  });
});

describe('spec: validateSpec normalises', () => {
  it('fills defaults, binds a string x to the variable x and resolves paths', () => {
    const r = check(spec('{ "name": "logistic", "builtin": "logistic3" }, { "name": "cubic", "polynomial": 3 }', '"output": "results/b.json"'));
    assert.deepStrictEqual(r.problems, []);
    const s = r.spec as NormalizedSpec;
    assert.deepStrictEqual({ ...s.data.x }, { x: 'hours' });
    assert.strictEqual(s.data.file, path.join(ROOT, 'culture-b.csv'));
    assert.strictEqual(s.data.fileGiven, 'culture-b.csv');
    assert.strictEqual(s.output, path.join(ROOT, 'results', 'b.json'));
    assert.strictEqual(s.outputGiven, 'results/b.json');
    assert.strictEqual(s.confidence, 0.95);
    assert.strictEqual(s.data.delimiter, 'auto');
    assert.strictEqual(s.data.decimal, '.');
    assert.strictEqual(s.data.badRows, 'drop');
    assert.strictEqual(s.data.sigmaMode, 'relative');
    assert.deepStrictEqual(s.data.exclude, []);
    assert.deepStrictEqual(s.predict, []);
    assert.deepStrictEqual(s.solveFor, []);
    assert.deepStrictEqual(s.models.map((m) => [m.name, m.kind, m.index]), [['logistic', 'builtin', 0], ['cubic', 'polynomial', 1]]);
    assert.strictEqual(s.models[0].solver.seconds, 20);
    assert.strictEqual(s.models[0].params, undefined, 'params stays absent when not given (a formula then fits every name)');
  });

  it('keeps several variables, backticks a column name that is not an identifier, and accepts predict objects', () => {
    const r = check(
      spec('{ "name": "m", "formula": "a + b*t + c*T", "params": { "a": {}, "b": {}, "c": { "start": 0 } } }', '"predict": [{ "t": 1, "T": 300 }]', '"file": "d.csv", "x": { "t": "hours", "T": "temp_c + 273.15" }, "y": "OD 600"'),
    );
    assert.deepStrictEqual(r.problems, []);
    const s = r.spec as NormalizedSpec;
    assert.deepStrictEqual({ ...s.data.x }, { t: 'hours', T: 'temp_c + 273.15' });
    assert.strictEqual(s.data.y, '`OD 600`');
    assert.deepStrictEqual(JSON.parse(JSON.stringify(s.predict)), [{ t: 1, T: 300 }]);
  });

  it('validates without columns (no header known yet): syntax only', () => {
    const r = check(spec('{ "name": "m", "polynomial": 1 }', '', '"file": "d.csv", "x": "hourz", "y": "log(od600)"'), { columns: null });
    assert.deepStrictEqual(r.problems, []);
    assert.ok(r.spec);
  });
});

describe('spec: validateSpec reports every problem with path and location', () => {
  it('unknown keys, with did-you-mean, located at the key', () => {
    const text = spec('{ "name": "m", "polynomial": 1, "parms": {} }', '"confidense": 0.9', '"file": "d.csv", "x": "hours", "y": "od600", "delimter": ";"');
    const r = check(text);
    assert.strictEqual(r.spec, null);
    const unknown = r.problems.filter((p) => p.code === 'spec-unknown-key');
    assert.deepStrictEqual(unknown.map((p) => p.path), [['confidense'], ['data', 'delimter'], ['models', 0, 'parms']]);
    assert.match(unknown[0].message, /unknown key 'confidense' in the spec — did you mean 'confidence'\?/);
    assert.match(unknown[1].message, /did you mean 'delimiter'\?/);
    assert.match(unknown[2].message, /did you mean 'params'\?/);
    assert.deepStrictEqual(unknown[1].location, { file: SPEC, ...lineColOf(text, '"delimter"') });
  });

  it('wrong types and missing required keys, all at once', () => {
    const text = '{\n  "data": { "file": 3, "y": "od600" },\n  "models": [ { "name": "m", "polynomial": 1 } ],\n  "confidence": "high",\n  "title": 5\n}';
    const r = check(text);
    const codes = r.problems.map((p) => `${p.code}@${JSON.stringify(p.path)}`);
    assert.deepStrictEqual(codes.sort(), ['spec-required@["data","x"]', 'spec-type@["confidence"]', 'spec-type@["data","file"]', 'spec-type@["title"]'].sort());
    const file = r.problems.find((p) => p.path.join('.') === 'data.file') as Problem;
    assert.match(file.message, /data\.file must be a string.*not number 3/);
    assert.strictEqual(file.location?.line, 2);
    const x = r.problems.find((p) => p.code === 'spec-required') as Problem;
    assert.match(x.message, /missing data\.x/);
    assert.strictEqual(x.location?.line, 2, 'a missing key is located at its parent object');
  });

  it('models: missing, empty, name missing or duplicated, none or several kinds', () => {
    assert.match(one(check('{ "data": { "file": "a.csv", "x": "hours", "y": "od600" } }').problems, 'spec-required').message, /missing models/);
    assert.match(one(check(spec('')).problems, 'spec-required').message, /models is empty/);
    const text = spec('{ "name": "a", "builtin": "linear" },\n    { "name": "a", "polynomial": 2 },\n    { "builtin": "power" },\n    { "name": "c" },\n    { "name": "d", "polynomial": 1, "formula": "a*x" }');
    const r = check(text);
    const dup = one(r.problems, 'spec-duplicate-name');
    assert.deepStrictEqual(dup.path, ['models', 1, 'name']);
    assert.match(dup.message, /model name 'a' is already used by models\[0\]/);
    assert.strictEqual(dup.location?.line, lineColOf(text, '"name": "a"', 1).line);
    assert.deepStrictEqual(one(r.problems, 'spec-required').path, ['models', 2, 'name']);
    const kinds = r.problems.filter((p) => p.code === 'spec-model-kind');
    assert.strictEqual(kinds.length, 2);
    assert.deepStrictEqual(kinds[0].path, ['models', 3]);
    assert.match(kinds[0].message, /model 'c' needs one of "builtin".*"polynomial".*"formula"/);
    assert.match(kinds[1].message, /model 'd' gives "polynomial" and "formula" — keep exactly one/);
  });

  it('a built-in that does not exist, with did-you-mean', () => {
    const text = spec('{ "name": "m", "builtin": "logistc4" }');
    const p = one(check(text).problems, 'spec-unknown-builtin');
    assert.deepStrictEqual(p.path, ['models', 0, 'builtin']);
    assert.match(p.message, /unknown built-in model 'logistc4' — did you mean 'logistic4'\?/);
    assert.deepStrictEqual(p.location, { file: SPEC, ...lineColOf(text, '"logistc4"') });
  });

  it('built-in parameters: unknown name with did-you-mean; built-ins need a single x variable (of any name)', () => {
    const r = check(spec('{ "name": "m", "builtin": "logistic4", "params": { "ec5": { "start": 1 } } }'));
    const p = one(r.problems, 'spec-unknown-param');
    assert.deepStrictEqual(p.path, ['models', 0, 'params', 'ec5']);
    assert.match(p.message, /parameter 'ec5' is not a parameter of model 'm' — did you mean 'ec50'\?/);
    const r2 = check(spec('{ "name": "m", "builtin": "linear" }', '', '"file": "a.csv", "x": { "t": "hours", "T": "temp_c" }, "y": "od600"'));
    assert.match(one(r2.problems, 'spec-builtin-variable').message, /built-in model 'linear' needs a single x variable, but data.x binds 't', 'T'/);
    assert.deepStrictEqual(check(spec('{ "name": "m", "builtin": "linear" }', '', '"file": "a.csv", "x": { "t": "hours" }, "y": "od600"')).problems, []);
  });

  it('polynomial degree must be a non-negative whole number, with a single x variable', () => {
    for (const bad of ['-1', '2.5', '"3"', '21']) {
      const p = one(check(spec(`{ "name": "p", "polynomial": ${bad} }`)).problems, 'spec-polynomial-degree');
      assert.deepStrictEqual(p.path, ['models', 0, 'polynomial']);
      assert.match(p.message, bad === '21' ? /above the limit of 20/ : /the degree: a whole number/);
    }
    const r = check(spec('{ "name": "p", "polynomial": 2 }', '', '"file": "a.csv", "x": { "t": "hours", "T": "temp_c" }, "y": "od600"'));
    assert.match(one(r.problems, 'spec-polynomial-variables').message, /needs a single x variable.*'t', 'T'/);
    assert.deepStrictEqual(check(spec('{ "name": "p", "polynomial": 0 }')).problems, []);
  });

  it('a formula that does not parse: path to the formula and the column inside it', () => {
    const text = spec('{ "name": "f", "formula": "a * exp(-k*x" }');
    const p = one(check(text).problems, 'spec-formula');
    assert.deepStrictEqual(p.path, ['models', 0, 'formula']);
    assert.match(p.message, /the formula of model 'f' does not parse/);
    const start = lineColOf(text, '"a * exp(');
    assert.strictEqual(p.location?.line, start.line);
    assert.ok((p.location?.column as number) > start.column, 'column points inside the formula');
  });

  it('params declared: an undeclared formula parameter is named (typo), a declared one absent from the formula gets did-you-mean', () => {
    const text = spec('{ "name": "mine", "formula": "K / (1 + exp(-r*(x - t0)))", "params": { "K": { "start": 2 }, "r": {}, "t_0": {} } }');
    const r = check(text);
    const und = one(r.problems, 'spec-undeclared-param');
    assert.deepStrictEqual(und.path, ['models', 0, 'formula']);
    assert.match(und.message, /uses 't0', which params does not declare — did you mean 't_0'\?/);
    const t0 = lineColOf(text, 't0)');
    assert.deepStrictEqual(und.location, { file: SPEC, ...t0 }, 'located at the parameter inside the formula');
    const unk = one(r.problems, 'spec-unknown-param');
    assert.deepStrictEqual(unk.path, ['models', 0, 'params', 't_0']);
    assert.match(unk.message, /parameter 't_0' is not in the formula of model 'mine' — did you mean 't0'\?/);
    // without params every name is a parameter: no problem
    assert.deepStrictEqual(check(spec('{ "name": "mine", "formula": "K / (1 + exp(-r*(x - t0)))" }')).problems, []);
  });

  it('a parameter named like a column is a warning (the spec stays usable)', () => {
    const r = check(spec('{ "name": "m", "formula": "a + reactor*x" }'));
    const p = one(r.problems, 'spec-param-named-like-column');
    assert.strictEqual(p.severity, 'warning');
    assert.match(p.message, /'reactor' in the formula of model 'm' is fitted as a parameter, but it is also a column/);
    assert.ok(r.spec);
  });

  it("a formula in x while data.x binds other names is a warning ('x' would be a parameter)", () => {
    const r = check(spec('{ "name": "m", "formula": "a*exp(-k*x)" }', '', '"file": "d.csv", "x": { "t": "hours" }, "y": "od600"'));
    const p = one(r.problems, 'spec-param-like-variable');
    assert.strictEqual(p.severity, 'warning');
    assert.match(p.message, /uses 'x', but data\.x binds 't'/);
  });

  it('bounds: min > max, start outside [min, max], fixed without start; non-object param', () => {
    const text = spec('{ "name": "m", "formula": "a*exp(b*x) + c + d", "params": { "a": { "min": 5, "max": 1 }, "b": { "start": -1, "min": 0 }, "c": { "fixed": true }, "d": 3 } }');
    const r = check(text);
    assert.deepStrictEqual(one(r.problems, 'spec-bounds').path, ['models', 0, 'params', 'a', 'min']);
    assert.match(one(r.problems, 'spec-bounds').message, /min 5 is greater than max 1/);
    const s = one(r.problems, 'spec-start-outside');
    assert.deepStrictEqual(s.path, ['models', 0, 'params', 'b', 'start']);
    assert.match(s.message, /start -1 lies outside \[0, ∞\]/);
    assert.deepStrictEqual(s.location, { file: SPEC, ...lineColOf(text, '-1') });
    assert.match(one(r.problems, 'spec-fixed-no-start').message, /parameter 'c' of model 'm' is fixed but has no start/);
    const d = r.problems.find((p) => p.path.join('.') === 'models.0.params.d') as Problem;
    assert.match(d.message, /for a start value write \{ "start": 3 \}/);
  });

  it('columns that do not exist (did-you-mean among columns), in x, y, sigma, weight and where', () => {
    const text = spec('{ "name": "m", "polynomial": 1 }', '', '"file": "d.csv", "x": "hour", "y": "log(od60)", "sigma": "od_sdd", "where": "reactr == 2 and y > 0"');
    const r = check(text);
    const cols = r.problems.filter((p) => p.code === 'spec-unknown-column');
    assert.deepStrictEqual(cols.map((p) => p.path), [['data', 'x'], ['data', 'y'], ['data', 'sigma'], ['data', 'where']]);
    assert.match(cols[0].message, /data\.x uses 'hour', which is not a column of d\.csv/);
    assert.match(cols[0].message, /did you mean 'hours'\?/);
    assert.match(cols[1].message, /'od60'.*did you mean 'od600'\?/);
    assert.match(cols[2].message, /did you mean 'od_sd'\?/);
    assert.match(cols[3].message, /'reactr'.*did you mean 'reactor'\?/);
    assert.deepStrictEqual(cols[1].location, { file: SPEC, ...lineColOf(text, 'od60)') });
    // y and x variables are allowed in where and weight
    assert.deepStrictEqual(check(spec('{ "name": "m", "polynomial": 1 }', '', '"file": "d.csv", "x": "hours", "y": "od600", "weight": "1/y^2", "where": "x < 10"')).problems, []);
  });

  it('a column name with a space must be backticked inside an expression (hint names it)', () => {
    const p = one(check(spec('{ "name": "m", "polynomial": 1 }', '', '"file": "d.csv", "x": "hours", "y": "log(OD 600)"')).problems, 'spec-expression');
    assert.deepStrictEqual(p.path, ['data', 'y']);
    assert.match(p.message, /is not a valid expression/);
    assert.match(p.message, /backticks: `OD 600`/);
    assert.deepStrictEqual(check(spec('{ "name": "m", "polynomial": 1 }', '', '"file": "d.csv", "x": "hours", "y": "log(`OD 600`)"')).problems, []);
  });

  it('a column with a dash read as a subtraction gets a backtick hint', () => {
    const r = check(spec('{ "name": "m", "polynomial": 1 }', '', '"file": "d.csv", "x": "hours", "y": "log(od-600)"'), { columns: ['hours', 'od-600'] });
    assert.match(one(r.problems, 'spec-unknown-column').message, /uses 'od'.*write the column `od-600` in backticks/);
    assert.deepStrictEqual(check(spec('{ "name": "m", "polynomial": 1 }', '', '"file": "d.csv", "x": "hours", "y": "od-600"'), { columns: ['hours', 'od-600'] }).problems, []);
  });

  it('an invalid where expression', () => {
    const p = one(check(spec('{ "name": "m", "polynomial": 1 }', '', '"file": "d.csv", "x": "hours", "y": "od600", "where": "hours <= "')).problems, 'spec-expression');
    assert.deepStrictEqual(p.path, ['data', 'where']);
    assert.match(p.message, /data\.where "hours <= " is not a valid expression/);
  });

  it('sigma and weight together; decimal and delimiter both ","; bad enum values', () => {
    const r = check(spec('{ "name": "m", "polynomial": 1 }', '', '"file": "d.csv", "x": "hours", "y": "od600", "sigma": "od_sd", "weight": "1/y", "decimal": ",", "delimiter": ",", "badRows": "skip"'));
    assert.match(one(r.problems, 'spec-sigma-weight').message, /both "sigma" and "weight" — keep one/);
    assert.match(one(r.problems, 'spec-delimiter').message, /with decimal "," the delimiter cannot also be ","/);
    const e = r.problems.find((p) => p.path.join('.') === 'data.badRows') as Problem;
    assert.match(e.message, /must be one of "drop", "fail"/);
  });

  it('confidence outside (0, 1) with a hint for percentages', () => {
    for (const [v, re] of [['95', /did you mean 0\.95\?/], ['0', /strictly between 0 and 1/], ['1', /strictly between 0 and 1/], ['-0.5', /strictly between/]] as const) {
      const p = one(check(spec('{ "name": "m", "polynomial": 1 }', `"confidence": ${v}`)).problems, 'spec-range');
      assert.deepStrictEqual(p.path, ['confidence']);
      assert.match(p.message, re);
    }
  });

  it('predict values and solveFor numbers', () => {
    const r = check(spec('{ "name": "m", "polynomial": 1 }', '"predict": [1, "2", { "t": 3 }], "solveFor": [1, "x"]'));
    const bad = r.problems.map((p) => `${p.code}@${p.path.join('.')}`);
    assert.ok(bad.includes('spec-type@predict.1'), bad.join());
    assert.ok(bad.includes('spec-predict@predict.2.t'), bad.join());
    assert.ok(bad.includes('spec-type@solveFor.1'), bad.join());
    const multi = check(spec('{ "name": "m", "formula": "a*t + b*T" }', '"predict": [3, { "t": 1 }], "solveFor": [1]', '"file": "d.csv", "x": { "t": "hours", "T": "temp_c" }, "y": "od600"'));
    assert.match(multi.problems.find((p) => p.path.join('.') === 'predict.0')?.message ?? '', /write an object \{ "t": …, "T": … \}/);
    assert.match(multi.problems.find((p) => p.path.join('.') === 'predict.1')?.message ?? '', /no value for variable 'T'/);
    assert.match(one(multi.problems, 'spec-solve-for').message, /needs a single x variable/);
  });

  it('exclude rows: positive whole numbers with a reason; duplicates warned', () => {
    const text = spec('{ "name": "m", "polynomial": 1 }', '', '"file": "d.csv", "x": "hours", "y": "od600", "exclude": [{ "row": 0, "reason": "a" }, { "row": 2.5, "reason": "b" }, { "row": 3 }, { "row": 4, "reason": "" }, { "row": 5, "reason": "c" }, { "row": 5, "reason": "d" }]');
    const r = check(text);
    const ex = r.problems.filter((p) => p.code === 'spec-exclude');
    assert.deepStrictEqual(ex.map((p) => [p.path.join('.'), p.severity]), [['data.exclude.0.row', 'error'], ['data.exclude.1.row', 'error'], ['data.exclude.5.row', 'warning']]);
    assert.match(ex[0].message, /positive whole number \(the first row after the header is 1\)/);
    assert.deepStrictEqual(one(r.problems, 'spec-required').path, ['data', 'exclude', 2, 'reason']);
    assert.ok(r.problems.some((p) => p.path.join('.') === 'data.exclude.3.reason' && /empty/.test(p.message)));
  });

  it('expect: unknown model or parameter (did-you-mean), value + exactly one of tol/rel', () => {
    const text = spec(
      '{ "name": "logistic", "builtin": "logistic3" }',
      '"expect": { "logistc": { "K": { "value": 1, "tol": 0.1 } }, "logistic": { "k": { "value": 1, "tol": 0.1 }, "r": { "value": 1 }, "x0": { "value": 1, "tol": 1, "rel": 0.1 }, "K": { "tol": 0.1 } } }',
    );
    const r = check(text);
    const ex = r.problems.filter((p) => p.code === 'spec-expect');
    assert.deepStrictEqual(ex.map((p) => p.path.join('.')), ['expect.logistc', 'expect.logistic.k', 'expect.logistic.r', 'expect.logistic.x0']);
    assert.match(ex[0].message, /model 'logistc', which is not in models — did you mean 'logistic'\?/);
    assert.match(ex[1].message, /parameter 'k', which model 'logistic' does not have — did you mean 'K'\?/);
    assert.match(ex[2].message, /needs "tol" \(absolute tolerance\) or "rel"/);
    assert.match(ex[3].message, /gives both "tol" and "rel"/);
    assert.deepStrictEqual(one(r.problems, 'spec-required').path, ['expect', 'logistic', 'K', 'value']);
    assert.deepStrictEqual(ex[0].location, { file: SPEC, ...lineColOf(text, '"logistc"') });
    const good = check(spec('{ "name": "logistic", "builtin": "logistic3" }', '"expect": { "logistic": { "K": { "value": 1.93, "tol": 0.02 }, "r": { "value": 0.3, "rel": 0.05 } } }'));
    assert.deepStrictEqual(good.problems, []);
    assert.deepStrictEqual(JSON.parse(JSON.stringify(good.spec?.expect)), { logistic: { K: { value: 1.93, tol: 0.02 }, r: { value: 0.3, rel: 0.05 } } });
  });

  it('output must stay inside the workspace and never be the data file or the spec', () => {
    const cases: [string, RegExp][] = [
      ['../elsewhere/out.json', /outside the workspace folder/],
      [path.resolve(ROOT, '..', 'x.json').split(path.sep).join('/'), /outside the workspace folder/],
      ['culture-b.csv', /is the data file/],
      ['./culture-b.fitspec.json', /is the spec file itself/],
      ['.', /outside the workspace folder/],
    ];
    for (const [out, re] of cases) {
      const p = one(check(spec('{ "name": "m", "polynomial": 1 }', `"output": ${JSON.stringify(out)}`)).problems, 'spec-output');
      assert.deepStrictEqual(p.path, ['output']);
      assert.match(p.message, re, out);
    }
    assert.ok(check(spec('{ "name": "m", "polynomial": 1 }', '"output": "results/deep/out.json"')).spec);
  });

  it('thresholds: known keys, numbers', () => {
    const r = check(spec('{ "name": "m", "polynomial": 1 }', '"thresholds": { "paramCorrelation": 0.95, "runP": 0.05, "cvRatio": "big" }'));
    const u = one(r.problems, 'spec-unknown-key');
    assert.match(u.message, /unknown key 'runP' in thresholds — did you mean 'runsP'\?/);
    assert.ok(r.problems.some((p) => p.path.join('.') === 'thresholds.cvRatio' && p.code === 'spec-type'));
    const ok = check(spec('{ "name": "m", "polynomial": 1 }', '"thresholds": { "paramCorrelation": 0.95 }'));
    assert.deepStrictEqual({ ...ok.spec?.thresholds }, { paramCorrelation: 0.95 });
  });

  it('solver settings: whole numbers and a positive budget', () => {
    const r = check(spec('{ "name": "m", "builtin": "gompertz", "solver": { "maxIterations": 0, "multiStart": 2.5, "seconds": -1, "tries": 3 } }'));
    const paths = r.problems.map((p) => `${p.code}@${p.path.join('.')}`).sort();
    assert.deepStrictEqual(paths, ['spec-range@models.0.solver.maxIterations', 'spec-range@models.0.solver.seconds', 'spec-type@models.0.solver.multiStart', 'spec-unknown-key@models.0.solver.tries']);
    const ok = check(spec('{ "name": "m", "builtin": "gompertz", "solver": { "maxIterations": 50, "seconds": 2 } }'));
    assert.deepStrictEqual(ok.spec?.models[0].solver, { maxIterations: 50, multiStart: 20, seconds: 2 });
  });

  it('variable names in data.x: plain names, not constants, functions or y', () => {
    const r = check(spec('{ "name": "m", "formula": "a*t" }', '', '"file": "d.csv", "x": { "t": "hours", "pi": "od_sd", "exp": "reactor", "y": "temp_c", "2t": "hours" }, "y": "od600"'));
    const v = r.problems.filter((p) => p.code === 'spec-variable').map((p) => p.path.join('.'));
    assert.deepStrictEqual(v, ['data.x.pi', 'data.x.exp', 'data.x.y', 'data.x.2t']);
  });

  it('gives the data file even when the spec has errors (to read the header and check columns in the same pass)', () => {
    const r = check(spec('{ "name": "m", "builtin": "nope" }', '', '"file": "sub/d.csv", "x": "hours", "y": "od600", "decimal": ","'), { columns: null });
    assert.strictEqual(r.spec, null);
    assert.deepStrictEqual(r.data, { file: path.join(ROOT, 'sub', 'd.csv'), fileGiven: 'sub/d.csv', delimiter: 'auto', decimal: ',' });
    assert.match(one(r.problems, 'spec-unknown-builtin').message, /unknown built-in model 'nope' \(available: linear, exponential/);
  });

  it('reports many problems at once in one pass', () => {
    const text = spec('{ "name": "m", "builtin": "nope" }, { "name": "m", "polynomial": -2 }', '"confidence": 2, "output": "../o.json", "thresholds": { "x": 1 }', '"file": "d.csv", "x": "hourz", "y": "od600", "decimal": ";"');
    const r = check(text);
    const codes = new Set<string>(r.problems.map((p) => p.code));
    for (const c of ['spec-unknown-builtin', 'spec-duplicate-name', 'spec-polynomial-degree', 'spec-range', 'spec-output', 'spec-unknown-key', 'spec-unknown-column', 'spec-type'])
      assert.ok(codes.has(c), `${c} in ${[...codes].join(', ')}`);
    for (const p of r.problems) assert.ok(p.location && p.location.line && p.location.column, `located: ${p.code}`);
  });
});

describe('spec: never throws (property tests, fast-check)', () => {
  const keys = ['data', 'models', 'file', 'x', 'y', 'name', 'builtin', 'polynomial', 'formula', 'params', 'start', 'min', 'max', 'fixed', 'expect', 'output', 'where', 'exclude', 'row', 'reason', 'confidence', 'predict', 'solveFor', 'thresholds', 'sigma', 'weight', 'value', 'tol', 'rel'];
  const value = fc.letrec((tie) => ({
    v: fc.oneof(
      { depthSize: 'small' },
      fc.constantFrom(null, true, false, 0, -1, 1.5, 1e308, '', 'x', 'hours', 'a*exp(-k*x)', 'log(', '`a b`', 'linear', 'logistic3', '../x', 'x <'),
      fc.double(),
      fc.string(),
      fc.array(tie('v'), { maxLength: 4 }),
      fc.dictionary(fc.oneof(fc.constantFrom(...keys), fc.string()), tie('v'), { maxKeys: 5 }),
    ),
  })).v;
  it('validateSpec returns problems for any JSON value, with or without columns and text', () => {
    fc.assert(
      fc.property(value, fc.boolean(), (raw, withColumns) => {
        const text = JSON.stringify(raw) ?? 'null';
        const r = validateSpec(raw, { file: SPEC, text, columns: withColumns ? COLUMNS : undefined, workspaceRoot: ROOT });
        assert.ok(Array.isArray(r.problems));
        if (r.spec === null) assert.ok(r.problems.some((p) => p.severity === 'error'));
      }),
      { numRuns: 400, seed: 7 },
    );
  });
  it('parseSpecText returns problems for any text', () => {
    fc.assert(
      fc.property(fc.oneof(fc.string(), fc.constantFrom('{', '{"a":', '{"a": [1,', '/*', '"')), (t) => {
        const r = parseSpecText(t, FILE);
        assert.ok(Array.isArray(r.problems));
        for (const p of r.problems) assert.ok(p.location && (p.location.line as number) >= 1);
      }),
      { numRuns: 400, seed: 7 },
    );
  });
});

describe('spec: round trip', () => {
  /** the FitSpec a NormalizedSpec stands for (internal fields dropped, paths as written) */
  function denormalize(s: NormalizedSpec): Record<string, unknown> {
    const { file: _abs, fileGiven, ...data } = s.data;
    return {
      ...(s.title !== undefined ? { title: s.title } : {}),
      data: { ...data, file: fileGiven },
      models: s.models.map(({ kind: _k, index: _i, ...m }) => m),
      confidence: s.confidence,
      predict: s.predict,
      solveFor: s.solveFor,
      ...(s.outputGiven !== undefined ? { output: s.outputGiven } : {}),
      expect: s.expect,
      thresholds: s.thresholds,
    };
  }
  it('validating the normalised spec again gives the same normalised spec (idempotent)', () => {
    const text = spec(
      '{ "name": "logistic", "builtin": "logistic3", "params": { "K": { "start": 2, "min": 0 } } }, { "name": "q", "polynomial": 2, "params": { "c0": { "start": 0, "fixed": true } } }, { "name": "f", "formula": "a*exp(-k*x)", "solver": { "multiStart": 5 } }',
      '"title": "t", "confidence": 0.9, "predict": [1, 2], "solveFor": [0.5], "output": "out/r.json", "expect": { "logistic": { "K": { "value": 2, "rel": 0.1 } } }, "thresholds": { "runsP": 0.05 }',
      '"file": "d.csv", "x": "hours", "y": "log(`OD 600`)", "sigma": "od_sd", "where": "reactor == 1", "exclude": [{ "row": 3, "reason": "spill" }], "sigmaMode": "absolute", "delimiter": ";", "decimal": ",", "badRows": "fail"',
    );
    const first = check(text);
    assert.deepStrictEqual(first.problems, []);
    const again = validateSpec(JSON.parse(JSON.stringify(denormalize(first.spec as NormalizedSpec))), { file: SPEC, columns: COLUMNS, workspaceRoot: ROOT });
    assert.deepStrictEqual(again.problems, []);
    assert.deepStrictEqual(again.spec, first.spec);
  });
});

describe('spec: the plot block (drawing choices only)', () => {
  const M = '{ "name": "line", "polynomial": 1 }';
  it('keeps scales, labels, units and bands as written', () => {
    const r = check(spec(M, '"plot": { "x": { "scale": "log", "label": "concentration", "unit": "ng/mL" }, "y": { "scale": "linear" }, "bands": ["confidence"] }'));
    assert.deepStrictEqual(r.problems, []);
    assert.deepStrictEqual(r.spec!.plot, { x: { scale: 'log', label: 'concentration', unit: 'ng/mL' }, y: { scale: 'linear' }, bands: ['confidence'] });
  });

  it('accepts an empty band list and leaves plot out when the spec has none', () => {
    assert.deepStrictEqual(check(spec(M, '"plot": { "bands": [] }')).spec!.plot, { bands: [] });
    assert.strictEqual(check(spec(M)).spec!.plot, undefined);
  });

  it('names the place and the allowed values of a wrong scale, an unknown key, a bad band and a duplicate', () => {
    const text = spec(M, '"plot": { "x": { "scale": "logarithmic", "units": "mM" }, "bands": ["prediction", "prediciton", "prediction"] }');
    const r = check(text);
    assert.strictEqual(r.spec, null);
    const scale = r.problems.find(p => p.path.join('.') === 'plot.x.scale')!;
    assert.match(scale.message, /one of "auto", "linear", "log", not .*logarithmic/);
    assert.strictEqual(scale.location?.line, lineColOf(text, '"logarithmic"').line);
    assert.ok(r.problems.some(p => p.code === 'spec-unknown-key' && p.path.join('.') === 'plot.x.units' && /unit/.test(p.message)), JSON.stringify(r.problems));
    const band = r.problems.find(p => p.path.join('.') === 'plot.bands.1')!;
    assert.match(band.message, /"confidence" or "prediction".*prediction/);
    assert.ok(r.problems.some(p => p.path.join('.') === 'plot.bands.2' && /twice/.test(p.message)));
  });

  it('rejects a plot that is not an object, and an axis that is not one', () => {
    assert.match(one(check(spec(M, '"plot": "log"')).problems, 'spec-type').message, /plot must be an object/);
    assert.match(one(check(spec(M, '"plot": { "y": true }')).problems, 'spec-type').message, /plot\.y must be an object/);
  });
});

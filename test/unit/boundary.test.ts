// The architecture's import boundaries (DESIGN.md "The spine"), enforced by a check rather than by good intentions:
// the engine never imports vscode or touches the DOM; the webview imports only types from the engine; the host
// never runs the solver on its own thread.
import * as assert from 'assert';
import * as fs from 'fs';
import * as path from 'path';

const repo = path.resolve(__dirname, '..', '..');

function files(dir: string): string[] {
  const out: string[] = [];
  for (const entry of fs.readdirSync(path.join(repo, dir), { withFileTypes: true })) {
    const rel = path.join(dir, entry.name);
    if (entry.isDirectory()) out.push(...files(rel));
    else if (entry.name.endsWith('.ts')) out.push(rel);
  }
  return out;
}

/** Every module specifier a file imports or requires, with whether it is a type-only import. */
function imports(file: string): { spec: string; typeOnly: boolean }[] {
  const text = fs.readFileSync(path.join(repo, file), 'utf8');
  const found: { spec: string; typeOnly: boolean }[] = [];
  for (const m of text.matchAll(/^\s*(import|export)\s+(type\s+)?[^'";]*?\s+from\s+['"]([^'"]+)['"]/gm)) found.push({ spec: m[3], typeOnly: !!m[2] });
  for (const m of text.matchAll(/^\s*import\s+['"]([^'"]+)['"]/gm)) found.push({ spec: m[1], typeOnly: false });
  for (const m of text.matchAll(/\brequire\(\s*['"]([^'"]+)['"]\s*\)/g)) found.push({ spec: m[1], typeOnly: false });
  for (const m of text.matchAll(/\bimport\(\s*['"]([^'"]+)['"]\s*\)/g)) found.push({ spec: m[1], typeOnly: false });
  return found;
}

function resolveRel(file: string, spec: string): string {
  return spec.startsWith('.') ? path.relative(repo, path.resolve(repo, path.dirname(file), spec)) : spec;
}

describe('architecture boundaries', () => {
  const engine = files('src/engine');
  const webview = files('webview');

  it('finds the sources it checks', () => {
    assert.ok(engine.length > 20, `expected the engine's sources, found ${engine.length}`);
    assert.ok(webview.length > 2, `expected the webview's sources, found ${webview.length}`);
  });

  it('the engine never imports vscode, the host, the webview or the CLI', () => {
    const bad: string[] = [];
    for (const f of engine) {
      for (const { spec } of imports(f)) {
        const target = resolveRel(f, spec);
        if (spec === 'vscode' || target.startsWith('src/host') || target.startsWith('webview') || target.startsWith('src/cli')) bad.push(`${f} imports ${spec}`);
      }
    }
    assert.deepStrictEqual(bad, []);
  });

  it('the engine uses no DOM globals', () => {
    const bad: string[] = [];
    for (const f of engine) {
      const code = fs.readFileSync(path.join(repo, f), 'utf8').replace(/\/\/.*$/gm, '').replace(/\/\*[\s\S]*?\*\//g, '');
      for (const g of ['document.', 'window.', 'HTMLElement', 'localStorage', 'navigator.']) if (code.includes(g)) bad.push(`${f} uses ${g}`);
    }
    assert.deepStrictEqual(bad, []);
  });

  it('the webview imports only types from the engine, never its solver or statistics code', () => {
    const bad: string[] = [];
    for (const f of webview) {
      for (const { spec, typeOnly } of imports(f)) {
        const target = resolveRel(f, spec);
        if (target.startsWith('src/engine') && !typeOnly) bad.push(`${f} imports ${spec} at run time`);
        if (spec === 'vscode') bad.push(`${f} imports vscode`);
      }
    }
    assert.deepStrictEqual(bad, []);
  });

  it('the extension host never imports the solver, the models or the statistics directly (they run in the worker)', () => {
    const bad: string[] = [];
    for (const f of files('src/host')) {
      for (const { spec, typeOnly } of imports(f)) {
        const target = resolveRel(f, spec);
        if (!typeOnly && /^src\/engine\/(solve|stats|models)(\/|$)/.test(target)) bad.push(`${f} imports ${spec}`);
        if (!typeOnly && /^src\/engine\/run(\.ts)?$/.test(target)) bad.push(`${f} imports the run layer (it belongs in src/worker.ts)`);
      }
    }
    assert.deepStrictEqual(bad, []);
  });
});

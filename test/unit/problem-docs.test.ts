// Every problem code the program can emit has a section in docs/problems.md, because the editor links each
// diagnostic's code to docs/problems.md#<code>. Codes are collected from the sources, so a new code without
// documentation fails here.
import * as assert from 'assert';
import * as fs from 'fs';
import * as path from 'path';

const repo = path.resolve(__dirname, '..', '..');

function sources(dir: string): string[] {
  const out: string[] = [];
  for (const e of fs.readdirSync(path.join(repo, dir), { withFileTypes: true })) {
    const rel = path.join(dir, e.name);
    if (e.isDirectory()) out.push(...sources(rel));
    else if (e.name.endsWith('.ts')) out.push(rel);
  }
  return out;
}

describe('problem documentation', () => {
  const docs = fs.readFileSync(path.join(repo, 'docs', 'problems.md'), 'utf8');
  const sections = new Set([...docs.matchAll(/^## ([a-z][a-z0-9-]+)\s*$/gm)].map(m => m[1]));
  const codes = new Map<string, string>();
  for (const f of [...sources('src/engine'), ...sources('src/host'), ...sources('src/cli'), 'src/worker.ts']) {
    const text = fs.readFileSync(path.join(repo, f), 'utf8');
    for (const m of text.matchAll(/(?:\bcode:\s*|\badd\(\s*)'([a-z][a-z0-9]*(?:-[a-z0-9]+)+|[a-z]{4,})'/g)) if (!codes.has(m[1])) codes.set(m[1], f);
  }

  it('finds the codes it checks', () => {
    for (const c of ['no-convergence', 'spec-unknown-column', 'bad-cell', 'influential-points']) assert.ok(codes.has(c), `expected to find code ${c} in the sources`);
  });

  it('documents every code the sources emit', () => {
    const missing = [...codes].filter(([c]) => !sections.has(c)).map(([c, f]) => `${c} (${f})`);
    assert.deepStrictEqual(missing, [], 'add a "## <code>" section to docs/problems.md for each');
  });
});

// The PROBLEMS table (src/engine/problems.ts) and docs/problems.md agree: every code in the table has a `## <code>`
// section whose lead names the same severities, and every documented code is in the table — the editor links each
// diagnostic's code to docs/problems.md#<code>. The sources are scanned too: every code literal they emit, and the
// severity written beside it, is one the table allows (the ProblemCode type already rejects an unknown code).
import * as assert from 'assert';
import * as fs from 'fs';
import * as path from 'path';
import { isProblemCode, PROBLEM_CODES, PROBLEMS, type ProblemSeverity } from '../../src/engine/problems';

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

/** The severities a section's bold lead names: "**Error.**", "**Warning or error.**", "**Info** (about …)", "**Check failure.**". */
function documentedSeverities(lead: string): ProblemSeverity[] | null {
  const m = /^\*\*([A-Za-z ]+?)\.?\*\*/.exec(lead);
  if (!m) return null;
  const text = m[1].toLowerCase();
  if (text === 'check failure') return ['check'];
  const words = text.split(/ or /);
  return words.every((w) => w === 'error' || w === 'warning' || w === 'info') ? (words as ProblemSeverity[]) : null;
}

describe('problem documentation', () => {
  const docs = fs.readFileSync(path.join(repo, 'docs', 'problems.md'), 'utf8');
  const sections = new Map<string, string>();
  for (const m of docs.matchAll(/^## ([a-z][a-z0-9-]+)\s*\n+(.*)$/gm)) sections.set(m[1], m[2]);
  const files = [...sources('src/engine'), ...sources('src/host'), ...sources('src/cli'), ...sources('src/shared'), 'src/worker.ts'];
  const texts = files.map((f) => ({ f, text: fs.readFileSync(path.join(repo, f), 'utf8') }));

  it('reads the table and the sections it checks', () => {
    assert.ok(PROBLEM_CODES.length >= 80, `${PROBLEM_CODES.length} codes in PROBLEMS`);
    for (const c of ['no-convergence', 'spec-unknown-column', 'bad-cell', 'influential-points', 'stale-results']) {
      assert.ok(isProblemCode(c), `${c} in PROBLEMS`);
      assert.ok(sections.has(c), `${c} documented`);
    }
    assert.ok(!isProblemCode('no-such-code') && !isProblemCode('toString'));
  });

  it('documents every code of the table, with the severities the table gives', () => {
    const missing = PROBLEM_CODES.filter((c) => !sections.has(c));
    assert.deepStrictEqual(missing, [], 'add a "## <code>" section to docs/problems.md for each');
    const wrong: string[] = [];
    for (const c of PROBLEM_CODES) {
      const doc = documentedSeverities(sections.get(c)!);
      const table = [...PROBLEMS[c].severity].sort().join(', ');
      if (!doc) wrong.push(`${c}: the section does not open with **Error.**, **Warning.**, **Info.**, **Error or warning.** or **Check failure.**`);
      else if ([...doc].sort().join(', ') !== table) wrong.push(`${c}: docs say ${doc.join(' or ')}, PROBLEMS says ${table}`);
      if (!PROBLEMS[c].title.trim()) wrong.push(`${c}: no title`);
    }
    assert.deepStrictEqual(wrong, []);
  });

  it('has every documented code in the table', () => {
    const extra = [...sections.keys()].filter((c) => !isProblemCode(c));
    assert.deepStrictEqual(extra, [], 'add a row to PROBLEMS in src/engine/problems.ts, or remove the section');
  });

  it('every code literal the sources emit is in the table, with a severity it allows', () => {
    const found = new Set<string>();
    const bad: string[] = [];
    for (const { f, text } of texts) {
      for (const m of text.matchAll(/(?:\bcode:\s*|\badd\(\s*)'([a-z][a-z0-9]*(?:-[a-z0-9]+)+|[a-z]{4,})'(?:,\s*severity:\s*'([a-z]+)')?/g)) {
        found.add(m[1]);
        if (!isProblemCode(m[1])) bad.push(`${m[1]} (${f}): not in PROBLEMS`);
        else {
          const allowed: readonly string[] = PROBLEMS[m[1]].severity;
          // check's own reasons are errors of `check`
          if (m[2] && !allowed.includes(m[2]) && !(m[2] === 'error' && allowed.includes('check')))
            bad.push(`${m[1]} (${f}): emitted as ${m[2]}, PROBLEMS allows ${allowed.join(', ')}`);
        }
      }
    }
    assert.ok(found.size >= 70, `the scan finds the emit sites (${found.size} codes)`);
    assert.deepStrictEqual(bad, []);
  });
});

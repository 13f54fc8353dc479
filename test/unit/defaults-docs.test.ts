// Every default figure stated in docs/fitspec.md and docs/problems.md equals DEFAULTS (src/engine/spec/defaults.ts),
// and the solvers, the analysis and the run layer read their budgets from DEFAULTS (one source of every default).
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as path from 'path';
import { DEFAULTS } from '../../src/engine/spec/defaults';
import { DEFAULT_MAX_ITERATIONS } from '../../src/engine/solve/lm';
import { ANALYSIS_DEFAULTS } from '../../src/engine/run';

const root = path.join(__dirname, '..', '..');
const read = (rel: string) => fs.readFileSync(path.join(root, rel), 'utf8');

/** the default column of the row of `key` in the first markdown table after `heading` */
function tableDefault(md: string, heading: string, key: string): string {
  const at = md.indexOf(heading);
  assert.ok(at >= 0, `heading ${heading} not found`);
  const row = md.slice(at).split('\n').find(l => l.startsWith(`| \`${key}\` |`));
  assert.ok(row, `no row for ${key} under ${heading}`);
  return row!.split('|')[2].trim().replace(/`/g, '');
}

describe('DEFAULTS: one source for validator, solvers, analysis and docs', () => {
  const fitspec = read('docs/fitspec.md');
  const problems = read('docs/problems.md');

  it('docs/fitspec.md solver table states DEFAULTS.solver', () => {
    for (const k of ['maxIterations', 'multiStart', 'seconds'] as const)
      assert.equal(Number(tableDefault(fitspec, '### `solver`', k)), DEFAULTS.solver[k], `solver.${k}`);
  });

  it('docs state the analysis budgets of DEFAULTS.analysis (iterations per refit, wall-clock guards)', () => {
    const a = DEFAULTS.analysis;
    assert.ok(fitspec.includes(`iterations of each profiling refit\n(${a.profileIterations})`) || fitspec.includes(`profiling refit (${a.profileIterations})`),
      'fitspec.md states the profiling refit iterations');
    assert.ok(fitspec.includes(`cross-validation refit (${a.cvIterations})`), 'fitspec.md states the CV refit iterations');
    assert.ok(fitspec.includes(`${a.profileSeconds} s each for profiling and cross-validation`) && a.profileSeconds === a.cvSeconds, 'fitspec.md states the guards');
    assert.ok(problems.includes(`at most ${a.profileIterations} iterations`), 'problems.md: profile iterations');
    assert.ok(problems.includes(`at most ${a.cvIterations} iterations`), 'problems.md: CV iterations');
    // every "N s per model" figure in problems.md is one of the guards
    const secs = [...problems.matchAll(/(\d+(?:\.\d+)?) s per model/g)].map(m => Number(m[1]));
    assert.ok(secs.length >= 3, 'problems.md states the guards');
    for (const s of secs) assert.ok(s === a.profileSeconds || s === a.cvSeconds, `problems.md says ${s} s per model; DEFAULTS has ${a.profileSeconds}/${a.cvSeconds}`);
  });

  it('the solvers and the run layer use DEFAULTS', () => {
    assert.equal(DEFAULT_MAX_ITERATIONS, DEFAULTS.solver.maxIterations);
    assert.equal(ANALYSIS_DEFAULTS.profileSeconds, DEFAULTS.analysis.profileSeconds);
    assert.equal(ANALYSIS_DEFAULTS.cvSeconds, DEFAULTS.analysis.cvSeconds);
  });

  it('no other default figure for maxIterations or the analysis guards hides in the engine', () => {
    // a literal default beside these names would be a second source of truth
    const files = ['src/engine/solve/lm.ts', 'src/engine/solve/linear.ts', 'src/engine/solve/multistart/index.ts', 'src/engine/solve/multistart/refine.ts', 'src/engine/models/build.ts',
      'src/engine/stats/analyze.ts', 'src/engine/stats/profile.ts', 'src/engine/stats/crossval.ts', 'src/engine/run.ts'];
    for (const f of files) {
      const t = read(f);
      assert.doesNotMatch(t, /(seconds|Seconds|maxIterations|MAX_ITERATIONS)\s*(\?\?|=|:)\s*\d/, `${f} has a literal default`);
    }
  });
});

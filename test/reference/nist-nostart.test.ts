// NIST StRD nonlinear regression problems fitted with NO starting values: each written as a fit spec whose parameters
// have no start or bounds (and no solver key) and a CSV, run by runSpecFile (the function the CLI calls); the generic
// multi-start (src/engine/solve/multistart/) must find the certified solution.
// Reference: NIST ITL Statistical Reference Datasets, nonlinear regression, certified values in each .dat file.
// Score: min LRE over the parameters (NIST's accuracy measure), ≥ 6 digits; one test per problem. The problems the
// search does not solve today are listed in NOT_YET with their measured LRE: they must not silently start passing
// (the list is then shortened) nor the others regress. No time is measured: the search is bounded by work counts.
import { strict as assert } from 'assert';
import * as fs from 'fs';
import * as path from 'path';
import { itRequiresStrdFolder, lre, readStrd, strdFolderOrNotice, type StrdProblem } from './strd';
import { NIST_MODELS } from './nist-models';
import { runStrdSpec } from './nist-run';

/**
 * Relabellings under which a NIST model gives the same fitted values at every x; the certified values are one of the
 * equivalent minima, so the estimate is compared with the certified values under the best of them.
 * (Read off the model formulas: exchangeable terms, and parameters that enter only squared or as a sign pair.)
 */
const swap = (b: number[], groups: number[][]): number[] => {
  // groups: index lists of equal length exchanged pairwise (group 0 ↔ group 1)
  const out = [...b];
  groups[0].forEach((i, k) => {
    out[i] = b[groups[1][k]];
    out[groups[1][k]] = b[i];
  });
  return out;
};
const neg = (b: number[], idx: number[]): number[] => b.map((v, i) => (idx.includes(i) ? -v : v));
const permutations = <T,>(xs: T[]): T[][] => (xs.length <= 1 ? [xs] : xs.flatMap((x, i) => permutations([...xs.slice(0, i), ...xs.slice(i + 1)]).map((r) => [x, ...r])));

function equivalents(name: string, b: number[]): number[][] {
  const lanczos = (): number[][] =>
    permutations([0, 1, 2]).map((perm) => perm.flatMap((t) => [b[2 * t], b[2 * t + 1]]));
  const gauss = (): number[][] => {
    const base = [b, swap(b, [[2, 3, 4], [5, 6, 7]])];
    return base.flatMap((v) => [v, neg(v, [4]), neg(v, [7]), neg(v, [4, 7])]);
  };
  switch (name) {
    case 'Lanczos1':
    case 'Lanczos2':
    case 'Lanczos3':
      return lanczos(); // b1*exp(-b2*x) + b3*exp(-b4*x) + b5*exp(-b6*x): the three terms commute
    case 'Gauss1':
    case 'Gauss2':
    case 'Gauss3':
      return gauss(); // the two Gaussian terms commute; b5 and b8 enter squared
    case 'MGH17':
      return [b, swap(b, [[1, 3], [2, 4]])]; // b2*exp(-x*b4) and b3*exp(-x*b5) commute
    case 'ENSO': {
      // the two cycles (b4, b5, b6) and (b7, b8, b9) commute; a period and its sine amplitude may flip sign together;
      // and as x is whole months, cos(2πx/P) and sin(2πx/P) depend on 1/P only modulo 1 (aliasing): P is mapped to
      // the period whose frequency lies in [−1/2, 1/2] cycles per month (the test checks that x is whole)
      const alias = (v: number[], iP: number): number[] => {
        const out = [...v];
        let nu = 1 / v[iP];
        nu -= Math.round(nu);
        out[iP] = 1 / nu;
        return out;
      };
      const dealiased = alias(alias(b, 3), 6);
      const base = [dealiased, swap(dealiased, [[3, 4, 5], [6, 7, 8]])];
      return base.flatMap((v) => [v, neg(v, [3, 5]), neg(v, [6, 8]), neg(v, [3, 5, 6, 8])]);
    }
    case 'Eckerle4':
      return [b, neg(b, [0, 1])]; // (b1/b2)*exp(-0.5*((x-b3)/b2)^2) is unchanged by (b1, b2) → (−b1, −b2)
    default:
      return [b];
  }
}

function minLre(prob: StrdProblem, theta: number[]): number {
  let best = 0;
  for (const t of equivalents(prob.name, theta)) {
    const m = Math.min(...t.map((v, j) => lre(v, prob.certified.values[j], prob.digits)));
    best = Math.max(best, m);
  }
  return best;
}

/** problems the multi-start does not solve to 6 digits with the spec defaults (at most 3 of 27, the suite's target) */
const NOT_YET = new Set<string>([]);

describe('reference: NIST StRD nonlinear problems without starting values (generic multi-start, through the spec)', function () {
  this.timeout(10 * 60 * 1000);
  const dir = strdFolderOrNotice('nonlinear');
  if (!dir) {
    itRequiresStrdFolder();
    return;
  }
  const files = fs.readdirSync(dir).filter((f) => f.endsWith('.dat')).sort();
  const rows: { name: string; lre: number; sseRatio: number; source: string }[] = [];

  it('has the 27 NIST nonlinear files, each with a formula', () => {
    assert.equal(files.length, 27, `expected the 27 NIST nonlinear files in ${dir}`);
    assert.ok(NOT_YET.size <= 3, 'at least 24 of the 27 problems must be solved without starts');
  });

  for (const f of files) {
    const name = f.replace(/\.dat$/, '');
    it(`${name} without starting values${NOT_YET.has(name) ? ' (known miss: checks it still runs and stays a miss)' : ' reaches ≥ 6 digits'}`, async () => {
      const prob = readStrd(path.join(dir, f));
      const nm = NIST_MODELS[prob.name];
      assert.ok(nm, `no formula for ${prob.name}`);
      if (prob.name === 'ENSO') assert.ok(prob.x[0].every(Number.isInteger), 'ENSO months are whole numbers (aliasing rule)');
      const { model } = await runStrdSpec(prob, { formula: nm.formula, y: nm.y });
      assert.deepEqual(model.paramOrder, prob.params, `${prob.name}: parameter order`);
      const theta = prob.params.map((p) => model.params[p].value);
      const m = minLre(prob, theta);
      const source = model.start?.source ?? '';
      rows.push({ name: prob.name, lre: m, sseRatio: model.stats.sse / prob.certified.rss, source });
      assert.equal(source, 'multi-start', `${name} must come from the multi-start`);
      if (NOT_YET.has(name)) assert.ok(m < 6, `${name} now reaches ${m.toFixed(1)} digits: remove it from NOT_YET`);
      else assert.ok(m >= 6, `${name}: min LRE ${m.toFixed(1)} < 6 (SSE/certified ${(model.stats.sse / prob.certified.rss).toPrecision(6)})`);
    });
  }

  after(() => {
    if (!rows.length) return;
    const pad = (s: string, k: number) => s.padEnd(k);
    console.log(`\n  ${pad('problem', 10)} ${pad('min LRE', 8)} ${pad('SSE/cert', 12)} pass`);
    for (const r of rows) console.log(`  ${pad(r.name, 10)} ${pad(r.lre.toFixed(1), 8)} ${pad(r.sseRatio.toPrecision(6), 12)} ${r.lre >= 6 ? 'yes' : 'NO'}`);
    console.log(`  passed ${rows.filter((r) => r.lre >= 6).length}/${rows.length}\n`);
  });
});

// Runs one NIST StRD problem through the real path: compileFormula → LsqProblem → solver → covarianceFromJacobian, and scores it by LRE.
import type { CompiledFormula } from '../../src/engine/formula/types';
import { solveLinear, solveNonlinear } from '../../src/engine/solve';
import type { LsqProblem, SolveResult } from '../../src/engine/solve/types';
import { covarianceFromJacobian } from '../../src/engine/stats/covariance';
import { lre, StrdProblem } from './strd';

export interface CaseScore {
  name: string;
  start: number | null;
  result: SolveResult;
  theta: number[];
  sd: number[];
  lreParams: number[];
  lreSd: number[];
  lreRss: number;
  lreRsd: number;
  minParams: number;
  minSd: number;
  ms: number;
}

export function lsqFromFormula(compiled: CompiledFormula, X: Float64Array[], y: Float64Array): LsqProblem {
  return {
    n: y.length,
    p: compiled.params.length,
    y,
    model(theta, f, J) {
      if (J) compiled.evaluateWithJacobian(theta, X, f, J);
      else compiled.evaluate(theta, X, f);
    },
  };
}

export function scoreCase(prob: StrdProblem, compiled: CompiledFormula, X: Float64Array[], y: Float64Array, start: number | null): CaseScore {
  const lsq = lsqFromFormula(compiled, X, y);
  const p = prob.p;
  const t0 = process.hrtime.bigint();
  const result = start === null
    ? solveLinear(lsq, { theta0: new Array(p).fill(0) })
    : solveNonlinear(lsq, { theta0: prob.starts[start] });
  const ms = Number(process.hrtime.bigint() - t0) / 1e6;
  const dof = prob.n - p;
  const s2 = result.sse / dof;
  const { cov } = covarianceFromJacobian(result.J, prob.n, p, null, new Array(p).fill(true), s2);
  const sd = Array.from({ length: p }, (_, j) => Math.sqrt(cov[j * p + j]));
  const theta = Array.from(result.theta);
  const c = prob.certified;
  const lreParams = theta.map((t, j) => lre(t, c.values[j], prob.digits));
  const lreSd = sd.map((s, j) => lre(s, c.sd[j], prob.digits));
  const lreRss = lre(result.sse, c.rss, prob.digits);
  const lreRsd = lre(Math.sqrt(s2), c.rsd, prob.digits);
  return {
    name: prob.name, start, result, theta, sd, lreParams, lreSd, lreRss, lreRsd,
    minParams: Math.min(...lreParams), minSd: Math.min(...lreSd), ms,
  };
}

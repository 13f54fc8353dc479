// analyzeModel against closed forms, NIST StRD certified values and published worked examples (named beside each check).
import { strict as assert } from 'assert';
import * as path from 'path';
import * as fs from 'fs';
import { analyzeModel } from '../../src/engine/stats';
import { tQuantile, normalQuantile, chi2Sf } from '../../src/engine/stats/distributions';
import { informationCriteria, akaikeWeights } from '../../src/engine/stats/information';
import { cvFolds } from '../../src/engine/stats/crossval';
import { bandGrid } from '../../src/engine/stats/predict';
import { makeInput, noise, PUROMYCIN } from './statsHelpers';
import { readStrd, strdDir, lre } from '../reference/strd';
// eslint-disable-next-line @typescript-eslint/no-require-imports
const RREF = require('../fixtures/reference/r-stats.json');

const close = (a: number | null | undefined, b: number, tol: number, what: string) =>
  assert.ok(a !== null && a !== undefined && Math.abs(a - b) <= tol, `${what}: got ${a}, expected ${b} ± ${tol}`);
const rel = (a: number | null | undefined, b: number, tol: number, what: string) =>
  assert.ok(a !== null && a !== undefined && Math.abs(a - b) <= tol * Math.abs(b), `${what}: got ${a}, expected ${b} (relative ${tol})`);

const LX = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10];
const LY = [2.9, 4.1, 6.5, 7.6, 10.4, 12.0, 13.9, 16.3, 17.8, 20.5];

/** Textbook closed forms of the straight line y = a + b x (e.g. Draper & Smith, Applied Regression Analysis, ch. 1–3). */
function lineClosedForm(x: number[], y: number[]) {
  const n = x.length;
  const xb = x.reduce((s, v) => s + v, 0) / n;
  const yb = y.reduce((s, v) => s + v, 0) / n;
  let sxx = 0, sxy = 0, syy = 0;
  for (let i = 0; i < n; i++) {
    sxx += (x[i] - xb) ** 2;
    sxy += (x[i] - xb) * (y[i] - yb);
    syy += (y[i] - yb) ** 2;
  }
  const b = sxy / sxx;
  const a = yb - b * xb;
  const sse = syy - b * sxy;
  const s = Math.sqrt(sse / (n - 2));
  return { n, xb, sxx, syy, a, b, sse, s, seA: s * Math.sqrt(1 / n + (xb * xb) / sxx), seB: s / Math.sqrt(sxx) };
}

describe('stats analyzeModel', () => {
  const cf = lineClosedForm(LX, LY);
  const line = analyzeModel(makeInput({ formula: 'a + b*x', x: LX, y: LY, predict: [5.5, 14], solveFor: [11], options: { bandPoints: 50 } }));

  it('straight line: estimates, SE, t, Wald CI, R² and adjusted R² equal the textbook closed forms', () => {
    assert.equal(line.status, 'converged');
    rel(line.params.a.value, cf.a, 1e-12, 'a');
    rel(line.params.b.value, cf.b, 1e-12, 'b');
    rel(line.params.a.se, cf.seA, 1e-10, 'se(a)');
    rel(line.params.b.se, cf.seB, 1e-10, 'se(b)');
    rel(line.params.b.t, cf.b / cf.seB, 1e-10, 't(b)');
    const q = tQuantile(0.975, 8);
    rel(line.params.b.ci![0], cf.b - q * cf.seB, 1e-12, 'ci low');
    rel(line.params.b.ci![1], cf.b + q * cf.seB, 1e-12, 'ci high');
    // linear model: the profile-t interval equals the Wald interval exactly
    assert.deepEqual(line.params.b.profileCi, line.params.b.ci);
    const st = line.stats;
    assert.equal(st.n, 10);
    assert.equal(st.dof, 8);
    rel(st.sse, cf.sse, 1e-10, 'SSE');
    rel(st.sigma, cf.s, 1e-10, 'sigma');
    rel(st.rmse, Math.sqrt(cf.sse / 10), 1e-10, 'rmse');
    rel(st.r2, 1 - cf.sse / cf.syy, 1e-12, 'R²');
    rel(st.adjR2, 1 - ((1 - (1 - cf.sse / cf.syy)) * 9) / 8, 1e-12, 'adj R²');
    assert.equal(st.r2Uncentred, undefined);
    assert.equal(st.chi2, null);
    // parameter correlation of a and b: −x̄/√(x̄² + Sxx/n) (closed form of the 2×2 inverse)
    close(line.correlation![0][1], -cf.xb / Math.sqrt(cf.xb * cf.xb + cf.sxx / cf.n), 1e-12, 'corr(a,b)');
    assert.equal(line.correlation![0][0], 1);
  });

  it('straight line: leverage 1/n + (x − x̄)²/Sxx, standardized residuals and Cook’s distance by their definitions', () => {
    const pts = line.points!;
    for (let i = 0; i < LX.length; i++) {
      const h = 1 / cf.n + (LX[i] - cf.xb) ** 2 / cf.sxx;
      const e = LY[i] - (cf.a + cf.b * LX[i]);
      rel(pts.leverage[i], h, 1e-10, `h${i}`);
      close(pts.residual[i], e, 1e-12, `e${i}`);
      close(pts.standardized[i], e / (cf.s * Math.sqrt(1 - h)), 1e-9, `r${i}`);
      close(pts.cooks[i], ((e * e) / (2 * cf.s * cf.s)) * (h / (1 - h) ** 2), 1e-9, `D${i}`);
    }
    assert.deepEqual(pts.row, [1, 2, 3, 4, 5, 6, 7, 8, 9, 10]);
  });

  it('straight line: CI of the mean s·√(1/n + (x0 − x̄)²/Sxx) and prediction interval s·√(1 + 1/n + (x0 − x̄)²/Sxx)', () => {
    const q = tQuantile(0.975, 8);
    for (const [k, x0] of [[0, 5.5], [1, 14]] as const) {
      const pr = line.predictions[k];
      const y0 = cf.a + cf.b * x0;
      rel(pr.y, y0, 1e-12, 'ŷ');
      const hc = q * cf.s * Math.sqrt(1 / cf.n + (x0 - cf.xb) ** 2 / cf.sxx);
      const hp = q * cf.s * Math.sqrt(1 + 1 / cf.n + (x0 - cf.xb) ** 2 / cf.sxx);
      close(pr.ci![0], y0 - hc, 1e-10, 'ci low');
      close(pr.ci![1], y0 + hc, 1e-10, 'ci high');
      close(pr.pi![0], y0 - hp, 1e-10, 'pi low');
      close(pr.pi![1], y0 + hp, 1e-10, 'pi high');
    }
    assert.equal(line.predictions[0].extrapolated, false);
    assert.equal(line.predictions[1].extrapolated, true);
    // band: 50 points from min to max x, each the same closed form
    const band = line.band!;
    assert.equal(band.x.length, 50);
    assert.equal(band.x[0], 1);
    assert.equal(band.x[49], 10);
    const x0 = band.x[17];
    close(band.piHigh[17] - band.fit[17], q * cf.s * Math.sqrt(1 + 1 / cf.n + (x0 - cf.xb) ** 2 / cf.sxx), 1e-10, 'band pi');
  });

  it('straight line: inverse prediction x = (y0 − a)/b, its interval is where the prediction band contains y0', () => {
    const inv = line.inverse[0];
    assert.equal(inv.roots.length, 1);
    const x0 = (11 - cf.a) / cf.b;
    close(inv.roots[0].x, x0, 1e-9, 'root');
    assert.equal(inv.extrapolated, false);
    const q = tQuantile(0.975, 8);
    const [lo, hi] = inv.roots[0].interval;
    for (const xb of [lo!, hi!]) {
      const half = q * cf.s * Math.sqrt(1 + 1 / cf.n + (xb - cf.xb) ** 2 / cf.sxx);
      close(Math.abs(cf.a + cf.b * xb - 11), half, 1e-7, 'band edge passes through y0');
    }
    assert.ok(lo! < x0 && x0 < hi!);
  });

  it('logLik, AIC, AICc and BIC follow R’s definitions (σ counted: k = p + 1; logLik = −n/2·log(2π·SSE/n) − n/2)', () => {
    const n = 10;
    const k = 3;
    const ll = (-n / 2) * Math.log((2 * Math.PI * cf.sse) / n) - n / 2;
    close(line.stats.logLik, ll, 1e-10, 'logLik');
    close(line.stats.aic, -2 * ll + 2 * k, 1e-10, 'AIC');
    close(line.stats.bic, -2 * ll + k * Math.log(n), 1e-10, 'BIC');
    close(line.stats.aicc, -2 * ll + 2 * k + (2 * k * (k + 1)) / (n - k - 1), 1e-10, 'AICc');
    // weights add ½Σlog w (R's logLik.lm with weights)
    const ic = informationCriteria(2, 4, 1, Math.log(2) + Math.log(3));
    rel(ic.logLik, 0.5 * (Math.log(6) - 4 * (Math.log(2 * Math.PI) + 1 - Math.log(4) + Math.log(2))), 1e-14, 'weighted logLik');
    assert.equal(informationCriteria(1, 3, 1).aicc, null, 'AICc undefined when n − k − 1 ≤ 0');
    assert.equal(informationCriteria(0, 5, 1).logLik, null, 'zero residual: −∞ likelihood is reported as null');
  });

  it('Akaike weights by definition: exp(−Δ/2)/Σexp(−Δ/2)', () => {
    const { delta, weight } = akaikeWeights([10, 12, null, 10 + 2 * Math.log(3)]);
    assert.deepEqual(delta.slice(0, 3), [0, 2, null]);
    const z = 1 + Math.exp(-1) + 1 / 3;
    close(weight[0], 1 / z, 1e-15, 'w0');
    close(weight[1], Math.exp(-1) / z, 1e-15, 'w1');
    close(weight[3], 1 / 3 / z, 1e-15, 'w3');
    assert.equal(weight[2], null);
  });

  it(`Puromycin (treated) Michaelis–Menten: estimates, SE and exact profile-t intervals as R computes them (datasets::Puromycin, nls; ${RREF.R})`, () => {
    const c = RREF.puromycin;
    const r = analyzeModel(makeInput({ formula: 'Vm*x/(K + x)', x: PUROMYCIN.conc, y: PUROMYCIN.rate, start: { Vm: 200, K: 0.1 } }));
    // Bates & Watts (1988) §2.2.1 / R nls: Vm = 212.7 (SE 6.947), K = 0.06412 (SE 0.008281), s = 10.93 on 10 df
    close(r.params.Vm.value, c.Vm, 1e-6 * c.Vm, 'Vm');
    close(r.params.K.value, c.K, 1e-6 * c.K, 'K');
    close(r.params.Vm.se, c.se_Vm, 1e-5 * c.se_Vm, 'se Vm');
    close(r.params.K.se, c.se_K, 1e-5 * c.se_K, 'se K');
    close(r.stats.sigma, c.sigma, 1e-6 * c.sigma, 's');
    // profile-t limits: R's exact profile (nls with the parameter held, uniroot on τ = ±t; scripts/reference-r.R)
    close(r.params.Vm.profileCi![0], c.profile_Vm[0], 1e-6 * c.Vm, 'Vm profile low');
    close(r.params.Vm.profileCi![1], c.profile_Vm[1], 1e-6 * c.Vm, 'Vm profile high');
    close(r.params.K.profileCi![0], c.profile_K[0], 1e-5 * c.K, 'K profile low');
    close(r.params.K.profileCi![1], c.profile_K[1], 1e-5 * c.K, 'K profile high');
    // the profile interval is asymmetric while the Wald one is symmetric (the point of Bates & Watts ch. 6)
    const [lo, hi] = r.params.K.profileCi! as [number, number];
    assert.ok(hi - r.params.K.value > r.params.K.value - lo);
  });

  it('weighted fit, absolute σ: covariance unscaled, χ² = Σw e² with its upper-tail p; relative σ: scaled by s²', () => {
    const sigma = [0.2, 0.2, 0.3, 0.3, 0.4, 0.4, 0.5, 0.5, 0.6, 0.6];
    const w = sigma.map((s) => 1 / (s * s));
    const abs = analyzeModel(makeInput({ formula: 'a + b*x', x: LX, y: LY, w, sigmaMode: 'absolute', options: { crossValidate: false } }));
    const relm = analyzeModel(makeInput({ formula: 'a + b*x', x: LX, y: LY, w, sigmaMode: 'relative', options: { crossValidate: false } }));
    // weighted least squares closed form: se(b)² = Σw / (Σw·Σwx² − (Σwx)²) (unscaled)
    let sw = 0, swx = 0, swx2 = 0;
    LX.forEach((x, i) => { sw += w[i]; swx += w[i] * x; swx2 += w[i] * x * x; });
    const varB = sw / (sw * swx2 - swx * swx);
    rel(abs.params.b.se, Math.sqrt(varB), 1e-10, 'absolute se(b)');
    const chi2 = abs.stats.chi2!;
    rel(chi2, abs.stats.sse, 1e-15, 'χ² = weighted SSE');
    rel(abs.stats.reducedChi2, chi2 / 8, 1e-15, 'reduced χ²');
    rel(abs.stats.chi2P!, chi2Sf(chi2, 8), 1e-15, 'χ² p');
    rel(relm.params.b.se, Math.sqrt((varB * chi2) / 8), 1e-10, 'relative se(b) = unscaled · s');
    assert.equal(relm.stats.chi2P, null);
    // absolute mode uses normal quantiles (σ known)
    const z = normalQuantile(0.975);
    rel(abs.params.b.ci![1]! - abs.params.b.value, z * Math.sqrt(varB), 1e-10, 'z interval');
    // weighted centred R² = 1 − Σw e²/Σw (y − ȳ_w)²
    const yw = LY.reduce((s, y, i) => s + w[i] * y, 0) / sw;
    const sst = LY.reduce((s, y, i) => s + w[i] * (y - yw) ** 2, 0);
    rel(abs.stats.r2, 1 - chi2 / sst, 1e-12, 'weighted R²');
    assert.deepEqual(abs.points!.weight, w);
  });

  it('R² is uncentred for a linear model without a constant term (NIST convention) and centred otherwise', () => {
    const through0 = analyzeModel(makeInput({ formula: 'b*x', x: LX, y: LY, options: { crossValidate: false } }));
    const sse = through0.stats.sse;
    rel(through0.stats.r2, 1 - sse / LY.reduce((s, y) => s + y * y, 0), 1e-12, 'uncentred R²');
    assert.equal(through0.stats.r2Uncentred, true);
    rel(through0.stats.adjR2, 1 - ((1 - through0.stats.r2!) * 10) / 9, 1e-12, 'uncentred adjusted R²');
    // a fixed intercept is no constant term either
    const fixed0 = analyzeModel(makeInput({ formula: 'a + b*x', x: LX, y: LY, fixed: { a: 0 }, options: { crossValidate: false } }));
    assert.equal(fixed0.stats.r2Uncentred, true);
    rel(fixed0.stats.r2, through0.stats.r2!, 1e-12, 'same model');
    // a constant hidden in the span of the columns still counts: a*(1 + x) + b*(1 − x) = (a + b) + (a − b)x
    const hidden = analyzeModel(makeInput({ formula: 'a*(1 + x) + b*(1 - x)', x: LX, y: LY, options: { crossValidate: false } }));
    assert.equal(hidden.stats.r2Uncentred, undefined);
    rel(hidden.stats.r2, line.stats.r2!, 1e-10, 'same fit as a + b x');
  });

  const dir = strdDir();
  (dir ? it : it.skip)('NIST StRD NoInt1 and Norris: certified R² (uncentred / centred) and residual SD', () => {
    const noint = readStrd(path.join(dir!, 'linear', 'NoInt1.dat'));
    const r1 = analyzeModel(makeInput({ formula: 'B1*x', x: noint.x[0], y: noint.y, options: { crossValidate: false } }));
    assert.ok(lre(r1.stats.r2!, noint.certified.r2!, 15) >= 12, `NoInt1 R² ${r1.stats.r2} vs ${noint.certified.r2}`);
    assert.ok(lre(r1.stats.sigma!, noint.certified.rsd, 15) >= 12, 'NoInt1 residual SD');
    assert.ok(lre(r1.params.B1.se!, noint.certified.sd[0], 15) >= 12, 'NoInt1 SE');
    const norris = readStrd(path.join(dir!, 'linear', 'Norris.dat'));
    const r2 = analyzeModel(makeInput({ formula: 'B0 + B1*x', x: norris.x[0], y: norris.y, options: { crossValidate: false } }));
    assert.ok(lre(r2.stats.r2!, norris.certified.r2!, 15) >= 12, `Norris R² ${r2.stats.r2} vs ${norris.certified.r2}`);
    assert.ok(lre(r2.params.B0.se!, norris.certified.sd[0], 15) >= 10, 'Norris SE(B0)');
  });

  (dir ? it : it.skip)('NIST StRD Misra1a and DanWood (start 2): certified standard errors and residual SD through analyzeModel', () => {
    for (const [file, formula] of [['Misra1a', 'b1*(1 - exp(-b2*x))'], ['DanWood', 'b1*x^b2']]) {
      const prob = readStrd(path.join(dir!, 'nonlinear', `${file}.dat`));
      const start = Object.fromEntries(prob.params.map((n, j) => [n, prob.starts[1][j]]));
      const r = analyzeModel(makeInput({ formula, x: prob.x[0], y: prob.y, start, options: { crossValidate: false, profile: false } }));
      prob.params.forEach((n, j) => {
        assert.ok(lre(r.params[n].value, prob.certified.values[j], 11) >= 7, `${file} ${n}`);
        assert.ok(lre(r.params[n].se!, prob.certified.sd[j], 11) >= 6, `${file} se ${n}: ${r.params[n].se} vs ${prob.certified.sd[j]}`);
      });
      assert.ok(lre(r.stats.sigma!, prob.certified.rsd, 11) >= 7, `${file} residual SD`);
      assert.equal(r.stats.dof, prob.certified.dof);
    }
  });

  it('cross-validation folds: rows sorted by x, fold = rank mod k, k = min(10, n) (DESIGN.md)', () => {
    const x = [5, 1, 4, 2, 3];
    const { fold, k } = cvFolds(x);
    assert.equal(k, 5);
    assert.deepEqual(Array.from(fold), [4, 0, 3, 1, 2]);
    const x20 = Array.from({ length: 20 }, (_, i) => 20 - i);
    const f20 = cvFolds(x20);
    assert.equal(f20.k, 10);
    assert.equal(f20.fold[19], 0); // smallest x
    assert.equal(f20.fold[0], 9); // rank 19 -> 19 mod 10
    // leave-one-out for the line (n = 10 -> k = 10): PRESS residual e_i/(1 − h_i) closed form
    const pts = line.points!;
    let press = 0;
    for (let i = 0; i < 10; i++) press += (pts.residual[i] / (1 - pts.leverage[i])) ** 2;
    rel(line.stats.cvRmse, Math.sqrt(press / 10), 1e-9, 'LOO RMSE = √(PRESS/n)');
    assert.equal(line.stats.cvFolds, 10);
  });

  it('bands are log-spaced when all x > 0 and the range spans more than two decades', () => {
    const g = bandGrid(0.1, 1000, 5);
    [0.1, 1, 10, 100, 1000].forEach((v, i) => rel(g[i], v, 1e-12, `log grid ${i}`));
    const lin = bandGrid(1, 50, 3);
    assert.deepEqual(lin, [1, 25.5, 50]);
  });

  it('a failed fit reports status failed, the termination, and no inference', () => {
    const inp = makeInput({ formula: 'a*exp(b*x)', x: LX, y: LY, start: { a: 1, b: 0.1 } });
    inp.result = { ...inp.result, converged: false, termination: 'iteration-limit', iterations: 3 };
    const r = analyzeModel(inp);
    assert.equal(r.status, 'failed');
    assert.equal(r.params.a.se, null);
    assert.equal(r.residualTests, null);
    const p = r.problems.find((q) => q.code === 'no-convergence')!;
    assert.equal(p.severity, 'error');
    assert.match(p.message, /iteration-limit/);
    assert.match(p.message, /3 iterations/);
    assert.deepEqual(p.path, ['models', 0]);
  });

  it('is deterministic: the same input gives the same report', () => {
    const a = analyzeModel(makeInput({ formula: 'Vm*x/(K + x)', x: PUROMYCIN.conc, y: PUROMYCIN.rate, start: { Vm: 200, K: 0.1 } }));
    const b = analyzeModel(makeInput({ formula: 'Vm*x/(K + x)', x: PUROMYCIN.conc, y: PUROMYCIN.rate, start: { Vm: 200, K: 0.1 } }));
    assert.equal(JSON.stringify(a), JSON.stringify(b));
    void fs;
  });
});

describe('stats analyzeModel at the edges', () => {
  const X = Array.from({ length: 12 }, (_, i) => i + 1);

  it('zero residual: SE 0, degenerate intervals, no likelihood (−∞ is reported as null), no residual tests, no problems', () => {
    const r = analyzeModel(makeInput({ formula: 'a + b*x', x: X, y: X.map((v) => 2 + 3 * v), predict: [4], solveFor: [11] }));
    assert.equal(r.status, 'converged');
    assert.equal(r.params.b.se, 0);
    assert.equal(r.params.b.t, null);
    assert.deepEqual(r.params.b.ci, [3, 3]);
    assert.equal(r.stats.r2, 1);
    assert.equal(r.stats.logLik, null);
    assert.equal(r.stats.aicc, null);
    assert.deepEqual(r.residualTests, { runs: null, normality: null, durbinWatson: null });
    assert.deepEqual(r.predictions[0].pi, [14, 14]);
    assert.deepEqual(r.inverse[0].roots, [{ x: 3, interval: [3, 3] }]);
    assert.deepEqual(r.problems, []);
    const nl = analyzeModel(makeInput({ formula: 'A*exp(-k*x)', x: X, y: X.map((v) => 2 * Math.exp(-0.3 * v)), start: { A: 1, k: 0.1 } }));
    assert.equal(nl.status, 'converged');
    assert.equal(nl.params.k.profileCi, null, 'no profile to walk at s = 0');
    assert.ok(!nl.problems.some((p) => p.code === 'poorly-determined'));
  });

  it('huge and tiny scales: R², t, relative SE, residual tests and problems do not depend on the units of y and x', () => {
    const e = noise(12, 3);
    const base = X.map((v, i) => 5 * Math.exp(-0.2 * v) + 0.05 * e[i]);
    const reports = [1e-12, 1, 1e12].map((s) =>
      analyzeModel(makeInput({
        formula: 'A*exp(-k*x)', x: X.map((v) => v * s), y: base.map((v) => v * s), start: { A: 4 * s, k: 0.1 / s },
        options: { crossValidate: false },
      })));
    const [tiny, unit, huge] = reports;
    for (const r of [tiny, huge]) {
      assert.equal(r.status, 'converged');
      rel(r.stats.r2, unit.stats.r2!, 1e-8, 'R²');
      rel(r.params.k.t, unit.params.k.t!, 1e-6, 't(k)');
      rel(r.params.A.se! / r.params.A.value, unit.params.A.se! / unit.params.A.value, 1e-6, 'relative SE');
      rel(r.residualTests!.normality!.statistic, unit.residualTests!.normality!.statistic, 1e-8, 'W');
      rel(r.params.k.profileCi![0]! * r.params.A.value, unit.params.k.profileCi![0]! * unit.params.A.value, 1e-4, 'profile bound (scaled)');
      assert.deepEqual(r.problems.map((p) => p.code), unit.problems.map((p) => p.code));
    }
  });

  it('bounds active: the profile interval stops at a box bound and reports that side as null', () => {
    const e = noise(12, 4);
    const y = X.map((v, i) => 3 * Math.exp(-0.25 * v) + 0.05 * e[i]);
    // the offset C ≥ 0 is close to 0: walking down, the bound is met before τ reaches the t quantile
    const r = analyzeModel(makeInput({ formula: 'A*exp(-k*x) + C', x: X, y, start: { A: 3, k: 0.25, C: 0.1 }, lower: { C: 0 } }));
    assert.equal(r.status, 'converged');
    const C = r.params.C;
    assert.ok(C.value > 0 && C.atBound === null);
    assert.equal(C.profileCi![0], null);
    assert.ok(C.profileCi![1]! > C.value);
    // the other parameters' profiles close on both sides
    for (const n of ['A', 'k']) {
      const ci = r.params[n].profileCi!;
      assert.ok(ci[0]! < r.params[n].value && r.params[n].value < ci[1]!, n);
    }
    assert.ok(r.problems.some((p) => p.code === 'poorly-determined' && p.path.join('/') === 'models/0/params/C'));
  });

  it('several x variables: predictions take objects, there is no band and no inverse', () => {
    const t = X;
    const T = X.map((v) => (v * 7) % 5);
    const y = X.map((_v, i) => 1 + 2 * t[i] - 0.5 * T[i] + 0.1 * noise(12, 9)[i]);
    const r = analyzeModel(makeInput({ formula: 'a + b*t + c*T', x: { t, T }, y, predict: [{ t: 3, T: 2 }, { t: 30, T: 2 }], solveFor: [5] }));
    assert.equal(r.band, null);
    assert.equal(r.predictions[0].extrapolated, false);
    assert.equal(r.predictions[1].extrapolated, true);
    close(r.predictions[0].y, r.params.a.value + 3 * r.params.b.value + 2 * r.params.c.value, 1e-9, 'ŷ');
    assert.deepEqual(Object.keys(r.points!.x), ['t', 'T']);
    assert.deepEqual(r.inverse[0].roots, []);
  });
});

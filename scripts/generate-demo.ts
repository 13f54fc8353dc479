// Writes the demo workspace's data files (examples/data/*.csv) for the invented "Tarnwell Bioprocess" lab.
// Noise: mulberry32 uniform generator (a small public-domain 32-bit PRNG) fed through the Box–Muller transform
// (Box & Muller 1958). Same seed → byte-identical files. Run: npx tsx scripts/generate-demo.ts [--seed N] [--out DIR]
//
// The true curves below are our own invention; the specs in examples/ fit them back and pin the estimates
// with `expect`. Change the seed or a true value here, regenerate, and `curvewright check --update` re-pins.
import * as fs from 'fs';
import * as path from 'path';

export const DEFAULT_SEED = 20261201;

/** mulberry32 (32-bit state, period 2^32; plenty for a few hundred draws): the engine's own seeded generator. */
import { mulberry32 } from '../src/engine/solve/multistart';
export { mulberry32 };

/** Standard normal draws by Box–Muller: z = sqrt(-2 ln u1) cos(2π u2) (the sine twin is kept for the next call). */
export function normalSource(uniform: () => number): () => number {
  let spare: number | null = null;
  return () => {
    if (spare !== null) {
      const z = spare;
      spare = null;
      return z;
    }
    let u1 = uniform();
    while (u1 <= 0) u1 = uniform();
    const u2 = uniform();
    const r = Math.sqrt(-2 * Math.log(u1));
    spare = r * Math.sin(2 * Math.PI * u2);
    return r * Math.cos(2 * Math.PI * u2);
  };
}

/** Fixed-decimal text without "-0". */
function fmt(v: number, decimals: number): string {
  const s = v.toFixed(decimals);
  return /^-0\.?0*$/.test(s) ? s.slice(1) : s;
}

function csv(header: string[], rows: (string | number)[][]): string {
  return [header.join(','), ...rows.map(r => r.join(','))].join('\n') + '\n';
}

// ------------------------------------------------------------------ true curves (invented)

export const TRUTH = {
  /** reactor 1: logistic; reactor 2: Gompertz; reactor 3: Richards (asymmetric). OD600 noise sd 0.015. */
  growth: {
    reactor1: { model: 'logistic3', K: 1.85, r: 0.32, x0: 16 },
    reactor2: { model: 'gompertz', K: 2.1, r: 0.2, x0: 14 },
    reactor3: { model: 'richards', K: 1.7, r: 0.3, x0: 18, nu: 0.3 },
    sd: 0.015,
    /** reactor 2, hour 30: a bubble in the cuvette reads high (the spec excludes it with a reason) */
    bubble: { reactor: 2, hours: 30, add: 0.38 },
  },
  /** colorimetric assay: 5PL with asymmetry, absorbance noise sd 0.012 + 1.5 % */
  assay: { lower: 0.06, upper: 2.35, xc: 12, slope: 1.2, asym: 0.6, sd: 0.012, cv: 0.015 },
  /** 10 kΩ NTC thermistor: Steinhart–Hart 1/T = a + b ln R + c ln³R; reference thermometer sd 0.02 K, meter 0.05 % */
  thermistor: { a: 1.1292e-3, b: 2.3410e-4, c: 8.775e-8, sdT: 0.02, relR: 0.0005 },
  /** cell capacity fade: C + A exp(-k·cycle); capacity noise sd 0.006 Ah */
  capacity: { A: 0.42, k: 0.0045, C: 2.58, sd: 0.006 },
};

const growthLogistic = (t: { K: number; r: number; x0: number }, x: number) => t.K / (1 + Math.exp(-t.r * (x - t.x0)));
const growthGompertz = (t: { K: number; r: number; x0: number }, x: number) => t.K * Math.exp(-Math.exp(-t.r * (x - t.x0)));
const growthRichards = (t: { K: number; r: number; x0: number; nu: number }, x: number) =>
  t.K / Math.pow(1 + t.nu * Math.exp(-t.r * (x - t.x0)), 1 / t.nu);
const fivePL = (t: typeof TRUTH.assay, x: number) => t.lower + (t.upper - t.lower) / Math.pow(1 + Math.pow(t.xc / x, t.slope), t.asym);

/** Resistance (Ω) of the Steinhart–Hart thermistor at temperature T (K): solve c L³ + b L + a − 1/T = 0 for L = ln R by Newton. */
function thermistorResistance(T: number): number {
  const { a, b, c } = TRUTH.thermistor;
  let L = Math.log(10000);
  for (let i = 0; i < 50; i++) {
    const g = a + b * L + c * L * L * L - 1 / T;
    const d = b + 3 * c * L * L;
    const step = g / d;
    L -= step;
    if (Math.abs(step) < 1e-15) break;
  }
  return Math.exp(L);
}

export interface DemoFiles {
  [relativePath: string]: string;
}

/** Generate every data file of the demo workspace (paths relative to examples/). */
export function generateDemo(seed = DEFAULT_SEED): { files: DemoFiles; unknowns: { sample: string; absorbance: number }[] } {
  const normal = normalSource(mulberry32(seed));
  const files: DemoFiles = {};

  // (a) growth curves: three bioreactors, OD600 every 2 h for 48 h
  {
    const g = TRUTH.growth;
    const rows: (string | number)[][] = [];
    for (let reactor = 1; reactor <= 3; reactor++) {
      for (let hours = 0; hours <= 48; hours += 2) {
        const mean =
          reactor === 1 ? growthLogistic(g.reactor1, hours) : reactor === 2 ? growthGompertz(g.reactor2, hours) : growthRichards(g.reactor3, hours);
        let od = mean + g.sd * normal();
        if (reactor === g.bubble.reactor && hours === g.bubble.hours) od += g.bubble.add;
        rows.push([reactor, hours, fmt(Math.max(od, 0.001), 3)]);
      }
    }
    files['data/growth-reactors.csv'] = csv(['reactor', 'hours', 'od600'], rows);
  }

  // (b) colorimetric assay: 8 standards (3-fold serial dilutions from 150 ng/mL) in duplicate, plus unknown samples
  const unknowns: { sample: string; absorbance: number }[] = [];
  {
    const t = TRUTH.assay;
    const absorb = (conc: number) => {
      const m = fivePL(t, conc);
      return m + Math.sqrt(t.sd * t.sd + (t.cv * m) ** 2) * normal();
    };
    const rows: (string | number)[][] = [];
    const concs = [0, 1, 2, 3, 4, 5, 6, 7].map(k => Number((150 / 3 ** k).toPrecision(4))).reverse();
    let well = 0;
    for (const conc of concs) {
      for (let rep = 1; rep <= 2; rep++) {
        well++;
        const wellName = String.fromCharCode(65 + Math.floor((well - 1) / 2)) + String(rep);
        rows.push([wellName, conc, rep, fmt(absorb(conc), 3)]);
      }
    }
    files['data/assay-standards.csv'] = csv(['well', 'conc_ng_ml', 'replicate', 'absorbance'], rows);
    const trueUnknown = [2.2, 9.5, 40];
    const urows: (string | number)[][] = [];
    trueUnknown.forEach((conc, i) => {
      const a = Number(fmt(absorb(conc), 3));
      const sample = `S-${String(101 + i)}`;
      unknowns.push({ sample, absorbance: a });
      urows.push([sample, fmt(a, 3)]);
    });
    files['data/assay-unknowns.csv'] = csv(['sample', 'absorbance'], urows);
  }

  // (c) thermistor calibration: bath set-points −20 … 100 °C every 5 °C; one meter overload reading ("OL")
  {
    const t = TRUTH.thermistor;
    const rows: (string | number)[][] = [];
    for (let setC = -20; setC <= 100; setC += 5) {
      const trueK = setC + 273.15 + 0.05 * normal(); // bath sits slightly off its set-point
      const R = thermistorResistance(trueK) * (1 + t.relR * normal());
      const readC = trueK - 273.15 + t.sdT * normal();
      const rText = setC === 65 ? 'OL' : fmt(R, 1);
      rows.push([setC, fmt(readC, 3), rText]);
    }
    files['data/thermistor-calibration.csv'] = csv(['setpoint_c', 'temp_c', 'resistance_ohm'], rows);
  }

  // (d) capacity fade of one cell: capacity every 50 cycles, 0 … 700
  {
    const t = TRUTH.capacity;
    const rows: (string | number)[][] = [];
    for (let cycle = 0; cycle <= 700; cycle += 50) {
      const cap = t.C + t.A * Math.exp(-t.k * cycle) + t.sd * normal();
      rows.push([cycle, fmt(cap, 4)]);
    }
    files['data/cell-capacity-fade.csv'] = csv(['cycle', 'capacity_ah'], rows);
  }

  files['data/assay-plate-samples.csv'] = assayPlateSamples(seed);
  files['data/potency-lots.csv'] = potencyLots(seed);
  return { files, unknowns };
}

/**
 * (e) the samples on plate TB-A17 beside its standards: unknowns in duplicate at their dilutions, spiked controls
 * (nominal ng/mL) and four blanks. Its own stream (seed + 15), so the files above keep their draws.
 */
export function assayPlateSamples(seed: number): string {
  const normal = normalSource(mulberry32(seed + 15));
  const t = TRUTH.assay;
  const absorb = (conc: number) => {
    const m = conc > 0 ? fivePL(t, conc) : t.lower;
    return m + Math.sqrt(t.sd * t.sd + (t.cv * m) ** 2) * normal();
  };
  // sample, true ng/mL in the original sample, dilution factor (S-205 saturates undiluted; S-206 is near the floor)
  const samples: [string, number, number][] = [
    ['S-201', 3.1, 1],
    ['S-202', 24, 1],
    ['S-203', 180, 10],
    ['S-204', 62, 5],
    ['S-205', 4000, 1],
    ['S-206', 0.09, 1],
  ];
  const rows: (string | number)[][] = [];
  let well = 0;
  const wellName = () => {
    const k = well++;
    return String.fromCharCode(65 + Math.floor(k / 12)) + String((k % 12) + 1);
  };
  for (const [id, conc, dil] of samples) for (let rep = 0; rep < 2; rep++) rows.push([wellName(), id, dil, '', fmt(absorb(conc / dil), 3)]);
  for (const [id, nominal] of [['QC-L', 2], ['QC-M', 10], ['QC-H', 40]] as [string, number][])
    for (let rep = 0; rep < 2; rep++) rows.push([wellName(), id, 1, nominal, fmt(absorb(nominal), 3)]);
  for (let rep = 0; rep < 4; rep++) rows.push([wellName(), 'BLANK', 1, '', fmt(absorb(0), 3)]);
  return csv(['well', 'sample', 'dilution', 'nominal_ng_ml', 'absorbance'], rows);
}

/**
 * (f) a bioassay of two lots on one plate: the reference lot RS-04 and a new lot L-221 that is 1.4 times as potent
 * (its EC50 is the reference's / 1.4), same asymptotes and slope, 8 doses in triplicate. Own stream (seed + 16).
 */
export function potencyLots(seed: number): string {
  const normal = normalSource(mulberry32(seed + 16));
  const curve = (x: number, ec50: number) => 0.12 + (1.85 - 0.12) / (1 + (ec50 / x) ** 1.3);
  const rows: (string | number)[][] = [];
  for (const [lot, ec50] of [['RS-04', 14], ['L-221', 14 / 1.4]] as [string, number][])
    for (const dose of [0.5, 1.5, 4, 10, 25, 60, 150, 400])
      for (let rep = 1; rep <= 3; rep++) rows.push([lot, dose, rep, fmt(curve(dose, ec50) * (1 + 0.02 * normal()) + 0.01 * normal(), 4)]);
  return csv(['lot', 'dose_ng_ml', 'replicate', 'response'], rows);
}

function main(): void {
  const args = process.argv.slice(2);
  let seed = DEFAULT_SEED;
  let out = path.resolve(__dirname, '..', 'examples');
  for (let i = 0; i < args.length; i++) {
    if (args[i] === '--seed') seed = Number(args[++i]);
    else if (args[i] === '--out') out = path.resolve(args[++i]);
    else {
      console.error(`generate-demo: unknown argument '${args[i]}'. Use --seed N and/or --out DIR.`);
      process.exit(2);
    }
  }
  if (!Number.isInteger(seed)) {
    console.error('generate-demo: --seed needs an integer.');
    process.exit(2);
  }
  const { files, unknowns } = generateDemo(seed);
  console.log(`Tarnwell Bioprocess demo data, seed ${seed}`);
  for (const [rel, text] of Object.entries(files)) {
    const file = path.join(out, rel);
    fs.mkdirSync(path.dirname(file), { recursive: true });
    fs.writeFileSync(file, text);
    console.log(`  wrote ${path.relative(process.cwd(), file)} (${text.split('\n').length - 2} rows)`);
  }
  console.log(`  unknown samples (solveFor in assay-standard-curve.fitspec.json): ${unknowns.map(u => `${u.sample}=${u.absorbance}`).join(', ')}`);
}

if (require.main === module) main();

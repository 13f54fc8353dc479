// Reader of the NIST StRD .dat files (nonlinear and linear least squares; LF or CRLF), the data folder, and the LRE measure (NIST's definition, as in DESIGN.md "Correctness references").
import * as assert from 'assert';
import * as fs from 'fs';
import * as path from 'path';

export interface StrdCertified {
  /** certified parameter estimates, in file order (b1… or B0…) */
  values: number[];
  /** certified standard deviations of the estimates */
  sd: number[];
  /** residual sum of squares (linear files: from the ANOVA table) */
  rss: number;
  /** residual standard deviation */
  rsd: number;
  /** residual degrees of freedom */
  dof: number;
  /** R-squared (linear files only) */
  r2?: number;
}

export interface StrdProblem {
  name: string;
  kind: 'nonlinear' | 'linear';
  /** the model line(s) as NIST writes them */
  model: string;
  n: number;
  p: number;
  /** parameter names in file order, e.g. ['b1','b2'] or ['B0','B1'] */
  params: string[];
  /** nonlinear: [Start 1, Start 2]; linear: [] */
  starts: number[][];
  certified: StrdCertified;
  /** names of the predictor columns in file order */
  xNames: string[];
  /** x[v][i]: predictor v, observation i */
  x: number[][];
  y: number[];
  /** significant digits of the certified values: 11 (nonlinear) or 15 (linear), per the NIST documentation */
  digits: number;
}

const NUM = String.raw`[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?`;

/** parse one NIST StRD file (throws with the file name and line on anything unexpected) */
export function readStrd(file: string): StrdProblem {
  const text = fs.readFileSync(file, 'utf8');
  const lines = text.split(/\r?\n/);
  const name = path.basename(file).replace(/\.dat$/i, '');
  const fail = (msg: string): never => {
    throw new Error(`${file}: ${msg}`);
  };
  if (!lines[0].startsWith('NIST/ITL StRD')) fail('not a NIST StRD file (first line should be "NIST/ITL StRD")');
  const kind: 'nonlinear' | 'linear' = /Nonlinear Least Squares/i.test(text) ? 'nonlinear' : 'linear';
  const dataRange = /Data\s+\(lines\s+(\d+)\s+to\s+(\d+)\)/.exec(text) ?? fail('no "Data (lines a to b)" in the header');
  const d0 = Number(dataRange[1]);
  const d1 = Number(dataRange[2]);
  // column names: the last "Data:" line before the data block
  let header: string | undefined;
  for (let i = d0 - 2; i >= 0; i--) {
    if (/^\s*Data:/.test(lines[i])) { header = lines[i]; break; }
  }
  if (!header) fail('no "Data:" column header above the data block');
  const cols = header!.replace(/^\s*Data:\s*/, '').trim().split(/\s+/);
  const yCol = cols.indexOf('y');
  if (yCol < 0) fail(`data header "${header!.trim()}" has no y column`);
  const xNames = cols.filter((c) => c !== 'y');
  const x: number[][] = xNames.map(() => []);
  const y: number[] = [];
  for (let i = d0 - 1; i <= d1 - 1; i++) {
    const parts = lines[i].trim().split(/\s+/).map(Number);
    if (parts.length !== cols.length || parts.some((v) => !Number.isFinite(v))) fail(`line ${i + 1}: expected ${cols.length} numbers`);
    let v = 0;
    for (let c = 0; c < cols.length; c++) {
      if (c === yCol) y.push(parts[c]);
      else x[v++].push(parts[c]);
    }
  }
  const modelStart = lines.findIndex((l) => /^Model:/.test(l));
  const modelLines: string[] = [];
  for (let i = modelStart + 1; i < lines.length && modelLines.length < 8; i++) {
    const l = lines[i].trim();
    if (/=/.test(l)) modelLines.push(l);
    if (/Starting values|Certified Regression|Certified Values/i.test(l)) break;
  }
  const model = modelLines.filter((l) => !/Starting|Certified/i.test(l)).join(' ');
  const params: string[] = [];
  const starts: number[][] = [];
  const values: number[] = [];
  const sd: number[] = [];
  const grab = (re: RegExp): number => {
    const mm = re.exec(text);
    if (!mm) fail(`missing ${re.source}`);
    return Number(mm![1]);
  };
  let rss: number;
  let rsd: number;
  let dof: number;
  let r2: number | undefined;
  if (kind === 'nonlinear') {
    const re = new RegExp(String.raw`^\s*(b\d+)\s*=\s*(${NUM})\s+(${NUM})\s+(${NUM})\s+(${NUM})\s*$`);
    starts.push([], []);
    for (const l of lines) {
      const mm = re.exec(l);
      if (!mm) continue;
      params.push(mm[1]);
      starts[0].push(Number(mm[2]));
      starts[1].push(Number(mm[3]));
      values.push(Number(mm[4]));
      sd.push(Number(mm[5]));
    }
    rss = grab(new RegExp(String.raw`Residual Sum of Squares:\s*(${NUM})`));
    rsd = grab(new RegExp(String.raw`Residual Standard Deviation:\s*(${NUM})`));
    dof = grab(/Degrees of Freedom:\s*(\d+)/);
  } else {
    const re = new RegExp(String.raw`^\s*(B\d+)\s+(${NUM})\s+(${NUM})\s*$`);
    for (const l of lines) {
      const mm = re.exec(l);
      if (!mm) continue;
      params.push(mm[1]);
      values.push(Number(mm[2]));
      sd.push(Number(mm[3]));
    }
    rsd = grab(new RegExp(String.raw`Standard Deviation\s+(${NUM})\s*$`, 'm'));
    r2 = grab(new RegExp(String.raw`R-Squared\s+(${NUM})`));
    const res = new RegExp(String.raw`^Residual\s+(\d+)\s+(${NUM})\s+(${NUM})`, 'm').exec(text) ?? fail('no "Residual" row in the ANOVA table');
    dof = Number(res[1]);
    rss = Number(res[2]);
  }
  if (params.length === 0) fail('no parameter lines found');
  return {
    name, kind, model, n: y.length, p: params.length, params, starts,
    certified: { values, sd, rss, rsd, dof, r2 }, xNames, x, y, digits: kind === 'nonlinear' ? 11 : 15,
  };
}

/** the folder of the NIST files: env STRD_DIR, else ../shared/reference/nist-strd beside the checkout; null when absent */
export function strdDir(): string | null {
  const repoRoot = path.resolve(__dirname, '..', '..');
  const dir = process.env.STRD_DIR ? path.resolve(process.env.STRD_DIR) : path.resolve(repoRoot, '..', 'shared', 'reference', 'nist-strd');
  return fs.existsSync(path.join(dir, 'nonlinear')) || fs.existsSync(path.join(dir, 'linear')) ? dir : null;
}

/**
 * Log relative error, NIST's accuracy measure: −log10(|est − cert| / |cert|), or −log10|est| when cert = 0,
 * capped at the certified digits; 0 for a wrong sign of magnitude or NaN.
 */
export function lre(est: number, cert: number, digits: number): number {
  if (!Number.isFinite(est)) return 0;
  const err = cert === 0 ? Math.abs(est) : Math.abs(est - cert) / Math.abs(cert);
  if (err === 0) return digits;
  const v = -Math.log10(err);
  return Math.max(0, Math.min(digits, v));
}

/**
 * Guard for the reference suites: returns the folder, or (folder missing) prints a loud notice and returns null so
 * the suite skips — except under CI=true, where the caller must fail.
 */
export function strdFolderOrNotice(sub: 'nonlinear' | 'linear'): string | null {
  const dir = strdDir();
  if (dir && fs.existsSync(path.join(dir, sub))) return path.join(dir, sub);
  const msg = `\n!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!\n` +
    `!!! NIST StRD ${sub} files not found: set STRD_DIR to the folder holding nonlinear/ and linear/\n` +
    `!!! (default: ../shared/reference/nist-strd beside the repository). Reference tests SKIPPED.\n` +
    `!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!\n`;
  console.warn(msg);
  return null;
}

/**
 * The one test a suite registers when the reference folder is missing: a skip with the loud notice above, except
 * under CI=true, where a missing folder fails, so CI can never pass without running the reference tests.
 */
export function itRequiresStrdFolder(): void {
  it('reference data folder is present (STRD_DIR)', function () {
    if (process.env.CI === 'true') {
      assert.fail('NIST StRD files not found: set STRD_DIR to the folder holding nonlinear/ and linear/ (CI requires them)');
    }
    this.skip();
  });
}

// Benchmark: reading two numeric columns of a generated CSV — readTable (streamed papaparse, strict numbers, line
// tracking, sha256) versus peers measured in the same run: papaparse streamed alone (no number parsing), and the
// naive whole-file approach (readFileSync + split + Number(), which holds the file as one string).
// Two files: 10^6 plain rows x 3 numbers (the numeric fast path) and rows with a quoted text column (the general path).
// Run: npx tsx bench/csv-read.ts [megabytes of the quoted file] [rows of the plain file]
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import Papa from 'papaparse';
import { readTable } from '../src/engine/data';

const mb = Number(process.argv[2] ?? 20);
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-bench-csv-'));
const rowsPlain = Number(process.argv[3] ?? 1e6);
let file = path.join(dir, 'bench.csv');
const quotedFile = file;
const plainFile = path.join(dir, 'plain.csv');

function generatePlain(): number {
  const fd = fs.openSync(plainFile, 'w');
  fs.writeSync(fd, 'time_s,signal,temperature\n');
  for (let r = 0; r < rowsPlain; ) {
    let chunk = '';
    for (let k = 0; k < 5000 && r < rowsPlain; k++, r++) chunk += `${r * 0.5},${(Math.sin(r / 1000) * 3).toFixed(6)},${(20 + (r % 7) * 0.01).toFixed(4)}\n`;
    fs.writeSync(fd, chunk);
  }
  fs.closeSync(fd);
  return rowsPlain;
}

function generate(): number {
  const fd = fs.openSync(file, 'w');
  fs.writeSync(fd, 'time_s,signal,note,temperature\n');
  let bytes = 0;
  let rows = 0;
  while (bytes < mb * 2 ** 20) {
    let chunk = '';
    for (let k = 0; k < 5000; k++, rows++) chunk += `${rows * 0.5},${(Math.sin(rows / 1000) * 3).toFixed(6)},"row ${rows}, ok",${(20 + (rows % 7)).toFixed(2)}\n`;
    bytes += fs.writeSync(fd, chunk);
  }
  fs.closeSync(fd);
  return rows;
}

function papaAlone(): Promise<number> {
  return new Promise((resolve) => {
    let n = 0;
    (Papa.parse as unknown as (i: unknown, c: unknown) => void)(fs.createReadStream(file, { encoding: 'utf8', highWaterMark: 1 << 20 }), {
      delimiter: ',',
      step: () => {
        n++;
      },
      complete: () => resolve(n - 1),
    });
  });
}

function naive(): number {
  const lines = fs.readFileSync(file, 'utf8').split('\n');
  const a: number[] = [];
  const b: number[] = [];
  for (let i = 1; i < lines.length; i++) {
    if (lines[i] === '') continue;
    const f = lines[i].split(',');
    a.push(Number(f[0]));
    b.push(Number(f[1]));
  }
  return a.length;
}

async function time(fn: () => Promise<number> | number): Promise<{ ms: number; rows: number; heapMb: number }> {
  const h0 = process.memoryUsage().heapUsed;
  let peak = h0;
  const timer = setInterval(() => (peak = Math.max(peak, process.memoryUsage().heapUsed)), 10);
  const t0 = process.hrtime.bigint();
  const rows = await fn();
  const ms = Number(process.hrtime.bigint() - t0) / 1e6;
  clearInterval(timer);
  peak = Math.max(peak, process.memoryUsage().heapUsed);
  return { ms, rows, heapMb: (peak - h0) / 2 ** 20 };
}

async function table(title: string, columns: string[], rows: number): Promise<void> {
  const size = fs.statSync(file).size / 2 ** 20;
  console.log(`\n${title}: ${size.toFixed(1)} MB, ${rows} rows; ${os.cpus().length} cores, load ${os.loadavg()[0].toFixed(1)}`);
  const runs: [string, () => Promise<number> | number][] = [
    ['readTable (curvewright)', async () => (await readTable(file, { columns })).totalRows],
    ['papaparse stream, no numbers', papaAlone],
    ['readFileSync + split + Number', naive],
  ];
  const results: { name: string; ms: number; rows: number; heapMb: number }[] = [];
  for (const [name, fn] of runs) results.push({ name, ...(await time(fn)) });
  const base = results[0].ms;
  console.log('| method | rows | time (ms) | M rows/s | MB/s | ratio to readTable | peak heap growth (MB) |');
  console.log('|---|---|---|---|---|---|---|');
  for (const r of results)
    console.log(`| ${r.name} | ${r.rows} | ${r.ms.toFixed(0)} | ${(r.rows / r.ms / 1000).toFixed(2)} | ${(size / (r.ms / 1000)).toFixed(1)} | ${(r.ms / base).toFixed(2)} | ${r.heapMb.toFixed(0)} |`);
  const rate = results[0].rows / results[0].ms / 1000;
  if (columns.length === 3) console.log(`goal >= 2 M rows/s at 10^6 rows x 3 numbers: ${rate.toFixed(2)} M rows/s — ${rate >= 2 ? 'pass' : 'falls short'}`);
}

(async () => {
  file = plainFile;
  await table('CSV read, plain numbers (fast path), 3 columns read', ['time_s', 'signal', 'temperature'], generatePlain());
  file = quotedFile;
  await table('CSV read, 4 columns (one quoted: general path), 2 read', ['time_s', 'signal'], generate());
  fs.rmSync(dir, { recursive: true, force: true });
})();

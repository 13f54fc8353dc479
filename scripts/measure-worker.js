#!/usr/bin/env node
'use strict';
// Measures what the extension host thread pays for a fit of a large CSV run in the engine worker (dist/worker.js):
// wall time of the fit, and the longest stall of the calling thread's event loop (a 10 ms timer's lateness) while
// the worker reads, fits and sends back the report. Prints a table. Usage: node scripts/measure-worker.js [rows...]
const { Worker } = require('worker_threads');
const fs = require('fs');
const os = require('os');
const path = require('path');

const workerPath = path.resolve(__dirname, '..', 'dist', 'worker.js');
if (!fs.existsSync(workerPath)) { console.error('dist/worker.js missing: run `node esbuild.js` first'); process.exit(2); }
const sizes = process.argv.slice(2).map(Number).filter(n => n > 0);
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-measure-'));

function makeCsv(n) {
  const file = path.join(dir, `line-${n}.csv`);
  let seed = 7;
  const rand = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
  const chunks = ['x,y\n'];
  for (let i = 0; i < n; i++) { const x = i / n * 10; chunks.push(`${x.toFixed(6)},${(2 + 0.5 * x + 0.1 * (rand() - 0.5)).toFixed(6)}\n`); }
  fs.writeFileSync(file, chunks.join(''));
  const spec = path.join(dir, `line-${n}.fitspec.json`);
  fs.writeFileSync(spec, JSON.stringify({ data: { file: path.basename(file), x: 'x', y: 'y' }, models: [{ name: 'line', builtin: 'linear' }, { name: 'quad', polynomial: 2 }] }));
  return { spec, bytes: fs.statSync(file).size };
}

function once(spec) {
  return new Promise((resolve, reject) => {
    const w = new Worker(workerPath, { workerData: { cancel: new SharedArrayBuffer(4) } });
    let maxLag = 0, last = Date.now();
    const timer = setInterval(() => { const now = Date.now(); maxLag = Math.max(maxLag, now - last - 10); last = now; }, 10);
    const t0 = Date.now();
    w.on('message', m => {
      if (m.type !== 'result') return;
      const tRecv = Date.now();
      // the host's next step: read problems and models (diagnostics) — touch them as it does
      const r = m.result;
      const summary = r.error ? r.error.message : `${r.models.length} models, ${r.data.used} rows used`;
      setTimeout(() => { clearInterval(timer); void w.terminate(); resolve({ ms: tRecv - t0, workerMs: m.ms, maxLag, summary }); }, 30);
    });
    w.on('error', e => { clearInterval(timer); reject(e); });
    w.postMessage({ type: 'run', id: 1, specPath: spec, workspaceRoot: dir });
  });
}

(async () => {
  const rows = [];
  for (const n of sizes.length ? sizes : [1000, 100000, 1000000]) {
    const { spec, bytes } = makeCsv(n);
    const r = await once(spec);
    rows.push({ rows: n, 'CSV MB': (bytes / 1e6).toFixed(1), 'fit ms (worker)': r.workerMs, 'round trip ms': r.ms, 'host max stall ms': r.maxLag, result: r.summary });
  }
  console.table(rows);
  fs.rmSync(dir, { recursive: true, force: true });
})().catch(e => { console.error(e.message); fs.rmSync(dir, { recursive: true, force: true }); process.exit(1); });

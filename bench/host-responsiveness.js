#!/usr/bin/env node
'use strict';
// Host responsiveness while a large CSV is fitted: the longest stall of the calling thread's event loop (lateness of
// a 10 ms timer) when the engine runs in the worker thread (dist/worker.js, as the extension does) against the peer
// design, the same engine run on the calling thread (what an extension without a worker would do). Target: the
// extension host never blocks more than 50 ms. Prints a table with the ratio of the two, measured in the same run.
//   usage: node esbuild.js && node bench/host-responsiveness.js [rows...]      (default 1000 100000 1000000)
// Measured 2026-12-02 on the 2-core CI-like machine (load 1.0), models linear + polynomial 2:
//   rows       fit s (worker)  max stall ms (worker)  max stall ms (same thread)  ratio
//   1,000      0.26            6                      137                         23
//   100,000    2.1             8                      1,179                       147
//   1,000,000  11.2            17                     7,806                       459
const { Worker } = require('worker_threads');
const fs = require('fs');
const os = require('os');
const path = require('path');

const workerPath = path.resolve(__dirname, '..', 'dist', 'worker.js');
if (!fs.existsSync(workerPath)) { console.error('dist/worker.js missing: run `node esbuild.js` first'); process.exit(2); }
const sizes = process.argv.slice(2).map(Number).filter(n => n > 0);
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-bench-host-'));

function makeCsv(n) {
  const file = path.join(dir, `line-${n}.csv`);
  let seed = 7;
  const rand = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
  const out = fs.openSync(file, 'w');
  fs.writeSync(out, 'x,y\n');
  let chunk = [];
  for (let i = 0; i < n; i++) {
    const x = (i / n) * 10;
    chunk.push(`${x.toFixed(6)},${(2 + 0.5 * x + 0.1 * (rand() - 0.5)).toFixed(6)}\n`);
    if (chunk.length === 10000) { fs.writeSync(out, chunk.join('')); chunk = []; }
  }
  fs.writeSync(out, chunk.join(''));
  fs.closeSync(out);
  const spec = path.join(dir, `line-${n}.fitspec.json`);
  fs.writeFileSync(spec, JSON.stringify({ data: { file: path.basename(file), x: 'x', y: 'y' }, models: [{ name: 'line', builtin: 'linear' }, { name: 'quad', polynomial: 2 }] }));
  return { spec, bytes: fs.statSync(file).size };
}

/** Watches the event loop of this thread; returns a stop function giving the longest stall in ms. */
function watchLoop() {
  let maxLag = 0, last = Date.now();
  const timer = setInterval(() => { const now = Date.now(); maxLag = Math.max(maxLag, now - last - 10); last = now; }, 10);
  return () => { clearInterval(timer); const now = Date.now(); return Math.max(maxLag, now - last - 10); };
}

function inWorker(spec) {
  return new Promise((resolve, reject) => {
    const w = new Worker(workerPath, { workerData: { cancel: new SharedArrayBuffer(4) } });
    const stop = watchLoop();
    const t0 = Date.now();
    w.on('message', m => {
      if (m.type !== 'result') return;
      const ms = Date.now() - t0;
      const r = m.result;
      const summary = r.error ? r.error.message : `${r.models.length} models, ${r.data.used} rows`;
      setTimeout(() => { const lag = stop(); void w.terminate(); resolve({ ms, lag, summary }); }, 30);
    });
    w.on('error', e => { stop(); reject(e); });
    w.postMessage({ type: 'run', id: 1, specPath: spec, workspaceRoot: dir });
  });
}

async function inThread(spec) {
  // the peer: the same engine (bundled from src/engine/index.ts) run on this thread
  const { runSpecFile } = require('../out/bench/engine.js');
  const stop = watchLoop();
  const t0 = Date.now();
  const r = await runSpecFile(spec, { workspaceRoot: dir });
  const ms = Date.now() - t0;
  await new Promise(res => setTimeout(res, 30));
  return { ms, lag: stop(), summary: r.error ? r.error.message : `${r.models.length} models, ${r.data.used} rows` };
}

(async () => {
  // bundle the engine once for the in-thread peer
  await require('esbuild').build({ entryPoints: [path.join(__dirname, '..', 'src', 'engine', 'index.ts')], outfile: path.join(__dirname, '..', 'out', 'bench', 'engine.js'),
    bundle: true, platform: 'node', format: 'cjs', target: 'node20', mainFields: ['module', 'main'], logLevel: 'warning' });
  const rows = [];
  for (const n of sizes.length ? sizes : [1000, 100000, 1000000]) {
    const { spec, bytes } = makeCsv(n);
    const w = await inWorker(spec);
    const t = await inThread(spec);
    rows.push({ rows: n, 'CSV MB': +(bytes / 1e6).toFixed(1), 'fit ms (worker)': w.ms, 'max stall ms (worker)': w.lag,
      'fit ms (same thread)': t.ms, 'max stall ms (same thread)': t.lag, 'stall ratio same/worker': +(t.lag / Math.max(1, w.lag)).toFixed(1),
      'under 50 ms': w.lag <= 50 ? 'yes' : 'NO', result: w.summary });
  }
  console.log(`host event-loop stalls while fitting (${os.cpus().length} cores, load ${os.loadavg()[0].toFixed(1)})`);
  console.table(rows);
  fs.rmSync(dir, { recursive: true, force: true });
})().catch(e => { console.error(e.message); fs.rmSync(dir, { recursive: true, force: true }); process.exit(1); });

// worker_threads entry: runs the engine off the extension host thread. Receives 'run' / 'cancel' / 'suggest'
// (src/shared/protocol.ts), calls runSpecFile with a shouldStop that sees cancels through a shared Int32Array
// (synchronous solver loops never yield to this thread's event loop), and posts the result.
import * as path from 'path';
import { parentPort, workerData } from 'worker_threads';
import { runSpecFile, writeResults } from './engine/run';
import { suggestSpec } from './engine/starter';
import { isErrorReport, type FitReport } from './engine/report';
import type { HostToWorker, RunRequest, WorkerInit, WorkerToHost } from './shared/protocol';
import { PROTOCOL_VERSION } from './shared/protocol';

const port = parentPort;
if (!port) throw new Error('src/worker.ts must run as a worker thread');
const init = workerData as WorkerInit | undefined;
const cancelSlot = init?.cancel ? new Int32Array(init.cancel) : new Int32Array(1);
const cancelled = new Set<number>();

function post(m: WorkerToHost): void { port!.postMessage(m); }

/** Runs one at a time, in arrival order; a cancelled run still queued is answered 'cancelled' without starting. */
const queue: RunRequest[] = [];
let running = false;

async function pump(): Promise<void> {
  if (running) return;
  running = true;
  try {
    while (queue.length) {
      const req = queue.shift()!;
      if (isCancelled(req.id)) { post({ type: 'cancelled', inReplyTo: req.id }); cancelled.delete(req.id); continue; }
      await runOne(req);
      cancelled.delete(req.id);
    }
  } finally { running = false; }
}

function isCancelled(id: number): boolean {
  return cancelled.has(id) || Atomics.load(cancelSlot, 0) === id;
}

async function runOne(req: RunRequest): Promise<void> {
  const t0 = Date.now();
  try {
    const result = await runSpecFile(req.specPath, {
      specText: req.specText,
      workspaceRoot: req.workspaceRoot ?? path.dirname(req.specPath), // no workspace folder: the spec's own folder
      trustPaths: req.trustPaths === true,
      trustHint: req.trustHint,
      shouldStop: () => isCancelled(req.id),
      onProgress: message => post({ type: 'progress', inReplyTo: req.id, message }),
    });
    if (isCancelled(req.id)) { post({ type: 'cancelled', inReplyTo: req.id }); return; }
    let written: string | null = null;
    let writeError: string | undefined;
    if (req.writeResults && !isErrorReport(result)) {
      try { written = await writeResults(result, req.specPath, { workspaceRoot: req.workspaceRoot ?? path.dirname(req.specPath), trustPaths: req.trustPaths === true }); }
      catch (e) { writeError = (e as Error).message; }
    }
    const transfer = isErrorReport(result) ? [] : packPoints(result);
    port!.postMessage({ type: 'result', inReplyTo: req.id, result, written, writeError, ms: Date.now() - t0 } satisfies WorkerToHost, transfer);
  } catch (e) {
    post({ type: 'failure', inReplyTo: req.id, message: (e as Error)?.stack || String(e) });
  }
}

/** Above this many rows the per-point arrays travel as typed arrays whose buffers are transferred, not copied:
 *  the host thread then spends no time deserializing 10^6-row reports, and the webview receives ArrayBuffers. */
export const TYPED_POINTS_ABOVE = 2000;

function packPoints(report: FitReport): ArrayBuffer[] {
  const buffers: ArrayBuffer[] = [];
  const pack = (a: unknown, int = false): unknown => {
    if (!Array.isArray(a)) return a;
    const t = int ? Int32Array.from(a as number[]) : Float64Array.from(a as number[]);
    buffers.push(t.buffer as ArrayBuffer);
    return t;
  };
  for (const m of report.models) {
    const p = m.points as unknown as Record<string, unknown> | undefined;
    if (!p || !Array.isArray(p.row) || (p.row as number[]).length <= TYPED_POINTS_ABOVE) continue;
    for (const k of ['y', 'fitted', 'residual', 'standardized', 'leverage', 'cooks', 'weight']) if (k in p) p[k] = pack(p[k]);
    p.row = pack(p.row, true);
    const x = p.x as Record<string, unknown>;
    for (const k of Object.keys(x)) x[k] = pack(x[k]);
  }
  return buffers;
}

port.on('message', (m: HostToWorker) => {
  switch (m.type) {
    case 'run': queue.push(m); void pump(); break;
    case 'cancel': cancelled.add(m.id); break;
    case 'suggest':
      suggestSpec(m.csvPath).then(
        suggestion => post({ type: 'suggestion', inReplyTo: m.id, suggestion }),
        e => post({ type: 'suggestion', inReplyTo: m.id, error: (e as Error).message || String(e) }),
      );
      break;
  }
});

post({ type: 'ready', version: PROTOCOL_VERSION });

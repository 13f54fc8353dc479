// Runs many specs in parallel on worker threads. The workers run this same bundle (dist/cli.js) in worker mode
// (workerData.curvewrightCliWorker), so no extra entry point is needed. Unbundled (tests under tsx) or with one
// job, specs run in this thread instead.
import * as os from 'os';
import { Worker, isMainThread, parentPort, workerData } from 'worker_threads';
import { runSpecFile } from '../engine/run';
import type { RunResult } from '../engine/report';
import { PROTOCOL_VERSION, type CliJobRequest, type CliWorkerToPool } from '../shared/protocol';

export const WORKER_FLAG = 'curvewrightCliWorker';

export function defaultJobs(): number {
  return Math.max(1, os.cpus().length);
}

/** True in a worker thread started by runAll. */
export function isCliWorker(): boolean {
  return !isMainThread && !!workerData && (workerData as Record<string, unknown>)[WORKER_FLAG] === true;
}

/** The worker side: answer each job with its RunResult. */
export function startCliWorker(): void {
  const port = parentPort!;
  port.on('message', async (job: CliJobRequest) => {
    let reply: CliWorkerToPool;
    try {
      reply = { type: 'result', inReplyTo: job.id, result: await runSpecFile(job.specPath, { workspaceRoot: job.workspaceRoot, trustPaths: job.trustPaths === true }) };
    } catch (e) {
      reply = { type: 'failure', inReplyTo: job.id, message: e instanceof Error ? e.stack ?? e.message : String(e) };
    }
    port.postMessage(reply);
  });
  port.postMessage({ type: 'ready', version: PROTOCOL_VERSION } satisfies CliWorkerToPool);
}

export class InternalError extends Error {
  constructor(message: string, readonly detail?: string) {
    super(message);
    this.name = 'InternalError';
  }
}

/**
 * Runs every spec (absolute or cwd-relative paths) and calls onResult(index, result) as each finishes (any order).
 * Resolves with the results in the order given.
 */
export async function runAll(
  specs: string[],
  opts: { jobs: number; workspaceRoot: string; trustPaths?: boolean },
  onResult: (index: number, result: RunResult) => void = () => undefined,
): Promise<RunResult[]> {
  const results: RunResult[] = new Array(specs.length);
  const bundled = __filename.endsWith('.js');
  const jobs = Math.min(opts.jobs, specs.length);
  if (!bundled || jobs <= 1) {
    for (let i = 0; i < specs.length; i++) {
      results[i] = await runSpecFile(specs[i], { workspaceRoot: opts.workspaceRoot, trustPaths: opts.trustPaths === true });
      onResult(i, results[i]);
    }
    return results;
  }
  let next = 0;
  const workers: Worker[] = [];
  try {
    await new Promise<void>((resolve, reject) => {
      let done = 0;
      const feed = (w: Worker) => {
        if (next >= specs.length) return;
        const id = next++;
        w.postMessage({ type: 'job', id, specPath: specs[id], workspaceRoot: opts.workspaceRoot, trustPaths: opts.trustPaths === true } satisfies CliJobRequest);
      };
      for (let k = 0; k < jobs; k++) {
        const w = new Worker(__filename, { workerData: { [WORKER_FLAG]: true } });
        workers.push(w);
        w.on('message', (m: CliWorkerToPool) => {
          if (m.type === 'ready') {
            // the workers run this same bundle, so a mismatch means a broken build, not a user error
            if (m.version !== PROTOCOL_VERSION) reject(new InternalError(`a worker speaks protocol ${m.version}, this CLI ${PROTOCOL_VERSION}`));
            else feed(w);
            return;
          }
          if (m.type === 'failure') {
            reject(new InternalError(`a worker failed on ${specs[m.inReplyTo]}`, m.message));
            return;
          }
          results[m.inReplyTo] = m.result;
          onResult(m.inReplyTo, m.result);
          if (++done === specs.length) resolve();
          else feed(w);
        });
        w.on('error', e => reject(new InternalError(`a worker thread stopped: ${e.message}`, e.stack)));
        w.on('exit', code => {
          if (done < specs.length && code !== 0) reject(new InternalError(`a worker thread exited with code ${code}`));
        });
      }
    });
  } finally {
    await Promise.all(workers.map(w => w.terminate()));
  }
  return results;
}

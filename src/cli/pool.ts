// Runs many specs in parallel on worker threads. The workers run this same bundle (dist/cli.js) in worker mode
// (workerData.curvewrightCliWorker), so no extra entry point is needed. With fewer specs than jobs, each spec runs in
// this thread and the separate fits of its groups (data.groupBy) are spread over the workers in chunks of consecutive
// groups, put back in the groups' order: the report is byte-identical whatever the number of workers. Unbundled
// (tests under tsx, unless CURVEWRIGHT_POOL_WORKER names a worker script) or with one job, everything runs in this thread.
import * as os from 'os';
import { Worker, isMainThread, parentPort, workerData } from 'worker_threads';
import { runSpecFile, runSpecGroups } from '../engine/run';
import type { ErrorReport, GroupFit, RunResult } from '../engine/report';
import { PROTOCOL_VERSION, type CliGroupsRequest, type CliJobRequest, type CliPoolToWorker, type CliWorkerToPool } from '../shared/protocol';

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
  port.on('message', async (job: CliPoolToWorker) => {
    let reply: CliWorkerToPool;
    const ropts = { workspaceRoot: job.workspaceRoot, trustPaths: job.trustPaths === true };
    try {
      reply =
        job.type === 'groups'
          ? { type: 'groups-result', inReplyTo: job.id, result: await runSpecGroups(job.specPath, ropts, job.groups) }
          : { type: 'result', inReplyTo: job.id, result: await runSpecFile(job.specPath, ropts) };
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

/** Chunks of consecutive group positions, about four per worker so that uneven groups balance. */
export function groupChunks(groups: number, jobs: number): number[][] {
  const size = Math.max(1, Math.ceil(groups / (4 * jobs)));
  const out: number[][] = [];
  for (let g = 0; g < groups; g += size) out.push(Array.from({ length: Math.min(size, groups - g) }, (_, k) => g + k));
  return out;
}

type Reply = { result: RunResult } | { groups: GroupFit[] | ErrorReport };

/** Up to `jobs` worker threads (started on demand) answering requests; each request goes to the next idle worker. */
class Pool {
  private readonly workers: Worker[] = [];
  private readonly idle: Worker[] = [];
  private readonly queue: { req: CliPoolToWorker; resolve: (r: Reply) => void; reject: (e: Error) => void }[] = [];
  private readonly pending = new Map<number, { resolve: (r: Reply) => void; reject: (e: Error) => void; what: string }>();
  private nextId = 0;
  private broken: Error | null = null;

  constructor(
    private readonly jobs: number,
    private readonly script: string,
  ) {}

  private spawn(): void {
    {
      const w = new Worker(this.script, { workerData: { [WORKER_FLAG]: true } });
      this.workers.push(w);
      w.on('message', (m: CliWorkerToPool) => {
        if (m.type === 'ready') {
          // the workers run this same bundle, so a mismatch means a broken build, not a user error
          if (m.version !== PROTOCOL_VERSION) this.fail(new InternalError(`a worker speaks protocol ${m.version}, this CLI ${PROTOCOL_VERSION}`));
          else this.release(w);
          return;
        }
        const p = this.pending.get(m.inReplyTo);
        if (!p) return;
        this.pending.delete(m.inReplyTo);
        if (m.type === 'failure') p.reject(new InternalError(`a worker failed on ${p.what}`, m.message));
        else p.resolve(m.type === 'result' ? { result: m.result } : { groups: m.result });
        this.release(w);
      });
      w.on('error', e => this.fail(new InternalError(`a worker thread stopped: ${e.message}`, e.stack)));
      w.on('exit', code => {
        if (code !== 0 && this.pending.size) this.fail(new InternalError(`a worker thread exited with code ${code}`));
      });
    }
  }

  private fail(e: Error): void {
    this.broken ??= e;
    for (const p of this.pending.values()) p.reject(e);
    this.pending.clear();
    for (const q of this.queue.splice(0)) q.reject(e);
  }

  private release(w: Worker): void {
    const q = this.queue.shift();
    if (!q) {
      this.idle.push(w);
      return;
    }
    this.pending.set(q.req.id, { resolve: q.resolve, reject: q.reject, what: q.req.specPath });
    w.postMessage(q.req);
  }

  request(req: Omit<CliJobRequest, 'id'> | Omit<CliGroupsRequest, 'id'>): Promise<Reply> {
    if (this.broken) return Promise.reject(this.broken);
    const full = { ...req, id: this.nextId++ } as CliPoolToWorker;
    return new Promise<Reply>((resolve, reject) => {
      this.queue.push({ req: full, resolve, reject });
      const w = this.idle.shift();
      if (w) this.release(w);
      else if (this.workers.length < this.jobs) this.spawn();
    });
  }

  async close(): Promise<void> {
    await Promise.all(this.workers.map(w => w.terminate()));
  }
}

/** The script workers run: this bundle; under tsx (tests) a compiled CLI named by CURVEWRIGHT_POOL_WORKER, else none. */
function workerScript(): string | null {
  if (__filename.endsWith('.js')) return __filename;
  return process.env.CURVEWRIGHT_POOL_WORKER || null;
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
  const script = workerScript();
  const jobs = Math.max(1, opts.jobs);
  const ropts = { workspaceRoot: opts.workspaceRoot, trustPaths: opts.trustPaths === true };
  if (!script || jobs <= 1) {
    for (let i = 0; i < specs.length; i++) {
      results[i] = await runSpecFile(specs[i], ropts);
      onResult(i, results[i]);
    }
    return results;
  }
  const pool = new Pool(jobs, script);
  try {
    if (specs.length < jobs) {
      // few specs: one at a time here, the separate fits of its groups spread over the workers
      for (let i = 0; i < specs.length; i++) {
        const spec = specs[i];
        const groupRunner = async (groups: number): Promise<GroupFit[] | ErrorReport> => {
          const parts = await Promise.all(groupChunks(groups, jobs).map(chunk => pool.request({ type: 'groups', specPath: spec, ...ropts, groups: chunk })));
          const out: GroupFit[] = [];
          for (const p of parts) {
            const g = (p as { groups: GroupFit[] | ErrorReport }).groups;
            if ('error' in g) return g;
            out.push(...g);
          }
          return out;
        };
        results[i] = await runSpecFile(spec, { ...ropts, groupRunner });
        onResult(i, results[i]);
      }
    } else {
      await Promise.all(
        specs.map(async (spec, i) => {
          const r = await pool.request({ type: 'job', specPath: spec, ...ropts });
          results[i] = (r as { result: RunResult }).result;
          onResult(i, results[i]);
        }),
      );
    }
  } finally {
    await pool.close();
  }
  return results;
}

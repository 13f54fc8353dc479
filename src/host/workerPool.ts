// Lazy pool of engine worker threads (src/worker.ts). Per-key latest-wins: a new run for a spec cancels the one
// in flight; a worker that does not answer a cancel within the timeout is terminated and replaced on next use.
import { Worker } from 'worker_threads';
import type { RunRequest, SpecSuggestion, WorkerInit, WorkerToHost, WorkerResultMessage } from '../shared/protocol';

export type RunOutcome =
  | { kind: 'result'; message: WorkerResultMessage }
  | { kind: 'cancelled' }
  | { kind: 'failed'; message: string };

interface Job {
  id: number;
  key: string;
  request: RunRequest;
  resolve(o: RunOutcome): void;
  onProgress?(message: string): void;
  slot?: Slot;
  cancelTimer?: NodeJS.Timeout;
}

interface Slot {
  worker: Worker;
  cancel: Int32Array;
  job?: Job;
  suggests: Map<number, (m: { suggestion?: SpecSuggestion; error?: string }) => void>;
}

export interface PoolLog { info(m: string): void; warn(m: string): void; error(m: string): void }

export interface PoolOptions {
  workerPath: string;
  size: () => number;
  cancelTimeoutMs: () => number;
  /** where to log (the host passes its output channel; the pool itself needs no vscode) */
  log?: PoolLog;
}

const quiet: PoolLog = { info() {}, warn() {}, error() {} };

export class WorkerPool {
  private slots: Slot[] = [];
  private readonly pending: Job[] = [];
  private readonly byKey = new Map<string, Job>();
  private nextId = 1;
  private disposed = false;
  /** counters for tests and the log */
  readonly stats = { started: 0, terminated: 0, runs: 0, cancelled: 0 };

  private readonly log: PoolLog;
  constructor(private readonly opts: PoolOptions) { this.log = opts.log ?? quiet; }

  /** Run a spec; any earlier run with the same key is cancelled (its promise resolves 'cancelled'). */
  run(key: string, req: Omit<RunRequest, 'type' | 'id'>, onProgress?: (m: string) => void): Promise<RunOutcome> {
    this.cancel(key);
    return new Promise<RunOutcome>(resolve => {
      const id = this.nextId++;
      const job: Job = { id, key, request: { type: 'run', id, ...req }, resolve, onProgress };
      this.byKey.set(key, job);
      this.pending.push(job);
      this.stats.runs++;
      this.drain();
    });
  }

  /** Cancel the run of `key`, queued or running. */
  cancel(key: string): void {
    const job = this.byKey.get(key);
    if (!job) return;
    this.byKey.delete(key);
    this.stats.cancelled++;
    const i = this.pending.indexOf(job);
    if (i >= 0) { this.pending.splice(i, 1); job.resolve({ kind: 'cancelled' }); return; }
    const slot = job.slot;
    if (!slot) return;
    Atomics.store(slot.cancel, 0, job.id);
    slot.worker.postMessage({ type: 'cancel', id: job.id });
    job.resolve({ kind: 'cancelled' });
    job.cancelTimer = setTimeout(() => {
      if (slot.job === job) {
        this.log.warn(`worker did not stop run ${job.id} within ${this.opts.cancelTimeoutMs()} ms; terminating it`);
        this.killSlot(slot);
        this.drain();
      }
    }, this.opts.cancelTimeoutMs());
  }

  isRunning(key: string): boolean { return this.byKey.has(key); }

  /** Ask a worker for the engine's suggestion for a CSV (header read and column sniffing stay off the host thread). */
  suggest(csvPath: string): Promise<SpecSuggestion> {
    const slot = this.slots.find(s => !s.job) ?? this.slots[0] ?? this.spawn();
    const id = this.nextId++;
    return new Promise<SpecSuggestion>((resolve, reject) => {
      slot.suggests.set(id, m => (m.suggestion ? resolve(m.suggestion) : reject(new Error(m.error || 'no suggestion'))));
      slot.worker.postMessage({ type: 'suggest', id, csvPath });
    });
  }

  private drain(): void {
    if (this.disposed) return;
    while (this.pending.length) {
      let slot = this.slots.find(s => !s.job);
      if (!slot && this.slots.length < Math.max(1, this.opts.size())) slot = this.spawn();
      if (!slot) return;
      const job = this.pending.shift()!;
      job.slot = slot;
      slot.job = job;
      slot.worker.postMessage(job.request);
    }
  }

  private spawn(): Slot {
    const cancel: WorkerInit = { cancel: new SharedArrayBuffer(4) };
    const worker = new Worker(this.opts.workerPath, { workerData: cancel });
    const slot: Slot = { worker, cancel: new Int32Array(cancel.cancel), suggests: new Map() };
    this.stats.started++;
    worker.on('message', (m: WorkerToHost) => this.onMessage(slot, m));
    worker.on('error', e => {
      this.log.error(`engine worker crashed: ${e.stack || e.message}`);
      this.failSlot(slot, `The fitting engine stopped unexpectedly: ${e.message}. It restarts on the next fit; see the Curvewright log.`);
    });
    worker.on('exit', code => {
      if (this.slots.includes(slot)) {
        if (code !== 0) this.log.warn(`engine worker exited with code ${code}`);
        this.failSlot(slot, `The fitting engine exited (code ${code}). It restarts on the next fit.`);
      }
    });
    this.slots.push(slot);
    this.log.info(`engine worker started (${this.slots.length} of at most ${this.opts.size()})`);
    return slot;
  }

  private onMessage(slot: Slot, m: WorkerToHost): void {
    switch (m.type) {
      case 'ready': return;
      case 'suggestion': {
        const cb = slot.suggests.get(m.inReplyTo);
        slot.suggests.delete(m.inReplyTo);
        cb?.(m);
        return;
      }
      case 'progress':
        if (slot.job?.id === m.inReplyTo && this.byKey.get(slot.job.key) === slot.job) slot.job.onProgress?.(m.message);
        return;
      case 'result': case 'cancelled': case 'failure': {
        const job = slot.job;
        if (!job || job.id !== m.inReplyTo) return;
        slot.job = undefined;
        if (job.cancelTimer) clearTimeout(job.cancelTimer);
        if (this.byKey.get(job.key) === job) {
          this.byKey.delete(job.key);
          job.resolve(m.type === 'result' ? { kind: 'result', message: m } : m.type === 'cancelled' ? { kind: 'cancelled' } : { kind: 'failed', message: m.message });
        }
        this.drain();
        return;
      }
    }
  }

  private failSlot(slot: Slot, message: string): void {
    const job = slot.job;
    this.removeSlot(slot);
    for (const cb of slot.suggests.values()) cb({ error: message });
    slot.suggests.clear();
    if (job) {
      if (job.cancelTimer) clearTimeout(job.cancelTimer);
      if (this.byKey.get(job.key) === job) { this.byKey.delete(job.key); job.resolve({ kind: 'failed', message }); }
    }
    this.drain();
  }

  private removeSlot(slot: Slot): void {
    const i = this.slots.indexOf(slot);
    if (i >= 0) this.slots.splice(i, 1);
  }

  private killSlot(slot: Slot): void {
    this.removeSlot(slot);
    slot.job = undefined;
    for (const cb of slot.suggests.values()) cb({ error: 'the engine worker was restarted' });
    slot.suggests.clear();
    this.stats.terminated++;
    void slot.worker.terminate();
  }

  get size(): number { return this.slots.length; }

  dispose(): void {
    this.disposed = true;
    for (const job of this.pending) job.resolve({ kind: 'cancelled' });
    this.pending.length = 0;
    for (const job of this.byKey.values()) job.resolve({ kind: 'cancelled' });
    this.byKey.clear();
    for (const s of [...this.slots]) this.killSlot(s);
  }
}

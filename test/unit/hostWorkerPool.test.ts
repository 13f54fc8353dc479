// The host's worker pool (src/host/workerPool.ts) against a stand-in worker (test/fixtures/fake-worker.js):
// lazy start, per-spec latest-wins, cooperative cancel through the shared slot, termination of a worker that
// ignores a cancel, recovery after a crash.
import * as assert from 'assert';
import * as path from 'path';
import { WorkerPool } from '../../src/host/workerPool';

const fake = path.resolve(__dirname, '..', 'fixtures', 'fake-worker.js');
const run = (pool: WorkerPool, key: string, specPath: string) => pool.run(key, { specPath });

describe('host worker pool', function () {
  this.timeout(20000);
  let pool: WorkerPool;
  afterEach(() => pool?.dispose());

  it('starts no worker until the first run, then answers it', async () => {
    pool = new WorkerPool({ workerPath: fake, size: () => 1, cancelTimeoutMs: () => 200 });
    assert.strictEqual(pool.size, 0);
    const o = await run(pool, 'a', 'quick:5');
    assert.strictEqual(o.kind, 'result');
    assert.strictEqual(pool.stats.started, 1);
  });

  it('a newer run of the same spec cancels the older one (latest wins) without restarting the worker', async () => {
    pool = new WorkerPool({ workerPath: fake, size: () => 1, cancelTimeoutMs: () => 2000 });
    const first = run(pool, 'a', 'quick:5000');
    await new Promise(r => setTimeout(r, 100));
    const second = run(pool, 'a', 'quick:5');
    assert.strictEqual((await first).kind, 'cancelled');
    const o = await second;
    assert.strictEqual(o.kind, 'result');
    if (o.kind === 'result') assert.strictEqual(o.message.result.spec, 'quick:5');
    assert.strictEqual(pool.stats.terminated, 0, 'the worker saw the cancel through the shared slot');
  });

  it('terminates a worker that does not answer a cancel in time and runs the newer fit on a fresh one', async () => {
    pool = new WorkerPool({ workerPath: fake, size: () => 1, cancelTimeoutMs: () => 200 });
    const first = run(pool, 'a', 'stubborn:4000');
    await new Promise(r => setTimeout(r, 100));
    const second = run(pool, 'a', 'quick:5');
    assert.strictEqual((await first).kind, 'cancelled');
    const o = await second;
    assert.strictEqual(o.kind, 'result');
    assert.strictEqual(pool.stats.terminated, 1);
    assert.strictEqual(pool.stats.started, 2);
    // behaviour, not a clock: the stubborn worker was terminated (it cannot finish), and the answer is the newer fit's
    if (o.kind === 'result') assert.strictEqual(o.message.result.spec, 'quick:5', 'the newer fit ran on the fresh worker');
  });

  it('keeps different specs independent', async () => {
    pool = new WorkerPool({ workerPath: fake, size: () => 2, cancelTimeoutMs: () => 200 });
    const [a, b] = await Promise.all([run(pool, 'a', 'quick:50'), run(pool, 'b', 'quick:50')]);
    assert.strictEqual(a.kind, 'result');
    assert.strictEqual(b.kind, 'result');
    assert.ok(pool.size <= 2);
  });

  it('reports a crashed worker as a failed run and recovers on the next one', async () => {
    pool = new WorkerPool({ workerPath: fake, size: () => 1, cancelTimeoutMs: () => 200 });
    const o = await run(pool, 'a', 'crash');
    assert.strictEqual(o.kind, 'failed');
    if (o.kind === 'failed') assert.match(o.message, /stopped unexpectedly|exited/);
    assert.strictEqual((await run(pool, 'a', 'quick:5')).kind, 'result');
  });

  it('cancel() of a queued run answers it without running it', async () => {
    pool = new WorkerPool({ workerPath: fake, size: () => 1, cancelTimeoutMs: () => 200 });
    const busy = run(pool, 'a', 'quick:300');
    const queued = run(pool, 'b', 'quick:5');
    pool.cancel('b');
    assert.strictEqual((await queued).kind, 'cancelled');
    assert.strictEqual((await busy).kind, 'result');
  });
});

// A generated 50 MB CSV is read streamed: every row arrives, and the JavaScript heap never holds the file as one
// string (peak heap growth stays far below the file size plus the parsed columns' worst case).
import * as assert from 'assert';
import { createHash } from 'crypto';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import { readTable } from '../../src/engine/data';

describe('csv: a 50 MB file, streamed', function () {
  this.timeout(180000);
  let file: string;
  let rows = 0;
  let bytes = 0;
  const hash = createHash('sha256');

  before(async () => {
    file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'cw-large-')), 'large.csv');
    const out = fs.createWriteStream(file);
    const write = (s: string) => {
      hash.update(s);
      bytes += Buffer.byteLength(s);
      return out.write(s) ? Promise.resolve() : new Promise<void>((r) => out.once('drain', () => r()));
    };
    await write('time_s,signal,note,temperature\n');
    const target = 50 * 1024 * 1024;
    while (bytes < target) {
      let chunk = '';
      for (let k = 0; k < 5000; k++, rows++) chunk += `${rows * 0.5},${(Math.sin(rows / 1000) * 3).toFixed(6)},"row ${rows}, ok",${(20 + (rows % 7)).toFixed(2)}\n`;
      await write(chunk);
    }
    await new Promise<void>((r) => out.end(() => r()));
  });

  after(() => {
    fs.rmSync(path.dirname(file), { recursive: true, force: true });
  });

  it('reads every row with bounded heap growth', async () => {
    (global as { gc?: () => void }).gc?.();
    const base = process.memoryUsage();
    let peakHeap = base.heapUsed;
    const timer = setInterval(() => {
      peakHeap = Math.max(peakHeap, process.memoryUsage().heapUsed);
    }, 20);
    const t0 = Date.now();
    const t = await readTable(file, { columns: ['time_s', 'signal'] });
    const seconds = (Date.now() - t0) / 1000;
    clearInterval(timer);
    peakHeap = Math.max(peakHeap, process.memoryUsage().heapUsed);
    const growthMb = (peakHeap - base.heapUsed) / 2 ** 20;
    process.stdout.write(`      ${(bytes / 2 ** 20).toFixed(1)} MB, ${rows} rows in ${seconds.toFixed(1)} s; peak heap growth ${growthMb.toFixed(0)} MB\n`);
    assert.strictEqual(t.totalRows, rows);
    assert.strictEqual(t.values.time_s.length, rows);
    assert.strictEqual(t.values.time_s[rows - 1], (rows - 1) * 0.5);
    assert.strictEqual(t.line[rows - 1], rows + 1);
    assert.strictEqual(t.dropped.length, 0);
    assert.strictEqual(t.hash, 'sha256:' + hash.digest('hex'));
    assert.ok(growthMb < 200, `heap grew by ${growthMb.toFixed(0)} MB`);
  });
});

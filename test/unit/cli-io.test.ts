// The CLI's terminal backstop (src/cli/io.ts toTerminal, used by processIo for every line on stdout and stderr).
import * as assert from 'assert';
import { processIo, toTerminal } from '../../src/cli/io';

describe('CLI output backstop: every printed line is terminal-safe', () => {
  it('escapes ESC, C0/C1 controls, DEL, bidi controls and a lone carriage return; keeps line breaks and tabs', () => {
    assert.strictEqual(toTerminal('a\u001b[2Kb'), 'a\\u001b[2Kb\n');
    assert.strictEqual(toTerminal('x\u0007\u007f\u009b\u202ey'), 'x\\u0007\\u007f\\u009b\\u202ey\n');
    assert.strictEqual(toTerminal('fake\r9 passed'), 'fake\\r9 passed\n');
    assert.strictEqual(toTerminal('one\r\ntwo\n\tthree\n'), 'one\r\ntwo\n\tthree\n');
    assert.strictEqual(toTerminal(''), '\n');
  });

  it('a JSON line stays valid JSON with the same values', () => {
    const value = { name: 'l\u001b[31m\u202eevil\u007f', n: 1 };
    const line = toTerminal(JSON.stringify(value));
    assert.ok(!/[\u0000-\u0008\u000b-\u001f\u007f-\u009f\u202a-\u202e]/.test(line));
    assert.deepStrictEqual(JSON.parse(line), value);
  });

  it('processIo.out and .err write through it', () => {
    const seen: string[] = [];
    const out = process.stdout.write, err = process.stderr.write;
    process.stdout.write = ((s: string) => (seen.push(s), true)) as typeof process.stdout.write;
    process.stderr.write = ((s: string) => (seen.push(s), true)) as typeof process.stderr.write;
    try {
      processIo.out('a\u001bb');
      processIo.err('c\u009bd');
    } finally {
      process.stdout.write = out;
      process.stderr.write = err;
    }
    assert.deepStrictEqual(seen, ['a\\u001bb\n', 'c\\u009bd\n']);
  });
});

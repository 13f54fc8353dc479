// Run-time checks of webview → host messages (src/shared/protocolCheck.ts): known types with the right field types
// and bounded sizes pass as fresh copies; anything else is refused with a reason; export names cannot leave their folder.
import * as assert from 'assert';
import { checkWebviewMessage, exportNameProblem, MESSAGE_LIMITS, plainFileName } from '../../src/shared/protocolCheck';

const ok = (m: unknown) => {
  const c = checkWebviewMessage(m);
  if (!c.ok) assert.fail(`refused: ${c.reason}`);
  return c.message;
};
const refused = (m: unknown, why: RegExp) => {
  const c = checkWebviewMessage(m);
  assert.ok(!c.ok, `accepted ${JSON.stringify(m)?.slice(0, 80)}`);
  if (!c.ok) assert.match(c.reason, why);
};

describe('webview → host message checks', () => {
  it('accepts every message the panel sends, copying only the known fields', () => {
    assert.deepStrictEqual(ok({ type: 'ready', version: 1 }), { type: 'ready', version: 1 });
    assert.deepStrictEqual(ok({ type: 'reveal', path: ['models', 0, 'params', 'K'] }), { type: 'reveal', path: ['models', 0, 'params', 'K'] });
    assert.deepStrictEqual(ok({ type: 'reveal', path: [], line: 3, column: 40, x: 1 }), { type: 'reveal', path: [], line: 3, column: 40 });
    assert.deepStrictEqual(ok({ type: 'revealRow', row: 12 }), { type: 'revealRow', row: 12 });
    assert.deepStrictEqual(ok({ type: 'export', id: 2, format: 'svg', data: '<svg xmlns="http://www.w3.org/2000/svg"></svg>', suggestedName: 'fade-plot.svg' }),
      { type: 'export', id: 2, format: 'svg', data: '<svg xmlns="http://www.w3.org/2000/svg"></svg>', suggestedName: 'fade-plot.svg' });
    assert.deepStrictEqual(ok({ type: 'refit', extra: 'ignored' }), { type: 'refit' });
    assert.deepStrictEqual(ok({ type: 'log', level: 'warn', message: 'draw failed' }), { type: 'log', level: 'warn', message: 'draw failed' });
    assert.deepStrictEqual(ok({ type: 'snapshot', inReplyTo: 3, version: null, canvases: 2, text: 'x' }), { type: 'snapshot', inReplyTo: 3, version: null, canvases: 2, text: 'x' });
    const e = ok({ type: 'export', id: 7, format: 'png', data: 'data:image/png;base64,AAAA', suggestedName: 'culture-b-plot.png', model: 'logistic', __proto__: { polluted: true } });
    assert.deepStrictEqual(e, { type: 'export', id: 7, format: 'png', data: 'data:image/png;base64,AAAA', suggestedName: 'culture-b-plot.png', model: 'logistic' });
    assert.deepStrictEqual(ok({ type: 'export', id: 1, format: 'json' }), { type: 'export', id: 1, format: 'json' });
  });

  it('refuses unknown types and non-objects', () => {
    for (const m of [null, undefined, 42, 'ready', [], { type: 'writeFile', path: '../x' }, { type: 'constructor' }, { type: '__proto__' }, { type: 'toString' }, {}])
      refused(m, /not an object|unknown message type/);
  });

  it('refuses wrong field types and out-of-range values', () => {
    refused({ type: 'ready', version: '1' }, /version/);
    refused({ type: 'reveal', path: 'models' }, /path/);
    refused({ type: 'reveal', path: [{ a: 1 }] }, /path/);
    refused({ type: 'reveal', path: new Array(MESSAGE_LIMITS.revealPath + 1).fill(0) }, /path/);
    refused({ type: 'reveal', path: [], line: 0 }, /line/);
    refused({ type: 'reveal', path: [], line: 2, column: '4' }, /column/);
    refused({ type: 'export', id: 1, format: 'svg', suggestedName: 'plot.png' }, /\.svg/);
    refused({ type: 'revealRow', row: 0 }, /row/);
    refused({ type: 'revealRow', row: 1.5 }, /row/);
    refused({ type: 'revealRow', row: Number.POSITIVE_INFINITY }, /row/);
    refused({ type: 'export', id: -1, format: 'png' }, /id/);
    refused({ type: 'export', id: 1, format: 'exe' }, /format/);
    refused({ type: 'export', id: 1, format: 'csv', data: 12 }, /data/);
    refused({ type: 'export', id: 1, format: 'csv', model: ['a'] }, /model/);
    refused({ type: 'log', level: 'debug', message: 'x' }, /level/);
    refused({ type: 'log', level: 'info', message: 'x'.repeat(MESSAGE_LIMITS.logMessage + 1) }, /message/);
    refused({ type: 'snapshot', inReplyTo: 1, version: 1, canvases: 0, text: 'x'.repeat(MESSAGE_LIMITS.snapshotText + 1) }, /text/);
  });

  it('refuses an export name that is not a plain file name of the format', () => {
    for (const [name, why] of [
      ['../../.bashrc.png', /separator/], ['sub/plot.png', /separator/], ['..\\plot.png', /separator/], ['/abs/plot.png', /separator/],
      ['..', /dot/], ['.hidden.png', /dot/], ['C:plot.png', /:/], ['plot.png:stream', /:/], ['plot\u0000.png', /control/],
      ['evil\u202egnp.csv', /control/], ['plot.png ', /ends/], ['plot.png.', /ends/], ['NUL.png', /device/], ['com1.csv', /device/],
      ['plot.sh', /\.png/], ['plot.png.sh', /\.png/], ['', /empty/], ['a'.repeat(MESSAGE_LIMITS.exportName - 3) + '.png', /longer/],
    ] as const) {
      assert.match(exportNameProblem(name, 'png') ?? '', why, name);
      refused({ type: 'export', id: 1, format: 'png', data: 'data:image/png;base64,AA', suggestedName: name }, /suggestedName/);
    }
    for (const name of ['growth-plot.png', 'Kultur β-plot.PNG', 'a.b.png']) assert.strictEqual(exportNameProblem(name, 'png'), null, name);
    assert.strictEqual(exportNameProblem('growth.fitresult.json', 'json'), null);
    assert.match(exportNameProblem('growth.json', 'csv') ?? '', /\.csv/);
  });

  it('makes a plain file name from any model name (the default export name)', () => {
    for (const [stem, ext] of [['growth-../../x', 'png'], ['..\\evil', 'csv'], ['a:b*c?', 'json'], ['NUL', 'png'], ['', 'csv'], ['\u202eabc', 'png'], ['x'.repeat(500), 'csv']] as const) {
      const n = plainFileName(stem, ext);
      assert.strictEqual(exportNameProblem(n, ext), null, `${JSON.stringify(stem)} -> ${n}`);
    }
    assert.strictEqual(plainFileName('growth-logistic', 'png'), 'growth-logistic.png');
    assert.strictEqual(plainFileName('growth.fitresult', 'json'), 'growth.fitresult.json');
  });
});

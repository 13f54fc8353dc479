// Webview pieces that need no browser: the HTML templates (self-contained report, panel CSP), display decimation,
// number formatting and the CSV export. The sample report's numbers are invented for rendering, not fit results.
import * as assert from 'assert';
import { createHash } from 'crypto';
import * as fs from 'fs';
import * as path from 'path';
import { buildReportHtml, escapeHtml, jsonForScript, panelHtml, scriptForInline } from '../../src/shared/html';
import { DECIMATE_THRESHOLD, decimateLine, decimateScatter } from '../../webview/decimate';
import { fmtEstimate, fmtInt, fmtInterval, fmtNum, fmtP, fmtPct, fmtR2 } from '../../src/shared/numberFormat';
import { formatPath, parametersCsv, reportJson } from '../../webview/render';
import { groupLine, groupProblems, severityCounts } from '../../webview/problems';
import { dashFor, withAlpha } from '../../webview/theme';
import type { ErrorReport, FitReport, RunResult } from '../../src/engine/report';
import { panelCss, sampleReport, webviewBundle } from './webview-helpers';

/** The text of the embedded JSON data block of a built report. */
function embedded(html: string): string {
  const m = /<script type="application\/json" id="curvewright-data">([\s\S]*?)<\/script>/.exec(html);
  assert.ok(m, 'data block present');
  return m[1]!;
}

/** Seeded generator (Park–Miller minimal standard, common practice) for reproducible synthetic data. */
function lcg(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 16807) % 2147483647) / 2147483647;
}

describe('webview html: standalone report', function () {
  let js = '';
  before(async function () {
    this.timeout(60000);
    js = await webviewBundle();
  });

  it('is self-contained: no external URL, no src/href attribute, no stylesheet link, no @import', function () {
    const html = buildReportHtml([sampleReport()], { js, css: panelCss() });
    assert.ok(!/\ssrc\s*=/i.test(html), 'no src= attribute');
    assert.ok(!/\shref\s*=\s*["']?(https?:)?\/\//i.test(html), 'no href to another host');
    assert.ok(!/<link\b/i.test(html), 'no <link>');
    assert.ok(!/@import/i.test(html), 'no CSS @import');
    assert.ok(!/url\(\s*["']?(https?:)?\/\//i.test(html), 'no CSS url() to a host');
    // The only absolute URL allowed is the SVG namespace, an identifier that is never fetched.
    const urls = [...html.matchAll(/https?:\/\/[^\s"'<>)]*/g)].map(m => m[0]);
    assert.deepStrictEqual([...new Set(urls)].filter(u => u !== 'http://www.w3.org/2000/svg'), []);
  });

  it('has a strict CSP whose hashes match the inline script and style exactly', function () {
    const html = buildReportHtml([sampleReport()], { js, css: panelCss() });
    const csp = /<meta http-equiv="Content-Security-Policy" content="([^"]*)">/.exec(html)?.[1]?.replace(/&#39;/g, "'");
    assert.ok(csp, 'CSP meta present');
    assert.match(csp, /default-src 'none'/);
    assert.doesNotMatch(csp, /unsafe-inline|unsafe-eval|https?:/);
    const script = /<script>([\s\S]*)<\/script>\n<\/body>/.exec(html)![1]!;
    const style = /<style>([\s\S]*?)<\/style>/.exec(html)![1]!;
    const hash = (s: string) => `'sha256-${createHash('sha256').update(s, 'utf8').digest('base64')}'`;
    assert.ok(csp.includes(`script-src ${hash(script)}`), 'script hash matches');
    assert.ok(csp.includes(`style-src ${hash(style)}`), 'style hash matches');
    assert.strictEqual((html.match(/<script\b/g) ?? []).length, 2, 'exactly the data block and the code');
  });

  it('round-trips the embedded reports, including </script>, <!--, & and U+2028/2029 in text', function () {
    const r = sampleReport();
    r.title = 'A </script><script>alert(1)</script> <!-- & \u2028line\u2029para </SCRIPT >';
    const err: ErrorReport = { version: 1, spec: 'bad</script>.fitspec.json', error: { message: 'unknown identifier \'K2\' at column 5 \u2014 did you mean \'K\'?', path: ['models', 0, 'formula'] } };
    const reports: RunResult[] = [r, err];
    const html = buildReportHtml(reports, { js, css: panelCss() });
    const data = embedded(html);
    assert.ok(!/<\/script/i.test(data) && !data.includes('<!--') && !data.includes('\u2028') && !data.includes('\u2029'));
    assert.deepStrictEqual(JSON.parse(data), reports);
    assert.ok(html.includes('<title>Curvewright report \u2014 2 specs</title>'));
    const one = buildReportHtml([r], { js, css: panelCss() });
    assert.ok(one.includes('<title>A &lt;/script&gt;&lt;script&gt;alert(1)&lt;/script&gt; &lt;!-- &amp;'), 'title escaped');
    assert.deepStrictEqual(JSON.parse(embedded(one)), [r]);
  });

  it('writes typed arrays (as the panel may receive points) as plain JSON arrays', function () {
    const r = sampleReport();
    const m = r.models[0]!;
    (m.points as unknown as { y: Float64Array }).y = Float64Array.from(m.points!.y);
    const back = JSON.parse(jsonForScript([r])) as RunResult[];
    assert.deepStrictEqual((back[0] as typeof r).models[0]!.points!.y, Array.from(m.points!.y));
  });

  it('is deterministic for the same input', function () {
    const a = buildReportHtml([sampleReport()], { js, css: panelCss() });
    const b = buildReportHtml([sampleReport()], { js, css: panelCss() });
    assert.strictEqual(a, b);
  });

  it('neutralises </script, <!-- and <script inside inline code without changing its meaning', function () {
    const src = 'var a = "</script>"; var b = /<!--x/u.test("<!--x"); var c = "<script>".length; var r = /<\\/script/u.source;';
    const safe = scriptForInline(src);
    assert.ok(!/<\/script|<!--|<script/i.test(safe));
    // Evaluating both versions gives the same values.
    const run = (code: string) => new Function(`${code}; return [a, b, c, r];`)();
    assert.deepStrictEqual(run(safe), run(src));
  });
});

describe('webview html: panel shell', function () {
  const opts = { scriptUri: 'vscode-resource://ext/dist/webview.js', cssUri: 'vscode-resource://ext/media/panel.css?x="1"', nonce: 'AbCdEfGhIjKlMnOpQrStUv12', cspSource: 'https://file+.vscode-resource.vscode-cdn.net' };

  it('carries the nonce on the script and the stylesheet and a strict CSP', function () {
    const html = panelHtml(opts);
    const csp = /content="([^"]*)"/.exec(html)![1]!.replace(/&#39;/g, "'");
    assert.match(csp, /^default-src 'none'/);
    assert.ok(csp.includes(`script-src 'nonce-${opts.nonce}'`));
    assert.ok(csp.includes(`style-src ${opts.cspSource} 'nonce-${opts.nonce}'`));
    assert.ok(csp.includes(`img-src ${opts.cspSource} data:`));
    assert.doesNotMatch(csp, /unsafe-inline|unsafe-eval/);
    assert.ok(html.includes(`<script nonce="${opts.nonce}" src="${opts.scriptUri}"></script>`));
    assert.ok(html.includes(`nonce="${opts.nonce}">`) && html.includes('href="vscode-resource://ext/media/panel.css?x=&quot;1&quot;"'), 'URI escaped');
    assert.ok(html.includes('id="curvewright-root"'));
  });

  it('refuses a short nonce', function () {
    assert.throws(() => panelHtml({ ...opts, nonce: 'abc' }), /nonce/);
  });

  it('escapes HTML text', function () {
    assert.strictEqual(escapeHtml(`<a href="x">'&'</a>`), '&lt;a href=&quot;x&quot;&gt;&#39;&amp;&#39;&lt;/a&gt;');
  });
});

describe('webview decimation', function () {
  it('keeps every point (sorted by x) at or below the threshold, dropping only non-finite ones', function () {
    const x = [3, 1, 2, NaN, 5], y = [1, 2, Infinity, 4, 5];
    assert.deepStrictEqual(Array.from(decimateScatter(x, y, { columns: 100, rows: 100 })), [1, 0, 4]);
  });

  it('drops non-positive values on a log axis', function () {
    const x = [-1, 0, 1, 10], y = [1, 1, 1, 1];
    assert.deepStrictEqual(Array.from(decimateScatter(x, y, { columns: 100, rows: 100, logX: true })), [2, 3]);
  });

  it('reduces 10^5 noisy points, keeps the extremes, stays sorted and keeps row identity', function () {
    const n = 100000, rnd = lcg(42);
    const x = new Float64Array(n), y = new Float64Array(n), row = new Int32Array(n);
    for (let i = 0; i < n; i++) {
      x[i] = rnd() * 48;
      y[i] = 2 / (1 + Math.exp(-0.3 * (x[i]! - 14))) + 0.05 * (rnd() + rnd() + rnd() - 1.5);
      row[i] = i + 1;
    }
    y[777] = 9; // a spike
    y[31337] = -7; // a dip
    const keep = decimateScatter(x, y, { columns: 900, rows: 340 });
    assert.ok(keep.length < n / 4, `reduced to ${keep.length}`);
    assert.ok(keep.length > 900, 'still draws every pixel column');
    const kept = new Set(keep);
    const arg = (a: Float64Array, better: (u: number, v: number) => boolean) => a.reduce((b, v, i) => (better(v, a[b]!) ? i : b), 0);
    for (const i of [777, 31337, arg(x, (u, v) => u < v), arg(x, (u, v) => u > v)]) assert.ok(kept.has(i), `extreme ${i} kept`);
    for (let k = 1; k < keep.length; k++) assert.ok(x[keep[k]!]! >= x[keep[k - 1]!]!, 'sorted by x');
    // Row identity: an index maps back to its own row.
    for (const i of keep.slice(0, 50)) assert.strictEqual(row[i], i + 1);
    // Min and max of every pixel column survive (columns as the function defines them).
    let x0 = Infinity, x1 = -Infinity;
    for (const v of x) { x0 = Math.min(x0, v); x1 = Math.max(x1, v); }
    const colMin = new Map<number, number>(), colMax = new Map<number, number>();
    for (let i = 0; i < n; i++) {
      const c = Math.min(899, Math.floor(((x[i]! - x0) / (x1 - x0)) * 900));
      if (!colMin.has(c) || y[i]! < y[colMin.get(c)!]!) colMin.set(c, i);
      if (!colMax.has(c) || y[i]! > y[colMax.get(c)!]!) colMax.set(c, i);
    }
    for (const i of [...colMin.values(), ...colMax.values()]) assert.ok(kept.has(i), `column extreme ${i} kept`);
  });

  it('thins a long line to first/min/max/last per bucket, in order', function () {
    const n = 20000;
    const x = Array.from({ length: n }, (_, i) => i);
    const y = x.map(i => Math.sin(i / 300) + (i === 12345 ? 5 : 0));
    const keep = decimateLine(x, y, 200);
    assert.ok(keep.length <= 800 && keep.length >= 200, `${keep.length} points`);
    assert.ok(keep.includes(12345) && keep.includes(0) && keep.includes(n - 1));
    for (let k = 1; k < keep.length; k++) assert.ok(keep[k]! > keep[k - 1]!);
    assert.strictEqual(decimateLine([1, 2, 3], [1, 2, 3], 200).length, 3);
    assert.ok(DECIMATE_THRESHOLD === 5000);
  });
});

describe('webview number formatting', function () {
  it('formats to significant digits with sensible notation', function () {
    assert.strictEqual(fmtNum(1.93127), '1.931');
    assert.strictEqual(fmtNum(1.9), '1.9');
    assert.strictEqual(fmtNum(-0.000123456), '\u22120.0001235');
    assert.strictEqual(fmtNum(0.0000123456), '1.235e-5');
    assert.strictEqual(fmtNum(1234567), '1.235e6');
    assert.strictEqual(fmtNum(999999.7, 4), '1e6');
    assert.strictEqual(fmtNum(123456, 3), '123000');
    assert.strictEqual(fmtNum(0), '0');
    assert.strictEqual(fmtNum(null), '\u2014');
    assert.strictEqual(fmtNum(NaN), '\u2014');
    assert.strictEqual(fmtNum(-Infinity), '\u2212\u221e');
  });

  it('shows an estimate to the digit its standard error supports (2 significant digits of the SE)', function () {
    assert.strictEqual(fmtEstimate(1.931234, 0.011), '1.931');
    assert.strictEqual(fmtEstimate(14.23612, 0.1823), '14.24');
    assert.strictEqual(fmtEstimate(1234.5678, 25), '1235');
    assert.strictEqual(fmtEstimate(0.5, 1e-12), '0.5'); // capped at 8 significant digits, zeros trimmed
    assert.strictEqual(fmtEstimate(3.14159265, null), '3.14159');
    assert.strictEqual(fmtEstimate(123456, 5e4), '123000'); // at least 3 significant digits
  });

  it('never shows an R\u00b2 just below 1 as 1', function () {
    assert.strictEqual(fmtR2(0.99999912), '0.9999991');
    assert.strictEqual(fmtR2(0.9971), '0.9971');
    assert.strictEqual(fmtR2(0.72359), '0.7236');
    assert.strictEqual(fmtR2(1), '1');
    assert.strictEqual(fmtR2(-0.25), '\u22120.25');
    assert.strictEqual(fmtR2(null), '\u2014');
  });

  it('formats p-values, percentages, intervals and counts', function () {
    assert.strictEqual(fmtP(0.3123), '0.312');
    assert.strictEqual(fmtP(0.00021), '0.00021');
    assert.strictEqual(fmtP(0.000021), '2.1e-5');
    assert.strictEqual(fmtP(1e-60), '1e-60');
    assert.strictEqual(fmtP(0), '< 1e-300');
    assert.strictEqual(fmtPct(0.005721), '0.57\u2009%');
    assert.strictEqual(fmtPct(0.1234), '12.3\u2009%');
    assert.strictEqual(fmtPct(2.5), '250\u2009%');
    assert.strictEqual(fmtInterval([1.91, null]), '1.91 \u2026 \u2014');
    assert.strictEqual(fmtInt(100000), '100\u2009000');
  });
});

describe('webview exports and helpers', function () {
  it('writes every parameter to CSV at full precision', function () {
    const r = sampleReport();
    const csv = parametersCsv(r).trim().split('\n');
    const nParams = r.models.reduce((s, m) => s + m.paramOrder.length, 0);
    assert.strictEqual(csv.length, 1 + nParams);
    assert.match(csv[0]!, /^model,parameter,value,se,/);
    const k = csv.find(l => l.startsWith('logistic,K,'))!.split(',');
    assert.strictEqual(Number(k[2]), r.models[0]!.params.K!.value);
    assert.strictEqual(Number(k[3]), r.models[0]!.params.K!.se);
  });

  it('CSV export neutralises spreadsheet formulas in text cells (= + - @ tab CR), keeps negative numbers numeric', function () {
    const r = sampleReport();
    const m = r.models[0]!;
    const bad = { ...r, models: [{ ...m, name: '=HYPERLINK("x")', params: { ...m.params, [m.paramOrder[0]!]: { ...m.params[m.paramOrder[0]!]!, value: -1.5 } } }] };
    const csv = parametersCsv(bad as typeof r).trim().split('\n');
    const row = csv[1]!;
    assert.ok(row.startsWith(`"'=HYPERLINK(""x"")",`), row);
    assert.ok(row.includes(',-1.5,'), `negative numbers stay numbers: ${row}`);
    for (const lead of ['+', '-', '@', '\t', '\r']) {
      const one = parametersCsv({ ...bad, models: [{ ...bad.models[0]!, name: `${lead}cmd` }] } as typeof r).split('\n')[1]!;
      assert.ok(one.startsWith(`'${lead}`) || one.startsWith(`"'${lead}`), JSON.stringify(one));
    }
  });

  it('exports JSON that parses back to the report', function () {
    const r = sampleReport();
    assert.deepStrictEqual(JSON.parse(reportJson(r)), r);
  });

  it('names JSON paths readably', function () {
    assert.strictEqual(formatPath(['models', 0, 'params', 'K']), 'models[0].params.K');
    assert.strictEqual(formatPath([]), '(spec)');
  });

  it('gives models distinct dash patterns and parses colours for transparency', function () {
    assert.deepStrictEqual(dashFor(0), []);
    assert.notDeepStrictEqual(dashFor(1), dashFor(2));
    assert.strictEqual(withAlpha('#2f6db5', 0.5), 'rgba(47, 109, 181, 0.5)');
    assert.strictEqual(withAlpha('#abc', 1), 'rgba(170, 187, 204, 1)');
    assert.strictEqual(withAlpha('rgb(1, 2, 3)', 0.2), 'rgba(1, 2, 3, 0.2)');
    assert.strictEqual(withAlpha('var(--x)', 0.2), 'var(--x)');
  });
});

describe('webview problems: one line per code and severity', () => {
  // examples/results/capacity-fade.fitresult.json: 4 models asked for predictions at 800 and 1000 beyond the data
  // (x 0..700); the engine says so once per model and prediction (8 problems), the panel once.
  const fade = JSON.parse(fs.readFileSync(path.join(__dirname, '..', '..', 'examples', 'results', 'capacity-fade.fitresult.json'), 'utf8')) as FitReport;
  it('groups the capacity-fade problems: extrapolation once, for 4 models, at 800 and 1000', () => {
    const groups = groupProblems(fade, fade.best ?? undefined);
    const total = fade.problems.length + fade.models.reduce((s, m) => s + m.problems.length, 0);
    assert.strictEqual(groups.reduce((s, g) => s + g.items.length, 0), total, 'every problem in one group');
    const ex = groups.find(g => g.code === 'extrapolation')!;
    assert.strictEqual(ex.items.length, 8);
    assert.strictEqual(ex.models.length, 4);
    assert.strictEqual(groupLine(ex), 'extrapolation \u2014 4 models, predictions at 800 and 1000');
    assert.strictEqual(groups[0], ex, 'the warning touching most models first');
    const sev = groups.map(g => g.severity);
    assert.deepStrictEqual(sev, [...sev].sort((a, b) => ['error', 'warning', 'info'].indexOf(a) - ['error', 'warning', 'info'].indexOf(b)), 'worst first');
    const infl = groups.find(g => g.code === 'influential-points')!;
    assert.match(groupLine(infl), /^influential points \u2014 3 models, rows 1, 2, 3, 13, 14 and 15$/);
    const corr = groups.find(g => g.code === 'param-correlation')!;
    assert.strictEqual(groupLine(corr), 'param correlation \u2014 double-exp and poly9, parameters A1 and c8');
    const c = severityCounts(groups);
    assert.deepStrictEqual([c.warning.groups, c.warning.problems, c.info.groups], [3, 10, 2]);
  });
});

// Real-browser check of the webview: builds the bundle with esbuild's API, loads the standalone HTML report and the
// panel shell (with a stand-in acquireVsCodeApi) in headless Chromium via playwright-core, and checks what is drawn.
// The sample report's numbers are invented for rendering (test/fixtures/reports/sample.fitreport.json), not fit results.
// Screenshots go to test/e2e/shots/ (git-ignored) for a person to look at.
import * as assert from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import type { ErrorReport, FitReport, RunResult } from '../../src/engine/report';
import { buildReportHtml, panelHtml } from '../../src/shared/html';
import { panelCss, repoRoot, sampleReport, webviewBundle } from '../unit/webview-helpers';
import { launchChromium } from './chromium';

const SHOTS = path.join(repoRoot, 'test', 'e2e', 'shots');

/** Collects page errors, console errors/warnings (CSP violations are reported there) and failed requests. */
function watch(page: Page): string[] {
  const problems: string[] = [];
  page.on('pageerror', e => problems.push(`pageerror: ${e.message}`));
  page.on('console', m => {
    // The test's own pixel reads (getImageData) trigger a performance hint; that one is not the page's problem.
    if (m.text().includes('willReadFrequently')) return;
    if (m.type() === 'error' || m.type() === 'warning') problems.push(`console ${m.type()}: ${m.text()}`);
  });
  page.on('requestfailed', r => problems.push(`request failed: ${r.url()}`));
  page.on('request', r => { if (!r.url().startsWith('file:') && !r.url().startsWith('data:') && !r.url().startsWith('blob:')) problems.push(`network request: ${r.url()}`); });
  return problems;
}

/** Number of pixels of each canvas that differ from its top-left (background) pixel. */
async function inkedPixels(page: Page): Promise<number[]> {
  return page.$$eval('canvas', cs => cs.map(c => {
    if (!(c as HTMLCanvasElement).width || !(c as HTMLCanvasElement).height) return 0;
    const ctx = (c as HTMLCanvasElement).getContext('2d')!;
    const { data } = ctx.getImageData(0, 0, (c as HTMLCanvasElement).width, (c as HTMLCanvasElement).height);
    let n = 0;
    for (let i = 0; i < data.length; i += 4) {
      if (Math.abs(data[i]! - data[0]!) + Math.abs(data[i + 1]! - data[1]!) + Math.abs(data[i + 2]! - data[2]!) > 24) n++;
    }
    return n;
  }));
}

/** A hash of the first canvas's pixels, to see that a redraw changed it. */
async function canvasHash(page: Page): Promise<number> {
  return page.$eval('canvas', c => {
    const ctx = (c as HTMLCanvasElement).getContext('2d')!;
    const { data } = ctx.getImageData(0, 0, (c as HTMLCanvasElement).width, (c as HTMLCanvasElement).height);
    let h = 2166136261;
    for (let i = 0; i < data.length; i += 7) h = Math.imul(h ^ data[i]!, 16777619) >>> 0;
    return h;
  });
}

/** A synthetic report with n points (seeded), built from the sample's first model, for the large-data path. */
function bigReport(n: number): FitReport {
  const r = sampleReport();
  const m = r.models[0]!;
  let s = 12345;
  const rnd = () => (s = (s * 16807) % 2147483647) / 2147483647;
  const x: number[] = [], y: number[] = [], fitted: number[] = [], residual: number[] = [], row: number[] = [];
  for (let i = 0; i < n; i++) {
    const xi = (48 * i) / n;
    const f = 1.98 / (1 + Math.exp(-0.3 * (xi - 14.2)));
    const yi = f + 0.04 * (rnd() + rnd() + rnd() - 1.5);
    x.push(xi); y.push(yi); fitted.push(f); residual.push(yi - f); row.push(i + 1);
  }
  m.points = { row, x: { hours: x }, y, fitted, residual, standardized: residual.map(v => v / 0.02), leverage: residual.map(() => 3 / n), cooks: residual.map(() => 0) };
  r.models = [m];
  r.comparison = null;
  r.title = `Large data: ${n} invented points`;
  return r;
}

describe('webview in a real browser (headless Chromium)', function () {
  this.timeout(120000);
  let browser: Browser | null = null;
  let dir = '';
  let js = '';

  before(async function () {
    browser = await launchChromium(this, 'the real-browser webview checks');
    js = await webviewBundle();
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-webview-'));
    fs.mkdirSync(SHOTS, { recursive: true });
  });

  after(async function () {
    await browser?.close();
    if (dir) fs.rmSync(dir, { recursive: true, force: true });
  });

  async function openReport(reports: RunResult[], name: string, ctxOpts: Parameters<Browser['newContext']>[0] = {}): Promise<{ page: Page; problems: string[]; ctx: BrowserContext }> {
    const file = path.join(dir, `${name}.html`);
    fs.writeFileSync(file, buildReportHtml(reports, { js, css: panelCss() }));
    const ctx = await browser!.newContext({ viewport: { width: 1180, height: 900 }, ...ctxOpts });
    const page = await ctx.newPage();
    const problems = watch(page);
    await page.goto(`file://${file}`);
    await page.waitForSelector('canvas');
    await page.waitForTimeout(150);
    return { page, problems, ctx };
  }

  it('draws the standalone report: plots inked, tables with the parameter names, log toggle, no errors', async function () {
    const { page, problems, ctx } = await openReport([sampleReport()], 'report');
    const ink = await inkedPixels(page);
    assert.strictEqual(ink.length, 2, 'main plot and residual plot');
    assert.ok(ink[0]! > 5000 && ink[1]! > 500, `canvases drawn (${ink.join(', ')} inked pixels)`);

    const params = await page.$$eval('details[data-model="logistic"] .cw-params tbody tr td:first-child', tds => tds.map(t => t.textContent));
    assert.deepStrictEqual(params, ['K', 'r', 'x0']);
    const text = await page.innerText('body');
    for (const s of ['Model comparison', 'AICc', 'Akaike weight', 'Predictions', 'extrapolated', 'Inverse predictions', 'Residual tests',
      'Shapiro\u2013Wilk', 'rows used', 'bubble in cuvette', '\u2605 best', 'bad cell', 'Expectations']) {
      assert.ok(text.includes(s), `shows "${s}"`);
    }
    assert.ok(/R²\s+0\.99/.test(text), 'R² shown rounded');
    await page.screenshot({ path: path.join(SHOTS, 'report.png'), fullPage: true });

    const before = await canvasHash(page);
    await page.click('button.cw-toggle:has-text("log x")');
    await page.waitForTimeout(100);
    assert.strictEqual(await page.getAttribute('button.cw-toggle:has-text("log x")', 'aria-pressed'), 'true');
    assert.notStrictEqual(await canvasHash(page), before, 'plot redrawn on a log axis');
    assert.ok((await page.innerText('.cw-note')).includes('not shown on the log axis'), 'says a point at x = 0 is hidden');
    await page.screenshot({ path: path.join(SHOTS, 'report-logx.png') });

    // Selecting another model moves the bands and residuals to it.
    await page.click('.cw-chip[data-model="cubic"]');
    await page.waitForTimeout(100);
    assert.strictEqual(await page.getAttribute('.cw-chip[data-model="cubic"]', 'aria-pressed'), 'true');
    assert.ok((await page.innerText('.cw-legend')).includes('confidence band (cubic)'));
    assert.strictEqual(await page.$eval('details[data-model="cubic"]', d => (d as HTMLDetailsElement).open), true);

    // Back to a linear axis: every point is drawn again.
    await page.click('button.cw-toggle:has-text("log x")');
    assert.strictEqual(await page.getAttribute('button.cw-toggle:has-text("log x")', 'aria-pressed'), 'false');
    // Hovering a data point shows its row in the tooltip.
    const pts = await page.evaluate(() => (window as unknown as { curvewrightViews: { pointPositions(): { x: number; y: number; row?: number }[] }[] }).curvewrightViews[0]!.pointPositions());
    assert.strictEqual(pts.length, 25);
    const target = pts[10]!;
    const box = (await (await page.$('.cw-chart-main canvas'))!.boundingBox())!;
    await page.mouse.move(box.x + target.x, box.y + target.y);
    await page.waitForSelector('.cw-chart-main .cw-tooltip:not([hidden])');
    const tip = await page.innerText('.cw-chart-main .cw-tooltip');
    assert.ok(tip.startsWith(`row ${target.row}`) && tip.includes('hours = ') && tip.includes('residual = '), tip);
    await page.screenshot({ path: path.join(SHOTS, 'report-tooltip.png'), clip: { x: box.x, y: box.y, width: box.width, height: box.height } });
    await page.mouse.move(0, 0);
    assert.deepStrictEqual(problems, []);
    await ctx.close();
  });

  it('follows a dark colour scheme and forced colours (high contrast) with the same layout', async function () {
    const dark = await openReport([sampleReport()], 'dark', { colorScheme: 'dark' });
    const bg = await dark.page.evaluate(() => getComputedStyle(document.body).backgroundColor);
    assert.strictEqual(bg, 'rgb(22, 26, 33)', 'our dark fallback background');
    assert.ok((await inkedPixels(dark.page))[0]! > 5000);
    await dark.page.screenshot({ path: path.join(SHOTS, 'report-dark.png'), fullPage: true });
    assert.deepStrictEqual(dark.problems, []);
    await dark.ctx.close();

    const hc = await openReport([sampleReport()], 'hc', { colorScheme: 'dark', forcedColors: 'active' });
    assert.ok(await hc.page.$('.cw-report.cw-hc'), 'high-contrast mode detected');
    await hc.page.screenshot({ path: path.join(SHOTS, 'report-hc.png'), fullPage: true });
    assert.deepStrictEqual(hc.problems, []);
    await hc.ctx.close();
  });

  it('re-reads VS Code theme variables when the body class changes (MutationObserver), without rebuilding the plot', async function () {
    const { page, problems, ctx } = await openReport([sampleReport()], 'vscode-theme');
    await page.$eval('canvas', c => { (c as HTMLCanvasElement & { __mark?: number }).__mark = 7; });
    const before = await canvasHash(page);
    // What VS Code does on a theme switch: new --vscode-* values on <html> and a new body class.
    await page.evaluate(() => {
      const b = document.documentElement.style;
      b.setProperty('--vscode-editor-background', '#0b0b0b');
      b.setProperty('--vscode-editor-foreground', '#f0f0f0');
      b.setProperty('--vscode-charts-blue', '#ffcc00');
      b.setProperty('--vscode-contrastBorder', '#6fc3df');
      document.body.className = 'vscode-high-contrast';
    });
    await page.waitForSelector('.cw-report.cw-hc');
    await page.waitForTimeout(100);
    assert.notStrictEqual(await canvasHash(page), before, 'plot re-coloured');
    assert.strictEqual(await page.$eval('canvas', c => (c as HTMLCanvasElement & { __mark?: number }).__mark), 7, 'same canvas');
    assert.strictEqual(await page.evaluate(() => getComputedStyle(document.body).backgroundColor), 'rgb(11, 11, 11)');
    // The first model's curve now uses --vscode-charts-blue: its swatch says so.
    assert.strictEqual(await page.$eval('.cw-chip[data-model="logistic"] line', l => l.getAttribute('stroke')), '#ffcc00');
    await page.screenshot({ path: path.join(SHOTS, 'report-vscode-hc.png') });
    assert.deepStrictEqual(problems, []);
    await ctx.close();
  });

  it('draws an ErrorReport as an error box with the message and location, and several specs as sections', async function () {
    const err: ErrorReport = { version: 1, spec: 'assay.fitspec.json', error: { message: "unknown identifier 'K2' at column 5 \u2014 did you mean 'K'?", path: ['models', 1, 'formula'], location: { file: 'assay.fitspec.json', line: 12, column: 18 } } };
    const many = sampleReport();
    for (let k = 0; k < 12; k++) many.models[1]!.problems.push({ code: 'poorly-determined', severity: 'warning', message: `invented warning ${k}`, path: ['models', 1] });
    const { page, problems, ctx } = await openReport([many, err], 'two');
    // 16 problems with 5 codes: one line per code (worst first), folded; 12 of them one fact about gompertz.
    const lines = await page.$$eval('#cw-spec-1 .cw-group-sum', l => l.map(x => (x as HTMLElement).innerText.replace(/\s+/g, ' ').trim()));
    assert.strictEqual(lines.length, 5, lines.join(' | '));
    assert.ok(lines.slice(0, 4).every(l => /warning/.test(l)) && /note/.test(lines[4]!), `warnings before notes: ${lines.join(' | ')}`);
    assert.ok(/^.*bad cell/.test(lines[0]!), `the data's own warning first: ${lines[0]}`);
    const pd = lines.find(l => /poorly determined/.test(l))!;
    assert.match(pd, /poorly determined \u2014 gompertz \u00d712/);
    assert.strictEqual(await page.$$eval('#cw-spec-1 .cw-problem', l => l.filter(x => (x as HTMLElement).checkVisibility()).length), 0, 'all folded');
    await page.click('#cw-spec-1 details[data-group="warning:poorly-determined"] > summary');
    assert.strictEqual(await page.$$eval('#cw-spec-1 .cw-problem', l => l.filter(x => (x as HTMLElement).checkVisibility()).length), 12);
    assert.strictEqual(await page.$$eval('#cw-spec-1 .cw-problem', l => l.length), 16);
    // the header counts facts per severity: 4 warnings, 1 note
    assert.deepStrictEqual(await page.$$eval('#cw-spec-1 .cw-status', l => l.map(x => (x as HTMLElement).textContent!.trim())), ['\u25b2 4 warnings', '\u2139 1 note', 'best: logistic']);
    // the live loop's order: header, plot, tables, problems
    const order = await page.$eval('#cw-spec-1', s => ['.cw-head', '.cw-plot', '.cw-comparison', '.cw-problems', '.cw-data'].map(q => s.querySelector(q)!.getBoundingClientRect().top));
    assert.deepStrictEqual([...order].sort((a, b) => a - b), order, `top to bottom: ${order.join(', ')}`);
    assert.strictEqual(await page.$$eval('section.cw-spec', s => s.length), 2);
    const box = await page.innerText('#cw-spec-2 .cw-error');
    assert.ok(box.includes('could not be run') && box.includes("unknown identifier 'K2'") && box.includes('assay.fitspec.json:12:18'), box);
    assert.ok((await page.innerText('nav.cw-toc')).includes('assay.fitspec.json'));
    assert.deepStrictEqual(problems, []);
    await ctx.close();
  });

  it('copes with other report shapes: two x variables, a failed model, omitted points, no comparison', async function () {
    // Two x variables, no band: observed against fitted.
    const multi = sampleReport();
    const m0 = multi.models[0]!;
    m0.band = null;
    m0.points!.x = { T: m0.points!.x.hours!.map(v => 280 + v), t: m0.points!.x.hours! };
    multi.models = [m0];
    multi.comparison = null;
    multi.title = 'Two variables';
    // A failed fit (values may be null after JSON), and a results file without points.
    const failed = sampleReport();
    const f = failed.models[2]!;
    f.status = 'failed';
    f.termination = 'non-finite';
    f.band = null;
    f.params.c0!.value = null as unknown as number;
    f.params.c0!.se = null;
    for (const m of failed.models) { delete m.points; m.pointsOmitted = true; }
    failed.title = 'Failed and omitted';
    const { page, problems, ctx } = await openReport([multi, failed], 'shapes');
    const text1 = await page.innerText('#cw-spec-1');
    assert.ok(text1.includes('observed y against fitted values of logistic'), 'multi-variable note');
    const ink = await inkedPixels(page);
    assert.ok(ink[0]! > 2000, `multi-variable plot drawn (${ink[0]})`);
    const text2 = await page.innerText('#cw-spec-2');
    assert.ok(text2.includes('not stored in this results file'), 'omitted points explained');
    assert.ok(text2.includes('failed'), 'failed model marked');
    assert.ok(ink[2]! > 2000, 'curves drawn without points');
    await page.screenshot({ path: path.join(SHOTS, 'report-shapes.png'), fullPage: true });
    assert.deepStrictEqual(problems, []);
    await ctx.close();
  });

  it('draws 10^5 points decimated (row identity kept for the tooltip) without errors', async function () {
    const n = 100000;
    const t0 = Date.now();
    const { page, problems, ctx } = await openReport([bigReport(n)], 'big');
    const ms = Date.now() - t0;
    const legend = await page.innerText('.cw-legend');
    const m = /data \(([\d\u2009 ]+) of 100\u2009000 drawn\)/.exec(legend);
    assert.ok(m, `decimated legend: ${legend}`);
    const drawn = Number(m[1]!.replace(/\D/g, ''));
    assert.ok(drawn < n / 2, `${drawn} points drawn`);
    // A redraw of the whole view (decimation included) when the y axis turns logarithmic.
    const redrawMs = await page.evaluate(() => {
      const b = Array.from(document.querySelectorAll<HTMLButtonElement>('button.cw-toggle')).find(x => x.textContent === 'log y')!;
      const t = performance.now();
      b.click();
      return performance.now() - t;
    });
    // Timing is printed, not asserted (speed belongs in bench/).
    console.log(`      ${n} points: page load + first draw ${ms} ms (${drawn} drawn); redraw on log y ${redrawMs.toFixed(0)} ms`);
    await page.screenshot({ path: path.join(SHOTS, 'report-big.png') });
    assert.deepStrictEqual(problems, []);
    await ctx.close();
  });

  it('works as the VS Code panel: Ready handshake, in-place update, reveal, export, state, snapshot', async function () {
    fs.writeFileSync(path.join(dir, 'webview.js'), js);
    fs.writeFileSync(path.join(dir, 'panel.css'), panelCss());
    const nonce = 'TestNonceAbCdEfGh0123456789';
    const file = path.join(dir, 'panel.html');
    fs.writeFileSync(file, panelHtml({ scriptUri: 'webview.js', cssUri: 'panel.css', nonce, cspSource: 'file:' }));
    const ctx = await browser!.newContext({ viewport: { width: 1100, height: 850 } });
    const page = await ctx.newPage();
    const problems = watch(page);
    // A stand-in for the webview API, as a string: tsx-compiled functions may carry helpers the page does not have.
    await page.addInitScript(`
      window.__posted = [];
      window.__state = window.__state;
      window.acquireVsCodeApi = function () {
        return {
          postMessage: function (m) { window.__posted.push(JSON.parse(JSON.stringify(m))); },
          getState: function () { return window.__state; },
          setState: function (s) { window.__state = s; },
        };
      };`);
    await page.goto(`file://${file}`);
    const posted = () => page.evaluate(() => (window as unknown as { __posted: { type: string; [k: string]: unknown }[] }).__posted);
    await page.waitForFunction(() => (window as unknown as { __posted: { type: string }[] }).__posted.some(m => m.type === 'ready'))
      .catch((e: Error) => { throw new Error(`${e.message}\n${problems.join('\n')}`); });
    assert.deepStrictEqual((await posted()).find(m => m.type === 'ready'), { type: 'ready', version: 1 });

    const send = (msg: unknown) => page.evaluate(m => window.postMessage(m, '*'), msg);
    const r1 = sampleReport();
    await send({ type: 'report', report: r1, specUri: 'file:///w/culture-b.fitspec.json', specName: 'culture-b.fitspec.json', version: 1 });
    await page.waitForSelector('canvas');
    await page.waitForTimeout(100);
    await page.$eval('canvas', c => { (c as HTMLCanvasElement & { __mark?: number }).__mark = 42; });

    // A refit: the same canvas is reused (no DOM rebuild of the plot), the new title and numbers show.
    const r2 = sampleReport();
    r2.title = 'Culture B after refit';
    r2.models[0]!.params.K!.value = 2.0123;
    // The host may post points as typed arrays (structured clone keeps them): convert in the page, then post.
    await page.evaluate(m => {
      for (const md of m.report.models) {
        if (!md.points) continue;
        md.points.y = Float64Array.from(md.points.y) as unknown as number[];
        md.points.residual = Float64Array.from(md.points.residual) as unknown as number[];
        md.points.x.hours = Float64Array.from(md.points.x.hours!) as unknown as number[];
        md.points.row = Int32Array.from(md.points.row) as unknown as number[];
      }
      window.postMessage(m, '*');
    }, { type: 'report', report: r2, specUri: 'file:///w/culture-b.fitspec.json', specName: 'culture-b.fitspec.json', version: 2, dirty: true });
    await page.waitForTimeout(100);
    assert.strictEqual(await page.$eval('canvas', c => (c as HTMLCanvasElement & { __mark?: number }).__mark), 42, 'canvas kept');
    assert.strictEqual(await page.innerText('.cw-title'), 'Culture B after refit');
    assert.ok((await page.innerText('.cw-sub')).includes('unsaved edits'), 'dirty report marked');
    assert.ok((await page.innerText('details[data-model="logistic"] .cw-params')).includes('2.012'));
    // An older report arriving late is ignored.
    await send({ type: 'report', report: r1, specUri: 'file:///w/culture-b.fitspec.json', specName: 'culture-b.fitspec.json', version: 1 });
    await page.waitForTimeout(50);
    assert.strictEqual(await page.innerText('.cw-title'), 'Culture B after refit');

    // Clicking a problem reveals its JSON path in the spec; its row link opens the data row.
    await page.click('.cw-group.cw-problem-warning summary >> nth=0');
    await page.click('.cw-problem-warning button.cw-problem-btn >> nth=0');
    await page.click('.cw-row-link >> nth=0');
    await page.click('.cw-chip[data-model="gompertz"]');
    await page.click('summary:has-text("Figure")');
    await page.click('.cw-figure-form button:has-text("PNG")');
    await page.selectOption('.cw-figure-form select[aria-label="Background of the figure"]', 'transparent');
    await page.click('.cw-figure-form button:has-text("SVG")');
    await page.click('button.cw-btn:has-text("CSV")');
    await page.click('button.cw-btn:has-text("Refit")');
    await send({ type: 'snapshot?', id: 7 });
    await page.waitForTimeout(100);
    const msgs = await posted();
    assert.deepStrictEqual(msgs.find(m => m.type === 'reveal'), { type: 'reveal', path: ['data', 'y'] });
    assert.deepStrictEqual(msgs.find(m => m.type === 'revealRow'), { type: 'revealRow', row: 18 });
    const png = msgs.find(m => m.type === 'export' && m.format === 'png')!;
    assert.ok(String(png.data).startsWith('data:image/png;base64,') && String(png.data).length > 10000, 'PNG data URL');
    assert.strictEqual(png.suggestedName, 'culture-b-plot.png');
    const pngBytes = Buffer.from(String(png.data).split(',')[1]!, 'base64');
    // PNG header: width and height (big-endian at bytes 16 and 20): 1200 x 800 CSS pixels at 2x
    assert.deepStrictEqual([pngBytes.readUInt32BE(16), pngBytes.readUInt32BE(20)], [2400, 1600], 'the chosen size at the chosen scale');
    fs.writeFileSync(path.join(SHOTS, 'export.png'), pngBytes);
    const svg = msgs.find(m => m.type === 'export' && m.format === 'svg')!;
    const svgText = String(svg.data);
    assert.strictEqual(svg.suggestedName, 'culture-b-plot.svg');
    assert.ok(svgText.startsWith('<svg xmlns="http://www.w3.org/2000/svg" width="1200" height="800"'), svgText.slice(0, 120));
    assert.ok(!/<rect width="100%" height="100%"/.test(svgText), 'transparent: no background rectangle');
    assert.ok(svgText.includes('>Culture B after refit</text>') && svgText.includes('gompertz (bands, residuals)'), 'the strip names the figure and curves');
    assert.ok((svgText.match(/<polyline /g) ?? []).length >= 3, 'model curves as polylines');
    assert.ok((svgText.match(/<polygon /g) ?? []).length >= 2, 'bands as polygons');
    assert.ok((svgText.match(/<circle /g) ?? []).length >= 2 * 25, 'data points and residuals as circles');
    assert.ok(svgText.includes('>hours</text>'), 'axis title');
    fs.writeFileSync(path.join(SHOTS, 'export.svg'), svgText);
    assert.ok(msgs.some(m => m.type === 'refit'), 'refit requested');
    const csv = msgs.find(m => m.type === 'export' && m.format === 'csv')!;
    assert.ok(String(csv.data).startsWith('model,parameter,value'));
    assert.notStrictEqual(csv.id, png.id, 'request ids differ');
    const snap = msgs.find(m => m.type === 'snapshot')!;
    assert.strictEqual(snap.inReplyTo, 7);
    assert.strictEqual(snap.version, 2);
    assert.strictEqual(snap.canvases, 2);
    assert.ok(String(snap.text).includes('Model comparison'));
    const state = await page.evaluate(() => (window as unknown as { __state: { selectedModel?: string; specUri: string; report?: unknown } }).__state);
    assert.strictEqual(state.selectedModel, 'gompertz');
    assert.strictEqual(state.specUri, 'file:///w/culture-b.fitspec.json');
    assert.ok(state.report, 'last report persisted');
    await page.screenshot({ path: path.join(SHOTS, 'panel.png') });

    // A reload restores from the persisted state before the host answers.
    const saved = state;
    await page.addInitScript(`window.__state = ${JSON.stringify(saved)};`);
    await page.reload();
    await page.waitForSelector('canvas');
    assert.strictEqual(await page.innerText('.cw-title'), 'Culture B after refit');
    assert.strictEqual(await page.getAttribute('.cw-chip[data-model="gompertz"]', 'aria-pressed'), 'true');

    // A broken spec (a half-typed edit): the last good result stays, dimmed and inert, under the error with a link
    // to its place; the next good result replaces both.
    const broken: ErrorReport = { version: 1, spec: 'culture-b.fitspec.json', error: { message: "data.y names column 'od6', which is not in culture-b.csv", path: ['data', 'y'], location: { file: 'culture-b.fitspec.json', line: 3, column: 40 } } };
    await send({ type: 'report', report: broken, specUri: 'file:///w/culture-b.fitspec.json', specName: 'culture-b.fitspec.json', version: 3, dirty: true });
    await page.waitForSelector('.cw-report.cw-is-stale');
    assert.strictEqual(await page.innerText('.cw-title'), 'Culture B after refit', 'the last good title stays');
    assert.strictEqual(await page.$$eval('canvas', l => l.length), 2, 'the last good plots stay');
    assert.ok(await page.$('.cw-stale-part[inert][aria-hidden="true"]'), 'the dimmed part is out of the tab order');
    assert.strictEqual(await page.$eval('.cw-stale-part', e => getComputedStyle(e).opacity), '0.45');
    const banner = await page.innerText('.cw-error');
    assert.ok(banner.includes("'od6'") && banner.includes('last result') && banner.includes('culture-b.fitspec.json:3:40'), banner);
    assert.ok((await page.innerText('.cw-status-row')).includes('spec error'));
    await page.click('.cw-error .cw-link');
    await page.waitForTimeout(50);
    assert.deepStrictEqual((await posted()).filter(m => m.type === 'reveal').pop(), { type: 'reveal', path: ['data', 'y'], line: 3, column: 40 });
    const kept = await page.evaluate(() => (window as unknown as { __state: { lastGood?: { title?: string } } }).__state.lastGood?.title);
    assert.strictEqual(kept, 'Culture B after refit', 'the last good report is persisted for a reload');
    await page.screenshot({ path: path.join(SHOTS, 'panel-broken.png') });
    const r4 = sampleReport();
    r4.title = 'Culture B fixed';
    await send({ type: 'report', report: r4, specUri: 'file:///w/culture-b.fitspec.json', specName: 'culture-b.fitspec.json', version: 4 });
    await page.waitForFunction(() => !document.querySelector('.cw-is-stale'));
    assert.strictEqual(await page.innerText('.cw-title'), 'Culture B fixed');
    assert.ok(await page.$eval('.cw-error', e => (e as HTMLElement).hidden));
    assert.deepStrictEqual(problems, []);
    await ctx.close();
  });

  it('the panel draws the calibration read-outs (unknowns, controls, standards, limits) as the report holds them', async function () {
    fs.writeFileSync(path.join(dir, 'webview.js'), js);
    fs.writeFileSync(path.join(dir, 'panel.css'), panelCss());
    const file = path.join(dir, 'panel-readouts.html');
    fs.writeFileSync(file, panelHtml({ scriptUri: 'webview.js', cssUri: 'panel.css', nonce: 'TestNonceReadouts0123456789', cspSource: 'file:' }));
    const ctx = await browser!.newContext({ viewport: { width: 1100, height: 850 } });
    const page = await ctx.newPage();
    const problems = watch(page);
    await page.addInitScript(`window.acquireVsCodeApi = function () { return { postMessage: function () {}, getState: function () {}, setState: function () {} }; };`);
    await page.goto(`file://${file}`);
    // the demo's committed results: a 4PL standard curve with unknowns in duplicate, dilutions, spiked controls, limits
    const report = JSON.parse(fs.readFileSync(path.join(repoRoot, 'examples', 'results', 'assay-plate-readout.fitresult.json'), 'utf8')) as FitReport;
    assert.ok(report.unknowns && report.controls && report.limits, 'the demo has unknowns, controls and limits');
    await page.evaluate(m => window.postMessage(m, '*'), { type: 'report', report, specUri: 'assay-plate-readout.fitspec.json', specName: 'assay-plate-readout.fitspec.json', version: 1 });
    await page.waitForSelector('.cw-readouts');
    const tables = await page.$$eval('.cw-readouts table', ts => ts.map(t => ({
      label: t.getAttribute('aria-label'),
      rows: Array.from(t.querySelectorAll('tbody tr')).map(tr => Array.from(tr.querySelectorAll('td')).map(td => td.textContent ?? '')),
    })));
    const byLabel = new Map(tables.map(t => [t.label, t.rows] as const));
    const unknowns = byLabel.get('Unknowns read off the curve')!;
    assert.deepStrictEqual(unknowns.map(r => r[0]), report.unknowns.results.map(u => u.id), 'one row per sample, in the report\'s order');
    assert.deepStrictEqual(unknowns.map(r => r[1]), report.unknowns.results.map(u => String(u.m)), 'the number of readings averaged');
    assert.equal(byLabel.get('Spiked controls')!.length, report.controls.results.length);
    assert.equal(byLabel.get('Standards back-calculated')!.length, report.controls.standards.length);
    assert.equal(byLabel.get('Limits of detection and quantitation')!.length, 1);
    assert.ok(await page.$eval('.cw-readouts', e => (e.textContent ?? '').includes('Read-outs')));
    // and on the curve: one triangle per sample with a back-calculated x, named in the legend
    const onCurve = report.unknowns.results.filter(u => u.x !== null).length;
    const legend = await page.$$eval('.cw-legend-item', es => es.map(e => e.textContent ?? ''));
    assert.ok(legend.some(l => l.includes(`unknowns (${onCurve} read off ${report.unknowns!.model})`)), legend.join(' | '));
    assert.deepStrictEqual(problems, []);
    await page.screenshot({ path: path.join(SHOTS, 'panel-readouts.png'), fullPage: true });
    await ctx.close();
  });

  it('draws a dose-response series on a log x axis by default, with the plot block\'s titles, units and bands', async function () {
    // invented 3-decade standards (0.5 .. 500), a 4PL-like curve drawn through them
    const r = sampleReport();
    const m = r.models[0]!;
    const xs = [0.5, 1, 2, 5, 10, 20, 50, 100, 200, 500];
    const f = (x: number) => 0.05 + 1.9 / (1 + Math.pow(20 / x, 1.1));
    m.points = { row: xs.map((_, i) => i + 1), x: { hours: xs }, y: xs.map(x => f(x) * 1.01), fitted: xs.map(f), residual: xs.map(x => f(x) * 0.01), standardized: xs.map(() => 0.5), leverage: xs.map(() => 0.2), cooks: xs.map(() => 0.01) };
    const bx = Array.from({ length: 60 }, (_, i) => 0.5 * Math.pow(1000, i / 59));
    m.band = { variable: 'hours', x: bx, fit: bx.map(f), ciLow: bx.map(x => f(x) - 0.03), ciHigh: bx.map(x => f(x) + 0.03), piLow: bx.map(x => f(x) - 0.08), piHigh: bx.map(x => f(x) + 0.08) };
    r.models = [m];
    r.comparison = null;
    r.best = m.name;
    const auto = await openReport([r], 'dose-auto');
    assert.strictEqual(await auto.page.getAttribute('button.cw-toggle:has-text("log x")', 'aria-pressed'), 'true', 'log x by default (3 decades)');
    assert.match((await auto.page.getAttribute('button.cw-toggle:has-text("log x")', 'title'))!, /automatic: the values span 3 decades/);
    assert.strictEqual(await auto.page.getAttribute('button.cw-toggle:has-text("log y")', 'aria-pressed'), 'false', 'y spans less than two decades');
    // 1-2-5 ticks: the labelled x ticks of the log axis are 1, 2 and 5 of each decade
    const labels = await auto.page.evaluate(() => (window as unknown as { curvewrightViews: { axisLabels(w: string, a: string): string[] }[] }).curvewrightViews[0]!.axisLabels('main', 'x'));
    assert.ok(labels.length >= 6, labels.join(' '));
    for (const l of labels) assert.match(l, /^(1|2|5)(0*|\.0*)?$|^0\.(0*)(1|2|5)$/, `a 1-2-5 tick: ${l} (${labels.join(' ')})`);
    for (const l of ['1', '10', '100']) assert.ok(labels.includes(l), `decade ${l} labelled (${labels.join(' ')})`);
    await auto.page.screenshot({ path: path.join(SHOTS, 'dose-log-x.png') });
    // the user's choice wins over the automatic one
    await auto.page.click('button.cw-toggle:has-text("log x")');
    assert.strictEqual(await auto.page.getAttribute('button.cw-toggle:has-text("log x")', 'aria-pressed'), 'false');
    await auto.ctx.close();

    r.plot = { x: { scale: 'linear', label: 'concentration', unit: 'ng/mL' }, y: { label: 'signal', unit: 'AU' }, bands: ['confidence'] };
    const fixed = await openReport([r], 'dose-spec', { viewport: { width: 400, height: 800 } });
    assert.strictEqual(await fixed.page.getAttribute('button.cw-toggle:has-text("log x")', 'aria-pressed'), 'false', 'the spec says linear');
    const desc = await fixed.page.$eval('.cw-chart-main canvas', c => document.getElementById(c.getAttribute('aria-describedby')!)!.textContent!);
    assert.match(desc, /Plot of signal \(AU\) against concentration \(ng\/mL\): 10 data points, 1 fitted curve: logistic \(R² 0\.99\d*, n \d+\)\. Best model: logistic\./);
    const legend = await fixed.page.innerText('.cw-legend');
    assert.ok(legend.includes('confidence band') && !legend.includes('prediction band'), legend);
    // 400 px: the chart keeps 16:9, nothing is wider than the window but the tables' own scrollers
    const box = (await (await fixed.page.$('.cw-chart-main'))!.boundingBox())!;
    assert.ok(Math.abs(box.width / box.height - 16 / 9) < 0.05, `aspect ${box.width}x${box.height}`);
    assert.strictEqual(await fixed.page.evaluate(() => document.documentElement.scrollWidth <= window.innerWidth), true, 'no sideways scroll of the page');
    const sticky = await fixed.page.$eval('.cw-params tbody td:first-child', td => getComputedStyle(td).position);
    assert.strictEqual(sticky, 'sticky', 'first column stays in view');
    const titleLines = await fixed.page.$eval('.cw-title', e => Math.round(e.getBoundingClientRect().height / parseFloat(getComputedStyle(e).lineHeight || '20')));
    assert.ok(titleLines <= 2, `title on at most two lines (${titleLines})`);
    await fixed.page.screenshot({ path: path.join(SHOTS, 'narrow-400.png'), fullPage: false });
    assert.deepStrictEqual(fixed.problems, []);
    await fixed.ctx.close();
  });

  it('can be used with the keyboard alone: every control in a sensible order, with a visible focus ring', async function () {
    const { page, problems, ctx } = await openReport([sampleReport()], 'keys');
    const seen: string[] = [];
    for (let i = 0; i < 14; i++) {
      await page.keyboard.press('Tab');
      seen.push(await page.evaluate(() => {
        const e = document.activeElement as HTMLElement;
        const ring = getComputedStyle(e).outlineStyle !== 'none' && parseFloat(getComputedStyle(e).outlineWidth) >= 1;
        const name = e.getAttribute('aria-label') || e.textContent!.replace(/\s+/g, ' ').trim().slice(0, 24);
        return `${e.tagName.toLowerCase()}.${e.className.split(' ')[0]}:${name}:${ring ? 'ring' : 'NO RING'}`;
      }));
    }
    assert.ok(seen.every(s => s.endsWith(':ring')), seen.join('\n'));
    const kinds = seen.map(s => s.split(':')[0]);
    const first = (k: string) => kinds.findIndex(x => x.startsWith(k));
    assert.ok(first('button.cw-status') < first('button.cw-chip') && first('button.cw-chip') < first('button.cw-toggle') && first('button.cw-toggle') < first('div.cw-table-wrap'), seen.join('\n'));
    assert.deepStrictEqual(problems, []);
    await ctx.close();
  });
});

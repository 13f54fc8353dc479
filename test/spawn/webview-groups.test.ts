// The panel and the HTML report must not break on a grouped report (data.groupBy: one models[] entry per model per
// group, with a "group" field). Drawing groups properly is separate work; this checks a grouped report made by the
// engine from seeded data loads in headless Chromium without page errors and still draws its plots and tables.
import * as assert from 'assert';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import type { Browser } from 'playwright-core';
import { runSpecFile } from '../../src/engine/run';
import { isErrorReport, type FitReport } from '../../src/engine/report';
import { buildReportHtml } from '../../src/shared/html';
import { mulberry32, normalSource } from '../../scripts/generate-demo';
import { panelCss, webviewBundle } from '../unit/webview-helpers';
import { launchChromium } from './chromium';


describe('webview: a grouped report (headless Chromium)', function () {
  this.timeout(120000);
  let browser: Browser | null = null;
  let dir = '';

  before(async function () {
    browser = await launchChromium(this, 'the grouped-report browser check');
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-webview-groups-'));
  });
  after(async function () {
    await browser?.close();
    if (dir) fs.rmSync(dir, { recursive: true, force: true });
  });

  it('loads without errors and draws the plots and the parameter tables', async function () {
    const rand = normalSource(mulberry32(5));
    const lines = ['hours,od,reactor'];
    for (let h = 0; h <= 48; h += 3) for (const [r, K] of [['R1', 2], ['R2', 1.7]] as const) lines.push(`${h},${(K / (1 + Math.exp(-0.3 * (h - 20))) + 0.02 * rand()).toFixed(5)},${r}`);
    fs.writeFileSync(path.join(dir, 'g.csv'), lines.join('\n') + '\n');
    fs.writeFileSync(path.join(dir, 'g.fitspec.json'), JSON.stringify({ title: 'grouped', data: { file: 'g.csv', x: 'hours', y: 'od', groupBy: 'reactor' }, models: [{ name: 'logistic', builtin: 'logistic3' }, { name: 'line', builtin: 'linear' }] }));
    const r = await runSpecFile(path.join(dir, 'g.fitspec.json'), { workspaceRoot: dir });
    assert.ok(!isErrorReport(r));
    assert.strictEqual((r as FitReport).models.length, 4);
    const file = path.join(dir, 'g.html');
    fs.writeFileSync(file, buildReportHtml([r], { js: await webviewBundle(), css: panelCss() }));
    const ctx = await browser!.newContext({ viewport: { width: 1180, height: 900 } });
    const page = await ctx.newPage();
    const problems: string[] = [];
    page.on('pageerror', (e) => problems.push(`pageerror: ${e.message}`));
    page.on('console', (m) => { if (m.type() === 'error') problems.push(`console error: ${m.text()}`); });
    await page.goto(`file://${file}`);
    await page.waitForSelector('canvas');
    await page.waitForTimeout(150);
    assert.deepStrictEqual(problems, []);
    const text = await page.innerText('body');
    assert.ok(text.includes('grouped') && text.includes('logistic'), 'title and models shown');
    assert.ok((await page.$$('canvas')).length >= 1);
    await ctx.close();
  });
});

#!/usr/bin/env node
'use strict';
// Screenshot of the CLI's HTML report for the documentation: renders examples/report.html (written by `npm run demo`)
// in headless Debian chromium through playwright-core and saves the top of the page as docs/report.png.
//   usage: node scripts/shot-report.js [report.html] [out.png]
// Needs the Debian package chromium (.ci/run installs it). The page is self-contained, so no network is used.
const fs = require('fs');
const path = require('path');
const { chromium } = require('playwright-core');

const repo = path.resolve(__dirname, '..');
const input = path.resolve(process.argv[2] || path.join(repo, 'examples', 'report.html'));
const output = path.resolve(process.argv[3] || path.join(repo, 'docs', 'report.png'));
const CHROMIUM = '/usr/bin/chromium';

(async () => {
  if (!fs.existsSync(input)) {
    console.error(`missing ${path.relative(repo, input)} — run \`npm run demo\` first (it writes examples/report.html)`);
    process.exit(1);
  }
  if (!fs.existsSync(CHROMIUM)) {
    console.error(`missing ${CHROMIUM} — install the Debian package chromium (apt-get install -y chromium)`);
    process.exit(1);
  }
  const browser = await chromium.launch({
    executablePath: CHROMIUM,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
      '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
  try {
    const context = await browser.newContext({ viewport: { width: 1400, height: 1000 }, deviceScaleFactor: 1, colorScheme: 'light' });
    const page = await context.newPage();
    const errors = [];
    page.on('pageerror', (e) => errors.push(String(e && e.message)));
    await page.goto('file://' + input, { waitUntil: 'load' });
    // the report draws its charts after load; wait until a canvas is there and give Chart.js a moment to settle
    await page.waitForSelector('canvas', { timeout: 15000 });
    await page.waitForTimeout(800);
    if (errors.length) throw new Error(`the report page raised: ${errors.join('; ')}`);
    await page.screenshot({ path: output, fullPage: false });
    const kb = fs.statSync(output).size / 1024;
    console.log(`${path.relative(repo, output)} <- ${path.relative(repo, input)} (${kb.toFixed(0)} KiB)`);
  } finally {
    await browser.close();
  }
})().catch((e) => {
  console.error(`shot-report: ${e && e.message ? e.message : e}`);
  process.exit(1);
});

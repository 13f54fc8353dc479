#!/usr/bin/env node
'use strict';
// UI tests: installs the packaged VSIX into a fresh code-server, drives the real workbench in headless Debian
// chromium (playwright-core) through each scenario of test/e2e/*.e2e.ts, and saves screenshots to test/e2e/shots/.
//   usage: run-e2e.js <extension.vsix> [--only NAME] [--timeout SECONDS]
const path = require('path');
const fs = require('fs');
const h = require('./code-server');
const { bundle } = require('./bundle-tests');

const args = process.argv.slice(2);
const vsix = args[0] && !args[0].startsWith('--') ? path.resolve(args[0]) : null;
const only = args.includes('--only') ? args[args.indexOf('--only') + 1] : null;
const scenarioTimeout = (+(args.includes('--timeout') ? args[args.indexOf('--timeout') + 1] : 0) || 180) * 1000;
const fixture = path.join(h.REPO, 'test', 'fixtures', 'workspace');
const shotsDir = path.join(h.REPO, 'test', 'e2e', 'shots');

/** Command palette, retried: right after load the remote extension host may not have registered contributions yet. */
async function runCommand(page, label, tries = 30) {
  const input = page.locator('.quick-input-widget input');
  for (let i = 1; ; i++) {
    await page.keyboard.press('F1');
    await input.waitFor({ state: 'visible' });
    await input.fill('>' + label);
    const row = page.locator('.quick-input-list .monaco-list-row', { hasText: label }).first();
    try {
      await row.waitFor({ timeout: 1000 });
      await page.keyboard.press('Enter');
      return i;
    } catch (e) {
      if (i >= tries) throw new Error(`command '${label}' never appeared in the palette`);
      await page.keyboard.press('Escape');
      await page.waitForTimeout(500);   // the one real race the recipe found: contributions register after the explorer
    }
  }
}

/** Webviews are two nested iframes: the host page and the panel's own document. */
const webview = page => page.frameLocator('iframe.webview.ready').frameLocator('iframe#active-frame');

(async () => {
  const t0 = Date.now();
  const T = m => console.log(`[e2e ${((Date.now() - t0) / 1000).toFixed(1)}s] ${m}`);
  const missing = h.checkPrerequisites({ browser: true });
  if (!vsix || !fs.existsSync(vsix)) missing.push('no VSIX given or it does not exist: package it first (npx vsce package --no-dependencies)');
  if (missing.length) { missing.forEach(m => console.log('e2e: ' + m)); console.log('0 passed, 1 failed'); process.exit(1); }
  const { outDir, files } = await bundle('e2e');
  const scenarios = files.filter(f => !only || f.includes(only));
  if (!scenarios.length) { console.log('e2e: no scenarios in test/e2e/'); console.log('0 passed, 1 failed'); process.exit(1); }
  fs.mkdirSync(shotsDir, { recursive: true });
  const tmp = h.runDir('e2e-');
  const extDir = path.join(tmp, 'extensions');
  h.installExtension(vsix, extDir);
  T('VSIX installed');
  // the server opens one folder at start; each scenario then opens its own fresh copy of the fixture workspace
  const first = h.copyWorkspace(fixture, path.join(tmp, 'ws-0'));
  const cs = await h.startCodeServer({ workspace: first, tmp, extensionsDir: extDir, log: T });
  const unregister = h.onExitCleanup(cs.stop);
  let passed = 0, failed = 0;
  let browser;
  try {
    browser = await h.launchChromium(tmp);
    const { page } = browser;
    page.on('pageerror', e => console.log('  [pageerror]', e.message));
    for (const [k, file] of scenarios.entries()) {
      const name = file.replace(/\.e2e\.js$/, '');
      const started = Date.now();
      const ctx = {
        page, name, shotsDir,
        workspace: null,
        /** copies the fixture workspace, or another folder of the repository such as 'examples' (optionally with
         *  .vscode/settings.json), and opens the copy in the workbench: scenarios never modify the repository */
        async openWorkspace(settings, from) {
          const src = from ? path.join(h.REPO, from) : fixture;
          const ws = h.copyWorkspace(src, path.join(tmp, `ws-${k + 1}-${Date.now()}`));
          if (settings) { fs.mkdirSync(path.join(ws, '.vscode'), { recursive: true }); fs.writeFileSync(path.join(ws, '.vscode', 'settings.json'), JSON.stringify(settings, null, 2)); }
          ctx.workspace = ws;
          await page.goto(`${cs.url}/?folder=${encodeURIComponent(ws)}`);
          await page.locator('.monaco-workbench').waitFor({ timeout: 60000 });
          await page.locator('.explorer-folders-view .monaco-list-row').first().waitFor({ timeout: 60000 });
          return ws;
        },
        shot: async (shotName, opts) => {
          // park the mouse on the empty part of the activity bar first: a hover tooltip in the explorer would show
          // this machine's paths, one in the editor a hover card (not while a menu under the mouse is being shown)
          if (!(opts && opts.keepMouse)) await page.mouse.move(22, 640);
          const f = path.join(shotsDir, `${name}-${shotName}.png`);
          await page.screenshot({ path: f });
          console.log('  screenshot ' + path.relative(h.REPO, f));
        },
        runCommand: label => runCommand(page, label),
        webview: () => webview(page),
        log: m => console.log('  ' + m),
      };
      let timer;
      try {
        const mod = require(path.join(outDir, file));
        const run = mod.run || (mod.default && mod.default.run) || mod.default;
        if (typeof run !== 'function') throw new Error(`${file} exports no run(ctx)`);
        await Promise.race([run(ctx), new Promise((_, rej) => { timer = setTimeout(() => rej(new Error(`timed out after ${scenarioTimeout / 1000} s`)), scenarioTimeout); })]);
        passed++;
        console.log(`  ok   ${name} (${((Date.now() - started) / 1000).toFixed(1)} s)`);
      } catch (e) {
        failed++;
        console.log(`  FAIL ${name}: ${(e && e.message) || e}`);
        await page.screenshot({ path: path.join(shotsDir, `${name}-FAILED.png`) }).catch(() => {});
      } finally { clearTimeout(timer); }
    }
  } finally {
    if (browser) await browser.ctx.close().catch(() => {});
    await cs.stop(); unregister();
    T('code-server stopped');
  }
  console.log(`${passed} passed, ${failed} failed`);
  process.exit(failed === 0 && passed > 0 ? 0 : 1);
})().catch(async e => { console.error('e2e: ' + ((e && e.message) || e)); await h.runCleanups(); console.log('0 passed, 1 failed'); process.exit(1); });

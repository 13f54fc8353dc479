#!/usr/bin/env node
'use strict';
// Runs the mocha suites of test/vscode/ inside a real VS Code extension host (code-server), with the real `vscode` API.
// The web workbench's `payload` URL parameter plays the part of --extensionDevelopmentPath/--extensionTestsPath.
//   usage: run-integration.js [--timeout SECONDS]
const path = require('path');
const { printResults } = require('./results');
const fs = require('fs');
const util = require('util');
const h = require('./code-server');
const { bundle } = require('./bundle-tests');

const timeoutSec = +(process.argv[process.argv.indexOf('--timeout') + 1] || 0) || 300;
const fixture = path.join(h.REPO, 'test', 'fixtures', 'workspace');

(async () => {
  const t0 = Date.now();
  const T = m => console.log(`[integration ${((Date.now() - t0) / 1000).toFixed(1)}s] ${m}`);
  const missing = h.checkPrerequisites();
  if (missing.length) { missing.forEach(m => console.log('integration: ' + m)); console.log('0 passed, 1 failed'); process.exit(1); }
  if (!fs.existsSync(path.join(h.REPO, 'dist', 'extension.js'))) { console.log('integration: dist/extension.js missing; run `node esbuild.js` first'); console.log('0 passed, 1 failed'); process.exit(1); }
  const { outDir, files } = await bundle('vscode');
  if (!files.length) { console.log('integration: no suites in test/vscode/'); console.log('0 passed, 1 failed'); process.exit(1); }
  const tmp = h.runDir('it-');
  const workspace = h.copyWorkspace(fixture, tmp);
  const resultsFile = path.join(tmp, 'results.json');
  const cs = await h.startCodeServer({
    workspace, tmp, log: T,
    env: { CURVEWRIGHT_TEST_RESULTS: resultsFile, CURVEWRIGHT_TEST_DIR: outDir, CURVEWRIGHT_TEST_WORKSPACE: workspace },
  });
  const unregister = h.onExitCleanup(cs.stop);
  let code = 1;
  let browser;
  try {
    browser = await h.launchChromium(tmp);
    const { page } = browser;
    let exit; const exited = new Promise(r => (exit = r));
    const noise = /open-vsx\.org|Creating a socket|connection token|AgentHost|ChatModelSelection|AccountPolicyGate|authentication provider 'github'|took \d+ms|marketplace|Extension Gallery/i;
    await page.exposeFunction('codeAutomationLog', (type, args) => {
      const line = util.format(...(args || [])).replace(/%c\s*|color: #\w+\s*/g, '');
      if (process.env.VERBOSE || !noise.test(line)) console.log(`  [vscode:${type}] ${line.split('\n').filter(l => process.env.VERBOSE || !/^\s+at /.test(l)).join('\n  ')}`);
    });
    await page.exposeFunction('codeAutomationExit', c => exit(c));
    page.on('pageerror', e => console.log('  [pageerror]', e.message));
    const payload = JSON.stringify([
      ['extensionDevelopmentPath', `vscode-remote://${cs.authority}${h.REPO}`],
      ['extensionTestsPath', `vscode-remote://${cs.authority}${path.join(h.REPO, 'test', 'harness', 'vscode-index.js')}`],
      ['skipWelcome', 'true'],
    ]);
    await page.goto(`${cs.url}/?folder=${encodeURIComponent(workspace)}&payload=${encodeURIComponent(payload)}`);
    let timer;
    code = await Promise.race([exited, new Promise(r => { timer = setTimeout(() => r('timeout'), timeoutSec * 1000); })]);
    clearTimeout(timer);
    T(`extension host test runner exit code: ${code}`);
    if (code === 'timeout') { const shot = path.join(tmp, 'timeout.png'); await page.screenshot({ path: shot }); console.log('  screenshot of the hung workbench: ' + shot); }
    let passed = 0, failed = 0;
    const counts = printResults(resultsFile);
    if (counts) ({ passed, failed } = counts);
    else { console.log('  no results written (the runner never ran?); code-server log: ' + cs.logFile); failed = 1; }
    if (code !== 0 && failed === 0) failed = 1;
    console.log(`${passed} passed, ${failed} failed`);
    code = failed === 0 && passed > 0 ? 0 : 1;
  } finally {
    if (browser) await browser.ctx.close().catch(() => {});
    await cs.stop(); unregister();
    T('code-server stopped');
  }
  process.exit(code);
})().catch(async e => { console.error('integration: ' + (e && e.message || e)); await h.runCleanups(); console.log('0 passed, 1 failed'); process.exit(1); });

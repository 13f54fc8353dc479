#!/usr/bin/env node
'use strict';
// `npm run test:desktop`: the integration suites of test/vscode/ (the same ones `npm test` runs in code-server) in
// desktop VS Code, through @vscode/test-electron, under xvfb when there is no display. Desktop VS Code is downloaded
// on first use into .vscode-test/ (git-ignored); where that download is not possible (no network beyond the package
// registries) the script says so in one line and exits 0 — it is not part of `npm test`.
//   usage: node scripts/test-desktop.js [--version 1.100.3] [--timeout SECONDS]
const { spawnSync } = require('child_process');
const { printResults } = require('../test/harness/results');
const fs = require('fs');
const os = require('os');
const path = require('path');

const REPO = path.resolve(__dirname, '..');
const arg = (flag, dflt) => (process.argv.includes(flag) ? process.argv[process.argv.indexOf(flag) + 1] : dflt);
// the VS Code of the code-server harness (code-server 4.100.3), the lowest that engines.vscode (^1.100.0) allows
const version = arg('--version', '1.100.3');
const timeoutSec = Number(arg('--timeout', '600'));
const skip = why => {
  console.log(`test:desktop: skipped — ${why}`);
  process.exit(0);
};

(async () => {
  let electron;
  try {
    electron = require('@vscode/test-electron');
  } catch {
    skip('@vscode/test-electron is not installed (run `npm ci`)');
  }
  // 1. desktop VS Code: cached in .vscode-test/, else downloaded (bounded, so an offline machine answers at once)
  let executable;
  try {
    const cachePath = path.join(REPO, '.vscode-test');
    executable = await Promise.race([
      electron.downloadAndUnzipVSCode({ version, cachePath, timeout: 30000, reporter: { report() {}, error() {} } }),
      new Promise((_, reject) => setTimeout(() => reject(new Error('no answer within 60 s')), 60000).unref()),
    ]);
  } catch (e) {
    skip(`desktop VS Code ${version} could not be downloaded here (${String((e && e.message) || e).split('\n')[0]}); run it where VS Code can be downloaded`);
  }
  // 2. a display: the real one, or a virtual X server
  if (process.platform === 'linux' && !process.env.DISPLAY && !process.env.CURVEWRIGHT_UNDER_XVFB) {
    const xvfb = spawnSync('sh', ['-c', 'command -v xvfb-run'], { encoding: 'utf8' });
    if (xvfb.status !== 0) skip('no display and no xvfb-run — `apt-get install -y xvfb` (Debian) and run again');
    const r = spawnSync('xvfb-run', ['-a', process.execPath, __filename, ...process.argv.slice(2)], { stdio: 'inherit', env: { ...process.env, CURVEWRIGHT_UNDER_XVFB: '1' } });
    process.exit(r.status ?? 1);
  }
  // 3. the extension and the suites, built as for the code-server stage
  const build = spawnSync(process.execPath, ['esbuild.js'], { cwd: REPO, stdio: 'inherit' });
  if (build.status !== 0) { console.log('0 passed, 1 failed'); process.exit(1); }
  const { bundle } = require(path.join(REPO, 'test', 'harness', 'bundle-tests.js'));
  const { outDir, files } = await bundle('vscode');
  if (!files.length) { console.log('test:desktop: no suites in test/vscode/'); console.log('0 passed, 1 failed'); process.exit(1); }
  const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'cw-desktop-'));
  const workspace = path.join(tmp, 'workspace');
  fs.cpSync(path.join(REPO, 'test', 'fixtures', 'workspace'), workspace, { recursive: true });
  const resultsFile = path.join(tmp, 'results.json');
  // 4. run: VS Code loads test/harness/vscode-index.js (the runner the code-server stage uses) in its extension host
  let code = 1;
  try {
    code = await Promise.race([
      electron.runTests({
        vscodeExecutablePath: executable,
        extensionDevelopmentPath: REPO,
        extensionTestsPath: path.join(REPO, 'test', 'harness', 'vscode-index.js'),
        launchArgs: [workspace, '--disable-extensions', '--skip-welcome', '--skip-release-notes', '--disable-workspace-trust', '--user-data-dir', path.join(tmp, 'user-data')],
        extensionTestsEnv: { CURVEWRIGHT_TEST_RESULTS: resultsFile, CURVEWRIGHT_TEST_DIR: outDir, CURVEWRIGHT_TEST_WORKSPACE: workspace },
      }),
      new Promise(resolve => setTimeout(() => resolve('timeout'), timeoutSec * 1000).unref()),
    ]);
  } catch (e) {
    console.log(`test:desktop: VS Code reported: ${String((e && e.message) || e).split('\n')[0]}`);
  }
  let passed = 0, failed = 0;
  const counts = printResults(resultsFile);
  if (counts) ({ passed, failed } = counts);
  else failed = 1;
  if (code !== 0 && failed === 0) failed = 1;
  console.log(`${passed} passed, ${failed} failed`);
  process.exit(failed === 0 && passed > 0 ? 0 : 1);
})().catch(e => {
  console.log(`test:desktop: ${String((e && e.message) || e)}`);
  console.log('0 passed, 1 failed');
  process.exit(1);
});

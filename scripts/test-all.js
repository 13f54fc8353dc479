#!/usr/bin/env node
'use strict';
// `npm test`: type-check, unit and reference tests (plain mocha), build, VSIX packaging, integration tests inside a
// real VS Code extension host, UI tests in a real browser. Each stage prints "N passed, N failed" and its time;
// the whole exits non-zero on any failure.
//   usage: node scripts/test-all.js [--only stage,stage] [--skip stage,stage]
//   stages: typecheck lint unit spawn reference node-versions fuzz build bad-input package setup integration e2e
const { spawn } = require('child_process');
const fs = require('fs');
const path = require('path');

const REPO = path.resolve(__dirname, '..');
const argv = process.argv.slice(2);
if (argv.includes('--help') || argv.includes('-h')) {
  console.log('usage: node scripts/test-all.js [--only stage,stage] [--skip stage,stage]\nstages: typecheck lint unit spawn reference node-versions fuzz build bad-input package setup integration e2e');
  process.exit(0);
}
const listArg = flag => (argv.includes(flag) ? argv[argv.indexOf(flag) + 1].split(',') : null);
const only = listArg('--only');
const skip = listArg('--skip') || [];
const bin = name => path.join(REPO, 'node_modules', '.bin', name);
const vsix = path.join(REPO, '.harness', 'curvewright.vsix');
const reporter = path.join(REPO, 'test', 'harness', 'mocha-reporter.js');

const stages = [
  { name: 'typecheck', cmd: [process.execPath, 'scripts/typecheck.js'] }, // the whole tree, then each tier's tsconfig
  { name: 'lint', cmd: [bin('eslint'), '.'], counts: 'exit' }, // tier imports (eslint.config.mjs) and a few correctness rules
  { name: 'unit', cmd: [bin('mocha'), '--config', '.mocharc.json', '--reporter', reporter, 'test/unit/**/*.test.ts'] },
  // the tests that spawn the CLI, build bundles or drive a browser, apart so that `unit` stays fast
  { name: 'spawn', cmd: [bin('mocha'), '--config', '.mocharc.json', '--reporter', reporter, 'test/spawn/**/*.test.ts'] },
  { name: 'reference', cmd: [bin('mocha'), '--config', '.mocharc.json', '--reporter', reporter, 'test/reference/**/*.test.ts'] },
  { name: 'node-versions', cmd: [process.execPath, 'scripts/test-node.js', '--install', '--others'] }, // CLI + library tests on the other supported Node majors
  { name: 'fuzz', cmd: [bin('mocha'), '--config', '.mocharc.json', '--reporter', reporter, 'test/fuzz/**/*.test.ts'] },
  { name: 'build', cmd: [process.execPath, 'esbuild.js'], counts: 'exit' },
  { name: 'bad-input', cmd: [bin('mocha'), '--config', '.mocharc.json', '--reporter', reporter, 'test/bad-input/**/*.test.ts'] }, // the real CLI on bad input (needs the build)
  // README images are relative links to docs/ in the repository; the VSIX ships no docs images, so links stay as written
  { name: 'package', cmd: [bin('vsce'), 'package', '--no-dependencies', '--allow-missing-repository', '--no-rewrite-relative-links', '-o', vsix], counts: 'exit', after: () => {
    const kb = fs.statSync(vsix).size / 1024;
    console.log(`VSIX ${path.relative(REPO, vsix)}: ${kb.toFixed(0)} KiB`);
  } },
  // first-time set-up, idempotent: installs the pinned code-server into .harness/ (exits at once when it is there)
  { name: 'setup', cmd: ['bash', 'scripts/setup-code-server.sh'], counts: 'exit' },
  { name: 'integration', cmd: [process.execPath, 'test/harness/run-integration.js', '--timeout', '300'] },
  { name: 'e2e', cmd: [process.execPath, 'test/harness/run-e2e.js', vsix, '--timeout', '180'] },
];

function run(stage) {
  return new Promise(resolve => {
    const child = spawn(stage.cmd[0], stage.cmd.slice(1), { cwd: REPO, stdio: ['ignore', 'pipe', 'pipe'], env: process.env });
    let last = null;
    const scan = chunk => {
      const text = chunk.toString();
      for (const m of text.matchAll(/^(?:\w+: )?(\d+) passed, (\d+) failed/gm)) last = { passed: +m[1], failed: +m[2] };
      return text;
    };
    child.stdout.on('data', c => process.stdout.write(scan(c)));
    child.stderr.on('data', c => process.stderr.write(scan(c)));
    child.on('close', code => resolve({ code, last }));
  });
}

(async () => {
  fs.mkdirSync(path.join(REPO, '.harness'), { recursive: true });
  const t0 = Date.now();
  const summary = [];
  let failedStages = 0;
  for (const stage of stages) {
    if ((only && !only.includes(stage.name)) || skip.includes(stage.name)) continue;
    const started = Date.now();
    console.log(`\n=== ${stage.name} ===`);
    const { code, last } = await run(stage);
    let counts = last;
    if (stage.counts === 'exit' || !counts) counts = code === 0 ? { passed: 1, failed: 0 } : { passed: 0, failed: 1 };
    if (code !== 0 && counts.failed === 0) counts = { ...counts, failed: 1 };
    if (code === 0 && stage.after) { try { stage.after(); } catch (e) { console.log(String(e.message)); counts = { passed: 0, failed: 1 }; } }
    const secs = (Date.now() - started) / 1000;
    if (stage.counts === 'exit' || !last) console.log(`${stage.name}: ${counts.passed} passed, ${counts.failed} failed`);
    console.log(`=== ${stage.name}: ${code === 0 && counts.failed === 0 ? 'ok' : 'FAILED'} in ${secs.toFixed(1)} s ===`);
    summary.push({ stage: stage.name, ...counts, secs, ok: code === 0 && counts.failed === 0 });
    if (code !== 0 || counts.failed > 0) failedStages++;
  }
  console.log('\nstage        passed  failed   seconds');
  for (const s of summary) console.log(`${s.stage.padEnd(12)} ${String(s.passed).padStart(6)}  ${String(s.failed).padStart(6)}  ${s.secs.toFixed(1).padStart(8)}${s.ok ? '' : '  FAILED'}`);
  const passed = summary.reduce((a, s) => a + s.passed, 0);
  const failed = summary.reduce((a, s) => a + s.failed, 0);
  console.log(`total time ${((Date.now() - t0) / 1000).toFixed(1)} s`);
  console.log(`${passed} passed, ${failed} failed`);
  process.exit(failedStages ? 1 : 0);
})();

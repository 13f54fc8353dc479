'use strict';
// Loaded inside the real VS Code extension host through the workbench's extensionTestsPath: runs the bundled
// integration suites (out/test/vscode/*.test.js) with mocha and writes the results where the runner can read them.
const path = require('path');
const fs = require('fs');
const Mocha = require('mocha');

exports.run = function run() {
  const dir = process.env.CURVEWRIGHT_TEST_DIR || path.join(__dirname, '..', '..', 'out', 'test', 'vscode');
  const out = process.env.CURVEWRIGHT_TEST_RESULTS || path.join(dir, 'results.json');
  const mocha = new Mocha({ ui: 'bdd', timeout: 60000, color: false, reporter: 'spec' });
  const files = fs.readdirSync(dir).filter(f => f.endsWith('.test.js')).sort();
  for (const f of files) mocha.addFile(path.join(dir, f));
  const results = { files, passed: [], failed: [], pending: [] };
  return new Promise((resolve, reject) => {
    let runner;
    try {
      runner = mocha.run(failures => {
        fs.writeFileSync(out, JSON.stringify(results, null, 2));
        failures ? reject(new Error(`${failures} integration test(s) failed`)) : resolve();
      });
    } catch (e) {   // a suite that fails to load is a failure, reported like one
      results.failed.push({ title: 'loading the integration suites', err: String((e && e.stack) || e) });
      fs.writeFileSync(out, JSON.stringify(results, null, 2));
      reject(e);
      return;
    }
    runner.on('pass', t => results.passed.push(t.fullTitle()));
    runner.on('pending', t => results.pending.push(t.fullTitle()));
    runner.on('fail', (t, err) => results.failed.push({ title: t.fullTitle(), err: String((err && err.stack) || err) }));
  });
};

'use strict';
// Reads the results file the in-host mocha runner (test/harness/vscode-index.js) writes and prints one line per test.
// Returns { passed, failed } counts, or null when no results file was written.
const fs = require('fs');

function printResults(resultsFile) {
  if (!fs.existsSync(resultsFile)) return null;
  const r = JSON.parse(fs.readFileSync(resultsFile, 'utf8'));
  r.passed.forEach(t => console.log('  ok   ' + t));
  r.pending.forEach(t => console.log('  skip ' + t));
  r.failed.forEach(f => console.log('  FAIL ' + f.title + '\n    ' + f.err.split('\n').slice(0, 8).join('\n    ')));
  return { passed: r.passed.length, failed: r.failed.length };
}

module.exports = { printResults };

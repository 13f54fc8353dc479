'use strict';
// mocha's spec reporter plus the closing line CI reads: "N passed, N failed, N skipped".
const Mocha = require('mocha');
const { Spec } = Mocha.reporters;
class CountingReporter extends Spec {
  constructor(runner, options) {
    super(runner, options);
    runner.once('end', () => {
      const s = runner.stats || {};
      console.log(`${s.passes || 0} passed, ${s.failures || 0} failed, ${s.pending || 0} skipped`);
    });
  }
}
module.exports = CountingReporter;

#!/usr/bin/env node
// Entry of the `curvewright` command line; the bundle is built by `npm install` (prepare) or `npm run build`.
const path = require('path');
const fs = require('fs');
const cli = path.join(__dirname, '..', 'dist', 'cli.js');
if (!fs.existsSync(cli)) {
  console.error('curvewright: the command line is not built yet (dist/cli.js is missing). Run `npm run build` in ' + path.join(__dirname, '..') + ' and try again.');
  process.exit(2);
}
require(cli);

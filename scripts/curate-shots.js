#!/usr/bin/env node
'use strict';
// Copies the UI-test screenshots worth showing into docs/ under stable names (run after the e2e stage:
// node scripts/test-all.js --only build,package,e2e && node scripts/curate-shots.js). Fails when a shot is missing.
const fs = require('fs');
const path = require('path');
const repo = path.resolve(__dirname, '..');
const shots = path.join(repo, 'test', 'e2e', 'shots');
const picks = {
  'panel-light.png': 'themes-light.png',
  'panel-dark.png': 'themes-dark.png',
  'fit-csv-from-explorer.png': 'fit-csv-from-explorer-4-panel.png',
  'context-menu.png': 'fit-csv-from-explorer-1b-context-menu.png',
  'problems-no-convergence.png': 'problems-panel-2-problems.png',
  'live-refit.png': 'edit-and-refit-3-panel-after.png',
  'panel-live-edit.png': 'panel-figure-live-edit.png',
  'panel-broken-last-good.png': 'panel-figure-broken-last-good.png',
  'panel-assay-log-x.png': 'panel-figure-assay-log-x.png',
  'panel-readouts.png': 'panel-figure-readouts.png',
  'panel-narrow-400.png': 'panel-figure-narrow-400.png',
  'panel-theme-light.png': 'panel-figure-theme-light.png',
  'panel-theme-dark.png': 'panel-figure-theme-dark.png',
  'panel-theme-hc-dark.png': 'panel-figure-theme-hc-dark.png',
  'panel-theme-hc-light.png': 'panel-figure-theme-hc-light.png',
};
let missing = 0;
for (const [to, from] of Object.entries(picks)) {
  const src = path.join(shots, from);
  if (!fs.existsSync(src)) { console.error(`missing ${path.relative(repo, src)} — run the e2e stage first`); missing++; continue; }
  fs.copyFileSync(src, path.join(repo, 'docs', to));
  console.log(`docs/${to} <- test/e2e/shots/${from}`);
}
process.exit(missing ? 1 : 0);

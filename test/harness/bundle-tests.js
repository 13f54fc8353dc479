'use strict';
// Bundles the TypeScript suites that run inside VS Code (test/vscode/*.test.ts) and in the browser runner
// (test/e2e/*.e2e.ts) into out/test/, one file each: tests loaded by the extension host cannot be globbed from TS.
const esbuild = require('esbuild');
const fs = require('fs');
const path = require('path');
const { REPO } = require('./code-server');

async function bundle(kind) {
  const srcDir = path.join(REPO, 'test', kind);
  const outDir = path.join(REPO, 'out', 'test', kind);
  fs.rmSync(outDir, { recursive: true, force: true });
  fs.mkdirSync(outDir, { recursive: true });
  const suffix = kind === 'vscode' ? '.test.ts' : '.e2e.ts';
  const entries = fs.existsSync(srcDir) ? fs.readdirSync(srcDir).filter(f => f.endsWith(suffix)).sort() : [];
  await Promise.all(entries.map(f => esbuild.build({
    entryPoints: [path.join(srcDir, f)],
    outfile: path.join(outDir, f.replace(/\.ts$/, '.js')),
    bundle: true, platform: 'node', format: 'cjs', target: 'node20', sourcemap: 'inline', logLevel: 'warning',
    mainFields: ['module', 'main'],   // jsonc-parser's UMD main has requires esbuild cannot follow
    external: ['vscode', 'mocha', 'playwright-core'],
  })));
  return { outDir, files: entries.map(f => f.replace(/\.ts$/, '.js')) };
}

module.exports = { bundle };
if (require.main === module) bundle(process.argv[2] || 'vscode').then(r => console.log(r.files.join('\n'))).catch(e => { console.error(e.message); process.exit(1); });

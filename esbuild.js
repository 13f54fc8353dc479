// Bundles the extension host, the engine worker, the command line, the library (`require('curvewright')`) and the
// webview (browser) code into dist/, and emits the library's type declarations into dist/types (tsconfig.lib.json).
const esbuild = require('esbuild');
const watch = process.argv.includes('--watch');
const common = { bundle: true, sourcemap: true, logLevel: 'warning', minify: false, legalComments: 'none' };
// node bundles prefer a package's ES module build: jsonc-parser's UMD main requires './impl/*' at run time, which a bundle cannot resolve
const node = { ...common, platform: 'node', format: 'cjs', target: 'node20', mainFields: ['module', 'main'] };
const builds = [
  { ...node, entryPoints: ['src/host/extension.ts'], outfile: 'dist/extension.js', external: ['vscode'], metafile: true },
  { ...node, entryPoints: ['src/worker.ts'], outfile: 'dist/worker.js' },
  { ...node, entryPoints: ['src/cli.ts'], outfile: 'dist/cli.js' },
  // the library has no `vscode` on its path: marking it external would hide an import; bundling it would fail loudly
  { ...node, entryPoints: ['src/lib.ts'], outfile: 'dist/lib.js' },
  { ...common, entryPoints: ['webview/main.ts'], outfile: 'dist/webview.js', platform: 'browser', format: 'iife', target: 'es2020' },
];
const fs = require('fs');
(async () => {
  // a missing entry point is an error (a renamed file must not silently drop a bundle from dist/)
  const missing = builds.map(b => b.entryPoints[0]).filter(e => !fs.existsSync(e));
  if (missing.length) throw new Error(`esbuild.js: entry point${missing.length > 1 ? 's' : ''} not found: ${missing.join(', ')} (rename it here too)`);
  if (watch) { for (const b of builds) (await esbuild.context(b)).watch(); return; }
  const results = await Promise.all(builds.map(b => esbuild.build(b)));
  // the host is thin: CSV reading and fitting run in the worker, so no CSV parser may reach dist/extension.js
  const hostInputs = Object.keys(results[0].metafile.inputs);
  const heavy = hostInputs.filter(f => /node_modules[\\/](papaparse|chart\.js)[\\/]/.test(f));
  if (heavy.length) throw new Error(`dist/extension.js must not bundle ${heavy.join(', ')}: import it in the worker, not the host`);
  if (fs.existsSync('tsconfig.lib.json')) {
    fs.rmSync('dist/types', { recursive: true, force: true }); // no declarations of deleted files
    const tsc = require('child_process').spawnSync(process.execPath, [require.resolve('typescript/bin/tsc'), '-p', 'tsconfig.lib.json'], { encoding: 'utf8' });
    if (tsc.status !== 0) throw new Error(`type declarations (tsc -p tsconfig.lib.json) failed:\n${tsc.stdout}${tsc.stderr}`);
  }
})().catch(e => { console.error(e.message || e); process.exit(1); });

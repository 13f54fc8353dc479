// Shared by the webview tests: builds the browser bundle in memory with esbuild's API (same options as esbuild.js)
// and loads the hand-written sample report fixture (its numbers are invented for rendering, not results).
import * as fs from 'fs';
import * as path from 'path';
import type { FitReport } from '../../src/engine/report';

export const repoRoot = path.resolve(__dirname, '..', '..');

let bundle: Promise<string> | null = null;

/** dist/webview.js as a string, built from webview/main.ts (cached for the test run). */
export function webviewBundle(): Promise<string> {
  if (!bundle) {
    // eslint-disable-next-line @typescript-eslint/no-require-imports
    const esbuild = require('esbuild') as typeof import('esbuild');
    bundle = esbuild
      .build({
        entryPoints: [path.join(repoRoot, 'webview', 'main.ts')],
        bundle: true, write: false, platform: 'browser', format: 'iife', target: 'es2020', legalComments: 'none', logLevel: 'silent',
      })
      .then(r => r.outputFiles[0]!.text);
  }
  return bundle;
}

export function panelCss(): string {
  return fs.readFileSync(path.join(repoRoot, 'media', 'panel.css'), 'utf8');
}

/** The invented sample FitReport (test/fixtures/reports/sample.fitreport.json), a fresh copy each call. */
export function sampleReport(): FitReport {
  return JSON.parse(fs.readFileSync(path.join(repoRoot, 'test', 'fixtures', 'reports', 'sample.fitreport.json'), 'utf8')) as FitReport;
}

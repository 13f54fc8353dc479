// Headless Chromium for the browser checks of the webview (playwright-core drives the Debian chromium package).
// Without it the checks are skipped with a loud line, except under CI=true, where a missing browser is a failure.
import * as fs from 'fs';
import type { Browser } from 'playwright-core';

export const CHROMIUM = process.env.CHROMIUM_PATH || '/usr/bin/chromium';
const ARGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking',
  '--disable-component-update', '--disable-sync'];

/** Launch Chromium for a `before` hook, or skip the suite (`what` names the checks that did not run). */
export async function launchChromium(ctx: Mocha.Context, what: string): Promise<Browser> {
  if (!fs.existsSync(CHROMIUM)) {
    const msg = `Chromium not found at ${CHROMIUM} (set CHROMIUM_PATH): ${what} did NOT run.`;
    if (process.env.CI === 'true') throw new Error(msg);
    console.warn(`\n  !!! ${msg}\n`);
    ctx.skip();
  }
  // eslint-disable-next-line @typescript-eslint/no-require-imports
  const { chromium } = require('playwright-core') as typeof import('playwright-core');
  return chromium.launch({ executablePath: CHROMIUM, args: ARGS });
}

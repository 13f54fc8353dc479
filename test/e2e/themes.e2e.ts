// The panel on the demo workspace (a copy of examples/: bioreactor 1's growth curve) in a light and a dark theme. The theme changes live (the workspace
// setting is rewritten), so the panel re-reads its colours from the 'theme' message without being reopened.
import * as fs from 'fs';
import * as path from 'path';
import { open, openFile, panelText, QUIET, type Ctx } from './ui';

export async function run(ctx: Ctx): Promise<void> {
  await open(ctx, { 'workbench.colorTheme': 'Default Light Modern' }, 'examples');
  await ctx.page.locator('.monaco-workbench.vs').waitFor({ timeout: 20000 });
  await openFile(ctx.page, 'growth-reactor1.fitspec.json');
  await ctx.runCommand('Curvewright: Show Fit Panel');
  await panelText(ctx, /logistic/);
  await ctx.webview().locator('canvas').first().scrollIntoViewIfNeeded();
  await ctx.page.waitForTimeout(1000);
  await ctx.shot('light');
  const settings = path.join(ctx.workspace, '.vscode', 'settings.json');
  fs.mkdirSync(path.dirname(settings), { recursive: true });
  fs.writeFileSync(settings, JSON.stringify({ ...QUIET, 'workbench.colorTheme': 'Default Dark Modern' }, null, 2));
  await ctx.page.locator('.monaco-workbench.vs-dark').waitFor({ timeout: 30000 });
  await panelText(ctx, /logistic/);
  await ctx.webview().locator('canvas').first().scrollIntoViewIfNeeded();
  await ctx.page.waitForTimeout(1500);
  await ctx.shot('dark');
}

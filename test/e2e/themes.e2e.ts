// The panel on the demo-like growth fixture in a light and a dark theme (switching theme live re-colours the panel).
import { open, openFile, panelText, type Ctx } from './ui';

export async function run(ctx: Ctx): Promise<void> {
  await open(ctx, { 'workbench.colorTheme': 'Default Light Modern' });
  await openFile(ctx.page, 'growth.fitspec.json');
  await ctx.runCommand('Curvewright: Show Fit Panel');
  await panelText(ctx, /logistic/);
  await ctx.page.waitForTimeout(1000);
  await ctx.shot('light');
  await ctx.runCommand('Preferences: Color Theme');
  const input = ctx.page.locator('.quick-input-widget input');
  await input.fill('Default Dark Modern');
  await ctx.page.locator('.quick-input-list .monaco-list-row', { hasText: 'Default Dark Modern' }).first().waitFor({ timeout: 10000 });
  await ctx.page.keyboard.press('Enter');
  await ctx.page.locator('.monaco-workbench.vs-dark').waitFor({ timeout: 10000 });
  await panelText(ctx, /logistic/);
  await ctx.page.waitForTimeout(1500);
  await ctx.shot('dark');
}

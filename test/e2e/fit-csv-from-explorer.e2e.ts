// Right-click a CSV in the explorer -> "Fit a curve to this CSV…" -> accept the suggested columns and models ->
// the spec opens beside the panel, which shows the plot (a <canvas>) and the parameter table.
import { open, contextMenu, acceptQuickPick, panelText, assertOk, explorerRow, type Ctx } from './ui';

export async function run(ctx: Ctx): Promise<void> {
  await open(ctx);
  await ctx.shot('1-workspace');
  await contextMenu(ctx.page, 'samples.csv', 'Fit a curve to this CSV…', () => ctx.shot('1b-context-menu', { keepMouse: true }));
  await acceptQuickPick(ctx.page, 'column for x');
  await ctx.shot('2-pick-x');
  await acceptQuickPick(ctx.page, 'column for y');
  await acceptQuickPick(ctx.page, 'candidate models');
  await ctx.shot('3-pick-models');
  await explorerRow(ctx.page, 'samples.fitspec.json').waitFor({ timeout: 30000 });
  await ctx.page.locator('.tabs-container .tab[aria-label^="samples.fitspec.json"]').first().waitFor({ timeout: 30000 });
  const text = await panelText(ctx, /substrate_mm|rate/);
  await ctx.page.waitForTimeout(500);
  await ctx.shot('4-panel');
  const canvases = await ctx.webview().locator('canvas').count();
  assertOk(canvases >= 1, 'the panel draws a chart');
  assertOk(/R²|R2/.test(text), `the panel shows R² (text: ${text.slice(0, 300)})`);
  assertOk(/\b(Vmax|Km|slope|intercept)\b/.test(text), `the parameter table lists parameters (text: ${text.slice(0, 300)})`);
}

// A spec whose model cannot converge: the Problems panel lists the non-convergence problem from Curvewright.
import { open, openFile, assertOk, type Ctx } from './ui';

export async function run(ctx: Ctx): Promise<void> {
  await open(ctx);
  await openFile(ctx.page, 'stubborn.fitspec.json');
  await ctx.shot('1-spec');
  await ctx.runCommand('View: Focus Problems');
  const row = ctx.page.locator('.markers-panel .monaco-list-row', { hasText: /converge|iteration/i }).first();
  await row.waitFor({ timeout: 60000 });
  const text = await row.innerText();
  await ctx.shot('2-problems');
  assertOk(/curvewright/i.test(await ctx.page.locator('.markers-panel').innerText()), 'the problem comes from curvewright');
  assertOk(/converge|iteration/i.test(text), `a non-convergence problem is listed (got: ${text})`);
  // the squiggle sits in the spec editor too
  await ctx.page.locator('.editor-instance .squiggly-error, .editor-instance .squiggly-warning').first().waitFor({ timeout: 10000 });
  await ctx.shot('3-squiggle');
}

// Open a spec and its panel, edit the spec in the editor and save: the panel refits and updates in place.
import { open, openFile, panelText, assertOk, type Ctx } from './ui';

export async function run(ctx: Ctx): Promise<void> {
  await open(ctx);
  await openFile(ctx.page, 'growth.fitspec.json');
  await ctx.runCommand('Curvewright: Show Fit Panel');
  const before = await panelText(ctx, /cubic/);
  await ctx.shot('1-panel-before');
  assertOk(/\bc3\b/.test(before), `the cubic's c3 is in the parameter table before the edit (text: ${before.slice(0, 300)})`);
  // line 8 is `    { "name": "cubic", "polynomial": 3 }` — make it a quadratic
  const editor = ctx.page.locator('.editor-instance .monaco-editor').first();
  await editor.click({ position: { x: 200, y: 40 } });
  await ctx.page.keyboard.press('Control+G');
  await ctx.page.keyboard.type('8');
  await ctx.page.keyboard.press('Enter');
  await ctx.page.keyboard.press('End');
  await ctx.page.keyboard.press('ArrowLeft');
  await ctx.page.keyboard.press('ArrowLeft');
  await ctx.page.keyboard.press('Backspace');
  await ctx.page.keyboard.type('2');
  await ctx.page.keyboard.press('Control+S');
  await ctx.shot('2-edited');
  const end = Date.now() + 60000;
  let after = '';
  while (Date.now() < end) {
    after = await panelText(ctx);
    if (/cubic/.test(after) && !/\bc3\b/.test(after)) break;
    await ctx.page.waitForTimeout(300);
  }
  // the CodeLens above the model shows the new figures too
  const lens = ctx.page.locator('.codelens-decoration', { hasText: 'cubic: converged' }).first();
  await lens.waitFor({ timeout: 20000 });
  const lensEnd = Date.now() + 20000;
  let lensText = await lens.innerText();
  while (/R² 0\.9714/.test(lensText) && Date.now() < lensEnd) { await ctx.page.waitForTimeout(300); lensText = await lens.innerText(); }
  await ctx.shot('3-panel-after');
  assertOk(!/R² 0\.9714/.test(lensText), `the CodeLens shows the quadratic's R², not the cubic's (lens: ${lensText})`);
  assertOk(!/\bc3\b/.test(after), `after the edit the panel no longer lists c3 (text: ${after.slice(0, 300)})`);
  assertOk(/\bc2\b/.test(after), 'the quadratic still lists c2');
}

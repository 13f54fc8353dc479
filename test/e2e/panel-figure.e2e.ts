// The panel as a figure on the demo workspace (a copy of examples/): after a live edit the chart is in view without
// scrolling at 1500 × 950; a half-typed column keeps the last good result, dimmed, under the error; the assay
// standard curve on its automatic log axis; the panel at about 400 px; and the four themes. Screenshots go to
// test/e2e/shots/ (scripts/curate-shots.js copies them to docs/).
import * as fs from 'fs';
import * as path from 'path';
import { open, openFile, panelText, assertOk, QUIET, type Ctx } from './ui';

/** Replace line `line` of the active editor with `text`, by keyboard (a live, unsaved edit). */
async function retypeLine(ctx: Ctx, line: number, text: string): Promise<void> {
  const page = ctx.page;
  await page.locator('.editor-instance .monaco-editor').first().click({ position: { x: 300, y: 30 } });
  await page.keyboard.press('Control+G');
  await page.keyboard.type(String(line));
  await page.keyboard.press('Enter');
  await page.keyboard.press('Home');
  await page.keyboard.press('Home');
  await page.keyboard.press('Shift+End');
  await page.keyboard.type(text);
}

/** Wait until the panel's text matches (and, with `not`, no longer matches another pattern). */
async function until(ctx: Ctx, what: RegExp, not?: RegExp, timeoutMs = 60000): Promise<string> {
  const end = Date.now() + timeoutMs;
  let text = '';
  while (Date.now() < end) {
    text = await ctx.webview().locator('body').innerText({ timeout: 5000 }).catch(() => '');
    if (what.test(text) && !(not && not.test(text))) return text;
    await ctx.page.waitForTimeout(300);
  }
  throw new Error(`the panel never showed ${what}${not ? ` without ${not}` : ''}; it shows: ${text.slice(0, 500)}`);
}

async function setTheme(ctx: Ctx, theme: string, cls: string): Promise<void> {
  const settings = path.join(ctx.workspace, '.vscode', 'settings.json');
  fs.mkdirSync(path.dirname(settings), { recursive: true });
  fs.writeFileSync(settings, JSON.stringify({ ...QUIET, 'workbench.colorTheme': theme }, null, 2));
  await ctx.page.locator(`.monaco-workbench.${cls}`).waitFor({ timeout: 30000 });
  await ctx.page.waitForTimeout(1500);
}

export async function run(ctx: Ctx): Promise<void> {
  const page = ctx.page;
  await page.setViewportSize({ width: 1500, height: 950 });
  await open(ctx, { 'workbench.colorTheme': 'Default Light Modern' }, 'examples');
  await openFile(page, 'capacity-fade.fitspec.json');
  await ctx.runCommand('Curvewright: Show Fit Panel');
  await panelText(ctx, /exp-offset/);
  await until(ctx, /extrapolation \u2014 4 models, predictions at 800 and 1000/);

  // a live edit (not saved): the second prediction moves to 900; the chart is in view without scrolling
  await retypeLine(ctx, 17, '  "predict": [800, 900], // beyond the data: flagged as extrapolation');
  await until(ctx, /predictions at 800 and 900/);
  await page.waitForTimeout(800);
  const canvas = (await ctx.webview().locator('.cw-chart-main canvas').boundingBox())!;
  ctx.log?.(`main chart at y ${Math.round(canvas.y)}..${Math.round(canvas.y + canvas.height)} of 950, ${Math.round(canvas.width)} px wide`);
  assertOk(canvas.y > 0 && canvas.y + canvas.height <= 950, `the chart is in view without scrolling (y ${canvas.y}, height ${canvas.height})`);
  await ctx.shot('live-edit');

  // half-typed column: the last good result stays, dimmed, under the error
  await retypeLine(ctx, 9, '    "y": "capacity_a"');
  const broken = await until(ctx, /last result that could/);
  assertOk(/capacity_a/.test(broken) && /Cell RC-07 capacity fade/.test(broken), `the banner names the column and the last good title stays (text: ${broken.slice(0, 400)})`);
  assertOk(await ctx.webview().locator('.cw-report.cw-is-stale canvas').count() >= 1, 'the last good plot is still drawn');
  await page.waitForTimeout(500);
  await ctx.shot('broken-last-good');
  await retypeLine(ctx, 9, '    "y": "capacity_ah"');
  await until(ctx, /exp-offset/, /last result that could/);

  // the assay standard curve: three decades of concentration, on a log x axis without being asked
  await openFile(page, 'assay-standard-curve.fitspec.json');
  await ctx.runCommand('Curvewright: Show Fit Panel');
  await panelText(ctx, /4PL/);
  await until(ctx, /Assay standard curve/);
  const logX = ctx.webview().locator('button.cw-toggle', { hasText: 'log x' });
  await logX.waitFor({ timeout: 20000 });
  assertOk((await logX.getAttribute('aria-pressed')) === 'true', 'log x by default for the assay');
  await page.waitForTimeout(800);
  await ctx.shot('assay-log-x');

  // the plate read-out: unknowns in duplicate with dilutions, spiked controls, limits — the Read-outs card in view
  await openFile(page, 'assay-plate-readout.fitspec.json');
  await ctx.runCommand('Curvewright: Show Fit Panel');
  await until(ctx, /Read-outs/);
  const card = ctx.webview().locator('.cw-readouts');
  await card.scrollIntoViewIfNeeded();
  assertOk((await card.locator('table').count()) >= 3, 'the read-outs card has its unknowns, controls and standards tables');
  await page.waitForTimeout(500);
  await ctx.shot('readouts');
  // back to the standard curve for the themes and the narrow panel
  await openFile(page, 'assay-standard-curve.fitspec.json');
  await ctx.runCommand('Curvewright: Show Fit Panel');
  await until(ctx, /Assay standard curve/);

  // the four themes, live (the workspace setting is rewritten; the panel re-reads its colours)
  for (const [theme, cls, name] of [['Default Dark Modern', 'vs-dark', 'dark'], ['Default High Contrast', 'hc-black', 'hc-dark'], ['Default High Contrast Light', 'hc-light', 'hc-light'], ['Default Light Modern', 'vs', 'light']] as const) {
    await setTheme(ctx, theme, cls);
    await until(ctx, /4PL/);
    const focusRing = await ctx.webview().locator('.cw-chip').first().evaluate(e => { (e as HTMLElement).focus({ focusVisible: true } as FocusOptions); const s = getComputedStyle(e); return `${s.outlineStyle} ${s.outlineWidth}`; });
    ctx.log?.(`${name}: focus ring on a chip: ${focusRing}`);
    await ctx.shot(`theme-${name}`);
  }

  // about 400 px: the panel alone in the window, without the side bar (keyboard focus back in the workbench first:
  // the theme loop left it in the webview, which would swallow the palette's F1)
  await page.locator('.editor-instance .monaco-editor').first().click({ position: { x: 300, y: 30 } });
  await ctx.runCommand('View: Single Column Editor Layout');
  await ctx.runCommand('View: Toggle Primary Side Bar Visibility');
  await ctx.runCommand('Curvewright: Show Fit Panel');
  await page.setViewportSize({ width: 450, height: 950 });
  await page.waitForTimeout(1500);
  const frame = (await page.locator('iframe.webview.ready').boundingBox())!;
  ctx.log?.(`panel width ${Math.round(frame.width)} px`);
  assertOk(frame.width >= 320 && frame.width <= 420, `the panel is about 400 px wide (${frame.width})`);
  const overflow = await ctx.webview().locator('body').evaluate(() => document.documentElement.scrollWidth - window.innerWidth);
  assertOk(overflow <= 0, `nothing but the tables scrolls sideways (${overflow} px)`);
  await ctx.shot('narrow-400');
  await page.setViewportSize({ width: 1500, height: 950 });
}

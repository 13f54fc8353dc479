// Helpers shared by the UI scenarios (bundled into each scenario; not a scenario itself).
import type { FrameLocator, Page } from 'playwright-core';

export interface Ctx {
  page: Page;
  workspace: string;
  /** screenshot into test/e2e/shots/; the mouse is parked first unless keepMouse (e.g. over an open menu) */
  shot(name: string, opts?: { keepMouse?: boolean }): Promise<void>;
  runCommand(label: string): Promise<void | number>;
  webview(): FrameLocator;
  /** opens a fresh copy of the fixture workspace, or of a repository folder such as 'examples' */
  openWorkspace?(settings?: Record<string, unknown>, from?: string): Promise<string>;
  log?(m: string): void;
}

/** Workspace settings every scenario uses: no git prompt over the panel. */
export const QUIET = { 'git.openRepositoryInParentFolders': 'never', 'git.enabled': false };

export async function open(ctx: Ctx, settings?: Record<string, unknown>, from?: string): Promise<void> {
  if (ctx.openWorkspace) ctx.workspace = await ctx.openWorkspace({ ...QUIET, ...settings }, from);
  await ctx.page.locator('.monaco-workbench').waitFor({ timeout: 60000 });
}

export function explorerRow(page: Page, name: string) {
  return page.locator(`.explorer-folders-view .monaco-list-row[aria-label="${name}"]`);
}

/** Open a workspace file in the editor by clicking it in the explorer. */
export async function openFile(page: Page, name: string): Promise<void> {
  const row = explorerRow(page, name);
  await row.waitFor({ timeout: 30000 });
  await row.dblclick();
  await page.locator(`.tabs-container .tab[aria-label^="${name}"]`).first().waitFor({ timeout: 20000 });
  await page.locator('.editor-instance .monaco-editor').first().waitFor({ timeout: 20000 });
}

/** Right-click a file in the explorer and choose a context-menu item (hover + Enter: plain clicks get swallowed). */
export async function contextMenu(page: Page, name: string, item: string, whileOpen?: () => Promise<void>): Promise<void> {
  for (let attempt = 1; ; attempt++) {
    const row = explorerRow(page, name);
    await row.waitFor({ timeout: 30000 });
    await row.click({ button: 'right' });
    const entry = page.locator('.context-view .monaco-menu .action-item', { hasText: item }).first();
    try {
      await entry.waitFor({ timeout: 3000 });
      await entry.hover();
      await page.locator('.context-view .monaco-menu .action-item.focused', { hasText: item }).waitFor({ timeout: 3000 });
      if (whileOpen) await whileOpen();
      await page.keyboard.press('Enter');
      return;
    } catch (e) {
      // the menu item appears once the extension's contributions have registered
      await page.keyboard.press('Escape');
      if (attempt >= 20) throw new Error(`context menu of ${name} never showed '${item}'`);
      await page.waitForTimeout(500);
    }
  }
}

/** Accept the default of the quick pick whose title contains `title`. */
export async function acceptQuickPick(page: Page, title: string): Promise<void> {
  const widget = page.locator('.quick-input-widget');
  await widget.locator('.quick-input-title', { hasText: title }).waitFor({ timeout: 30000 });
  await page.waitForTimeout(200);
  await page.keyboard.press('Enter');
}

/** Wait until the panel's webview has drawn a chart; returns the visible text of the panel. */
export async function panelText(ctx: Ctx, mustContain?: RegExp, timeoutMs = 60000): Promise<string> {
  const wv = ctx.webview();
  await wv.locator('canvas').first().waitFor({ timeout: timeoutMs });
  const end = Date.now() + timeoutMs;
  for (;;) {
    const text = await wv.locator('body').innerText({ timeout: 5000 }).catch(() => '');
    if (!mustContain || mustContain.test(text)) return text;
    if (Date.now() > end) throw new Error(`the panel never showed ${mustContain}; it shows: ${text.slice(0, 400)}`);
    await ctx.page.waitForTimeout(300);
  }
}

export function assertOk(cond: unknown, message: string): asserts cond {
  if (!cond) throw new Error(message);
}

// Fixtures for the end-to-end tests: per Playwright worker, one code-server with the packaged .vsix
// installed (fresh temp folders) and one workbench on a fresh copy of demo/; each test starts with
// no editor open. On failure the extension host log and Hopscope's output channel are attached and
// printed (Playwright adds the screenshot and trace).
import { test as base, expect, type Locator, type Page } from '@playwright/test';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import {
  ROOT, codeServerInstalled, copyDemo, extensionHostLogs, installVsix, makeProfile, startCodeServer,
  workbenchUrl, type CodeServer, type Profile,
} from '../../scripts/code-server.mjs';

export { expect };

export const VSIX = join(ROOT, '.cache/e2e/hopscope.vsix');
export const SHOTS = join(ROOT, '.cache/e2e/shots');
const pkg = JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8')) as { publisher: string; name: string };
export const EXTENSION_ID = `${pkg.publisher}.${pkg.name}`;

interface Server { cs: CodeServer; profile: Profile }
export interface Box { x: number; y: number; width: number; height: number }

/** The editor area of the active editor group. */
function activeEditor(page: Page): Locator {
  return page.locator('.part.editor .editor-group-container.active .monaco-editor').first();
}

export class Workbench {
  constructor(readonly page: Page, readonly folder: string) {}

  /**
   * Runs a command by its title through the command palette. A command that asks for input reuses
   * the same quick-input widget, so it may never hide: with `asks`, wait instead until the widget
   * carries the command's own prompt (its aria-label).
   */
  async runCommand(title: string, asks?: string | RegExp): Promise<void> {
    const page = this.page;
    await page.keyboard.press('F1');
    const input = page.locator('.quick-input-widget .quick-input-box input');
    await input.waitFor({ state: 'visible' });
    await input.fill('>' + title);
    await page.locator('.quick-input-widget .quick-input-list .monaco-list-row', { hasText: title }).first().waitFor();
    await page.keyboard.press('Enter');
    if (asks === undefined) await input.waitFor({ state: 'hidden' });
    else await expect(input).toHaveAttribute('aria-label', asks, { timeout: 30_000 });
  }

  /** Opens a workspace file through Quick Open and waits for its text to show. */
  async openFile(relPath: string): Promise<Locator> {
    const page = this.page;
    await page.keyboard.press('Control+P');
    const input = page.locator('.quick-input-widget .quick-input-box input');
    await input.waitFor({ state: 'visible' });
    await input.fill(relPath);
    const name = relPath.split('/').pop()!;
    await page.locator('.quick-input-widget .quick-input-list .monaco-list-row', { hasText: name }).first().waitFor();
    await page.keyboard.press('Enter');
    await page.locator('.part.editor .tab.active', { hasText: name }).waitFor();
    const editor = activeEditor(page);
    await editor.locator('.view-lines .view-line').first().waitFor();
    return editor;
  }

  /** Moves the cursor to the start of a 1-based line (which scrolls it into view). */
  async goToLine(line: number): Promise<void> {
    const page = this.page;
    await page.keyboard.press('Control+G');
    const input = page.locator('.quick-input-widget .quick-input-box input');
    await input.waitFor({ state: 'visible' });
    await input.fill(`:${line}`);
    await page.keyboard.press('Enter');
    await input.waitFor({ state: 'hidden' });
  }

  /**
   * `top` of a rendered 1-based line of the active editor: line numbers, text and decorations are
   * separate layers whose rows share it. Undefined when the line is not rendered.
   */
  private async lineTop(line: number): Promise<string | undefined> {
    return await activeEditor(this.page).evaluate((ed, n) => [...ed.querySelectorAll<HTMLElement>('.margin-view-overlays > div')]
      .find((d) => d.querySelector('.line-numbers')?.textContent?.trim() === String(n))?.style.top, line);
  }

  /** Text of a rendered line ('' when not rendered), with the editor's non-breaking spaces made plain. */
  async lineText(line: number): Promise<string> {
    const top = await this.lineTop(line);
    if (top === undefined) return '';
    return await activeEditor(this.page).evaluate((ed, t) => {
      const row = [...ed.querySelectorAll<HTMLElement>('.view-lines .view-line')].find((v) => v.style.top === t);
      return (row?.textContent ?? '').replace(/\u00a0/g, ' ');
    }, top);
  }

  /** Screen box of columns [start, end) (1-based) of a rendered line, from the monospace advance. */
  async columnBox(line: number, start: number, end: number): Promise<Box> {
    const top = await this.lineTop(line);
    const box = top === undefined ? null : await activeEditor(this.page).evaluate((ed, t) => {
      const row = [...ed.querySelectorAll<HTMLElement>('.view-lines .view-line')].find((v) => v.style.top === t);
      const span = row?.firstElementChild;
      if (!span) return null;
      const r = span.getBoundingClientRect();
      return { left: r.left, top: r.top, height: r.height, advance: r.width / Math.max((span.textContent ?? '').length, 1) };
    }, top);
    if (!box) throw new Error(`line ${line} is not rendered`);
    return { x: box.left + (start - 1) * box.advance, y: box.top, width: (end - start) * box.advance, height: box.height };
  }

  /** Screen boxes of the squiggles of one severity drawn on a rendered line. */
  async squiggles(line: number, kind: 'error' | 'warning' | 'info'): Promise<Box[]> {
    const top = await this.lineTop(line);
    if (top === undefined) return [];
    return await activeEditor(this.page).evaluate((ed, [t, k]) => [...ed.querySelectorAll<HTMLElement>(`.squiggly-${k}`)]
      .filter((s) => s.parentElement?.style.top === t)
      .map((s) => { const r = s.getBoundingClientRect(); return { x: r.left, y: r.top, width: r.width, height: r.height }; }),
    [top, kind] as const);
  }

  /** Hovers the mouse over a box and returns the hover widget that contains `text`. */
  async hoverAt(box: Box, text: string | RegExp): Promise<Locator> {
    const page = this.page;
    await page.mouse.move(box.x + box.width / 2 + 20, box.y - 30);
    await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2, { steps: 4 });
    const hover = page.locator('.monaco-hover:not(.hidden)', { hasText: text }).first();
    await hover.waitFor({ state: 'visible' });
    return hover;
  }

  /** Saves a screenshot under .cache/e2e/shots/ (a test artifact, never committed). */
  async shot(name: string): Promise<void> {
    mkdirSync(SHOTS, { recursive: true });
    await this.page.screenshot({ path: join(SHOTS, `${name}.png`) });
  }
}

export const test = base.extend<{ workbench: Workbench; failureLogs: void }, { server: Server; sharedWorkbench: Workbench }>({
  server: [async ({}, use) => {
    if (!codeServerInstalled()) throw new Error('code-server is missing: run `bash scripts/e2e-setup.sh` first');
    if (!existsSync(VSIX)) throw new Error(`${VSIX} is missing: run \`npm run package\` first`);
    const baseDir = mkdtempSync(join(tmpdir(), 'hopscope-e2e-'));
    const profile = makeProfile(baseDir);
    installVsix(profile, VSIX);
    const cs = await startCodeServer(profile);
    try {
      await use({ cs, profile });
    } finally {
      await cs.stop();
      rmSync(baseDir, { recursive: true, force: true });
    }
  }, { scope: 'worker', timeout: 90_000 }],

  // One workbench per worker: starting the workbench, the extension host and the language server
  // takes most of a test's time on 2 cores. A failed test ends its worker, so the next test gets a
  // fresh code-server, browser context and copy of demo/.
  sharedWorkbench: [async ({ server, browser }, use) => {
    const folder = copyDemo(join(server.profile.base, 'demo'));
    const context = await browser.newContext({ viewport: { width: 1400, height: 900 } });
    const page = await context.newPage();
    await page.goto(workbenchUrl(server.cs.url, folder));
    await page.locator('.explorer-folders-view .monaco-list-row', { hasText: 'lanes' }).first().waitFor({ timeout: 90_000 });
    const dialog = page.locator('.monaco-dialog-box');
    if (await dialog.isVisible()) await page.keyboard.press('Escape');
    await use(new Workbench(page, folder));
    await context.close();
  }, { scope: 'worker', timeout: 120_000 }],

  // Each test starts with no editor open and the mouse parked.
  workbench: async ({ sharedWorkbench: wb }, use) => {
    await wb.page.keyboard.press('Escape');
    await wb.runCommand('View: Close All Editors');
    await wb.page.mouse.move(1, 1);
    await use(wb);
  },

  failureLogs: [async ({ server }, use, testInfo) => {
    await use();
    if (testInfo.status === testInfo.expectedStatus) return;
    for (const f of [...extensionHostLogs(server.profile), server.profile.log]) {
      if (!existsSync(f)) continue;
      const text = readFileSync(f, 'utf8');
      await testInfo.attach(f.slice(server.profile.base.length + 1).replace(/[\\/]/g, '_'), { body: text, contentType: 'text/plain' });
      const tail = text.split('\n').slice(-60).map((l) => (l.length > 400 ? l.slice(0, 400) + '…' : l));
      console.log(`\n----- ${f} (last 60 lines)\n${tail.join('\n')}`);
    }
  }, { auto: true }],
});

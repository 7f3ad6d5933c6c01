/**
 * The tensor viewer webview (dist/webview/viewer.js) in headless Chromium, inside the page and
 * Content-Security-Policy the extension serves (extension/src/webview-page.ts). A fake host answers
 * with the real GraphService, as extension/src/viewer.ts does through the language server.
 * Expected values come from the demo files (scripts/make-demo.mjs plants a NaN at dock 7,
 * column 1 of lanes/dock_features.npy and an infinite value at dock 31, column 2).
 *
 * Needs /usr/bin/chromium (Debian's chromium package): `npm run test:webview`.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { ORIGIN, servedPage } from './page';
import { chromium, type Browser, type Page } from 'playwright-core';
import { webviewPage } from '../../extension/src/webview-page';
import { GraphStore } from '../../server/src/node/graph-store';
import type { ViewerMessage, ViewerRequest } from '../../common/viewer-messages';
import type { FileSummary } from '../../common/protocol';

const root = path.join(__dirname, '../..');
let browser: Browser;
let tmp: string;

async function openViewer(file: string): Promise<{ page: Page; problems: string[] }> {
  const html = webviewPage({ cspSource: ORIGIN, nonce: 'viewernonce0123', script: `${ORIGIN}/dist/webview/viewer.js`, style: `${ORIGIN}/media/viewer.css`, title: 'Tensor viewer' })
    .replace('<body>', '<body class="vscode-dark">');
  const { page, problems } = await servedPage(browser, html);
  const svc = new GraphStore();
  svc.check({ paths: [path.dirname(file)] });
  await page.exposeFunction('__viewerHost', (m: ViewerRequest): ViewerMessage | null => {
    switch (m.type) {
      case 'ready': {
        const report = svc.report({ path: file })!;
        const summary: FileSummary = { uri: `file://${file}`, status: 'ok', report, size: fs.statSync(file).size };
        return { type: 'summary', summary, fileName: path.basename(file) };
      }
      case 'page': { const page = svc.tensorPage({ path: file, tensor: m.tensor, rowStart: m.rowStart, rowCount: m.rowCount }); return page ? { type: 'page', page } : null; }
      case 'stats': { const stats = svc.tensorStats({ path: file, tensor: m.tensor }); return stats ? { type: 'stats', stats } : null; }
      default: return null;
    }
  });
  await page.addInitScript(() => {
    const w = window as unknown as Record<string, unknown>;
    let saved: unknown;
    w.acquireVsCodeApi = () => ({
      postMessage: (m: unknown) => { void (w.__viewerHost as (m: unknown) => Promise<unknown>)(m).then((r) => { if (r) window.postMessage(r, '*'); }); },
      getState: () => saved,
      setState: (s: unknown) => { saved = s; },
    });
  });
  await page.goto(`${ORIGIN}/index.html`);
  return { page, problems };
}

beforeAll(async () => {
  if (!fs.existsSync(path.join(root, 'dist/webview/viewer.js'))) throw new Error('dist/webview/viewer.js missing: run npm run build');
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-viewer-'));
  fs.cpSync(path.join(root, 'demo'), path.join(tmp, 'demo'), { recursive: true });
  browser = await chromium.launch({
    executablePath: '/usr/bin/chromium', headless: true,
    args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
});
afterAll(async () => {
  await browser?.close();
  if (tmp) fs.rmSync(tmp, { recursive: true, force: true });
});

describe('tensor viewer webview', () => {
  it('shows the tensor table, the problems and the planted NaN, under a strict CSP', async () => {
    const { page, problems } = await openViewer(path.join(tmp, 'demo/lanes/dock_features.npy'));
    await page.locator('#tensor-table').waitFor();
    await expect.poll(() => page.locator('#tensor-table tbody tr').first().innerText()).toMatch(/dock_features\s+float32\s+\[48, 6\]\s+features/);
    await expect.poll(() => page.locator('#problems').innerText()).toMatch(/non-finite-features/);
    // Values grid: row 7, column 1 is the NaN.
    await page.locator('#values-grid .grid-row').first().waitFor();
    await expect.poll(() => page.locator('#values-grid .grid-row').nth(7).innerText()).toMatch(/^7\s+\S+\s+NaN/);
    // Column statistics tab: NaN count in column 1, ±Inf in column 2.
    await page.locator('vscode-tab-header', { hasText: 'Columns' }).click();
    await page.locator('#column-stats table').waitFor();
    const rows = await page.locator('#column-stats tbody tr').allInnerTexts();
    expect(rows[1]!.split(/\t/).slice(-2)).toEqual(['1', '0']);
    expect(rows[2]!.split(/\t/).slice(-2)).toEqual(['0', '1']);
    expect(problems).toEqual([]);
    await page.close();
  });

  it('draws label and degree histograms', async () => {
    const { page, problems } = await openViewer(path.join(tmp, 'demo/depots/y.npy'));
    await page.locator('vscode-tab-header', { hasText: 'Distributions' }).click();
    await page.locator('#charts svg rect.bar').first().waitFor();
    // depots/y.npy holds i % 3 for 12 depots: three classes of four.
    const titles = await page.locator('#charts svg rect.bar title').allTextContents();
    expect(titles).toEqual(['0: 4', '1: 4', '2: 4']);
    expect(problems).toEqual([]);
    await page.close();
  });

  it('file-derived text is shown as text, never parsed as HTML', async () => {
    const dir = path.join(tmp, 'hostile');
    fs.mkdirSync(dir);
    const name = '<img src=x onerror=alert(1)>';
    fs.copyFileSync(path.join(tmp, 'demo/depots/y.npy'), path.join(dir, `${name}.npy`));
    const { page, problems } = await openViewer(path.join(dir, `${name}.npy`));
    await page.locator('#file-title').waitFor();
    expect(await page.locator('#file-title').innerText()).toBe(`${name}.npy`);
    expect(await page.locator('#tensor-table tbody tr td').first().innerText()).toBe(name);
    expect(await page.locator('img').count()).toBe(0);
    expect(problems).toEqual([]);
    await page.close();
  });
});

/**
 * The one harness that serves a webview page to headless Chromium the way VS Code serves it: the
 * page's HTML (with its Content-Security-Policy) at ORIGIN/index.html, the built scripts and styles
 * from the repository under the same origin, every other request refused. Dialogs, page errors,
 * console errors and CSP refusals are collected in `problems` for the tests to assert empty.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import type { Browser, Page } from 'playwright-core';

export const ORIGIN = 'https://hopscope.test';
const root = path.join(__dirname, '../..');

export interface ServeOptions {
  viewport?: { width: number; height: number };
  /** Paths answered 404 as if the file were missing (e.g. the layout worker). */
  missing?: (pathname: string) => boolean;
}

export async function servedPage(browser: Browser, html: string, o: ServeOptions = {}): Promise<{ page: Page; problems: string[] }> {
  const page = await browser.newPage({ viewport: o.viewport ?? { width: 1200, height: 900 } });
  const problems: string[] = [];
  page.on('dialog', (d) => { problems.push(`dialog: ${d.message()}`); void d.dismiss(); });
  page.on('pageerror', (e) => problems.push(`page error: ${e.message}`));
  page.on('console', (m) => { if (m.type() === 'error' || /Refused|Content Security Policy/i.test(m.text())) problems.push(`console: ${m.text()}`); });
  await page.route(`${ORIGIN}/**`, async (route) => {
    const url = new URL(route.request().url());
    if (url.pathname === '/index.html') return route.fulfill({ contentType: 'text/html', body: html });
    if (o.missing?.(url.pathname)) return route.fulfill({ status: 404, body: 'missing' });
    const local = path.join(root, url.pathname);
    if (!local.startsWith(root) || !fs.existsSync(local)) return route.fulfill({ status: 404, body: '' });
    return route.fulfill({ contentType: local.endsWith('.css') ? 'text/css' : 'text/javascript', body: fs.readFileSync(local) });
  });
  await page.route(/^(?!https:\/\/hopscope\.test\/).*/, (route) => route.abort());
  return { page, problems };
}

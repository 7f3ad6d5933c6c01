/**
 * The receptive-field panel (dist/webview/panel.js) for typed graphs, node labels and graphs of a
 * dataset, in headless Chromium inside the page and CSP the extension serves. A fake host answers
 * as extension/src/panel.ts does, with the real graph store (the worker's methods) in place of the
 * language server.
 *
 * Expected values:
 *  - typed: tests/fixtures/typed/clean.npz (authors and papers from a NetworkX bipartite graph,
 *    written by NumPy; make_typed_fixtures.py) — paper 3's 2-hop field has authors [0, 6, 2] and
 *    papers [1, 2, 5] per hop (expected.json, counted by NetworkX);
 *  - ceiling: tests/fixtures/ceiling/karate.npz (Zachary's karate club with its two factions) —
 *    the per-layer ceilings 50%, 64.7%, 100% for L = 0, 1, 2 from the fixture script's own
 *    refinement in Python (expected.json "karate.uniform");
 *  - a graph of a dataset: tests/fixtures/ceiling/csl.npz, circular skip-link graphs of 41 nodes,
 *    4-regular (Murphy et al. 2019): one layer reaches the node and its 4 neighbours.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { ORIGIN, servedPage } from './page';
import { chromium, type Browser, type Page } from 'playwright-core';
import { panelHtml } from '../../extension/src/panel-html';
import { GraphStore } from '../../server/src/node/graph-store';
import { graphKey } from '../../server/src/node/graph-key';
import type { PanelMessage, PanelRequest } from '../../common/panel-messages';
import { typeColour } from '../../webview/src/panel-colours';

const root = path.join(__dirname, '../..');
const fixtures = path.join(root, 'tests/fixtures');
const typedExpected = JSON.parse(fs.readFileSync(path.join(fixtures, 'typed/expected.json'), 'utf8')) as Record<string, { fields: Array<{ layers: number; node: string; perHop: number[]; perHopByType: Record<string, number[]> }>; nodeTypes: Record<string, number> }>;
const ceilingExpected = JSON.parse(fs.readFileSync(path.join(fixtures, 'ceiling/expected.json'), 'utf8')) as { karate: { uniform: Array<{ layers: number; ceiling: number }> } };
let browser: Browser;

async function openPanel(file: string, opts: { node: number; graph?: number; layers?: number }): Promise<{ page: Page; problems: string[] }> {
  const html = panelHtml({
    cspSource: ORIGIN, nonce: 'testnonce0123456789',
    script: `${ORIGIN}/dist/webview/panel.js`, worker: `${ORIGIN}/dist/webview/panel-layout.js`, style: `${ORIGIN}/media/panel.css`,
  }).replace('<body>', '<body class="vscode-dark">');
  const { page, problems } = await servedPage(browser, html);
  const store = new GraphStore();
  const key = graphKey(file, opts.graph);
  await page.exposeFunction('__hopscopeHost', (m: PanelRequest): PanelMessage | null => {
    switch (m.type) {
      case 'ready': return { type: 'init', file: { uri: `file://${file}`, name: path.basename(file), ...(opts.graph !== undefined ? { graph: opts.graph } : {}) }, node: opts.node, maxNodes: 2000 };
      case 'field': {
        const { pair: _pair, ...query } = m.query;
        const r = store.fieldView({ path: key, ...query, maxNodes: 2000 });
        return 'error' in r ? { type: 'error', seq: m.seq, message: r.error } : { type: 'field', seq: m.seq, view: r };
      }
      case 'ceiling': {
        if (opts.graph !== undefined) return { type: 'ceiling', data: null };
        const r = store.ceiling({ path: file, layers: m.layers });
        return { type: 'ceiling', data: 'error' in r ? null : r };
      }
      case 'smoothing': return { type: 'smoothing', data: null };
      default: return null;
    }
  });
  await page.addInitScript((layers) => {
    const w = window as unknown as Record<string, unknown>;
    let saved: unknown = layers !== undefined ? { layers } : undefined;
    w.acquireVsCodeApi = () => ({
      postMessage: (m: unknown) => { void (w.__hopscopeHost as (m: unknown) => Promise<unknown>)(m).then((r) => { if (r) window.postMessage(r, '*'); }); },
      getState: () => saved,
      setState: (s: unknown) => { saved = s; },
    });
  }, opts.layers);
  await page.goto(`${ORIGIN}/index.html`);
  return { page, problems };
}

async function drawn(page: Page): Promise<void> {
  await page.waitForFunction(() => {
    const s = document.getElementById('stage');
    return !!s?.dataset.nodes && !s.classList.contains('busy') && !!s.querySelector('svg circle.node');
  }, undefined, { timeout: 60_000 });
}

beforeAll(async () => {
  if (!fs.existsSync(path.join(root, 'dist/webview/panel.js'))) throw new Error('dist/webview/panel.js missing: run npm run build');
  browser = await chromium.launch({
    executablePath: '/usr/bin/chromium', headless: true,
    args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
});
afterAll(async () => { await browser?.close(); });

describe('panel: typed graphs', () => {
  it('colours nodes by type (not by hop) and shows members per hop and type', async () => {
    const want = typedExpected['clean.npz']!.fields.find((f) => f.node === 'paper:3' && f.layers === 2)!;
    const order = Object.keys(typedExpected['clean.npz']!.nodeTypes);
    // Types-forgotten id of paper 3: the types take the id space in their order.
    const offset = order.slice(0, order.indexOf('paper')).reduce((a, t) => a + typedExpected['clean.npz']!.nodeTypes[t]!, 0);
    const { page, problems } = await openPanel(path.join(fixtures, 'typed/clean.npz'), { node: offset + 3, layers: 2 });
    await drawn(page);
    await expect.poll(() => page.locator('#summary').innerText()).toMatch(/^paper 3 \(node \d+\) hears from/);
    // The colouring offered and chosen: node types.
    expect(await page.locator('#mode-types').isHidden()).toBe(false);
    const table = await page.locator('#type-hops-table').innerText();
    const rows = table.trim().split('\n').slice(1).map((r) => r.split('\t').map((c) => c.trim()));
    const names = (await page.locator('#type-hops-table thead th').allInnerTexts()).slice(1).map((s) => s.trim());
    for (let k = 0; k <= 2; k++) {
      for (const t of ['author', 'paper']) expect(Number(rows[k]![1 + names.indexOf(t)]), `hop ${k} ${t}`).toBe(want.perHopByType[t]![k]);
    }
    // Each drawn node's fill is its type's colour (dark theme), and every author circle has one colour.
    const fills = await page.evaluate(() => [...document.querySelectorAll('#stage svg circle.node')].map((c) => ({ fill: c.getAttribute('fill'), title: c.querySelector('title')?.textContent ?? '' })));
    expect(fills.length).toBeGreaterThan(5);
    const themeHues = await page.evaluate(() => {
      const css = getComputedStyle(document.body);
      return ['--vscode-charts-orange'].map((v) => css.getPropertyValue(v).trim());
    });
    expect(themeHues).toEqual(['']); // a plain page: our own hues
    for (const f of fills) {
      const type = f.title.split(' ')[0]!;
      expect(f.fill, f.title).toBe(typeColour(names.indexOf(type), true));
    }
    const legend = await page.locator('#legend').innerText();
    expect(legend).toMatch(/Colour = node type/);
    // The node box takes TYPE:ID: author 0's 2-hop field (expected.json: [1, 2, 8] per hop).
    const author0 = typedExpected['clean.npz']!.fields.find((f) => f.node === 'author:0' && f.layers === 2)!;
    await page.evaluate(() => {
      const box = document.querySelector('#node-input') as HTMLElement & { value: string };
      box.value = 'author:0';
      box.dispatchEvent(new KeyboardEvent('keydown', { key: 'Enter', bubbles: true, composed: true }));
    });
    await expect.poll(() => page.locator('#summary').innerText()).toMatch(new RegExp(`^author 0 \\(node ${order.slice(0, order.indexOf('author')).reduce((a, t) => a + typedExpected['clean.npz']!.nodeTypes[t]!, 0)}\\) hears from ${author0.perHop.reduce((a, b) => a + b, 0)} nodes`));
    // Switching to hop distance takes the hop ramp again; the type counts stay.
    await page.locator('vscode-radio[value="hops"]').click();
    await expect.poll(() => page.locator('#legend').innerText()).toMatch(/Colour = hops from the centre/);
    expect(problems).toEqual([]);
    await page.close();
  });
});

describe('panel: accuracy ceiling by layers', () => {
  it('draws the karate club ceiling for L = 0..8 and says what the chosen L allows', async () => {
    const { page, problems } = await openPanel(path.join(fixtures, 'ceiling/karate.npz'), { node: 0, layers: 1 });
    await drawn(page);
    await page.locator('#ceiling-chart svg').waitFor();
    const label = await page.locator('#ceiling-chart svg').getAttribute('aria-label');
    const u = ceilingExpected.karate.uniform;
    const pct = (x: number) => `${(100 * x).toFixed(x >= 0.995 || x === 0 ? 0 : 1)}%`;
    expect(label).toContain(`0: ${pct(u[0]!.ceiling)}, 1: ${pct(u[1]!.ceiling)}, 2: ${pct(u[2]!.ceiling)}`);
    expect(label).toContain('8: 100%');
    await expect.poll(() => page.locator('#ceiling-note').innerText()).toMatch(new RegExp(`With 1 layer: at most ${pct(u[1]!.ceiling).replace('.', '\\.')}`));
    expect(await page.locator('#type-hops').isHidden()).toBe(true);
    expect(problems).toEqual([]);
    await page.close();
  });
});

describe('panel: a graph of a dataset', () => {
  it('walks graph 12 of the CSL dataset alone and says which graph it is', async () => {
    const { page, problems } = await openPanel(path.join(fixtures, 'ceiling/csl.npz'), { node: 5, graph: 12, layers: 1 });
    await drawn(page);
    await expect.poll(() => page.locator('#summary').innerText()).toMatch(/^Node 5 \(graph 12 of 150\) hears from 5 nodes/);
    expect(await page.locator('#file-name').innerText()).toBe('csl.npz · graph 12');
    expect(await page.locator('#stage').getAttribute('data-nodes')).toBe('5');
    expect(await page.locator('#ceiling-chart').isHidden()).toBe(true);
    expect(problems).toEqual([]);
    await page.close();
  });
});

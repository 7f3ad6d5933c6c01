/**
 * The viewer's table of graphs (webview/src/viewer-graphs.ts) and typed-graph tables
 * (viewer-typed.ts) in headless Chromium, inside the page and Content-Security-Policy the extension
 * serves (extension/src/webview-page.ts). A fake host answers the page as extension/src/viewer.ts
 * does: a summary whose report carries `dataset` / `typed`, and a table of graphs packed as
 * columns (common/columns.ts).
 *
 * The 100,000-graph table is synthetic, its values a formula of the graph index, so every expected
 * row below is computed here from that formula independently of the page's sort. Timings (render,
 * sort, scroll frames) are printed as figures, never asserted.
 *
 * Needs /usr/bin/chromium (Debian's chromium package): `npm run test:webview`.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { ORIGIN, servedPage } from './page';
import { chromium, type Browser, type Page } from 'playwright-core';
import { webviewPage } from '../../extension/src/webview-page';
import { packColumn } from '../../common/columns';
import type { ViewerMessage, ViewerRequest } from '../../common/viewer-messages';
import type { DatasetTable, FileSummary } from '../../common/protocol';
import type { FileReport } from '../../common/report';
import type { CeilingResult } from '../../common/ceiling';

const root = path.join(__dirname, '../..');
const XSS = '<img src=x onerror=alert(1)>';
let browser: Browser;

const G = 100_000;
const nodesOf = (g: number) => 10 + ((g * 7919) % 31);
const edgesOf = (g: number) => 2 * nodesOf(g) + (g % 5);
const classOf = (g: number) => g % 3;
const splitOf = (g: number) => (g % 10 < 8 ? 1 : g % 10 === 8 ? 2 : 3);
const problemsOf = (g: number) => (g % 997 === 0 ? 1 + (g % 3) : 0);

function bigTable(): DatasetTable {
  const nodes = new Int32Array(G), edges = new Int32Array(G), codes = new Int32Array(G), split = new Int32Array(G), problems = new Int32Array(G);
  for (let g = 0; g < G; g++) { nodes[g] = nodesOf(g); edges[g] = edgesOf(g); codes[g] = classOf(g); split[g] = splitOf(g); problems[g] = problemsOf(g); }
  return {
    file: '/ws/rides.pt', graphs: G, layout: 'slices',
    nodes: packColumn(nodes), edges: packColumn(edges), problems: packColumn(problems),
    label: { kind: 'class', classes: ['calm', 'busy', XSS], codes: packColumn(codes) },
    split: packColumn(split),
    problemCodes: [{ code: 'isomorphic-label-conflict', graphs: 101 }],
  };
}

function report(extra: Partial<FileReport>): FileReport {
  return { path: '/ws/rides.pt', format: 'pt', tensors: [], graph: null, problems: [], ...extra };
}

async function openViewer(summaryReport: FileReport, table: DatasetTable | null, ceiling: CeilingResult | null = null): Promise<{ page: Page; problems: string[]; posted: ViewerRequest[] }> {
  const posted: ViewerRequest[] = [];
  const html = webviewPage({ cspSource: ORIGIN, nonce: 'viewernonce0123', script: `${ORIGIN}/dist/webview/viewer.js`, style: `${ORIGIN}/media/viewer.css`, title: 'Tensor viewer' })
    .replace('<body>', '<body class="vscode-dark">');
  const { page, problems } = await servedPage(browser, html);
  await page.exposeFunction('__viewerHost', (m: ViewerRequest): ViewerMessage | null => {
    posted.push(m);
    switch (m.type) {
      case 'ready': {
        const summary: FileSummary = { uri: 'file:///ws/rides.pt', status: 'ok', report: summaryReport, size: 1234 };
        return { type: 'summary', summary, fileName: 'rides.pt' };
      }
      case 'datasetTable': return { type: 'datasetTable', table };
      case 'ceiling': return { type: 'ceiling', data: ceiling };
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
  return { page, problems, posted };
}

/** The visible rows' cells (text per cell), top to bottom. */
async function visibleRows(page: Page): Promise<string[][]> {
  return page.evaluate(() => {
    const sc = document.getElementById('graph-scroll')!;
    const box = sc.getBoundingClientRect();
    return [...sc.querySelectorAll<HTMLElement>('.graph-rows .graph-row')]
      .filter((r) => !r.hidden)
      .filter((r) => { const b = r.getBoundingClientRect(); return b.top >= box.top - 1 && b.bottom <= box.bottom + 1; })
      .sort((a, b) => a.getBoundingClientRect().top - b.getBoundingClientRect().top)
      .map((r) => [...r.children].map((c) => c.textContent ?? ''));
  });
}

const expectedRow = (g: number) => [String(g), String(nodesOf(g)), String(edgesOf(g)), ['calm', 'busy', XSS][classOf(g)]!, ['', 'train', 'val', 'test'][splitOf(g)]!, problemsOf(g) ? String(problemsOf(g)) : ''];

beforeAll(async () => {
  if (!fs.existsSync(path.join(root, 'dist/webview/viewer.js'))) throw new Error('dist/webview/viewer.js missing: run npm run build');
  browser = await chromium.launch({
    executablePath: '/usr/bin/chromium', headless: true,
    args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
});
afterAll(async () => { await browser?.close(); });

const datasetSummary = {
  graphs: G, nodes: { min: 10, max: 40, mean: 25, total: 2_500_000 }, edges: { min: 20, max: 84, mean: 52, total: 5_200_000 },
  graphLabels: { classes: ['calm', 'busy', XSS], counts: [33334, 33333, 33333] }, splits: { train: 80000, val: 10000, test: 10000 },
};

describe('viewer: table of graphs', () => {
  it('shows 100,000 graphs with only the visible rows in the page; sorts, scrolls and opens a graph', async () => {
    const table = bigTable();
    const { page, problems, posted } = await openViewer(report({ dataset: datasetSummary }), table);
    await page.locator('#graph-scroll .graph-rows .graph-row').first().waitFor();
    await expect.poll(() => page.locator('#dataset-facts').innerText()).toMatch(/100,000\s+graphs/);
    // First rows in index order, as the formula gives them.
    const first = await visibleRows(page);
    expect(first.length).toBeGreaterThan(5);
    first.forEach((cells, i) => expect(cells).toEqual(expectedRow(i)));
    // Virtualised: a pool of a few dozen row elements, not 100,000.
    const pool = await page.locator('#graph-scroll .graph-rows .graph-row').count();
    expect(pool).toBeLessThan(120);
    // The label class names from the file are text: no element was made from them.
    expect(await page.locator('img').count()).toBe(0);

    // Figures: rendering the whole table again from its message (unpack + first draw).
    const renderMs = await page.evaluate(async (msg) => {
      const t0 = performance.now();
      window.postMessage(msg, '*');
      await new Promise<void>((resolve) => {
        const seen = (document.querySelector('#graph-scroll') as HTMLElement | null);
        const check = () => {
          const now = document.querySelector('#graph-scroll');
          if (now && now !== seen && now.querySelector('.graph-row:not([hidden])')) resolve(); else requestAnimationFrame(check);
        };
        requestAnimationFrame(check);
      });
      return performance.now() - t0;
    }, { type: 'datasetTable', table } as ViewerMessage);

    // Sort by nodes (descending on first click): largest graphs first, ties by index.
    const sortMs = await page.evaluate(() => {
      const b = document.querySelector<HTMLButtonElement>('.graph-head [data-key="nodes"]')!;
      const t0 = performance.now();
      b.click();
      return performance.now() - t0;
    });
    const byNodes = [...Array(G).keys()].sort((a, b) => nodesOf(b) - nodesOf(a) || a - b);
    let rows = await visibleRows(page);
    rows.forEach((cells, i) => expect(cells).toEqual(expectedRow(byNodes[i]!)));
    expect(await page.locator('.graph-head [data-key="nodes"]').getAttribute('aria-sort')).toBe('descending');
    // Again: ascending.
    const sortAscMs = await page.evaluate(() => {
      const b = document.querySelector<HTMLButtonElement>('.graph-head [data-key="nodes"]')!;
      const t0 = performance.now(); b.click(); return performance.now() - t0;
    });
    const byNodesAsc = [...Array(G).keys()].sort((a, b) => nodesOf(a) - nodesOf(b) || a - b);
    rows = await visibleRows(page);
    rows.forEach((cells, i) => expect(cells).toEqual(expectedRow(byNodesAsc[i]!)));
    // Sort by label: class codes in the order of the classes, ties by index.
    await page.locator('.graph-head [data-key="label"]').click();
    rows = await visibleRows(page);
    expect(rows[0]).toEqual(expectedRow(0));
    expect(rows[1]).toEqual(expectedRow(3));
    // Problems, descending: graphs with problems first (g % 997 == 0, most problems first).
    await page.locator('.graph-head [data-key="problems"]').click();
    const byProblems = [...Array(G).keys()].sort((a, b) => problemsOf(b) - problemsOf(a) || a - b);
    rows = await visibleRows(page);
    rows.forEach((cells, i) => expect(cells).toEqual(expectedRow(byProblems[i]!)));

    // Back to index order, then scroll through the whole table in frames of 400 rows.
    await page.locator('.graph-head [data-key="index"]').click();
    const scroll = await page.evaluate(async () => {
      const sc = document.getElementById('graph-scroll')!;
      const frames: number[] = [];
      const step = 400 * 24;
      let last = performance.now();
      for (let y = 0; y <= sc.scrollHeight; y += step) {
        sc.scrollTop = y;
        await new Promise((r) => requestAnimationFrame(() => r(null)));
        const now = performance.now();
        frames.push(now - last);
        last = now;
      }
      frames.sort((a, b) => a - b);
      return { frames: frames.length, median: frames[Math.floor(frames.length / 2)]!, p95: frames[Math.floor(frames.length * 0.95)]!, max: frames[frames.length - 1]! };
    });
    // Jump to the middle: the rows shown are those at that offset.
    await page.evaluate(() => { const sc = document.getElementById('graph-scroll')!; sc.scrollTop = 50_000 * 24; });
    await expect.poll(async () => (await visibleRows(page))[0]?.[0]).toBe('50000');
    rows = await visibleRows(page);
    rows.forEach((cells, i) => expect(cells).toEqual(expectedRow(50_000 + i)));

    // Choosing a graph: click selects it, the button opens it in the receptive-field panel.
    await page.locator('#graph-scroll .graph-row[data-graph="50002"]').click();
    await expect.poll(() => page.locator('#graph-chosen').innerText()).toBe(`Graph 50002: ${nodesOf(50002)} nodes, ${edgesOf(50002)} edge entries, label ${['calm', 'busy', XSS][classOf(50002)]}.`);
    await page.locator('#open-graph').click();
    await expect.poll(() => posted.filter((m) => m.type === 'openGraph')).toEqual([{ type: 'openGraph', graph: 50002 }]);
    // Keyboard: ArrowDown moves to the next graph, Enter opens it.
    await page.locator('#graph-scroll').focus();
    await page.keyboard.press('ArrowDown');
    await page.keyboard.press('Enter');
    await expect.poll(() => posted.filter((m) => m.type === 'openGraph').at(-1)).toEqual({ type: 'openGraph', graph: 50003 });
    expect(problems).toEqual([]);
    console.log(`[figures] table of ${G.toLocaleString('en-US')} graphs: render ${renderMs.toFixed(1)} ms (unpack + first draw), ` +
      `sort by nodes ${sortMs.toFixed(1)} ms desc / ${sortAscMs.toFixed(1)} ms asc, scroll ${scroll.frames} frames of 400 rows: ` +
      `median ${scroll.median.toFixed(1)} ms, p95 ${scroll.p95.toFixed(1)} ms, max ${scroll.max.toFixed(1)} ms; ${pool} row elements`);
    await page.close();
  });

  it('numeric targets sort with missing values last; no table says why', async () => {
    const values = new Float64Array([0.5, NaN, -2, 3.25, 0.5]);
    const small: DatasetTable = {
      file: '/ws/r.pt', graphs: 5, layout: 'ptr', nodes: packColumn(new Int32Array([3, 4, 5, 6, 7])), edges: packColumn(new Int32Array([2, 2, 2, 2, 2])),
      problems: packColumn(new Int32Array(5)), label: { kind: 'value', values: packColumn(values) }, split: null, problemCodes: [],
    };
    const ds = { ...datasetSummary, graphs: 5, graphLabels: null, splits: null };
    const { page, problems } = await openViewer(report({ dataset: ds }), small);
    await page.locator('#graph-scroll .graph-rows .graph-row').first().waitFor();
    await page.locator('.graph-head [data-key="label"]').click();
    const order = (await visibleRows(page)).map((r) => r[0]);
    expect(order).toEqual(['2', '0', '4', '3', '1']);
    await page.close();
    const none = await openViewer(report({ dataset: ds }), null);
    await expect.poll(() => none.page.locator('#graph-table-status').innerText()).toMatch(/No table of graphs/);
    expect([...problems, ...none.problems]).toEqual([]);
    await none.page.close();
  });
});

describe('viewer: the dataset\'s accuracy ceiling', () => {
  it('states the ceiling and links each graph of a conflicting group to its row', async () => {
    const small: DatasetTable = {
      file: '/ws/r.pt', graphs: 6, layout: 'batch', nodes: packColumn(new Int32Array([3, 4, 3, 4, 3, 5])), edges: packColumn(new Int32Array([6, 8, 6, 8, 6, 10])),
      problems: packColumn(new Int32Array(6)), label: { kind: 'class', classes: ['0', '1'], codes: packColumn(new Int32Array([0, 1, 1, 0, 0, 1])) }, split: null, problemCodes: [],
    };
    // A result as the ceiling worker gives it: graphs 0, 2, 4 look alike to 1-WL with labels 0, 1, 0.
    const ceiling: CeilingResult = {
      task: 'graph', graphs: 6, labelled: 6, labelKind: 'classes', start: 'uniform', groupCount: 4, conflictingGroups: 1, ceiling: 5 / 6, rounds: 2,
      groups: [{ size: 3, labels: { 0: 2, 1: 1 }, graphs: [0, 2, 4] }, { size: 1, labels: { 1: 1 }, graphs: [1] }],
    };
    const ds = { ...datasetSummary, graphs: 6, graphLabels: { classes: ['0', '1'], counts: [3, 3] }, splits: null };
    const { page, problems, posted } = await openViewer(report({ dataset: ds }), small, ceiling);
    await page.locator('#dataset-ceiling b').waitFor();
    expect(await page.locator('#dataset-ceiling p').first().innerText()).toBe('Accuracy ceiling 83.3%: no message-passing model without extra node features can classify more of the 6 labelled graphs correctly — 1 group of graphs 1-WL cannot tell apart carry different labels.');
    expect(await page.locator('.ceiling-groups li').allInnerTexts()).toEqual(['3 graphs (0: 2, 1: 1): 0, 2, 4']);
    expect(posted.filter((m) => m.type === 'ceiling')).toHaveLength(1);
    await page.locator('.graph-link[data-graph="4"]').click();
    await expect.poll(() => page.locator('#graph-chosen').innerText()).toMatch(/^Graph 4: 3 nodes, 6 edge entries, label 0\.$/);
    expect(await page.locator('#graph-scroll .graph-row.selected').getAttribute('data-graph')).toBe('4');
    expect(problems).toEqual([]);
    await page.close();
  });
});

describe('viewer: typed graphs', () => {
  it('lists node types and relations with their problems before the tensors, names as text', async () => {
    const typed = {
      nodeTypes: { dock: 48, rider: 120, [XSS]: 2 },
      relations: [
        { source: 'rider', name: 'rides_from', target: 'dock', edges: 300 },
        { source: 'dock', name: 'served_by', target: 'rider', edges: 300 },
        { source: 'dock', name: 'next_to', target: 'dock', edges: 96 },
      ],
    };
    const r = report({
      typed,
      tensors: [{ name: 'rider__rides_from__dock', dtype: 'int64', shape: [2, 300], role: 'edge-index', min: 0, max: 130, sum: 1, nonFinite: 0 }],
      problems: [
        { code: 'index-out-of-range', severity: 'error', message: 'row 1 of rider__rides_from__dock has 1 id ≥ 48 docks', count: 1, relation: 'rider__rides_from__dock' },
        { code: 'type-never-receives', severity: 'warning', message: 'no relation ends at the type', count: 2, nodeType: XSS },
      ],
    });
    const { page, problems } = await openViewer(r, null);
    await page.locator('#relation-table').waitFor();
    const types = await page.locator('#node-type-table tbody tr').allInnerTexts();
    expect(types.map((t) => t.split('\t'))).toEqual([
      ['dock', '48', '2', '2', '—'],
      ['rider', '120', '1', '1', '—'],
      [XSS, '2', '0', '0', 'type-never-receives'],
    ]);
    const rels = await page.locator('#relation-table tbody tr').allInnerTexts();
    expect(rels.map((t) => t.split('\t'))).toEqual([
      ['rider', 'rides_from', 'dock', '300', 'index-out-of-range'],
      ['dock', 'served_by', 'rider', '300', '—'],
      ['dock', 'next_to', 'dock', '96', '—'],
    ]);
    // Before the tensors.
    const order = await page.evaluate(() => {
      const a = document.getElementById('typed-tables')!, b = document.getElementById('tensor-table')!;
      return Boolean(a.compareDocumentPosition(b) & Node.DOCUMENT_POSITION_FOLLOWING);
    });
    expect(order).toBe(true);
    expect(await page.locator('img').count()).toBe(0);
    expect(problems).toEqual([]);
    await page.close();
  });
});

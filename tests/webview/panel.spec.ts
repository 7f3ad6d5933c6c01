/**
 * The receptive-field panel webview (dist/webview/panel.js) in headless Chromium, inside the very
 * page and Content-Security-Policy the extension serves (extension/src/panel-html.ts). A fake host
 * in this process answers the page's requests with the real AnalysisService, as the extension and
 * the language server would. Expected numbers: karate club field sizes 1, 17, 26 for node 0 and
 * 34 at three layers (docs/references.md §2.1); the 1-WL partition from NetworkX
 * (tests/fixtures/structure/expected.json); the single karate bridge (0, 11) (docs/references.md §6).
 * Framing is checked on the rendered page itself (getBoundingClientRect of every node circle and
 * ring label against the stage's client rectangle); the palette's OKLCH conversion against
 * Chromium's own oklch() colour conversion (CSS Color Module Level 4).
 *
 * Needs /usr/bin/chromium (Debian's chromium package): `npm run test:webview`.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { ORIGIN, servedPage } from './page';
import { chromium, type Browser, type Page } from 'playwright-core';
import { panelHtml } from '../../extension/src/panel-html';
import { AnalysisService } from '../../server/src/node/analysis-service';
import type { PanelMessage, PanelRequest, PanelState } from '../../common/panel-messages';
import { expected as structureExpected } from '../unit/structure-fixtures';
import { groupColour, hopColour, oklab, oklchHex, pairEdgeColour } from '../../webview/src/panel-colours';

const root = path.join(__dirname, '../..');
const KARATE = path.join(root, 'tests/fixtures/graphs/karate.npy');
const XSS = '<img src=x onerror=alert(1)>';
const LANES = path.join(root, 'demo/lanes/lanes.csv');

let browser: Browser;
let tmp: string;

/** A 2 x E little-endian int64 .npy (NEP 1 layout, header padded to 64 bytes). */
function writeEdgeIndex(file: string, src: number[], dst: number[]): void {
  const e = src.length;
  let header = `{'descr': '<i8', 'fortran_order': False, 'shape': (2, ${e}), }`;
  const total = 10 + header.length + 1;
  header += ' '.repeat((64 - (total % 64)) % 64) + '\n';
  const head = Buffer.alloc(10);
  Buffer.from('\x93NUMPY', 'latin1').copy(head);
  head[6] = 1; head[7] = 0;
  head.writeUInt16LE(header.length, 8);
  const data = Buffer.alloc(16 * e);
  [...src, ...dst].forEach((x, i) => data.writeBigInt64LE(BigInt(x), 8 * i));
  fs.writeFileSync(file, Buffer.concat([head, Buffer.from(header, 'latin1'), data]));
}

/** A star: centre 0 and `leaves` leaves, stored both ways. */
function star(leaves: number): string {
  const file = path.join(tmp, `star${leaves}`, 'edge_index.npy');
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const src: number[] = [], dst: number[] = [];
  for (let i = 1; i <= leaves; i++) { src.push(0, i); dst.push(i, 0); }
  writeEdgeIndex(file, src, dst);
  return file;
}

interface HostOptions {
  file: string;
  name?: string;
  node?: number;
  maxNodes?: number;
  /** Label per node id, put into field payloads as if read from a label tensor. */
  labels?: Record<number, string>;
  state?: PanelState;
  /** Serve the layout worker script as missing (the page then lays out in chunks itself). */
  noWorker?: boolean;
  bodyClass?: string;
  cssVars?: Record<string, string>;
  /** Page size; 1200 x 900 unless given. */
  viewport?: { width: number; height: number };
}

interface Opened {
  page: Page;
  posted: () => Promise<PanelRequest[]>;
  state: () => Promise<PanelState | undefined>;
  problems: string[];
}

async function openPanel(o: HostOptions): Promise<Opened> {
  const svc = new AnalysisService();
  const nonce = 'testnonce0123456789';
  const html = panelHtml({
    cspSource: ORIGIN, nonce,
    script: `${ORIGIN}/dist/webview/panel.js`, worker: `${ORIGIN}/dist/webview/panel-layout.js`, style: `${ORIGIN}/media/panel.css`,
  }).replace('<body>', `<body class="${o.bodyClass ?? 'vscode-light'}">`);
  const { page, problems } = await servedPage(browser, html, { ...(o.viewport ? { viewport: o.viewport } : {}), ...(o.noWorker ? { missing: (p: string) => p.endsWith('panel-layout.js') } : {}) });

  // The fake host: what extension/src/panel.ts does, with the analysis service in place of the server.
  await page.exposeFunction('__hopscopeHost', (m: PanelRequest): PanelMessage | null => {
    const err = (r: { error: string }, seq?: number): PanelMessage => ({ type: 'error', ...(seq !== undefined ? { seq } : {}), message: r.error });
    switch (m.type) {
      case 'ready': return { type: 'init', file: { uri: `file://${o.file}`, name: o.name ?? path.basename(o.file) }, ...(o.node !== undefined ? { node: o.node } : {}), maxNodes: o.maxNodes ?? 2000 };
      case 'field': {
        const { pair, ...query } = m.query;
        if (pair !== undefined) {
          const { node, ...options } = query;
          const r = svc.pairField(o.file, { ...options, u: node, v: pair, maxNodes: o.maxNodes ?? 2000 });
          return 'error' in r ? err(r, m.seq) : { type: 'pair', seq: m.seq, data: r };
        }
        const r = svc.field(o.file, { ...query, maxNodes: o.maxNodes ?? 2000 });
        if ('error' in r) return err(r, m.seq);
        if (o.labels) r.labels = r.ids.map((id) => o.labels![id] ?? null);
        return { type: 'field', seq: m.seq, view: r };
      }
      case 'wl': { const r = svc.wlClasses(o.file, m.nodes); return 'error' in r ? err(r, m.seq) : { type: 'wl', seq: m.seq, data: r }; }
      case 'bottlenecks': { const r = svc.bottlenecks(o.file, m.edges); return 'error' in r ? err(r, m.seq) : { type: 'bottlenecks', seq: m.seq, data: r }; }
      case 'smoothing': { const r = svc.smoothing(o.file, 8); return r && 'error' in r ? err(r) : { type: 'smoothing', data: r }; }
      default: return null;
    }
  });
  await page.addInitScript(({ state, cssVars }) => {
    const w = window as unknown as Record<string, unknown>;
    const posted: unknown[] = [];
    let saved = state as unknown;
    w.__posted = posted;
    w.__state = () => saved;
    w.acquireVsCodeApi = () => ({
      postMessage: (m: { type: string; bytes?: Uint8Array }) => {
        // Keep only the head and size of image bytes; exports never go to the host stub.
        if (m.type === 'exportPng') { posted.push({ ...m, bytes: Array.from(m.bytes!.subarray(0, 8)), size: m.bytes!.length }); return; }
        posted.push(m);
        if (m.type === 'exportSvg') return;
        void (w.__hopscopeHost as (m: unknown) => Promise<unknown>)(m).then((reply) => { if (reply) window.postMessage(reply, '*'); });
      },
      getState: () => saved,
      setState: (s: unknown) => { saved = s; },
    });
    // VS Code writes the theme variables on <html style>; doing it once the page runs also
    // exercises the panel's theme-change path.
    if (cssVars) document.addEventListener('DOMContentLoaded', () => { for (const [k, v] of Object.entries(cssVars)) document.documentElement.style.setProperty(k, v); });
  }, { state: o.state, cssVars: o.cssVars });
  await page.goto(`${ORIGIN}/index.html`);
  return {
    page, problems,
    posted: () => page.evaluate(() => (window as unknown as { __posted: PanelRequest[] }).__posted),
    state: () => page.evaluate(() => (window as unknown as { __state: () => PanelState | undefined }).__state()),
  };
}

const circles = (page: Page) => page.locator('#stage svg circle.node');
async function drawn(page: Page, renderer: 'svg' | 'canvas', nodes: number): Promise<void> {
  await page.waitForFunction(([r, n]) => {
    const s = document.getElementById('stage');
    return s?.dataset.renderer === r && s.dataset.nodes === String(n) && !s.classList.contains('busy');
  }, [renderer, nodes] as const, { timeout: 60_000 });
}
/** Waits until the stage shows a finished drawing of some field. */
async function settled(page: Page): Promise<void> {
  await page.waitForFunction(() => {
    const s = document.getElementById('stage');
    return !!s?.dataset.nodes && !s.classList.contains('busy') && !!s.querySelector('svg circle.node');
  }, null, { timeout: 60_000 });
}

interface Framing {
  /** The stage's visible rectangle (inside its border). */
  stage: { left: number; top: number; right: number; bottom: number };
  circles: Array<{ x: number; y: number; r: number }>;
  ringLabels: Array<{ left: number; top: number; right: number; bottom: number; text: string }>;
  /** Union of everything drawn but the ring circles: nodes, node labels, ring labels. */
  drawn: { left: number; top: number; right: number; bottom: number };
  transform: string;
}
async function framing(page: Page): Promise<Framing> {
  return page.evaluate(() => {
    const st = document.getElementById('stage')!;
    const sr = st.getBoundingClientRect();
    const stage = { left: sr.left + st.clientLeft, top: sr.top + st.clientTop, right: sr.left + st.clientLeft + st.clientWidth, bottom: sr.top + st.clientTop + st.clientHeight };
    const circles = [...st.querySelectorAll('svg circle.node')].map((c) => { const r = c.getBoundingClientRect(); return { x: r.left + r.width / 2, y: r.top + r.height / 2, r: r.width / 2 }; });
    const box = (e: Element) => { const r = e.getBoundingClientRect(); return { left: r.left, top: r.top, right: r.right, bottom: r.bottom }; };
    const ringLabels = [...st.querySelectorAll('svg text.ring-label')].map((t) => ({ ...box(t), text: t.textContent! }));
    const all = [...st.querySelectorAll('svg circle.node, svg g.labels text, svg text.ring-label')].map(box);
    const drawn = { left: Math.min(...all.map((b) => b.left)), top: Math.min(...all.map((b) => b.top)), right: Math.max(...all.map((b) => b.right)), bottom: Math.max(...all.map((b) => b.bottom)) };
    return { stage, circles, ringLabels, drawn, transform: st.querySelector('svg g.viewport')!.getAttribute('transform')! };
  });
}
/** Every node circle inside the stage; no ring label on a node; the drawing fills and is centred. */
function expectFramed(f: Framing): void {
  expect(f.circles.length).toBeGreaterThan(0);
  for (const c of f.circles) {
    expect(c.x - c.r).toBeGreaterThanOrEqual(f.stage.left);
    expect(c.x + c.r).toBeLessThanOrEqual(f.stage.right);
    expect(c.y - c.r).toBeGreaterThanOrEqual(f.stage.top);
    expect(c.y + c.r).toBeLessThanOrEqual(f.stage.bottom);
  }
  for (const l of f.ringLabels) {
    for (const c of f.circles) {
      // Distance from the circle's centre to the label's box exceeds the radius: no overlap.
      const dx = Math.max(l.left - c.x, 0, c.x - l.right), dy = Math.max(l.top - c.y, 0, c.y - l.bottom);
      expect(Math.hypot(dx, dy), `${l.text} overlaps a node`).toBeGreaterThan(c.r);
    }
  }
  const sw = f.stage.right - f.stage.left, sh = f.stage.bottom - f.stage.top;
  const dw = f.drawn.right - f.drawn.left, dh = f.drawn.bottom - f.drawn.top;
  // Fills the stage in the tighter direction (16 px margins, label widths are estimated) ...
  expect(Math.max(dw / sw, dh / sh)).toBeGreaterThan(0.85);
  // ... and sits in its middle.
  expect(Math.abs((f.drawn.left + f.drawn.right) / 2 - (f.stage.left + f.stage.right) / 2)).toBeLessThan(0.06 * sw);
  expect(Math.abs((f.drawn.top + f.drawn.bottom) / 2 - (f.stage.top + f.stage.bottom) / 2)).toBeLessThan(0.06 * sh);
}

async function fills(page: Page): Promise<Map<number, string>> {
  const ids = await page.evaluate(() => [...document.querySelectorAll('#stage svg circle.node')].map((c) => [
    Number(c.querySelector('title')!.textContent!.match(/^node (\d+)/)![1]), c.getAttribute('fill')!,
  ] as [number, string]));
  return new Map(ids);
}

beforeAll(async () => {
  if (!fs.existsSync(path.join(root, 'dist/webview/panel.js'))) throw new Error('dist/webview/panel.js missing: run npm run build (npm run test:webview does)');
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-webview-'));
  browser = await chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
});

afterAll(async () => {
  await browser?.close();
  if (tmp) fs.rmSync(tmp, { recursive: true, force: true });
});

describe('receptive-field panel in Chromium', () => {
  it('draws the karate field of node 0 for 2 layers: 26 nodes by hop, in a worker, under the CSP', async () => {
    const { page, posted, problems } = await openPanel({ file: KARATE, node: 0 });
    await drawn(page, 'svg', 26);
    expect(await circles(page).count()).toBe(26);
    expect(await page.locator('#stage').getAttribute('data-layout')).toBe('worker');
    await expect.poll(() => page.locator('#summary').textContent(), { timeout: 30_000 }).toContain('26 nodes');
    expect(await page.locator('#summary').textContent()).toContain('of 34');
    expect(await page.locator('#hop-bars text.count').allTextContents()).toEqual(['1', '16', '9']);
    // Hop colours: one colour per hop, lightness rising outwards on a light theme.
    const f = await fills(page);
    const byHop = new Map<number, Set<string>>();
    const hopOf = new Map<number, number>();
    const titles = await page.locator('#stage svg circle.node title').allTextContents();
    for (const t of titles) { const m = /^node (\d+) · (centre|hop (\d+))/.exec(t)!; hopOf.set(Number(m[1]), m[2] === 'centre' ? 0 : Number(m[3])); }
    for (const [id, fill] of f) byHop.set(hopOf.get(id)!, new Set([...(byHop.get(hopOf.get(id)!) ?? []), fill]));
    expect([...byHop.keys()].sort()).toEqual([0, 1, 2]);
    for (const s of byHop.values()) expect(s.size).toBe(1);
    const lum = (hex: string) => { const n = parseInt(hex.slice(1), 16); return 0.2126 * (n >> 16) + 0.7152 * ((n >> 8) & 255) + 0.0722 * (n & 255); };
    const [c0, c1, c2] = [0, 1, 2].map((k) => lum([...byHop.get(k)!][0]!));
    expect(c0).toBeLessThan(c1!); expect(c1).toBeLessThan(c2!);
    const requests = (await posted()).map((m) => m.type);
    expect(requests).toEqual(expect.arrayContaining(['ready', 'field', 'smoothing']));
    expect(problems).toEqual([]);
    await page.close();
  });

  it('the layer slider works from the keyboard and the field grows to the whole graph', async () => {
    const { page, state, problems } = await openPanel({ file: KARATE, node: 0 });
    await drawn(page, 'svg', 26);
    await page.focus('#layers');
    await page.keyboard.press('ArrowRight');
    await drawn(page, 'svg', 34);
    expect(await page.locator('#layers-out').textContent()).toBe('3');
    expect(await page.locator('#hop-bars text.count').allTextContents()).toEqual(['1', '16', '9', '8']);
    expect((await state())?.layers).toBe(3);
    expect(problems).toEqual([]);
    await page.close();
  });

  it('says "showing X of Y" when the cap samples the field', async () => {
    const { page } = await openPanel({ file: KARATE, node: 0, maxNodes: 10 });
    await drawn(page, 'svg', 10);
    expect(await circles(page).count()).toBe(10);
    expect(await page.locator('#summary').textContent()).toContain('Showing 10 of 26');
    await page.close();
  });

  it('switches from SVG to canvas above 1,500 drawn elements', async () => {
    // Star with 749 leaves: 750 nodes + 749 edges = 1,499 elements; with 750 leaves: 1,501.
    const below = await openPanel({ file: star(749), node: 0, state: { layers: 1 } });
    await drawn(below.page, 'svg', 750);
    expect(await circles(below.page).count()).toBe(750);
    expect(await below.page.locator('#stage canvas').count()).toBe(0);
    await below.page.close();
    const above = await openPanel({ file: star(750), node: 0, state: { layers: 1 } });
    await drawn(above.page, 'canvas', 751);
    expect(await above.page.locator('#stage canvas').count()).toBe(1);
    expect(await above.page.locator('#stage svg').count()).toBe(0);
    // The canvas has something on it: pixels that are not the background.
    const painted = await above.page.evaluate(() => {
      const c = document.querySelector('#stage canvas') as HTMLCanvasElement;
      const d = c.getContext('2d')!.getImageData(0, 0, c.width, c.height).data;
      let n = 0;
      for (let i = 3; i < d.length; i += 4) if (d[i]! > 0) n++;
      return n;
    });
    expect(painted).toBeGreaterThan(1000);
    // PNG export from the canvas drawing.
    await above.page.click('#export-png');
    await expect.poll(async () => (await above.posted()).some((m) => m.type === 'exportPng'), { timeout: 30_000 }).toBe(true);
    const png = (await above.posted()).find((m) => m.type === 'exportPng') as unknown as { bytes: number[]; size: number; name: string };
    // The PNG signature (RFC 2083 §3.1).
    expect(png.bytes).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
    expect(png.size).toBeGreaterThan(5000);
    expect(png.name).toBe('edge_index-node0-L1-hops.png');
    expect(above.problems).toEqual([]);
    await above.page.close();
  });

  it('exports an SVG document holding every drawn node', async () => {
    const { page, posted } = await openPanel({ file: KARATE, node: 0 });
    await drawn(page, 'svg', 26);
    await page.click('#export-svg');
    await expect.poll(async () => (await posted()).some((m) => m.type === 'exportSvg'), { timeout: 30_000 }).toBe(true);
    const svg = (await posted()).find((m) => m.type === 'exportSvg') as { text: string; name: string };
    expect(svg.name).toBe('karate-node0-L2-hops.svg');
    expect(svg.text.startsWith('<?xml')).toBe(true);
    expect(svg.text.match(/<circle class="node/g)?.length).toBe(26);
    for (const id of [0, 1, 31, 33]) expect(svg.text).toContain(`<title>node ${id} · `);
    // Self-contained: colours are attributes, the background is drawn, no stylesheet needed.
    expect(svg.text).toContain('xmlns="http://www.w3.org/2000/svg"');
    expect(svg.text).not.toContain('var(--');
    const parsed = await page.evaluate((t) => new DOMParser().parseFromString(t, 'image/svg+xml').querySelectorAll('circle.node').length, svg.text);
    expect(parsed).toBe(26);
    // From the keyboard: Enter on the focused button exports once.
    await page.focus('#export-svg');
    await page.keyboard.press('Enter');
    await expect.poll(async () => (await posted()).filter((m) => m.type === 'exportSvg').length, { timeout: 30_000 }).toBe(2);
    await new Promise((r) => setTimeout(r, 300));
    expect((await posted()).filter((m) => m.type === 'exportSvg').length).toBe(2);
    await page.close();
  });

  it('shows file strings as text: a label with markup creates no element and runs nothing', async () => {
    const { page, posted, problems } = await openPanel({ file: KARATE, node: 0, name: `karate${XSS}.npy`, labels: { 0: XSS, 1: XSS } });
    await drawn(page, 'svg', 26);
    expect(await page.locator('#file-name').textContent()).toBe(`karate${XSS}.npy`);
    await page.focus('#stage');
    await page.keyboard.press('ArrowRight'); // the centre
    await page.keyboard.press('ArrowRight'); // node 1
    await expect.poll(() => page.locator('#details').textContent(), { timeout: 30_000 }).toContain(XSS);
    expect(await page.locator('#details .label-text').textContent()).toBe(XSS);
    expect(await page.locator('#stage svg circle.node title').first().textContent()).toContain(`label ${XSS}`);
    expect(await page.evaluate(() => document.querySelectorAll('img').length)).toBe(0);
    await page.click('#export-svg');
    await expect.poll(async () => (await posted()).some((m) => m.type === 'exportSvg'), { timeout: 30_000 }).toBe(true);
    const svg = (await posted()).find((m) => m.type === 'exportSvg') as { text: string };
    expect(svg.text).toContain('&lt;img src=x onerror=alert(1)&gt;');
    expect(svg.text).not.toContain('<img');
    await new Promise((r) => setTimeout(r, 300));
    expect(problems).toEqual([]);
    await page.close();
  });

  it('1-WL view: nodes in one NetworkX class share a colour; bottleneck view dashes the one bridge', async () => {
    const { page } = await openPanel({ file: KARATE, node: 0 });
    await drawn(page, 'svg', 26);
    await page.click('#mode vscode-radio[value="wl"]');
    await page.waitForFunction(() => document.querySelector('#mode-info ul.groups') !== null, null, { timeout: 30_000 });
    const f = await fills(page);
    const part: number[] = structureExpected.graphs.karate!.wlPartition;
    const ids = [...f.keys()];
    for (const a of ids) for (const b of ids) {
      if (part[a] === part[b]) expect(f.get(a)).toBe(f.get(b));
    }
    // Nodes with a colour of their own among the drawn ones are all grey; 5 and 6 (one class) are not.
    expect(f.get(5)).toBe(f.get(6));
    expect(f.get(5)).not.toBe(f.get(1));
    await page.click('#mode vscode-radio[value="bottlenecks"]');
    await page.waitForFunction(() => document.querySelector('#mode-info h2')?.textContent === 'Bottlenecks', null, { timeout: 30_000 });
    await page.waitForFunction(() => document.querySelectorAll('#stage svg line.edge[stroke-dasharray]').length > 0, null, { timeout: 30_000 });
    const dashed = await page.evaluate(() => [...document.querySelectorAll('#stage svg line.edge[stroke-dasharray]')].length);
    expect(dashed).toBe(1);
    expect(await page.locator('#mode-info').textContent()).toContain('0 — 11');
    await page.close();
  });

  it('clicking a node re-centres on it', async () => {
    const { page, posted } = await openPanel({ file: KARATE, node: 0 });
    await drawn(page, 'svg', 26);
    const idx = await page.evaluate(() => [...document.querySelectorAll('#stage svg circle.node')].findIndex((c) => c.querySelector('title')!.textContent!.startsWith('node 33 ')));
    const box = (await circles(page).nth(idx).boundingBox())!;
    await page.mouse.click(box.x + box.width / 2, box.y + box.height / 2);
    await expect.poll(() => page.locator('#title').textContent(), { timeout: 30_000 }).toBe('Receptive field of node 33');
    // node 33, two layers: 1 + 17 + 6 = 24 (docs/references.md §2.1)
    await drawn(page, 'svg', 24);
    const fields = (await posted()).filter((m) => m.type === 'field') as Array<{ query: { node: number } }>;
    expect(fields.at(-1)!.query.node).toBe(33);
    // From the keyboard: step to the second drawn node (the first hop-1 node, by id) and press Enter.
    const second = await page.evaluate(() => Number(document.querySelectorAll('#stage svg circle.node title')[1]!.textContent!.match(/^node (\d+)/)![1]));
    await page.focus('#stage');
    await page.keyboard.press('ArrowRight');
    await page.keyboard.press('ArrowRight');
    await page.keyboard.press('Enter');
    await expect.poll(() => page.locator('#title').textContent(), { timeout: 30_000 }).toBe(`Receptive field of node ${second}`);
    await page.close();
  });

  it('keeps its state across a reload and lays out the same without the worker', async () => {
    const first = await openPanel({ file: KARATE, node: 0 });
    await drawn(first.page, 'svg', 26);
    const positions = await first.page.evaluate(() => [...document.querySelectorAll('#stage svg circle.node')].map((c) => [c.getAttribute('cx'), c.getAttribute('cy')]));
    await first.page.click('#mode vscode-radio[value="wl"]');
    await first.page.focus('#layers');
    await first.page.keyboard.press('ArrowLeft');
    await drawn(first.page, 'svg', 17);
    // A view that is still the fit saves no zoom (a reload fits again, to its own size) ...
    await new Promise((r) => setTimeout(r, 400));
    expect((await first.state())?.zoom).toBeUndefined();
    // ... one the user zoomed is saved.
    await first.page.focus('#stage');
    await first.page.keyboard.press('+');
    await expect.poll(async () => (await first.state())?.zoom, { timeout: 30_000 }).toBeDefined();
    const saved = (await first.state())!;
    expect(saved).toMatchObject({ node: 0, layers: 1, mode: 'wl', uri: `file://${KARATE}` });
    await first.page.close();
    // A reloaded panel (no node from the host) restores what it saved.
    const again = await openPanel({ file: KARATE, state: saved });
    await drawn(again.page, 'svg', 17);
    expect(await again.page.locator('#layers').inputValue()).toBe('1');
    expect(await again.page.evaluate(() => (document.querySelector('#mode vscode-radio[value="wl"]') as HTMLElement & { checked: boolean }).checked)).toBe(true);
    const t = await again.page.evaluate(() => document.querySelector('#stage svg g.viewport')!.getAttribute('transform'));
    expect(t).toBe(`translate(${saved.zoom!.x},${saved.zoom!.y}) scale(${saved.zoom!.k})`);
    await again.page.close();
    // Same payload and seed: the in-page layout gives the worker's positions.
    const page = await openPanel({ file: KARATE, node: 0, noWorker: true });
    await drawn(page.page, 'svg', 26);
    expect(await page.page.locator('#stage').getAttribute('data-layout')).toBe('page');
    const again2 = await page.page.evaluate(() => [...document.querySelectorAll('#stage svg circle.node')].map((c) => [c.getAttribute('cx'), c.getAttribute('cy')]));
    expect(again2).toEqual(positions);
    await page.page.close();
  });

  it('follows the theme: light ramp on light, bright centre on dark, contrast outlines in high contrast', async () => {
    const dark = await openPanel({ file: KARATE, node: 0, bodyClass: 'vscode-dark' });
    await drawn(dark.page, 'svg', 26);
    const centreDark = await dark.page.locator('#stage svg circle.centre').getAttribute('fill');
    await dark.page.close();
    const light = await openPanel({ file: KARATE, node: 0, bodyClass: 'vscode-light' });
    await drawn(light.page, 'svg', 26);
    const centreLight = await light.page.locator('#stage svg circle.centre').getAttribute('fill');
    await light.page.close();
    const lum = (hex: string) => { const n = parseInt(hex.slice(1), 16); return 0.2126 * (n >> 16) + 0.7152 * ((n >> 8) & 255) + 0.0722 * (n & 255); };
    expect(lum(centreDark!)).toBeGreaterThan(180);
    expect(lum(centreLight!)).toBeLessThan(90);
    const hc = await openPanel({ file: KARATE, node: 0, bodyClass: 'vscode-high-contrast', cssVars: { '--vscode-contrastBorder': '#f38518' } });
    await drawn(hc.page, 'svg', 26);
    const strokes = await hc.page.evaluate(() => [...document.querySelectorAll('#stage svg circle.node:not(.centre)')].map((c) => [c.getAttribute('stroke'), c.getAttribute('stroke-width')]));
    for (const [stroke, width] of strokes) { expect(stroke).toBe('#f38518'); expect(width).toBe('1.5'); }
    await hc.page.close();
  });

  it('frames the demo lane graph at 1600 x 1000: every node inside the stage, ring labels off the nodes, fitted again on resize', async () => {
    const { page, problems } = await openPanel({ file: LANES, node: 0, viewport: { width: 1600, height: 1000 } });
    await settled(page);
    expect(await page.locator('#layers').inputValue()).toBe('2');
    const opened = await framing(page);
    expect(opened.ringLabels.map((l) => l.text)).toEqual(['hop 1', 'hop 2']);
    expectFramed(opened);
    // Narrower and shorter (the side column wraps below the drawing): fitted to the new stage.
    await page.setViewportSize({ width: 760, height: 620 });
    await page.waitForFunction((t) => document.querySelector('#stage svg g.viewport')?.getAttribute('transform') !== t, opened.transform, { timeout: 30_000 });
    const small = await framing(page);
    expect(small.stage.right - small.stage.left).toBeLessThan(opened.stage.right - opened.stage.left);
    expectFramed(small);
    // Back to full size: fills the big stage again (not the small one's view, half empty).
    await page.setViewportSize({ width: 1600, height: 1000 });
    await page.waitForFunction((t) => document.querySelector('#stage svg g.viewport')?.getAttribute('transform') !== t, small.transform, { timeout: 30_000 });
    expectFramed(await framing(page));
    // A view the user zoomed is left alone by a resize.
    await page.focus('#stage');
    await page.keyboard.press('+');
    await page.waitForFunction(() => !!(window as unknown as { __state: () => { zoom?: unknown } | undefined }).__state()?.zoom, null, { timeout: 30_000 });
    const zoomed = (await framing(page)).transform;
    await page.setViewportSize({ width: 1400, height: 1000 });
    await new Promise((r) => setTimeout(r, 500));
    expect((await framing(page)).transform).toBe(zoomed);
    // The Fit button fits again.
    await page.click('#fit');
    await page.waitForFunction((t) => document.querySelector('#stage svg g.viewport')?.getAttribute('transform') !== t, zoomed, { timeout: 30_000 });
    expectFramed(await framing(page));
    expect(problems).toEqual([]);
    await page.close();
  });

  it('the karate field at 1600 x 1000 for 1 to 3 layers is framed the same way', async () => {
    const { page } = await openPanel({ file: KARATE, node: 0, viewport: { width: 1600, height: 1000 }, state: { layers: 1 } });
    for (const [layers, n] of [[1, 17], [2, 26], [3, 34]] as const) {
      if (layers > 1) { await page.focus('#layers'); await page.keyboard.press('ArrowRight'); }
      await drawn(page, 'svg', n);
      // The new field is fitted once its layout is in (the view had not been moved).
      await expect.poll(async () => { try { expectFramed(await framing(page)); return true; } catch { return false; } }, { timeout: 30_000 }).toBe(true);
      expect((await framing(page)).ringLabels.length).toBe(layers);
    }
    await page.close();
  });

  it('our OKLCH conversion gives the colours Chromium paints for the same oklch() (CSS Color 4)', async () => {
    const page = await browser.newPage();
    // Hop colours and group colours, back to OKLCH and painted by Chromium's own colour code.
    const hexes = [...Array.from({ length: 9 }, (_, k) => hopColour(k, 8, false)), ...Array.from({ length: 9 }, (_, k) => hopColour(k, 8, true)),
      ...Array.from({ length: 20 }, (_, i) => groupColour(i, false)), ...Array.from({ length: 20 }, (_, i) => groupColour(i, true))];
    const specs = hexes.map((hex) => {
      const [L, a, b] = oklab(hex);
      return { hex, css: `oklch(${L} ${Math.hypot(a, b)} ${(Math.atan2(b, a) * 180) / Math.PI})` };
    });
    const painted = await page.evaluate((list) => {
      const c = document.createElement('canvas');
      c.width = 1; c.height = 1;
      const ctx = c.getContext('2d')!;
      return list.map(({ css }) => { ctx.clearRect(0, 0, 1, 1); ctx.fillStyle = css; ctx.fillRect(0, 0, 1, 1); return [...ctx.getImageData(0, 0, 1, 1).data.slice(0, 3)]; });
    }, specs);
    specs.forEach(({ hex }, i) => {
      const ours = [1, 3, 5].map((j) => parseInt(hex.slice(j, j + 2), 16));
      for (let ch = 0; ch < 3; ch++) expect(Math.abs(painted[i]![ch]! - ours[ch]!), `${hex} vs Chromium ${painted[i]}`).toBeLessThanOrEqual(1);
    });
    // And a round trip the other way: a few OKLCH values straight from their definition.
    for (const [L, C, h] of [[0.5, 0.1, 30], [0.7, 0.12, 140], [0.4, 0.08, 260]] as const) {
      const rgb = await page.evaluate((css) => {
        const c = document.createElement('canvas'); c.width = 1; c.height = 1;
        const ctx = c.getContext('2d')!; ctx.fillStyle = css; ctx.fillRect(0, 0, 1, 1);
        return [...ctx.getImageData(0, 0, 1, 1).data.slice(0, 3)];
      }, `oklch(${L} ${C} ${h})`);
      const ours = oklchHex(L, C, h);
      [1, 3, 5].forEach((j, ch) => expect(Math.abs(parseInt(ours.slice(j, j + 2), 16) - rgb[ch]!)).toBeLessThanOrEqual(1));
    }
    await page.close();
  });

  it('pair mode (link prediction): the union of both fields, both ends marked, the pair edge dashed and labelled', async () => {
    // Expected union sizes from NetworkX (tests/fixtures/make_pair_fixtures.py: single_source_shortest_path_length
    // with cutoff on the karate club; 0-1 is an edge, 0-33 is not).
    const pairs = JSON.parse(fs.readFileSync(path.join(root, 'tests/fixtures/pair/expected.json'), 'utf8')).karate.pairs;
    const sum = (a: number[]) => a.reduce((x, y) => x + y, 0);
    const { page, posted, state, problems } = await openPanel({ file: KARATE, node: 0, state: { uri: `file://${KARATE}`, layers: 1, pair: 1 } }); // a restored panel in pair mode
    const union01 = sum(pairs[0].perHop['1'].row0.selfLoops.union);
    await drawn(page, 'svg', union01);
    expect(await page.locator('#title').textContent()).toBe('What the model sees of the pair 0, 1');
    expect(await page.locator('#summary').textContent()).toContain("holds the pair's own edge (0 → 1 and 1 → 0)");
    expect(await page.locator('#summary').textContent()).toContain(`they are ${pairs[0].distanceWithoutPairEdge} hops apart`);
    expect(await page.locator('#stage svg circle.node.centre').count()).toBe(2);
    expect(await page.locator('#stage svg').first().getAttribute('aria-label')).toBe(`Pair 0, 1: ${union01} nodes and ${await page.locator('#stage').getAttribute('data-edges')} edges drawn`);
    const note = page.locator('#stage svg text.edge-note');
    expect(await note.textContent()).toBe('pair edge in the message graph');
    const colour = pairEdgeColour(false);
    const dashed = page.locator(`#stage svg line.edge[stroke="${colour}"]`);
    expect(await dashed.count()).toBe(1);
    expect(await dashed.getAttribute('stroke-dasharray')).toBe('8 4');
    expect(await page.locator('#legend .pair-edge').textContent()).toContain('pair edge in the message graph');
    expect(await page.locator('#pair-input').evaluate((e) => (e as HTMLElement & { value: string }).value)).toBe('1');

    // The "and node" box: another pair, without an edge between its ends.
    const enter = (id: string, value: string) => page.evaluate(([sel, v]) => {
      const box = document.querySelector(sel) as HTMLElement & { value: string };
      box.value = v;
      box.dispatchEvent(new KeyboardEvent('keydown', { key: 'Enter', bubbles: true, composed: true }));
    }, [id, value] as const);
    await enter('#pair-input', '33');
    await drawn(page, 'svg', sum(pairs[1].perHop['1'].row0.selfLoops.union));
    expect(await page.locator('#summary').textContent()).toContain('No edge joins 0 and 33');
    expect(await page.locator('#stage svg text.edge-note').count()).toBe(0);
    expect((await state())?.pair).toBe(33);
    const last = (await posted()).filter((m) => m.type === 'field').at(-1) as { query: { node: number; pair?: number } };
    expect(last.query).toMatchObject({ node: 0, pair: 33 });

    // Emptied: back to one node's field (17 nodes within one hop of node 0, docs/references.md §2.1).
    await enter('#pair-input', '');
    await drawn(page, 'svg', 17);
    expect(await page.locator('#title').textContent()).toBe('Receptive field of node 0');
    expect((await state())?.pair).toBeUndefined();
    expect(problems).toEqual([]);
    await page.close();
  });
});

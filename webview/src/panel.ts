/**
 * Receptive-field panel webview: what an L-layer message-passing model lets one node hear, drawn
 * as rings of hop distance, with per-hop counts, the coverage curve and the smoothing curve beside
 * it, and two structure views (1-WL classes, bottlenecks). Every number comes from the language
 * server through the extension host (panel-messages.ts); this file only lays out and draws.
 * Strings that come from files are only ever set as text.
 */
import '@vscode-elements/elements/dist/vscode-button/index.js';
import '@vscode-elements/elements/dist/vscode-checkbox/index.js';
import '@vscode-elements/elements/dist/vscode-radio/index.js';
import '@vscode-elements/elements/dist/vscode-radio-group/index.js';
import '@vscode-elements/elements/dist/vscode-textfield/index.js';
import { select } from 'd3-selection';
import { zoom as d3zoom, zoomIdentity, type ZoomBehavior, type ZoomTransform } from 'd3-zoom';
import { quadtree, type Quadtree } from 'd3-quadtree';
import { scaleBand, scaleLinear, scaleLog } from 'd3-scale';
import { line as d3line } from 'd3-shape';
import type { BottlenecksPayload, FieldViewPayload, SmoothingPayload, WlClassesPayload } from '../../common/protocol';
import type { FieldQuery, Flow, PanelMessage, PanelRequest, PanelState, ViewMode } from '../../common/panel-messages';
import { curvatureColour, groupColour, hopColour, isDarkBackground, mix, readTheme, type Theme } from './panel-colours';
import { startLayout, type LayoutInput } from './panel-layout';
import { buildSvg, drawCanvas, fitTransform, pngBytes, svgText, type Scene, type Transform } from './panel-render';

interface VsCodeApi {
  postMessage(m: PanelRequest): void;
  getState(): PanelState | undefined;
  setState(s: PanelState): void;
}
declare function acquireVsCodeApi(): VsCodeApi;

/** Drawn nodes + edges above which the drawing switches from SVG to canvas. */
export const CANVAS_THRESHOLD = 1500;
const MAX_LAYERS = 8;
const LAYOUT_SEED = 7;

const vscode = acquireVsCodeApi();
const post = (m: PanelRequest) => vscode.postMessage(m);
let state: PanelState = vscode.getState() ?? {};
const save = (patch: Partial<PanelState>) => { state = { ...state, ...patch }; vscode.setState(state); };

// ---- DOM helpers (text only) ---------------------------------------------------------------------

function el<K extends keyof HTMLElementTagNameMap>(tag: K, attrs: Record<string, string> = {}, ...children: Array<Node | string>): HTMLElementTagNameMap[K] {
  const e = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, v);
  for (const c of children) e.append(typeof c === 'string' ? document.createTextNode(c) : c);
  return e;
}
function custom(tag: string, attrs: Record<string, string> = {}, ...children: Array<Node | string>): HTMLElement {
  const e = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, v);
  for (const c of children) e.append(typeof c === 'string' ? document.createTextNode(c) : c);
  return e;
}
const pct = (x: number) => `${(100 * x).toFixed(x >= 0.995 || x === 0 ? 0 : 1)}%`;
const num = (x: number) => (Math.abs(x) >= 1e4 || (Math.abs(x) < 1e-3 && x !== 0) ? x.toExponential(2) : +x.toFixed(4) + '');
const plural = (n: number, one: string, many = one + 's') => `${n.toLocaleString('en-US')} ${n === 1 ? one : many}`;

// ---- page ------------------------------------------------------------------------------------------

const app = document.getElementById('app') ?? document.body.appendChild(el('main', { id: 'app' }));
const configEl = document.getElementById('hopscope-panel-config');
const workerUrl = configEl?.getAttribute('data-layout-worker') ?? '';

const nodeInput = custom('vscode-textfield', { id: 'node-input', type: 'number', min: '0', 'aria-label': 'Centre node id', size: '7' }) as HTMLElement & { value: string };
const goButton = custom('vscode-button', { id: 'go', secondary: '' }, 'Show');
const layersInput = el('input', { id: 'layers', type: 'range', min: '0', max: String(MAX_LAYERS), step: '1', value: '2', 'aria-describedby': 'layers-out' });
const layersOut = el('output', { id: 'layers-out', for: 'layers' }, '2');
const flowGroup = custom('vscode-radio-group', { id: 'flow', 'aria-label': 'Message direction' },
  custom('vscode-radio', { name: 'flow', value: 'source-to-target', label: 'row 0 sends' }, 'row 0 sends'),
  custom('vscode-radio', { name: 'flow', value: 'target-to-source', label: 'row 1 sends' }, 'row 1 sends'));
const selfLoopsBox = custom('vscode-checkbox', { id: 'self-loops', label: 'Add self-loops', checked: '' }, 'Add self-loops') as HTMLElement & { checked: boolean };
const symmetriseBox = custom('vscode-checkbox', { id: 'symmetrise', label: 'Symmetrise' }, 'Symmetrise') as HTMLElement & { checked: boolean };
const modeGroup = custom('vscode-radio-group', { id: 'mode', 'aria-label': 'Colour by' },
  custom('vscode-radio', { name: 'mode', value: 'hops', label: 'Hop distance', checked: '' }, 'Hop distance'),
  custom('vscode-radio', { name: 'mode', value: 'wl', label: '1-WL classes' }, '1-WL classes'),
  custom('vscode-radio', { name: 'mode', value: 'bottlenecks', label: 'Bottlenecks' }, 'Bottlenecks'));
const findInput = custom('vscode-textfield', { id: 'find', type: 'number', min: '0', placeholder: 'find id', 'aria-label': 'Find a node in the drawing', size: '7' }) as HTMLElement & { value: string };
const fitButton = custom('vscode-button', { id: 'fit', secondary: '', title: 'Fit the drawing to the view (0)' }, 'Fit');
const svgButton = custom('vscode-button', { id: 'export-svg', secondary: '' }, 'Save SVG…');
const pngButton = custom('vscode-button', { id: 'export-png', secondary: '' }, 'Save PNG…');

const title = el('h1', { id: 'title' }, 'Receptive field');
const fileLabel = el('span', { id: 'file-name', class: 'file' });
const summary = el('p', { id: 'summary', 'aria-live': 'polite' }, 'Waiting for the graph…');
const errorBox = el('p', { id: 'error', class: 'error', role: 'alert', hidden: '' });
const stage = el('div', { id: 'stage', tabindex: '0', role: 'application', 'aria-roledescription': 'graph drawing', 'aria-describedby': 'keys-hint' });
const tooltip = el('div', { id: 'tooltip', class: 'tooltip', hidden: '' });
const details = el('div', { id: 'details', 'aria-live': 'polite' });
const legend = el('div', { id: 'legend' });
const status = el('p', { id: 'status', class: 'muted' });
const keysHint = el('p', { id: 'keys-hint', class: 'muted hint' },
  'In the drawing: ←/→ step through the nodes, Enter centres on the selected node, + / − zoom, 0 fits, Esc clears.');
const hopChart = el('figure', { id: 'hop-bars', class: 'chart' });
const coverageChart = el('figure', { id: 'coverage-chart', class: 'chart' });
const smoothingChart = el('figure', { id: 'smoothing-chart', class: 'chart', hidden: '' });
const modeInfo = el('section', { id: 'mode-info' });

app.replaceChildren(
  el('header', { class: 'top' }, title, fileLabel),
  el('div', { class: 'controls', role: 'toolbar', 'aria-label': 'Field options' },
    el('span', { class: 'group' }, el('label', { for: 'node-input' }, 'Node'), nodeInput, goButton),
    el('span', { class: 'group' }, el('label', { for: 'layers' }, 'Layers'), layersInput, layersOut),
    el('span', { class: 'group', title: 'Which end of an edge sends the message' }, flowGroup),
    el('span', { class: 'group' }, selfLoopsBox, symmetriseBox),
  ),
  el('div', { class: 'controls', role: 'toolbar', 'aria-label': 'Drawing' },
    el('span', { class: 'group' }, el('span', { class: 'muted' }, 'Colour by'), modeGroup),
    el('span', { class: 'group' }, findInput, fitButton, svgButton, pngButton),
  ),
  summary, errorBox,
  el('div', { class: 'body' },
    el('div', { class: 'drawing' }, stage, legend, details, keysHint),
    el('aside', { class: 'side' }, hopChart, coverageChart, smoothingChart, modeInfo),
  ),
  status,
);
stage.append(tooltip);

// ---- state -----------------------------------------------------------------------------------------

let file: { uri: string; name: string } | undefined;
let seq = 0;
let view: FieldViewPayload | undefined;
let wl: WlClassesPayload | undefined;
let bottlenecks: BottlenecksPayload | undefined;
let smoothing: SmoothingPayload | null | undefined;
let smoothingNote: string | undefined;
let positions: Float32Array | undefined;
let rings: number[] = [];
let scene: Scene | undefined;
let theme: Theme = readTheme();
let selected = -1;
let highlight: Set<number> | null = null;
let transform: Transform = { k: 1, x: 0, y: 0 };
let firstDrawing = true;
/** True while the view is the fit of the drawing (not zoomed or panned since): it is fitted again
 *  when the stage changes size or the field changes. Only a view someone moved is saved. */
let viewFitted = true;
/** Set while fit() moves the view, so its zoom event is not taken for the user's. */
let fitting = false;
let lastCentre: number | undefined;
/** Positions of the last drawing by node id, so a new field starts where the old one was. */
let previous = new Map<number, [number, number]>();

function query(): FieldQuery {
  return {
    node: state.node ?? 0,
    layers: state.layers ?? 2,
    ...(state.flow ? { flow: state.flow } : {}),
    symmetrise: state.symmetrise === true,
    selfLoops: state.selfLoops !== false,
  };
}

function syncControls(): void {
  nodeInput.value = String(state.node ?? 0);
  layersInput.value = String(state.layers ?? 2);
  layersOut.textContent = String(state.layers ?? 2);
  layersInput.setAttribute('aria-valuetext', plural(state.layers ?? 2, 'layer'));
  selfLoopsBox.checked = state.selfLoops !== false;
  symmetriseBox.checked = state.symmetrise === true;
  const mode = state.mode ?? 'hops';
  for (const r of modeGroup.querySelectorAll('vscode-radio')) (r as HTMLElement & { checked: boolean }).checked = r.getAttribute('value') === mode;
  const flow = state.flow ?? view?.flow;
  for (const r of flowGroup.querySelectorAll('vscode-radio')) (r as HTMLElement & { checked: boolean }).checked = r.getAttribute('value') === flow;
}

function requestField(): void {
  if (!file) return;
  seq++;
  errorBox.hidden = true;
  stage.classList.add('busy');
  summary.textContent = `Computing the field of node ${state.node ?? 0}…`;
  post({ type: 'field', seq, query: query() });
}

let layerTimer: ReturnType<typeof setTimeout> | undefined;
function setLayers(L: number, immediate = false): void {
  const v = Math.max(0, Math.min(MAX_LAYERS, Math.round(L)));
  save({ layers: v });
  layersOut.textContent = String(v);
  layersInput.setAttribute('aria-valuetext', plural(v, 'layer'));
  clearTimeout(layerTimer);
  if (immediate) requestField();
  else layerTimer = setTimeout(requestField, 90);
}

function centreOn(node: number): void {
  if (!Number.isInteger(node) || node < 0) { showError(`"${node}" is not a node id.`); return; }
  save({ node, selected: undefined });
  selected = -1;
  highlight = null;
  nodeInput.value = String(node);
  requestField();
}

function showError(message: string): void {
  errorBox.textContent = message;
  errorBox.hidden = false;
  stage.classList.remove('busy');
}

// ---- controls ----------------------------------------------------------------------------------------

const onEnter = (target: HTMLElement, fn: () => void) => target.addEventListener('keydown', (e) => {
  if ((e as KeyboardEvent).key === 'Enter') { e.preventDefault(); fn(); }
});
const readNode = (s: string): number => (s.trim() === '' || !/^\d+$/.test(s.trim()) ? NaN : Number(s.trim()));
onEnter(nodeInput, () => centreOn(readNode(nodeInput.value)));
goButton.addEventListener('click', () => centreOn(readNode(nodeInput.value)));
layersInput.addEventListener('input', () => setLayers(Number(layersInput.value)));
layersInput.addEventListener('change', () => setLayers(Number(layersInput.value), true));
/** Value of the checked radio of a group (the change event may come from the group or a radio). */
function checkedValue(group: HTMLElement): string | undefined {
  for (const r of group.querySelectorAll('vscode-radio')) if ((r as HTMLElement & { checked: boolean }).checked) return r.getAttribute('value') ?? undefined;
  return undefined;
}
flowGroup.addEventListener('change', () => {
  const v = checkedValue(flowGroup);
  if ((v === 'source-to-target' || v === 'target-to-source') && v !== (state.flow ?? view?.flow)) { save({ flow: v as Flow }); requestField(); }
});
selfLoopsBox.addEventListener('change', () => { save({ selfLoops: selfLoopsBox.checked }); requestField(); });
symmetriseBox.addEventListener('change', () => { save({ symmetrise: symmetriseBox.checked }); requestField(); });
modeGroup.addEventListener('change', () => {
  const v = checkedValue(modeGroup) as ViewMode | undefined;
  if ((v === 'hops' || v === 'wl' || v === 'bottlenecks') && v !== (state.mode ?? 'hops')) { save({ mode: v }); highlight = null; ensureModeData(); redraw(); }
});
onEnter(findInput, () => findNode(readNode(findInput.value)));
fitButton.addEventListener('click', () => fit());
svgButton.addEventListener('click', () => exportSvg());
pngButton.addEventListener('click', () => { void exportPng(); });
// vscode-button turns Enter and Space into a click itself.

function findNode(id: number): void {
  if (!view || !Number.isInteger(id)) return;
  const i = view.ids.indexOf(id);
  if (i < 0) {
    const inField = view.sampled ? ' (it may be in the field but not drawn: the drawing is a sample)' : '';
    details.replaceChildren(el('span', {}, `Node ${id} is not in this drawing${inField}. `), centreButton(id));
    return;
  }
  select_(i, true);
  stage.focus();
}

// ---- layout ------------------------------------------------------------------------------------------

type LayoutResult = { positions: Float32Array; rings: number[] };

/** Runs layouts in a Web Worker; falls back to chunks in the page when a worker cannot start. */
class LayoutRunner {
  route: 'worker' | 'page' = 'page';
  private worker: Worker | undefined;
  private ready: Promise<void>;
  private nextId = 1;
  private pending = new Map<number, (r: LayoutResult | Error) => void>();
  private pageToken = 0;
  whyPage = '';

  constructor(url: string) {
    this.ready = this.start(url);
  }

  private async start(url: string): Promise<void> {
    if (!url) { this.whyPage = 'no worker script'; return; }
    try {
      // A webview page and its resources have different origins, so the worker starts from a
      // blob: URL holding the fetched script (CSP: connect-src for the fetch, worker-src blob:).
      const res = await fetch(url);
      if (!res.ok) throw new Error(`HTTP ${res.status}`);
      const blobUrl = URL.createObjectURL(new Blob([await res.text()], { type: 'text/javascript' }));
      const w = new Worker(blobUrl);
      w.onmessage = (e: MessageEvent<{ id: number; positions?: Float32Array; rings?: number[]; error?: string }>) => {
        const cb = this.pending.get(e.data.id);
        this.pending.delete(e.data.id);
        cb?.(e.data.error !== undefined ? new Error(e.data.error) : { positions: e.data.positions!, rings: e.data.rings! });
      };
      w.onerror = (e) => {
        e.preventDefault();
        this.fallBack(`worker error: ${e.message || 'unknown'}`);
      };
      this.worker = w;
      this.route = 'worker';
    } catch (e) {
      this.whyPage = `worker unavailable: ${(e as Error).message}`;
    }
  }

  private fallBack(why: string): void {
    this.worker?.terminate();
    this.worker = undefined;
    this.route = 'page';
    this.whyPage = why;
    for (const cb of this.pending.values()) cb(new Error('retry'));
    this.pending.clear();
  }

  async run(input: LayoutInput): Promise<LayoutResult> {
    await this.ready;
    if (this.worker) {
      const id = this.nextId++;
      const r = await new Promise<LayoutResult | Error>((resolve) => {
        this.pending.set(id, resolve);
        this.worker!.postMessage({ id, input });
      });
      if (!(r instanceof Error)) return r;
    }
    return this.runInPage(input);
  }

  /** Same layout in chunks of ticks between animation frames; a newer run cancels an older one. */
  private runInPage(input: LayoutInput): Promise<LayoutResult> {
    const token = ++this.pageToken;
    const job = startLayout(input);
    return new Promise((resolve, reject) => {
      const chunk = () => {
        if (token !== this.pageToken) { reject(new Error('superseded')); return; }
        if (job.step(20)) resolve({ positions: job.positions(), rings: job.rings });
        else setTimeout(chunk, 0);
      };
      chunk();
    });
  }
}
const layouts = new LayoutRunner(workerUrl);

function nodeRadii(v: FieldViewPayload): number[] {
  const big = v.ids.length > 600;
  let wmax = 0;
  for (let i = 1; i < v.weights.length; i++) wmax = Math.max(wmax, v.weights[i]!);
  const base = big ? 2 : 3.5, span = big ? 5 : 9;
  return v.ids.map((_, i) => {
    if (i === 0) return base + span + 2;
    return base + span * Math.sqrt(wmax > 0 ? Math.max(0, v.weights[i]!) / wmax : 0);
  });
}

async function layOut(v: FieldViewPayload, mySeq: number): Promise<void> {
  const radius = nodeRadii(v);
  const initial = new Float64Array(2 * v.ids.length).fill(NaN);
  v.ids.forEach((id, i) => {
    const p = previous.get(id);
    if (p && i > 0) { initial[2 * i] = p[0]; initial[2 * i + 1] = p[1]; }
  });
  let r: LayoutResult;
  try {
    r = await layouts.run({ hops: v.hops, radius, edges: v.edges, initial: Array.from(initial), seed: LAYOUT_SEED });
  } catch {
    return; // a newer field replaced this one
  }
  if (mySeq !== seq) return;
  positions = r.positions;
  rings = r.rings;
  previous = new Map(v.ids.map((id, i) => [id, [r.positions[2 * i]!, r.positions[2 * i + 1]!]]));
  stage.classList.remove('busy');
  const centreChanged = lastCentre !== v.node;
  lastCentre = v.node;
  if (firstDrawing && state.zoom) { transform = { ...state.zoom }; viewFitted = false; applyZoom(); }
  else if (firstDrawing || centreChanged || viewFitted) fit();
  else applyZoom();
  firstDrawing = false;
  redraw();
}

// ---- scene --------------------------------------------------------------------------------------------

function nodeTitle(v: FieldViewPayload, i: number): string {
  const parts = [`node ${v.ids[i]}`, i === 0 ? 'centre' : `hop ${v.hops[i]}`, `influence ${num(v.weights[i]!)}`];
  const label = v.labels?.[i];
  if (label !== undefined && label !== null) parts.push(`label ${String(label)}`);
  if (wl && (state.mode ?? 'hops') === 'wl' && wl.colours[i]! >= 0) parts.push(`1-WL class of ${plural(wl.classSizes[i]!, 'node')} in the graph`);
  return parts.join(' · ');
}

function buildScene(): Scene {
  const v = view!;
  const mode = state.mode ?? 'hops';
  const dark = isDarkBackground(theme);
  const maxHop = Math.max(1, v.layers);
  const neutral = mix(theme.foreground, theme.background, 0.45);
  let nodeFill = v.hops.map((k) => hopColour(k, maxHop, dark));
  if (mode === 'wl' && wl) {
    const groupIndex = new Map<number, number>();
    wl.groups.forEach((g, i) => groupIndex.set(g.colour, i));
    nodeFill = v.ids.map((_, i) => {
      const gi = groupIndex.get(wl!.colours[i]!);
      return gi === undefined ? neutral : groupColour(gi, dark);
    });
  } else if (mode !== 'hops') {
    nodeFill = v.ids.map(() => neutral);
  }
  const m = v.edgeDirs.length;
  let edgeStroke = new Array<string>(m).fill(theme.edge);
  let edgeWidth = new Array<number>(m).fill(v.ids.length > 600 ? 0.6 : 1);
  let edgeDash = new Array<string | null>(m).fill(null);
  let edgeOpacity = new Array<number>(m).fill(theme.edgeOpacity);
  if (mode === 'bottlenecks' && bottlenecks) {
    const b = bottlenecks;
    // Without balanced Forman (very large neighbourhoods) edges stay neutral; bridges are still marked.
    edgeStroke = b.balancedForman.map((x) => curvatureColour(x, dark, neutral));
    edgeWidth = b.balancedForman.map((x, e) => (b.bridge[e] ? 3.5 : 1 + 2.5 * Math.max(0, Math.min(1, -(x ?? 0)))));
    edgeDash = b.bridge.map((br) => (br ? '7 4' : null));
    edgeOpacity = b.balancedForman.map((x, e) => (b.bridge[e] || (x !== null && x < -0.25) ? 0.95 : 0.6));
  }
  return {
    ids: v.ids, hops: v.hops, edges: v.edges, edgeDirs: v.edgeDirs,
    positions: positions ?? new Float32Array(2 * v.ids.length), rings,
    nodeFill, nodeRadius: nodeRadii(v), nodeTitle: v.ids.map((_, i) => nodeTitle(v, i)),
    edgeStroke, edgeWidth, edgeDash, edgeOpacity,
    labelAll: v.ids.length <= 120, selected, highlight, theme,
  };
}

// ---- drawing --------------------------------------------------------------------------------------------

let renderer: 'svg' | 'canvas' | undefined;
let canvas: HTMLCanvasElement | undefined;
let svg: SVGSVGElement | undefined;
let tree: Quadtree<number> | undefined;

function stageSize(): { width: number; height: number } {
  return { width: Math.max(200, stage.clientWidth || 640), height: Math.max(200, stage.clientHeight || 480) };
}

function redraw(): void {
  if (!view || !positions) return;
  scene = buildScene();
  const { width, height } = stageSize();
  const elements = view.ids.length + view.edgeDirs.length;
  const want = elements > CANVAS_THRESHOLD ? 'canvas' : 'svg';
  stage.dataset['renderer'] = want;
  stage.dataset['nodes'] = String(view.ids.length);
  stage.dataset['edges'] = String(view.edgeDirs.length);
  if (want === 'svg') {
    canvas?.remove(); canvas = undefined;
    const next = buildSvg(document, scene, { width, height, transform });
    next.setAttribute('aria-label', `Receptive field of node ${view.node}: ${plural(view.ids.length, 'node')} and ${plural(view.edgeDirs.length, 'edge')} drawn`);
    if (svg) svg.replaceWith(next); else stage.prepend(next);
    svg = next;
  } else {
    svg?.remove(); svg = undefined;
    if (!canvas) {
      canvas = el('canvas', { role: 'img' });
      stage.prepend(canvas);
    }
    canvas.setAttribute('aria-label', `Receptive field of node ${view.node}: ${plural(view.ids.length, 'node')} and ${plural(view.edgeDirs.length, 'edge')} drawn (canvas)`);
    const ratio = window.devicePixelRatio || 1;
    canvas.width = Math.round(width * ratio); canvas.height = Math.round(height * ratio);
    canvas.style.width = `${width}px`; canvas.style.height = `${height}px`;
    const ctx = canvas.getContext('2d');
    if (ctx) drawCanvas(ctx, scene, transform, width, height, ratio, false);
  }
  renderer = want;
  tree = quadtree<number>().x((i) => positions![2 * i]!).y((i) => positions![2 * i + 1]!).addAll(view.ids.map((_, i) => i));
  drawLegend();
  drawDetails();
  status.textContent = `Layout: ${layouts.route === 'worker' ? 'worker thread' : `in the page (${layouts.whyPage})`} · drawn as ${renderer === 'svg' ? 'SVG' : 'canvas'} · ${plural(view.ids.length, 'node')}, ${plural(view.edgeDirs.length, 'edge')}`;
  stage.dataset['layout'] = layouts.route;
}

/** Only the viewport moves: SVG gets a new transform, the canvas is repainted. */
function paintTransform(): void {
  if (renderer === 'svg' && svg) {
    svg.querySelector('g.viewport')?.setAttribute('transform', `translate(${transform.x},${transform.y}) scale(${transform.k})`);
  } else if (renderer === 'canvas' && canvas && scene) {
    const { width, height } = stageSize();
    const ctx = canvas.getContext('2d');
    if (ctx) drawCanvas(ctx, scene, transform, width, height, window.devicePixelRatio || 1, false);
  }
}

// ---- zoom and pointer --------------------------------------------------------------------------------

const zoomer: ZoomBehavior<HTMLDivElement, unknown> = d3zoom<HTMLDivElement, unknown>()
  .scaleExtent([0.02, 12])
  .filter((e: Event) => !(e.type === 'dblclick'))
  .on('zoom', (e: { transform: ZoomTransform }) => {
    transform = { k: e.transform.k, x: e.transform.x, y: e.transform.y };
    if (!fitting) viewFitted = false;
    paintTransform();
    saveZoomSoon();
  });
select(stage).call(zoomer).on('dblclick.zoom', null);

let zoomTimer: ReturnType<typeof setTimeout> | undefined;
function saveZoomSoon(): void {
  clearTimeout(zoomTimer);
  zoomTimer = setTimeout(() => save({ zoom: viewFitted ? undefined : { ...transform } }), 200);
}
function applyZoom(): void {
  select(stage).call(zoomer.transform, zoomIdentity.translate(transform.x, transform.y).scale(transform.k));
}
/** Fits the whole drawing (nodes, their labels, ring labels) into the stage, centred. */
function fit(): void {
  if (!view || !positions) return;
  const { width, height } = stageSize();
  transform = fitTransform(buildScene(), width, height, view.ids.length + view.edgeDirs.length > CANVAS_THRESHOLD);
  viewFitted = true;
  fitting = true;
  try { applyZoom(); } finally { fitting = false; }
  saveZoomSoon();
}

function nodeAt(clientX: number, clientY: number): number {
  if (!tree || !view) return -1;
  const r = stage.getBoundingClientRect();
  const x = (clientX - r.left - transform.x) / transform.k, y = (clientY - r.top - transform.y) / transform.k;
  const i = tree.find(x, y, 14 / transform.k + 4);
  return i === undefined ? -1 : i;
}

stage.addEventListener('pointermove', (e) => {
  const i = nodeAt(e.clientX, e.clientY);
  if (i < 0 || !view) { tooltip.hidden = true; return; }
  tooltip.textContent = nodeTitle(view, i);
  const r = stage.getBoundingClientRect();
  tooltip.style.left = `${e.clientX - r.left + 12}px`;
  tooltip.style.top = `${e.clientY - r.top + 12}px`;
  tooltip.hidden = false;
});
stage.addEventListener('pointerleave', () => { tooltip.hidden = true; });
stage.addEventListener('click', (e) => {
  const i = nodeAt(e.clientX, e.clientY);
  if (i < 0 || !view) return;
  if (i === 0) { select_(0); return; }
  centreOn(view.ids[i]!);
});

stage.addEventListener('keydown', (e) => {
  if (!view) return;
  const n = view.ids.length;
  let handled = true;
  switch (e.key) {
    case 'ArrowRight': case 'ArrowDown': select_(selected < 0 ? 0 : (selected + 1) % n, true); break;
    case 'ArrowLeft': case 'ArrowUp': select_(selected <= 0 ? n - 1 : selected - 1, true); break;
    case 'Home': select_(0, true); break;
    case 'End': select_(n - 1, true); break;
    case 'Enter': case ' ': if (selected > 0) centreOn(view.ids[selected]!); break;
    case '+': case '=': select(stage).call(zoomer.scaleBy, 1.3); break;
    case '-': case '_': select(stage).call(zoomer.scaleBy, 1 / 1.3); break;
    case '0': fit(); break;
    case 'Escape': selected = -1; highlight = null; save({ selected: undefined }); redraw(); break;
    default: handled = false;
  }
  if (handled) e.preventDefault();
});

function select_(i: number, reveal = false): void {
  if (!view) return;
  selected = i;
  save({ selected: view.ids[i] });
  if (reveal && positions) {
    const { width, height } = stageSize();
    const x = transform.x + transform.k * positions[2 * i]!, y = transform.y + transform.k * positions[2 * i + 1]!;
    if (x < 20 || y < 20 || x > width - 20 || y > height - 20) {
      transform = { k: transform.k, x: width / 2 - transform.k * positions[2 * i]!, y: height / 2 - transform.k * positions[2 * i + 1]! };
      applyZoom();
    }
  }
  redraw();
}

function centreButton(id: number): HTMLElement {
  const b = custom('vscode-button', { secondary: '', class: 'centre-here' }, `Centre on node ${id}`);
  b.addEventListener('click', () => centreOn(id));
  return b;
}

function drawDetails(): void {
  if (!view || selected < 0 || selected >= view.ids.length) { details.replaceChildren(); return; }
  const i = selected;
  const total = view.weights.reduce((a, b) => a + b, 0);
  const parts: Array<Node | string> = [
    el('b', {}, `Node ${view.ids[i]}`),
    i === 0 ? ' — the centre' : ` — hop ${view.hops[i]}`,
    `, influence ${num(view.weights[i]!)}${total > 0 ? ` (${pct(view.weights[i]! / total)} of the drawn weight)` : ''}`,
  ];
  const label = view.labels?.[i];
  if (label !== undefined && label !== null) parts.push(', label ', el('code', { class: 'label-text' }, String(label)));
  if ((state.mode ?? 'hops') === 'wl' && wl && wl.colours[i]! >= 0) {
    const same = view.ids.filter((_, j) => j !== i && wl!.colours[j] === wl!.colours[i]);
    parts.push(same.length ? `. Looks the same as ${same.slice(0, 12).join(', ')}${same.length > 12 ? ', …' : ''} to 1-WL` : '. No other drawn node shares its 1-WL colour');
    parts.push(` (${plural(wl.classSizes[i]!, 'node')} with this colour in the graph).`);
  } else parts.push('.');
  details.replaceChildren(el('span', {}, ...parts), ' ', ...(i > 0 ? [centreButton(view.ids[i]!)] : []));
}

// ---- legend, summary, side charts ----------------------------------------------------------------------

function swatch(colour: string, dashed = false): HTMLElement {
  const s = el('span', { class: dashed ? 'swatch line dashed' : 'swatch' });
  s.style.setProperty('--swatch', colour);
  return s;
}

function drawLegend(): void {
  if (!view) return;
  const mode = state.mode ?? 'hops';
  const dark = isDarkBackground(theme);
  legend.replaceChildren();
  if (mode === 'hops') {
    const items = view.perHop.map((c, k) => el('span', { class: 'item' }, swatch(hopColour(k, Math.max(1, view!.layers), dark)), k === 0 ? 'centre' : `hop ${k}`, el('span', { class: 'muted' }, ` ${view!.shownPerHop[k]}${view!.sampled && view!.shownPerHop[k] !== c ? `/${c}` : ''}`)));
    legend.append(el('span', { class: 'muted' }, 'Colour = hops from the centre; size = influence on it. '), ...items);
    if (view.edgeDirs.some((d) => d !== 3)) legend.append(el('span', { class: 'muted' }, ' Arrows: one-way edges, pointing where messages go.'));
  } else if (mode === 'wl') {
    legend.append(el('span', { class: 'muted' }, wl
      ? 'Same colour = 1-WL cannot tell these nodes apart: without distinguishing node features every message-passing network gives them the same output. Grey: no other drawn node has its colour.'
      : 'Computing 1-WL classes…'));
  } else {
    const neutral = mix(theme.foreground, theme.background, 0.45);
    legend.append(
      el('span', { class: 'item' }, swatch(curvatureColour(-1, dark, neutral)), 'negative curvature: many paths squeeze through (over-squashing)'),
      el('span', { class: 'item' }, swatch(curvatureColour(0, dark, neutral)), 'flat'),
      el('span', { class: 'item' }, swatch(curvatureColour(1, dark, neutral)), 'positive: well connected'),
      el('span', { class: 'item' }, swatch(theme.foreground, true), 'bridge: every message between its two sides crosses it'),
    );
    if (!bottlenecks) legend.append(el('span', { class: 'muted' }, ' Computing curvature…'));
  }
}

function drawSummary(): void {
  if (!view) return;
  const v = view;
  const L = plural(v.layers, 'layer');
  const how = v.symmetrised ? 'messages both ways' : v.flow === 'source-to-target' ? 'row 0 sends to row 1' : 'row 1 sends to row 0';
  const rule = v.selfLoops ? 'every node within reach' : `only nodes with a walk of exactly ${L}`;
  let text = `Node ${v.node} hears from ${plural(v.total, 'node')} — ${pct(v.coverage)} of ${v.graphNodes.toLocaleString('en-US')} — after ${L} (${how}; ${rule}).`;
  if (!v.centreInField) text += ` Without self-loops its own state does not survive ${L}.`;
  if (v.layers > 0 && v.perHop[v.layers] === 0 && v.total < v.graphNodes) text += ' The field stopped growing: no further node can reach it.';
  text += v.sampled ? ` Showing ${v.shown.toLocaleString('en-US')} of ${v.total.toLocaleString('en-US')} (a fixed sample).` : '';
  if (v.edgesTotal > v.edgeDirs.length) text += ` ${v.edgeDirs.length.toLocaleString('en-US')} of ${v.edgesTotal.toLocaleString('en-US')} edges among them are drawn, those nearest the centre.`;
  if (v.fileErrors) text += ` The file has ${plural(v.fileErrors, 'error')}; only in-range edges are used.`;
  summary.textContent = text;
  title.textContent = `Receptive field of node ${v.node}`;
}

function chartSvg(fig: HTMLElement, w: number, h: number, label: string) {
  return select(fig).append('svg').attr('width', w).attr('height', h).attr('role', 'img').attr('aria-label', label);
}

function drawHopBars(): void {
  if (!view) return;
  const v = view;
  const dark = isDarkBackground(theme);
  hopChart.replaceChildren(el('figcaption', {}, 'Nodes at each hop distance'));
  const w = 280, h = 150, left = 40, bottom = 22, top = 14;
  const x = scaleBand<number>().domain(v.perHop.map((_, k) => k)).range([left, w - 6]).padding(0.18);
  const y = scaleLinear().domain([0, Math.max(1, ...v.perHop)]).nice().range([h - bottom, top]);
  const svgSel = chartSvg(hopChart, w, h, `Nodes per hop: ${v.perHop.map((c, k) => `hop ${k}: ${c}`).join(', ')}`);
  svgSel.selectAll('rect.total').data(v.perHop).join('rect').attr('class', 'bar total')
    .attr('x', (_, k) => x(k)!).attr('width', x.bandwidth())
    .attr('y', (c) => y(c)).attr('height', (c) => y(0) - y(c))
    .attr('fill', (_, k) => hopColour(k, Math.max(1, v.layers), dark))
    .attr('stroke', theme.outline).attr('stroke-width', theme.outlineWidth)
    .append('title').text((c, k) => `hop ${k}: ${c} node${c === 1 ? '' : 's'}${v.sampled ? `, ${v.shownPerHop[k]} drawn` : ''}`);
  svgSel.selectAll('text.count').data(v.perHop).join('text').attr('class', 'count')
    .attr('x', (_, k) => x(k)! + x.bandwidth() / 2).attr('y', (c) => y(c) - 3).attr('text-anchor', 'middle').text((c) => String(c));
  svgSel.selectAll('text.tick').data(v.perHop).join('text').attr('class', 'tick')
    .attr('x', (_, k) => x(k)! + x.bandwidth() / 2).attr('y', h - 6).attr('text-anchor', 'middle').text((_, k) => String(k));
  hopChart.append(el('p', { class: 'muted small' }, `Total ${v.total.toLocaleString('en-US')} (${pct(v.coverage)} of the graph)${v.sampled ? `; ${v.shown.toLocaleString('en-US')} drawn` : ''}.`));
}

function lineChart(fig: HTMLElement, opts: {
  caption: string; label: string; xs: number[]; series: Array<{ ys: number[]; cls: string; name: string }>;
  yLog?: boolean; yMax?: number; marker?: number; point?: { x: number; y: number; name: string };
}): void {
  fig.replaceChildren(el('figcaption', {}, opts.caption));
  const w = 280, h = 150, left = 44, bottom = 22, top = 10, right = 8;
  const x = scaleLinear().domain([Math.min(...opts.xs), Math.max(...opts.xs)]).range([left, w - right]);
  const all = opts.series.flatMap((s) => s.ys).filter((y) => Number.isFinite(y));
  const positive = all.filter((y) => y > 0);
  const useLog = opts.yLog === true && positive.length === all.length && positive.length > 0;
  const y = useLog
    ? scaleLog().domain([Math.min(...positive), Math.max(...positive)]).nice().range([h - bottom, top])
    : scaleLinear().domain([0, opts.yMax ?? Math.max(1e-12, ...all)]).nice().range([h - bottom, top]);
  const s = chartSvg(fig, w, h, opts.label);
  if (opts.marker !== undefined && opts.marker >= x.domain()[0]! && opts.marker <= x.domain()[1]!) {
    s.append('line').attr('class', 'marker').attr('x1', x(opts.marker)).attr('x2', x(opts.marker)).attr('y1', top).attr('y2', h - bottom);
  }
  for (const series of opts.series) {
    const pts = opts.xs.map((xv, i) => [x(xv), y(series.ys[i]!)] as [number, number]).filter((p) => Number.isFinite(p[1]));
    s.append('path').attr('class', `line ${series.cls}`).attr('d', d3line()(pts) ?? '').append('title').text(series.name);
    s.append('g').selectAll('circle').data(pts).join('circle').attr('class', `dot ${series.cls}`).attr('cx', (p) => p[0]).attr('cy', (p) => p[1]).attr('r', 2.5);
  }
  if (opts.point && Number.isFinite(opts.point.y) && (!useLog || opts.point.y > 0)) {
    s.append('circle').attr('class', 'dot this').attr('cx', x(opts.point.x)).attr('cy', y(opts.point.y)).attr('r', 4.5).append('title').text(opts.point.name);
  }
  for (const xv of opts.xs) s.append('text').attr('class', 'tick').attr('x', x(xv)).attr('y', h - 6).attr('text-anchor', 'middle').text(String(xv));
  const ticks = useLog ? (y as ReturnType<typeof scaleLog>).ticks(3) : y.ticks(4);
  const fmtTick = (t: number) => (useLog ? t.toExponential(0) : opts.yMax === 1 ? `${Math.round(t * 100)}%` : String(+t.toPrecision(3)));
  for (const t of ticks.slice(0, 6)) s.append('text').attr('class', 'tick').attr('x', left - 5).attr('y', y(t) + 3).attr('text-anchor', 'end').text(fmtTick(t));
}

function drawCoverage(): void {
  if (!view) return;
  const c = view.coverageCurve;
  lineChart(coverageChart, {
    caption: `Share of the graph within reach, by layer count (${c.allNodes ? 'all' : plural(c.sampled, 'sampled node')}${c.allNodes ? ' nodes' : ''})`,
    label: `Coverage by layers. Median: ${c.median.map((m, i) => `${c.layers[i]}: ${pct(m)}`).join(', ')}. 90th percentile: ${c.p90.map((m) => pct(m)).join(', ')}.`,
    xs: c.layers, yMax: 1, marker: view.layers,
    series: [{ ys: c.median, cls: 'median', name: 'median' }, { ys: c.p90, cls: 'p90', name: '90th percentile' }],
    ...(view.layers >= 1 ? { point: { x: view.layers, y: view.coverage, name: `node ${view.node}: ${pct(view.coverage)}` } } : {}),
  });
  coverageChart.append(el('p', { class: 'muted small' }, el('span', { class: 'key median' }, '—'), ' median  ', el('span', { class: 'key p90' }, '- -'), ' 90th percentile  ', el('span', { class: 'key this' }, '●'), ` node ${view.node}`));
}

function drawSmoothing(): void {
  if (!smoothing) {
    smoothingChart.hidden = !smoothingNote;
    if (smoothingNote) smoothingChart.replaceChildren(el('figcaption', {}, 'Feature smoothness'), el('p', { class: 'muted small' }, `No curve: ${smoothingNote}`));
    return;
  }
  const s = smoothing;
  smoothingChart.hidden = false;
  const L = Math.min(view?.layers ?? 0, s.steps);
  const ratio = s.caiWang[0]! > 0 ? s.caiWang[L]! / s.caiWang[0]! : NaN;
  lineChart(smoothingChart, {
    caption: `Feature smoothness after k propagation steps (Dirichlet energy of ${s.featureTensor}, Cai & Wang 2020)`,
    label: `Energy by step: ${s.caiWang.map((e, k) => `${k}: ${num(e)}`).join(', ')}`,
    xs: s.caiWang.map((_, k) => k), yLog: true, marker: L,
    series: [{ ys: s.caiWang, cls: 'median', name: 'degree-normalised Dirichlet energy' }],
  });
  const notes: string[] = [];
  if (Number.isFinite(ratio)) notes.push(`After ${plural(L, 'layer')} the energy is ${pct(ratio)} of the start: ${ratio < 0.05 ? 'features are nearly washed out (over-smoothing).' : ratio < 0.3 ? 'a strong pull towards the same values.' : 'features still differ across edges.'}`);
  if (s.colsUsed < s.cols) notes.push(`First ${s.colsUsed} of ${s.cols} feature columns.`);
  if (s.nonFinite) notes.push(`${plural(s.nonFinite, 'non-finite value')} counted as 0.`);
  smoothingChart.append(el('p', { class: 'muted small' }, notes.join(' ')));
}

function drawModeInfo(): void {
  const mode = state.mode ?? 'hops';
  modeInfo.replaceChildren();
  if (!view) return;
  if (mode === 'wl') {
    if (!wl) { modeInfo.append(el('p', { class: 'muted' }, 'Computing 1-WL classes…')); return; }
    const rounds = wl.classesPerRound.join(' → ');
    modeInfo.append(el('h2', {}, '1-WL classes'),
      el('p', {}, `Colour refinement over the whole graph: ${rounds} classes${wl.stableAfter !== null ? `, stable after round ${wl.stableAfter}` : ''}. ${plural(wl.sharedInGraph, 'node')} of ${wl.graphNodes.toLocaleString('en-US')} share their colour with another node.`));
    if (!wl.groups.length) { modeInfo.append(el('p', { class: 'muted' }, 'Every drawn node has a colour of its own.')); return; }
    const ul = el('ul', { class: 'groups' });
    wl.groups.slice(0, 30).forEach((g, i) => {
      const b = el('button', { class: 'link', type: 'button' }, swatch(groupColour(i, isDarkBackground(theme))), `${g.nodes.length} look alike: ${g.nodes.slice(0, 10).join(', ')}${g.nodes.length > 10 ? ', …' : ''}`, el('span', { class: 'muted' }, ` (${g.inGraph} in the graph)`));
      b.addEventListener('click', () => {
        const members = new Set(g.nodes);
        highlight = new Set(view!.ids.map((id, j) => (members.has(id) ? j : -1)).filter((j) => j >= 0));
        redraw();
      });
      ul.append(el('li', {}, b));
    });
    if (wl.groups.length > 30) ul.append(el('li', { class: 'muted' }, `… ${wl.groups.length - 30} more groups`));
    modeInfo.append(ul);
  } else if (mode === 'bottlenecks') {
    if (!bottlenecks) { modeInfo.append(el('p', { class: 'muted' }, 'Computing curvature…')); return; }
    const b = bottlenecks;
    const drawnBridges = b.bridge.filter(Boolean).length;
    modeInfo.append(el('h2', {}, 'Bottlenecks'),
      el('p', {}, `Balanced Forman curvature (Topping et al. 2022) of each drawn edge; the most negative edges are where over-squashing happens. ${plural(drawnBridges, 'bridge')} drawn, ${b.bridgesInGraph.toLocaleString('en-US')} in the graph.${b.balancedComputed ? '' : ' The drawing\'s neighbourhood is very large: only Forman curvature was computed.'}`));
    // Bridges first (every message between their sides crosses them), then the most negative curvature.
    const order = b.balancedForman.map((_, e) => e).filter((e) => b.forman[e] !== null)
      .sort((p, q) => Number(b.bridge[q]) - Number(b.bridge[p]) || (b.balancedForman[p] ?? b.forman[p]!) - (b.balancedForman[q] ?? b.forman[q]!));
    const ul = el('ul', { class: 'groups' });
    for (const e of order.slice(0, 12)) {
      const a = view.edges[2 * e]!, c = view.edges[2 * e + 1]!;
      const bf = b.balancedForman[e];
      const text = `${view.ids[a]} — ${view.ids[c]}: ${bf !== null ? `balanced ${num(bf!)}, ` : ''}Forman ${b.forman[e]}${b.bridge[e] ? ', bridge' : ''}`;
      const btn = el('button', { class: 'link', type: 'button' }, text);
      btn.addEventListener('click', () => { highlight = new Set([a, c]); redraw(); });
      ul.append(el('li', {}, btn));
    }
    modeInfo.append(ul);
  }
}

function drawSide(): void {
  drawHopBars();
  drawCoverage();
  drawSmoothing();
  drawModeInfo();
}

// ---- mode data ---------------------------------------------------------------------------------------

let wlSeq = -1, bnSeq = -1;
function ensureModeData(): void {
  if (!view) return;
  const mode = state.mode ?? 'hops';
  if (mode === 'wl' && !wl && wlSeq !== seq) { wlSeq = seq; post({ type: 'wl', seq, nodes: view.ids }); }
  if (mode === 'bottlenecks' && !bottlenecks && bnSeq !== seq) {
    bnSeq = seq;
    const pairs: number[] = [];
    for (const i of view.edges) pairs.push(view.ids[i]!);
    post({ type: 'bottlenecks', seq, edges: pairs });
  }
  drawModeInfo();
}

// ---- export ------------------------------------------------------------------------------------------

function exportName(ext: string): string {
  const base = (file?.name ?? 'graph').replace(/\.[^.]+$/, '').replace(/[^\w.-]+/g, '_');
  return `${base}-node${view?.node ?? 0}-L${view?.layers ?? 0}-${state.mode ?? 'hops'}.${ext}`;
}

function exportSvg(): void {
  if (!view || !positions) return;
  post({ type: 'exportSvg', text: svgText(document, buildScene()), name: exportName('svg') });
}

async function exportPng(): Promise<void> {
  if (!view || !positions) return;
  try {
    post({ type: 'exportPng', bytes: await pngBytes(document, buildScene()), name: exportName('png') });
  } catch (e) {
    showError(`Could not make the PNG: ${(e as Error).message}`);
  }
}

// ---- theme and size ----------------------------------------------------------------------------------

// VS Code switches the body class and rewrites the theme variables on <html style> when the theme changes.
const themeWatch = new MutationObserver(() => { theme = readTheme(); if (viewFitted) fit(); redraw(); drawSide(); });
themeWatch.observe(document.body, { attributes: true, attributeFilter: ['class'] });
themeWatch.observe(document.documentElement, { attributes: true, attributeFilter: ['style'] });
let resizeTimer: ReturnType<typeof setTimeout> | undefined;
new ResizeObserver(() => {
  clearTimeout(resizeTimer);
  resizeTimer = setTimeout(() => { if (viewFitted) fit(); redraw(); }, 60);
}).observe(stage);

// ---- messages ----------------------------------------------------------------------------------------

window.addEventListener('message', (e: MessageEvent<PanelMessage>) => {
  const m = e.data;
  switch (m.type) {
    case 'init': {
      const sameFile = state.uri === m.file.uri;
      file = m.file;
      fileLabel.textContent = m.file.name;
      fileLabel.title = m.file.uri;
      if (!sameFile) save({ uri: m.file.uri, name: m.file.name, zoom: undefined, selected: undefined, flow: undefined });
      if (m.node !== undefined) { if (m.node !== state.node) save({ zoom: undefined }); save({ node: m.node }); }
      if (state.node === undefined) save({ node: 0 });
      firstDrawing = true;
      syncControls();
      requestField();
      post({ type: 'smoothing' });
      break;
    }
    case 'field': {
      if (m.seq !== seq) return;
      view = m.view;
      wl = undefined; bottlenecks = undefined;
      const keep = state.selected !== undefined ? view.ids.indexOf(state.selected) : -1;
      selected = keep;
      highlight = null;
      if (!state.flow) syncControls();
      drawSummary();
      drawSide();
      ensureModeData();
      void layOut(view, seq);
      break;
    }
    case 'wl':
      if (m.seq !== seq) return;
      wl = m.data;
      redraw(); drawModeInfo();
      break;
    case 'bottlenecks':
      if (m.seq !== seq) return;
      bottlenecks = m.data;
      redraw(); drawModeInfo();
      break;
    case 'smoothing':
      smoothing = m.data;
      smoothingNote = m.note;
      drawSmoothing();
      break;
    case 'changed':
      previous.clear();
      requestField();
      post({ type: 'smoothing' });
      break;
    case 'exported':
      status.textContent = `Saved ${m.path}`;
      break;
    case 'error':
      if (m.seq === undefined || m.seq === seq) showError(m.message);
      break;
  }
});

syncControls();
post({ type: 'ready' });

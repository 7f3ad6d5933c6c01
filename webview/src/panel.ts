/**
 * Receptive-field panel webview: what an L-layer message-passing model lets one node hear, drawn
 * as rings of hop distance, with per-hop counts, the coverage curve and the smoothing curve beside
 * it, and two structure views (1-WL classes, bottlenecks). Every number comes from the language
 * server through the extension host (common/panel-messages.ts); the webview only lays out and draws.
 * Strings that come from files are only ever set as text.
 *
 * This file is the page itself: it assembles the parts, keeps the model (panel-model.ts) and
 * answers the host's messages. The parts: panel-controls.ts (the toolbars), panel-stage.ts (the
 * drawing, zoom, hit-testing, legend and details), panel-charts.ts (the side column),
 * panel-layout-runner.ts (layouts in the worker or the page).
 */
import type { FieldQuery, PanelMessage, PanelRequest, PanelState } from '../../common/panel-messages';
import type { FieldViewPayload } from '../../common/protocol';
import { el } from './dom';
import { readTheme } from './panel-colours';
import { drawCoverage, drawHopBars, drawModeInfo as drawModeList, drawSmoothing as drawSmoothingCurve } from './panel-charts';
import { createControls } from './panel-controls';
import { FieldLayouts, LayoutRunner } from './panel-layout-runner';
import { viewMode, type PanelModel } from './panel-model';
import { pct, plural } from './panel-numbers';
import { pngBytes, svgText } from './panel-render';
import { nodeRadii, Stage } from './panel-stage';
import { pairAsView, pairSummary } from './panel-pair';
import { drawCeiling, drawTypeHops } from './panel-types';

interface VsCodeApi {
  postMessage(m: PanelRequest): void;
  getState(): PanelState | undefined;
  setState(s: PanelState): void;
}
declare function acquireVsCodeApi(): VsCodeApi;

const vscode = acquireVsCodeApi();
const post = (m: PanelRequest) => vscode.postMessage(m);
const model: PanelModel = {
  state: vscode.getState() ?? {},
  save: (patch) => { model.state = { ...model.state, ...patch }; vscode.setState(model.state); },
  file: undefined, seq: 0,
  view: undefined, pair: undefined, wl: undefined, bottlenecks: undefined, smoothing: undefined, smoothingNote: undefined,
  ceiling: undefined, ceilingNote: undefined,
  theme: readTheme(),
};
const save = (patch: Partial<PanelState>) => model.save(patch);

// ---- page ------------------------------------------------------------------------------------------

const app = document.getElementById('app') ?? document.body.appendChild(el('main', { id: 'app' }));
const configEl = document.getElementById('hopscope-panel-config');
const workerUrl = configEl?.getAttribute('data-layout-worker') ?? '';

const controls = createControls(model, {
  requestField: () => requestField(),
  centreOn: (node) => centreOn(node),
  pairWith: (node, other) => pairWith(node, other),
  find: (node) => stage.find(node),
  modeChanged: () => { stage.highlight = null; ensureModeData(); stage.redraw(); },
  fit: () => stage.fit(),
  exportSvg: () => exportSvg(),
  exportPng: () => { void exportPng(); },
});
const title = el('h1', { id: 'title' }, 'Receptive field');
const fileLabel = el('span', { id: 'file-name', class: 'file' });
const summary = el('p', { id: 'summary', 'aria-live': 'polite' }, 'Waiting for the graph…');
const errorBox = el('p', { id: 'error', class: 'error', role: 'alert', hidden: '' });
const status = el('p', { id: 'status', class: 'muted' });
const hopChart = el('figure', { id: 'hop-bars', class: 'chart' });
const coverageChart = el('figure', { id: 'coverage-chart', class: 'chart' });
const smoothingChart = el('figure', { id: 'smoothing-chart', class: 'chart', hidden: '' });
const typeHopsChart = el('figure', { id: 'type-hops', class: 'chart', hidden: '' });
const ceilingChart = el('figure', { id: 'ceiling-chart', class: 'chart', hidden: '' });
/** Layers the ceiling chart covers (the slider's range). */
const CEILING_LAYERS = 8;
const modeInfo = el('section', { id: 'mode-info' });
const layouts = new LayoutRunner(workerUrl);
const fieldLayouts = new FieldLayouts(layouts);
const stage = new Stage(model, layouts, status, { centreOn: (node) => centreOn(node) });

app.replaceChildren(
  el('header', { class: 'top' }, title, fileLabel),
  ...controls.toolbars,
  summary, errorBox,
  el('div', { class: 'body' },
    el('div', { class: 'drawing' }, stage.element, stage.legend, stage.details, stage.keysHint),
    el('aside', { class: 'side' }, hopChart, typeHopsChart, ceilingChart, coverageChart, smoothingChart, modeInfo),
  ),
  status,
);

// ---- requests ----------------------------------------------------------------------------------------

function query(): FieldQuery {
  const state = model.state;
  return {
    node: state.node ?? 0,
    layers: state.layers ?? 2,
    ...(state.sendingRow !== undefined ? { sendingRow: state.sendingRow } : {}),
    symmetrise: state.symmetrise === true,
    selfLoops: state.selfLoops !== false,
    ...(state.pair !== undefined ? { pair: state.pair } : {}),
  };
}

function requestField(): void {
  if (!model.file) return;
  model.seq++;
  errorBox.hidden = true;
  stage.element.classList.add('busy');
  summary.textContent = model.state.pair !== undefined
    ? `Computing what the model sees of the pair ${model.state.node ?? 0}, ${model.state.pair}…`
    : `Computing the field of node ${model.state.node ?? 0}…`;
  post({ type: 'field', seq: model.seq, query: query() });
}

function centreOn(node: number): void {
  if (!Number.isInteger(node) || node < 0) { showError(`"${node}" is not a node id.`); return; }
  // Centring on the pair's other end leaves pair mode (a pair needs two different nodes).
  if (node === model.state.pair) { save({ pair: undefined }); controls.showPair(undefined); }
  save({ node, selected: undefined });
  stage.selected = -1;
  stage.highlight = null;
  controls.showNode(node);
  requestField();
}

/** Pair mode on (node, other), or back to one node when `other` is undefined. */
function pairWith(node: number, other: number | undefined): void {
  if (other !== undefined && (!Number.isInteger(other) || other < 0)) { showError('The "and node" box needs a node id (a whole number, 0 or more), or nothing for one node.'); return; }
  if (other !== undefined && other === node) { showError(`A pair needs two different nodes; both are ${node}.`); return; }
  save({ pair: other });
  centreOn(node);
}

function showError(message: string): void {
  errorBox.textContent = message;
  errorBox.hidden = false;
  stage.element.classList.remove('busy');
}

let wlSeq = -1, bnSeq = -1;
/** Asks for the data of the chosen structure view (once per field). */
function ensureModeData(): void {
  const view = model.view, seq = model.seq;
  if (!view) return;
  const mode = viewMode(model);
  if (mode === 'wl' && !model.wl && wlSeq !== seq) { wlSeq = seq; post({ type: 'wl', seq, nodes: view.ids }); }
  if (mode === 'bottlenecks' && !model.bottlenecks && bnSeq !== seq) {
    bnSeq = seq;
    const pairs: number[] = [];
    for (const i of view.edges) pairs.push(view.ids[i]!);
    post({ type: 'bottlenecks', seq, edges: pairs });
  }
  drawModeInfo();
}

async function layOut(v: FieldViewPayload, mySeq: number): Promise<void> {
  const r = await fieldLayouts.layOut(v, nodeRadii(v), () => mySeq === model.seq);
  if (r) stage.show(v, r);
}

// ---- summary and side column -------------------------------------------------------------------------

function drawSummary(): void {
  const v = model.view;
  if (!v) return;
  if (model.pair) {
    summary.textContent = pairSummary(model.pair);
    title.textContent = `What the model sees of the pair ${model.pair.u}, ${model.pair.v}`;
    return;
  }
  const L = plural(v.layers, 'layer');
  const how = v.symmetrised ? 'messages both ways' : v.sendingRow === 0 ? 'row 0 sends to row 1' : 'row 1 sends to row 0';
  const rule = v.selfLoops ? 'every node within reach' : `only nodes with a walk of exactly ${L}`;
  const which = v.graph ? ` (graph ${v.graph.index} of ${v.graph.of.toLocaleString('en-US')})` : '';
  const who = v.nodeTypes ? `${v.nodeTypes.centre.type} ${v.nodeTypes.centre.id} (node ${v.node})` : `Node ${v.node}`;
  let text = `${who}${which} hears from ${plural(v.total, 'node')} — ${pct(v.coverage)} of ${v.graphNodes.toLocaleString('en-US')} — after ${L} (${how}; ${rule}).`;
  if (!v.centreInField) text += ` Without self-loops its own state does not survive ${L}.`;
  if (v.layers > 0 && v.perHop[v.layers] === 0 && v.total < v.graphNodes) text += ' The field stopped growing: no further node can reach it.';
  text += v.sampled ? ` Showing ${v.shown.toLocaleString('en-US')} of ${v.total.toLocaleString('en-US')} (a fixed sample).` : '';
  if (v.edgesTotal > v.edgeDirs.length) text += ` ${v.edgeDirs.length.toLocaleString('en-US')} of ${v.edgesTotal.toLocaleString('en-US')} edges among them are drawn, those nearest the centre.`;
  if (v.fileErrors) text += ` The file has ${plural(v.fileErrors, 'error')}; only in-range edges are used.`;
  summary.textContent = text;
  title.textContent = `Receptive field of ${v.nodeTypes ? `${v.nodeTypes.centre.type} ${v.nodeTypes.centre.id}` : `node ${v.node}`}${v.graph ? ` in graph ${v.graph.index}` : ''}`;
}

function drawSmoothing(): void {
  drawSmoothingCurve(smoothingChart, model.smoothing, model.smoothingNote, model.view?.layers ?? 0);
}

function drawModeInfo(): void {
  drawModeList(modeInfo, model, (nodes) => { stage.highlight = nodes; stage.redraw(); });
}

function drawSide(): void {
  drawHopBars(hopChart, model.view, model.theme);
  drawTypeHops(typeHopsChart, model.pair ? undefined : model.view, model.theme);
  drawCeiling(ceilingChart, model.ceiling, model.ceilingNote, model.view?.layers ?? 0);
  // The coverage curve is a property of single nodes: hidden in pair mode.
  coverageChart.hidden = model.pair !== undefined;
  if (!model.pair) drawCoverage(coverageChart, model.view);
  drawSmoothing();
  drawModeInfo();
}

// ---- export ------------------------------------------------------------------------------------------

function exportName(ext: string): string {
  const base = (model.file?.name ?? 'graph').replace(/\.[^.]+$/, '').replace(/[^\w.-]+/g, '_');
  if (model.pair) return `${base}-pair${model.pair.u}-${model.pair.v}-L${model.pair.layers}-${viewMode(model)}.${ext}`;
  return `${base}-node${model.view?.node ?? 0}-L${model.view?.layers ?? 0}-${viewMode(model)}.${ext}`;
}

function exportSvg(): void {
  if (!stage.hasDrawing) return;
  post({ type: 'exportSvg', text: svgText(document, stage.buildScene()), name: exportName('svg') });
}

async function exportPng(): Promise<void> {
  if (!stage.hasDrawing) return;
  try {
    post({ type: 'exportPng', bytes: await pngBytes(document, stage.buildScene()), name: exportName('png') });
  } catch (e) {
    showError(`Could not make the PNG: ${(e as Error).message}`);
  }
}

// ---- theme -------------------------------------------------------------------------------------------

// VS Code switches the body class and rewrites the theme variables on <html style> when the theme changes.
const themeWatch = new MutationObserver(() => { model.theme = readTheme(); stage.refresh(); drawSide(); });
themeWatch.observe(document.body, { attributes: true, attributeFilter: ['class'] });
themeWatch.observe(document.documentElement, { attributes: true, attributeFilter: ['style'] });

// ---- messages ----------------------------------------------------------------------------------------

window.addEventListener('message', (e: MessageEvent<PanelMessage>) => {
  const m = e.data;
  switch (m.type) {
    case 'init': {
      const sameFile = model.state.uri === m.file.uri;
      const sameGraph = model.state.graph === m.file.graph;
      model.file = m.file;
      fileLabel.textContent = m.file.graph !== undefined ? `${m.file.name} · graph ${m.file.graph}` : m.file.name;
      fileLabel.title = m.file.uri;
      if (!sameFile || !sameGraph) save({ uri: m.file.uri, name: m.file.name, graph: m.file.graph, zoom: undefined, selected: undefined, sendingRow: undefined, pair: undefined });
      if (m.node !== undefined && m.node === model.state.pair) save({ pair: undefined });
      if (m.node !== undefined) { if (m.node !== model.state.node) save({ zoom: undefined }); save({ node: m.node }); }
      if (model.state.node === undefined) save({ node: 0 });
      stage.firstDrawing = true;
      controls.sync();
      requestField();
      post({ type: 'smoothing' });
      post({ type: 'ceiling', layers: CEILING_LAYERS });
      break;
    }
    case 'pair':
    case 'field': {
      if (m.seq !== model.seq) return;
      model.pair = m.type === 'pair' ? m.data : undefined;
      const view = model.view = m.type === 'pair' ? pairAsView(m.data) : m.view;
      model.wl = undefined; model.bottlenecks = undefined;
      const keep = model.state.selected !== undefined ? view.ids.indexOf(model.state.selected) : -1;
      stage.selected = keep;
      stage.highlight = null;
      // The file's own direction, and the node-type colouring offered only for a typed graph.
      controls.sync();
      drawSummary();
      drawSide();
      ensureModeData();
      void layOut(view, model.seq);
      break;
    }
    case 'wl':
      if (m.seq !== model.seq) return;
      model.wl = m.data;
      stage.redraw(); drawModeInfo();
      break;
    case 'bottlenecks':
      if (m.seq !== model.seq) return;
      model.bottlenecks = m.data;
      stage.redraw(); drawModeInfo();
      break;
    case 'smoothing':
      model.smoothing = m.data;
      model.smoothingNote = m.note;
      drawSmoothing();
      break;
    case 'ceiling':
      model.ceiling = m.data;
      model.ceilingNote = m.note;
      drawCeiling(ceilingChart, model.ceiling, model.ceilingNote, model.view?.layers ?? 0);
      break;
    case 'changed':
      fieldLayouts.forget();
      requestField();
      post({ type: 'smoothing' });
      post({ type: 'ceiling', layers: CEILING_LAYERS });
      break;
    case 'exported':
      status.textContent = `Saved ${m.path}`;
      break;
    case 'error':
      if (m.seq === undefined || m.seq === model.seq) showError(m.message);
      break;
  }
});

controls.sync();
post({ type: 'ready' });

/**
 * Tensor viewer webview: draws what the extension host sends (summary, pages of rows, column
 * statistics, histograms). Every string that comes from a file is set with textContent, never
 * parsed as HTML.
 */
import '@vscode-elements/elements/dist/vscode-badge/index.js';
import '@vscode-elements/elements/dist/vscode-button/index.js';
import '@vscode-elements/elements/dist/vscode-tabs/index.js';
import '@vscode-elements/elements/dist/vscode-tab-header/index.js';
import '@vscode-elements/elements/dist/vscode-tab-panel/index.js';
import { scaleBand, scaleLinear } from 'd3-scale';
import { chartSvg, el } from './dom';
import type { ViewerMessage, ViewerRequest, ViewerState } from '../../common/viewer-messages';
import { GraphTable, unpackTable } from './viewer-graphs';
import { datasetCeiling, datasetFacts, typedTables } from './viewer-typed';
import type { CeilingResult } from '../../common/ceiling';
import type { FileSummary, TensorPage, TensorStats } from '../../common/protocol';
import type { TensorReport } from '../../server/src/core/checks/check-set';
import { CODES } from '../../common/problem-codes';
import type { ProblemCode } from '../../server/src/core/formats/types';

interface VsCodeApi {
  postMessage(m: ViewerRequest): void;
  getState(): ViewerState | undefined;
  setState(s: ViewerState): void;
}
declare function acquireVsCodeApi(): VsCodeApi;

const vscode = acquireVsCodeApi();
const post = (m: ViewerRequest) => vscode.postMessage(m);
let state: ViewerState = vscode.getState() ?? {};
const save = (patch: Partial<ViewerState>) => { state = { ...state, ...patch }; vscode.setState(state); };

const ROW_HEIGHT = 22;
const PAGE_ROWS = 100;

let summary: FileSummary | undefined;
let fileName = '';
const pages = new Map<string, TensorPage>(); // key: tensor@pageIndex
const requested = new Set<string>();
const stats = new Map<string, TensorStats>();
/** A dataset's table of graphs: asked for once per summary, kept across renders. */
let graphTable: GraphTable | undefined;
let graphNote: string | undefined;
let graphTableAsked = false;
/** The dataset's accuracy ceiling: undefined until it comes (asked once per summary). */
let ceiling: CeilingResult | null | undefined;
let ceilingNote: string | undefined;
let ceilingAsked = false;

// ---- text ----------------------------------------------------------------------------------------

const fmt = (x: number | null | undefined): string =>
  x === null || x === undefined ? '—' : Number.isInteger(x) ? String(x) : Math.abs(x) >= 1e5 || (Math.abs(x) < 1e-3 && x !== 0) ? x.toExponential(3) : x.toFixed(4);
const app = document.getElementById('app')!;

// ---- rendering -----------------------------------------------------------------------------------

function render(): void {
  app.replaceChildren();
  if (!summary) { app.append(el('p', { class: 'muted' }, 'Reading…')); return; }
  if (summary.status !== 'ok' || !summary.report) {
    app.append(el('p', { class: 'muted' }, summary.status === 'checking' ? 'Checking this file…' : `This file cannot be shown (${summary.status}).`));
    return;
  }
  const r = summary.report;
  app.append(header(r.format, r.graph));
  if (r.problems.length) app.append(problemList(r.problems));
  if (r.typed) app.append(typedTables(r.typed, r.problems));
  if (r.dataset) app.append(graphsSection(r.dataset));
  app.append(tensorTable(r.tensors));
  const sel = r.tensors.find((t) => t.name === state.selected) ?? r.tensors[0];
  if (sel) app.append(detail(sel));
}

function header(format: string, g: NonNullable<FileSummary['report']>['graph']): HTMLElement {
  const h = el('header', { class: 'summary' });
  h.append(el('h1', { id: 'file-title' }, fileName), el('span', { class: 'format' }, format));
  if (summary?.size !== undefined) h.append(el('span', { class: 'muted' }, ` ${bytes(summary.size)}`));
  if (g) {
    const facts: Array<[string, string]> = [
      ['nodes', String(g.nodes)], ['edge entries', String(g.edges)], ['', g.directed ? 'directed' : 'undirected'],
      ['components', String(g.components)], ['self-loops', String(g.selfLoops)], ['duplicates', String(g.duplicateEdges)],
      ['one-way pairs', String(g.asymmetricPairs)], ['isolated', String(g.isolatedNodes)],
    ];
    const dl = el('div', { class: 'facts', id: 'graph-facts' });
    for (const [k, v] of facts) dl.append(el('span', { class: 'fact' }, el('b', {}, v), k ? ` ${k}` : ''));
    h.append(dl);
  }
  if (!summary?.report?.dataset && summary?.report?.tensors.some((t) => t.role === 'edge-index' || t.role === 'adjacency')) {
    const field = el('vscode-button', { secondary: '', id: 'open-field-panel', title: 'What an L-layer message-passing model lets one node hear' }, 'Receptive field…');
    field.addEventListener('click', () => post({ type: 'openFieldPanel' }));
    h.append(field);
  }
  if (summary?.graphFiles && summary.graphFiles.length > 1) {
    const others = summary.graphFiles.map((f) => f.split(/[\\/]/).pop()!).filter((f) => f !== fileName);
    h.append(el('p', { class: 'muted' }, `Checked as one graph with ${others.join(', ')}`));
  }
  return h;
}

function graphsSection(d: NonNullable<NonNullable<FileSummary['report']>['dataset']>): HTMLElement {
  const box = el('section', { class: 'graphs', id: 'graphs' });
  box.append(el('h2', {}, `Graphs (${d.graphs.toLocaleString('en-US')})`), datasetFacts(d));
  if (d.graphLabels || summary?.report?.tensors.some((t) => t.role === 'labels')) {
    if (!ceilingAsked) { ceilingAsked = true; post({ type: 'ceiling' }); }
    box.append(datasetCeiling(ceiling, ceilingNote, (g) => graphTable?.reveal(g)));
  }
  if (graphTable) {
    box.append(graphTable.element);
    // Re-attached: the scroll offset is put back once the table is in the page again.
    requestAnimationFrame(() => { graphTable?.restore(state.graphScroll ?? 0); });
  } else {
    box.append(el('p', { class: 'muted', id: 'graph-table-status' }, graphNote ?? 'Reading the table of graphs…'));
    if (!graphTableAsked) { graphTableAsked = true; post({ type: 'datasetTable' }); }
  }
  return box;
}

function problemList(problems: NonNullable<FileSummary['report']>['problems']): HTMLElement {
  const box = el('section', { class: 'problems', id: 'problems' });
  box.append(el('h2', {}, `Problems (${problems.length})`));
  const ul = el('ul', {});
  for (const p of problems) {
    const li = el('li', { class: `sev-${p.severity}` });
    const code = el('button', { class: 'code-link', title: 'Show what this code means' }, p.code);
    const explain = el('div', { class: 'explain', hidden: '' },
      CODES[p.code as ProblemCode]?.summary ?? '', ' ',
      el('a', { href: '#', class: 'table-link' }, 'Problem table'));
    code.addEventListener('click', () => { explain.hidden = !explain.hidden; });
    explain.querySelector('a')!.addEventListener('click', (e) => { e.preventDefault(); post({ type: 'openProblemTable', code: p.code }); });
    li.append(el('span', { class: 'sev' }, p.severity), code, el('span', { class: 'msg' }, p.message), explain);
    ul.append(li);
  }
  box.append(ul);
  const fix = el('vscode-button', { secondary: '', id: 'fixed-copy' }, 'Write a corrected copy…');
  fix.addEventListener('click', () => post({ type: 'writeFixedCopy' }));
  if (problems.some((p) => ['duplicate-edges', 'asymmetric-adjacency', 'transposed-edge-index', 'index-out-of-range', 'one-based-index', 'self-loops'].includes(p.code))) box.append(fix);
  return box;
}

function tensorTable(tensors: TensorReport[]): HTMLElement {
  const box = el('section', {});
  box.append(el('h2', {}, `Tensors (${tensors.length})`));
  const table = el('table', { class: 'tensors', id: 'tensor-table' });
  table.append(el('thead', {}, el('tr', {}, ...['name', 'dtype', 'shape', 'role', 'min', 'max', 'sum', 'non-finite'].map((h) => el('th', {}, h)))));
  const tbody = el('tbody', {});
  for (const t of tensors) {
    const tr = el('tr', { tabindex: '0', class: t.name === (state.selected ?? tensors[0]?.name) ? 'selected' : '' },
      el('td', {}, t.name), el('td', {}, t.dtype), el('td', { class: 'shape' }, `[${t.shape.join(', ')}]`), el('td', {}, t.role),
      el('td', { class: 'num' }, fmt(t.min)), el('td', { class: 'num' }, fmt(t.max)), el('td', { class: 'num' }, fmt(t.sum)),
      el('td', { class: t.nonFinite ? 'num bad' : 'num' }, String(t.nonFinite)));
    const choose = () => { save({ selected: t.name, scrollTop: 0 }); render(); };
    tr.addEventListener('click', choose);
    tr.addEventListener('keydown', (e) => { if (e.key === 'Enter' || e.key === ' ') { e.preventDefault(); choose(); } });
    tbody.append(tr);
  }
  table.append(tbody);
  box.append(table);
  return box;
}

function detail(t: TensorReport): HTMLElement {
  const box = el('section', { class: 'detail' });
  box.append(el('h2', {}, t.name, el('span', { class: 'muted' }, ` ${t.dtype} [${t.shape.join(', ')}]`)));
  const tabs = el('vscode-tabs', { 'selected-index': String(['values', 'columns', 'charts'].indexOf(state.view ?? 'values')) });
  const panels: Array<[string, HTMLElement]> = [['Values', valuesGrid(t)], ['Columns', columnTable(t)], ['Distributions', charts(t)]];
  for (const [title, panel] of panels) {
    tabs.append(el('vscode-tab-header', { slot: 'header' }, title));
    const p = el('vscode-tab-panel', {});
    p.append(panel);
    tabs.append(p);
  }
  tabs.addEventListener('vsc-tabs-select', (e) => {
    const i = (e as CustomEvent<{ selectedIndex: number }>).detail.selectedIndex;
    save({ view: (['values', 'columns', 'charts'] as const)[i] ?? 'values' });
  });
  box.append(tabs);
  return box;
}

// ---- values: a virtualised grid ------------------------------------------------------------------

function valuesGrid(t: TensorReport): HTMLElement {
  const rows = t.shape.length === 0 ? 1 : t.shape[0]!;
  const wrap = el('div', {});
  const note = el('p', { class: 'muted' });
  const scroller = el('div', { class: 'grid-scroll', id: 'values-grid', tabindex: '0' });
  const spacer = el('div', { class: 'grid-spacer' });
  spacer.style.height = `${rows * ROW_HEIGHT}px`;
  const body = el('div', { class: 'grid-rows' });
  scroller.append(spacer, body);
  wrap.append(note, scroller);
  const draw = () => {
    const first = Math.max(0, Math.floor(scroller.scrollTop / ROW_HEIGHT) - 5);
    const count = Math.ceil((scroller.clientHeight || 400) / ROW_HEIGHT) + 10;
    const last = Math.min(rows, first + count);
    body.replaceChildren();
    body.style.transform = `translateY(${first * ROW_HEIGHT}px)`;
    for (let r = first; r < last; r++) {
      const page = pages.get(`${t.name}@${Math.floor(r / PAGE_ROWS)}`);
      const row = el('div', { class: 'grid-row' }, el('span', { class: 'idx' }, String(r)));
      if (!page) {
        request(t.name, Math.floor(r / PAGE_ROWS));
        row.append(el('span', { class: 'muted' }, '…'));
      } else {
        const cells = page.rows[r - page.rowStart] ?? [];
        for (const v of cells) row.append(el('span', { class: typeof v === 'string' && /NaN|Infinity/.test(v) ? 'cell bad' : 'cell' }, typeof v === 'number' ? fmt(v) : String(v)));
        note.textContent = page.note ?? (page.colsShown < page.totalCols ? `Showing the first ${page.colsShown} of ${page.totalCols} columns.` : `${page.totalRows} rows × ${page.totalCols} columns`);
      }
      body.append(row);
    }
  };
  scroller.addEventListener('scroll', () => { save({ scrollTop: scroller.scrollTop }); draw(); });
  redrawGrid = draw;
  requestAnimationFrame(() => { scroller.scrollTop = state.scrollTop ?? 0; draw(); });
  return wrap;
}
let redrawGrid: (() => void) | undefined;

function request(tensor: string, pageIndex: number): void {
  const key = `${tensor}@${pageIndex}`;
  if (requested.has(key)) return;
  requested.add(key);
  post({ type: 'page', tensor, rowStart: pageIndex * PAGE_ROWS, rowCount: PAGE_ROWS });
}

// ---- column statistics ---------------------------------------------------------------------------

function columnTable(t: TensorReport): HTMLElement {
  const box = el('div', { id: 'column-stats' });
  const s = stats.get(t.name);
  if (!s) { post({ type: 'stats', tensor: t.name }); box.append(el('p', { class: 'muted' }, 'Computing…')); return box; }
  if (!s.columns.length) { box.append(el('p', { class: 'muted' }, 'No numeric columns.')); return box; }
  if (s.colsShown < s.totalCols) box.append(el('p', { class: 'muted' }, `Statistics for the first ${s.colsShown} of ${s.totalCols} columns.`));
  const table = el('table', { class: 'columns' });
  table.append(el('thead', {}, el('tr', {}, ...['column', 'min', 'max', 'mean', 'std', 'NaN', '±Inf'].map((h) => el('th', {}, h)))));
  const tb = el('tbody', {});
  s.columns.forEach((c, i) => tb.append(el('tr', {}, el('td', {}, String(i)), el('td', { class: 'num' }, fmt(c.min)), el('td', { class: 'num' }, fmt(c.max)),
    el('td', { class: 'num' }, fmt(c.mean)), el('td', { class: 'num' }, fmt(c.std)),
    el('td', { class: c.nan ? 'num bad' : 'num' }, String(c.nan)), el('td', { class: c.inf ? 'num bad' : 'num' }, String(c.inf)))));
  table.append(tb);
  box.append(table);
  return box;
}

// ---- histograms ----------------------------------------------------------------------------------

function charts(t: TensorReport): HTMLElement {
  const box = el('div', { id: 'charts' });
  const s = stats.get(t.name);
  if (!s) { post({ type: 'stats', tensor: t.name }); box.append(el('p', { class: 'muted' }, 'Computing…')); return box; }
  if (s.labelHistogram?.length) box.append(bars('Nodes per label', s.labelHistogram.map((b) => ({ key: String(b.value), count: b.count }))));
  if (s.degreeHistogram?.length) box.append(bars('Nodes per degree (in + out)', s.degreeHistogram.map((b) => ({ key: String(b.degree), count: b.count }))));
  if (!box.childElementCount) box.append(el('p', { class: 'muted' }, 'Histograms are drawn for labels and for edge indices / adjacency matrices.'));
  return box;
}

function bars(title: string, data: Array<{ key: string; count: number }>): HTMLElement {
  const shown = data.slice(0, 80);
  const fig = el('figure', { class: 'chart' });
  fig.append(el('figcaption', {}, title + (data.length > shown.length ? ` (first ${shown.length} of ${data.length} values)` : '')));
  const width = Math.max(240, Math.min(900, shown.length * 18 + 60)), height = 160, left = 40, bottom = 20;
  const x = scaleBand<string>().domain(shown.map((d) => d.key)).range([left, width - 4]).padding(0.15);
  const y = scaleLinear().domain([0, Math.max(1, ...shown.map((d) => d.count))]).nice().range([height - bottom, 6]);
  const svg = chartSvg(fig, width, height, title);
  svg.selectAll('rect').data(shown).join('rect')
    .attr('class', 'bar').attr('x', (d) => x(d.key)!).attr('width', x.bandwidth())
    .attr('y', (d) => y(d.count)).attr('height', (d) => y(0) - y(d.count))
    .append('title').text((d) => `${d.key}: ${d.count}`);
  const every = Math.ceil(shown.length / 20);
  svg.selectAll('text.tick').data(shown.filter((_, i) => i % every === 0)).join('text')
    .attr('class', 'tick').attr('x', (d) => x(d.key)! + x.bandwidth() / 2).attr('y', height - 6).attr('text-anchor', 'middle').text((d) => d.key);
  for (const v of y.ticks(4)) {
    svg.append('text').attr('class', 'tick').attr('x', left - 6).attr('y', y(v) + 4).attr('text-anchor', 'end').text(String(v));
  }
  return fig;
}

function bytes(n: number): string {
  return n < 1024 ? `${n} B` : n < 1024 ** 2 ? `${(n / 1024).toFixed(1)} KiB` : n < 1024 ** 3 ? `${(n / 1024 ** 2).toFixed(1)} MiB` : `${(n / 1024 ** 3).toFixed(2)} GiB`;
}

// ---- messages ------------------------------------------------------------------------------------

window.addEventListener('message', (e: MessageEvent<ViewerMessage>) => {
  const m = e.data;
  switch (m.type) {
    case 'summary':
      summary = m.summary; fileName = m.fileName;
      render();
      break;
    case 'page':
      pages.set(`${m.page.tensor}@${Math.floor(m.page.rowStart / PAGE_ROWS)}`, m.page);
      redrawGrid?.();
      break;
    case 'stats':
      stats.set(m.stats.tensor, m.stats);
      render();
      break;
    case 'datasetTable':
      try {
        graphTable = m.table ? new GraphTable(unpackTable(m.table), {
          ...(state.graphSort ? { sort: state.graphSort } : {}),
          ...(state.graphScroll !== undefined ? { scrollTop: state.graphScroll } : {}),
          ...(state.graphSelected !== undefined ? { selected: state.graphSelected } : {}),
          changed: (s) => save({ graphSort: s.sort, graphScroll: s.scrollTop, graphSelected: s.selected }),
          open: (graph) => post({ type: 'openGraph', graph }),
        }) : undefined;
        graphNote = m.table ? undefined : m.note ?? 'No table of graphs for this file.';
      } catch (err) {
        graphTable = undefined;
        graphNote = `The table of graphs could not be shown: ${(err as Error).message}`;
      }
      render();
      break;
    case 'ceiling':
      ceiling = m.data;
      ceilingNote = m.note;
      render();
      break;
    case 'changed':
      pages.clear(); requested.clear(); stats.clear();
      ceiling = undefined; ceilingNote = undefined; ceilingAsked = false;
      graphTable = undefined; graphTableAsked = false; graphNote = undefined;
      break;
    case 'error':
      app.prepend(el('p', { class: 'error' }, m.message));
      break;
  }
});

render();
post({ type: 'ready' });

/**
 * The viewer's table of graphs for a dataset of many graphs: one row per graph (index, nodes, edge
 * entries, label, split, problems), sortable by every column, virtualised so that 100,000 rows
 * scroll smoothly. The rows arrive as packed columns (common/columns.ts) and stay typed arrays;
 * sorting makes one Int32Array permutation; only the rows in view exist in the DOM, a fixed pool
 * of row elements whose text is rewritten as the table scrolls. Text goes in only as text.
 */
import { el } from './dom';
import { unpackColumn } from '../../common/columns';
import type { DatasetTable } from '../../common/protocol';
import type { GraphColumn } from '../../common/viewer-messages';

/** Height of one row in pixels (the stylesheet's .graph-row height). */
export const GRAPH_ROW_HEIGHT = 24;
/** Rows drawn beyond the visible ones, above and below. */
const OVERSCAN = 8;
export const SPLIT_NAMES = ['', 'train', 'val', 'test'] as const;

/** The table's columns as typed arrays. */
export interface GraphRows {
  graphs: number;
  nodes: Int32Array;
  edges: Int32Array;
  problems: Int32Array;
  /** Class codes (Int32Array, -1 none) with their names, or numeric targets (Float64Array, NaN none), or none. */
  classes?: { codes: Int32Array; names: string[] };
  values?: Float64Array;
  split?: Int32Array;
  problemCodes: Array<{ code: string; graphs: number }>;
}

/** The typed columns of a table from the server; throws on a column of the wrong kind or length. */
export function unpackTable(t: DatasetTable): GraphRows {
  const int = (c: Parameters<typeof unpackColumn>[0], what: string): Int32Array => {
    const a = unpackColumn(c);
    if (!(a instanceof Int32Array) || a.length !== t.graphs) throw new Error(`table of graphs: ${what} column has ${a.length} values for ${t.graphs} graphs`);
    return a;
  };
  const rows: GraphRows = {
    graphs: t.graphs, nodes: int(t.nodes, 'nodes'), edges: int(t.edges, 'edges'), problems: int(t.problems, 'problems'),
    problemCodes: t.problemCodes,
  };
  if (t.label?.kind === 'class') rows.classes = { codes: int(t.label.codes, 'label'), names: t.label.classes };
  else if (t.label?.kind === 'value') {
    const v = unpackColumn(t.label.values);
    if (!(v instanceof Float64Array) || v.length !== t.graphs) throw new Error('table of graphs: label column does not match the graphs');
    rows.values = v;
  }
  if (t.split) rows.split = int(t.split, 'split');
  return rows;
}

/** The label of graph g as shown. */
export function labelText(rows: GraphRows, g: number): string {
  if (rows.classes) { const c = rows.classes.codes[g]!; return c >= 0 ? rows.classes.names[c] ?? String(c) : ''; }
  if (rows.values) { const v = rows.values[g]!; return Number.isFinite(v) ? (Number.isInteger(v) ? String(v) : v.toPrecision(5)) : ''; }
  return '';
}

/**
 * Row order for a sort: graph indices, ties broken by index (ascending) whatever the direction.
 * Integer keys are folded with the index into one float64 (key · 2^b + index, exact below 2^53)
 * and sorted natively; numeric targets use a comparison sort with missing values last.
 */
export function sortOrder(rows: GraphRows, key: GraphColumn, descending: boolean): Int32Array {
  const n = rows.graphs;
  const order = new Int32Array(n);
  if (key === 'index') {
    for (let i = 0; i < n; i++) order[i] = descending ? n - 1 - i : i;
    return order;
  }
  if (key === 'label' && rows.values) {
    const v = rows.values;
    for (let i = 0; i < n; i++) order[i] = i;
    const sign = descending ? -1 : 1;
    order.sort((a, b) => {
      const x = v[a]!, y = v[b]!;
      const xm = x !== x, ym = y !== y;
      if (xm || ym) return xm === ym ? a - b : xm ? 1 : -1;
      return x === y ? a - b : sign * (x - y);
    });
    return order;
  }
  const col: Int32Array | undefined = key === 'nodes' ? rows.nodes : key === 'edges' ? rows.edges : key === 'problems' ? rows.problems
    : key === 'split' ? rows.split : key === 'label' ? rows.classes?.codes : undefined;
  if (!col) {
    for (let i = 0; i < n; i++) order[i] = i;
    return order;
  }
  let bits = 1;
  while (2 ** bits < n) bits++;
  const scale = 2 ** bits;
  // Keys are int32 (|key| < 2^31) and scale ≤ 2^21 for up to 2M graphs: |key · scale + i| < 2^53.
  const folded = new Float64Array(n);
  for (let i = 0; i < n; i++) folded[i] = (descending ? -col[i]! : col[i]!) * scale + i;
  folded.sort();
  for (let i = 0; i < n; i++) {
    const f = folded[i]!;
    order[i] = f - Math.floor(f / scale) * scale;
  }
  return order;
}

export interface GraphTableOptions {
  sort?: { key: GraphColumn; descending: boolean };
  scrollTop?: number;
  selected?: number;
  /** Sort, scroll or selection changed (saved by the page). */
  changed(s: { sort: { key: GraphColumn; descending: boolean }; scrollTop: number; selected: number | undefined }): void;
  /** Open graph g in the receptive-field panel. */
  open(g: number): void;
}

const COLUMNS: Array<{ key: GraphColumn; title: string; numeric: boolean; hint: string }> = [
  { key: 'index', title: 'graph', numeric: true, hint: 'Index of the graph in the dataset (0-based)' },
  { key: 'nodes', title: 'nodes', numeric: true, hint: 'Nodes of the graph' },
  { key: 'edges', title: 'edge entries', numeric: true, hint: 'Columns of the edge index that belong to the graph' },
  { key: 'label', title: 'label', numeric: false, hint: 'The graph\'s label' },
  { key: 'split', title: 'split', numeric: false, hint: 'The split that lists the graph' },
  { key: 'problems', title: 'problems', numeric: true, hint: 'Problems of the file whose listed places are in this graph' },
];

/** The virtualised, sortable table of graphs. */
export class GraphTable {
  readonly element: HTMLElement;
  private readonly scroller: HTMLElement;
  private readonly body: HTMLElement;
  private readonly spacer: HTMLElement;
  private readonly headers = new Map<GraphColumn, HTMLButtonElement>();
  private readonly openButton: HTMLButtonElement;
  private readonly chosen: HTMLElement;
  private pool: Array<{ row: HTMLElement; cells: HTMLElement[] }> = [];
  private order: Int32Array;
  private sortKey: GraphColumn;
  private descending: boolean;
  private selected: number | undefined;
  private frame = 0;
  /** Figures for tests: rows written into the pool by the last draw, and draws so far. */
  lastDrawn = 0;
  draws = 0;

  constructor(private readonly rows: GraphRows, private readonly opts: GraphTableOptions) {
    this.sortKey = opts.sort?.key ?? 'index';
    this.descending = opts.sort?.descending ?? false;
    this.selected = opts.selected !== undefined && opts.selected >= 0 && opts.selected < rows.graphs ? opts.selected : undefined;
    this.order = sortOrder(rows, this.sortKey, this.descending);

    const head = el('div', { class: 'graph-row graph-head', role: 'row' });
    for (const c of COLUMNS) {
      const b = el('button', { type: 'button', class: `graph-cell col-${c.key}${c.numeric ? ' num' : ''}`, role: 'columnheader', title: `${c.hint}. Click to sort.`, 'data-key': c.key }, c.title);
      b.addEventListener('click', () => this.sortBy(c.key));
      this.headers.set(c.key, b);
      head.append(b);
    }
    this.spacer = el('div', { class: 'grid-spacer' });
    this.body = el('div', { class: 'graph-rows', role: 'rowgroup' });
    this.scroller = el('div', {
      class: 'graph-scroll', id: 'graph-scroll', tabindex: '0', role: 'grid', 'aria-rowcount': String(rows.graphs + 1),
      'aria-label': `Graphs of the dataset, ${rows.graphs.toLocaleString('en-US')} rows. Arrow keys move, Enter opens the graph in the receptive-field panel.`,
    });
    this.scroller.append(this.spacer, this.body);
    this.chosen = el('span', { class: 'muted', id: 'graph-chosen' });
    this.openButton = el('button', { type: 'button', class: 'action', id: 'open-graph', disabled: '' }, 'Receptive field of the chosen graph…');
    this.openButton.addEventListener('click', () => { if (this.selected !== undefined) this.opts.open(this.selected); });
    this.element = el('section', { class: 'graph-table', id: 'graph-table' },
      el('div', { class: 'graph-bar' }, this.chosen, this.openButton),
      el('div', { class: 'graph-frame' }, head, this.scroller));

    this.spacer.style.height = `${rows.graphs * GRAPH_ROW_HEIGHT}px`;
    this.scroller.addEventListener('scroll', () => this.schedule());
    this.scroller.addEventListener('keydown', (e) => this.key(e));
    new ResizeObserver(() => this.schedule()).observe(this.scroller);
    this.markHeaders();
    this.showChosen();
    requestAnimationFrame(() => {
      if (opts.scrollTop) this.scroller.scrollTop = opts.scrollTop;
      this.draw();
    });
  }

  /** After the table was put back into the page: its scroll offset again, and the rows drawn. */
  restore(scrollTop: number): void {
    if (Math.abs(this.scroller.scrollTop - scrollTop) > 1) this.scroller.scrollTop = scrollTop;
    this.draw();
  }

  /** Chooses graph g and scrolls its row into view (the ceiling's groups link here). */
  reveal(g: number): void {
    if (!Number.isInteger(g) || g < 0 || g >= this.rows.graphs) return;
    const r = this.order.indexOf(g);
    const h = this.scroller.clientHeight || 400;
    this.scroller.scrollTop = Math.max(0, r * GRAPH_ROW_HEIGHT - h / 2);
    this.choose(g);
  }

  /** The graph index shown at row position r (after sorting). */
  graphAt(r: number): number {
    return this.order[r]!;
  }

  sortBy(key: GraphColumn, descending?: boolean): void {
    const desc = descending ?? (key === this.sortKey ? !this.descending : key === 'problems' || key === 'nodes' || key === 'edges');
    this.sortKey = key;
    this.descending = desc;
    this.order = sortOrder(this.rows, key, desc);
    this.markHeaders();
    this.scroller.scrollTop = 0;
    this.draw();
    this.notify();
  }

  /** Draws the visible rows now (scrolling schedules it once per frame). */
  draw(): void {
    this.frame = 0;
    const n = this.rows.graphs;
    const height = this.scroller.clientHeight || 400;
    const top = this.scroller.scrollTop;
    const first = Math.max(0, Math.floor(top / GRAPH_ROW_HEIGHT) - OVERSCAN);
    const want = Math.ceil(height / GRAPH_ROW_HEIGHT) + 2 * OVERSCAN + 1;
    while (this.pool.length < want) this.pool.push(this.makeRow());
    const last = Math.min(n, first + want);
    this.body.style.transform = `translateY(${first * GRAPH_ROW_HEIGHT}px)`;
    const { nodes, edges, problems, split } = this.rows;
    for (let i = 0; i < this.pool.length; i++) {
      const slot = this.pool[i]!;
      const r = first + i;
      if (r >= last) { slot.row.hidden = true; continue; }
      slot.row.hidden = false;
      const g = this.order[r]!;
      const c = slot.cells;
      c[0]!.textContent = String(g);
      c[1]!.textContent = String(nodes[g]);
      c[2]!.textContent = String(edges[g]);
      c[3]!.textContent = labelText(this.rows, g);
      c[4]!.textContent = split ? SPLIT_NAMES[split[g]!] ?? '' : '';
      const p = problems[g]!;
      c[5]!.textContent = p ? String(p) : '';
      c[5]!.className = p ? 'graph-cell col-problems num bad' : 'graph-cell col-problems num';
      slot.row.setAttribute('aria-rowindex', String(r + 2));
      slot.row.dataset['graph'] = String(g);
      const sel = g === this.selected;
      slot.row.classList.toggle('selected', sel);
      slot.row.setAttribute('aria-selected', String(sel));
    }
    this.lastDrawn = last - first;
    this.draws++;
    this.scroller.dataset['first'] = String(first);
  }

  private makeRow(): { row: HTMLElement; cells: HTMLElement[] } {
    const cells = COLUMNS.map((c) => el('span', { class: `graph-cell col-${c.key}${c.numeric ? ' num' : ''}`, role: 'gridcell' }));
    const row = el('div', { class: 'graph-row', role: 'row' }, ...cells);
    row.addEventListener('click', () => this.choose(Number(row.dataset['graph'])));
    row.addEventListener('dblclick', () => { const g = Number(row.dataset['graph']); this.choose(g); this.opts.open(g); });
    this.body.append(row);
    return { row, cells };
  }

  private schedule(): void {
    if (!this.frame) this.frame = requestAnimationFrame(() => { this.draw(); this.notify(); });
  }

  private choose(g: number): void {
    if (!Number.isInteger(g) || g < 0 || g >= this.rows.graphs) return;
    this.selected = g;
    this.showChosen();
    this.draw();
    this.notify();
  }

  private showChosen(): void {
    const g = this.selected;
    if (g === undefined) {
      this.chosen.textContent = `${this.rows.graphs.toLocaleString('en-US')} graphs. Choose one to see its receptive fields.`;
      this.openButton.setAttribute('disabled', '');
      this.openButton.textContent = 'Receptive field of the chosen graph…';
      return;
    }
    this.chosen.textContent = `Graph ${g}: ${this.rows.nodes[g]} nodes, ${this.rows.edges[g]} edge entries${labelText(this.rows, g) ? `, label ${labelText(this.rows, g)}` : ''}.`;
    this.openButton.removeAttribute('disabled');
    this.openButton.textContent = `Receptive field of graph ${g}…`;
  }

  private key(e: KeyboardEvent): void {
    const n = this.rows.graphs;
    if (!n) return;
    const pos = this.selected !== undefined ? this.order.indexOf(this.selected) : -1;
    const page = Math.max(1, Math.floor((this.scroller.clientHeight || 400) / GRAPH_ROW_HEIGHT) - 1);
    let to = -1;
    switch (e.key) {
      case 'ArrowDown': to = Math.min(n - 1, pos + 1); break;
      case 'ArrowUp': to = Math.max(0, pos - 1); break;
      case 'PageDown': to = Math.min(n - 1, pos + page); break;
      case 'PageUp': to = Math.max(0, pos - page); break;
      case 'Home': to = 0; break;
      case 'End': to = n - 1; break;
      case 'Enter': if (this.selected !== undefined) { e.preventDefault(); this.opts.open(this.selected); } return;
      default: return;
    }
    e.preventDefault();
    this.selected = this.order[to]!;
    // Keep the chosen row in view.
    const y = to * GRAPH_ROW_HEIGHT, h = this.scroller.clientHeight || 400;
    if (y < this.scroller.scrollTop) this.scroller.scrollTop = y;
    else if (y + GRAPH_ROW_HEIGHT > this.scroller.scrollTop + h) this.scroller.scrollTop = y + GRAPH_ROW_HEIGHT - h;
    this.showChosen();
    this.draw();
    this.notify();
  }

  private markHeaders(): void {
    for (const [k, b] of this.headers) {
      const on = k === this.sortKey;
      b.setAttribute('aria-sort', on ? (this.descending ? 'descending' : 'ascending') : 'none');
      b.classList.toggle('sorted', on);
      b.dataset['dir'] = on ? (this.descending ? '▼' : '▲') : '';
    }
  }

  private notify(): void {
    this.opts.changed({ sort: { key: this.sortKey, descending: this.descending }, scrollTop: this.scroller.scrollTop, selected: this.selected });
  }
}

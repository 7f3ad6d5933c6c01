/**
 * The panel's stage: the drawing of the receptive field (SVG, or a canvas when large), its zoom and
 * pan, finding the node under the pointer (a quadtree of the laid-out positions), the keyboard,
 * the tooltip, and the legend and details line under the drawing. Colours and shapes are resolved
 * into a `Scene` here; panel-render.ts paints it. Text from files only ever goes in as text.
 */
import '@vscode-elements/elements/dist/vscode-button/index.js';
import { select } from 'd3-selection';
import { zoom as d3zoom, zoomIdentity, type ZoomBehavior, type ZoomTransform } from 'd3-zoom';
import { quadtree, type Quadtree } from 'd3-quadtree';
import type { FieldViewPayload } from '../../common/protocol';
import { custom, el, type Child } from './dom';
import { curvatureColour, groupColour, hopColour, isDarkBackground, mix, pairEdgeColour } from './panel-colours';
import { PAIR_EDGE_NOTE, pairEdgeIndex, pairNodeTitle } from './panel-pair';
import { swatch } from './panel-charts';
import { typedName, typeFills, typeLegend } from './panel-types';
import type { LayoutResult, LayoutRunner } from './panel-layout-runner';
import { viewMode, type PanelModel } from './panel-model';
import { num, pct, plural } from './panel-numbers';
import { buildSvg, drawCanvas, fitTransform, type Scene, type Transform } from './panel-render';

/** Drawn nodes + edges above which the drawing switches from SVG to canvas. */
export const CANVAS_THRESHOLD = 1500;

/** Drawn radius per node: the centre largest, the others by the square root of their influence. */
export function nodeRadii(v: FieldViewPayload): number[] {
  const big = v.ids.length > 600;
  let wmax = 0;
  for (let i = 1; i < v.weights.length; i++) wmax = Math.max(wmax, v.weights[i]!);
  const base = big ? 2 : 3.5, span = big ? 5 : 9;
  return v.ids.map((_, i) => {
    if (i === 0) return base + span + 2;
    return base + span * Math.sqrt(wmax > 0 ? Math.max(0, v.weights[i]!) / wmax : 0);
  });
}

/** What the stage asks of the rest of the panel. */
export interface StageHost {
  /** Ask for the field around another node. */
  centreOn(node: number): void;
}

export class Stage {
  /** The drawing area (focusable; the zoom and the keyboard act on it). */
  readonly element = el('div', { id: 'stage', tabindex: '0', role: 'application', 'aria-roledescription': 'graph drawing', 'aria-describedby': 'keys-hint' });
  readonly legend = el('div', { id: 'legend' });
  readonly details = el('div', { id: 'details', 'aria-live': 'polite' });
  readonly keysHint = el('p', { id: 'keys-hint', class: 'muted hint' },
    'In the drawing: ←/→ step through the nodes, Enter centres on the selected node, + / − zoom, 0 fits, Esc clears.');
  private readonly tooltip = el('div', { id: 'tooltip', class: 'tooltip', hidden: '' });

  /** Index of the selected node in the field, or -1. */
  selected = -1;
  /** Node indices to emphasise (the others are dimmed), or null. */
  highlight: Set<number> | null = null;
  /** True until the first field after an `init` is drawn (its saved zoom is restored then). */
  firstDrawing = true;

  private positions: Float32Array | undefined;
  private rings: number[] = [];
  private scene: Scene | undefined;
  private transform: Transform = { k: 1, x: 0, y: 0 };
  /** True while the view is the fit of the drawing (not zoomed or panned since): it is fitted again
   *  when the stage changes size or the field changes. Only a view someone moved is saved. */
  private viewFitted = true;
  /** Set while fit() moves the view, so its zoom event is not taken for the user's. */
  private fitting = false;
  private lastCentre: number | undefined;
  private renderer: 'svg' | 'canvas' | undefined;
  private canvas: HTMLCanvasElement | undefined;
  private svg: SVGSVGElement | undefined;
  private tree: Quadtree<number> | undefined;
  private readonly zoomer: ZoomBehavior<HTMLDivElement, unknown>;
  private zoomTimer: ReturnType<typeof setTimeout> | undefined;
  private resizeTimer: ReturnType<typeof setTimeout> | undefined;

  constructor(
    private readonly model: PanelModel,
    private readonly layouts: Pick<LayoutRunner, 'route' | 'whyPage'>,
    private readonly status: HTMLElement,
    private readonly host: StageHost,
  ) {
    const stage = this.element;
    stage.append(this.tooltip);

    this.zoomer = d3zoom<HTMLDivElement, unknown>()
      .scaleExtent([0.02, 12])
      .filter((e: Event) => !(e.type === 'dblclick'))
      .on('zoom', (e: { transform: ZoomTransform }) => {
        this.transform = { k: e.transform.k, x: e.transform.x, y: e.transform.y };
        if (!this.fitting) this.viewFitted = false;
        this.paintTransform();
        this.saveZoomSoon();
      });
    select(stage).call(this.zoomer).on('dblclick.zoom', null);

    stage.addEventListener('pointermove', (e) => {
      const view = this.model.view;
      const i = this.nodeAt(e.clientX, e.clientY);
      if (i < 0 || !view) { this.tooltip.hidden = true; return; }
      this.tooltip.textContent = this.nodeTitle(view, i);
      const r = stage.getBoundingClientRect();
      this.tooltip.style.left = `${e.clientX - r.left + 12}px`;
      this.tooltip.style.top = `${e.clientY - r.top + 12}px`;
      this.tooltip.hidden = false;
    });
    stage.addEventListener('pointerleave', () => { this.tooltip.hidden = true; });
    stage.addEventListener('click', (e) => {
      const view = this.model.view;
      const i = this.nodeAt(e.clientX, e.clientY);
      if (i < 0 || !view) return;
      if (i === 0 || (i === 1 && this.model.pair)) { this.select(i); return; }
      this.host.centreOn(view.ids[i]!);
    });
    stage.addEventListener('keydown', (e) => this.onKey(e));

    new ResizeObserver(() => {
      clearTimeout(this.resizeTimer);
      this.resizeTimer = setTimeout(() => this.refresh(), 60);
    }).observe(stage);
  }

  /** True once a field has been laid out (and can be drawn or exported). */
  get hasDrawing(): boolean {
    return this.model.view !== undefined && this.positions !== undefined;
  }

  /** Draws a newly laid-out field: the saved view on the first drawing, else fitted when the
   *  centre changed or the view was still the fit. */
  show(v: FieldViewPayload, layout: LayoutResult): void {
    this.positions = layout.positions;
    this.rings = layout.rings;
    this.element.classList.remove('busy');
    const centreChanged = this.lastCentre !== v.node;
    this.lastCentre = v.node;
    const saved = this.model.state.zoom;
    if (this.firstDrawing && saved) { this.transform = { ...saved }; this.viewFitted = false; this.applyZoom(); }
    else if (this.firstDrawing || centreChanged || this.viewFitted) this.fit();
    else this.applyZoom();
    this.firstDrawing = false;
    this.redraw();
  }

  /** After a size or theme change: fitted again if the view was the fit, then redrawn. */
  refresh(): void {
    if (this.viewFitted) this.fit();
    this.redraw();
  }

  // ---- scene ------------------------------------------------------------------------------------------

  nodeTitle(v: FieldViewPayload, i: number): string {
    const wl = this.model.wl;
    if (this.model.pair) {
      const t = pairNodeTitle(this.model.pair, i);
      return wl && viewMode(this.model) === 'wl' && wl.colours[i]! >= 0 ? `${t} · 1-WL class of ${plural(wl.classSizes[i]!, 'node')} in the graph` : t;
    }
    const parts = [v.nodeTypes ? `${typedName(v.nodeTypes, i)} (node ${v.ids[i]})` : `node ${v.ids[i]}`, i === 0 ? 'centre' : `hop ${v.hops[i]}`, `influence ${num(v.weights[i]!)}`];
    const label = v.labels?.[i];
    if (label !== undefined && label !== null) parts.push(`label ${String(label)}`);
    if (wl && viewMode(this.model) === 'wl' && wl.colours[i]! >= 0) parts.push(`1-WL class of ${plural(wl.classSizes[i]!, 'node')} in the graph`);
    return parts.join(' · ');
  }

  /** The drawing with every colour resolved (also what the SVG and PNG exports draw). */
  buildScene(): Scene {
    const v = this.model.view!;
    const { wl, bottlenecks, theme } = this.model;
    const mode = viewMode(this.model);
    const dark = isDarkBackground(theme);
    const maxHop = Math.max(1, v.layers);
    const neutral = mix(theme.foreground, theme.background, 0.45);
    let nodeFill = v.hops.map((k) => hopColour(k, maxHop, dark));
    if (mode === 'wl' && wl) {
      const groupIndex = new Map<number, number>();
      wl.groups.forEach((g, i) => groupIndex.set(g.colour, i));
      nodeFill = v.ids.map((_, i) => {
        const gi = groupIndex.get(wl.colours[i]!);
        return gi === undefined ? neutral : groupColour(gi, dark);
      });
    } else if (mode === 'types' && v.nodeTypes) {
      nodeFill = typeFills(v.nodeTypes, theme);
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
    const nodeRadius = nodeRadii(v);
    const pair = this.model.pair;
    let edgeNote: Scene['edgeNote'];
    if (pair) {
      // Both ends as large as a centre; the pair's own edge in its own dashed colour, with a note.
      if (nodeRadius.length > 1) nodeRadius[1] = nodeRadius[0]!;
      const e = pairEdgeIndex(pair);
      if (e >= 0) {
        const colour = pairEdgeColour(dark);
        edgeStroke[e] = colour; edgeDash[e] = '8 4'; edgeWidth[e] = 3.5; edgeOpacity[e] = 1;
        edgeNote = { edge: e, text: PAIR_EDGE_NOTE, colour };
      }
    }
    return {
      ids: v.ids, hops: v.hops, edges: v.edges, edgeDirs: v.edgeDirs,
      positions: this.positions ?? new Float32Array(2 * v.ids.length), rings: this.rings,
      nodeFill, nodeRadius, nodeTitle: v.ids.map((_, i) => this.nodeTitle(v, i)),
      edgeStroke, edgeWidth, edgeDash, edgeOpacity,
      labelAll: v.ids.length <= 120, selected: this.selected, highlight: this.highlight, theme,
      ...(pair ? { anchors: Math.min(2, v.ids.length) } : {}),
      ...(edgeNote ? { edgeNote } : {}),
    };
  }

  // ---- drawing ----------------------------------------------------------------------------------------

  private stageSize(): { width: number; height: number } {
    const stage = this.element;
    return { width: Math.max(200, stage.clientWidth || 640), height: Math.max(200, stage.clientHeight || 480) };
  }

  redraw(): void {
    const view = this.model.view, positions = this.positions;
    if (!view || !positions) return;
    const stage = this.element;
    const scene = this.scene = this.buildScene();
    const { width, height } = this.stageSize();
    const elements = view.ids.length + view.edgeDirs.length;
    const what = this.model.pair ? `Pair ${this.model.pair.u}, ${this.model.pair.v}` : `Receptive field of node ${view.node}`;
    const want = elements > CANVAS_THRESHOLD ? 'canvas' : 'svg';
    stage.dataset['renderer'] = want;
    stage.dataset['nodes'] = String(view.ids.length);
    stage.dataset['edges'] = String(view.edgeDirs.length);
    if (want === 'svg') {
      this.canvas?.remove(); this.canvas = undefined;
      const next = buildSvg(document, scene, { width, height, transform: this.transform });
      next.setAttribute('aria-label', `${what}: ${plural(view.ids.length, 'node')} and ${plural(view.edgeDirs.length, 'edge')} drawn`);
      if (this.svg) this.svg.replaceWith(next); else stage.prepend(next);
      this.svg = next;
    } else {
      this.svg?.remove(); this.svg = undefined;
      if (!this.canvas) {
        this.canvas = el('canvas', { role: 'img' });
        stage.prepend(this.canvas);
      }
      const canvas = this.canvas;
      canvas.setAttribute('aria-label', `${what}: ${plural(view.ids.length, 'node')} and ${plural(view.edgeDirs.length, 'edge')} drawn (canvas)`);
      const ratio = window.devicePixelRatio || 1;
      canvas.width = Math.round(width * ratio); canvas.height = Math.round(height * ratio);
      canvas.style.width = `${width}px`; canvas.style.height = `${height}px`;
      const ctx = canvas.getContext('2d');
      if (ctx) drawCanvas(ctx, scene, this.transform, width, height, ratio, false);
    }
    this.renderer = want;
    this.tree = quadtree<number>().x((i) => positions[2 * i]!).y((i) => positions[2 * i + 1]!).addAll(view.ids.map((_, i) => i));
    this.drawLegend();
    this.drawDetails();
    const layouts = this.layouts;
    this.status.textContent = `Layout: ${layouts.route === 'worker' ? 'worker thread' : `in the page (${layouts.whyPage})`} · drawn as ${this.renderer === 'svg' ? 'SVG' : 'canvas'} · ${plural(view.ids.length, 'node')}, ${plural(view.edgeDirs.length, 'edge')}`;
    stage.dataset['layout'] = layouts.route;
  }

  /** Only the viewport moves: SVG gets a new transform, the canvas is repainted. */
  private paintTransform(): void {
    const t = this.transform;
    if (this.renderer === 'svg' && this.svg) {
      this.svg.querySelector('g.viewport')?.setAttribute('transform', `translate(${t.x},${t.y}) scale(${t.k})`);
    } else if (this.renderer === 'canvas' && this.canvas && this.scene) {
      const { width, height } = this.stageSize();
      const ctx = this.canvas.getContext('2d');
      if (ctx) drawCanvas(ctx, this.scene, t, width, height, window.devicePixelRatio || 1, false);
    }
  }

  // ---- zoom -------------------------------------------------------------------------------------------

  private saveZoomSoon(): void {
    clearTimeout(this.zoomTimer);
    this.zoomTimer = setTimeout(() => this.model.save({ zoom: this.viewFitted ? undefined : { ...this.transform } }), 200);
  }

  private applyZoom(): void {
    const t = this.transform;
    select(this.element).call(this.zoomer.transform, zoomIdentity.translate(t.x, t.y).scale(t.k));
  }

  /** Fits the whole drawing (nodes, their labels, ring labels) into the stage, centred. */
  fit(): void {
    const view = this.model.view;
    if (!view || !this.positions) return;
    const { width, height } = this.stageSize();
    this.transform = fitTransform(this.buildScene(), width, height, view.ids.length + view.edgeDirs.length > CANVAS_THRESHOLD);
    this.viewFitted = true;
    this.fitting = true;
    try { this.applyZoom(); } finally { this.fitting = false; }
    this.saveZoomSoon();
  }

  // ---- hit-testing, selection and keys ----------------------------------------------------------------

  /** Index of the node under a pointer position (within a few pixels), or -1. */
  private nodeAt(clientX: number, clientY: number): number {
    const t = this.transform;
    if (!this.tree || !this.model.view) return -1;
    const r = this.element.getBoundingClientRect();
    const x = (clientX - r.left - t.x) / t.k, y = (clientY - r.top - t.y) / t.k;
    const i = this.tree.find(x, y, 14 / t.k + 4);
    return i === undefined ? -1 : i;
  }

  private onKey(e: KeyboardEvent): void {
    const view = this.model.view;
    if (!view) return;
    const n = view.ids.length;
    const selected = this.selected;
    let handled = true;
    switch (e.key) {
      case 'ArrowRight': case 'ArrowDown': this.select(selected < 0 ? 0 : (selected + 1) % n, true); break;
      case 'ArrowLeft': case 'ArrowUp': this.select(selected <= 0 ? n - 1 : selected - 1, true); break;
      case 'Home': this.select(0, true); break;
      case 'End': this.select(n - 1, true); break;
      case 'Enter': case ' ': if (selected > 0) this.host.centreOn(view.ids[selected]!); break;
      case '+': case '=': select(this.element).call(this.zoomer.scaleBy, 1.3); break;
      case '-': case '_': select(this.element).call(this.zoomer.scaleBy, 1 / 1.3); break;
      case '0': this.fit(); break;
      case 'Escape': this.selected = -1; this.highlight = null; this.model.save({ selected: undefined }); this.redraw(); break;
      default: handled = false;
    }
    if (handled) e.preventDefault();
  }

  /** Selects node index `i`; with `reveal`, pans it into view when it is near or past the edge. */
  select(i: number, reveal = false): void {
    const view = this.model.view;
    if (!view) return;
    this.selected = i;
    this.model.save({ selected: view.ids[i] });
    const positions = this.positions;
    if (reveal && positions) {
      const { width, height } = this.stageSize();
      const t = this.transform;
      const x = t.x + t.k * positions[2 * i]!, y = t.y + t.k * positions[2 * i + 1]!;
      if (x < 20 || y < 20 || x > width - 20 || y > height - 20) {
        this.transform = { k: t.k, x: width / 2 - t.k * positions[2 * i]!, y: height / 2 - t.k * positions[2 * i + 1]! };
        this.applyZoom();
      }
    }
    this.redraw();
  }

  /** Selects the node with this id and focuses the stage, or says it is not drawn. */
  find(id: number): void {
    const view = this.model.view;
    if (!view || !Number.isInteger(id)) return;
    const i = view.ids.indexOf(id);
    if (i < 0) {
      const inField = view.sampled ? ' (it may be in the field but not drawn: the drawing is a sample)' : '';
      this.details.replaceChildren(el('span', {}, `Node ${id} is not in this drawing${inField}. `), this.centreButton(id));
      return;
    }
    this.select(i, true);
    this.element.focus();
  }

  // ---- legend and details -----------------------------------------------------------------------------

  private centreButton(id: number): HTMLElement {
    const b = custom('vscode-button', { secondary: '', class: 'centre-here' }, `Centre on node ${id}`);
    b.addEventListener('click', () => this.host.centreOn(id));
    return b;
  }

  private drawDetails(): void {
    const view = this.model.view, wl = this.model.wl, i = this.selected;
    if (!view || i < 0 || i >= view.ids.length) { this.details.replaceChildren(); return; }
    if (this.model.pair) {
      this.details.replaceChildren(el('span', {}, pairNodeTitle(this.model.pair, i)), ' ', ...(i > 1 ? [this.centreButton(view.ids[i]!)] : []));
      return;
    }
    const total = view.weights.reduce((a, b) => a + b, 0);
    const parts: Child[] = [
      el('b', {}, view.nodeTypes ? `${typedName(view.nodeTypes, i)} (node ${view.ids[i]})` : `Node ${view.ids[i]}`),
      i === 0 ? ' — the centre' : ` — hop ${view.hops[i]}`,
      `, influence ${num(view.weights[i]!)}${total > 0 ? ` (${pct(view.weights[i]! / total)} of the drawn weight)` : ''}`,
    ];
    const label = view.labels?.[i];
    if (label !== undefined && label !== null) parts.push(', label ', el('code', { class: 'label-text' }, String(label)));
    if (viewMode(this.model) === 'wl' && wl && wl.colours[i]! >= 0) {
      const same = view.ids.filter((_, j) => j !== i && wl.colours[j] === wl.colours[i]);
      parts.push(same.length ? `. Looks the same as ${same.slice(0, 12).join(', ')}${same.length > 12 ? ', …' : ''} to 1-WL` : '. No other drawn node shares its 1-WL colour');
      parts.push(` (${plural(wl.classSizes[i]!, 'node')} with this colour in the graph).`);
    } else parts.push('.');
    this.details.replaceChildren(el('span', {}, ...parts), ' ', ...(i > 0 ? [this.centreButton(view.ids[i]!)] : []));
  }

  private drawLegend(): void {
    const view = this.model.view;
    if (!view) return;
    const { theme, wl, bottlenecks } = this.model;
    const mode = viewMode(this.model);
    const dark = isDarkBackground(theme);
    const legend = this.legend;
    legend.replaceChildren();
    const pair = this.model.pair;
    if (pair && mode === 'hops') {
      const items = view.perHop.map((c, k) => el('span', { class: 'item' }, swatch(hopColour(k, Math.max(1, view.layers), dark)), k === 0 ? 'the two ends' : `hop ${k}`, el('span', { class: 'muted' }, ` ${view.shownPerHop[k]}${view.sampled && view.shownPerHop[k] !== c ? `/${c}` : ''}`)));
      legend.append(el('span', { class: 'muted' }, `Pair ${pair.u}, ${pair.v}: colour = hops from the nearer end. `), ...items);
      if (view.edgeDirs.some((d) => d !== 3)) legend.append(el('span', { class: 'muted' }, ' Arrows: one-way edges, pointing where messages go.'));
    }
    if (pair && pairEdgeIndex(pair) >= 0) {
      legend.append(el('span', { class: 'item pair-edge' }, swatch(pairEdgeColour(dark), true), PAIR_EDGE_NOTE, el('span', { class: 'muted' }, ' (a leak if the pair is a validation or test positive)')));
    }
    if (pair && mode === 'hops') return;
    if (mode === 'hops') {
      const items = view.perHop.map((c, k) => el('span', { class: 'item' }, swatch(hopColour(k, Math.max(1, view.layers), dark)), k === 0 ? 'centre' : `hop ${k}`, el('span', { class: 'muted' }, ` ${view.shownPerHop[k]}${view.sampled && view.shownPerHop[k] !== c ? `/${c}` : ''}`)));
      legend.append(el('span', { class: 'muted' }, 'Colour = hops from the centre; size = influence on it. '), ...items);
      if (view.edgeDirs.some((d) => d !== 3)) legend.append(el('span', { class: 'muted' }, ' Arrows: one-way edges, pointing where messages go.'));
    } else if (mode === 'types') {
      legend.append(...typeLegend(view, theme));
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
}

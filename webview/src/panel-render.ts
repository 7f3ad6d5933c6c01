/**
 * Draws a laid-out receptive field, as SVG (small drawings, and every SVG export) or on a canvas
 * (large drawings, and every PNG export). Both take the same `Scene`, with colours already
 * resolved, so an exported file looks like the panel and needs no stylesheet. Text from files
 * (labels) only ever goes through textContent.
 */
import type { Theme } from './panel-colours';

const SVG_NS = 'http://www.w3.org/2000/svg';

export interface Scene {
  ids: number[];
  hops: number[];
  /** Edge index pairs (into ids), flattened, and per edge: 1 = a → b, 2 = b → a, 3 = both. */
  edges: number[];
  edgeDirs: number[];
  /** x, y per node. */
  positions: Float32Array;
  rings: number[];
  nodeFill: string[];
  nodeRadius: number[];
  /** Per node: tooltip text. */
  nodeTitle: string[];
  edgeStroke: string[];
  edgeWidth: number[];
  /** Per edge: a dash pattern ("6 3") or null. */
  edgeDash: Array<string | null>;
  edgeOpacity: number[];
  /** Draw every node's id beside it (small drawings), else only the centre's and the selected one's. */
  labelAll: boolean;
  /** Index of the selected node, or -1. */
  selected: number;
  /** Leading nodes drawn as centres (labelled, heavier outline): 1, or 2 in pair mode (default 1). */
  anchors?: number;
  /** Pair mode: a text drawn beside one edge (the pair's own edge in the message graph), or absent. */
  edgeNote?: { edge: number; text: string; colour: string };
  /** Node indices to emphasise (others are dimmed), or null. */
  highlight: Set<number> | null;
  theme: Theme;
}

export interface Transform { k: number; x: number; y: number }
export interface Box { x0: number; y0: number; x1: number; y1: number }

// ---- framing: ring labels where no node is, and the fit of the drawing to the stage -------------------

/** Width of one character of label text, as a share of the font size (a safe guess for digits and
 *  lower case in the usual sans-serif editor fonts; the panel never measures text). */
const CHAR_WIDTH = 0.62;
/** Gap between a ring label and its ring line, and the clearance a label wants around nodes (px). */
const LABEL_GAP = 3;
const LABEL_CLEAR = 6;
/** Candidate angles tried per ring (every 7.5°, starting at the top). */
const LABEL_ANGLES = 48;

export const ringLabelText = (k: number) => `hop ${k}`;
/** Font size of node and ring labels in the drawing, in text pixels. */
export const labelFont = (t: Theme) => t.fontSize - 2;

/** Distance from the point (px, py) to the box (0 inside). */
function boxDistance(b: Box, px: number, py: number): number {
  const dx = Math.max(b.x0 - px, 0, px - b.x1), dy = Math.max(b.y0 - py, 0, py - b.y1);
  return Math.sqrt(dx * dx + dy * dy);
}
/** Gap between two boxes (0 when they touch or overlap). */
function boxGap(a: Box, b: Box): number {
  const dx = Math.max(a.x0 - b.x1, 0, b.x0 - a.x1), dy = Math.max(a.y0 - b.y1, 0, b.y0 - a.y1);
  return Math.sqrt(dx * dx + dy * dy);
}

/** Box of a node's id label, drawn left-aligned at (x + r + 2·unit, y + 4·unit) with font size f·unit. */
export function nodeLabelBox(x: number, y: number, r: number, text: string, f: number, unit: number): Box {
  const x0 = x + r + 2 * unit, base = y + 4 * unit;
  return { x0, y0: base - 0.8 * f * unit, x1: x0 + text.length * CHAR_WIDTH * f * unit, y1: base + 0.2 * f * unit };
}

export interface RingLabelInput {
  /** x, y per node. */
  positions: ArrayLike<number>;
  nodeRadius: ArrayLike<number>;
  /** Ring radius per hop (index 0, the centre, has no label). */
  rings: ArrayLike<number>;
  /** Boxes of the node labels that are drawn (obstacles too). */
  nodeLabels?: Box[];
  /** Label font size in text pixels, and layout units per text pixel (1 when text scales with the
   *  drawing, as in SVG; 1/k when it keeps its screen size, as on the canvas). */
  font: number;
  unit: number;
}

/** Size of ring k's label in layout units. */
export function ringLabelSize(k: number, font: number, unit: number): { w: number; h: number } {
  return { w: ringLabelText(k).length * CHAR_WIDTH * font * unit, h: font * unit };
}

/**
 * Centre (x, y) of each ring's label, 2 numbers per ring (ring 0 gets NaN). For each ring, boxes
 * just outside and just inside the ring line are tried at 48 angles. Among those at least 6 px
 * clear of every node, node label and label placed before, the label takes the one that sticks
 * out least from the nodes' bounding box (so it does not make the fitted drawing smaller), then
 * the one nearest the top of the ring; when none is clear, the one farthest from them all.
 */
export function placeRingLabels(input: RingLabelInput): Float64Array {
  const { positions: P, nodeRadius: R, rings, font, unit } = input;
  const n = R.length;
  const out = new Float64Array(2 * rings.length).fill(NaN);
  const gap = LABEL_GAP * unit, clear = LABEL_CLEAR * unit;
  let maxR = 0, maxW = 0;
  let bx0 = Infinity, by0 = Infinity, bx1 = -Infinity, by1 = -Infinity;
  for (let i = 0; i < n; i++) {
    const x = P[2 * i]!, y = P[2 * i + 1]!, r = R[i]!;
    maxR = Math.max(maxR, r);
    bx0 = Math.min(bx0, x - r); by0 = Math.min(by0, y - r); bx1 = Math.max(bx1, x + r); by1 = Math.max(by1, y + r);
  }
  for (let k = 1; k < rings.length; k++) maxW = Math.max(maxW, ringLabelSize(k, font, unit).w);
  // Nodes in a grid of square cells: a node whose centre is more than M from a candidate box is
  // at least `clear` away from it, so only the cells within M of the box are looked at.
  const M = clear + maxR;
  const cell = Math.max(4 * M, maxW + 2 * M);
  const grid = new Map<number, number[]>();
  const cellKey = (gx: number, gy: number) => gx * 1_048_576 + gy;
  for (let i = 0; i < n; i++) {
    const x = P[2 * i]!, y = P[2 * i + 1]!;
    if (!Number.isFinite(x) || !Number.isFinite(y)) continue;
    const key = cellKey(Math.floor(x / cell), Math.floor(y / cell));
    const list = grid.get(key);
    if (list) list.push(i); else grid.set(key, [i]);
  }
  const placed: Box[] = [];
  for (let k = 1; k < rings.length; k++) {
    const r = rings[k]!;
    const { w, h } = ringLabelSize(k, font, unit);
    const reach = w + h + gap + clear;
    const boxes = [...(input.nodeLabels ?? []).filter((b) => {
      const inner = boxDistance(b, 0, 0), outer = Math.hypot(Math.max(Math.abs(b.x0), Math.abs(b.x1)), Math.max(Math.abs(b.y0), Math.abs(b.y1)));
      return inner <= r + reach && outer >= r - reach;
    }), ...placed];
    let best: Box | undefined, bestScore = -Infinity, firstClear: Box | undefined, firstClearRank = Infinity;
    for (let j = 0; j < LABEL_ANGLES; j++) {
      const a = -Math.PI / 2 + (2 * Math.PI * j) / LABEL_ANGLES;
      const ca = Math.cos(a), sa = Math.sin(a);
      // How far the box centre sits from the ring line so that its nearest edge is `gap` away.
      const d = (Math.abs(ca) * w) / 2 + (Math.abs(sa) * h) / 2 + gap;
      for (const side of [1, -1]) {
        const rho = r + side * d;
        if (rho < d) continue; // inside a small ring: no room
        const cx = rho * ca, cy = rho * sa;
        const box: Box = { x0: cx - w / 2, y0: cy - h / 2, x1: cx + w / 2, y1: cy + h / 2 };
        // How far it sticks out of the nodes' box, then how far round from the top (outside the
        // ring line before inside at the same angle; the turn only breaks near-ties).
        const outside = n ? Math.max(0, bx0 - box.x0, box.x1 - bx1, by0 - box.y0, box.y1 - by1) : 0;
        const rank = outside + 1e-3 * (Math.min(j, LABEL_ANGLES - j) * 2 + (side === 1 ? 0 : 1));
        // Clearance (capped at M: farther nodes do not matter).
        let score = M;
        for (let gx = Math.floor((box.x0 - M) / cell); gx <= Math.floor((box.x1 + M) / cell); gx++) {
          for (let gy = Math.floor((box.y0 - M) / cell); gy <= Math.floor((box.y1 + M) / cell); gy++) {
            const list = grid.get(cellKey(gx, gy));
            if (list) for (const i of list) score = Math.min(score, boxDistance(box, P[2 * i]!, P[2 * i + 1]!) - R[i]!);
          }
        }
        for (const b of boxes) score = Math.min(score, boxGap(box, b));
        if (score >= clear && rank < firstClearRank) { firstClear = box; firstClearRank = rank; }
        if (score > bestScore) { bestScore = score; best = box; }
      }
    }
    const chosen = firstClear ?? best;
    if (!chosen) continue;
    out[2 * k] = (chosen.x0 + chosen.x1) / 2;
    out[2 * k + 1] = (chosen.y0 + chosen.y1) / 2;
    placed.push(chosen);
  }
  return out;
}

/** Ring label centres for a scene, cached per layout (the same positions array) and text scale. */
const labelCache = new WeakMap<object, { key: string; places: Float64Array }>();
export function ringLabelPlaces(s: Scene, unit: number): Float64Array {
  const key = `${unit}|${s.labelAll}|${s.rings.join(',')}|${s.theme.fontSize}|${s.nodeRadius.length}`;
  const hit = labelCache.get(s.positions);
  if (hit && hit.key === key) return hit.places;
  const f = labelFont(s.theme);
  const nodeLabels: Box[] = [];
  if (s.labelAll) for (let i = 0; i < s.ids.length; i++) nodeLabels.push(nodeLabelBox(s.positions[2 * i]!, s.positions[2 * i + 1]!, s.nodeRadius[i]!, String(s.ids[i]), f, unit));
  const places = placeRingLabels({ positions: s.positions, nodeRadius: s.nodeRadius, rings: s.rings, nodeLabels, font: f, unit });
  labelCache.set(s.positions, { key, places });
  return places;
}

/**
 * What the fit must show, in layout units: every node with its radius, the ring labels, and the
 * node labels that are always drawn (all of them on small drawings, else the centre's).
 */
export function drawingBounds(s: Scene, unit = 1): Box {
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  const f = labelFont(s.theme);
  const add = (b: Box) => { x0 = Math.min(x0, b.x0); y0 = Math.min(y0, b.y0); x1 = Math.max(x1, b.x1); y1 = Math.max(y1, b.y1); };
  for (let i = 0; i < s.ids.length; i++) {
    const x = s.positions[2 * i]!, y = s.positions[2 * i + 1]!, r = s.nodeRadius[i]!;
    if (!Number.isFinite(x) || !Number.isFinite(y)) continue;
    add({ x0: x - r, y0: y - r, x1: x + r, y1: y + r });
    if (s.labelAll || anchor(s, i)) add(nodeLabelBox(x, y, r, String(s.ids[i]), f, unit));
  }
  const places = ringLabelPlaces(s, unit);
  for (let k = 1; k < s.rings.length; k++) {
    const cx = places[2 * k]!, cy = places[2 * k + 1]!;
    if (!Number.isFinite(cx)) continue;
    const { w, h } = ringLabelSize(k, f, unit);
    add({ x0: cx - w / 2, y0: cy - h / 2, x1: cx + w / 2, y1: cy + h / 2 });
  }
  if (!Number.isFinite(x0)) return { x0: -50, y0: -50, x1: 50, y1: 50 };
  return { x0, y0, x1, y1 };
}

/**
 * The transform that shows box b as large as fits in width x height less `margin` pixels on every
 * side, centred, at a scale between minK and maxK.
 */
export function fitBox(b: Box, width: number, height: number, margin = 16, minK = 0.02, maxK = 4): Transform {
  const bw = Math.max(1e-9, b.x1 - b.x0), bh = Math.max(1e-9, b.y1 - b.y0);
  const k = Math.min(maxK, Math.max(minK, Math.min(Math.max(1, width - 2 * margin) / bw, Math.max(1, height - 2 * margin) / bh)));
  return { k, x: width / 2 - (k * (b.x0 + b.x1)) / 2, y: height / 2 - (k * (b.y0 + b.y1)) / 2 };
}

/**
 * The transform that fits the drawing into width x height. `screenText`: labels keep their screen
 * size (the canvas), so their extent in layout units depends on the scale: fitted twice.
 */
export function fitTransform(s: Scene, width: number, height: number, screenText = false): Transform {
  const first = fitBox(drawingBounds(s, 1), width, height);
  return screenText ? fitBox(drawingBounds(s, 1 / first.k), width, height) : first;
}

/** Bounds of the whole drawing in layout units, rings included (exported files). */
export function sceneBounds(s: Scene): Box {
  const b = drawingBounds(s, 1);
  const outer = s.rings[s.rings.length - 1] ?? 0;
  return { x0: Math.min(b.x0, -outer) - 12, y0: Math.min(b.y0, -outer) - 12, x1: Math.max(b.x1, outer) + 12, y1: Math.max(b.y1, outer) + 12 };
}

/** Arrowhead triangle at the receiving end of a → b (points x, y three times), or null when too short. */
function arrowHead(ax: number, ay: number, bx: number, by: number, rb: number, size: number): number[] | null {
  const dx = bx - ax, dy = by - ay;
  const len = Math.hypot(dx, dy);
  if (len < rb + size * 1.5) return null;
  const ux = dx / len, uy = dy / len;
  const tx = bx - ux * (rb + 1), ty = by - uy * (rb + 1);
  const baseX = tx - ux * size, baseY = ty - uy * size;
  const w = size * 0.55;
  return [tx, ty, baseX - uy * w, baseY + ux * w, baseX + uy * w, baseY - ux * w];
}

function dimmed(s: Scene, i: number): boolean {
  return s.highlight !== null && !s.highlight.has(i);
}

/** The centre, and in pair mode both ends: always labelled, drawn with a heavier outline. */
function anchor(s: Scene, i: number): boolean {
  return i < (s.anchors ?? 1);
}

function nodeLabelShown(s: Scene, i: number): boolean {
  return s.labelAll || anchor(s, i) || i === s.selected || (s.highlight !== null && s.highlight.has(i) && s.highlight.size <= 40);
}

// ---- SVG -----------------------------------------------------------------------------------------

function svgEl<K extends keyof SVGElementTagNameMap>(doc: Document, tag: K, attrs: Record<string, string | number>): SVGElementTagNameMap[K] {
  const e = doc.createElementNS(SVG_NS, tag);
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, String(v));
  return e;
}

const fmt = (x: number) => (Math.round(x * 100) / 100).toString();

/**
 * The drawing as an <svg>: rings, edges, arrowheads, nodes (circle.node with data-index and a
 * <title>), labels. With `viewBox` the whole drawing is fitted (export); otherwise the content sits
 * in g.viewport, whose transform the caller sets.
 */
export function buildSvg(doc: Document, s: Scene, opts: { width: number; height: number; transform?: Transform; standalone?: boolean }): SVGSVGElement {
  const t = s.theme;
  const svg = svgEl(doc, 'svg', { width: opts.width, height: opts.height, role: 'img', 'font-family': t.fontFamily, 'font-size': t.fontSize - 2 });
  if (opts.standalone) {
    svg.setAttribute('xmlns', SVG_NS);
    const b = sceneBounds(s);
    svg.setAttribute('viewBox', `${fmt(b.x0)} ${fmt(b.y0)} ${fmt(b.x1 - b.x0)} ${fmt(b.y1 - b.y0)}`);
    svg.append(svgEl(doc, 'rect', { x: fmt(b.x0), y: fmt(b.y0), width: fmt(b.x1 - b.x0), height: fmt(b.y1 - b.y0), fill: t.background }));
  }
  const root = svgEl(doc, 'g', { class: 'viewport' });
  if (opts.transform) root.setAttribute('transform', `translate(${opts.transform.x},${opts.transform.y}) scale(${opts.transform.k})`);
  svg.append(root);

  const rings = svgEl(doc, 'g', { class: 'rings' });
  const places = ringLabelPlaces(s, 1);
  const f = labelFont(t);
  s.rings.forEach((r, k) => {
    if (k === 0) return;
    rings.append(svgEl(doc, 'circle', { cx: 0, cy: 0, r: fmt(r), fill: 'none', stroke: t.muted, 'stroke-opacity': 0.35, 'stroke-dasharray': '2 5' }));
    if (!Number.isFinite(places[2 * k]!)) return;
    // Centred on its place: the baseline sits about 0.35 em below the middle of the text.
    const label = svgEl(doc, 'text', { class: 'ring-label', x: fmt(places[2 * k]!), y: fmt(places[2 * k + 1]! + 0.35 * f), 'text-anchor': 'middle', fill: t.muted, 'fill-opacity': 0.8 });
    label.textContent = ringLabelText(k);
    rings.append(label);
  });
  root.append(rings);

  const edges = svgEl(doc, 'g', { class: 'edges', 'stroke-linecap': 'round' });
  const heads = svgEl(doc, 'g', { class: 'arrows' });
  const P = s.positions;
  for (let e = 0; e < s.edgeDirs.length; e++) {
    const a = s.edges[2 * e]!, b = s.edges[2 * e + 1]!;
    const op = s.edgeOpacity[e]! * (dimmed(s, a) || dimmed(s, b) ? 0.25 : 1);
    const line = svgEl(doc, 'line', {
      class: 'edge', x1: fmt(P[2 * a]!), y1: fmt(P[2 * a + 1]!), x2: fmt(P[2 * b]!), y2: fmt(P[2 * b + 1]!),
      stroke: s.edgeStroke[e]!, 'stroke-width': s.edgeWidth[e]!, 'stroke-opacity': fmt(op),
    });
    const dash = s.edgeDash[e];
    if (dash) line.setAttribute('stroke-dasharray', dash);
    edges.append(line);
    const dir = s.edgeDirs[e]!;
    if (dir === 1 || dir === 2) {
      const [from, to] = dir === 1 ? [a, b] : [b, a];
      const h = arrowHead(P[2 * from]!, P[2 * from + 1]!, P[2 * to]!, P[2 * to + 1]!, s.nodeRadius[to]!, 4 + s.edgeWidth[e]!);
      if (h) heads.append(svgEl(doc, 'polygon', { points: `${fmt(h[0]!)},${fmt(h[1]!)} ${fmt(h[2]!)},${fmt(h[3]!)} ${fmt(h[4]!)},${fmt(h[5]!)}`, fill: s.edgeStroke[e]!, 'fill-opacity': fmt(Math.min(1, op * 1.6)) }));
    }
  }
  root.append(edges, heads);

  const nodes = svgEl(doc, 'g', { class: 'nodes' });
  const labels = svgEl(doc, 'g', { class: 'labels' });
  for (let i = 0; i < s.ids.length; i++) {
    const x = P[2 * i]!, y = P[2 * i + 1]!;
    const c = svgEl(doc, 'circle', {
      class: anchor(s, i) ? 'node centre' : 'node', 'data-index': i, cx: fmt(x), cy: fmt(y), r: fmt(s.nodeRadius[i]!),
      fill: s.nodeFill[i]!, stroke: i === s.selected ? t.focus : t.outline,
      'stroke-width': i === s.selected ? 2.5 : anchor(s, i) ? t.outlineWidth * 2 : t.outlineWidth,
      'fill-opacity': dimmed(s, i) ? 0.2 : 1,
    });
    const title = svgEl(doc, 'title', {});
    title.textContent = s.nodeTitle[i]!;
    c.append(title);
    nodes.append(c);
    if (nodeLabelShown(s, i)) {
      const text = svgEl(doc, 'text', {
        class: 'label', x: fmt(x + s.nodeRadius[i]! + 2), y: fmt(y + 4), fill: t.foreground,
        'font-weight': anchor(s, i) || i === s.selected ? 'bold' : 'normal', 'fill-opacity': dimmed(s, i) ? 0.35 : 1,
      });
      text.textContent = String(s.ids[i]);
      labels.append(text);
    }
  }
  root.append(nodes, labels);
  const note = s.edgeNote;
  if (note && note.edge >= 0 && note.edge < s.edgeDirs.length) {
    const [x, y] = edgeNotePlace(s, note.edge);
    const text = svgEl(doc, 'text', { class: 'edge-note', x: fmt(x), y: fmt(y), 'text-anchor': 'middle', fill: note.colour, 'font-weight': 'bold' });
    text.textContent = note.text;
    root.append(text);
  }
  return svg;
}

/** Where an edge's note goes: above the middle of the edge. */
function edgeNotePlace(s: Scene, e: number): [number, number] {
  const P = s.positions, a = s.edges[2 * e]!, b = s.edges[2 * e + 1]!;
  return [(P[2 * a]! + P[2 * b]!) / 2, (P[2 * a + 1]! + P[2 * b + 1]!) / 2 - 8];
}

/** A standalone SVG document of the whole drawing. */
export function svgText(doc: Document, s: Scene): string {
  const b = sceneBounds(s);
  const svg = buildSvg(doc, s, { width: Math.round(b.x1 - b.x0), height: Math.round(b.y1 - b.y0), standalone: true });
  return '<?xml version="1.0" encoding="UTF-8"?>\n' + new XMLSerializer().serializeToString(svg);
}

// ---- canvas --------------------------------------------------------------------------------------

/** Draws the scene on a 2-D context whose pixel size is width·ratio x height·ratio. */
export function drawCanvas(ctx: CanvasRenderingContext2D, s: Scene, tr: Transform, width: number, height: number, ratio: number, withBackground = true): void {
  const t = s.theme;
  ctx.save();
  ctx.setTransform(ratio, 0, 0, ratio, 0, 0);
  ctx.clearRect(0, 0, width, height);
  if (withBackground) { ctx.fillStyle = t.background; ctx.fillRect(0, 0, width, height); }
  ctx.translate(tr.x, tr.y);
  ctx.scale(tr.k, tr.k);
  const px = 1 / tr.k;

  ctx.setLineDash([2 * px, 5 * px]);
  ctx.strokeStyle = t.muted;
  ctx.globalAlpha = 0.35;
  ctx.lineWidth = px;
  ctx.fillStyle = t.muted;
  ctx.font = `${(t.fontSize - 2) * px}px ${t.fontFamily}`;
  ctx.textAlign = 'center';
  const places = ringLabelPlaces(s, px);
  s.rings.forEach((r, k) => {
    if (k === 0) return;
    ctx.beginPath(); ctx.arc(0, 0, r, 0, 2 * Math.PI); ctx.stroke();
    if (!Number.isFinite(places[2 * k]!)) return;
    ctx.globalAlpha = 0.8;
    ctx.fillText(ringLabelText(k), places[2 * k]!, places[2 * k + 1]! + 0.35 * labelFont(t) * px);
    ctx.globalAlpha = 0.35;
  });
  ctx.setLineDash([]);

  const P = s.positions;
  ctx.lineCap = 'round';
  for (let e = 0; e < s.edgeDirs.length; e++) {
    const a = s.edges[2 * e]!, b = s.edges[2 * e + 1]!;
    const op = s.edgeOpacity[e]! * (dimmed(s, a) || dimmed(s, b) ? 0.25 : 1);
    ctx.globalAlpha = op;
    ctx.strokeStyle = s.edgeStroke[e]!;
    ctx.lineWidth = s.edgeWidth[e]!;
    const dash = s.edgeDash[e];
    ctx.setLineDash(dash ? dash.split(' ').map(Number) : []);
    ctx.beginPath(); ctx.moveTo(P[2 * a]!, P[2 * a + 1]!); ctx.lineTo(P[2 * b]!, P[2 * b + 1]!); ctx.stroke();
    const dir = s.edgeDirs[e]!;
    if (dir === 1 || dir === 2) {
      const [from, to] = dir === 1 ? [a, b] : [b, a];
      const h = arrowHead(P[2 * from]!, P[2 * from + 1]!, P[2 * to]!, P[2 * to + 1]!, s.nodeRadius[to]!, 4 + s.edgeWidth[e]!);
      if (h) {
        ctx.globalAlpha = Math.min(1, op * 1.6);
        ctx.fillStyle = s.edgeStroke[e]!;
        ctx.beginPath(); ctx.moveTo(h[0]!, h[1]!); ctx.lineTo(h[2]!, h[3]!); ctx.lineTo(h[4]!, h[5]!); ctx.closePath(); ctx.fill();
      }
    }
  }
  ctx.setLineDash([]);

  for (let i = 0; i < s.ids.length; i++) {
    ctx.globalAlpha = dimmed(s, i) ? 0.2 : 1;
    ctx.beginPath();
    ctx.arc(P[2 * i]!, P[2 * i + 1]!, s.nodeRadius[i]!, 0, 2 * Math.PI);
    ctx.fillStyle = s.nodeFill[i]!;
    ctx.fill();
    ctx.globalAlpha = 1;
    ctx.lineWidth = i === s.selected ? 2.5 : anchor(s, i) ? t.outlineWidth * 2 : t.outlineWidth;
    ctx.strokeStyle = i === s.selected ? t.focus : t.outline;
    ctx.stroke();
  }
  ctx.fillStyle = t.foreground;
  ctx.textAlign = 'left';
  for (let i = 0; i < s.ids.length; i++) {
    if (!nodeLabelShown(s, i)) continue;
    ctx.globalAlpha = dimmed(s, i) ? 0.35 : 1;
    ctx.font = `${anchor(s, i) || i === s.selected ? 'bold ' : ''}${(t.fontSize - 2) * px}px ${t.fontFamily}`;
    ctx.fillText(String(s.ids[i]), P[2 * i]! + s.nodeRadius[i]! + 2 * px, P[2 * i + 1]! + 4 * px);
  }
  const note = s.edgeNote;
  if (note && note.edge >= 0 && note.edge < s.edgeDirs.length) {
    const a = s.edges[2 * note.edge]!, b = s.edges[2 * note.edge + 1]!;
    ctx.globalAlpha = 1;
    ctx.fillStyle = note.colour;
    ctx.textAlign = 'center';
    ctx.font = `bold ${(t.fontSize - 2) * px}px ${t.fontFamily}`;
    ctx.fillText(note.text, (P[2 * a]! + P[2 * b]!) / 2, (P[2 * a + 1]! + P[2 * b + 1]!) / 2 - 8 * px);
  }
  ctx.restore();
}

/** PNG bytes of the whole drawing, fitted into at most maxSide pixels per side. */
export async function pngBytes(doc: Document, s: Scene, maxSide = 2400): Promise<Uint8Array> {
  const b = sceneBounds(s);
  const w = b.x1 - b.x0, h = b.y1 - b.y0;
  const scale = Math.min(maxSide / w, maxSide / h, 3);
  const width = Math.max(1, Math.round(w * scale)), height = Math.max(1, Math.round(h * scale));
  const canvas = doc.createElement('canvas');
  canvas.width = width; canvas.height = height;
  const ctx = canvas.getContext('2d');
  if (!ctx) throw new Error('no 2-D canvas context');
  drawCanvas(ctx, s, { k: scale, x: -b.x0 * scale, y: -b.y0 * scale }, width, height, 1);
  const blob = await new Promise<Blob | null>((resolve) => canvas.toBlob(resolve, 'image/png'));
  if (!blob) throw new Error('the canvas could not be encoded as PNG');
  return new Uint8Array(await blob.arrayBuffer());
}

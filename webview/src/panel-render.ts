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
  /** Node indices to emphasise (others are dimmed), or null. */
  highlight: Set<number> | null;
  theme: Theme;
}

export interface Transform { k: number; x: number; y: number }

/** Bounds of the drawing in layout coordinates, rings included. */
export function sceneBounds(s: Scene): { x0: number; y0: number; x1: number; y1: number } {
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  for (let i = 0; i < s.ids.length; i++) {
    const x = s.positions[2 * i]!, y = s.positions[2 * i + 1]!, r = s.nodeRadius[i]!;
    x0 = Math.min(x0, x - r); y0 = Math.min(y0, y - r); x1 = Math.max(x1, x + r); y1 = Math.max(y1, y + r);
  }
  const outer = s.rings[s.rings.length - 1] ?? 0;
  x0 = Math.min(x0, -outer); y0 = Math.min(y0, -outer - 14); x1 = Math.max(x1, outer); y1 = Math.max(y1, outer);
  if (!Number.isFinite(x0)) return { x0: -50, y0: -50, x1: 50, y1: 50 };
  return { x0: x0 - 12, y0: y0 - 12, x1: x1 + 12, y1: y1 + 12 };
}

/** The transform that fits the whole drawing into width x height. */
export function fitTransform(s: Scene, width: number, height: number): Transform {
  const b = sceneBounds(s);
  const k = Math.min(4, Math.max(0.02, Math.min(width / (b.x1 - b.x0), height / (b.y1 - b.y0))));
  return { k, x: width / 2 - k * (b.x0 + b.x1) / 2, y: height / 2 - k * (b.y0 + b.y1) / 2 };
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

function nodeLabelShown(s: Scene, i: number): boolean {
  return s.labelAll || i === 0 || i === s.selected || (s.highlight !== null && s.highlight.has(i) && s.highlight.size <= 40);
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
  s.rings.forEach((r, k) => {
    if (k === 0) return;
    rings.append(svgEl(doc, 'circle', { cx: 0, cy: 0, r: fmt(r), fill: 'none', stroke: t.muted, 'stroke-opacity': 0.35, 'stroke-dasharray': '2 5' }));
    const label = svgEl(doc, 'text', { x: 0, y: fmt(-r - 4), 'text-anchor': 'middle', fill: t.muted, 'fill-opacity': 0.8 });
    label.textContent = `hop ${k}`;
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
      class: i === 0 ? 'node centre' : 'node', 'data-index': i, cx: fmt(x), cy: fmt(y), r: fmt(s.nodeRadius[i]!),
      fill: s.nodeFill[i]!, stroke: i === s.selected ? t.focus : t.outline,
      'stroke-width': i === s.selected ? 2.5 : i === 0 ? t.outlineWidth * 2 : t.outlineWidth,
      'fill-opacity': dimmed(s, i) ? 0.2 : 1,
    });
    const title = svgEl(doc, 'title', {});
    title.textContent = s.nodeTitle[i]!;
    c.append(title);
    nodes.append(c);
    if (nodeLabelShown(s, i)) {
      const text = svgEl(doc, 'text', {
        class: 'label', x: fmt(x + s.nodeRadius[i]! + 2), y: fmt(y + 4), fill: t.foreground,
        'font-weight': i === 0 || i === s.selected ? 'bold' : 'normal', 'fill-opacity': dimmed(s, i) ? 0.35 : 1,
      });
      text.textContent = String(s.ids[i]);
      labels.append(text);
    }
  }
  root.append(nodes, labels);
  return svg;
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
  s.rings.forEach((r, k) => {
    if (k === 0) return;
    ctx.beginPath(); ctx.arc(0, 0, r, 0, 2 * Math.PI); ctx.stroke();
    ctx.globalAlpha = 0.8;
    ctx.fillText(`hop ${k}`, 0, -r - 4 * px);
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
    ctx.lineWidth = i === s.selected ? 2.5 : i === 0 ? t.outlineWidth * 2 : t.outlineWidth;
    ctx.strokeStyle = i === s.selected ? t.focus : t.outline;
    ctx.stroke();
  }
  ctx.fillStyle = t.foreground;
  ctx.textAlign = 'left';
  for (let i = 0; i < s.ids.length; i++) {
    if (!nodeLabelShown(s, i)) continue;
    ctx.globalAlpha = dimmed(s, i) ? 0.35 : 1;
    ctx.font = `${i === 0 || i === s.selected ? 'bold ' : ''}${(t.fontSize - 2) * px}px ${t.fontFamily}`;
    ctx.fillText(String(s.ids[i]), P[2 * i]! + s.nodeRadius[i]! + 2 * px, P[2 * i + 1]! + 4 * px);
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

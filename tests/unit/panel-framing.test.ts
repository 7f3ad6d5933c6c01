/**
 * Framing of the receptive-field drawing (webview/src/panel-render.ts): the fit transform and the
 * placement of ring labels. Pure geometry; each test recomputes what it checks directly (screen
 * position = k · layout + translation; distance from a circle to a box) instead of trusting the
 * functions' own bookkeeping. The layouts are the panel's own d3-force layout (panel-layout.ts).
 */
import { describe, expect, it } from 'vitest';
import type { Theme } from '../../webview/src/panel-colours';
import { layoutField } from '../../webview/src/panel-layout';
import {
  drawingBounds, fitBox, fitTransform, labelFont, nodeLabelBox, placeRingLabels, ringLabelPlaces, ringLabelSize,
  type Box, type Scene,
} from '../../webview/src/panel-render';

const theme: Theme = {
  kind: 'light', background: '#ffffff', foreground: '#1f1f1f', muted: '#616161', focus: '#0078d4',
  outline: '#888888', outlineWidth: 0.75, edge: '#1f1f1f', edgeOpacity: 0.28, fontFamily: 'sans-serif', fontSize: 13,
};

function scene(positions: Float32Array, radius: number[], rings: number[], hops: number[], labelAll = true): Scene {
  const n = radius.length;
  return {
    ids: Array.from({ length: n }, (_, i) => i), hops, edges: [], edgeDirs: [], positions, rings,
    nodeFill: new Array(n).fill('#000000'), nodeRadius: radius, nodeTitle: new Array(n).fill(''),
    edgeStroke: [], edgeWidth: [], edgeDash: [], edgeOpacity: [], labelAll, selected: -1, highlight: null, theme,
  };
}

/** Smallest distance from any node's rim to a box (negative: the box covers part of a node). */
function clearance(b: Box, P: ArrayLike<number>, R: ArrayLike<number>): number {
  let best = Infinity;
  for (let i = 0; i < R.length; i++) {
    const x = P[2 * i]!, y = P[2 * i + 1]!;
    const dx = Math.max(b.x0 - x, 0, x - b.x1), dy = Math.max(b.y0 - y, 0, y - b.y1);
    best = Math.min(best, Math.hypot(dx, dy) - R[i]!);
  }
  return best;
}

function labelBox(places: Float64Array, k: number, font: number, unit: number): Box {
  const { w, h } = ringLabelSize(k, font, unit);
  const cx = places[2 * k]!, cy = places[2 * k + 1]!;
  return { x0: cx - w / 2, y0: cy - h / 2, x1: cx + w / 2, y1: cy + h / 2 };
}

/** A two-hop field: a centre, `a` hop-1 nodes, `b` hop-2 nodes each tied to one hop-1 node, laid out by the panel. */
function field(a: number, b: number, seed: number) {
  const hops = [0], edges: number[] = [];
  for (let i = 0; i < a; i++) { hops.push(1); edges.push(0, hops.length - 1); }
  for (let j = 0; j < b; j++) { hops.push(2); edges.push(1 + (j % a), hops.length - 1); }
  const radius = hops.map((_, i) => (i === 0 ? 14.5 : 3.5 + ((i * 7) % 9)));
  const { positions, rings } = layoutField({ hops, radius, edges, seed });
  return { hops, radius, positions, rings };
}

describe('fitBox', () => {
  it('maps the box onto the stage less the margin in the tighter direction, centred in the other', () => {
    const b = { x0: -100, y0: -40, x1: 300, y1: 60 }; // 400 x 100
    const t = fitBox(b, 1000, 600, 16);
    // Width is tighter: 968 / 400 = 2.42 (height would allow 568 / 100).
    expect(t.k).toBeCloseTo(968 / 400, 9);
    expect(t.k * b.x0 + t.x).toBeCloseTo(16, 9);
    expect(t.k * b.x1 + t.x).toBeCloseTo(1000 - 16, 9);
    const top = t.k * b.y0 + t.y, bottom = t.k * b.y1 + t.y;
    expect(top).toBeCloseTo(600 - bottom, 9);
    expect(top).toBeGreaterThan(16);
  });

  it('keeps the scale within its limits, still centred', () => {
    const tiny = fitBox({ x0: -2, y0: -2, x1: 2, y1: 2 }, 800, 600, 16, 0.02, 4);
    expect(tiny.k).toBe(4);
    expect(tiny.x).toBe(400);
    expect(tiny.y).toBe(300);
    const huge = fitBox({ x0: 0, y0: 0, x1: 1e7, y1: 1e7 }, 800, 600, 16, 0.02, 4);
    expect(huge.k).toBe(0.02);
  });
});

describe('fitTransform', () => {
  for (const [w, h] of [[1248, 642], [640, 480], [300, 900]] as const) {
    it(`puts every node, node label and ring label of a laid-out field inside ${w} x ${h}`, () => {
      const f = field(6, 18, 7);
      const s = scene(f.positions, f.radius, f.rings, f.hops);
      const t = fitTransform(s, w, h);
      let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
      const seen = (bx0: number, by0: number, bx1: number, by1: number) => {
        x0 = Math.min(x0, t.k * bx0 + t.x); x1 = Math.max(x1, t.k * bx1 + t.x);
        y0 = Math.min(y0, t.k * by0 + t.y); y1 = Math.max(y1, t.k * by1 + t.y);
      };
      for (let i = 0; i < f.radius.length; i++) {
        const x = f.positions[2 * i]!, y = f.positions[2 * i + 1]!, r = f.radius[i]!;
        seen(x - r, y - r, x + r, y + r);
        const lb = nodeLabelBox(x, y, r, String(i), labelFont(theme), 1);
        seen(lb.x0, lb.y0, lb.x1, lb.y1);
      }
      const places = ringLabelPlaces(s, 1);
      for (let k = 1; k < f.rings.length; k++) { const b = labelBox(places, k, labelFont(theme), 1); seen(b.x0, b.y0, b.x1, b.y1); }
      // Inside with the 16 px margin, touching it on one axis, centred on both.
      expect(x0).toBeGreaterThanOrEqual(16 - 1e-6); expect(y0).toBeGreaterThanOrEqual(16 - 1e-6);
      expect(x1).toBeLessThanOrEqual(w - 16 + 1e-6); expect(y1).toBeLessThanOrEqual(h - 16 + 1e-6);
      expect(Math.min(x0, y0)).toBeCloseTo(16, 6);
      expect((x0 + x1) / 2).toBeCloseTo(w / 2, 6);
      expect((y0 + y1) / 2).toBeCloseTo(h / 2, 6);
    });
  }

  it('fits the nodes, not the empty part of a ring: a field on one side of its rings fills the stage', () => {
    // Every node in the upper-right quarter (as d3-force often leaves a small field).
    const P = new Float32Array([0, 0, 50, -40, 60, -30, 120, -90, 130, -70]);
    const R = [14.5, 6, 6, 6, 6];
    const s = scene(P, R, [0, 70, 150], [0, 1, 1, 2, 2], false);
    const b = drawingBounds(s);
    expect(b.x0).toBeGreaterThan(-60); // the rings reach -150 on every side: they are not what is fitted
    expect(b.y1).toBeLessThan(60);
    // The bounds are exactly the nodes, the centre's label and the two ring labels.
    const places = ringLabelPlaces(s, 1);
    const parts: Box[] = [
      ...R.map((r, i) => ({ x0: P[2 * i]! - r, y0: P[2 * i + 1]! - r, x1: P[2 * i]! + r, y1: P[2 * i + 1]! + r })),
      nodeLabelBox(0, 0, 14.5, '0', labelFont(theme), 1), labelBox(places, 1, labelFont(theme), 1), labelBox(places, 2, labelFont(theme), 1),
    ];
    expect(b.x0).toBeCloseTo(Math.min(...parts.map((p) => p.x0)), 9);
    expect(b.y0).toBeCloseTo(Math.min(...parts.map((p) => p.y0)), 9);
    expect(b.x1).toBeCloseTo(Math.max(...parts.map((p) => p.x1)), 9);
    expect(b.y1).toBeCloseTo(Math.max(...parts.map((p) => p.y1)), 9);
  });

  it('for text of constant screen size (canvas), labels still fit at the final scale', () => {
    const f = field(12, 40, 3);
    const s = scene(f.positions, f.radius, f.rings, f.hops, false);
    const w = 500, h = 400;
    const t = fitTransform(s, w, h, true);
    const places = ringLabelPlaces(s, 1 / t.k);
    for (let k = 1; k < f.rings.length; k++) {
      const b = labelBox(places, k, labelFont(theme), 1 / t.k);
      expect(t.k * b.x0 + t.x).toBeGreaterThanOrEqual(0);
      expect(t.k * b.x1 + t.x).toBeLessThanOrEqual(w);
      expect(t.k * b.y0 + t.y).toBeGreaterThanOrEqual(0);
      expect(t.k * b.y1 + t.y).toBeLessThanOrEqual(h);
    }
  });
});

describe('placeRingLabels', () => {
  const font = 11;

  it('sits at the top of its ring when nothing is there', () => {
    const P = new Float32Array([0, 0, 70, 0, -70, 0, 0, 70, 0, -140]);
    const R = [14.5, 6, 6, 6, 6];
    const places = placeRingLabels({ positions: P, nodeRadius: R, rings: [0, 70], font, unit: 1 });
    expect(places[2]).toBeCloseTo(0, 9);
    expect(places[3]!).toBeLessThan(-70); // above the ring line (y grows downwards)
    expect(clearance(labelBox(places, 1, font, 1), P, R)).toBeGreaterThanOrEqual(6);
  });

  it('stays within the nodes\' box when it can, so the fit is not made smaller by a label', () => {
    // Every node on or below the horizontal line: the top of ring 1 is free but outside them.
    const P = new Float32Array([0, 0, 70, 0, -70, 0, 0, 70, 0, 140]);
    const R = [14.5, 6, 6, 6, 6];
    const places = placeRingLabels({ positions: P, nodeRadius: R, rings: [0, 70, 140], font, unit: 1 });
    for (const k of [1, 2]) {
      const box = labelBox(places, k, font, 1);
      expect(box.y0).toBeGreaterThanOrEqual(-14.5);
      expect(box.x0).toBeGreaterThanOrEqual(-76);
      expect(box.x1).toBeLessThanOrEqual(76);
      expect(clearance(box, P, R)).toBeGreaterThanOrEqual(6);
    }
  });

  it('moves off a node that sits where the label would go', () => {
    // A node at the top of ring 1, as in the lane graph's "hop 1", and one just inside it.
    const P = new Float32Array([0, 0, 0, -70, 8, -52, 70, 0]);
    const R = [14.5, 9, 7, 6];
    const places = placeRingLabels({ positions: P, nodeRadius: R, rings: [0, 70], font, unit: 1 });
    expect(clearance(labelBox(places, 1, font, 1), P, R)).toBeGreaterThanOrEqual(6);
  });

  it('finds the one gap in a crowded ring, else the place farthest from every node', () => {
    // 40 nodes round ring 1 (radius 90) except a gap around 200°.
    const pts: number[] = [0, 0], R = [14.5];
    for (let j = 0; j < 40; j++) {
      const a = (2 * Math.PI * j) / 40;
      if (Math.abs(a - (200 * Math.PI) / 180) < 0.45) continue;
      pts.push(90 * Math.cos(a), 90 * Math.sin(a)); R.push(6);
    }
    // And a second ring of nodes just outside and inside so only the gap is clear.
    for (let j = 0; j < 40; j++) {
      const a = (2 * Math.PI * (j + 0.5)) / 40;
      if (Math.abs(a - (200 * Math.PI) / 180) < 0.5) continue;
      for (const rr of [72, 108]) { pts.push(rr * Math.cos(a), rr * Math.sin(a)); R.push(5); }
    }
    const P = new Float32Array(pts);
    const places = placeRingLabels({ positions: P, nodeRadius: R, rings: [0, 90], font, unit: 1 });
    const angle = (Math.atan2(places[3]!, places[2]!) * 180) / Math.PI;
    expect(Math.abs(((angle - 200 + 540) % 360) - 180)).toBeLessThan(20);
    expect(clearance(labelBox(places, 1, font, 1), P, R)).toBeGreaterThan(0);
    // No room anywhere: the label still goes somewhere, at the largest clearance found.
    const full: number[] = [0, 0], FR = [14.5];
    for (let j = 0; j < 120; j++) { const a = (2 * Math.PI * j) / 120; for (const rr of [78, 90, 102]) { full.push(rr * Math.cos(a), rr * Math.sin(a)); FR.push(4); } }
    const FP = new Float32Array(full);
    const fp = placeRingLabels({ positions: FP, nodeRadius: FR, rings: [0, 90], font, unit: 1 });
    expect(Number.isFinite(fp[2]!)).toBe(true);
  });

  it('on real layouts, no ring label touches a node, a node label or another ring label', () => {
    for (const [a, b, seed] of [[5, 12, 1], [8, 30, 2], [16, 60, 3], [3, 4, 4], [30, 200, 5]] as const) {
      const f = field(a, b, seed);
      const nodeLabels = f.radius.map((r, i) => nodeLabelBox(f.positions[2 * i]!, f.positions[2 * i + 1]!, r, String(i), font, 1));
      const places = placeRingLabels({ positions: f.positions, nodeRadius: f.radius, rings: f.rings, nodeLabels, font, unit: 1 });
      const boxes = [1, 2].map((k) => labelBox(places, k, font, 1));
      for (const box of boxes) {
        expect(clearance(box, f.positions, f.radius), `field ${a}/${b}`).toBeGreaterThan(0);
        for (const nl of nodeLabels) expect(box.x1 <= nl.x0 || nl.x1 <= box.x0 || box.y1 <= nl.y0 || nl.y1 <= box.y0).toBe(true);
      }
      expect(boxes[0]!.x1 <= boxes[1]!.x0 || boxes[1]!.x1 <= boxes[0]!.x0 || boxes[0]!.y1 <= boxes[1]!.y0 || boxes[1]!.y1 <= boxes[0]!.y0).toBe(true);
    }
  });
});

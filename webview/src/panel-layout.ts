/**
 * Force-directed layout of a receptive field: d3-force with a seeded random source, run
 * synchronously with `tick(n)` (no timers), so the same input always gives the same positions,
 * whether it runs in the layout worker (panel-layout-worker.ts) or in the page in chunks.
 *
 * Besides links, repulsion and collision, a radial force pulls hop-k nodes towards a ring of
 * radius r_k around the centre (which is pinned at the origin): hop distance reads as distance
 * from the centre. Rings are spaced evenly and widened when a hop holds many nodes.
 */
import {
  forceCollide, forceLink, forceManyBody, forceRadial, forceSimulation,
  type SimulationLinkDatum, type SimulationNodeDatum,
} from 'd3-force';

export interface LayoutInput {
  /** Hop distance per node; node 0 is the centre. */
  hops: ArrayLike<number>;
  /** Drawn radius per node (collision). */
  radius: ArrayLike<number>;
  /** Edge index pairs, flattened. */
  edges: ArrayLike<number>;
  /** Starting positions (x, y per node; NaN = unknown), e.g. from the previous drawing. */
  initial?: ArrayLike<number>;
  seed: number;
}

export interface LayoutJob {
  /** Runs up to `ticks` more steps; true when the layout is finished. */
  step(ticks: number): boolean;
  /** x, y per node. */
  positions(): Float32Array;
  readonly totalTicks: number;
  /** Ring radius per hop. */
  readonly rings: number[];
}

/** A small linear congruential generator (the constants of Numerical Recipes), in [0, 1). */
export function seededSource(seed: number): () => number {
  let s = seed >>> 0;
  return () => (s = (Math.imul(1664525, s) + 1013904223) >>> 0) / 4294967296;
}

interface Node extends SimulationNodeDatum { hop: number; r: number }

const RING_GAP = 70;
const SPACING = 16;

/** Ring radius per hop: evenly spaced, widened so a ring's circumference fits its nodes. */
export function ringRadii(hops: ArrayLike<number>): number[] {
  let maxHop = 0;
  for (let i = 0; i < hops.length; i++) maxHop = Math.max(maxHop, hops[i]!);
  const count = new Array<number>(maxHop + 1).fill(0);
  for (let i = 0; i < hops.length; i++) count[hops[i]!]!++;
  const rings = [0];
  for (let k = 1; k <= maxHop; k++) rings.push(Math.max(rings[k - 1]! + RING_GAP, (count[k]! * SPACING) / (2 * Math.PI)));
  return rings;
}

export function startLayout(input: LayoutInput): LayoutJob {
  const n = input.hops.length;
  const rand = seededSource(input.seed);
  const rings = ringRadii(input.hops);
  const nodes: Node[] = new Array(n);
  for (let i = 0; i < n; i++) {
    const hop = input.hops[i]!;
    const node: Node = { index: i, hop, r: input.radius[i]! };
    const ix = input.initial?.[2 * i], iy = input.initial?.[2 * i + 1];
    if (ix !== undefined && iy !== undefined && Number.isFinite(ix) && Number.isFinite(iy)) {
      node.x = ix; node.y = iy;
    } else {
      const a = rand() * 2 * Math.PI;
      const r = rings[hop]! * (0.9 + 0.2 * rand());
      node.x = r * Math.cos(a); node.y = r * Math.sin(a);
    }
    nodes[i] = node;
  }
  if (n) { nodes[0]!.fx = 0; nodes[0]!.fy = 0; }
  const links: Array<SimulationLinkDatum<Node>> = [];
  for (let e = 0; e + 1 < input.edges.length; e += 2) links.push({ source: input.edges[e]!, target: input.edges[e + 1]! });
  const m = links.length;
  // Fewer steps for big drawings, so the layout stays within a second or two.
  const totalTicks = Math.max(60, Math.min(300, Math.round(400_000 / Math.max(1, n + m))));
  const sim = forceSimulation<Node>(nodes)
    .randomSource(rand)
    .alphaDecay(1 - Math.pow(0.001, 1 / totalTicks))
    .force('link', forceLink<Node, SimulationLinkDatum<Node>>(links).distance(30).strength((l) => {
      const s = l.source as Node, t = l.target as Node;
      // Links inside one ring pull less than links between rings.
      return s.hop === t.hop ? 0.15 : 0.5;
    }))
    .force('charge', forceManyBody<Node>().strength(n > 1500 ? -12 : -40).theta(0.9).distanceMax(350))
    .force('radial', forceRadial<Node>((d) => rings[d.hop]!, 0, 0).strength(0.55))
    .force('collide', forceCollide<Node>((d) => d.r + 1.5).iterations(1))
    .stop();
  let done = 0;
  return {
    totalTicks,
    rings,
    step(ticks: number): boolean {
      const k = Math.min(ticks, totalTicks - done);
      if (k > 0) sim.tick(k);
      done += Math.max(0, k);
      return done >= totalTicks;
    },
    positions(): Float32Array {
      const out = new Float32Array(2 * n);
      for (let i = 0; i < n; i++) { out[2 * i] = nodes[i]!.x!; out[2 * i + 1] = nodes[i]!.y!; }
      return out;
    },
  };
}

/** The whole layout in one call. */
export function layoutField(input: LayoutInput): { positions: Float32Array; rings: number[] } {
  const job = startLayout(input);
  job.step(job.totalTicks);
  return { positions: job.positions(), rings: job.rings };
}

/**
 * Receptive field of a node: which nodes an L-layer message-passing model lets reach it, and at
 * what hop distance; plus the coverage curve (how much of the graph a typical node's field holds
 * at depth 1..8).
 *
 * Which end of an edge sends (`sendingRow`, the edge index's row; an edge list's column):
 * - 0 (default): src = sender, dst = receiver, so node v hears from its in-neighbours; the field
 *   is a breadth-first search over the reverse graph.
 * - 1: messages travel dst → src, so the search runs over the forward graph.
 * - `symmetrise`: every edge carries messages both ways (the search uses both).
 *
 * A `FieldWalker` keeps its buffers (queue, hop distance, visit stamp) between searches: a node
 * counts as visited when its stamp equals the current search's number, so a search never clears
 * an O(N) array and costs O(visited nodes + their edges).
 */
import type { Csr } from '../structure/csr';
import { throwIfCancelled, type Cancel } from '../structure/simple-undirected';
import { seededRandom } from '../../random';

export type { SendingRow } from '../../../../../common/report';
import type { SendingRow } from '../../../../../common/report';

/** The two sorted CSR views of one graph (as `loadGraph` / `buildSortedPair` return them). */
export interface FieldGraph {
  readonly n: number;
  readonly fwd: Csr;
  readonly rev: Csr;
}

export interface FieldOptions {
  /** Which row of the edge index sends (default 0). */
  sendingRow?: SendingRow;
  symmetrise?: boolean;
  cancel?: Cancel;
}

export interface ReceptiveField {
  node: number;
  layers: number;
  sendingRow: SendingRow;
  symmetrised: boolean;
  /** perHop[k] = nodes at exactly k hops, k = 0..layers (perHop[0] = 1, the node itself). */
  perHop: number[];
  /** Nodes within `layers` hops, the node included. */
  total: number;
  /** total / n. */
  coverage: number;
  /** Visited node ids in search order (so by non-decreasing hop), with their hop distances. */
  nodes: Int32Array;
  hops: Int32Array;
}

/** Edge scans between two looks at the cancellation token. */
const EDGE_CHUNK = 1 << 16;

export class FieldWalker {
  readonly n: number;
  private readonly queue: Int32Array;
  private readonly dist: Int32Array;
  private readonly stamp: Int32Array;
  private epoch = 0;

  constructor(private readonly g: FieldGraph) {
    this.n = g.n;
    this.queue = new Int32Array(g.n);
    this.dist = new Int32Array(g.n);
    this.stamp = new Int32Array(g.n);
  }

  /**
   * Breadth-first search from v up to `layers` hops. Fills the queue with the visited nodes and
   * returns the cumulative counts: ball[k] = nodes within k hops (k = 0..layers). Stops early once
   * every node is reached (the remaining entries are then n).
   */
  private search(v: number, layers: number, opts: FieldOptions): Int32Array {
    const { n, queue, dist, stamp } = this;
    if (!Number.isInteger(v) || v < 0 || v >= n) throw new RangeError(`node ${v} is not in 0..${n - 1}`);
    if (!Number.isInteger(layers) || layers < 0) throw new RangeError(`layers must be a non-negative integer, got ${layers}`);
    const symmetrise = opts.symmetrise === true;
    const rowZeroSends = (opts.sendingRow ?? 0) === 0;
    // Which rows list the senders of a node's messages.
    const first = rowZeroSends ? this.g.rev : this.g.fwd;
    const second = symmetrise ? (rowZeroSends ? this.g.fwd : this.g.rev) : null;
    const cancel = opts.cancel;

    if (this.epoch === 0x7fffffff) {
      stamp.fill(0);
      this.epoch = 0;
    }
    const ep = ++this.epoch;
    const ball = new Int32Array(layers + 1);
    queue[0] = v;
    stamp[v] = ep;
    dist[v] = 0;
    let head = 0, tail = 1, scanned = 0;
    ball[0] = 1;
    for (let k = 1; k <= layers; k++) {
      const levelEnd = tail;
      if (tail === n || head === levelEnd) {
        // Nothing more to reach: the ball stays as it is.
        ball.fill(tail, k);
        break;
      }
      while (head < levelEnd) {
        const u = queue[head++]!;
        for (let side = 0; side < 2; side++) {
          const rows = side === 0 ? first : second;
          if (!rows) continue;
          const ip = rows.indptr, ix = rows.indices;
          const end = ip[u + 1]!;
          for (let p = ip[u]!; p < end; p++) {
            const w = ix[p]!;
            if (stamp[w] !== ep) {
              stamp[w] = ep;
              dist[w] = k;
              queue[tail++] = w;
            }
          }
          scanned += end - ip[u]!;
          if (scanned >= EDGE_CHUNK) {
            scanned = 0;
            throwIfCancelled(cancel);
          }
        }
      }
      ball[k] = tail;
    }
    return ball;
  }

  /** Receptive field of node v for `layers` message-passing layers. */
  field(v: number, layers: number, opts: FieldOptions = {}): ReceptiveField {
    const ball = this.search(v, layers, opts);
    const total = ball[layers]!;
    const perHop = new Array<number>(layers + 1);
    perHop[0] = 1;
    for (let k = 1; k <= layers; k++) perHop[k] = ball[k]! - ball[k - 1]!;
    const nodes = this.queue.slice(0, total);
    const hops = new Int32Array(total);
    for (let i = 0; i < total; i++) hops[i] = this.dist[nodes[i]!]!;
    return {
      node: v, layers, sendingRow: opts.sendingRow ?? 0, symmetrised: opts.symmetrise === true,
      perHop, total, coverage: total / this.n, nodes, hops,
    };
  }

  /** Cumulative field sizes: result[k] = nodes within k hops of v, k = 0..layers. */
  ballSizes(v: number, layers: number, opts: FieldOptions = {}): Int32Array {
    return this.search(v, layers, opts);
  }

  /** Hop distance of node u in the most recent search, or -1 when it was not reached. */
  hopOf(u: number): number {
    return this.epoch > 0 && this.stamp[u] === this.epoch ? this.dist[u]! : -1;
  }
}

/** One-off receptive field (allocates a walker; keep a `FieldWalker` for repeated queries). */
export function receptiveField(g: FieldGraph, v: number, layers: number, opts: FieldOptions = {}): ReceptiveField {
  return new FieldWalker(g).field(v, layers, opts);
}

export interface CoverageCurveOptions extends FieldOptions {
  /** Deepest layer count (default 8): the curve has points L = 1..maxLayers. */
  maxLayers?: number;
  /** Nodes to sample (default 256); every node is used when the graph has no more than this. */
  sampleSize?: number;
  /** Seed of the sampling generator (default 1): the same seed gives the same sample. */
  seed?: number;
}

export interface CoverageCurve {
  /** layers[i] = i + 1. */
  layers: number[];
  /** Median coverage (share of all nodes within L hops) over the sampled nodes. */
  median: number[];
  /** 90th percentile of the same. */
  p90: number[];
  /** The sampled node ids, ascending. */
  sample: Int32Array;
  /** Whether the sample is the whole node set. */
  allNodes: boolean;
}

/**
 * Median and 90th-percentile coverage for L = 1..maxLayers over a deterministic node sample.
 * Percentiles interpolate linearly between order statistics (the default of numpy.percentile).
 */
export function coverageCurve(g: FieldGraph, opts: CoverageCurveOptions = {}): CoverageCurve {
  const maxLayers = opts.maxLayers ?? 8;
  const sampleSize = opts.sampleSize ?? 256;
  if (!Number.isInteger(maxLayers) || maxLayers < 1) throw new RangeError(`maxLayers must be a positive integer, got ${maxLayers}`);
  if (!Number.isInteger(sampleSize) || sampleSize < 1) throw new RangeError(`sampleSize must be a positive integer, got ${sampleSize}`);
  const n = g.n;
  const layers = Array.from({ length: maxLayers }, (_, i) => i + 1);
  if (n === 0) return { layers, median: layers.map(() => 0), p90: layers.map(() => 0), sample: new Int32Array(0), allNodes: true };
  const sample = sampleNodes(n, sampleSize, opts.seed ?? 1);
  const k = sample.length;
  // cov[L-1][i] = coverage of sample[i] at depth L
  const cov = layers.map(() => new Float64Array(k));
  const walker = new FieldWalker(g);
  for (let i = 0; i < k; i++) {
    throwIfCancelled(opts.cancel);
    const ball = walker.ballSizes(sample[i]!, maxLayers, opts);
    for (let L = 1; L <= maxLayers; L++) cov[L - 1]![i] = ball[L]! / n;
  }
  const median: number[] = [];
  const p90: number[] = [];
  for (const c of cov) {
    c.sort();
    median.push(percentileSorted(c, 50));
    p90.push(percentileSorted(c, 90));
  }
  return { layers, median, p90, sample, allNodes: k === n };
}

/** q-th percentile (0..100) of ascending values, linear between order statistics. */
export function percentileSorted(sorted: ArrayLike<number>, q: number): number {
  const m = sorted.length;
  if (m === 0) return NaN;
  const pos = (q / 100) * (m - 1);
  const lo = Math.floor(pos);
  const hi = Math.min(lo + 1, m - 1);
  const t = pos - lo;
  const a = sorted[lo]!, b = sorted[hi]!;
  return t === 0 ? a : a + (b - a) * t;
}

/**
 * `k` distinct node ids out of 0..n-1, ascending, chosen by Floyd's method with a seeded generator:
 * O(k) time and memory whatever n is. All nodes when k ≥ n.
 */
export function sampleNodes(n: number, k: number, seed: number): Int32Array {
  if (k >= n) {
    const all = new Int32Array(n);
    for (let i = 0; i < n; i++) all[i] = i;
    return all;
  }
  const rand = seededRandom(seed);
  const chosen = new Set<number>();
  for (let j = n - k; j < n; j++) {
    const t = Math.floor(rand() * (j + 1));
    chosen.add(chosen.has(t) ? j : t);
  }
  const out = Int32Array.from(chosen);
  out.sort();
  return out;
}

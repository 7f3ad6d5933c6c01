/**
 * What the receptive-field panel draws for one node: the field itself, a bounded and deterministic
 * selection of its nodes to draw, the edges among them, each drawn node's influence on the centre,
 * and the coverage curve. Pure computation over the two sorted CSR views of a graph; the node side
 * (node/analysis-service.ts) turns the result into the JSON of `hopscope/field`.
 *
 * Self-loops decide what "the field after L layers" means:
 * - with self-loops (default; GCN adds them, GraphSAGE / GIN keep the node's own state): a node's
 *   state after L layers depends on every node within L hops, so the field is the ball of radius L;
 * - without (each layer aggregates the neighbours only): the state after L layers depends only on
 *   the nodes joined to the centre by a walk of exactly L message steps. On a bipartite graph that is
 *   every other ring of the ball. A self-loop stored in the file still counts as a step.
 * The influence weights follow the same choice: row v of Â^L with Â = D̃^-1/2 (A + I) D̃^-1/2, or of
 * (D^-1/2 A D^-1/2)^L, both on the symmetrised simple graph (see influence.ts).
 *
 * Drawing cap: beyond `maxNodes` nodes, the drawn nodes are chosen per hop by water-filling (every
 * hop gets min(count, t) places with one threshold t, leftover places go to the nearest hops), so
 * small near hops are drawn in full and large far hops share what is left. Inside a hop, nodes with
 * an edge to an already chosen node come first (the drawing stays connected), then a fixed hash of
 * (seed, node id) decides. The same graph, node and options always give the same drawing.
 */
import type { Csr } from './structure/csr';
import { coverageCurve, FieldWalker, percentileSorted, sampleNodes, type FieldGraph, type SendingRow } from './propagation/field';
import { InfluencePropagator } from './propagation/influence';
import { simpleUndirected, throwIfCancelled, type Cancel } from './structure/simple-undirected';
import { featureMatrix, smoothingCurve, type FeatureMatrix, type SmoothingCurve } from './propagation/smoothing';
import type { DenseTensor } from '../formats/types';

export interface FieldViewOptions {
  /** Which row of the edge index sends (default 0). */
  sendingRow?: SendingRow;
  symmetrise?: boolean;
  /** Whether every layer keeps the node's own state (default true); see the file comment. */
  selfLoops?: boolean;
  /** Most nodes to draw, the centre included (default 2000, at least 1). */
  maxNodes?: number;
  /** Most edges to draw (default 30000): beyond it, the edges nearest the centre are kept. */
  maxEdges?: number;
  /** Seed of the hash that orders nodes inside a hop when sampling (default 1). */
  seed?: number;
  cancel?: Cancel;
}

export interface FieldView {
  node: number;
  layers: number;
  sendingRow: SendingRow;
  symmetrised: boolean;
  selfLoops: boolean;
  n: number;
  /** perHop[k] = field members at shortest hop distance k, k = 0..layers. */
  perHop: number[];
  /** Field members (nodes whose messages reach the centre after `layers` layers). */
  total: number;
  coverage: number;
  /** False only without self-loops, when no closed walk of exactly `layers` steps returns to the centre. */
  centreInField: boolean;
  /** Drawn nodes: the centre first, then by hop distance, then by id. */
  ids: Int32Array;
  hops: Int32Array;
  /** Influence of each drawn node on the centre (see the file comment). */
  weights: Float64Array;
  /** Drawn field members (the centre counts only when it is a member). */
  shown: number;
  shownPerHop: number[];
  /** Whether the cap left field members out. */
  sampled: boolean;
  /** Edges among the drawn nodes, each unordered pair once: indices a < b into `ids`, flattened. */
  edgeEnds: Int32Array;
  /** Per edge: 1 = messages ids[a] → ids[b] only, 2 = ids[b] → ids[a] only, 3 = both ways. */
  edgeDirs: Uint8Array;
  /** Edges among the drawn nodes before the edge cap (equal to the drawn count below it). */
  edgesTotal: number;
}

export interface PanelCoverage {
  layers: number[];
  median: number[];
  p90: number[];
  /** Nodes the curve is taken over. */
  sampled: number;
  allNodes: boolean;
}

export const DEFAULT_MAX_DRAWN = 2000;
export const DEFAULT_MAX_EDGES = 30_000;
/** Edge scans the coverage curve may spend; the node sample shrinks on large graphs to fit. */
const COVERAGE_BUDGET = 2e8;

/** Reusable buffers and derived graphs for repeated panel queries on one graph. */
export class FieldAnalyzer {
  readonly n: number;
  private readonly walker: FieldWalker;
  private sym: Csr | undefined;
  private propagator: InfluencePropagator | undefined;
  /** Index into the drawn list, -1 elsewhere (reset after each use). */
  private readonly pos: Int32Array;
  /** Visit stamps for the walk frontiers. */
  private readonly stamp: Int32Array;
  private epoch = 0;
  private listA: Int32Array;
  private listB: Int32Array;

  constructor(private readonly g: FieldGraph) {
    this.n = g.n;
    this.walker = new FieldWalker(g);
    this.pos = new Int32Array(g.n).fill(-1);
    this.stamp = new Int32Array(g.n);
    this.listA = new Int32Array(g.n);
    this.listB = new Int32Array(g.n);
  }

  /** The symmetrised simple graph (built on first use). */
  symmetrised(cancel?: Cancel): Csr {
    return (this.sym ??= simpleUndirected(this.g.fwd, this.g.rev, cancel));
  }

  private nextEpoch(): number {
    if (this.epoch === 0x7fffffff) { this.stamp.fill(0); this.epoch = 0; }
    return ++this.epoch;
  }

  /** Rows that list the senders of a node's messages: [first, second or null]. */
  private senderRows(sendingRow: SendingRow, symmetrise: boolean): [Csr, Csr | null] {
    const first = sendingRow === 0 ? this.g.rev : this.g.fwd;
    const second = symmetrise ? (sendingRow === 0 ? this.g.fwd : this.g.rev) : null;
    return [first, second];
  }

  /**
   * Walk frontiers without self-loops: F_0 = {v}, F_k = senders of F_(k-1). Calls `each(k, size)`
   * after every step and returns F_layers (its members, in no particular order).
   */
  walkFrontier(v: number, layers: number, sendingRow: SendingRow, symmetrise: boolean, each?: (k: number, size: number) => boolean | void, cancel?: Cancel): Int32Array {
    const [first, second] = this.senderRows(sendingRow, symmetrise);
    let cur = this.listA, next = this.listB;
    cur[0] = v;
    let curLen = 1;
    let scanned = 0;
    for (let k = 1; k <= layers; k++) {
      const ep = this.nextEpoch();
      const stamp = this.stamp;
      let nextLen = 0;
      for (let t = 0; t < curLen; t++) {
        const u = cur[t]!;
        for (let side = 0; side < 2; side++) {
          const rows = side === 0 ? first : second;
          if (!rows) continue;
          const ip = rows.indptr, ix = rows.indices;
          const end = ip[u + 1]!;
          for (let p = ip[u]!; p < end; p++) {
            const w = ix[p]!;
            if (stamp[w] !== ep) { stamp[w] = ep; next[nextLen++] = w; }
          }
          scanned += end - ip[u]!;
          if (scanned >= 1 << 16) { scanned = 0; throwIfCancelled(cancel); }
        }
      }
      [cur, next] = [next, cur];
      curLen = nextLen;
      if (each?.(k, curLen) === false) break;
      if (curLen === 0) {
        for (let j = k + 1; j <= layers; j++) each?.(j, 0);
        break;
      }
    }
    this.listA = cur; this.listB = next;
    return cur.slice(0, curLen);
  }

  /** The field of node v after `layers` layers, with the nodes to draw. */
  view(v: number, layers: number, opts: FieldViewOptions = {}): FieldView {
    const n = this.n;
    if (!Number.isInteger(v) || v < 0 || v >= n) throw new RangeError(`node ${v} is not in 0..${n - 1}`);
    if (!Number.isInteger(layers) || layers < 0) throw new RangeError(`layers must be a non-negative integer, got ${layers}`);
    const sendingRow = opts.sendingRow ?? 0;
    const symmetrise = opts.symmetrise === true;
    const selfLoops = opts.selfLoops !== false;
    const maxNodes = Math.max(1, Math.floor(opts.maxNodes ?? DEFAULT_MAX_DRAWN));

    // Members in ball order (non-decreasing hop) with their shortest hop distances.
    let members: Int32Array, memberHops: Int32Array;
    let centreInField = true;
    if (selfLoops) {
      const ball = this.walker.field(v, layers, { sendingRow, symmetrise, ...(opts.cancel ? { cancel: opts.cancel } : {}) });
      members = ball.nodes; memberHops = ball.hops;
    } else {
      const last = this.walkFrontier(v, layers, sendingRow, symmetrise, undefined, opts.cancel);
      const ep = this.nextEpoch();
      for (let i = 0; i < last.length; i++) this.stamp[last[i]!] = ep;
      const ball = this.walker.field(v, layers, { sendingRow, symmetrise, ...(opts.cancel ? { cancel: opts.cancel } : {}) });
      let m = 0;
      for (let i = 0; i < ball.total; i++) if (this.stamp[ball.nodes[i]!] === ep) m++;
      members = new Int32Array(m); memberHops = new Int32Array(m);
      m = 0;
      for (let i = 0; i < ball.total; i++) {
        if (this.stamp[ball.nodes[i]!] === ep) { members[m] = ball.nodes[i]!; memberHops[m] = ball.hops[i]!; m++; }
      }
      centreInField = this.stamp[v] === ep;
    }
    const total = members.length;
    const perHop = new Array<number>(layers + 1).fill(0);
    for (let i = 0; i < total; i++) perHop[memberHops[i]!]!++;

    const { ids, hops } = this.chooseDrawn(v, members, perHop, maxNodes, opts.seed ?? 1);
    const shownPerHop = new Array<number>(layers + 1).fill(0);
    for (let i = 0; i < ids.length; i++) if (i > 0 || centreInField) shownPerHop[hops[i]!]!++;
    const shown = ids.length - (centreInField ? 0 : 1);
    const maxEdges = Math.max(0, Math.floor(opts.maxEdges ?? DEFAULT_MAX_EDGES));
    const { edgeEnds, edgeDirs, edgesTotal } = this.inducedEdges(ids, hops, sendingRow, symmetrise, maxEdges);
    const weights = this.influenceOf(v, layers, selfLoops, ids, opts.cancel);
    return {
      node: v, layers, sendingRow, symmetrised: symmetrise, selfLoops, n,
      perHop, total, coverage: n ? total / n : 0, centreInField,
      ids, hops, weights, shown, shownPerHop, sampled: shown < total, edgeEnds, edgeDirs, edgesTotal,
    };
  }

  /**
   * The centre plus at most maxNodes - 1 members (see the file comment), ordered by hop, then id.
   * `members` is in ball order, so each hop is one contiguous run.
   */
  private chooseDrawn(v: number, members: Int32Array, perHop: number[], maxNodes: number, seed: number): { ids: Int32Array; hops: Int32Array } {
    const L = perHop.length - 1;
    // Members other than the centre, per hop.
    const count = perHop.slice();
    count[0] = 0;
    const others = members.length - (perHop[0]! > 0 ? 1 : 0);
    const budget = maxNodes - 1;
    const quota = count.slice();
    if (others > budget) {
      // Largest threshold t with sum(min(count, t)) <= budget, then leftovers to the nearest hops.
      let lo = 0, hi = Math.max(...count);
      while (lo < hi) {
        const mid = Math.ceil((lo + hi) / 2);
        let s = 0;
        for (let k = 1; k <= L; k++) s += Math.min(count[k]!, mid);
        if (s <= budget) lo = mid; else hi = mid - 1;
      }
      let left = budget;
      for (let k = 1; k <= L; k++) { quota[k] = Math.min(count[k]!, lo); left -= quota[k]!; }
      for (let k = 1; k <= L && left > 0; k++) if (quota[k]! < count[k]!) { quota[k]!++; left--; }
    }

    const chosen: number[] = [v];
    const chosenHop: number[] = [0];
    const pos = this.pos;
    pos[v] = 0;
    // Hop runs in `members`.
    let start = 0;
    for (let k = 0; k <= L; k++) {
      const end = start + perHop[k]!;
      if (k > 0 && quota[k]! > 0) {
        const run = members.subarray(start, end);
        const picked = quota[k]! >= run.length ? run : this.pickInHop(run, quota[k]!, seed);
        for (let i = 0; i < picked.length; i++) {
          const u = picked[i]!;
          pos[u] = chosen.length;
          chosen.push(u);
          chosenHop.push(k);
        }
      }
      start = end;
    }
    for (const u of chosen) pos[u] = -1;
    // Centre first, then by hop and id.
    const order = chosen.map((_, i) => i).slice(1).sort((a, b) => chosenHop[a]! - chosenHop[b]! || chosen[a]! - chosen[b]!);
    const ids = new Int32Array(chosen.length);
    const hops = new Int32Array(chosen.length);
    ids[0] = v; hops[0] = 0;
    order.forEach((i, j) => { ids[j + 1] = chosen[i]!; hops[j + 1] = chosenHop[i]!; });
    return { ids, hops };
  }

  /**
   * `q` nodes of one hop: those with an edge (either direction) to a node already chosen come
   * first, then the order of hash(seed, id), then the id. A size-q heap keeps it O(m log q).
   */
  private pickInHop(run: Int32Array, q: number, seed: number): Int32Array {
    const pos = this.pos;
    const { fwd, rev } = this.g;
    const attached = (u: number): boolean => {
      for (const rows of [fwd, rev]) {
        const end = rows.indptr[u + 1]!;
        for (let p = rows.indptr[u]!; p < end; p++) if (pos[rows.indices[p]!]! >= 0) return true;
      }
      return false;
    };
    // Rank key: attached nodes before the rest, then the hash; ties by id.
    const heapKey = new Float64Array(q);
    const heapId = new Int32Array(q);
    let size = 0;
    const worse = (ka: number, ia: number, kb: number, ib: number) => ka > kb || (ka === kb && ia > ib);
    const siftDown = (i: number) => {
      for (;;) {
        const l = 2 * i + 1, r = l + 1;
        let w = i;
        if (l < size && worse(heapKey[l]!, heapId[l]!, heapKey[w]!, heapId[w]!)) w = l;
        if (r < size && worse(heapKey[r]!, heapId[r]!, heapKey[w]!, heapId[w]!)) w = r;
        if (w === i) return;
        const tk = heapKey[i]!, ti = heapId[i]!;
        heapKey[i] = heapKey[w]!; heapId[i] = heapId[w]!;
        heapKey[w] = tk; heapId[w] = ti;
        i = w;
      }
    };
    for (let t = 0; t < run.length; t++) {
      const u = run[t]!;
      const key = (attached(u) ? 0 : 4294967296) + hash32(u, seed);
      if (size < q) {
        let i = size++;
        heapKey[i] = key; heapId[i] = u;
        while (i > 0) {
          const p = (i - 1) >> 1;
          if (!worse(heapKey[i]!, heapId[i]!, heapKey[p]!, heapId[p]!)) break;
          const tk = heapKey[i]!, ti = heapId[i]!;
          heapKey[i] = heapKey[p]!; heapId[i] = heapId[p]!;
          heapKey[p] = tk; heapId[p] = ti;
          i = p;
        }
      } else if (worse(heapKey[0]!, heapId[0]!, key, u)) {
        heapKey[0] = key; heapId[0] = u;
        siftDown(0);
      }
    }
    return heapId.slice(0, size);
  }

  /**
   * Unordered pairs of drawn nodes joined by a stored edge (self-loops left out), with directions.
   * Beyond `maxEdges` pairs, those nearest the centre are kept: by the hop of the farther end, then
   * of the nearer end, then by position. Public for the pair view (node/analysis-service.ts), which
   * passes each drawn node's distance to the nearer end of the pair as `hops`.
   */
  inducedEdges(ids: Int32Array, hops: Int32Array, sendingRow: SendingRow, symmetrise: boolean, maxEdges: number): { edgeEnds: Int32Array; edgeDirs: Uint8Array; edgesTotal: number } {
    const pos = this.pos;
    const m = ids.length;
    for (let i = 0; i < m; i++) pos[ids[i]!] = i;
    const { fwd } = this.g;
    const pairs = new Map<number, number>();
    for (let a = 0; a < m; a++) {
      const u = ids[a]!;
      const end = fwd.indptr[u + 1]!;
      for (let p = fwd.indptr[u]!; p < end; p++) {
        const b = pos[fwd.indices[p]!]!;
        if (b < 0 || b === a) continue;
        // Stored u → w; messages go u → w when row 0 sends, w → u otherwise.
        const forward = sendingRow === 0;
        const lo = a < b ? a : b, hi = a < b ? b : a;
        const fromLo = (a === lo) === forward;
        const bit = symmetrise ? 3 : fromLo ? 1 : 2;
        const key = lo * m + hi;
        pairs.set(key, (pairs.get(key) ?? 0) | bit);
      }
    }
    for (let i = 0; i < m; i++) pos[ids[i]!] = -1;
    let keys = [...pairs.keys()];
    const edgesTotal = keys.length;
    if (keys.length > maxEdges) {
      const far = (k: number) => hops[k % m]!, near = (k: number) => hops[Math.floor(k / m)]!;
      keys = keys.sort((x, y) => far(x) - far(y) || near(x) - near(y) || x - y).slice(0, maxEdges);
    }
    keys.sort((x, y) => x - y);
    const edgeEnds = new Int32Array(keys.length * 2);
    const edgeDirs = new Uint8Array(keys.length);
    keys.forEach((key, e) => {
      edgeEnds[2 * e] = Math.floor(key / m);
      edgeEnds[2 * e + 1] = key % m;
      edgeDirs[e] = pairs.get(key)!;
    });
    return { edgeEnds, edgeDirs, edgesTotal };
  }

  /** Influence of each of `ids` on v after `layers` steps, with or without the added self-loops. */
  private influenceOf(v: number, layers: number, selfLoops: boolean, ids: Int32Array, cancel?: Cancel): Float64Array {
    let row: Float64Array;
    if (selfLoops) {
      this.propagator ??= new InfluencePropagator(this.symmetrised(cancel), cancel);
      row = this.propagator.row(v, layers, { top: 0, fullRow: true, ...(cancel ? { cancel } : {}) }).row!;
    } else {
      row = plainPropagationRow(this.symmetrised(cancel), v, layers, cancel);
    }
    const w = new Float64Array(ids.length);
    for (let i = 0; i < ids.length; i++) w[i] = row[ids[i]!]!;
    return w;
  }

  /**
   * Median and 90th-percentile coverage for L = 1..maxLayers over a fixed node sample, with the
   * same self-loop choice as `view`. The sample holds every node when the graph is small, and fewer
   * (at least 16) when a full search per node would exceed the edge-scan budget.
   */
  coverage(opts: { sendingRow?: SendingRow; symmetrise?: boolean; selfLoops?: boolean; maxLayers?: number; cancel?: Cancel } = {}): PanelCoverage {
    const maxLayers = opts.maxLayers ?? 8;
    const sendingRow = opts.sendingRow ?? 0;
    const symmetrise = opts.symmetrise === true;
    const selfLoops = opts.selfLoops !== false;
    const entries = Math.max(1, this.g.fwd.indices.length * (symmetrise ? 2 : 1));
    const perNode = selfLoops ? entries : entries * maxLayers;
    const sampleSize = Math.max(16, Math.min(256, Math.floor(COVERAGE_BUDGET / perNode)));
    if (selfLoops) {
      const c = coverageCurve(this.g, { sendingRow, symmetrise, maxLayers, sampleSize, ...(opts.cancel ? { cancel: opts.cancel } : {}) });
      return { layers: c.layers, median: c.median, p90: c.p90, sampled: c.sample.length, allNodes: c.allNodes };
    }
    const n = this.n;
    const layers = Array.from({ length: maxLayers }, (_, i) => i + 1);
    if (n === 0) return { layers, median: layers.map(() => 0), p90: layers.map(() => 0), sampled: 0, allNodes: true };
    const sample = sampleNodes(n, sampleSize, 1);
    const cov = layers.map(() => new Float64Array(sample.length));
    for (let i = 0; i < sample.length; i++) {
      throwIfCancelled(opts.cancel);
      this.walkFrontier(sample[i]!, maxLayers, sendingRow, symmetrise, (k, size) => { cov[k - 1]![i] = size / n; }, opts.cancel);
    }
    const median: number[] = [], p90: number[] = [];
    for (const c of cov) { c.sort(); median.push(percentileSorted(c, 50)); p90.push(percentileSorted(c, 90)); }
    return { layers, median, p90, sampled: sample.length, allNodes: sample.length === n };
  }
}

/** A 32-bit mix of (id, seed) (the murmur3 finaliser): a fixed pseudo-random order of node ids. */
export function hash32(id: number, seed: number): number {
  let h = (id ^ Math.imul(seed, 0x9e3779b1)) >>> 0;
  h = Math.imul(h ^ (h >>> 16), 0x85ebca6b);
  h = Math.imul(h ^ (h >>> 13), 0xc2b2ae35);
  return (h ^ (h >>> 16)) >>> 0;
}

/**
 * Row v of (D^-1/2 A D^-1/2)^L on a simple undirected graph (no added self-loops; a node of degree 0
 * passes nothing on). Sparse steps from e_v; the matrix is symmetric, so row and column agree.
 */
export function plainPropagationRow(sym: Csr, v: number, layers: number, cancel?: Cancel): Float64Array {
  const n = sym.n;
  const { indptr, indices } = sym;
  const inv = new Float64Array(n);
  for (let u = 0; u < n; u++) {
    if ((u & 0xffff) === 0) throwIfCancelled(cancel);
    const d = indptr[u + 1]! - indptr[u]!;
    inv[u] = d > 0 ? 1 / Math.sqrt(d) : 0;
  }
  let cur = new Float64Array(n), next = new Float64Array(n);
  let curList = new Int32Array(n), nextList = new Int32Array(n);
  const inNext = new Uint8Array(n);
  cur[v] = 1; curList[0] = v;
  let curLen = 1;
  for (let step = 0; step < layers; step++) {
    throwIfCancelled(cancel);
    let nextLen = 0;
    for (let t = 0; t < curLen; t++) {
      if ((t & 0x3fff) === 0x3fff) throwIfCancelled(cancel);
      const j = curList[t]!;
      const c = cur[j]! * inv[j]!;
      cur[j] = 0;
      if (c === 0) continue;
      const end = indptr[j + 1]!;
      for (let p = indptr[j]!; p < end; p++) {
        const i = indices[p]!;
        if (!inNext[i]) { inNext[i] = 1; nextList[nextLen++] = i; }
        next[i]! += c * inv[i]!;
      }
    }
    for (let t = 0; t < nextLen; t++) inNext[nextList[t]!] = 0;
    [cur, next] = [next, cur];
    [curList, nextList] = [nextList, curList];
    curLen = nextLen;
  }
  return cur;
}

export interface SmoothingSummary extends SmoothingCurve {
  /** Feature columns used: the first `colsUsed` of `cols`, when all of them would cost too much. */
  colsUsed: number;
}

/** Multiply-adds (edges x columns x steps) the smoothing curve may spend. */
const SMOOTHING_BUDGET = 4e8;

/**
 * The Dirichlet-energy curve of the feature matrix over k = 0..steps GCN steps (smoothing.ts). On
 * large graphs with wide features only the first columns are used: Â acts on each column on its own
 * and the energy is a sum over columns, so the curve of a column subset is still exact for those
 * columns. Returns a message when the tensor cannot serve as features for n nodes.
 */
export function smoothingSummary(sym: Csr, features: DenseTensor, steps: number, cancel?: Cancel): SmoothingSummary | { error: string } {
  const fm = featureMatrix(features, sym.n);
  if ('error' in fm) return fm;
  const perColumn = Math.max(1, (sym.indices.length + sym.n) * Math.max(1, steps));
  const colsUsed = Math.max(1, Math.min(fm.cols, Math.floor(SMOOTHING_BUDGET / perColumn)));
  let m: FeatureMatrix = fm;
  if (colsUsed < fm.cols) {
    const data = new Float64Array(fm.rows * colsUsed);
    for (let i = 0; i < fm.rows; i++) data.set(fm.data.subarray(i * fm.cols, i * fm.cols + colsUsed), i * colsUsed);
    m = { data, rows: fm.rows, cols: colsUsed, nonFinite: fm.nonFinite };
  }
  const curve = smoothingCurve(sym, m, steps, cancel);
  return { ...curve, cols: fm.cols, colsUsed };
}

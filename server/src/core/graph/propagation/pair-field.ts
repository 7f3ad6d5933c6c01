/**
 * What a message-passing model sees of a node pair (U, V) — the link-prediction view of the
 * receptive field:
 * - the L-layer field of each end, their union and their overlap, counted per hop;
 * - whether the pair's own edge is stored in the message-passing graph (U → V as a column with
 *   row 0 = U and row 1 = V, and/or V → U), and whether messages travel along it under the sending
 *   row and symmetrise choice: a model asked to score the pair can then read the answer off the
 *   graph (a leaked edge);
 * - the shortest-path distance between U and V with every stored edge between them removed,
 *   ignoring direction (a common structural feature of a pair; null when none is left).
 *
 * Per-hop counts, with dU and dV the shortest hop distances of a field member from U and from V:
 * - u[k], v[k]: members of that end's field at distance k (as `FieldWalker` / `FieldAnalyzer` count);
 * - union[k]: members of either field with min(dU, dV) = k (a missing distance counts as infinite);
 * - overlap[k]: members of both fields with max(dU, dV) = k.
 * With self-loops (the default) the fields are balls, so the cumulative sums are |B_k(U) ∪ B_k(V)|
 * and |B_k(U) ∩ B_k(V)|. Without self-loops a field holds the nodes joined to its end by a walk of
 * exactly L message steps (see field-view.ts); the counts are still keyed by shortest distance.
 *
 * Memory: the searches reuse O(n) Int32Arrays (a `FieldWalker`, one mark array, one BFS queue and
 * distance array; a `FieldAnalyzer` only without self-loops); everything else is sized by the fields.
 */
import type { Csr } from '../structure/csr';
import { hasEdge } from '../structure/csr';
import { throwIfCancelled, type Cancel } from '../../cancel';
import { FieldWalker, type FieldGraph, type SendingRow } from './field';
import { FieldAnalyzer } from '../field-view';

export interface PairFieldOptions {
  /** Which row of the edge index sends (default 0). */
  sendingRow?: SendingRow;
  symmetrise?: boolean;
  /** Whether every layer keeps the node's own state (default true); see field-view.ts. */
  selfLoops?: boolean;
  cancel?: Cancel;
}

export interface PairHopCounts {
  u: number[];
  v: number[];
  union: number[];
  overlap: number[];
}

export interface PairField {
  u: number;
  v: number;
  layers: number;
  sendingRow: SendingRow;
  symmetrised: boolean;
  selfLoops: boolean;
  n: number;
  /** Counts per hop k = 0..layers (see the file comment). */
  perHop: PairHopCounts;
  /** Field sizes: each end's, the union's and the overlap's. */
  total: { u: number; v: number; union: number; overlap: number };
  /** Stored edges between the ends: uToV = some column has row 0 = u and row 1 = v; vToU the reverse. */
  storedEdge: { uToV: boolean; vToU: boolean };
  /** Messages along the pair's own edges: v hears from u directly, u hears from v directly. */
  carries: { uToV: boolean; vToU: boolean };
  /** Undirected shortest-path length between u and v once every edge between them is removed; null when none. */
  distanceWithoutPairEdge: number | null;
  /** Union members (u, v first, then by min distance, then id) with their distances to each end (-1: not in that field). */
  ids: Int32Array;
  hopsU: Int32Array;
  hopsV: Int32Array;
}

const EDGE_CHUNK = 1 << 16;

interface Members { nodes: Int32Array; hops: Int32Array }

/** Reusable buffers for repeated pair queries on one graph. */
export class PairFieldWalker {
  readonly n: number;
  private readonly walker: FieldWalker;
  private analyzer: FieldAnalyzer | undefined;
  private mark: Int32Array | undefined;
  private queue: Int32Array | undefined;
  private dist: Int32Array | undefined;

  constructor(private readonly g: FieldGraph, analyzer?: FieldAnalyzer) {
    this.n = g.n;
    this.walker = new FieldWalker(g);
    this.analyzer = analyzer;
  }

  private members(x: number, layers: number, opts: PairFieldOptions): Members {
    const sendingRow = opts.sendingRow ?? 0;
    const symmetrise = opts.symmetrise === true;
    const cancel = opts.cancel ? { cancel: opts.cancel } : {};
    const ball = this.walker.field(x, layers, { sendingRow, symmetrise, ...cancel });
    if (opts.selfLoops !== false) return { nodes: ball.nodes, hops: ball.hops };
    // Without self-loops: the ball's members that end a walk of exactly `layers` steps.
    this.analyzer ??= new FieldAnalyzer(this.g);
    const last = this.analyzer.walkFrontier(x, layers, sendingRow, symmetrise, undefined, opts.cancel);
    const mark = (this.mark ??= new Int32Array(this.n));
    for (let i = 0; i < last.length; i++) mark[last[i]!] = 1;
    let m = 0;
    for (let i = 0; i < ball.total; i++) if (mark[ball.nodes[i]!]) m++;
    const nodes = new Int32Array(m), hops = new Int32Array(m);
    m = 0;
    for (let i = 0; i < ball.total; i++) {
      const w = ball.nodes[i]!;
      if (mark[w]) { nodes[m] = w; hops[m] = ball.hops[i]!; m++; }
    }
    for (let i = 0; i < last.length; i++) mark[last[i]!] = 0;
    return { nodes, hops };
  }

  field(u: number, v: number, layers: number, opts: PairFieldOptions = {}): PairField {
    const n = this.n;
    for (const x of [u, v]) if (!Number.isInteger(x) || x < 0 || x >= n) throw new RangeError(`node ${x} is not in 0..${n - 1}`);
    if (!Number.isInteger(layers) || layers < 0) throw new RangeError(`layers must be a non-negative integer, got ${layers}`);
    const sendingRow = opts.sendingRow ?? 0;
    const symmetrise = opts.symmetrise === true;
    const selfLoops = opts.selfLoops !== false;

    const a = this.members(u, layers, opts);
    const b = this.members(v, layers, opts);
    const zeros = () => new Array<number>(layers + 1).fill(0);
    const perHop: PairHopCounts = { u: zeros(), v: zeros(), union: zeros(), overlap: zeros() };
    for (let i = 0; i < a.hops.length; i++) perHop.u[a.hops[i]!]!++;
    for (let i = 0; i < b.hops.length; i++) perHop.v[b.hops[i]!]!++;

    // mark[w] = dU + 1 for U's members; negated once matched by a V member.
    const mark = (this.mark ??= new Int32Array(n));
    for (let i = 0; i < a.nodes.length; i++) mark[a.nodes[i]!] = a.hops[i]! + 1;
    let unionSize = 0, overlapSize = 0;
    for (let i = 0; i < b.nodes.length; i++) {
      const w = b.nodes[i]!, dv = b.hops[i]!;
      const m = mark[w]!;
      if (m > 0) {
        const du = m - 1;
        perHop.union[Math.min(du, dv)]!++;
        perHop.overlap[Math.max(du, dv)]!++;
        overlapSize++;
        mark[w] = -m;
      } else {
        perHop.union[dv]!++;
      }
      unionSize++;
    }
    for (let i = 0; i < a.nodes.length; i++) {
      if (mark[a.nodes[i]!]! > 0) { perHop.union[a.hops[i]!]!++; unionSize++; }
    }

    // The union's members with both distances, for drawing: u, v first, then by min distance and id.
    const ids = new Int32Array(unionSize), hopsU = new Int32Array(unionSize), hopsV = new Int32Array(unionSize);
    let t = 0;
    for (let i = 0; i < b.nodes.length; i++) {
      const w = b.nodes[i]!, m = mark[w]!;
      ids[t] = w; hopsV[t] = b.hops[i]!; hopsU[t] = m < 0 ? -m - 1 : -1; t++;
    }
    for (let i = 0; i < a.nodes.length; i++) {
      const w = a.nodes[i]!;
      if (mark[w]! > 0) { ids[t] = w; hopsU[t] = a.hops[i]!; hopsV[t] = -1; t++; }
      mark[w] = 0;
    }
    const order = sortUnion(ids, hopsU, hopsV, u, v);

    const { fwd, rev } = this.g;
    const storedEdge = { uToV: hasEdge(fwd, u, v), vToU: hasEdge(fwd, v, u) };
    // A stored column x → y carries messages x → y when row 0 sends, y → x when row 1 sends.
    const rowZero = sendingRow === 0;
    const carries = {
      uToV: symmetrise ? storedEdge.uToV || storedEdge.vToU : rowZero ? storedEdge.uToV : storedEdge.vToU,
      vToU: symmetrise ? storedEdge.uToV || storedEdge.vToU : rowZero ? storedEdge.vToU : storedEdge.uToV,
    };
    const distance = this.distanceWithout(u, v, fwd, rev, opts.cancel);
    return {
      u, v, layers, sendingRow, symmetrised: symmetrise, selfLoops, n, perHop,
      total: { u: a.nodes.length, v: b.nodes.length, union: unionSize, overlap: overlapSize },
      storedEdge, carries, distanceWithoutPairEdge: distance,
      ids: order.ids, hopsU: order.hopsU, hopsV: order.hopsV,
    };
  }

  /** Breadth-first search from u over both directions, never stepping directly between u and v. */
  private distanceWithout(u: number, v: number, fwd: Csr, rev: Csr, cancel?: Cancel): number | null {
    if (u === v) return 0;
    const n = this.n;
    const queue = (this.queue ??= new Int32Array(n));
    const dist = (this.dist ??= new Int32Array(n).fill(-1));
    queue[0] = u; dist[u] = 0;
    let head = 0, tail = 1, scanned = 0;
    let found: number | null = null;
    search: while (head < tail) {
      const x = queue[head++]!;
      const dx = dist[x]!;
      for (let side = 0; side < 2; side++) {
        const rows = side === 0 ? fwd : rev;
        const ip = rows.indptr, ix = rows.indices;
        const end = ip[x + 1]!;
        for (let p = ip[x]!; p < end; p++) {
          const w = ix[p]!;
          if (dist[w] !== -1) continue;
          if (x === u && w === v) continue; // the pair's own edge, either direction
          dist[w] = dx + 1;
          queue[tail++] = w;
          if (w === v) { found = dx + 1; break search; }
        }
        scanned += end - ip[x]!;
        if (scanned >= EDGE_CHUNK) {
          scanned = 0;
          if (cancel?.isCancellationRequested) { for (let i = 0; i < tail; i++) dist[queue[i]!] = -1; throwIfCancelled(cancel); }
        }
      }
    }
    for (let i = 0; i < tail; i++) dist[queue[i]!] = -1;
    return found;
  }
}

function sortUnion(ids: Int32Array, hopsU: Int32Array, hopsV: Int32Array, u: number, v: number): { ids: Int32Array; hopsU: Int32Array; hopsV: Int32Array } {
  const m = ids.length;
  const key = (i: number) => {
    const w = ids[i]!;
    if (w === u) return -2;
    if (w === v) return -1;
    const du = hopsU[i]!, dv = hopsV[i]!;
    return du < 0 ? dv : dv < 0 ? du : Math.min(du, dv);
  };
  const idx = new Int32Array(m);
  for (let i = 0; i < m; i++) idx[i] = i;
  const keys = new Int32Array(m);
  for (let i = 0; i < m; i++) keys[i] = key(i);
  idx.sort((x, y) => keys[x]! - keys[y]! || ids[x]! - ids[y]!);
  const out = { ids: new Int32Array(m), hopsU: new Int32Array(m), hopsV: new Int32Array(m) };
  for (let j = 0; j < m; j++) {
    const i = idx[j]!;
    out.ids[j] = ids[i]!; out.hopsU[j] = hopsU[i]!; out.hopsV[j] = hopsV[i]!;
  }
  return out;
}

/** One-off pair field (allocates its buffers; keep a `PairFieldWalker` for repeated queries). */
export function pairField(g: FieldGraph, u: number, v: number, layers: number, opts: PairFieldOptions = {}): PairField {
  return new PairFieldWalker(g).field(u, v, layers, opts);
}

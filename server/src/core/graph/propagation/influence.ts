/**
 * Influence of every node on node v after L propagation steps: row v of Â^L, where
 *   Â = D̃^-1/2 (A + I) D̃^-1/2   (GCN normalisation, Kipf & Welling 2017), or
 *   P = D̃^-1 (A + I)            (random-walk variant),
 * A is the symmetrised simple graph (both directions, duplicates merged, self-loops dropped) and
 * D̃ the degree matrix of A + I. Because every node keeps its own self-loop, the row is non-zero
 * exactly on the nodes within L hops of v.
 *
 * The row is computed by L sparse steps from the unit vector e_v: each step touches only the
 * current support and its edges (two Float64Array(N) buffers and a touched-list, reused between
 * calls on one `InfluencePropagator`). No N x N matrix is ever formed.
 */
import type { Csr } from '../structure/csr';
import { simpleUndirected, throwIfCancelled, type Cancel } from '../structure/simple-undirected';

export type InfluenceNorm = 'gcn' | 'random-walk';

export interface InfluenceOptions {
  /** 'gcn' (default): D̃^-1/2 (A+I) D̃^-1/2; 'random-walk': D̃^-1 (A+I). */
  norm?: InfluenceNorm;
  /** Divide the row by its sum, so the weights form a distribution over the field. */
  rowNormalise?: boolean;
  /** How many of the heaviest nodes to return (default 50). */
  top?: number;
  /** Also return the whole row as a Float64Array of length N. */
  fullRow?: boolean;
  cancel?: Cancel;
}

export interface InfluenceRow {
  node: number;
  layers: number;
  norm: InfluenceNorm;
  rowNormalised: boolean;
  /** The heaviest nodes, by weight descending (ties: smaller id first). */
  topNodes: Int32Array;
  topWeights: Float64Array;
  /** Nodes with a non-zero weight (= nodes within `layers` hops on the symmetrised graph). */
  support: number;
  /** Sum of the row before any row normalisation. */
  rowSum: number;
  row?: Float64Array;
}

/** Edge scans between two looks at the cancellation token. */
const EDGE_CHUNK = 1 << 16;

export class InfluencePropagator {
  readonly n: number;
  /** 1 / sqrt(1 + d_u) and 1 / (1 + d_u), d_u = undirected degree. */
  private readonly invSqrt: Float64Array;
  private readonly invDeg: Float64Array;
  private cur: Float64Array;
  private next: Float64Array;
  private curList: Int32Array;
  private nextList: Int32Array;
  /** 1 when the node is in nextList. */
  private readonly inNext: Uint8Array;

  /** `sym` must be a simple undirected graph (see `simpleUndirected`); `cancel` is looked at every 65,536 nodes. */
  constructor(private readonly sym: Csr, cancel?: Cancel) {
    const n = (this.n = sym.n);
    this.invSqrt = new Float64Array(n);
    this.invDeg = new Float64Array(n);
    for (let u = 0; u < n; u++) {
      if ((u & 0xffff) === 0) throwIfCancelled(cancel);
      const dt = 1 + sym.indptr[u + 1]! - sym.indptr[u]!;
      this.invSqrt[u] = 1 / Math.sqrt(dt);
      this.invDeg[u] = 1 / dt;
    }
    this.cur = new Float64Array(n);
    this.next = new Float64Array(n);
    this.curList = new Int32Array(n);
    this.nextList = new Int32Array(n);
    this.inNext = new Uint8Array(n);
  }

  /** From the two sorted CSR views of a graph (symmetrises it first). */
  static fromGraph(g: { fwd: Csr; rev: Csr }, cancel?: Cancel): InfluencePropagator {
    return new InfluencePropagator(simpleUndirected(g.fwd, g.rev, cancel), cancel);
  }

  row(v: number, layers: number, opts: InfluenceOptions = {}): InfluenceRow {
    const n = this.n;
    if (!Number.isInteger(v) || v < 0 || v >= n) throw new RangeError(`node ${v} is not in 0..${n - 1}`);
    if (!Number.isInteger(layers) || layers < 0) throw new RangeError(`layers must be a non-negative integer, got ${layers}`);
    const norm = opts.norm ?? 'gcn';
    const top = opts.top ?? 50;
    const { indptr, indices } = this.sym;
    const inNext = this.inNext;
    // Scatter factors: GCN sends x_j / sqrt(d̃_j) and scales at the receiver by 1 / sqrt(d̃_i);
    // the random walk (a row vector times P) sends r_j / d̃_j and does not scale at the receiver.
    const send = norm === 'gcn' ? this.invSqrt : this.invDeg;
    const gcn = norm === 'gcn';
    const invSqrt = this.invSqrt;

    let cur = this.cur, next = this.next, curList = this.curList, nextList = this.nextList;
    cur[v] = 1;
    curList[0] = v;
    let curLen = 1;
    let scanned = 0;
    for (let step = 0; step < layers; step++) {
      let nextLen = 0;
      for (let t = 0; t < curLen; t++) {
        const j = curList[t]!;
        const c = cur[j]! * send[j]!;
        cur[j] = 0;
        // the self-loop of A + I
        if (!inNext[j]) { inNext[j] = 1; nextList[nextLen++] = j; }
        next[j]! += gcn ? c * invSqrt[j]! : c;
        const end = indptr[j + 1]!;
        for (let p = indptr[j]!; p < end; p++) {
          const i = indices[p]!;
          if (!inNext[i]) { inNext[i] = 1; nextList[nextLen++] = i; }
          next[i]! += gcn ? c * invSqrt[i]! : c;
        }
        scanned += end - indptr[j]! + 1;
        if (scanned >= EDGE_CHUNK) {
          scanned = 0;
          if (opts.cancel?.isCancellationRequested) {
            this.clear(cur, curList, curLen, next, nextList, nextLen);
            throwIfCancelled(opts.cancel);
          }
        }
      }
      for (let t = 0; t < nextLen; t++) inNext[nextList[t]!] = 0;
      [cur, next] = [next, cur];
      [curList, nextList] = [nextList, curList];
      curLen = nextLen;
    }
    this.cur = cur; this.next = next; this.curList = curList; this.nextList = nextList;

    let rowSum = 0;
    for (let t = 0; t < curLen; t++) rowSum += cur[curList[t]!]!;
    const scale = opts.rowNormalise ? 1 / rowSum : 1;
    if (scale !== 1) for (let t = 0; t < curLen; t++) cur[curList[t]!]! *= scale;

    const [topNodes, topWeights] = heaviest(cur, curList, curLen, Math.max(0, Math.min(top, curLen)));
    let row: Float64Array | undefined;
    if (opts.fullRow) {
      row = new Float64Array(n);
      for (let t = 0; t < curLen; t++) row[curList[t]!] = cur[curList[t]!]!;
    }
    const support = curLen;
    // leave the buffers zeroed for the next call
    for (let t = 0; t < curLen; t++) cur[curList[t]!] = 0;
    return {
      node: v, layers, norm, rowNormalised: opts.rowNormalise === true,
      topNodes, topWeights, support, rowSum, ...(row ? { row } : {}),
    };
  }

  private clear(cur: Float64Array, curList: Int32Array, curLen: number, next: Float64Array, nextList: Int32Array, nextLen: number): void {
    for (let t = 0; t < curLen; t++) cur[curList[t]!] = 0;
    for (let t = 0; t < nextLen; t++) { next[nextList[t]!] = 0; this.inNext[nextList[t]!] = 0; }
  }
}

/** One-off influence row (symmetrises the graph each time; keep an `InfluencePropagator` for repeated queries). */
export function influenceRow(g: { fwd: Csr; rev: Csr }, v: number, layers: number, opts: InfluenceOptions = {}): InfluenceRow {
  return InfluencePropagator.fromGraph(g, opts.cancel).row(v, layers, opts);
}

/** Whether (wa, a) ranks before (wb, b): heavier first, then the smaller id. */
const before = (wa: number, a: number, wb: number, b: number): boolean => wa > wb || (wa === wb && a < b);

/**
 * The k heaviest of the listed entries, heaviest first, by a size-k min-heap (root = the entry
 * that ranks last): O(m log k) for m listed entries.
 */
function heaviest(values: Float64Array, list: Int32Array, m: number, k: number): [Int32Array, Float64Array] {
  const hn = new Int32Array(k);
  const hw = new Float64Array(k);
  let size = 0;
  const siftDown = (i: number): void => {
    for (;;) {
      const l = 2 * i + 1, r = l + 1;
      let worst = i;
      if (l < size && before(hw[worst]!, hn[worst]!, hw[l]!, hn[l]!)) worst = l;
      if (r < size && before(hw[worst]!, hn[worst]!, hw[r]!, hn[r]!)) worst = r;
      if (worst === i) return;
      const tn = hn[i]!, tw = hw[i]!;
      hn[i] = hn[worst]!; hw[i] = hw[worst]!;
      hn[worst] = tn; hw[worst] = tw;
      i = worst;
    }
  };
  for (let t = 0; t < m && k > 0; t++) {
    const u = list[t]!, w = values[u]!;
    if (size < k) {
      // sift up
      let i = size++;
      hn[i] = u; hw[i] = w;
      while (i > 0) {
        const p = (i - 1) >> 1;
        if (!before(hw[p]!, hn[p]!, hw[i]!, hn[i]!)) break;
        const tn = hn[i]!, tw = hw[i]!;
        hn[i] = hn[p]!; hw[i] = hw[p]!;
        hn[p] = tn; hw[p] = tw;
        i = p;
      }
    } else if (before(w, u, hw[0]!, hn[0]!)) {
      hn[0] = u; hw[0] = w;
      siftDown(0);
    }
  }
  // Pop the heap from the back: repeatedly move the last-ranked entry to the end.
  const outN = new Int32Array(k);
  const outW = new Float64Array(k);
  for (let pos = k - 1; pos >= 0; pos--) {
    outN[pos] = hn[0]!; outW[pos] = hw[0]!;
    size--;
    hn[0] = hn[size]!; hw[0] = hw[size]!;
    siftDown(0);
  }
  return [outN, outW];
}

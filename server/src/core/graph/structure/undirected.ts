/**
 * The undirected simple view of a stored graph, shared by the structure analyses (1-WL, bridges,
 * curvature).
 *
 * Nodes u and v are adjacent when the file stores u → v or v → u (or both): the graph is
 * symmetrised. Self-loops are dropped and repeated entries collapse into one edge. Each adjacency
 * entry keeps a multiplicity: the larger of the two directed counts, max(#(u → v), #(v → u)). So an
 * edge index that stores every undirected edge once in each direction gives multiplicity 1, and one
 * that stores the pair twice in each direction (a doubled edge) gives 2. Only the bridge search
 * looks at multiplicities.
 *
 * Built in O(N + E) by merging the sorted forward and reverse rows; typed arrays only.
 */
import { buildSortedPair, type Csr } from './csr';
import { throwIfCancelled, type Cancel } from '../../cancel';

export { AnalysisCancelled, throwIfCancelled, type Cancel } from '../../cancel';

export interface UndirectedGraph extends Csr {
  /** Row u: the neighbours of u, sorted ascending, no repeats, never u itself. */
  readonly indptr: Int32Array;
  readonly indices: Int32Array;
  /** Multiplicity of each adjacency entry (aligned with `indices`). */
  readonly mult: Int32Array;
}

/** The rows of an undirected view without its multiplicities (all that 1-WL, the ceiling and the curvature read). */
export type UndirectedRows = Pick<UndirectedGraph, 'n' | 'indptr' | 'indices'>;

/**
 * The undirected view from the sorted forward and reverse CSR of a graph (as returned by
 * `buildSortedPair` or `loadGraph`). `cancel` is looked at every 8,192 rows of each pass.
 *
 * `mult` is computed when first read (one more merge of the two directions, `multiplicities`):
 * only the bridge search and the views cut or joined from this one read it, and writing it for
 * every view cost 1-WL, the spectrum and curvature 4 fresh bytes per entry (bench/README.md).
 */
export function undirectedView(fwd: Csr, rev: Csr, cancel?: Cancel): UndirectedGraph {
  const { n, indptr, indices } = mergeRows(fwd, rev, cancel);
  let mult: Int32Array | undefined;
  return {
    n, indptr, indices,
    get mult(): Int32Array { return (mult ??= multiplicities(fwd, rev, indptr)); },
  };
}

/**
 * The multiplicity of each entry of the merged rows whose offsets are `indptr` (as `mergeRows`
 * builds them): max(#(u → x), #(x → u)), in the same order as the merged row's entries.
 */
function multiplicities(fwd: Csr, rev: Csr, indptr: Int32Array): Int32Array {
  const n = fwd.n;
  const fp = fwd.indptr, fi = fwd.indices, rp = rev.indptr, ri = rev.indices;
  const mult = new Int32Array(indptr[n]!);
  for (let u = 0; u < n; u++) {
    let a = fp[u]!, b = rp[u]!;
    const ae = fp[u + 1]!, be = rp[u + 1]!;
    let w = indptr[u]!;
    while (a < ae || b < be) {
      const x = a < ae && (b >= be || fi[a]! <= ri[b]!) ? fi[a]! : ri[b]!;
      let cf = 0, cr = 0;
      while (a < ae && fi[a] === x) { a++; cf++; }
      while (b < be && ri[b] === x) { b++; cr++; }
      if (x === u) continue;
      mult[w++] = cf > cr ? cf : cr;
    }
  }
  return mult;
}

/**
 * Row u of the result: the sorted union of fwd row u and rev row u, repeats merged, u left out.
 * Two passes: the row lengths, then the rows (nothing beyond the result is allocated).
 */
export function mergeRows(fwd: Csr, rev: Csr, cancel?: Cancel): Csr {
  const n = fwd.n;
  const fp = fwd.indptr, fi = fwd.indices, rp = rev.indptr, ri = rev.indices;
  // Pass 1: row lengths of the merged, de-duplicated rows.
  const indptr = new Int32Array(n + 1);
  for (let u = 0; u < n; u++) {
    if ((u & 0x1fff) === 0) throwIfCancelled(cancel);
    let a = fp[u]!, b = rp[u]!;
    const ae = fp[u + 1]!, be = rp[u + 1]!;
    let count = 0, last = -1;
    while (a < ae || b < be) {
      const x = b >= be || (a < ae && fi[a]! <= ri[b]!) ? fi[a++]! : ri[b++]!;
      if (x !== last && x !== u) count++;
      last = x;
    }
    indptr[u + 1] = indptr[u]! + count;
  }
  // Pass 2: the neighbours.
  const indices = new Int32Array(indptr[n]!);
  for (let u = 0; u < n; u++) {
    if ((u & 0x1fff) === 0) throwIfCancelled(cancel);
    let a = fp[u]!, b = rp[u]!;
    const ae = fp[u + 1]!, be = rp[u + 1]!;
    let w = indptr[u]!, last = -1;
    while (a < ae || b < be) {
      const x = b >= be || (a < ae && fi[a]! <= ri[b]!) ? fi[a++]! : ri[b++]!;
      if (x !== last && x !== u) indices[w++] = x;
      last = x;
    }
  }
  return { n, indptr, indices };
}

/** The undirected view straight from an edge list (ids in [0, n)). */
export function undirectedFromEdges(n: number, src: Int32Array, dst: Int32Array): UndirectedGraph {
  const { fwd, rev } = buildSortedPair(n, src, dst);
  return undirectedView(fwd, rev);
}

/** Number of undirected edges (each counted once, multiplicities ignored). */
export function undirectedEdgeCount(g: UndirectedRows): number {
  return g.indptr[g.n]! / 2;
}

/**
 * The disjoint union of two undirected views: the nodes of `b` follow those of `a`
 * (node v of b becomes a.n + v).
 */
export function disjointUnion(a: UndirectedRows, b: UndirectedRows): UndirectedRows {
  const n = a.n + b.n;
  const ea = a.indptr[a.n]!, eb = b.indptr[b.n]!;
  const indptr = new Int32Array(n + 1);
  indptr.set(a.indptr, 0);
  for (let v = 1; v <= b.n; v++) indptr[a.n + v] = ea + b.indptr[v]!;
  const indices = new Int32Array(ea + eb);
  indices.set(a.indices, 0);
  for (let k = 0; k < eb; k++) indices[ea + k] = b.indices[k]! + a.n;
  return { n, indptr, indices };
}

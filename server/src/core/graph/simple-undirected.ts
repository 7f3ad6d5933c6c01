/**
 * The symmetrised simple graph that the GCN-style analyses work on (influence, homophily,
 * smoothing): an edge u — w whenever the file has u → w or w → u, each pair once, self-loops
 * dropped. Built in O(N + E) by merging the sorted forward and reverse rows.
 */
import type { Csr } from './csr';

import { throwIfCancelled, type Cancel } from '../cancel';

export { AnalysisCancelled, throwIfCancelled, type Cancel } from '../cancel';

/** Rows (nodes) handled between two looks at the cancellation token. */
const ROW_CHUNK = 1 << 15;

/**
 * Row u = the distinct neighbours w ≠ u of u in either direction, sorted ascending; the row
 * length is the undirected degree. Each undirected edge appears in both rows.
 * `fwd` and `rev` must have sorted rows (as `buildSortedPair` makes them).
 */
export function simpleUndirected(fwd: Csr, rev: Csr, cancel?: Cancel): Csr {
  const n = fwd.n;
  const fp = fwd.indptr, fi = fwd.indices, rp = rev.indptr, ri = rev.indices;
  /** Merges fwd row u and rev row u; writes the distinct non-loop ids from `at` when `out` is given. */
  const merge = (u: number, out: Int32Array | null, at: number): number => {
    let a = fp[u]!, b = rp[u]!;
    const ae = fp[u + 1]!, be = rp[u + 1]!;
    let last = -1;
    let count = 0;
    while (a < ae || b < be) {
      const w = b >= be || (a < ae && fi[a]! <= ri[b]!) ? fi[a++]! : ri[b++]!;
      if (w === last || w === u) continue;
      last = w;
      if (out) out[at + count] = w;
      count++;
    }
    return count;
  };
  const indptr = new Int32Array(n + 1);
  for (let u = 0; u < n; u++) {
    if ((u & (ROW_CHUNK - 1)) === 0) throwIfCancelled(cancel);
    indptr[u + 1] = indptr[u]! + merge(u, null, 0);
  }
  const indices = new Int32Array(indptr[n]!);
  for (let u = 0; u < n; u++) {
    if ((u & (ROW_CHUNK - 1)) === 0) throwIfCancelled(cancel);
    merge(u, indices, indptr[u]!);
  }
  return { n, indptr, indices };
}

/** Undirected degree of every node (row lengths of a simple undirected graph). */
export function degreesOf(sym: Csr): Int32Array {
  const d = new Int32Array(sym.n);
  for (let u = 0; u < sym.n; u++) d[u] = sym.indptr[u + 1]! - sym.indptr[u]!;
  return d;
}

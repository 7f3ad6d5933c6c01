/**
 * The symmetrised simple graph that the GCN-style analyses work on (influence, homophily,
 * smoothing): an edge u — w whenever the file has u → w or w → u, each pair once, self-loops
 * dropped. Built in O(N + E) by merging the sorted forward and reverse rows.
 */
import type { Csr } from './csr';
import { throwIfCancelled, type Cancel } from '../../cancel';
import { mergeRows } from './undirected';

export { AnalysisCancelled, throwIfCancelled, type Cancel } from '../../cancel';

/**
 * Row u = the distinct neighbours w ≠ u of u in either direction, sorted ascending; the row
 * length is the undirected degree. `fwd` and `rev` must have sorted rows (as `buildSortedPair`
 * makes them).
 */
export function simpleUndirected(fwd: Csr, rev: Csr, cancel?: Cancel): Csr {
  throwIfCancelled(cancel);
  // The same merge as the structure analyses' view, without the edge multiplicities.
  const { n, indptr, indices } = mergeRows(fwd, rev, cancel);
  return { n, indptr, indices };
}

/**
 * Sparse ids: with no per-node tensor and no declared count, ids far beyond what per-node arrays
 * may hold are a numbering (user or product numbers), not a node count. The graph is checked on
 * its distinct ids, as NetworkX reads such a file, and the renumbering is suggested.
 */
import type { GraphContext } from './context';

export function checkSparseIds(g: GraphContext): void {
  const { edges, count: { n, maxId }, base: { indexBase }, kept: { sparseIds, idOf }, touched, report } = g;
  if (!sparseIds) return;
  const sp = edges.part;
  const e = edges.src.length;
  let at = 0;
  for (let k = 0; k < e; k++) if (idOf(k, 0) === maxId || idOf(k, 1) === maxId) { at = k; break; }
  report(sp, 'sparse-ids',
    `${sp.tensor.name}: ids are sparse: ${touched} distinct id${touched === 1 ? '' : 's'} up to ${maxId + indexBase}; ` +
    `checked on the distinct ids (${touched} node${touched === 1 ? '' : 's'}). A model that takes the largest id + 1 as the ` +
    `node count would hold ${n} nodes, ${n - touched} of them without edges: renumber the ids to ${indexBase}..${touched - 1 + indexBase} ` +
    `(e.g. np.unique(edge_index, return_inverse=True)) and keep the original ids beside them.`,
    n - touched, [edges.locate(at, 'edge')]);
}

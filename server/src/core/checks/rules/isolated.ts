/**
 * Nodes without edges (self-loops aside), named by id; and a graph with no nodes or no edges.
 * With a node count beyond the touched ids, every untouched id is an isolated node.
 */
import { MAX_LOCATIONS, type ProblemLocation } from '../../formats/types';
import { isolatedExamples, type Structure } from '../../graph/structure/figures';
import { isolatedIdExamples } from '../../graph/structure/compact';
import type { GraphContext } from './context';

export function checkIsolated(g: GraphContext): void {
  const { structure, isolatedNodes, nodes, count: { n }, base: { indexBase }, kept: { nodeIds, sparseIds }, report } = g;
  const sp = g.edges.part;
  if (isolatedNodes > 0 && nodes > 0) {
    // 0-based ids of the first isolated nodes (compact nodes mapped back to their ids).
    const ids = !nodeIds ? isolatedExamples(structure.fwd, structure.rev, MAX_LOCATIONS)
      : sparseIds ? isolatedExamples(structure.fwd, structure.rev, MAX_LOCATIONS).map((c) => nodeIds[c]!)
        : isolatedIdExamples(n, nodeIds, (c) => isolatedNode(structure, c), MAX_LOCATIONS);
    const locs: ProblemLocation[] = ids.map((u) => ({ tensor: sp.tensor.name, detail: `node ${u + indexBase}` }));
    report(sp, 'isolated-nodes',
      `${isolatedNodes} of ${nodes} nodes have no edges (e.g. node${ids.length > 1 ? 's' : ''} ${ids.slice(0, 5).map((u) => u + indexBase).join(', ')}). ` +
      'A message-passing layer gives them only their own features (and a self-loop, if added).',
      isolatedNodes, locs);
  }
}

export function checkEmpty(g: GraphContext): void {
  const { nodes, edges } = g;
  const sp = edges.part;
  if (nodes === 0 || edges.src.length === 0) {
    g.report(sp, 'empty-graph', nodes === 0 ? `${sp.tensor.name} describes a graph with no nodes.` : `${sp.tensor.name} has no edges: every node is isolated.`, 1);
  }
}

/** Whether node u has no edge other than self-loops. */
function isolatedNode(s: Structure, u: number): boolean {
  const { fwd, rev } = s;
  for (let p = fwd.indptr[u]!; p < fwd.indptr[u + 1]!; p++) if (fwd.indices[p] !== u) return false;
  for (let p = rev.indptr[u]!; p < rev.indptr[u + 1]!; p++) if (rev.indices[p] !== u) return false;
  return true;
}

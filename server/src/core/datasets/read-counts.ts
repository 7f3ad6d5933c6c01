/**
 * Datasets given as counts: an edge tensor with ids LOCAL to each graph, plus one node count and
 * one edge count per graph (per-dataset CSV folders' num-node-list / num-edge-list, and the
 * manifest's nodeCounts / edgeCounts). The counts become offsets; a count that is not a whole
 * number from 0, counts that do not add up to the edge entries, or node and edge counts for a
 * different number of graphs are `bad-graph-offsets`.
 */
import type { DenseTensor } from '../formats/types';
import type { DatasetLayout } from './model';
import { endpoints, problem, tableShape, type FiledProblem } from './read-common';
import type { FoundDataset } from './read-slices';

export interface CountPart {
  file: string;
  tensor: DenseTensor;
}

export function datasetFromCounts(
  edges: CountPart, nodeCounts: CountPart, edgeCounts: CountPart,
  o: { layout: DatasetLayout; files: string[]; edgeShape: string },
): FoundDataset {
  const problems: FiledProblem[] = [];
  const found: FoundDataset = { files: o.files, problems };
  const ends = endpoints(edges.tensor);
  if (!ends) {
    problems.push({ file: edges.file, problem: problem('edge-shape', o.edgeShape, { tensor: edges.tensor.name }) });
    return found;
  }
  const offsets = (p: CountPart, total: number | undefined, what: string): Float64Array | undefined => {
    const d = p.tensor.data;
    if (tableShape(p.tensor)[1] !== 1) {
      problems.push({ file: p.file, problem: problem('bad-graph-offsets', `${p.tensor.name} has ${tableShape(p.tensor)[1]} values per row; it should hold one ${what} count per graph.`, { tensor: p.tensor.name }) });
      return undefined;
    }
    const off = new Float64Array(d.length + 1);
    for (let g = 0; g < d.length; g++) {
      const c = d[g]!;
      if (!(Number.isInteger(c) && c >= 0)) {
        problems.push({ file: p.file, problem: problem('bad-graph-offsets', `${p.tensor.name} gives graph ${g} ${c} ${what}s (entry ${g}); counts are whole numbers from 0.`,
          { tensor: p.tensor.name, locations: [{ tensor: p.tensor.name, index: g, graph: g }] }) });
        return undefined;
      }
      off[g + 1] = off[g]! + c;
    }
    if (total !== undefined && off[d.length] !== total) {
      problems.push({ file: p.file, problem: problem('bad-graph-offsets',
        `The ${what} counts in ${p.tensor.name} add up to ${off[d.length]} but ${edges.tensor.name} has ${total} ${what}s; the graphs' ${what}s cannot be told apart.`, { tensor: p.tensor.name }) });
      return undefined;
    }
    return off;
  };
  const nodeOffsets = offsets(nodeCounts, undefined, 'node');
  const edgeOffsets = offsets(edgeCounts, ends.src.length, 'edge');
  if (!nodeOffsets || !edgeOffsets) return found;
  if (nodeOffsets.length !== edgeOffsets.length) {
    problems.push({ file: edgeCounts.file, problem: problem('bad-graph-offsets',
      `${nodeCounts.tensor.name} counts ${nodeOffsets.length - 1} graphs but ${edgeCounts.tensor.name} counts ${edgeOffsets.length - 1}; both hold one count per graph.`, { tensor: edgeCounts.tensor.name }) });
    return found;
  }
  found.dataset = {
    structureFile: edges.file, files: o.files, layout: o.layout, graphs: nodeOffsets.length - 1, nodeOffsets, edgeOffsets,
    src: ends.src, dst: ends.dst,
    edgeTensor: { file: edges.file, tensor: edges.tensor.name, layout: ends.layout, ...(edges.tensor.locator ? { locator: edges.tensor.locator } : {}) },
  };
  return found;
}

/**
 * Many graphs batched into one: an edge index with GLOBAL node ids beside a `batch` vector (the
 * graph id of every node, sorted) or a `ptr` vector (G + 1 node offsets), in one container or in
 * sibling files. Edges are regrouped by graph and their ids made local; an edge joining two
 * graphs stays in its sender's graph and is listed in `crossGraph`.
 */
import type { DenseTensor } from '../formats/types';
import type { Dataset } from './model';
import {
  columnOf, endpoints, offsetsFault, permuteRows, problem, tableShape, toFloat64,
  type FiledProblem,
} from './read-common';
import type { FoundDataset } from './read-slices';

export interface BatchPart {
  file: string;
  tensor: DenseTensor;
}

export interface BatchInput {
  edges: BatchPart;
  batch?: BatchPart;
  ptr?: BatchPart;
  /** Per-node features, per-node or per-graph labels, edge features (by rows, decided here). */
  features?: BatchPart;
  labels?: BatchPart;
  edgeFeatures?: BatchPart;
}

/** The line of a text tensor's element, for problems that point at it. */
function lineOf(t: DenseTensor, flat: number): { line?: number; column?: number } {
  const span = t.locator?.locate(flat);
  return span ? { line: span.line, column: span.column } : {};
}

export function readBatch(input: BatchInput): FoundDataset {
  const { edges, batch, ptr } = input;
  const files = [...new Set([edges, batch, ptr, input.features, input.labels, input.edgeFeatures].filter((p): p is BatchPart => !!p).map((p) => p.file))];
  const problems: FiledProblem[] = [];
  const result: FoundDataset = { files, problems };
  const ends = endpoints(edges.tensor);
  if (!ends) return result;
  const E = ends.src.length;
  const featureRows = input.features ? tableShape(input.features.tensor)[0] : undefined;

  // 1. Node offsets (and, for an unsorted batch vector, the regrouping of nodes).
  let G: number;
  let nodeOffsets: Float64Array;
  /** New position of each node (identity when the nodes were already grouped). */
  let pos: Int32Array | undefined;
  let nodeOrder: Int32Array | undefined;
  let graphOf: Int32Array;
  if (batch) {
    const b = batch.tensor.data;
    const N = b.length;
    let max = -1;
    for (let i = 0; i < N; i++) {
      const v = b[i]!;
      if (!(Number.isInteger(v) && v >= 0 && v < 2 ** 31)) {
        problems.push({ file: batch.file, problem: problem('bad-graph-offsets',
          `${batch.tensor.name}[${i}] is ${v}: a batch vector holds the graph id (0, 1, …) of every node, so the graphs cannot be told apart.`,
          { tensor: batch.tensor.name, locations: [{ tensor: batch.tensor.name, index: i }] }) });
        return result;
      }
      if (v > max) max = v;
    }
    G = max + 1;
    graphOf = new Int32Array(N);
    const counts = new Float64Array(G);
    let unsorted = 0, firstUnsorted = -1;
    for (let i = 0; i < N; i++) {
      const v = b[i]!;
      graphOf[i] = v;
      counts[v]!++;
      if (i > 0 && v < b[i - 1]!) { unsorted++; if (firstUnsorted < 0) firstUnsorted = i; }
    }
    nodeOffsets = new Float64Array(G + 1);
    for (let g = 0; g < G; g++) nodeOffsets[g + 1] = nodeOffsets[g]! + counts[g]!;
    if (unsorted > 0) {
      problems.push({ file: batch.file, problem: problem('unsorted-batch',
        `${batch.tensor.name} is not sorted: node ${firstUnsorted} belongs to graph ${b[firstUnsorted]} after node ${firstUnsorted - 1} of graph ${b[firstUnsorted - 1]} ` +
        `(${unsorted} place${unsorted === 1 ? '' : 's'} where the graph id goes down). Pooling by segments and per-graph offsets assume each graph's nodes are contiguous; ` +
        'sort the nodes by graph (and renumber the edge ids) before batching. The graphs were checked as if regrouped.',
        { tensor: batch.tensor.name, count: unsorted, locations: [{ tensor: batch.tensor.name, index: firstUnsorted }], ...lineOf(batch.tensor, firstUnsorted) }) });
      pos = new Int32Array(N);
      nodeOrder = new Int32Array(N);
      const next = nodeOffsets.slice(0, G);
      for (let i = 0; i < N; i++) { const p = next[graphOf[i]!]!++; pos[i] = p; nodeOrder[p] = i; }
    }
    if (ptr) {
      const fault = offsetsFault(toFloat64(ptr.tensor.data), N);
      let same = !fault && ptr.tensor.data.length === G + 1;
      for (let g = 0; same && g <= G; g++) if (ptr.tensor.data[g] !== nodeOffsets[g]) same = false;
      if (!same) {
        problems.push({ file: ptr.file, problem: problem('bad-graph-offsets',
          `${ptr.tensor.name} disagrees with ${batch.tensor.name}: ${fault ?? `its ${ptr.tensor.data.length} offsets are not the running counts of the batch vector's ${G} graphs`}. Code reading either one cuts the graphs differently.`,
          { tensor: ptr.tensor.name }) });
      }
    }
  } else if (ptr) {
    nodeOffsets = toFloat64(ptr.tensor.data);
    G = nodeOffsets.length - 1;
    let N = featureRows;
    if (N === undefined) N = nodeOffsets.length ? nodeOffsets[G]! : 0;
    const fault = offsetsFault(nodeOffsets, N);
    if (fault) {
      problems.push({ file: ptr.file, problem: problem('bad-graph-offsets',
        `The node offsets ${ptr.tensor.name} do not cut the ${N} nodes${featureRows !== undefined ? ` (rows of ${input.features!.tensor.name})` : ''} into graphs: ${fault}. The graphs cannot be told apart; save ptr as G + 1 running node counts from 0.`,
        { tensor: ptr.tensor.name }) });
      return result;
    }
    graphOf = new Int32Array(N);
    for (let g = 0; g < G; g++) graphOf.fill(g, nodeOffsets[g]!, nodeOffsets[g + 1]!);
  } else {
    return result;
  }
  const N = graphOf.length;
  if (G === 0 && E > 0) {
    const v = batch ?? ptr!;
    problems.push({ file: v.file, problem: problem('bad-graph-offsets',
      `${v.tensor.name} describes no graph at all, but ${edges.tensor.name} has ${E} edge entr${E === 1 ? 'y' : 'ies'}; the edges cannot be given to graphs.`,
      { tensor: v.tensor.name }) });
    return result;
  }

  // 2. Each edge entry goes to its sender's graph (its receiver's when the sender is no node).
  const edgeGraph = new Int32Array(E);
  let prev = 0, grouped = true;
  for (let k = 0; k < E; k++) {
    const u = ends.src[k]!, v = ends.dst[k]!;
    const g = u >= 0 && u < N ? graphOf[u]! : v >= 0 && v < N ? graphOf[v]! : prev;
    edgeGraph[k] = g;
    if (g < prev) grouped = false;
    prev = g;
  }
  const edgeOffsets = new Float64Array(G + 1);
  for (let k = 0; k < E; k++) edgeOffsets[edgeGraph[k]! + 1]!++;
  for (let g = 0; g < G; g++) edgeOffsets[g + 1]! += edgeOffsets[g]!;
  let edgeColumn: Int32Array | undefined;
  if (!grouped) {
    edgeColumn = new Int32Array(E);
    const next = edgeOffsets.slice(0, G);
    for (let k = 0; k < E; k++) edgeColumn[next[edgeGraph[k]!]!++] = k;
  }
  const src = new Int32Array(E), dst = new Int32Array(E);
  const cross: number[] = [];
  for (let j = 0; j < E; j++) {
    const k = edgeColumn ? edgeColumn[j]! : j;
    const g = edgeGraph[k]!;
    const base = nodeOffsets[g]!;
    const u = ends.src[k]!, v = ends.dst[k]!;
    const local = (w: number) => (w >= 0 && w < N ? (pos ? pos[w]! : w) - base : w < 0 ? w : w - base);
    src[j] = local(u);
    dst[j] = local(v);
    if (u >= 0 && u < N && v >= 0 && v < N && graphOf[v] !== g) cross.push(j);
  }
  const ds: Dataset = {
    structureFile: edges.file, files, layout: batch ? 'batch' : 'ptr', graphs: G, nodeOffsets, edgeOffsets, src, dst,
    globalIds: { base: 0 },
    edgeTensor: { file: edges.file, tensor: edges.tensor.name, layout: ends.layout, ...(edges.tensor.locator ? { locator: edges.tensor.locator } : {}) },
    ...(edgeColumn ? { edgeColumn } : {}),
    ...(cross.length ? { crossGraph: Int32Array.from(cross) } : {}),
    ...(nodeOrder ? { nodeOrder } : {}),
  };
  if (input.features && featureRows === N) {
    const c = columnOf(input.features.file, input.features.tensor);
    ds.nodeFeatures = nodeOrder ? permuteRows(c, nodeOrder) : c;
  } else if (input.features) {
    problems.push({ file: input.features.file, problem: problem('feature-rows-mismatch',
      `${input.features.tensor.name} has ${featureRows} rows but the batch describes ${N} nodes; every node needs exactly one feature row.`,
      { tensor: input.features.tensor.name }) });
  }
  if (input.labels) {
    const rows = tableShape(input.labels.tensor)[0];
    const c = columnOf(input.labels.file, input.labels.tensor);
    if (rows === N && rows !== G) ds.nodeLabels = nodeOrder ? permuteRows(c, nodeOrder) : c;
    else ds.graphLabels = c; // the length is checked against G (graph-labels-mismatch)
  }
  if (input.edgeFeatures && tableShape(input.edgeFeatures.tensor)[0] === E) {
    const c = columnOf(input.edgeFeatures.file, input.edgeFeatures.tensor);
    ds.edgeFeatures = edgeColumn ? permuteRows(c, edgeColumn) : c;
  }
  result.dataset = ds;
  return result;
}

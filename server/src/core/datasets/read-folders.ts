/**
 * Folder layouts of datasets, their files read by text-files.ts's readColumnsText:
 *
 * - the graph-kernel benchmark collection: NAME_A.txt (one edge entry per line, `row, col`, 1-based
 *   GLOBAL node ids, each undirected edge both ways), NAME_graph_indicator.txt (the 1-based graph
 *   of each node), NAME_graph_labels.txt, and optionally NAME_node_labels.txt,
 *   NAME_edge_labels.txt, NAME_node_attributes.txt, NAME_edge_attributes.txt (comma-separated
 *   rows), NAME_graph_attributes.txt. Read as a batch vector beside a global edge index
 *   (read-batch.ts) after shifting both to 0-based ids.
 * - per-dataset CSV folders: edge.csv (one edge per line, ids LOCAL to their graph),
 *   num-node-list.csv and num-edge-list.csv (one count per graph, in order), graph-label.csv, and
 *   optionally node-feat.csv and edge-feat.csv (each optionally gzipped).
 */
import type { DenseTensor } from '../formats/types';
import { dirOf } from '../paths';
import type { Dataset } from './model';
import { columnOf, denseOf, endpoints, problem, tableShape, type DatasetInputFile } from './read-common';
import { readBatch } from './read-batch';
import { datasetFromCounts } from './read-counts';
import type { FoundDataset } from './read-slices';
import { csvPart, kernelPart, type CsvPart, type KernelPart } from './text-files';

export function readFolders(files: readonly DatasetInputFile[]): FoundDataset[] {
  const out: FoundDataset[] = [];
  const kernel = new Map<string, Map<KernelPart, { path: string; tensor: DenseTensor }>>();
  const csv = new Map<string, Map<CsvPart, { path: string; tensor: DenseTensor }>>();
  for (const f of files) {
    const t = denseOf(f.result?.tensors.length === 1 ? f.result.tensors[0] : undefined);
    if (!t) continue;
    const k = kernelPart(f.path);
    if (k) {
      const key = `${dirOf(f.path)}/${k.name}`;
      if (!kernel.has(key)) kernel.set(key, new Map());
      kernel.get(key)!.set(k.part, { path: f.path, tensor: t });
      continue;
    }
    const c = csvPart(f.path);
    if (c) {
      const key = dirOf(f.path);
      if (!csv.has(key)) csv.set(key, new Map());
      csv.get(key)!.set(c, { path: f.path, tensor: t });
    }
  }
  for (const parts of kernel.values()) {
    const found = readKernel(parts);
    if (found) out.push(found);
  }
  for (const parts of csv.values()) {
    const found = readCsv(parts);
    if (found) out.push(found);
  }
  return out;
}

/** The tensor with every value minus one (1-based ids and graph ids to 0-based). */
function minusOne(t: DenseTensor): DenseTensor {
  const d = t.data;
  const out = d instanceof Int32Array ? new Int32Array(d.length) : new Float64Array(d.length);
  for (let i = 0; i < d.length; i++) out[i] = d[i]! - 1;
  return { ...t, data: out };
}

function readKernel(parts: Map<KernelPart, { path: string; tensor: DenseTensor }>): FoundDataset | undefined {
  const a = parts.get('A'), ind = parts.get('graph_indicator');
  if (!a || !ind) return undefined;
  const all = [...parts.values()].map((p) => p.path);
  const edges = minusOne(a.tensor);
  if (!endpoints(edges)) {
    return { files: all, problems: [{ file: a.path, problem: problem('edge-shape',
      `${a.tensor.name} has ${tableShape(a.tensor)[1]} value${tableShape(a.tensor)[1] === 1 ? '' : 's'} per line; the adjacency file of a graph-kernel dataset holds one edge per line, "row, col".`) }] };
  }
  const graphLabels = parts.get('graph_labels') ?? parts.get('graph_attributes');
  const found = readBatch({
    edges: { file: a.path, tensor: edges },
    batch: { file: ind.path, tensor: minusOne(ind.tensor) },
    ...(parts.get('node_attributes') ? { features: { file: parts.get('node_attributes')!.path, tensor: parts.get('node_attributes')!.tensor } } : {}),
  });
  found.files = [...new Set([...found.files, ...all])];
  const ds = found.dataset;
  if (!ds) return found;
  ds.layout = 'graph-kernel-text';
  ds.globalIds = { base: 1 };
  ds.files = found.files;
  if (graphLabels) ds.graphLabels = columnOf(graphLabels.path, graphLabels.tensor);
  const nl = parts.get('node_labels');
  if (nl) {
    const col = columnOf(nl.path, nl.tensor);
    ds.nodeLabels = ds.nodeOrder && col.rows === ds.nodeOrder.length ? permute(col, ds.nodeOrder) : col;
  }
  const ef = parts.get('edge_attributes') ?? parts.get('edge_labels');
  if (ef) {
    const col = columnOf(ef.path, ef.tensor);
    ds.edgeFeatures = ds.edgeColumn && col.rows === ds.edgeColumn.length ? permute(col, ds.edgeColumn) : col;
  }
  return found;
}

function permute(col: Dataset['nodeFeatures'] & object, order: Int32Array) {
  const c = col.columns;
  const out = new Float64Array(order.length * c);
  for (let i = 0; i < order.length; i++) for (let q = 0; q < c; q++) out[i * c + q] = col.data[order[i]! * c + q]!;
  return { ...col, data: out, rows: order.length };
}

function readCsv(parts: Map<CsvPart, { path: string; tensor: DenseTensor }>): FoundDataset | undefined {
  const e = parts.get('edge'), nn = parts.get('num-node-list'), ne = parts.get('num-edge-list');
  if (!e || !nn || !ne) return undefined;
  const part = (q: { path: string; tensor: DenseTensor }) => ({ file: q.path, tensor: q.tensor });
  const found = datasetFromCounts(part(e), part(nn), part(ne), {
    layout: 'count-csv', files: [...parts.values()].map((q) => q.path),
    edgeShape: `${e.tensor.name} has ${tableShape(e.tensor)[1]} values per line; the edge file of a per-dataset CSV folder holds one edge per line, "source,target".`,
  });
  const ds = found.dataset;
  if (!ds) return found;
  const gl = parts.get('graph-label'), nf = parts.get('node-feat'), ef = parts.get('edge-feat');
  if (gl) ds.graphLabels = columnOf(gl.path, gl.tensor);
  if (nf) ds.nodeFeatures = columnOf(nf.path, nf.tensor);
  if (ef) ds.edgeFeatures = columnOf(ef.path, ef.tensor);
  return found;
}

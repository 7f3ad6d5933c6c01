/**
 * A dataset of many graphs declared in hopscope.json: an entry of "graphs" with the edges and one
 * way of cutting them into graphs (schemas/hopscope.schema.json documents the keys):
 *
 *   { "name": "rides", "edges": "edges.npy",
 *     "graphIds": "graph_of_node.npy",            // graph id per node; edge ids global
 *     // or "nodeOffsets": "ptr.npy"              // G + 1 node offsets; edge ids global
 *     // or "nodeCounts": "n.npy", "edgeCounts": "m.npy"   // counts per graph; edge ids local
 *     "features": "x.npy", "labels": "node_y.npy", "edgeFeatures": "e.npy",
 *     "graphLabels": "y.npy",
 *     "splits": { "train": "split.npz#train", "val": "split.npz#val", "test": "split.npz#test" } }
 *
 * In such an entry "splits" holds graph indices (or one boolean per graph), not node masks.
 */
import type { DenseTensor, Tensor } from '../formats/types';
import type { Dataset } from './model';
import { columnOf, denseOf, problem } from './read-common';
import { readBatch } from './read-batch';
import { datasetFromCounts } from './read-counts';
import type { FoundDataset } from './read-slices';

export type Ref = { file: string; tensor?: string };

export interface DatasetManifestGraph {
  edges: Ref;
  graphIds?: Ref;
  nodeOffsets?: Ref;
  nodeCounts?: Ref;
  edgeCounts?: Ref;
  features?: Ref;
  labels?: Ref;
  edgeFeatures?: Ref;
  graphLabels?: Ref;
  splits?: Partial<Record<'train' | 'val' | 'test', Ref>>;
}

/** Keys of a dataset entry beyond the ones every graph entry has. */
export const DATASET_KEYS = ['graphIds', 'nodeOffsets', 'nodeCounts', 'edgeCounts', 'graphLabels'] as const;

/** Whether a manifest graph entry declares a dataset. */
export function isDatasetEntry(g: Record<string, unknown>): boolean {
  return g.graphIds !== undefined || g.nodeOffsets !== undefined || g.nodeCounts !== undefined;
}

export function parseDatasetGraph(g: Record<string, unknown>, at: string, parseRef: (v: unknown, at: string) => Ref, fail: (m: string) => never): DatasetManifestGraph {
  if (g.edges === undefined) fail(`${at} declares a dataset of many graphs; it needs "edges".`);
  const ways = ['graphIds', 'nodeOffsets', 'nodeCounts'].filter((k) => g[k] !== undefined);
  if (ways.length > 1) fail(`${at}: "${ways.join('" and "')}" both say how to cut the edges into graphs; keep one.`);
  if (g.nodeCounts !== undefined && g.edgeCounts === undefined) fail(`${at}.nodeCounts needs "edgeCounts" beside it (edge entries per graph; edge ids are then local to each graph).`);
  if (g.edgeCounts !== undefined && g.nodeCounts === undefined) fail(`${at}.edgeCounts needs "nodeCounts" beside it.`);
  if (g.adjacency !== undefined || g.edgeSplits !== undefined || g.edgeWeights !== undefined) fail(`${at}: a dataset entry takes "edges" (not "adjacency", "edgeWeights" or "edgeSplits").`);
  const out: DatasetManifestGraph = { edges: parseRef(g.edges, `${at}.edges`) };
  for (const k of ['graphIds', 'nodeOffsets', 'nodeCounts', 'edgeCounts', 'features', 'labels', 'edgeFeatures', 'graphLabels'] as const) {
    if (g[k] !== undefined) out[k] = parseRef(g[k], `${at}.${k}`);
  }
  if (g.splits !== undefined) {
    const s = g.splits;
    if (typeof s !== 'object' || s === null || Array.isArray(s)) fail(`${at}.splits must be an object with train/val/test graph indices.`);
    out.splits = {};
    for (const [k, v] of Object.entries(s as Record<string, unknown>)) {
      if (k !== 'train' && k !== 'val' && k !== 'test') fail(`${at}.splits: unknown split "${k}" (train, val, test).`);
      out.splits[k as 'train'] = parseRef(v, `${at}.splits.${k}`);
    }
  }
  return out;
}

/** Every file a dataset entry names (read as the manifest says). */
export function datasetManifestFiles(d: DatasetManifestGraph): Ref[] {
  return [d.edges, d.graphIds, d.nodeOffsets, d.nodeCounts, d.edgeCounts, d.features, d.labels, d.edgeFeatures, d.graphLabels,
    ...Object.values(d.splits ?? {})].filter((r): r is Ref => !!r);
}

/** A read file as the lookup gives it. */
export interface LookedUp {
  path: string;
  result?: { tensors: Tensor[] };
}

/**
 * Builds the declared dataset. `lookup` resolves a manifest-relative file; a missing file or tensor
 * is a manifest problem (returned in `missing`), as for other manifest graphs.
 */
export function datasetFromManifest(name: string, d: DatasetManifestGraph, lookup: (file: string) => LookedUp | undefined): { found?: FoundDataset; missing: string[] } {
  const missing: string[] = [];
  const files = new Set<string>();
  const get = (ref: Ref | undefined, what: string): { file: string; tensor: DenseTensor } | undefined => {
    if (!ref) return undefined;
    const f = lookup(ref.file);
    if (!f?.result) { missing.push(`Dataset "${name}": ${ref.file} (${what}) was not found or could not be read.`); return undefined; }
    const ts = f.result.tensors;
    const t = ref.tensor === undefined ? (ts.length === 1 ? ts[0] : undefined) : ts.find((x) => x.name === ref.tensor);
    const dense = denseOf(t);
    if (!dense) {
      missing.push(`Dataset "${name}": ${ref.file} has ${ref.tensor === undefined ? `${ts.length} tensors (name one as "file#tensor")` : `no tensor "${ref.tensor}" with values`} for ${what}.`);
      return undefined;
    }
    files.add(f.path);
    return { file: f.path, tensor: dense };
  };
  const edges = get(d.edges, 'edges');
  const graphIds = get(d.graphIds, 'graphIds'), nodeOffsets = get(d.nodeOffsets, 'nodeOffsets');
  const nodeCounts = get(d.nodeCounts, 'nodeCounts'), edgeCounts = get(d.edgeCounts, 'edgeCounts');
  const features = get(d.features, 'features'), labels = get(d.labels, 'labels'), edgeFeatures = get(d.edgeFeatures, 'edgeFeatures');
  const graphLabels = get(d.graphLabels, 'graphLabels');
  const splitParts = Object.entries(d.splits ?? {}).map(([k, r]) => [k, get(r, `splits.${k}`)] as const);
  if (!edges || missing.length) return { missing };
  let found: FoundDataset;
  if (graphIds || nodeOffsets) {
    found = readBatch({
      edges, ...(graphIds ? { batch: graphIds } : {}), ...(nodeOffsets ? { ptr: nodeOffsets } : {}),
      ...(features ? { features } : {}), ...(edgeFeatures ? { edgeFeatures } : {}),
      ...(labels && !graphLabels ? { labels } : {}),
    });
  } else {
    found = datasetFromCounts(edges, nodeCounts!, edgeCounts!, {
      layout: 'manifest', files: [edges.file, nodeCounts!.file, edgeCounts!.file],
      edgeShape: `${edges.tensor.name} has shape [${edges.tensor.shape.join(', ')}]; edges are 2 × E or E × 2.`,
    });
    if (found.dataset && features) found.dataset.nodeFeatures = columnOf(features.file, features.tensor);
    if (found.dataset && edgeFeatures) found.dataset.edgeFeatures = columnOf(edgeFeatures.file, edgeFeatures.tensor);
  }
  found.files = [...new Set([...found.files, ...files])];
  const ds = found.dataset;
  if (ds) {
    ds.layout = 'manifest';
    ds.files = found.files;
    if (graphLabels) ds.graphLabels = columnOf(graphLabels.file, graphLabels.tensor);
    if (labels && graphLabels) ds.nodeLabels = columnOf(labels.file, labels.tensor);
    const splits: NonNullable<Dataset['splits']> = {};
    for (const [k, p] of splitParts) {
      if (!p) continue;
      const v = p.tensor.data;
      const bool = p.tensor.dtype === 'bool' && v.length === ds.graphs;
      const idx: number[] = [];
      let bad = -1;
      for (let i = 0; i < v.length; i++) {
        if (bool) { if (v[i]) idx.push(i); continue; }
        const g = v[i]!;
        if (!(Number.isInteger(g) && g >= 0 && g < ds.graphs)) { bad = i; break; }
        idx.push(g);
      }
      if (bad >= 0) {
        found.problems.push({ file: p.file, problem: problem('bad-graph-offsets',
          `${p.tensor.name}[${bad}] is ${v[bad]}, not one of the dataset's ${ds.graphs} graphs (a dataset's split lists graph indices 0..${ds.graphs - 1}, or one boolean per graph).`,
          { tensor: p.tensor.name }) });
        continue;
      }
      splits[k as 'train'] = Int32Array.from(idx);
    }
    if (Object.keys(splits).length) ds.splits = splits;
  }
  return { found, missing };
}

/**
 * A dataset of many graphs: G graphs over shared tensors, graph g owning the node rows
 * nodeOffsets[g] .. nodeOffsets[g + 1] - 1 and the edge columns edgeOffsets[g] .. edgeOffsets[g + 1] - 1.
 * Every layout that is read (saved `(data, slices)` tuples, batch / ptr vectors, the graph-kernel
 * text folders, per-dataset CSV folders, manifest datasets) is turned into this one shape by
 * datasets/read.ts; the checks (datasets/check.ts), the accuracy ceiling
 * (graph/refinement/ceiling.ts), the viewer's table of graphs and the hovers all take it.
 *
 * Edge endpoints are LOCAL ids: each graph's ids start at 0 whatever the file stored (global ids
 * are shifted by the graph's first node when the dataset is built). An endpoint outside its graph
 * stays as it is (negative or ≥ the graph's node count) for the checks to report; analyses use
 * `inRange` (check.ts) and never see such an edge.
 */
import type { TensorData, TextLocator } from '../formats/types';

/** A per-node, per-edge or per-graph tensor of the dataset, row-major, with where it came from. */
export interface DatasetColumn {
  /** The file and tensor the values came from (for messages and locations). */
  file: string;
  tensor: string;
  /** Rows × columns; a vector has columns = 1. */
  rows: number;
  columns: number;
  data: TensorData;
  /** For string-valued labels: the strings, and `data` holds their codes. */
  strings?: string[];
}

export type DatasetLayout = 'slices' | 'batch' | 'ptr' | 'graph-kernel-text' | 'count-csv' | 'manifest';

export interface Dataset {
  /** Where the layout was recognised: the file holding the edges, and every file that took part. */
  structureFile: string;
  files: string[];
  layout: DatasetLayout;
  graphs: number;
  /** G + 1 non-decreasing offsets, nodeOffsets[0] = 0, nodeOffsets[G] = total nodes. */
  nodeOffsets: Float64Array;
  /** G + 1 non-decreasing offsets into src/dst. */
  edgeOffsets: Float64Array;
  /** Sending and receiving endpoint of each edge entry, local to its graph. */
  src: Int32Array;
  dst: Int32Array;
  /** Node features (N × F), categorical node labels (N × 1), edge features (E × F). */
  nodeFeatures?: DatasetColumn;
  nodeLabels?: DatasetColumn;
  edgeFeatures?: DatasetColumn;
  /** One row per graph (G × 1 for classes, G × k for multi-target regression). */
  graphLabels?: DatasetColumn;
  /** Graph indices (0-based) of each split, when the dataset states splits. */
  splits?: { train?: Int32Array; val?: Int32Array; test?: Int32Array };
  /** Where the edge entries sit, for locations: a 2 × E tensor ('columns') or an E × 2 one ('rows'). */
  edgeTensor?: { file: string; tensor: string; layout: 'columns' | 'rows'; locator?: TextLocator };
  /** When the edges were regrouped by graph: the entry's position in `edgeTensor` (else the same position). */
  edgeColumn?: Int32Array;
  /**
   * Edge entries (positions into src/dst, increasing) whose endpoints lie in two graphs (layouts with
   * global ids): the entry is kept in its sender's graph, its receiver id relative to that graph.
   */
  crossGraph?: Int32Array;
  /** The file holds global ids (batch, ptr, graph-kernel text): an id outside every graph was written as local + its graph's first node + `base`. */
  globalIds?: { base: 0 | 1 };
  /** Graph ids were given per node (a batch vector) and were not sorted: nodes were regrouped. */
  nodeOrder?: Int32Array;
}

/** Nodes of graph g. */
export function nodesOf(ds: Dataset, g: number): number {
  return ds.nodeOffsets[g + 1]! - ds.nodeOffsets[g]!;
}

/** Edge entries of graph g. */
export function edgesOf(ds: Dataset, g: number): number {
  return ds.edgeOffsets[g + 1]! - ds.edgeOffsets[g]!;
}

/**
 * The report vocabulary every process shares: what `hopscope check --json` prints, what the language
 * server publishes and sends to the extension, and what the tensor viewer shows. Plain JSON shapes,
 * no behaviour; the core computes them (server/src/core/checks), everyone else reads them.
 */

export type Format = 'npy' | 'npz' | 'sparse-npz' | 'pt' | 'safetensors' | 'edgelist' | 'mtx' | 'json';

export type Severity = 'error' | 'warning' | 'info';

export type ProblemCode =
  | 'unreadable'
  | 'edge-shape'
  | 'transposed-edge-index'
  | 'non-integer-index'
  | 'index-out-of-range'
  | 'one-based-index'
  | 'feature-rows-mismatch'
  | 'label-length-mismatch'
  | 'mask-length-mismatch'
  | 'edge-features-rows-mismatch'
  | 'not-square'
  | 'asymmetric-adjacency'
  | 'self-loops'
  | 'duplicate-edges'
  | 'isolated-nodes'
  | 'sparse-ids'
  | 'non-finite-features'
  | 'mask-overlap'
  | 'label-range'
  | 'empty-graph'
  | 'skew-symmetric-diagonal'
  | 'no-graph-tensors'
  | 'renamed-key'
  | 'leaked-positive-pairs'
  | 'negative-pairs-are-edges'
  | 'pairs-in-two-splits'
  | 'pair-labels-mismatch'
  | 'self-pairs'
  | 'cold-start-pairs'
  // Datasets of many graphs (core/datasets).
  | 'bad-graph-offsets'
  | 'unsorted-batch'
  | 'cross-graph-edges'
  | 'graph-labels-mismatch'
  | 'empty-graphs'
  | 'isomorphic-label-conflict'
  | 'isomorphic-across-splits'
  // Typed graphs (core/typed).
  | 'one-way-relation'
  | 'type-never-receives'
  | 'type-never-sends';

/**
 * Which row of an edge index sends messages (and which column of an edge list): 0 = row 0 sends
 * and row 1 receives (the default), 1 = row 1 sends.
 */
export type SendingRow = 0 | 1;

/** One place a problem shows up. Text formats fill line/column; binary ones tensor/index. */
export interface ProblemLocation {
  line?: number;
  column?: number;
  length?: number;
  tensor?: string;
  /** Flat (C-order) element index in `tensor`. */
  index?: number;
  /** A short phrase about this occurrence, e.g. "edge 17: 3 → 40". */
  detail?: string;
  /** In a dataset of many graphs: the graph (0-based) this occurrence is in. */
  graph?: number;
  /**
   * In a dataset read from lines of text: the lines (1-based, inclusive) holding that graph's
   * edges, for the editor to point at the graph's slice.
   */
  graphLines?: { first: number; last: number };
}

export interface Problem {
  code: ProblemCode;
  severity: Severity;
  message: string;
  tensor?: string;
  /** How many offending items there are in all. */
  count: number;
  /** First offending place (text formats), 1-based. */
  line?: number;
  column?: number;
  /** The first few offending places (at most MAX_LOCATIONS). */
  locations?: ProblemLocation[];
  /** In a dataset of many graphs: the first affected graph (0-based) and how many graphs are affected. */
  graph?: number;
  graphs?: number;
  /** In a typed graph: the relation (`SRC__REL__DST`) or node type the problem is about. */
  relation?: string;
  nodeType?: string;
}

/** One tensor of a file, as summarised in reports. */
export interface TensorReport {
  name: string;
  dtype: string;
  shape: number[];
  role: string;
  min: number | null;
  max: number | null;
  sum: number | null;
  nonFinite: number;
}

/** One checked file. */
export interface FileReport {
  path: string;
  format: Format;
  tensors: TensorReport[];
  graph: GraphFigures | null;
  problems: Problem[];
  /** Link-prediction splits, on the file holding the message-passing edges (absent without splits). */
  edgeSplits?: EdgeSplitCounts;
  /** A dataset of many graphs (then `graph` is null), on the file holding its edges. */
  dataset?: DatasetSummary;
  /** A graph with typed nodes and relations, on the file holding its relations (`graph` then has the figures with types forgotten). */
  typed?: TypedSummary;
}

/** min / max / mean / total of a per-graph count. */
export interface CountSpread {
  min: number;
  max: number;
  mean: number;
  total: number;
}

/** `files[].dataset` of `hopscope check --json`. */
export interface DatasetSummary {
  graphs: number;
  nodes: CountSpread;
  /** Edge entries (columns of the edge index). */
  edges: CountSpread;
  /** Graph labels: the class values (as strings, sorted by value) with their counts; null without graph labels. */
  graphLabels: { classes: string[]; counts: number[] } | null;
  /** Graphs per split; null without splits. */
  splits: { train: number; val: number; test: number } | null;
}

/** `files[].typed` of `hopscope check --json`. */
export interface TypedSummary {
  nodeTypes: Record<string, number>;
  /**
   * `edges`: entries of the relation's edge index; `sources` / `targets`: distinct source / target
   * nodes among its in-range entries (how many nodes of each type the relation touches).
   */
  relations: Array<{ source: string; name: string; target: string; edges: number; sources?: number; targets?: number }>;
  /**
   * Where each type's node count comes from: 'declared' (TYPE__num_nodes, the manifest), 'features'
   * (rows of the feature matrix), 'labels' (length of the labels or a mask), or 'ids' (1 + the largest
   * id seen in that type's position across relations).
   */
  nodeCountFrom?: Record<string, 'declared' | 'features' | 'labels' | 'ids'>;
  /** The types-forgotten graph (`files[].graph`) numbers each type's nodes from its offset here (types in `nodeTypes` order). */
  offsets?: Record<string, number>;
}

/** Pairs of one link-prediction split (null where that side is absent). */
export interface SplitPairCounts {
  pos: number | null;
  neg: number | null;
}

/** A graph's link-prediction splits: message-passing edge entries and pairs per split (null where absent). */
export interface EdgeSplitCounts {
  messageEdges: number;
  train: SplitPairCounts | null;
  val: SplitPairCounts | null;
  test: SplitPairCounts | null;
}

/** The graph figures of a checked graph (the README's "Graph figures" table). */
export interface GraphFigures {
  nodes: number;
  /** Stored directed entries (duplicates and self-loops included). */
  edges: number;
  /** False iff every (u, v) with u ≠ v has (v, u). */
  directed: boolean;
  selfLoops: number;
  /** Entries minus distinct (u, v) pairs. */
  duplicateEdges: number;
  /** Distinct (u, v), u ≠ v, whose reverse (v, u) is absent. */
  asymmetricPairs: number;
  /** Nodes with no incident edge other than self-loops. */
  isolatedNodes: number;
  /** Weakly connected components over all nodes. */
  components: number;
  indexBase: 0 | 1;
}

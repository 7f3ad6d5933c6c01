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
  | 'cold-start-pairs';

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

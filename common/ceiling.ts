/**
 * The accuracy ceiling of message passing (`hopscope ceiling`, the worker's `ceiling` method, the
 * hover and the panel): what 1-WL colour refinement can tell apart, turned into the best accuracy a
 * model whose only inputs are the structure (and the given features) can reach. Computed by
 * server/src/core/graph/refinement/ceiling.ts; re-exported by common/protocol.ts.
 */

/** Graphs of a dataset that 1-WL refinement cannot tell apart. */
export interface CeilingGroup {
  /** Graphs in the group. */
  size: number;
  /** Classes: how many graphs of the group carry each label (labelled graphs only). */
  labels?: Record<string, number>;
  /** Numeric targets: the largest (max − min) over the target columns within the group. */
  spread?: number;
  /** Numeric targets: per target column, the smallest and largest value in the group. */
  min?: number[];
  max?: number[];
  /** The first 20 graph indices (0-based) of the group, ascending. */
  graphs: number[];
}

/** Numeric targets: the smallest error any model that gives a group one output can reach. */
export interface ErrorFloor {
  /** Mean squared error with each group predicting its mean (over graphs × target columns). */
  mse: number;
  /** Mean absolute error with each group predicting its median. */
  mae: number;
}

/** One augmentation's figures (`--with triangles`, `--with cycles:K`). */
export interface GraphCeilingAugmented {
  /** `triangles` or `cycles:K`. */
  with: string;
  /** Null when the counts could not be made (see `skipped`) or the labels are numeric targets. */
  ceiling: number | null;
  conflictingGroups: number;
  groupCount: number;
  rounds: number;
  errorFloor?: ErrorFloor;
  /** Why there is no figure: e.g. a graph too dense to count its cycles within the time budget. */
  skipped?: string;
}

export interface GraphCeilingResult {
  task: 'graph';
  /** Graphs in the dataset, and those with a label (the ceiling's denominator). */
  graphs: number;
  labelled: number;
  /** `classes` (whole numbers, at most 1,000 distinct, or strings) or `targets` (any other numbers). */
  labelKind: 'classes' | 'targets';
  /** `uniform` (one start colour) or `features` (each node's exact feature row and node label). */
  start: 'uniform' | 'features';
  /** Groups in order (conflicting first, then by size; for targets by spread), at most `groupLimit`. */
  groups: CeilingGroup[];
  /** All groups of 1-WL-equivalent graphs (singletons included). */
  groupCount: number;
  /** Groups holding more than one label (targets: a spread above 0). */
  conflictingGroups: number;
  /** Σ over groups of the largest label count ÷ labelled graphs; null for numeric targets. */
  ceiling: number | null;
  /** Numeric targets only. */
  errorFloor?: ErrorFloor;
  /**
   * Refinement rounds run until no look-alike group could split any more: every graph alone in its
   * group, or the colours of the graphs still grouped no longer changing.
   */
  rounds: number;
  with?: GraphCeilingAugmented[];
}

export interface NodeCeilingLayer {
  layers: number;
  /** Σ over colours after `layers` rounds of the largest label count ÷ labelled nodes. */
  ceiling: number;
  /** Labelled nodes sharing their colour with a labelled node of another class. */
  conflictingNodes: number;
  /** Colour classes after `layers` rounds (all nodes). */
  classes: number;
}

export interface NodeCeilingAugmented {
  with: string;
  perLayer: NodeCeilingLayer[] | null;
  skipped?: string;
}

export interface NodeCeilingResult {
  task: 'node';
  nodes: number;
  /** Nodes with a class label (not −1 / NaN, inside the label mask when there is one). */
  labelled: number;
  start: 'uniform' | 'features';
  perLayer: NodeCeilingLayer[];
  /** The round from which the colours no longer change, when it came within the layers asked for. */
  stableAfter: number | null;
  with?: NodeCeilingAugmented[];
}

export type CeilingResult = GraphCeilingResult | NodeCeilingResult;

/** Worker request `ceiling`: a dataset (graph-level) or one graph with node labels (node-level). */
export interface CeilingParams {
  path: string;
  /** Node-level: the largest layer count (default 4). */
  layers?: number;
  /** Start from the node feature rows (and node labels of a dataset). */
  features?: boolean;
  /** Augmentations: `triangles`, `cycles:K` (3 ≤ K ≤ 8). */
  with?: string[];
  /** Milliseconds each substructure count may take (default 20,000); past it that augmentation is `skipped`. */
  budgetMs?: number;
}

/**
 * The stable problem codes, their default severities and one-line explanations. The README's
 * problem table is checked against this list by a unit test.
 */
import type { ProblemCode, Severity } from './report';

export interface CodeInfo {
  severity: Severity;
  summary: string;
}

export const CODES: Readonly<Record<ProblemCode, CodeInfo>> = {
  'unreadable': { severity: 'error', summary: 'The file cannot be read at all; the message says why.' },
  'edge-shape': { severity: 'error', summary: 'An edge index that is neither 2 x E nor E x 2, or an edge-list line without two ids.' },
  'transposed-edge-index': { severity: 'warning', summary: 'The edge index is stored E x 2; message-passing code expects 2 x E.' },
  'non-integer-index': { severity: 'error', summary: 'Node ids that are not integers (float dtype with fractions, text that is not a number).' },
  'index-out-of-range': { severity: 'error', summary: 'A node id below 0 or at/above the node count.' },
  'one-based-index': { severity: 'warning', summary: 'Ids look 1-based: no id 0 and the largest id equals the node count.' },
  'feature-rows-mismatch': { severity: 'error', summary: 'The feature matrix does not have one row per node.' },
  'label-length-mismatch': { severity: 'error', summary: 'The label vector does not have one entry per node.' },
  'mask-length-mismatch': { severity: 'error', summary: 'A boolean split mask does not have one entry per node.' },
  'edge-features-rows-mismatch': { severity: 'error', summary: 'Edge weights or edge features do not have one row per edge entry.' },
  'not-square': { severity: 'error', summary: 'An adjacency matrix that is not N x N.' },
  'asymmetric-adjacency': { severity: 'warning', summary: 'Edges whose reverse is missing in a graph that is (or looks) undirected; an error when declared undirected.' },
  'self-loops': { severity: 'info', summary: 'Edges from a node to itself; a warning when the graph declares them forbidden.' },
  'duplicate-edges': { severity: 'warning', summary: 'The same (source, target) pair stored more than once.' },
  'isolated-nodes': { severity: 'info', summary: 'Nodes with no edge other than self-loops: they only ever see their own features.' },
  'sparse-ids': { severity: 'info', summary: 'Node ids far above the number of distinct ids (a sparse numbering): the graph is checked on its distinct ids.' },
  'non-finite-features': { severity: 'error', summary: 'NaN or infinite values in features, edge weights or edge features.' },
  'mask-overlap': { severity: 'error', summary: 'A node in more than one of the train/validation/test splits.' },
  'label-range': { severity: 'warning', summary: 'Labels that are negative, fractional, or skip class ids.' },
  'empty-graph': { severity: 'warning', summary: 'A graph with no nodes or no edges.' },
  'skew-symmetric-diagonal': { severity: 'warning', summary: 'A skew-symmetric Matrix Market file that stores non-zero diagonal entries (a skew-symmetric matrix has a zero diagonal); they are kept, as SciPy keeps them.' },
  'no-graph-tensors': { severity: 'info', summary: 'A file that was read but holds nothing taken as graph data (e.g. JSON with a "nodes" key in a layout that is not read).' },
  'renamed-key': { severity: 'info', summary: 'A hopscope.json key that still works under its old name; the message gives the new one.' },
  'leaked-positive-pairs': { severity: 'error', summary: 'Validation or test positive pairs that are also message-passing edges (either direction when undirected): the model sees what it predicts.' },
  'negative-pairs-are-edges': { severity: 'error', summary: 'Negative pairs that are edges (message-passing or any split\'s positives); a warning for train negatives.' },
  'pairs-in-two-splits': { severity: 'error', summary: 'The same positive pair in two of the train/validation/test splits.' },
  'pair-labels-mismatch': { severity: 'error', summary: 'A pair label vector whose length differs from its pairs, or labels other than 0/1.' },
  'self-pairs': { severity: 'warning', summary: 'Positive or negative pairs that join a node to itself.' },
  'cold-start-pairs': { severity: 'info', summary: 'Validation or test pairs touching a node with no message-passing edge: only its own features are seen.' },
  'bad-graph-offsets': { severity: 'error', summary: 'Per-graph offsets (slices, ptr, counts) that decrease or do not end at the length of the tensor they cut.' },
  'unsorted-batch': { severity: 'warning', summary: 'A batch vector (graph id per node) that is not sorted; most batching code assumes each graph\'s nodes are contiguous.' },
  'cross-graph-edges': { severity: 'error', summary: 'Edges that join nodes of two different graphs of a dataset.' },
  'graph-labels-mismatch': { severity: 'error', summary: 'Graph labels whose count differs from the number of graphs in the dataset.' },
  'empty-graphs': { severity: 'warning', summary: 'Graphs of a dataset with no nodes or no edges.' },
  'isomorphic-label-conflict': { severity: 'warning', summary: 'Isomorphic graphs (features included) that carry different labels: no model can get both right.' },
  'isomorphic-across-splits': { severity: 'error', summary: 'A validation or test graph isomorphic to a training graph, features included: the split leaks.' },
  'one-way-relation': { severity: 'info', summary: 'A relation between two node types with no relation back: messages flow one way only.' },
  'type-never-receives': { severity: 'info', summary: 'A node type that is the target of no relation: its nodes never receive a message (a warning when it carries labels).' },
  'type-never-sends': { severity: 'info', summary: 'A node type that is the source of no relation: its nodes never send a message.' },
};

export const ALL_CODES = Object.keys(CODES) as ProblemCode[];

const SEVERITY_RANK: Record<Severity, number> = { info: 0, warning: 1, error: 2 };

export function severityAtLeast(s: Severity, threshold: Severity): boolean {
  return SEVERITY_RANK[s] >= SEVERITY_RANK[threshold];
}

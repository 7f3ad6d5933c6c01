/**
 * A graph with typed nodes and typed relations (a heterogeneous graph): node types, each with its
 * own id space 0..count-1 and its per-node tensors, and relations (source type, name, target type),
 * each with a 2 x E edge index whose row 0 counts in the source type and row 1 in the target type,
 * and optional per-edge tensors. Every layout that is read (names SRC__REL__DST in containers and
 * sibling files, PyTorch nested dicts and typed objects, manifest "nodeTypes"/"relations") is turned
 * into this one shape by recognise.ts; check.ts checks it and builds the types-forgotten graph.
 */
import type { Tensor } from '../formats/types';
import type { RoleGuess } from '../checks/roles';

/** One tensor of a typed graph: where it came from and what it is for its type or relation. */
export interface TypedPart {
  file: string;
  tensor: Tensor;
  /** The key within its type or relation (`x`, `y`, `train_mask`, `edge_index`, `edge_attr`, `num_nodes`). */
  key: string;
  /** The role its key names (features, labels, mask, edge-index, edge-weight, edge-features, unknown). */
  guess: RoleGuess;
  hints?: { nodes?: number };
}

export interface NodeType {
  name: string;
  /** Per-node tensors (features, labels, masks; unknown ones are kept for the tensor table). */
  parts: TypedPart[];
  /** A declared node count (TYPE__num_nodes, the manifest's "nodes") and who declared it. */
  declared?: { count: number; source: string; part?: TypedPart };
}

export interface Relation {
  source: string;
  name: string;
  target: string;
  /** `SRC__REL__DST`, the relation's name in problems and reports. */
  key: string;
  edges: TypedPart;
  /** Per-edge tensors (edge weights, edge features). */
  edgeParts: TypedPart[];
}

export type TypedLayout = 'names' | 'nested' | 'object' | 'siblings' | 'manifest';

export interface TypedGraph {
  name: string;
  layout: TypedLayout;
  /** The file holding the (first) relation: the typed summary and the graph figures go on it. */
  structureFile: string;
  files: string[];
  /** In order of first mention (relations first, then node tensors): the id-space order. */
  nodeTypes: NodeType[];
  relations: Relation[];
}

export function relationKey(source: string, name: string, target: string): string {
  return `${source}__${name}__${target}`;
}

/** Every part of the graph (relations' edges and edge tensors, node tensors, declarations). */
export function allParts(g: TypedGraph): TypedPart[] {
  const out: TypedPart[] = [];
  for (const r of g.relations) out.push(r.edges, ...r.edgeParts);
  for (const t of g.nodeTypes) {
    out.push(...t.parts);
    if (t.declared?.part) out.push(t.declared.part);
  }
  return out;
}

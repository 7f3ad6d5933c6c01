/**
 * The typed form of a hopscope.json graph (schemas/hopscope.schema.json):
 *
 *   { "name": "larkhaven",
 *     "nodeTypes": { "rider": { "nodes": 40, "features": "rider_x.npy", "labels": "rider_y.npy",
 *                               "splits": { "train": "masks.npz#train" } },
 *                    "dock": { "features": "dock_x.npy" } },
 *     "relations": [ { "source": "rider", "name": "rides_from", "target": "dock",
 *                      "edges": "rides_from.npy", "edgeWeights": "…", "edgeFeatures": "…" } ] }
 *
 * parseTypedGraph reads it (manifest.ts calls it for a graph with "nodeTypes" or "relations");
 * typedFromManifest turns it into a TypedGraph over the read files.
 */
import type { Tensor } from '../formats/types';
import type { Split } from '../checks/roles';
import { guessRole, type RoleGuess } from '../checks/roles';
import type { NodeType, Relation, TypedGraph, TypedPart } from './model';
import { relationKey } from './model';
import type { ReadFile } from './recognise';

export interface TypedRef {
  file: string;
  tensor?: string;
}

export interface TypedManifestGraph {
  nodeTypes: Array<{ name: string; nodes?: number; refs: Array<TypedRef & { key: string; role: RoleGuess['role']; split?: Split }> }>;
  relations: Array<{ source: string; name: string; target: string; edges: TypedRef; refs: Array<TypedRef & { key: string; role: RoleGuess['role'] }> }>;
}

type ParseRef = (v: unknown, at: string) => TypedRef;
type Fail = (message: string) => never;

const TYPE_KEYS = new Set(['nodes', 'features', 'labels', 'splits']);
const RELATION_KEYS = new Set(['source', 'name', 'target', 'edges', 'edgeWeights', 'edgeFeatures']);
const SPLITS: readonly Split[] = ['train', 'val', 'test'];

const isObject = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);

/** Reads "nodeTypes" and "relations" of graph `at`; `fail` throws the manifest's error. */
export function parseTypedGraph(g: Record<string, unknown>, at: string, parseRef: ParseRef, fail: Fail): TypedManifestGraph {
  if (!isObject(g.nodeTypes)) fail(`${at}.nodeTypes must map each node type to { "nodes", "features", "labels", "splits" }.`);
  if (!Array.isArray(g.relations) || g.relations.length === 0) fail(`${at}.relations must be a non-empty array of { "source", "name", "target", "edges" }.`);
  for (const k of ['edges', 'adjacency', 'features', 'labels', 'splits', 'edgeSplits', 'edgeWeights', 'edgeFeatures', 'nodes']) {
    if (g[k] !== undefined) fail(`${at}: "${k}" belongs inside "nodeTypes" or "relations" in a typed graph.`);
  }
  const nodeTypes: TypedManifestGraph['nodeTypes'] = [];
  for (const [name, v] of Object.entries(g.nodeTypes as Record<string, unknown>)) {
    const tat = `${at}.nodeTypes.${name}`;
    if (!name || name.includes('__')) fail(`${tat}: a node type name must be non-empty and must not contain "__".`);
    if (!isObject(v)) fail(`${tat} must be an object.`);
    for (const k of Object.keys(v)) if (!TYPE_KEYS.has(k)) fail(`${tat}: unknown key "${k}" (nodes, features, labels, splits).`);
    const t: TypedManifestGraph['nodeTypes'][number] = { name, refs: [] };
    if (v.nodes !== undefined) {
      if (!Number.isInteger(v.nodes) || (v.nodes as number) < 0) fail(`${tat}.nodes must be a non-negative integer.`);
      t.nodes = v.nodes as number;
    }
    if (v.features !== undefined) t.refs.push({ ...parseRef(v.features, `${tat}.features`), key: 'x', role: 'features' });
    if (v.labels !== undefined) t.refs.push({ ...parseRef(v.labels, `${tat}.labels`), key: 'y', role: 'labels' });
    if (v.splits !== undefined) {
      if (!isObject(v.splits)) fail(`${tat}.splits must be an object with train/val/test.`);
      for (const [k, x] of Object.entries(v.splits)) {
        if (!(SPLITS as string[]).includes(k)) fail(`${tat}.splits: unknown split "${k}" (train, val, test).`);
        t.refs.push({ ...parseRef(x, `${tat}.splits.${k}`), key: `${k}_mask`, role: 'mask', split: k as Split });
      }
    }
    nodeTypes.push(t);
  }
  const relations: TypedManifestGraph['relations'] = [];
  (g.relations as unknown[]).forEach((r, i) => {
    const rat = `${at}.relations[${i}]`;
    if (!isObject(r)) fail(`${rat} must be an object.`);
    for (const k of Object.keys(r)) if (!RELATION_KEYS.has(k)) fail(`${rat}: unknown key "${k}" (${[...RELATION_KEYS].join(', ')}).`);
    for (const k of ['source', 'name', 'target'] as const) {
      if (typeof r[k] !== 'string' || !r[k] || (r[k] as string).includes('__')) fail(`${rat}.${k} must be a non-empty string without "__".`);
    }
    for (const k of ['source', 'target'] as const) {
      if (!nodeTypes.some((t) => t.name === r[k])) fail(`${rat}.${k}: "${r[k] as string}" is not one of the node types (${nodeTypes.map((t) => t.name).join(', ')}).`);
    }
    if (r.edges === undefined) fail(`${rat} needs "edges" (its 2 x E edge index).`);
    const refs: TypedManifestGraph['relations'][number]['refs'] = [];
    if (r.edgeWeights !== undefined) refs.push({ ...parseRef(r.edgeWeights, `${rat}.edgeWeights`), key: 'edge_weight', role: 'edge-weight' });
    if (r.edgeFeatures !== undefined) refs.push({ ...parseRef(r.edgeFeatures, `${rat}.edgeFeatures`), key: 'edge_attr', role: 'edge-features' });
    relations.push({ source: r.source as string, name: r.name as string, target: r.target as string, edges: parseRef(r.edges, `${rat}.edges`), refs });
  });
  return { nodeTypes, relations };
}

/**
 * The TypedGraph a manifest declares, over the read files (`lookup` resolves a manifest-relative
 * path). Missing files and tensors are returned as messages for the manifest.
 */
export function typedFromManifest(name: string, m: TypedManifestGraph, lookup: (file: string) => ReadFile | undefined): { graph?: TypedGraph; missing: string[] } {
  const missing: string[] = [];
  const pick = (ref: TypedRef, role: RoleGuess['role'], key: string, split?: Split): TypedPart | undefined => {
    const f = lookup(ref.file);
    if (!f) { missing.push(`Graph "${name}": ${ref.file} was not found or is not a supported graph file.`); return undefined; }
    if (!f.result) return undefined;
    const ts = f.result.tensors;
    let t: Tensor | undefined;
    if (ref.tensor !== undefined) {
      t = ts.find((x) => x.name === ref.tensor);
      if (!t) { missing.push(`Graph "${name}": ${ref.file} has no tensor "${ref.tensor}" (it has ${ts.map((x) => x.name).join(', ') || 'none'}).`); return undefined; }
    } else {
      t = ts.length === 1 ? ts[0] : ts.find((x) => guessRole(x, f.path).role === role) ?? ts[0];
      if (!t) return undefined;
    }
    const g = guessRole({ ...t, name: key } as Tensor, f.path);
    const guess: RoleGuess = { ...g, role, reason: 'declared', ...(split ? { split } : {}) };
    return { file: f.path, tensor: t, key, guess };
  };
  const nodeTypes: NodeType[] = m.nodeTypes.map((t) => {
    const nt: NodeType = { name: t.name, parts: [] };
    if (t.nodes !== undefined) nt.declared = { count: t.nodes, source: `the "nodes" of ${t.name} in hopscope.json` };
    for (const r of t.refs) { const p = pick(r, r.role, r.key, r.split); if (p) nt.parts.push(p); }
    return nt;
  });
  const relations: Relation[] = [];
  for (const r of m.relations) {
    const edges = pick(r.edges, 'edge-index', 'edge_index');
    if (!edges) continue;
    const rel: Relation = { source: r.source, name: r.name, target: r.target, key: relationKey(r.source, r.name, r.target), edges, edgeParts: [] };
    for (const x of r.refs) { const p = pick(x, x.role, x.key); if (p) rel.edgeParts.push(p); }
    relations.push(rel);
  }
  if (relations.length === 0) return { missing };
  const files = new Set<string>();
  for (const r of relations) { files.add(r.edges.file); r.edgeParts.forEach((p) => files.add(p.file)); }
  for (const t of nodeTypes) t.parts.forEach((p) => files.add(p.file));
  return { graph: { name, layout: 'manifest', structureFile: relations[0]!.edges.file, files: [...files], nodeTypes, relations }, missing };
}

/** Every file a typed manifest graph names (read as the manifest says, like a graph's parts). */
export function typedManifestFiles(m: TypedManifestGraph): TypedRef[] {
  return [...m.nodeTypes.flatMap((t) => t.refs), ...m.relations.flatMap((r) => [r.edges, ...r.refs])];
}

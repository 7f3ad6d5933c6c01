/**
 * Which of the read files hold typed graphs, and their TypedGraph (model.ts). Only names and
 * structures that say "typed" are taken, so a plain homogeneous file is never read as typed:
 *
 * - names: a tensor named `SRC__REL__DST` (three parts joined by double underscores; a part starts
 *   and ends with a letter or digit) holding a 2 x E (or E x 2) integer edge index is relation REL
 *   from type SRC to type DST; `SRC__REL__DST__edge_attr` is one of its edge tensors; `TYPE__x`,
 *   `TYPE__y`, `TYPE__train_mask`, … are node tensors and `TYPE__num_nodes` (a scalar) declares a
 *   count. In a container (.npz, .safetensors, .json, a .pt dict) or in sibling files of one folder
 *   (`author__writes__paper.npy` beside `paper__x.npy`).
 * - nested: a PyTorch dict `{"node": {TYPE: {key: …}}, "edge": {"SRC__REL__DST": {"edge_index": …}}}`,
 *   read by core/formats/pt.ts as tensors `node.TYPE.key` and `edge.SRC__REL__DST.edge_index` (a
 *   tuple key (SRC, REL, DST) reads as `SRC,REL,DST`).
 * - object: a typed-graph object saved whole: its node stores and edge stores are records whose
 *   attribute dicts pt.ts reads as `TYPE.key` and `SRC,REL,DST.key` (edge store keys are 3-tuples of
 *   strings); plain `TYPE.key` names count only beside such a 3-tuple relation.
 *
 * A file (or folder of siblings) is typed only when at least one relation's edge index is found.
 */
import type { Problem, ReadResult, Tensor } from '../formats/types';
import { typedFromManifest, type TypedManifestGraph } from './manifest';
import { guessRole, isIntegerDType, roleFromName, type RoleGuess } from '../checks/roles';
import { baseOf, dirOf } from '../paths';
import type { NodeType, Relation, TypedGraph, TypedLayout, TypedPart } from './model';
import { relationKey } from './model';

/** A file as check-set.ts has it (path and what its reader returned). */
export interface ReadFile {
  path: string;
  result?: ReadResult;
}

/** A type or relation name part: letters, digits, `_`, `-` and spaces, starting and ending with a letter or digit. */
const NAME_PART = /^[A-Za-z0-9](?:[A-Za-z0-9_ -]*[A-Za-z0-9])?$/;
const NODE_GROUP = new Set(['node', 'nodes', 'node_types']);
const EDGE_GROUP = new Set(['edge', 'edges', 'edge_types', 'relations']);

type Parsed =
  | { kind: 'relation'; source: string; name: string; target: string; key: string | null; form: 'names' | 'nested' | 'object'; prefix: string }
  | { kind: 'node'; type: string; key: string; form: 'names' | 'nested' | 'object'; prefix: string };

/** `SRC__REL__DST` (or `SRC__REL__DST__key`) and `SRC,REL,DST` (a tuple key) → its parts. */
function relationParts(seg: string): { parts: [string, string, string]; key: string | null; tuple: boolean } | null {
  if (seg.includes(',')) {
    const p = seg.split(',');
    if (p.length !== 3 || p.some((x) => x === '' || x.includes('__'))) return null;
    return { parts: [p[0]!, p[1]!, p[2]!], key: null, tuple: true };
  }
  const p = seg.split('__');
  if ((p.length !== 3 && p.length !== 4) || !p.every((x) => NAME_PART.test(x))) return null;
  return { parts: [p[0]!, p[1]!, p[2]!], key: p.length === 4 ? p[3]! : null, tuple: false };
}

/** What a tensor name says about typed data, or null. Exported for tests. */
export function parseTypedName(name: string): Parsed | null {
  // Full paths keep hidden attribute names (`_node_store_dict`, `_mapping`): they carry no meaning here.
  const segs = name.split('.').filter((s) => s !== '' && !s.startsWith('_'));
  if (segs.length === 0) return null;
  const last = segs.length - 1;
  // A relation: its key is the last segment, or the one before the last (then the last is the tensor's key).
  for (const i of [last, last - 1]) {
    if (i < 0) continue;
    const r = relationParts(segs[i]!);
    if (!r) continue;
    if (i === last && r.tuple) continue; // a tuple key names a store, not a tensor
    if (i === last - 1 && r.key !== null) continue;
    const before = segs.slice(0, i);
    const grouped = before.length > 0 && EDGE_GROUP.has(before[before.length - 1]!.toLowerCase());
    const prefix = (grouped ? before.slice(0, -1) : before).join('.');
    const key = i === last ? r.key : segs[last]!;
    const form = i === last && !grouped ? 'names' : r.tuple && !grouped ? 'object' : 'nested';
    return { kind: 'relation', source: r.parts[0], name: r.parts[1], target: r.parts[2], key, form, prefix };
  }
  // A node tensor: TYPE__key, node.TYPE.key, or TYPE.key (object form, checked by the caller).
  const lastSeg = segs[last]!;
  const two = lastSeg.split('__');
  if (two.length === 2 && NAME_PART.test(two[0]!) && NAME_PART.test(two[1]!)) {
    return { kind: 'node', type: two[0]!, key: two[1]!, form: 'names', prefix: segs.slice(0, last).join('.') };
  }
  if (segs.length >= 3 && NODE_GROUP.has(segs[last - 2]!.toLowerCase()) && !segs[last - 1]!.includes(',')) {
    return { kind: 'node', type: segs[last - 1]!, key: lastSeg, form: 'nested', prefix: segs.slice(0, last - 2).join('.') };
  }
  if (segs.length >= 2 && !segs[last - 1]!.includes(',')) {
    return { kind: 'node', type: segs[last - 1]!, key: lastSeg, form: 'object', prefix: segs.slice(0, last - 1).join('.') };
  }
  return null;
}

/** The role a key names, as if the tensor were called by its key alone. */
function roleOfKey(t: Tensor, key: string, file: string): RoleGuess {
  return guessRole({ ...t, name: key } as Tensor, file);
}

/** A relation's edge index: 2 x E or E x 2 (rank 2), numbers not text. */
function looksLikeEdgeIndex(t: Tensor, strict: boolean): boolean {
  if (t.kind !== 'dense' || t.strings || t.shape.length !== 2) return false;
  if (t.shape[0] !== 2 && t.shape[1] !== 2) return false;
  return strict ? isIntegerDType(t.dtype) : t.dtype !== 'bytes' && t.dtype !== 'str';
}

interface Entry { file: ReadFile; tensor: Tensor; parsed: Parsed }

/** Builds typed graphs from parsed tensors (one group), or null when no relation is found. */
function build(name: string, layout: TypedLayout, entries: Entry[]): TypedGraph | null {
  const relations: Relation[] = [];
  const byKey = new Map<string, Relation>();
  const types = new Map<string, NodeType>();
  const typeOf = (n: string) => {
    let t = types.get(n);
    if (!t) { t = { name: n, parts: [] }; types.set(n, t); }
    return t;
  };
  const part = (e: Entry, key: string, guess: RoleGuess): TypedPart => ({
    file: e.file.path, tensor: e.tensor, key, guess, ...(e.file.result?.hints?.nodes !== undefined ? { hints: { nodes: e.file.result.hints.nodes } } : {}),
  });
  // Relations first (their edge indices), then their edge tensors, then node tensors.
  const tupleForm = entries.some((e) => e.parsed.kind === 'relation' && e.parsed.form === 'object');
  const isIndex = (p: Parsed & { kind: 'relation' }, e: Entry) =>
    p.key === null || p.key.toLowerCase() === 'edge_index' || roleOfKey(e.tensor, p.key, e.file.path).role === 'edge-index';
  // A bare SRC__REL__DST name makes the group typed only as an integer edge index; once the group
  // is typed, such a name with float ids is a relation too (its ids are then reported).
  const typed = entries.some((e) => e.parsed.kind === 'relation' && isIndex(e.parsed, e) && looksLikeEdgeIndex(e.tensor, e.parsed.key === null));
  if (!typed) return null;
  for (const e of entries) {
    const p = e.parsed;
    if (p.kind !== 'relation') continue;
    if (!isIndex(p, e) || !looksLikeEdgeIndex(e.tensor, false)) continue;
    const key = relationKey(p.source, p.name, p.target);
    if (byKey.has(key)) continue;
    const r: Relation = { source: p.source, name: p.name, target: p.target, key, edges: part(e, p.key ?? 'edge_index', { role: 'edge-index', reason: 'name' }), edgeParts: [] };
    byKey.set(key, r);
    relations.push(r);
    typeOf(p.source); typeOf(p.target);
  }
  if (relations.length === 0) return null;
  for (const e of entries) {
    const p = e.parsed;
    if (p.kind === 'relation') {
      const r = byKey.get(relationKey(p.source, p.name, p.target));
      if (!r || r.edges.tensor === e.tensor || p.key === null) continue;
      r.edgeParts.push(part(e, p.key, roleOfKey(e.tensor, p.key, e.file.path)));
      continue;
    }
    if (p.form === 'object' && !tupleForm) continue;
    const guess = roleOfKey(e.tensor, p.key, e.file.path);
    const known = types.has(p.type);
    if (p.key.toLowerCase() === 'num_nodes') {
      const t = e.tensor;
      if (t.kind === 'dense' && t.data.length === 1 && Number.isInteger(t.data[0]) && t.data[0]! >= 0) {
        const nt = typeOf(p.type);
        nt.declared = { count: t.data[0]!, source: t.name, part: part(e, p.key, { role: 'unknown', reason: 'name' }) };
      }
      continue;
    }
    // A node tensor starts a type of its own only when its key names a per-node role.
    if (!known && !['features', 'labels', 'mask'].includes(guess.role)) continue;
    typeOf(p.type).parts.push(part(e, p.key, guess));
  }
  const files = [...new Set(entries.filter((e) => usedTensor(e.tensor, relations, types)).map((e) => e.file.path))];
  return { name, layout, structureFile: relations[0]!.edges.file, files, nodeTypes: [...types.values()], relations };
}

function usedTensor(t: Tensor, relations: Relation[], types: Map<string, NodeType>): boolean {
  for (const r of relations) if (r.edges.tensor === t || r.edgeParts.some((p) => p.tensor === t)) return true;
  for (const n of types.values()) if (n.parts.some((p) => p.tensor === t) || n.declared?.part?.tensor === t) return true;
  return false;
}

/**
 * The typed graphs among `files` (already read, none claimed by a manifest yet): containers first,
 * then the single-tensor files of each folder taken together. Files not listed in any graph's
 * `files` are left to the homogeneous checks.
 */
export function findTypedGraphs(files: ReadFile[]): TypedGraph[] {
  const graphs: TypedGraph[] = [];
  const loose = new Map<string, Entry[]>();
  for (const f of files) {
    const tensors = f.result?.tensors ?? [];
    const entries: Entry[] = [];
    for (const t of tensors) {
      const parsed = parseTypedName(t.name);
      if (parsed) entries.push({ file: f, tensor: t, parsed });
    }
    if (entries.length === 0) continue;
    if (tensors.length === 1 && entries[0]!.parsed.form === 'names' && entries[0]!.parsed.prefix === '') {
      const d = dirOf(f.path);
      if (!loose.has(d)) loose.set(d, []);
      loose.get(d)!.push(entries[0]!);
      continue;
    }
    // One graph per prefix (a dict of several typed graphs keeps them apart).
    const byPrefix = new Map<string, Entry[]>();
    for (const e of entries) {
      if (!byPrefix.has(e.parsed.prefix)) byPrefix.set(e.parsed.prefix, []);
      byPrefix.get(e.parsed.prefix)!.push(e);
    }
    for (const [prefix, es] of byPrefix) {
      const layout: TypedLayout = es.some((e) => e.parsed.form === 'object') ? 'object' : es.some((e) => e.parsed.form === 'nested') ? 'nested' : 'names';
      const g = build(prefix ? `${baseOf(f.path)}:${prefix}` : baseOf(f.path), layout, es);
      if (g) graphs.push(g);
    }
  }
  for (const [d, es] of loose) {
    es.sort((a, b) => (a.file.path < b.file.path ? -1 : 1));
    const g = build(`${baseOf(d) || d}/`, 'siblings', es);
    if (g) graphs.push(g);
  }
  return graphs;
}

/** A manifest's graphs as check-set.ts has them. */
export interface ManifestGraphs {
  path: string;
  manifest: { graphs: Array<{ name: string; typed?: TypedManifestGraph }> };
}

/**
 * Every typed graph: those manifests declare (their missing files reported on the manifest), then
 * those recognised among the files no typed manifest graph took. `lookup` resolves a path written
 * in a manifest.
 */
export function typedGraphsIn(files: ReadFile[], manifests: ManifestGraphs[], lookup: (manifestPath: string, file: string) => ReadFile | undefined,
  manifestProblems: Array<{ path: string; problem: Problem }>): TypedGraph[] {
  const out: TypedGraph[] = [];
  const taken = new Set<string>();
  for (const m of manifests) {
    for (const g of m.manifest.graphs) {
      if (!g.typed) continue;
      const r = typedFromManifest(g.name, g.typed, (f) => lookup(m.path, f));
      for (const message of r.missing) manifestProblems.push({ path: m.path, problem: { code: 'unreadable', severity: 'error', count: 1, message } });
      if (r.graph) { out.push(r.graph); r.graph.files.forEach((f) => taken.add(f)); }
    }
  }
  out.push(...findTypedGraphs(files.filter((f) => !taken.has(f.path))));
  return out;
}

/** Whether a file name (`author__writes__paper.npy`, `paper__x.npy`) is a typed sibling's, read beside a file given alone. */
export function isTypedFileName(fileName: string): boolean {
  const p = parseTypedName(baseOf(fileName).replace(/\.[^.]*(\.gz)?$/, ''));
  if (p === null || p.form !== 'names' || p.prefix !== '') return false;
  return p.kind === 'relation' || p.key === 'num_nodes' || roleFromName(p.key) !== undefined;
}

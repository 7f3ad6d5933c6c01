/**
 * The `hopscope.json` manifest: which files/tensors form one graph, and what the user declares
 * about it. Schema: schemas/hopscope.schema.json (kept in step by a unit test).
 *
 * {
 *   "directed": false,                    // defaults for every graph in this folder and below
 *   "severity": { "self-loops": "off" },  // per-code severity overrides
 *   "graphs": [ {
 *     "name": "docks",
 *     "edges": "rides.csv",               // or "adjacency": "docks.mtx"; "file#tensor" picks one tensor
 *     "features": "x.npy", "labels": "y.npy",
 *     "splits": { "train": "splits.npz#train", "val": "splits.npz#val", "test": "splits.npz#test" },
 *     "edgeWeights": "...", "edgeFeatures": "...",
 *     "edgeSplits": { "message": "edges.npy", "val": { "pos": "val.npz#pos", "neg": "val.npz#neg" },
 *                     "test": { "pairs": "test.pt#edge_label_index", "labels": "test.pt#edge_label" } },
 *     "nodes": 120, "indexBase": 0, "selfLoops": "forbidden", "sendingRow": 0
 *   } ]
 * }
 *
 * Keys renamed since a release are still read for one more, each use noted as a `renamed-key`
 * info on the manifest (`LEGACY_FLOW`).
 */
import type { ProblemCode, Role, Severity } from '../formats/types';
import { ALL_CODES } from '../../../../common/problem-codes';
import type { GraphOptions, SelfLoopPolicy, SendingRow } from './graph-check';
import type { Split } from './roles';
import { DECLARED_PAIRS, type PairRole } from '../splits/edge-splits';
import { parseTypedGraph, type TypedManifestGraph } from '../typed/manifest';
import { DATASET_KEYS, isDatasetEntry, parseDatasetGraph, type DatasetManifestGraph } from '../datasets/manifest';

export type SeverityOverride = Severity | 'off';
export type SeverityOverrides = Partial<Record<ProblemCode, SeverityOverride>>;

export interface TensorRef {
  /** Path as written, resolved against the manifest's folder by the caller. */
  file: string;
  tensor?: string;
  role: Role;
  split?: Split;
  /** For link-prediction pairs and labels declared under "edgeSplits". */
  pair?: PairRole;
}

export interface ManifestGraph {
  name: string;
  parts: TensorRef[];
  options: GraphOptions;
  /** A typed graph ("nodeTypes" and "relations", core/typed/manifest.ts); `parts` is then empty. */
  typed?: TypedManifestGraph;
  /** A dataset of many graphs ("graphIds", "nodeOffsets" or "nodeCounts", core/datasets/manifest.ts); `parts` is then empty. */
  dataset?: DatasetManifestGraph;
}

export interface Manifest {
  defaults: GraphOptions;
  severity: SeverityOverrides;
  graphs: ManifestGraph[];
  /** Keys read under an old name: what to write instead (reported as `renamed-key` infos). */
  renamed: string[];
}

export class ManifestError extends Error {
  override readonly name = 'ManifestError';
}

const OPTION_KEYS = ['directed', 'nodes', 'indexBase', 'selfLoops', 'sendingRow'] as const;

/**
 * The old name of "sendingRow" (0.1.0), read until the next release: its two values and the
 * sending row each one means.
 */
const LEGACY_FLOW = { key: 'flow', rows: { 'source-to-target': 0, 'target-to-source': 1 } } as const;

/** The sending row an old-style direction value names (manifest "flow", the CLI's --flow alias), or undefined. */
export function sendingRowOfLegacyFlow(value: unknown): SendingRow | undefined {
  return typeof value === 'string' && Object.hasOwn(LEGACY_FLOW.rows, value) ? LEGACY_FLOW.rows[value as keyof typeof LEGACY_FLOW.rows] : undefined;
}

const GRAPH_KEYS = new Set<string>(['name', 'edges', 'adjacency', 'features', 'labels', 'splits', 'edgeSplits',
  'edgeWeights', 'edgeFeatures', 'nodeTypes', 'relations', ...DATASET_KEYS, ...OPTION_KEYS, LEGACY_FLOW.key]);
const TOP_KEYS = new Set<string>(['$schema', 'graphs', 'severity', ...OPTION_KEYS, LEGACY_FLOW.key]);
const PART_ROLES: ReadonlyArray<[string, Role]> = [
  ['edges', 'edge-index'], ['adjacency', 'adjacency'], ['features', 'features'], ['labels', 'labels'],
  ['edgeWeights', 'edge-weight'], ['edgeFeatures', 'edge-features'],
];
const SPLITS: readonly Split[] = ['train', 'val', 'test'];

/** Parses manifest text. Throws ManifestError with a message naming the offending key. */
export function parseManifest(text: string): Manifest {
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (e) {
    throw new ManifestError(`hopscope.json is not valid JSON: ${(e as Error).message}`);
  }
  if (!isObject(raw)) throw new ManifestError('hopscope.json must hold a JSON object.');
  for (const k of Object.keys(raw)) if (!TOP_KEYS.has(k)) throw new ManifestError(`unknown key "${k}" at the top level (expected one of ${[...TOP_KEYS].filter((t) => t !== LEGACY_FLOW.key).join(', ')}).`);
  const renamed: string[] = [];
  const defaults = parseOptions(raw, '', renamed);
  const severity: SeverityOverrides = {};
  if (raw.severity !== undefined) {
    if (!isObject(raw.severity)) throw new ManifestError('"severity" must map problem codes to "error", "warning", "info" or "off".');
    for (const [code, v] of Object.entries(raw.severity)) {
      if (!(ALL_CODES as string[]).includes(code)) throw new ManifestError(`"severity": unknown problem code "${code}".`);
      if (v !== 'error' && v !== 'warning' && v !== 'info' && v !== 'off') throw new ManifestError(`"severity.${code}" must be "error", "warning", "info" or "off".`);
      severity[code as ProblemCode] = v;
    }
  }
  const graphs: ManifestGraph[] = [];
  if (raw.graphs !== undefined) {
    if (!Array.isArray(raw.graphs)) throw new ManifestError('"graphs" must be an array.');
    raw.graphs.forEach((g, i) => graphs.push(parseGraph(g, i, renamed)));
  }
  return { defaults, severity, graphs, renamed };
}

function parseGraph(g: unknown, i: number, renamed: string[]): ManifestGraph {
  const at = `graphs[${i}]`;
  if (!isObject(g)) throw new ManifestError(`${at} must be an object.`);
  for (const k of Object.keys(g)) if (!GRAPH_KEYS.has(k)) throw new ManifestError(`${at}: unknown key "${k}".`);
  const name = g.name === undefined ? `graph ${i + 1}` : g.name;
  if (typeof name !== 'string') throw new ManifestError(`${at}.name must be a string.`);
  if (isDatasetEntry(g)) {
    const dataset = parseDatasetGraph(g, at, parseRef, (m) => { throw new ManifestError(m); });
    return { name, parts: [], options: parseOptions(g, `${at}.`, renamed), dataset };
  }
  if (g.nodeTypes !== undefined || g.relations !== undefined) {
    const typed = parseTypedGraph(g, at, parseRef, (m) => { throw new ManifestError(m); });
    return { name, parts: [], options: parseOptions(g, `${at}.`, renamed), typed };
  }
  const parts: TensorRef[] = [];
  for (const [key, role] of PART_ROLES) {
    if (g[key] !== undefined) parts.push({ ...parseRef(g[key], `${at}.${key}`), role });
  }
  if (g.splits !== undefined) {
    if (!isObject(g.splits)) throw new ManifestError(`${at}.splits must be an object with train/val/test.`);
    for (const [k, v] of Object.entries(g.splits)) {
      if (!(SPLITS as string[]).includes(k)) throw new ManifestError(`${at}.splits: unknown split "${k}" (train, val, test).`);
      parts.push({ ...parseRef(v, `${at}.splits.${k}`), role: 'mask', split: k as Split });
    }
  }
  if (g.edgeSplits !== undefined) parts.push(...parseEdgeSplits(g.edgeSplits, `${at}.edgeSplits`, g.edges === undefined && g.adjacency === undefined));
  if (!parts.some((p) => p.role === 'edge-index' || p.role === 'adjacency')) {
    throw new ManifestError(`${at} needs "edges" or "adjacency" (or "edgeSplits" with its "message" edges).`);
  }
  return { name, parts, options: parseOptions(g, `${at}.`, renamed) };
}

function parseEdgeSplits(v: unknown, at: string, messageIsEdges: boolean): TensorRef[] {
  if (!isObject(v)) throw new ManifestError(`${at} must be an object with "message" and train/val/test.`);
  const parts: TensorRef[] = [];
  for (const [k, x] of Object.entries(v)) {
    if (k === 'message') {
      if (!messageIsEdges) throw new ManifestError(`${at}.message: the graph already names its edges ("edges" or "adjacency"); keep one of them.`);
      parts.push({ ...parseRef(x, `${at}.message`), role: 'edge-index' });
      continue;
    }
    if (!(SPLITS as string[]).includes(k)) throw new ManifestError(`${at}: unknown key "${k}" (message, train, val, test).`);
    if (!isObject(x)) throw new ManifestError(`${at}.${k} must be an object with "pos"/"neg" or "pairs"/"labels".`);
    for (const [side, ref] of Object.entries(x)) {
      if (side !== 'pos' && side !== 'neg' && side !== 'pairs' && side !== 'labels') {
        throw new ManifestError(`${at}.${k}: unknown key "${side}" (pos, neg, pairs, labels).`);
      }
      parts.push({
        ...parseRef(ref, `${at}.${k}.${side}`), role: side === 'labels' ? 'edge-labels' : 'edge-pairs',
        pair: { split: k as Split, kind: side, owner: DECLARED_PAIRS },
      });
    }
    if (x.labels !== undefined && x.pairs === undefined) throw new ManifestError(`${at}.${k}.labels needs "pairs" beside it.`);
  }
  return parts;
}

function parseRef(v: unknown, at: string): { file: string; tensor?: string } {
  if (typeof v === 'string') {
    if (!v) throw new ManifestError(`${at} is empty.`);
    const hash = v.lastIndexOf('#');
    return hash > 0 ? { file: v.slice(0, hash), tensor: v.slice(hash + 1) } : { file: v };
  }
  if (isObject(v) && typeof v.file === 'string' && (v.tensor === undefined || typeof v.tensor === 'string')) {
    return v.tensor === undefined ? { file: v.file } : { file: v.file, tensor: v.tensor };
  }
  throw new ManifestError(`${at} must be "path", "path#tensor" or { "file": ..., "tensor": ... }.`);
}

function parseOptions(o: Record<string, unknown>, at: string, renamed: string[]): GraphOptions {
  const opts: GraphOptions = {};
  if (o.directed !== undefined) {
    if (typeof o.directed !== 'boolean') throw new ManifestError(`${at}directed must be true or false.`);
    opts.directed = o.directed;
  }
  if (o.nodes !== undefined) {
    if (!Number.isInteger(o.nodes) || (o.nodes as number) < 0) throw new ManifestError(`${at}nodes must be a non-negative integer.`);
    opts.nodes = o.nodes as number;
  }
  if (o.indexBase !== undefined) {
    if (o.indexBase !== 0 && o.indexBase !== 1) throw new ManifestError(`${at}indexBase must be 0 or 1.`);
    opts.indexBase = o.indexBase;
  }
  if (o.selfLoops !== undefined) {
    if (o.selfLoops !== 'allowed' && o.selfLoops !== 'forbidden') throw new ManifestError(`${at}selfLoops must be "allowed" or "forbidden".`);
    opts.selfLoops = o.selfLoops as SelfLoopPolicy;
  }
  if (o.sendingRow !== undefined) {
    if (o.sendingRow !== 0 && o.sendingRow !== 1) throw new ManifestError(`${at}sendingRow must be 0 (row 0 of the edge index sends) or 1 (row 1 sends).`);
    opts.sendingRow = o.sendingRow;
  }
  const old = o[LEGACY_FLOW.key];
  if (old !== undefined) {
    const key = `${at}${LEGACY_FLOW.key}`;
    const row = sendingRowOfLegacyFlow(old);
    if (row === undefined) throw new ManifestError(`${key} must be ${Object.keys(LEGACY_FLOW.rows).map((v) => `"${v}"`).join(' or ')}; better, write "sendingRow": 0 or 1 instead.`);
    if (o.sendingRow !== undefined) throw new ManifestError(`${key} is the old name of ${at}sendingRow: keep only "sendingRow".`);
    opts.sendingRow = row;
    renamed.push(`${key} is the old name of "sendingRow": write "sendingRow": ${row} instead of "${LEGACY_FLOW.key}": "${old as string}". The old key is still read in this release.`);
  }
  return opts;
}

function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

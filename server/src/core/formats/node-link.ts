/**
 * Graph JSON in the three layouts NetworkX's json_graph writes:
 * - node-link (`node_link_data`, also what D3 drawings use):
 *   { "directed": bool, "multigraph": bool, "graph": {...},
 *     "nodes": [{ "id": ..., attr... }, ...], "links" (or "edges"): [{ "source": id, "target": id, attr... }] }
 * - adjacency (`adjacency_data`): "nodes" plus "adjacency", one list of neighbours per node;
 * - Cytoscape (`cytoscape_data`): "elements": { "nodes": [{ "data": … }], "edges": [{ "data": … }] }.
 * Node i is the i-th node listed; ids may be numbers or strings. An undirected node-link or
 * Cytoscape graph lists each edge once, so it becomes both directions (a self-loop once), as a
 * message-passing layer needs it; the adjacency layout already lists both. Per-node attributes
 * that every node has as a number, boolean or equal-length list of numbers become tensors named by
 * their key ([N] or [N, F]); a numeric "weight" on every edge becomes edge_weight. An edge naming
 * an id no node has is left out and reported.
 */
import {
  MAX_LOCATIONS, type DenseTensor, type GraphHints, type Problem, type ProblemLocation, type TensorData,
  type TextLocator, type TextSpan,
} from './types';
import { type StringLines } from './text/line-index';
import { INT32_MAX } from './text/numbers';

/** Whether a parsed JSON object has the node-link layout. */
export function isNodeLink(root: Record<string, unknown>): boolean {
  const links = root['links'] ?? root['edges'];
  return Array.isArray(root['nodes']) && Array.isArray(links) &&
    root['nodes'].every(isObject) && links.length > 0 && links.every((l) => isObject(l) && 'source' in l && 'target' in l);
}

/** A JSON object (not an array, not null). */
export function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

export interface NodeLinkResult {
  tensors: DenseTensor[];
  problems: Problem[];
  hints: GraphHints;
}

/**
 * Tensors of a node-link document. `linksStart` is the offset of the links array's '[' in `text`
 * (for locating a link's source/target), when known.
 */
export function readNodeLink(root: Record<string, unknown>, text: string, lines: StringLines, linksStart: number | undefined): NodeLinkResult {
  const linksKey = Array.isArray(root['links']) ? 'links' : 'edges';
  const nodes = root['nodes'] as Record<string, unknown>[];
  const links = root[linksKey] as Record<string, unknown>[];
  const finder = linksStart === undefined ? undefined : new ElementFinder(text, linksStart);
  return buildGraph(nodes, nodes.map((node, i) => [node['id'] ?? i]), {
    count: links.length,
    source: (k) => links[k]!['source'],
    target: (k) => links[k]!['target'],
    weight: (k) => links[k]!['weight'],
    name: (k, side) => `${linksKey}[${k}].${side}`,
    keptBytes: keptByFind(text),
    find: finder && ((k, side) => {
      const at = finder.element(k);
      const v = at === undefined ? undefined : valueOfKey(text, at, side);
      return v && lines.span(v[0], v[1]);
    }),
  }, root['directed'] === true);
}

// ---------------------------------------------------------------------------------------------
// NetworkX's other two JSON layouts

/**
 * `json_graph.adjacency_data`: { "directed", "multigraph", "graph", "nodes": [{ "id": …, attr… }],
 * "adjacency": [[{ "id": neighbour, attr… }, …], …] } — row i lists the neighbours of node i.
 * An undirected graph lists each edge in both rows already (a self-loop once).
 */
export function isAdjacencyData(root: Record<string, unknown>): boolean {
  const nodes = root['nodes'], adj = root['adjacency'];
  return Array.isArray(nodes) && Array.isArray(adj) && nodes.length === adj.length && nodes.every(isObject) &&
    adj.every((row) => Array.isArray(row) && row.every(isObject));
}

export function readAdjacencyData(root: Record<string, unknown>, text: string, lines: StringLines, adjacencyStart: number | undefined): NodeLinkResult {
  const nodes = root['nodes'] as Record<string, unknown>[];
  const rows = root['adjacency'] as Record<string, unknown>[][];
  // Entry k of the flattened rows: its row and position.
  let total = 0;
  for (const r of rows) total += r.length;
  const rowOf = new Int32Array(total), posOf = new Int32Array(total);
  let k = 0;
  rows.forEach((r, i) => { for (let j = 0; j < r.length; j++) { rowOf[k] = i; posOf[k] = j; k++; } });
  const outer = adjacencyStart === undefined ? undefined : new ElementFinder(text, adjacencyStart);
  let innerRow = -1;
  let inner: ElementFinder | undefined;
  return buildGraph(nodes, nodes.map((node, i) => [node['id'] ?? i]), {
    count: total,
    source: (e) => nodes[rowOf[e]!]!['id'] ?? rowOf[e],
    target: (e) => rows[rowOf[e]!]![posOf[e]!]!['id'],
    weight: (e) => rows[rowOf[e]!]![posOf[e]!]!['weight'],
    name: (e, side) => side === 'source' ? `nodes[${rowOf[e]}].id` : `adjacency[${rowOf[e]}][${posOf[e]}].id`,
    keptBytes: keptByFind(text) + rowOf.byteLength + posOf.byteLength,
    find: outer && ((e) => {
      // Both ends are located at the entry's "id": the entry sits in its source's row.
      const i = rowOf[e]!;
      if (i !== innerRow) {
        const at = outer.element(i);
        inner = at === undefined ? undefined : new ElementFinder(text, at);
        innerRow = i;
      }
      const at = inner?.element(posOf[e]!);
      const v = at === undefined ? undefined : valueOfKey(text, at, 'id');
      return v && lines.span(v[0], v[1]);
    }),
  }, root['directed'] === true, false);
}

/**
 * `json_graph.cytoscape_data` (Cytoscape.js elements JSON): { "data", "directed", "multigraph",
 * "elements": { "nodes": [{ "data": { "id": "0", "value": 0, "name": "0", attr… } }],
 * "edges": [{ "data": { "source": 0, "target": 1, attr… } }] } }. NetworkX writes the node itself
 * as "value" and its string as "id", and names edge ends by the node itself; Cytoscape.js names
 * them by "id". Both are matched. An undirected graph lists each edge once.
 */
export function isCytoscapeData(root: Record<string, unknown>): boolean {
  const el = root['elements'];
  if (!isObject(el) || !Array.isArray(el['nodes'])) return false;
  const edges = el['edges'];
  return el['nodes'].every((n) => isObject(n) && isObject(n['data'])) &&
    (edges === undefined || (Array.isArray(edges) && edges.every((e) => isObject(e) && isObject(e['data']) &&
      'source' in e['data'] && 'target' in e['data'])));
}

export function readCytoscapeData(root: Record<string, unknown>, text: string, lines: StringLines, edgesStart: number | undefined): NodeLinkResult {
  const el = root['elements'] as Record<string, unknown>;
  const nodes = (el['nodes'] as Array<{ data: Record<string, unknown> }>).map((n) => n.data);
  const edges = ((el['edges'] ?? []) as Array<{ data: Record<string, unknown> }>).map((e) => e.data);
  // Attributes other than Cytoscape's own keys become per-node tensors.
  const attrs = nodes.map((d) => {
    const { id: _id, value: _value, name: _name, ...rest } = d;
    return rest;
  });
  const finder = edgesStart === undefined ? undefined : new ElementFinder(text, edgesStart);
  return buildGraph(attrs, nodes.map((d, i) => ('value' in d ? [d['value'], d['id'] ?? i] : [d['id'] ?? i])), {
    count: edges.length,
    source: (k) => edges[k]!['source'],
    target: (k) => edges[k]!['target'],
    weight: (k) => edges[k]!['weight'],
    name: (k, side) => `elements.edges[${k}].data.${side}`,
    keptBytes: keptByFind(text),
    find: finder && ((k, side) => {
      const at = finder.element(k);
      const data = at === undefined ? undefined : valueOfKey(text, at, 'data');
      const v = data && valueOfKey(text, data[0], side);
      return v && lines.span(v[0], v[1]);
    }),
  }, root['directed'] === true);
}

// ---------------------------------------------------------------------------------------------
// the shared build

interface LinkList {
  count: number;
  source(k: number): unknown;
  target(k: number): unknown;
  weight(k: number): unknown;
  /** Where an end is in the document's own terms, for messages. */
  name(k: number, side: 'source' | 'target'): string;
  find?: (k: number, side: 'source' | 'target') => TextSpan | undefined;
  /** Bytes `find` keeps alive (see keptByFind). */
  keptBytes?: number;
}

/**
 * What a `find` closure keeps alive: the document text (one byte a character for ASCII) and, through
 * the scope it shares with the other accessors, the parsed document, counted as twice the text (an
 * estimate, not a measurement).
 */
function keptByFind(text: string): number {
  return 3 * text.length;
}

/**
 * edge_index (each undirected link in both directions when `mirror`), edge_weight and per-node
 * tensors. `ids[i]` are the values links may use to name node i (the first one that is new wins).
 */
function buildGraph(nodes: Record<string, unknown>[], ids: unknown[][], links: LinkList, directed: boolean, mirror = !directed): NodeLinkResult {
  const n = nodes.length;
  const index = new Map<string, number>();
  ids.forEach((names, i) => {
    for (const id of names) {
      const key = idKey(id);
      if (!index.has(key)) index.set(key, i);
    }
  });

  const problems: Problem[] = [];
  const missing: ProblemLocation[] = [];
  let missingCount = 0;
  // Directed entries: link l as stored, and (undirected) its reverse unless it is a self-loop.
  const src: number[] = [], dst: number[] = [], linkOf: number[] = [], reversed: number[] = [];
  for (let k = 0; k < links.count; k++) {
    const s = links.source(k), t = links.target(k);
    const a = index.get(idKey(s)), b = index.get(idKey(t));
    if (a === undefined || b === undefined) {
      missingCount++;
      if (missing.length < MAX_LOCATIONS) {
        const side = a === undefined ? 'source' : 'target';
        const span = links.find?.(k, side);
        missing.push({ tensor: 'edge_index', detail: `${links.name(k, side)} ${JSON.stringify(side === 'source' ? s : t)}`, ...(span ?? {}) });
      }
      continue;
    }
    src.push(a); dst.push(b); linkOf.push(k); reversed.push(0);
    if (mirror && a !== b) { src.push(b); dst.push(a); linkOf.push(k); reversed.push(1); }
  }
  if (missingCount > 0) {
    const first = missing[0]!;
    problems.push({
      code: 'index-out-of-range', severity: 'error', tensor: 'edge_index', count: missingCount,
      message: `${missingCount} link${missingCount === 1 ? ' names a node' : 's name nodes'} that "nodes" does not list ` +
        `(e.g. ${first.detail}). Those links are left out; every source and target must be the id of a listed node.`,
      ...(first.line !== undefined ? { line: first.line, column: first.column ?? 1 } : {}),
      locations: missing,
    });
  }

  const e = src.length;
  const data = new Int32Array(2 * e);
  for (let k = 0; k < e; k++) { data[k] = src[k]!; data[e + k] = dst[k]!; }
  const edgeIndex: DenseTensor = { kind: 'dense', name: 'edge_index', dtype: 'int64', shape: [2, e], data, declaredRole: 'edge-index' };
  const find = links.find;
  if (find) {
    const lo = Int32Array.from(linkOf), rv = Uint8Array.from(reversed);
    const keptBytes = (links.keptBytes ?? 0) + lo.byteLength + rv.byteLength;
    edgeIndex.locator = {
      locate(flat: number): TextSpan | undefined {
        if (!Number.isInteger(flat) || flat < 0 || flat >= 2 * e) return undefined;
        const row = flat >= e ? 1 : 0, col = flat - row * e;
        return find(lo[col]!, (row ^ rv[col]!) === 0 ? 'source' : 'target');
      },
      kept: () => ({ holder: find, bytes: keptBytes }),
    } satisfies TextLocator;
  }
  const tensors: DenseTensor[] = [edgeIndex];

  let weighted = links.count > 0;
  for (let k = 0; k < links.count && weighted; k++) if (typeof links.weight(k) !== 'number') weighted = false;
  if (weighted) {
    const w = new Float64Array(e);
    for (let k = 0; k < e; k++) w[k] = links.weight(linkOf[k]!) as number;
    tensors.push({ kind: 'dense', name: 'edge_weight', dtype: 'float64', shape: [e], data: w, declaredRole: 'edge-weight' });
  }
  if (n > 0) {
    for (const key of Object.keys(nodes[0]!)) {
      if (key === 'id') continue;
      const t = nodeTensor(nodes, key);
      if (t) tensors.push(t);
    }
  }
  return { tensors, problems, hints: { nodes: n, directed } };
}

/** Ids compare as JSON values: the number 1 and the string "1" are different nodes. */
function idKey(id: unknown): string {
  return typeof id === 'string' ? `s${id}` : `v${JSON.stringify(id)}`;
}

/** A per-node attribute that every node has as a number/boolean or a list of numbers of one length. */
function nodeTensor(nodes: Record<string, unknown>[], key: string): DenseTensor | undefined {
  const n = nodes.length;
  const first = nodes[0]![key];
  if (typeof first === 'boolean') {
    if (!nodes.every((v) => typeof v[key] === 'boolean')) return undefined;
    return { kind: 'dense', name: key, dtype: 'bool', shape: [n], data: Uint8Array.from(nodes, (v) => (v[key] ? 1 : 0)) };
  }
  let width = 0;
  if (Array.isArray(first)) {
    width = first.length;
    if (!nodes.every((v) => Array.isArray(v[key]) && (v[key] as unknown[]).length === width && (v[key] as unknown[]).every((x) => typeof x === 'number'))) return undefined;
  } else if (!nodes.every((v) => typeof v[key] === 'number')) {
    return undefined;
  }
  const flat: number[] = width > 0 ? nodes.flatMap((v) => v[key] as number[]) : nodes.map((v) => v[key] as number);
  const whole = flat.every((x) => Number.isInteger(x) && Math.abs(x) <= INT32_MAX);
  const data: TensorData = whole ? Int32Array.from(flat) : Float64Array.from(flat);
  return { kind: 'dense', name: key, dtype: whole ? 'int64' : 'float64', shape: width > 0 ? [n, width] : [n], data };
}

/**
 * Finds where the k-th element of a JSON array starts (the array's '[' at `start`); remembers the
 * last element found, so ascending look-ups walk on from there instead of from the start.
 */
class ElementFinder {
  private lastK = -1;
  private lastAt = 0;

  constructor(private readonly text: string, private readonly start: number) {}

  element(k: number): number | undefined {
    const t = this.text;
    let i: number, count: number;
    if (this.lastK >= 0 && this.lastK <= k) { i = this.lastAt; count = this.lastK; }
    else {
      i = skipSpace(t, this.start + 1);
      if (i >= t.length || t.charCodeAt(i) === 93) return undefined;
      count = 0;
    }
    while (count < k) {
      i = skipSpace(t, valueEnd(t, i));
      if (t.charCodeAt(i) !== 44) return undefined; // not ',': the array ended
      i = skipSpace(t, i + 1);
      count++;
    }
    this.lastK = k; this.lastAt = i;
    return i;
  }
}

function skipSpace(t: string, i: number): number {
  while (i < t.length) {
    const c = t.charCodeAt(i);
    if (c !== 32 && c !== 9 && c !== 10 && c !== 13) break;
    i++;
  }
  return i;
}

/** Offset just past the JSON value starting at `i`. */
function valueEnd(t: string, i: number): number {
  const c = t.charCodeAt(i);
  if (c === 34) return skipString(t, i);
  if (c !== 123 && c !== 91) return tokenEnd(t, i);
  let d = 0;
  for (let p = i; p < t.length; p++) {
    const x = t.charCodeAt(p);
    if (x === 34) { p = skipString(t, p) - 1; continue; }
    if (x === 123 || x === 91) d++;
    else if ((x === 125 || x === 93) && --d === 0) return p + 1;
  }
  return t.length;
}

/** The value of `key` in the object whose '{' is at `at`, as [start, end) offsets. */
function valueOfKey(t: string, at: number, key: string): [number, number] | undefined {
  const n = t.length;
  if (t.charCodeAt(at) !== 123) return undefined;
  const want = JSON.stringify(key);
  let d = 0;
  for (let p = at + 1; p < n; p++) {
    const c = t.charCodeAt(p);
    if (c === 34) {
      const end = skipString(t, p);
      if (d === 0 && end === p + want.length && t.startsWith(want, p)) {
        let v = end;
        while (v < n && t.charCodeAt(v) !== 58) v++; // ':'
        v++;
        while (v < n && /\s/.test(t[v]!)) v++;
        const c0 = t.charCodeAt(v);
        const ve = c0 === 34 ? skipString(t, v) : c0 === 123 || c0 === 91 ? v + 1 : tokenEnd(t, v);
        return [v, ve];
      }
      p = end - 1;
      continue;
    }
    if (c === 123 || c === 91) d++;
    else if (c === 125 || c === 93) { if (d === 0) return undefined; d--; }
  }
  return undefined;
}

/** Offset just past the string starting at the quote at `i`. */
function skipString(t: string, i: number): number {
  let p = i + 1;
  while (p < t.length && t.charCodeAt(p) !== 34) p += t.charCodeAt(p) === 92 ? 2 : 1;
  return p + 1;
}

function tokenEnd(t: string, i: number): number {
  let p = i;
  while (p < t.length && !/[\s,}\]]/.test(t[p]!)) p++;
  return p;
}

/**
 * Node-link JSON, as NetworkX's `json_graph.node_link_data` writes it (and D3 drawings use):
 *   { "directed": bool, "multigraph": bool, "graph": {...},
 *     "nodes": [{ "id": ..., attr... }, ...], "links" (or "edges"): [{ "source": id, "target": id, attr... }] }
 * Node i is the i-th entry of "nodes"; ids may be numbers or strings. An undirected graph lists
 * each edge once, so it becomes both directions (a self-loop once), as a message-passing layer
 * needs it. Per-node attributes that every node has as a number, boolean or equal-length list of
 * numbers become tensors named by their key ([N] or [N, F]); a numeric "weight" on every link
 * becomes edge_weight. A link naming an id no node has is left out and reported.
 */
import {
  MAX_LOCATIONS, type DenseTensor, type GraphHints, type Problem, type ProblemLocation, type TensorData,
  type TextLocator, type TextSpan,
} from './types';
import { INT32_MAX, type StringLines } from './text-common';

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
  const directed = root['directed'] === true;
  const n = nodes.length;
  const index = new Map<string, number>();
  nodes.forEach((node, i) => {
    const key = idKey(node['id'] ?? i);
    if (!index.has(key)) index.set(key, i);
  });

  const locator = linksStart === undefined ? undefined : new LinkFinder(text, lines, linksStart);
  const problems: Problem[] = [];
  const missing: ProblemLocation[] = [];
  let missingCount = 0;
  // Directed entries: link l as stored, and (undirected) its reverse unless it is a self-loop.
  const src: number[] = [], dst: number[] = [], linkOf: number[] = [], reversed: number[] = [];
  links.forEach((l, k) => {
    const a = index.get(idKey(l['source'])), b = index.get(idKey(l['target']));
    if (a === undefined || b === undefined) {
      missingCount++;
      if (missing.length < MAX_LOCATIONS) {
        const side = a === undefined ? 'source' : 'target';
        const span = locator?.find(k, side);
        missing.push({ tensor: 'edge_index', detail: `${linksKey}[${k}].${side} ${JSON.stringify(l[side])}`, ...(span ?? {}) });
      }
      return;
    }
    src.push(a); dst.push(b); linkOf.push(k); reversed.push(0);
    if (!directed && a !== b) { src.push(b); dst.push(a); linkOf.push(k); reversed.push(1); }
  });
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
  if (locator) {
    const lo = Int32Array.from(linkOf), rv = Uint8Array.from(reversed);
    edgeIndex.locator = {
      locate(flat: number): TextSpan | undefined {
        if (!Number.isInteger(flat) || flat < 0 || flat >= 2 * e) return undefined;
        const row = flat >= e ? 1 : 0, col = flat - row * e;
        return locator.find(lo[col]!, (row ^ rv[col]!) === 0 ? 'source' : 'target');
      },
    } satisfies TextLocator;
  }
  const tensors: DenseTensor[] = [edgeIndex];

  const weights = links.map((l) => l['weight']);
  if (weights.every((w) => typeof w === 'number')) {
    const w = new Float64Array(e);
    for (let k = 0; k < e; k++) w[k] = weights[linkOf[k]!] as number;
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
 * Finds the source/target value of the k-th link in the text: walks the links array's elements
 * (skipping strings, tracking nesting), remembering where the last one started so ascending
 * look-ups do not rescan.
 */
class LinkFinder {
  private lastK = -1;
  private lastAt = 0;

  constructor(private readonly text: string, private readonly lines: StringLines, private readonly start: number) {}

  find(k: number, key: 'source' | 'target'): TextSpan | undefined {
    const t = this.text, n = t.length;
    let i = this.start + 1, count = -1;
    if (this.lastK >= 0 && this.lastK <= k) { i = this.lastAt; count = this.lastK - 1; }
    // Advance to the '{' of element k (depth 1 = directly inside the links array).
    let depth = 1;
    while (i < n) {
      const c = t.charCodeAt(i);
      if (c === 34) { i = skipString(t, i); continue; }
      if (c === 123 || c === 91) {
        if (depth === 1 && c === 123 && ++count === k) break;
        depth++;
      } else if (c === 125 || c === 93) {
        if (--depth === 0) return undefined;
      }
      i++;
    }
    if (i >= n) return undefined;
    this.lastK = k; this.lastAt = i;
    // Inside the object: find "key" at its own level, then the value after ':'.
    const want = `"${key}"`;
    let d = 0;
    for (let p = i + 1; p < n; p++) {
      const c = t.charCodeAt(p);
      if (c === 34) {
        const end = skipString(t, p);
        if (d === 0 && t.startsWith(want, p) && end === p + want.length) {
          let v = end;
          while (v < n && t.charCodeAt(v) !== 58) v++; // ':'
          v++;
          while (v < n && /\s/.test(t[v]!)) v++;
          const ve = t.charCodeAt(v) === 34 ? skipString(t, v) : tokenEnd(t, v);
          return this.lines.span(v, ve);
        }
        p = end - 1;
        continue;
      }
      if (c === 123 || c === 91) d++;
      else if (c === 125 || c === 93) { if (d === 0) return undefined; d--; }
    }
    return undefined;
  }
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

/**
 * JSON reader. Three shapes are graph data:
 * (a) an array of pairs, `[[0, 1], [1, 2]]` → `edge_index` [2, E] (a top-level [2, E] array with
 *     E ≠ 2 is taken as it stands); any other top-level array becomes one tensor named `data`;
 * (b) an object of named arrays, possibly nested: every array becomes one DenseTensor named by its
 *     key path joined with '.' (`masks.train`); the checks layer reads roles from the last key.
 * (c) graph JSON in the layouts of NetworkX's json_graph (node_link_data, adjacency_data,
 *     cytoscape_data; node-link.ts): nodes and edges become edge_index and per-node tensors.
 * An object with graph keys ("nodes", "edges", …) that gives no tensor gets a `no-graph-tensors`
 * info, so a graph in some other layout is not passed over in silence; other JSON (package.json,
 * tsconfig.json) gets none.
 * Arrays holding strings or objects are not tensors and are skipped, as are scalars. Ragged arrays
 * are unreadable. dtype: all booleans → bool; all whole numbers written without '.'/exponent →
 * int64 (Int32Array when every value fits, else Float64Array); anything else (a float, a null,
 * `1.0`) → float64 with null read as NaN. Empty arrays are int64.
 *
 * JSON.parse does the parsing. Locating values stays cheap: one structural scan records where each
 * tensor's array starts; a locator finds the n-th value token inside that span only when asked.
 * `hopscope.json` (the manifest) never reaches this reader.
 */
import {
  UnreadableError,
  type DType,
  type DenseTensor,
  type GraphHints,
  type Problem,
  type ReadLimits,
  type ReadResult,
  type TensorData,
  type TextLocator,
  type TextSpan,
} from './types';
import { assertText } from './text/encoding';
import { StringLines } from './text/line-index';
import { INT32_MAX } from './text/numbers';
import {
  isAdjacencyData, isCytoscapeData, isNodeLink, isObject, readAdjacencyData, readCytoscapeData, readNodeLink,
} from './node-link';

/** Deepest array nesting taken as a tensor, and deepest object nesting walked for names. */
const MAX_DIMS = 32;
const MAX_OBJECT_DEPTH = 64;

interface ArraySpan {
  /** Offset of the array's '['. */
  start: number;
  /** Some number inside is written with a fraction or an exponent. */
  float: boolean;
}

export function readJson(bytes: Uint8Array, _fileName: string, _limits: ReadLimits): ReadResult {
  assertText(bytes);
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch (e) {
    if (e instanceof TypeError) throw new UnreadableError('not valid UTF-8 text');
    throw new UnreadableError(`cannot decode the file as text: ${e instanceof Error ? e.message : String(e)}`);
  }
  let root: unknown;
  try {
    root = JSON.parse(text);
  } catch (e) {
    throw syntaxError(text, e);
  }
  const doc = new JsonText(text, scanSpans(text));
  const tensors: DenseTensor[] = [];
  const hints: GraphHints = {};

  if (Array.isArray(root)) {
    const t = toTensor(root, '', 'data', doc);
    if (t) tensors.push(asEdgeIndex(t, doc) ?? t);
  } else if (isObject(root) && isNodeLink(root)) {
    const linksKey = Array.isArray(root['links']) ? 'links' : 'edges';
    const nl = readNodeLink(root, text, doc.lines, doc.spans.get(linksKey)?.start);
    return { format: 'json', tensors: nl.tensors, problems: nl.problems, hints: nl.hints };
  } else if (isObject(root) && isAdjacencyData(root)) {
    const g = readAdjacencyData(root, text, doc.lines, doc.spans.get('adjacency')?.start);
    return { format: 'json', tensors: g.tensors, problems: g.problems, hints: g.hints };
  } else if (isObject(root) && isCytoscapeData(root)) {
    const g = readCytoscapeData(root, text, doc.lines, doc.spans.get('elements.edges')?.start);
    return { format: 'json', tensors: g.tensors, problems: g.problems, hints: g.hints };
  } else if (isObject(root)) {
    walk(root, '', 0, doc, tensors);
    const nodes = root['num_nodes'];
    if (typeof nodes === 'number' && Number.isInteger(nodes) && nodes >= 0) hints.nodes = nodes;
  }
  const result: ReadResult = { format: 'json', tensors, problems: [] };
  if (tensors.length === 0 && isObject(root)) {
    // Keys that name graph parts, in a layout not read: say the file was looked at.
    const graphKeys = Object.keys(root).filter((k) => GRAPH_KEYS.has(k.toLowerCase()));
    if (graphKeys.length > 0) result.problems.push(withoutGraphTensors(graphKeys));
  }
  if (hints.nodes !== undefined) result.hints = hints;
  return result;
}


/** Top-level keys that say a JSON object is meant as a graph. */
const GRAPH_KEYS = new Set(['nodes', 'links', 'edges', 'adjacency', 'elements', 'edge_index', 'edgeindex', 'adj']);

/** The `no-graph-tensors` info: a JSON object with graph keys in a layout this reader does not take. */
export function withoutGraphTensors(graphKeys: string[] = []): Problem {
  const what = graphKeys.length
    ? `it has ${graphKeys.map((k) => `"${k}"`).join(', ')}, but in no layout that is read, and no array of numbers`
    : 'no array of numbers and no graph layout that is read';
  return {
    code: 'no-graph-tensors', severity: 'info', count: 1,
    message: `JSON without graph tensors: ${what}. ` +
      'Read are: arrays of numbers (an [E, 2] or [2, E] edge index, named arrays such as "edge_index", "x", "y"), ' +
      'and the node-link, adjacency and Cytoscape layouts of NetworkX\'s json_graph.',
  };
}

const join = (path: string, key: string): string => (path === '' ? key : `${path}.${key}`);

function walk(obj: Record<string, unknown>, path: string, depth: number, doc: JsonText, out: DenseTensor[]): void {
  if (depth > MAX_OBJECT_DEPTH) return;
  for (const key of Object.keys(obj)) {
    const v = obj[key];
    const name = join(path, key);
    if (Array.isArray(v)) {
      const t = toTensor(v, name, name, doc);
      if (t) out.push(t);
    } else if (isObject(v)) {
      walk(v, name, depth + 1, doc, out);
    }
  }
}

// ---------------------------------------------------------------------------------------------
// arrays → tensors

/** `path` finds the array's span in the text; `name` is the tensor name. */
function toTensor(arr: unknown[], path: string, name: string, doc: JsonText): DenseTensor | undefined {
  const dims: number[] = [];
  let v: unknown = arr;
  while (Array.isArray(v)) {
    dims.push(v.length);
    if (dims.length > MAX_DIMS) {
      throw new UnreadableError(`JSON array '${name}' is nested deeper than ${MAX_DIMS} levels`);
    }
    if (v.length === 0) break;
    v = v[0];
  }
  let total = 1;
  for (const d of dims) total *= d;
  // A regular array has at least one character of text per element; more elements than that
  // means the first rows promise more than the rest hold: find the ragged spot before allocating.
  if (total > doc.text.length) {
    fill(arr, 0, dims, null, 0, new LeafStats(), name, []);
    throw new UnreadableError(`JSON array '${name}' has an inconsistent shape`);
  }
  const values = new Float64Array(total);
  const leaves = new LeafStats();
  if (!fill(arr, 0, dims, values, 0, leaves, name, [])) return undefined;

  const span = doc.spans.get(path);
  let dtype: DType;
  let data: TensorData;
  if (total === 0) {
    dtype = 'int64';
    data = new Int32Array(0);
  } else if (leaves.bools === total) {
    dtype = 'bool';
    data = Uint8Array.from(values);
  } else if (leaves.nulls > 0 || leaves.fractions > 0 || span?.float) {
    dtype = 'float64';
    data = values;
  } else {
    dtype = 'int64';
    data = leaves.wide > 0 ? values : Int32Array.from(values);
  }
  const t: DenseTensor = { kind: 'dense', name, dtype, shape: dims, data };
  if (span) t.locator = new JsonLocator(doc, span.start, total, 0, 0);
  return t;
}

class LeafStats {
  bools = 0;
  nulls = 0;
  fractions = 0;
  /** Whole numbers outside int32. */
  wide = 0;
}

/**
 * Writes the leaves of `v` (at nesting depth `d`) into `out` from `at`, C order. Returns false
 * when the array holds strings or objects (not a tensor); throws when it is ragged.
 */
function fill(
  v: unknown[], d: number, dims: number[], out: Float64Array | null, at: number, s: LeafStats, name: string,
  where: number[],
): boolean {
  const last = d === dims.length - 1;
  if (v.length !== dims[d]) raggedError(name, where, v.length, dims[d]!);
  if (last) {
    for (let k = 0; k < v.length; k++) {
      const x = v[k];
      if (Array.isArray(x)) {
        where.push(k);
        throw new UnreadableError(
          `JSON array '${name}' is ragged: element ${fmtWhere(name, where)} is an array where numbers were expected`,
        );
      }
      if (out === null) continue; // shape check only
      if (typeof x === 'number') {
        out[at + k] = x;
        if (!Number.isInteger(x)) s.fractions++;
        else if (x > INT32_MAX || x < -INT32_MAX - 1) s.wide++;
      } else if (typeof x === 'boolean') {
        out[at + k] = x ? 1 : 0;
        s.bools++;
      } else if (x === null) {
        out[at + k] = NaN;
        s.nulls++;
      } else {
        return false;
      }
    }
    return true;
  }
  let stride = 1;
  for (let k = d + 1; k < dims.length; k++) stride *= dims[k]!;
  for (let k = 0; k < v.length; k++) {
    const x = v[k];
    where.push(k);
    if (!Array.isArray(x)) {
      if (typeof x === 'string' || isObject(x)) return false;
      throw new UnreadableError(
        `JSON array '${name}' is ragged: element ${fmtWhere(name, where)} is not an array like the first one`,
      );
    }
    if (!fill(x, d + 1, dims, out, at + k * stride, s, name, where)) return false;
    where.pop();
  }
  return true;
}

function raggedError(name: string, where: number[], got: number, want: number): never {
  throw new UnreadableError(
    `JSON array '${name}' is ragged: ${where.length === 0 ? 'it' : fmtWhere(name, where)} has ${got} ` +
      `element${got === 1 ? '' : 's'}, expected ${want} like the first`,
  );
}

function fmtWhere(name: string, where: number[]): string {
  return `${name || 'data'}${where.map((k) => `[${k}]`).join('')}`;
}

/** A top-level array of pairs (or a [2, E] array) is an edge index. */
function asEdgeIndex(t: DenseTensor, doc: JsonText): DenseTensor | undefined {
  const s = t.shape;
  if (s.length === 1 && s[0] === 0) {
    return { kind: 'dense', name: 'edge_index', dtype: 'int64', shape: [2, 0], data: new Int32Array(0),
      declaredRole: 'edge-index' };
  }
  if (t.dtype === 'bool' || s.length !== 2) return undefined;
  const span = doc.spans.get('');
  if (s[1] === 2) {
    const E = s[0]!;
    const src = t.data;
    const data = t.data instanceof Int32Array ? new Int32Array(2 * E) : new Float64Array(2 * E);
    for (let e = 0; e < E; e++) {
      data[e] = src[2 * e]!;
      data[E + e] = src[2 * e + 1]!;
    }
    const out: DenseTensor = { kind: 'dense', name: 'edge_index', dtype: t.dtype, shape: [2, E], data,
      declaredRole: 'edge-index' };
    if (span) out.locator = new JsonLocator(doc, span.start, 2 * E, E, 2);
    return out;
  }
  if (s[0] === 2) return { ...t, name: 'edge_index', declaredRole: 'edge-index' };
  return undefined;
}

// ---------------------------------------------------------------------------------------------
// locating values

class JsonText {
  readonly lines: StringLines;

  constructor(
    readonly text: string,
    readonly spans: Map<string, ArraySpan>,
  ) {
    this.lines = new StringLines(text);
  }
}

const isTokenStart = (c: number): boolean => c === 45 || (c >= 48 && c <= 57) || c === 116 || c === 102 || c === 110;
const isTokenEnd = (c: number): boolean => c === 44 || c === 93 || c === 32 || c === 10 || c === 13 || c === 9;

/**
 * Flat index → the value token in the text. With `edges` > 0 the tensor is the [2, E] transpose of
 * an [E, width] array in the text. Remembers the last token found, so ascending look-ups scan on
 * from there instead of from the start of the array.
 */
class JsonLocator implements TextLocator {
  private lastLeaf = -1;
  private lastOffset = 0;

  constructor(
    private readonly doc: JsonText,
    private readonly start: number,
    private readonly total: number,
    private readonly edges: number,
    private readonly width: number,
  ) {}

  /** The document's text (one byte a character for ASCII text, as V8 stores it), shared by the file's locators. */
  kept(): { holder: object; bytes: number } {
    return { holder: this.doc, bytes: this.doc.text.length };
  }

  locate(flatIndex: number): TextSpan | undefined {
    if (!Number.isInteger(flatIndex) || flatIndex < 0 || flatIndex >= this.total) return undefined;
    let leaf = flatIndex;
    if (this.edges > 0) {
      const r = Math.floor(flatIndex / this.edges);
      leaf = (flatIndex - r * this.edges) * this.width + r;
    }
    const t = this.doc.text;
    let count = 0;
    let i = this.start + 1;
    if (this.lastLeaf >= 0 && this.lastLeaf <= leaf) {
      count = this.lastLeaf;
      i = this.lastOffset;
    }
    const n = t.length;
    while (i < n) {
      const c = t.charCodeAt(i);
      if (c === 34) {
        // Not expected inside a tensor's span; skip a string to stay on track.
        i++;
        while (i < n && t.charCodeAt(i) !== 34) i += t.charCodeAt(i) === 92 ? 2 : 1;
        i++;
        continue;
      }
      if (!isTokenStart(c)) {
        i++;
        continue;
      }
      if (count === leaf) {
        let e = i;
        while (e < n && !isTokenEnd(t.charCodeAt(e))) e++;
        this.lastLeaf = leaf;
        this.lastOffset = i;
        return this.doc.lines.span(i, e);
      }
      while (i < n && !isTokenEnd(t.charCodeAt(i))) i++;
      count++;
    }
    return undefined;
  }
}

/**
 * One structural pass over the text: where each array directly under the root or under a chain of
 * objects starts (keyed by its '.'-joined path; the root array is ''), and whether any number in
 * it is written as a float.
 */
function scanSpans(text: string): Map<string, ArraySpan> {
  const spans = new Map<string, ArraySpan>();
  // Stack of containers: object frames carry their path (null when not under an object chain),
  // their current key and whether a key comes next.
  const isObj: boolean[] = [];
  const paths: (string | null)[] = [];
  const keys: (string | null)[] = [];
  const expectKey: boolean[] = [];
  let current: ArraySpan | null = null;
  let currentDepth = -1;
  const n = text.length;
  let i = 0;
  while (i < n) {
    const c = text.charCodeAt(i);
    const top = isObj.length - 1;
    if (c === 34) {
      let j = i + 1;
      while (j < n) {
        const d = text.charCodeAt(j);
        if (d === 92) j += 2;
        else if (d === 34) break;
        else j++;
      }
      if (top >= 0 && isObj[top] && expectKey[top] && paths[top] !== null) {
        keys[top] = JSON.parse(text.slice(i, j + 1)) as string;
      }
      i = j + 1;
      continue;
    }
    if (c === 123 || c === 91) {
      let path: string | null = null;
      if (top < 0) path = '';
      else if (isObj[top] && paths[top] !== null && keys[top] !== null) path = join(paths[top]!, keys[top]!);
      if (c === 91 && path !== null && current === null) {
        current = { start: i, float: false };
        currentDepth = isObj.length;
        spans.set(path, current);
      }
      isObj.push(c === 123);
      paths.push(c === 123 ? path : null);
      keys.push(null);
      expectKey.push(c === 123);
      i++;
      continue;
    }
    if (c === 125 || c === 93) {
      isObj.pop();
      paths.pop();
      keys.pop();
      expectKey.pop();
      if (isObj.length === currentDepth) {
        current = null;
        currentDepth = -1;
      }
      i++;
      continue;
    }
    if (top >= 0 && isObj[top]) {
      if (c === 58) expectKey[top] = false;
      else if (c === 44) expectKey[top] = true;
    }
    if (current !== null && (c === 46 || ((c === 101 || c === 69) && i > 0 && isDigit(text.charCodeAt(i - 1))))) {
      current.float = true;
    }
    i++;
  }
  return spans;
}

const isDigit = (c: number): boolean => c >= 48 && c <= 57;

// ---------------------------------------------------------------------------------------------
// syntax errors

function syntaxError(text: string, e: unknown): UnreadableError {
  const at = firstSyntaxError(text);
  if (at) {
    const lines = new StringLines(text);
    const line = lines.lineOf(at.offset);
    const column = lines.column(at.offset);
    const nonFinite = /^-?(NaN|Infinity)/.test(text.slice(at.offset, at.offset + 9));
    const hint = nonFinite
      ? ' (NaN and Infinity are not JSON; Python\'s json module writes them unless allow_nan=False: write null instead)'
      : '';
    return new UnreadableError(
      `invalid JSON at line ${line}, column ${column}: ${at.reason}${hint}`,
      utf8Length(text, at.offset),
      line,
    );
  }
  return new UnreadableError(`invalid JSON: ${e instanceof Error ? e.message : String(e)}`);
}

function utf8Length(text: string, end: number): number {
  let n = 0;
  for (let i = 0; i < end; i++) {
    const c = text.charCodeAt(i);
    if (c < 0x80) n += 1;
    else if (c < 0x800) n += 2;
    else if (c >= 0xd800 && c < 0xdc00) {
      n += 4;
      i++;
    } else n += 3;
  }
  return n;
}

const enum S {
  Value,
  ValueOrClose,
  Key,
  KeyOrClose,
  Colon,
  After,
}

/** Where the first JSON syntax error is (RFC 8259 grammar), or undefined if the text is valid. */
export function firstSyntaxError(text: string): { offset: number; reason: string } | undefined {
  const n = text.length;
  const stack: number[] = []; // 1 object, 2 array
  let state = S.Value;
  let i = 0;
  const unexpected = (at: number): { offset: number; reason: string } =>
    at >= n
      ? { offset: n, reason: 'unexpected end of input' }
      : { offset: at, reason: `unexpected ${JSON.stringify(text[at])}` };
  for (;;) {
    while (i < n) {
      const c = text.charCodeAt(i);
      if (c !== 32 && c !== 9 && c !== 10 && c !== 13) break;
      i++;
    }
    if (i >= n) return state === S.After && stack.length === 0 ? undefined : unexpected(n);
    const c = text.charCodeAt(i);
    switch (state) {
      case S.After: {
        const top = stack[stack.length - 1];
        if (top === undefined) return { offset: i, reason: `unexpected ${JSON.stringify(text[i])} after the value` };
        if (c === 44) {
          state = top === 1 ? S.Key : S.Value;
          i++;
        } else if ((c === 125 && top === 1) || (c === 93 && top === 2)) {
          stack.pop();
          i++;
        } else return unexpected(i);
        continue;
      }
      case S.Colon:
        if (c !== 58) return unexpected(i);
        state = S.Value;
        i++;
        continue;
      case S.Key:
      case S.KeyOrClose:
        if (c === 125 && state === S.KeyOrClose) {
          stack.pop();
          state = S.After;
          i++;
          continue;
        }
        if (c !== 34) return unexpected(i);
        {
          const end = stringEnd(text, i);
          if (end < 0) return { offset: -end - 1, reason: 'invalid string' };
          i = end;
        }
        state = S.Colon;
        continue;
      case S.ValueOrClose:
      case S.Value:
        if (c === 93 && state === S.ValueOrClose) {
          stack.pop();
          state = S.After;
          i++;
          continue;
        }
        if (c === 123) {
          stack.push(1);
          state = S.KeyOrClose;
          i++;
        } else if (c === 91) {
          stack.push(2);
          state = S.ValueOrClose;
          i++;
        } else if (c === 34) {
          const end = stringEnd(text, i);
          if (end < 0) return { offset: -end - 1, reason: 'invalid string' };
          i = end;
          state = S.After;
        } else if (c === 45 || isDigit(c)) {
          const end = numberEnd(text, i);
          if (end < 0) return { offset: -end - 1, reason: 'invalid number' };
          i = end;
          state = S.After;
        } else {
          const word = text.startsWith('true', i) ? 4 : text.startsWith('false', i) ? 5 : text.startsWith('null', i) ? 4 : 0;
          if (word === 0) return unexpected(i);
          i += word;
          state = S.After;
        }
        continue;
    }
  }
}

/** Offset just past the string starting at `i`, or -(offset of the error) - 1. */
function stringEnd(t: string, i: number): number {
  const n = t.length;
  i++;
  while (i < n) {
    const c = t.charCodeAt(i);
    if (c === 34) return i + 1;
    if (c < 0x20) return -i - 1;
    if (c === 92) {
      const e = t.charCodeAt(i + 1);
      if (e === 117) {
        for (let k = 2; k < 6; k++) if (!/[0-9a-fA-F]/.test(t[i + k] ?? '')) return -(i + k) - 1;
        i += 6;
        continue;
      }
      if (!'"\\/bfnrt'.includes(t[i + 1] ?? 'x')) return -(i + 1) - 1;
      i += 2;
      continue;
    }
    i++;
  }
  return -n - 1;
}

/** Offset just past the number starting at `i`, or -(offset of the error) - 1. */
function numberEnd(t: string, i: number): number {
  const n = t.length;
  const at = (k: number): number => (k < n ? t.charCodeAt(k) : -1);
  if (at(i) === 45) i++;
  if (at(i) === 48) i++;
  else if (isDigit(at(i))) while (isDigit(at(i))) i++;
  else return -i - 1;
  if (at(i) === 46) {
    i++;
    if (!isDigit(at(i))) return -i - 1;
    while (isDigit(at(i))) i++;
  }
  if (at(i) === 101 || at(i) === 69) {
    i++;
    if (at(i) === 43 || at(i) === 45) i++;
    if (!isDigit(at(i))) return -i - 1;
    while (isDigit(at(i))) i++;
  }
  return i;
}

/**
 * The code "Inspect as Graph" evaluates in a paused debuggee, and the decoding of what comes back.
 * No `vscode` here: the DAP tests drive these builders against a real debugpy, and the unit tests
 * run the JavaScript snippet in a `vm` context.
 *
 * Every snippet is ONE expression, so it goes through a plain DAP `evaluate` and leaves no names
 * behind in the debuggee: Python runs its helper file (save_value_npz.py, saved_npz_file.py,
 * bundled as text) with `exec` inside a fresh dict (imports happen inside the helper functions),
 * JavaScript runs the source of `inspectInDebuggee` below as an immediately called function. Replies are
 * `HOPSCOPE1:<base64>[:<base64>]:END`: base64 never needs quoting or escaping, so the reply reads
 * the same whether the adapter shows a string as 'text', "text" or text, and a reply cut short by
 * an adapter's display limit is recognisable (no `:END`).
 */
import { encodeNpy } from '../../../server/src/core/formats/npy-write';
import { encodeNpz } from '../../../server/src/core/formats/write';
import SAVE_VALUE_NPZ_PY from './save_value_npz.py';
import SAVED_NPZ_FILE_PY from './saved_npz_file.py';

/** Names looked up on objects (dict keys or attributes) that carry a graph. */
export const GRAPH_KEYS = [
  'edge_index', 'x', 'y', 'train_mask', 'val_mask', 'test_mask', 'edge_attr', 'edge_weight', 'adj', 'adj_t',
] as const;

export type DebugLanguage = 'python' | 'javascript';

/** Debug session types whose paused frames understand our Python / JavaScript snippets. */
export const PYTHON_SESSION_TYPES: readonly string[] = ['python', 'debugpy', 'hopscope-debugpy'];
export const JS_SESSION_TYPES: readonly string[] = [
  'pwa-node', 'node', 'node-terminal', 'pwa-chrome', 'chrome', 'pwa-msedge', 'msedge', 'pwa-extensionHost', 'extensionHost',
];

export function languageOfSession(type: string): DebugLanguage | undefined {
  if (PYTHON_SESSION_TYPES.includes(type)) return 'python';
  if (JS_SESSION_TYPES.includes(type)) return 'javascript';
  return undefined;
}

/**
 * A file-name-safe label for the inspected value: the last part of a dotted / indexed path
 * (`data.edge_index` and `batch['x']` give `edge_index` and `x`), else `value`. It names the single
 * array of a plain tensor, so the role table's names (edge_index, x, train_mask…) still apply.
 */
export function labelFor(expression: string): string {
  const e = expression.trim();
  const path = /^[A-Za-z_$][\w$]*(?:\s*(?:\.\s*[A-Za-z_$][\w$]*|\[\s*(?:'[^'\\]*'|"[^"\\]*")\s*\]))*$/;
  if (!path.test(e)) return 'value';
  const last = /(?:([A-Za-z_$][\w$]*)|\[\s*['"]([^'"\\]*)['"]\s*\])\s*$/.exec(e);
  const name = (last?.[1] ?? last?.[2] ?? '').replace(/[^A-Za-z0-9_.-]/g, '_').replace(/^[.-]+/, '').slice(0, 60);
  return name || 'value';
}

/** Member and file names: letters, digits, `_`, `.`, `-`; never empty or starting with a dot. */
function safeLabel(label: string): string {
  return label.replace(/[^A-Za-z0-9_.-]/g, '_').replace(/^[.-]+/, '').slice(0, 60) || 'value';
}

/** A string literal both Python and JavaScript read back as `s` (JSON escapes are valid in both). */
function literal(s: string): string {
  return JSON.stringify(s).replace(/[\u007f-\uffff]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
}

/** The user's expression as an argument: parenthesised, with a newline so a trailing comment cannot eat the `)`. */
function argument(expression: string): string {
  return `(${expression.trim()}\n)`;
}

// ---------------------------------------------------------------------------------------------
// Python (debugpy)

/** `(lambda ns: exec(src, ns) or ns[fn](args))({...})`: the helper file lives and dies in `ns`. */
function pythonCall(src: string, fn: string, args: string, ns = '{}'): string {
  return `(lambda ns: exec(${literal(src)}, ns) or ns[${literal(fn)}](${args}))(${ns})`;
}

export interface PythonInspectOptions {
  label: string;
  /** Largest total array size (bytes) the snippet will write. */
  maxBytes: number;
}

/**
 * Python expression that saves the value of `expression` (evaluated in the paused frame) to a
 * temporary .npz with numpy.savez and replies with its path, size and tensors.
 */
export function pythonInspectSnippet(expression: string, opts: PythonInspectOptions): string {
  const keys = `[${GRAPH_KEYS.map((k) => literal(k)).join(', ')}]`;
  return pythonCall(SAVE_VALUE_NPZ_PY, 'save_value_npz', `ns['value'], ${literal(safeLabel(opts.label))}, ${keys}, ${Math.floor(opts.maxBytes)}`, `{'value': ${argument(expression)}}`);
}

/** Python expression replying with `size` bytes of `path` from `offset`, base64-encoded. */
export function pythonChunkSnippet(path: string, offset: number, size: number): string {
  return pythonCall(SAVED_NPZ_FILE_PY, 'read_chunk', `${literal(path)}, ${Math.floor(offset)}, ${Math.floor(size)}`);
}

/** Python expression removing a file the inspect snippet wrote (and its folder). */
export function pythonCleanupSnippet(path: string): string {
  return pythonCall(SAVED_NPZ_FILE_PY, 'remove_saved', literal(path));
}

// ---------------------------------------------------------------------------------------------
// JavaScript (js-debug)

/** The options `inspectInDebuggee` receives, written into the expression as an object literal. */
export interface JsInspectArgs {
  label: string;
  /** Largest total array size (bytes). */
  limit: number;
  /** Longest reply (characters) to send whole; null: no bound. */
  maxChars: number | null;
  /** Graph attribute names looked up on objects. */
  keys: string[];
}

/**
 * Runs IN THE DEBUGGEE (Node or a browser): its source text (Function.prototype.toString) is what
 * js-debug evaluates, so it may use nothing from outside its own body (no imports, no module-level
 * names; the unit tests run it in a fresh `vm` realm, also as the production bundle minifies it)
 * and only syntax every current runtime has. Typed arrays are recognised by their toString tag
 * (which also works across realms); nested arrays are checked to be rectangular and copied into
 * one Float64Array (or bytes for booleans). The reply's first part is a JSON header, the second
 * the concatenated element bytes.
 */
export function inspectInDebuggee(value: unknown, o: JsInspectArgs): string {
  interface Part { name: string; dtype: string; wire: string; shape: number[]; bytes: Uint8Array }
  const TYPED: Record<string, string> = { Int8Array: 'int8', Uint8Array: 'uint8', Uint8ClampedArray: 'uint8', Int16Array: 'int16', Uint16Array: 'uint16',
    Int32Array: 'int32', Uint32Array: 'uint32', Float16Array: 'float16', Float32Array: 'float32', Float64Array: 'float64',
    BigInt64Array: 'int64', BigUint64Array: 'uint64' };
  const tag = (v: unknown): string => Object.prototype.toString.call(v).slice(8, -1);
  const typedKind = (v: unknown): string | undefined => (v !== null && typeof v === 'object' && ArrayBuffer.isView(v) ? TYPED[tag(v)] : undefined);
  const isSeq = (v: unknown): v is ArrayLike<unknown> => Array.isArray(v) || typedKind(v) !== undefined;
  let used = 0;
  class NotTensor extends Error {}
  class TooLarge extends Error {}
  const take = (n: number): void => { used += n; if (used > o.limit) throw new TooLarge(); };
  const describe = (v: unknown): string => {
    if (v === null) return 'null';
    if (typeof v !== 'object') return typeof v;
    const ctor = (v as { constructor?: { name?: string } }).constructor;
    const c = ctor && ctor.name;
    return c ? 'a ' + c : 'an object';
  };
  const tensors: Part[] = [], notes: string[] = [];

  function typed(v: ArrayBufferView, name: string, shape: number[]): Part {
    take(v.byteLength);
    const k = typedKind(v)!;
    return { name: name, dtype: k, wire: k, shape: shape, bytes: new Uint8Array(v.buffer, v.byteOffset, v.byteLength) };
  }

  function nested(v: unknown, name: string): Part {
    const shape: number[] = [];
    let cur = v;
    while (isSeq(cur)) { shape.push(cur.length); if (cur.length === 0) break; cur = cur[0]; }
    let n = 1;
    for (let s = 0; s < shape.length; s++) n *= shape[s]!;
    take(n * 8);
    const out = new Float64Array(n), last = shape.length - 1;
    let pos = 0, allBool = true, allInt = true;
    const walk = (a: unknown, d: number, at: string): void => {
      if (!isSeq(a) || a.length !== shape[d]) throw new NotTensor(name + at + ' is not a row of ' + shape[d] + ' (the rows differ in length)');
      if (d === last) {
        for (let i = 0; i < a.length; i++) {
          const x = a[i];
          if (typeof x === 'boolean') out[pos++] = x ? 1 : 0;
          else if (typeof x === 'number') { allBool = false; if (allInt && !Number.isInteger(x)) allInt = false; out[pos++] = x; }
          else if (typeof x === 'bigint') { allBool = false; out[pos++] = Number(x); }
          else throw new NotTensor(name + at + '[' + i + '] is ' + describe(x) + ', not a number');
        }
      } else {
        for (let j = 0; j < a.length; j++) walk(a[j], d + 1, at + '[' + j + ']');
      }
    };
    walk(v, 0, '');
    if (n > 0 && allBool) {
      const b = new Uint8Array(n);
      for (let q = 0; q < n; q++) b[q] = out[q]!;
      return { name: name, dtype: 'bool', wire: 'bool', shape: shape, bytes: b };
    }
    return { name: name, dtype: n > 0 && allInt ? 'int64' : 'float64', wire: 'float64', shape: shape, bytes: new Uint8Array(out.buffer) };
  }

  function shaped(v: unknown): number[] | undefined {
    if (v === null || typeof v !== 'object' || isSeq(v)) return undefined;
    const r = v as { shape?: unknown; dims?: unknown; data?: unknown; offset?: unknown; stride?: { length: number } };
    const dims: unknown[] | undefined = Array.isArray(r.shape) ? r.shape : Array.isArray(r.dims) ? r.dims : undefined;
    if (!dims || !isSeq(r.data) || r.offset || r.stride && r.stride.length > 1) return undefined;
    let n = 1;
    for (let i = 0; i < dims.length; i++) { if (!Number.isInteger(Number(dims[i])) || Number(dims[i]) < 0) return undefined; n *= Number(dims[i]); }
    return n === r.data.length ? dims.map(Number) : undefined;
  }

  function tensor(v: unknown, name: string): Part {
    if (typedKind(v) !== undefined) return typed(v as ArrayBufferView, name, [(v as ArrayLike<unknown>).length]);
    if (Array.isArray(v)) return nested(v, name);
    const dims = shaped(v);
    if (dims) {
      const data = (v as { data: unknown }).data;
      const t = typedKind(data) !== undefined ? typed(data as ArrayBufferView, name, dims) : nested(data, name);
      t.shape = dims;
      return t;
    }
    throw new NotTensor(name + ' is ' + describe(v));
  }

  function reply(header: unknown, blob?: Uint8Array): string {
    const json = JSON.stringify(header).replace(/[\u007f-\uffff]/g, function (c) { return '\\u' + ('0000' + c.charCodeAt(0).toString(16)).slice(-4); });
    const head = new Uint8Array(json.length);
    for (let i = 0; i < json.length; i++) head[i] = json.charCodeAt(i);
    return 'HOPSCOPE1:' + b64(head) + (blob ? ':' + b64(blob) : '') + ':END';
  }

  function b64(bytes: Uint8Array): string {
    if (typeof Buffer === 'function' && typeof Buffer.from === 'function') return Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString('base64');
    const A = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/', parts: string[] = [], len = bytes.length;
    let chunk: string[] = [];
    for (let i = 0; i < len; i += 3) {
      const a = bytes[i]!, b = i + 1 < len ? bytes[i + 1]! : 0, c = i + 2 < len ? bytes[i + 2]! : 0;
      chunk.push(A[a >> 2]! + A[((a & 3) << 4) | (b >> 4)]! + (i + 1 < len ? A[((b & 15) << 2) | (c >> 6)]! : '=') + (i + 2 < len ? A[c & 63]! : '='));
      if (chunk.length === 8192) { parts.push(chunk.join('')); chunk = []; }
    }
    parts.push(chunk.join(''));
    return parts.join('');
  }

  try {
    if (isSeq(value) || shaped(value)) {
      tensors.push(tensor(value, o.label));
    } else if (value !== null && typeof value === 'object') {
      const obj = value as Record<string, unknown>, map = value as Map<unknown, unknown>;
      const isMap = tag(value) === 'Map';
      const plain = !isMap && tag(value) === 'Object' && (Object.getPrototypeOf(value) === null || !Object.getPrototypeOf(Object.getPrototypeOf(value)));
      const names: Array<string | number> = isMap ? Array.from(map.keys()).filter(function (k): k is string | number { return typeof k === 'string' || typeof k === 'number'; })
        : plain ? Object.keys(value) : o.keys.filter(function (k) { return k in obj; });
      if (!isMap && !plain) {
        Object.keys(value).forEach(function (k) { if (names.indexOf(k) < 0 && k.charAt(0) !== '_' && typedKind(obj[k]) !== undefined) names.push(k); });
      }
      const taken: Record<string, boolean> = {};
      names.forEach(function (k) {
        const v = isMap ? map.get(k) : obj[k];
        if (v === null || v === undefined || typeof v !== 'object') return;
        let name = String(k).replace(/[^A-Za-z0-9_.-]/g, '_').slice(0, 80) || 'array', i = 2;
        const base = name;
        while (taken[name]) name = base + '_' + i++;
        try { const t = tensor(v, name); taken[name] = true; tensors.push(t); }
        catch (e) { if (e instanceof NotTensor) notes.push(e.message); else throw e; }
      });
      if (!tensors.length) {
        throw new NotTensor(o.label + ' (' + describe(value) + ') has no array-valued ' + (plain || isMap ? 'entries' : 'properties among ' + o.keys.join(', ')));
      }
    } else {
      throw new NotTensor(o.label + ' is ' + (value === undefined ? 'undefined' : describe(value)) + ', not an array');
    }
    let total = 0;
    tensors.forEach(function (t) { total += t.bytes.length; });
    const head = { le: new Uint8Array(new Uint16Array([1]).buffer)[0] === 1, notes: notes, tensors: [] as object[] };
    let at = 0;
    tensors.forEach(function (t) { head.tensors.push({ name: t.name, dtype: t.dtype, wire: t.wire, shape: t.shape, offset: at, length: t.bytes.length }); at += t.bytes.length; });
    const estimate = 4 * Math.ceil(total / 3) + 4 * Math.ceil(JSON.stringify(head).length / 3) + 32;
    if (o.maxChars !== null && estimate > o.maxChars) return reply({ more: estimate, bytes: total });
    const blob = new Uint8Array(total);
    at = 0;
    tensors.forEach(function (t) { blob.set(t.bytes, at); at += t.bytes.length; });
    return reply(head, blob);
  } catch (e) {
    if (e instanceof NotTensor) return reply({ error: 'not-tensor', message: e.message, notes: notes });
    if (e instanceof TooLarge) return reply({ error: 'too-large', bytes: used, limit: o.limit });
    return reply({ error: 'failed', message: String(e && (e as { message?: unknown }).message || e) });
  }
}

export interface JsInspectOptions {
  label: string;
  /** Largest total array size (bytes) to transfer. */
  maxBytes: number;
  /**
   * Longest reply (characters) the adapter will pass back whole; above it the snippet only says
   * how long the reply would be (`more`). null: no bound.
   */
  maxChars: number | null;
}

/** JavaScript expression replying with the value of `expression` as a header + element bytes. */
export function jsInspectSnippet(expression: string, opts: JsInspectOptions): string {
  const o = `{ label: ${literal(safeLabel(opts.label))}, limit: ${Math.floor(opts.maxBytes)}, maxChars: ${opts.maxChars === null ? 'null' : Math.floor(opts.maxChars)}, keys: [${GRAPH_KEYS.map((k) => literal(k)).join(', ')}] }`;
  return `(${inspectInDebuggee.toString()})(${argument(expression)}, ${o})`;
}

// ---------------------------------------------------------------------------------------------
// Replies

export interface Reply {
  /** First part, decoded. */
  head: Uint8Array;
  /** Second part, when present. */
  body?: Uint8Array;
}

/**
 * Finds the `HOPSCOPE1:…:END` reply in an evaluate result, whatever quoting the adapter added.
 * Throws when there is none or it was cut short.
 */
export function parseReply(result: string): Reply {
  const start = result.indexOf('HOPSCOPE1:');
  if (start < 0) throw new Error(`the debugger's answer is not a Hopscope reply: ${result.slice(0, 200)}`);
  const m = /^HOPSCOPE1:([A-Za-z0-9+/=]*)(?::([A-Za-z0-9+/=]*))?:END/.exec(result.slice(start));
  if (!m) throw new Error('the debugger cut the reply short (its display limit)');
  const out: Reply = { head: fromBase64(m[1]!) };
  if (m[2] !== undefined) out.body = fromBase64(m[2]);
  return out;
}

export function replyJson<T>(r: Reply): T {
  return JSON.parse(new TextDecoder().decode(r.head)) as T;
}

function fromBase64(s: string): Uint8Array {
  const b = Buffer.from(s, 'base64');
  return new Uint8Array(b.buffer, b.byteOffset, b.length);
}

export interface TensorInfo {
  name: string;
  dtype: string;
  shape: number[];
}

/** Failure replies of both languages. */
export type ErrorReply =
  | { error: 'no-numpy'; python: string }
  | { error: 'not-tensor'; message: string; notes?: string[] }
  | { error: 'too-large'; bytes: number; limit: number }
  | { error: 'failed'; message: string };

export type PythonReply = ErrorReply | { error?: undefined; path: string; size: number; notes: string[]; tensors: TensorInfo[] };

interface JsTensorHead extends TensorInfo { wire: string; offset: number; length: number }
export type JsReply =
  | ErrorReply
  | { error?: undefined; more: number; bytes: number }
  | { error?: undefined; more?: undefined; le: boolean; notes: string[]; tensors: JsTensorHead[] };

/** A user-facing sentence for a failure reply. */
export function errorMessage(r: ErrorReply, expression: string): string {
  switch (r.error) {
    case 'no-numpy':
      return `NumPy is not installed in the debugged Python (${r.python}), and Hopscope needs it to save \`${expression}\`. Install it in that environment (python -m pip install numpy) and try again.`;
    case 'not-tensor':
      return `\`${expression}\` is not tensor-like: ${r.message}.${r.notes?.length ? ` (${r.notes.join('; ')})` : ''} Inspect an array, a tensor, a nested list of numbers, or an object with graph attributes such as edge_index and x.`;
    case 'too-large':
      return `\`${expression}\` is too large to inspect: more than ${formatMB(r.limit)} (at least ${formatMB(r.bytes)}). Inspect a slice, or raise the limit in the settings.`;
    case 'failed':
      return `Hopscope could not save \`${expression}\`: ${r.message}`;
  }
}

export function formatMB(bytes: number): string {
  if (bytes < 1024 * 1024) return `${Math.max(1, Math.round(bytes / 1024))} KB`;
  const mb = bytes / (1024 * 1024);
  return `${mb >= 10 ? mb.toFixed(0) : mb.toFixed(1)} MB`;
}

const WIRE_SIZE: Record<string, number> = {
  bool: 1, int8: 1, uint8: 1, int16: 2, uint16: 2, float16: 2, int32: 4, uint32: 4, float32: 4, float64: 8, int64: 8, uint64: 8,
};
const DESCR: Record<string, string> = {
  bool: '|b1', int8: '|i1', uint8: '|u1', int16: '<i2', uint16: '<u2', float16: '<f2', int32: '<i4', uint32: '<u4',
  float32: '<f4', float64: '<f8', int64: '<i8', uint64: '<u8',
};

/**
 * The .npz bytes (numpy.savez layout) of a JavaScript reply: element bytes become little-endian,
 * plain numbers (sent as float64) become int64 when they were all whole.
 */
export function npzFromJsReply(head: Extract<JsReply, { le: boolean }>, body: Uint8Array): Uint8Array {
  const arrays: Array<{ name: string; npy: Uint8Array }> = [];
  for (const t of head.tensors) {
    const size = WIRE_SIZE[t.wire];
    const descr = DESCR[t.dtype];
    if (!size || !descr) throw new Error(`unexpected element type ${t.wire}/${t.dtype} in the reply`);
    const count = t.shape.reduce((a, b) => a * b, 1);
    if (t.offset + t.length > body.length || t.length !== count * size) throw new Error(`the reply's bytes for ${t.name} are incomplete`);
    // A copy, so the element views below are aligned whatever the offset in the reply.
    const raw = body.slice(t.offset, t.offset + t.length);
    if (!head.le && size > 1) swapBytes(raw, size);
    let data: Uint8Array = raw;
    if (t.wire === 'float64' && t.dtype === 'int64') data = int64FromFloat64(new Float64Array(raw.buffer, 0, count));
    arrays.push({ name: t.name, npy: encodeNpy(descr, t.shape, data) });
  }
  return encodeNpz(arrays);
}

function swapBytes(b: Uint8Array, size: number): void {
  for (let i = 0; i + size <= b.length; i += size) {
    for (let lo = i, hi = i + size - 1; lo < hi; lo++, hi--) { const t = b[lo]!; b[lo] = b[hi]!; b[hi] = t; }
  }
}

/** Little-endian int64 bytes of whole numbers (|v| ≤ 2^53), without a BigInt per element. */
function int64FromFloat64(values: Float64Array): Uint8Array {
  const out = new Uint8Array(values.length * 8);
  const dv = new DataView(out.buffer);
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    const hi = Math.floor(v / 4294967296);
    dv.setUint32(i * 8, v - hi * 4294967296, true);
    dv.setInt32(i * 8 + 4, hi, true);
  }
  return out;
}

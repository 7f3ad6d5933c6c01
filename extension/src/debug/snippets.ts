/**
 * The code "Inspect as Graph" evaluates in a paused debuggee, and the decoding of what comes back.
 * No `vscode` here: the DAP tests drive these builders against a real debugpy, and the unit tests
 * run the JavaScript snippet in a `vm` context.
 *
 * Every snippet is ONE expression, so it goes through a plain DAP `evaluate` and leaves no names
 * behind in the debuggee: Python runs its helper with `exec` inside a fresh dict (imports happen
 * inside the helper function), JavaScript inside an immediately called function. Replies are
 * `HOPSCOPE1:<base64>[:<base64>]:END`: base64 never needs quoting or escaping, so the reply reads
 * the same whether the adapter shows a string as 'text', "text" or text, and a reply cut short by
 * an adapter's display limit is recognisable (no `:END`).
 */
import { encodeNpy, encodeNpz } from '../../../server/src/core/formats/write';

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

const PY_INSPECT = String.raw`
def main(value, label, keys, limit):
    import base64, json, os, sys, tempfile, warnings

    def reply(obj):
        return 'HOPSCOPE1:' + base64.b64encode(json.dumps(obj).encode('utf-8')).decode('ascii') + ':END'

    try:
        import numpy as np
    except ImportError:
        return reply({'error': 'no-numpy', 'python': sys.executable})

    class NotTensor(Exception):
        pass

    class TooLarge(Exception):
        pass

    used = [0]
    DENSE_CELLS = 16 * 1024 * 1024

    def take(n):
        used[0] += int(n)
        if used[0] > limit:
            raise TooLarge()

    def top_module(v):
        return (getattr(type(v), '__module__', '') or '').split('.')[0]

    def is_torch(v):
        return top_module(v) == 'torch' and hasattr(v, 'detach') and hasattr(v, 'numel')

    def is_scipy_sparse(v):
        return top_module(v) == 'scipy' and hasattr(v, 'tocoo') and hasattr(v, 'nnz')

    def is_mapping(v):
        import collections.abc
        return isinstance(v, collections.abc.Mapping)

    def describe(v):
        return type(v).__module__ + '.' + type(v).__qualname__ if type(v).__module__ != 'builtins' else type(v).__name__

    def checked(a, what):
        if a.dtype.kind not in 'biuf':
            raise NotTensor(what + ' has dtype ' + str(a.dtype) + '; numbers or booleans are needed')
        if a.dtype.kind == 'f' and a.dtype.itemsize > 8:
            a = a.astype(np.float64)
        return a

    def from_torch(t, what):
        t = t.detach()
        if str(getattr(t, 'layout', 'torch.strided')) != 'torch.strided':
            if len(t.shape) != 2 or int(t.shape[0]) * int(t.shape[1]) > DENSE_CELLS:
                raise NotTensor(what + ' is a sparse tensor of shape ' + 'x'.join(str(int(d)) for d in t.shape) + ', too big to store densely next to other arrays')
            t = t.to_dense()
        if getattr(t, 'is_quantized', False):
            t = t.dequantize()
        dt = str(t.dtype)
        if 'complex' in dt:
            raise NotTensor(what + ' is a complex tensor')
        take(t.numel() * t.element_size())
        if dt == 'torch.bfloat16':
            t = t.float()
        return t.cpu().numpy()

    def dense_of_sparse(m, what):
        n = int(m.shape[0]) * int(m.shape[1])
        if n > DENSE_CELLS:
            raise NotTensor(what + ' is a sparse ' + 'x'.join(str(int(d)) for d in m.shape) + ' matrix, too big to store densely next to other arrays')
        take(n * m.dtype.itemsize)
        return checked(np.asarray(m.toarray()), what)

    def as_array(v, what):
        if isinstance(v, np.ndarray):
            take(v.nbytes)
            return checked(v, what)
        if is_torch(v):
            return checked(from_torch(v, what), what)
        if is_scipy_sparse(v):
            return dense_of_sparse(v, what)
        if isinstance(v, (list, tuple)):
            if any(isinstance(e, np.ndarray) or is_torch(e) for e in v):
                parts = [as_array(e, what + '[' + str(i) + ']') for i, e in enumerate(v)]
                if len(set(p.shape for p in parts)) > 1:
                    raise NotTensor(what + ' holds arrays of different shapes')
                return np.stack(parts)
            try:
                with warnings.catch_warnings():
                    warnings.simplefilter('ignore')
                    a = np.asarray(v)
            except (ValueError, TypeError, OverflowError):
                raise NotTensor(what + ' is a nested list whose rows differ in length or hold non-numbers')
            if a.dtype == object:
                raise NotTensor(what + ' is a nested list whose rows differ in length or hold non-numbers')
            take(a.nbytes)
            return checked(a, what)
        if hasattr(v, '__array__') and not isinstance(v, (str, bytes)):
            a = np.asarray(v)
            take(a.nbytes)
            return checked(a, what)
        raise NotTensor(what + ' is a ' + describe(v))

    def scalar(v):
        return v is None or isinstance(v, (bool, int, float, complex, str, bytes, np.generic))

    def coo_members(m, what):
        if is_torch(m):
            m = m.detach()
            if len(m.shape) != 2:
                raise NotTensor(what + ' is a sparse tensor with ' + str(len(m.shape)) + ' dimensions; 2 are needed')
            if str(m.layout) != 'torch.sparse_coo':
                m = m.to_sparse()
            m = m.coalesce()
            take(m.indices().numel() * 8 + m.values().numel() * m.values().element_size())
            idx = m.indices().cpu().numpy()
            vals = m.values()
            if str(vals.dtype) == 'torch.bfloat16':
                vals = vals.float()
            row, col, data, shape = idx[0], idx[1], vals.cpu().numpy(), tuple(int(d) for d in m.shape)
        else:
            c = m.tocoo()
            take(c.nnz * (16 + c.data.dtype.itemsize))
            row, col, data, shape = c.row, c.col, c.data, tuple(int(d) for d in c.shape)
        return {'format': np.array(b'coo'), 'shape': np.array(shape, dtype=np.int64),
                'row': np.asarray(row, dtype=np.int64), 'col': np.asarray(col, dtype=np.int64),
                'data': checked(np.asarray(data), what)}

    def safe_name(k, taken):
        import re
        n = re.sub(r'[^A-Za-z0-9_.-]', '_', str(k))[:80] or 'array'
        if n == 'file':
            n = 'file_'
        base, i = n, 2
        while n in taken:
            n = base + '_' + str(i)
            i += 1
        return n

    notes = []
    try:
        arrays = {}
        sparse_top = (is_torch(value) and str(getattr(value, 'layout', 'torch.strided')) != 'torch.strided') or is_scipy_sparse(value)
        if sparse_top:
            arrays = coo_members(value, label)
        elif isinstance(value, (np.ndarray, list, tuple)) or is_torch(value) or (hasattr(value, '__array__') and not is_mapping(value)):
            arrays[label] = as_array(value, label)
        elif scalar(value):
            raise NotTensor(label + ' is a single value (' + describe(value) + '), not an array')
        else:
            if is_mapping(value):
                items = [(k, value[k]) for k in list(value.keys())]
            else:
                items = []
                for k in keys:
                    try:
                        v = getattr(value, k, None)
                    except Exception:
                        v = None
                    if v is not None:
                        items.append((k, v))
                try:
                    extra = vars(value)
                except TypeError:
                    extra = {}
                for k, v in list(extra.items()):
                    if k not in keys and not str(k).startswith('_') and (isinstance(v, np.ndarray) or is_torch(v)):
                        items.append((k, v))
            for k, v in items:
                if scalar(v) or callable(v) and not is_torch(v):
                    continue
                name = safe_name(k, arrays)
                try:
                    arrays[name] = as_array(v, name)
                except NotTensor as e:
                    notes.append(str(e))
            if not arrays:
                where = ', '.join(keys)
                raise NotTensor(label + ' (' + describe(value) + ') has no array-valued ' + ('entries' if is_mapping(value) else 'attributes among ' + where))
        folder = tempfile.mkdtemp(prefix='hopscope-dbg-')
        path = os.path.join(folder, label + '.npz')
        np.savez(path, **arrays)
        return reply({'path': path, 'size': os.path.getsize(path), 'notes': notes,
                      'tensors': [{'name': k, 'dtype': str(a.dtype), 'shape': [int(d) for d in a.shape]} for k, a in arrays.items()]})
    except NotTensor as e:
        return reply({'error': 'not-tensor', 'message': str(e), 'notes': notes})
    except TooLarge:
        return reply({'error': 'too-large', 'bytes': used[0], 'limit': limit})
    except Exception as e:
        return reply({'error': 'failed', 'message': type(e).__name__ + ': ' + str(e)})
`;

const PY_CHUNK = String.raw`
def main(path, offset, size):
    import base64
    with open(path, 'rb') as f:
        f.seek(offset)
        data = f.read(size)
    return 'HOPSCOPE1:' + base64.b64encode(data).decode('ascii') + ':END'
`;

const PY_CLEANUP = String.raw`
def main(path):
    import os
    folder = os.path.dirname(path)
    if not (os.path.basename(folder).startswith('hopscope-dbg-') and path.endswith('.npz')):
        return 'HOPSCOPE1::END'
    for step in (lambda: os.remove(path), lambda: os.rmdir(folder)):
        try:
            step()
        except OSError:
            pass
    return 'HOPSCOPE1::END'
`;

/** `(lambda ns: exec(src, ns) or ns['main'](args))({...})`: the helper lives and dies in `ns`. */
function pythonCall(src: string, args: string, ns = '{}'): string {
  return `(lambda ns: exec(${literal(src)}, ns) or ns['main'](${args}))(${ns})`;
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
  return pythonCall(PY_INSPECT, `ns['value'], ${literal(safeLabel(opts.label))}, ${keys}, ${Math.floor(opts.maxBytes)}`, `{'value': ${argument(expression)}}`);
}

/** Python expression replying with `size` bytes of `path` from `offset`, base64-encoded. */
export function pythonChunkSnippet(path: string, offset: number, size: number): string {
  return pythonCall(PY_CHUNK, `${literal(path)}, ${Math.floor(offset)}, ${Math.floor(size)}`);
}

/** Python expression removing a file the inspect snippet wrote (and its folder). */
export function pythonCleanupSnippet(path: string): string {
  return pythonCall(PY_CLEANUP, literal(path));
}

// ---------------------------------------------------------------------------------------------
// JavaScript (js-debug)

/*
 * Runs in the debuggee (Node or a browser), so it is plain ES2017 with no imports. Typed arrays
 * are recognised by their toString tag (which also works across realms); nested arrays are
 * checked to be rectangular and copied into one Float64Array (or bytes for booleans). The reply's
 * first part is a JSON header, the second the concatenated element bytes.
 */
const JS_INSPECT = String.raw`function (value, o) {
  var TYPED = { Int8Array: 'int8', Uint8Array: 'uint8', Uint8ClampedArray: 'uint8', Int16Array: 'int16', Uint16Array: 'uint16',
    Int32Array: 'int32', Uint32Array: 'uint32', Float16Array: 'float16', Float32Array: 'float32', Float64Array: 'float64',
    BigInt64Array: 'int64', BigUint64Array: 'uint64' };
  var tag = function (v) { return Object.prototype.toString.call(v).slice(8, -1); };
  var typedKind = function (v) { return v !== null && typeof v === 'object' && ArrayBuffer.isView(v) ? TYPED[tag(v)] : undefined; };
  var isSeq = function (v) { return Array.isArray(v) || typedKind(v) !== undefined; };
  var used = 0;
  function NotTensor(message) { this.message = message; }
  function TooLarge() {}
  var take = function (n) { used += n; if (used > o.limit) throw new TooLarge(); };
  var describe = function (v) {
    if (v === null) return 'null';
    if (typeof v !== 'object') return typeof v;
    var c = v.constructor && v.constructor.name;
    return c ? 'a ' + c : 'an object';
  };
  var tensors = [], notes = [];

  function typed(v, name, shape) {
    take(v.byteLength);
    var k = typedKind(v);
    return { name: name, dtype: k, wire: k, shape: shape, bytes: new Uint8Array(v.buffer, v.byteOffset, v.byteLength) };
  }

  function nested(v, name) {
    var shape = [], cur = v;
    while (isSeq(cur)) { shape.push(cur.length); if (cur.length === 0) break; cur = cur[0]; }
    var n = 1;
    for (var s = 0; s < shape.length; s++) n *= shape[s];
    take(n * 8);
    var out = new Float64Array(n), pos = 0, allBool = true, allInt = true, last = shape.length - 1;
    var walk = function (a, d, at) {
      if (!isSeq(a) || a.length !== shape[d]) throw new NotTensor(name + at + ' is not a row of ' + shape[d] + ' (the rows differ in length)');
      if (d === last) {
        for (var i = 0; i < a.length; i++) {
          var x = a[i];
          if (typeof x === 'boolean') out[pos++] = x ? 1 : 0;
          else if (typeof x === 'number') { allBool = false; if (allInt && !Number.isInteger(x)) allInt = false; out[pos++] = x; }
          else if (typeof x === 'bigint') { allBool = false; out[pos++] = Number(x); }
          else throw new NotTensor(name + at + '[' + i + '] is ' + describe(x) + ', not a number');
        }
      } else {
        for (var j = 0; j < a.length; j++) walk(a[j], d + 1, at + '[' + j + ']');
      }
    };
    walk(v, 0, '');
    if (n > 0 && allBool) {
      var b = new Uint8Array(n);
      for (var q = 0; q < n; q++) b[q] = out[q];
      return { name: name, dtype: 'bool', wire: 'bool', shape: shape, bytes: b };
    }
    return { name: name, dtype: n > 0 && allInt ? 'int64' : 'float64', wire: 'float64', shape: shape, bytes: new Uint8Array(out.buffer) };
  }

  function shaped(v) {
    if (v === null || typeof v !== 'object' || isSeq(v)) return undefined;
    var dims = Array.isArray(v.shape) ? v.shape : Array.isArray(v.dims) ? v.dims : undefined;
    if (!dims || !isSeq(v.data) || v.offset || v.stride && v.stride.length > 1) return undefined;
    var n = 1;
    for (var i = 0; i < dims.length; i++) { if (!Number.isInteger(Number(dims[i])) || Number(dims[i]) < 0) return undefined; n *= Number(dims[i]); }
    return n === v.data.length ? dims.map(Number) : undefined;
  }

  function tensor(v, name) {
    if (typedKind(v) !== undefined) return typed(v, name, [v.length]);
    if (Array.isArray(v)) return nested(v, name);
    var dims = shaped(v);
    if (dims) {
      var t = typedKind(v.data) !== undefined ? typed(v.data, name, dims) : nested(v.data, name);
      t.shape = dims;
      return t;
    }
    throw new NotTensor(name + ' is ' + describe(v));
  }

  function reply(header, blob) {
    var json = JSON.stringify(header).replace(/[\u007f-\uffff]/g, function (c) { return '\\u' + ('0000' + c.charCodeAt(0).toString(16)).slice(-4); });
    var head = new Uint8Array(json.length);
    for (var i = 0; i < json.length; i++) head[i] = json.charCodeAt(i);
    return 'HOPSCOPE1:' + b64(head) + (blob ? ':' + b64(blob) : '') + ':END';
  }

  function b64(bytes) {
    if (typeof Buffer === 'function' && typeof Buffer.from === 'function') return Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString('base64');
    var A = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/', parts = [], chunk = [], len = bytes.length;
    for (var i = 0; i < len; i += 3) {
      var a = bytes[i], b = i + 1 < len ? bytes[i + 1] : 0, c = i + 2 < len ? bytes[i + 2] : 0;
      chunk.push(A[a >> 2] + A[((a & 3) << 4) | (b >> 4)] + (i + 1 < len ? A[((b & 15) << 2) | (c >> 6)] : '=') + (i + 2 < len ? A[c & 63] : '='));
      if (chunk.length === 8192) { parts.push(chunk.join('')); chunk = []; }
    }
    parts.push(chunk.join(''));
    return parts.join('');
  }

  try {
    if (isSeq(value) || shaped(value)) {
      tensors.push(tensor(value, o.label));
    } else if (value !== null && typeof value === 'object') {
      var isMap = tag(value) === 'Map';
      var plain = !isMap && tag(value) === 'Object' && (Object.getPrototypeOf(value) === null || !Object.getPrototypeOf(Object.getPrototypeOf(value)));
      var names = isMap ? Array.from(value.keys()).filter(function (k) { return typeof k === 'string' || typeof k === 'number'; })
        : plain ? Object.keys(value) : o.keys.filter(function (k) { return k in value; });
      if (!isMap && !plain) {
        Object.keys(value).forEach(function (k) { if (names.indexOf(k) < 0 && k.charAt(0) !== '_' && typedKind(value[k]) !== undefined) names.push(k); });
      }
      var taken = {};
      names.forEach(function (k) {
        var v = isMap ? value.get(k) : value[k];
        if (v === null || v === undefined || typeof v !== 'object') return;
        var name = String(k).replace(/[^A-Za-z0-9_.-]/g, '_').slice(0, 80) || 'array', base = name, i = 2;
        while (taken[name]) name = base + '_' + i++;
        try { var t = tensor(v, name); taken[name] = true; tensors.push(t); }
        catch (e) { if (e instanceof NotTensor) notes.push(e.message); else throw e; }
      });
      if (!tensors.length) {
        throw new NotTensor(o.label + ' (' + describe(value) + ') has no array-valued ' + (plain || isMap ? 'entries' : 'properties among ' + o.keys.join(', ')));
      }
    } else {
      throw new NotTensor(o.label + ' is ' + (value === undefined ? 'undefined' : describe(value)) + ', not an array');
    }
    var total = 0;
    tensors.forEach(function (t) { total += t.bytes.length; });
    var head = { le: new Uint8Array(new Uint16Array([1]).buffer)[0] === 1, notes: notes, tensors: [] }, at = 0;
    tensors.forEach(function (t) { head.tensors.push({ name: t.name, dtype: t.dtype, wire: t.wire, shape: t.shape, offset: at, length: t.bytes.length }); at += t.bytes.length; });
    var estimate = 4 * Math.ceil(total / 3) + 4 * Math.ceil(JSON.stringify(head).length / 3) + 32;
    if (o.maxChars !== null && estimate > o.maxChars) return reply({ more: estimate, bytes: total });
    var blob = new Uint8Array(total);
    at = 0;
    tensors.forEach(function (t) { blob.set(t.bytes, at); at += t.bytes.length; });
    return reply(head, blob);
  } catch (e) {
    if (e instanceof NotTensor) return reply({ error: 'not-tensor', message: e.message, notes: notes });
    if (e instanceof TooLarge) return reply({ error: 'too-large', bytes: used, limit: o.limit });
    return reply({ error: 'failed', message: String(e && e.message || e) });
  }
}`;

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
  return `(${JS_INSPECT})(${argument(expression)}, ${o})`;
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

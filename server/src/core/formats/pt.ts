/**
 * PyTorch `.pt` / `.pth` reader for the zip layout `torch.save` has written since PyTorch 1.6
 * (docs/references.md §1.6): `<root>/data.pkl` (a pickle, parsed by pickle.ts and never executed; the
 * only calls it may make are listed in pt-allowed.ts), `<root>/data/<key>` (raw storage bytes),
 * `<root>/version`, and from torch 2.1 `<root>/byteorder`.
 *
 * Tensors are found anywhere in the unpickled value (dict values, list items, attributes of saved
 * objects) and named by their path: `edge_index`, `data.x`, `masks.train`, `[0]`. Storage members
 * are read only when a tensor uses them, and each once; strided views (a transposed matrix, a
 * slice with a storage offset) are copied out in C order.
 */
import {
  UnreadableError, type DType, type DenseTensor, type Problem, type ReadLimits, type ReadResult,
  type SparseTensor, type Tensor, type TensorData,
} from './types';
import { openZip, type ZipArchive, type ZipEntry } from './zip';
import { decodeElements, numericItemSize, sameKind } from './elements';
import { parsePickle } from './pickle';
import { isNode, type PyRecord, type PySparse, type PyTensor, type PyValue } from './pickle-values';
import { PT_ALLOWED_CALLS, torchPersistentLoad } from './pt-allowed';

/** First bytes of the legacy (pre-1.6) format: PROTO 2, LONG1 of the magic number 0x1950a86a20f9469cfc6c. */
const LEGACY_MAGIC = [0x80, 0x02, 0x8a, 0x0a, 0x6c, 0xfc, 0x9c, 0x46, 0xf9, 0x20, 0x6a, 0xa8, 0x50, 0x19];

/** How deep the value tree is walked looking for tensors. */
export const MAX_VALUE_DEPTH = 200;

const RESAVE =
  'Re-save it with torch.save(obj, path) using the default zip format (PyTorch 1.6 or later), ' +
  'e.g. torch.save(model.state_dict(), path) or a dict of tensors.';

function fail(message: string, offset?: number): never {
  throw new UnreadableError(message, offset);
}

function startsWith(bytes: Uint8Array, prefix: readonly number[]): boolean {
  if (bytes.length < prefix.length) return false;
  for (let i = 0; i < prefix.length; i++) if (bytes[i] !== prefix[i]) return false;
  return true;
}

/** `path/to/edges.pt` → `edges` (the name of a tensor saved on its own). */
export function ptStem(fileName: string): string {
  const base = fileName.slice(Math.max(fileName.lastIndexOf('/'), fileName.lastIndexOf('\\')) + 1);
  const m = /^(.+)\.(pt|pth)$/i.exec(base);
  return m ? m[1]! : base;
}

// ---------------------------------------------------------------------------------------------
// Archive layout

interface Layout {
  zip: ZipArchive;
  root: string;
  byName: Map<string, ZipEntry>;
  littleEndian: boolean;
}

function openArchive(bytes: Uint8Array, limits: ReadLimits): Layout {
  if (startsWith(bytes, LEGACY_MAGIC)) {
    fail(`this is PyTorch's legacy (pre-1.6) file format, which Hopscope does not read. ${RESAVE}`, 0);
  }
  if (bytes.length > 0 && bytes[0] === 0x80) {
    fail(`this is a bare pickle stream, not a torch.save zip archive, and is not read. ${RESAVE}`, 0);
  }
  let zip: ZipArchive;
  try {
    // No CRC-32 check: torch.load makes none (PyTorch builds its zip reader with
    // MINIZ_DISABLE_ZIP_READER_CRC32_CHECKS, and torch.serialization.set_crc32_options(False)
    // writes files whose CRCs are not computed, which torch.load still reads).
    zip = openZip(bytes, limits, { checkCrc: false });
  } catch (e) {
    if (e instanceof UnreadableError) {
      throw new UnreadableError(`not a torch.save archive: ${e.message}`, e.offset);
    }
    throw e;
  }
  const byName = new Map<string, ZipEntry>();
  for (const e of zip.entries) {
    if (byName.has(e.name)) fail(`the archive holds two members named '${e.name}'`, e.localHeaderOffset);
    byName.set(e.name, e);
  }
  // The one top-level folder that holds data.pkl (named after the file stem, or 'archive').
  const roots = zip.entries
    .map((e) => /^([^/]+)\/data\.pkl$/.exec(e.name)?.[1])
    .filter((r): r is string => r !== undefined);
  const torchScript = zip.entries.some((e) => /^[^/]+\/(constants\.pkl|code\/)/.test(e.name));
  if (torchScript) {
    fail(
      'this is a TorchScript archive (torch.jit.save), which Hopscope does not read. Save the ' +
        'tensors with torch.save instead, e.g. torch.save(model.state_dict(), path).',
    );
  }
  if (roots.length === 0) {
    fail('not a torch.save archive: the zip has no <folder>/data.pkl member');
  }
  if (roots.length > 1) {
    fail(`not a torch.save archive: several top-level folders hold a data.pkl (${roots.slice(0, 4).join(', ')})`);
  }
  const root = roots[0]!;
  let littleEndian = true;
  const order = byName.get(`${root}/byteorder`);
  if (order) {
    const text = latin1Short(zip.readEntry(order)).trim();
    if (text === 'big') littleEndian = false;
    else if (text !== 'little') fail(`the byteorder record says '${text.slice(0, 20)}'; 'little' or 'big' is expected`);
  }
  return { zip, root, byName, littleEndian };
}

function latin1Short(b: Uint8Array): string {
  let s = '';
  for (let i = 0; i < Math.min(b.length, 64); i++) s += String.fromCharCode(b[i]!);
  return s;
}

// ---------------------------------------------------------------------------------------------
// Finding tensors in the value tree

interface Found {
  name: string;
  /** The full path, used when the short name is taken. */
  fullName: string;
  node: PyTensor | PySparse;
}

/** Segment for a dict key: strings and numbers as themselves, anything else by position. */
function keyName(k: PyValue, index: number): string {
  if (typeof k === 'string') return k;
  if (typeof k === 'number' || typeof k === 'boolean') return String(k);
  if (isNode(k, 'tuple') && k.items.every((x) => typeof x === 'string' || typeof x === 'number')) {
    return k.items.join(',');
  }
  return `[key ${index}]`;
}

function joinKey(path: string, key: string): string {
  return path === '' ? key : `${path}.${key}`;
}

function isContainer(v: PyValue): boolean {
  return Array.isArray(v) || isNode(v, 'dict') || isNode(v, 'record') || isNode(v, 'tuple') || isNode(v, 'set');
}

function collectTensors(root: PyValue, stem: string): Found[] {
  const found: Found[] = [];
  const seen = new Set<object>();

  /**
   * `short` drops attribute names that begin with '_' when they only hold containers (e.g. a
   * module's `_modules` / `_parameters`, a data object's `_store`), so `lin.weight` reads as in a
   * state_dict; `full` keeps every segment.
   */
  const walk = (v: PyValue, short: string, full: string, depth: number): void => {
    if (typeof v !== 'object' || v === null || v instanceof Uint8Array) return;
    if (seen.has(v)) return;
    if (depth > MAX_VALUE_DEPTH) {
      fail(`the saved object is nested more than ${MAX_VALUE_DEPTH} levels deep (at '${full}')`);
    }
    seen.add(v);
    if (Array.isArray(v)) {
      for (let i = 0; i < v.length; i++) walk(v[i]!, `${short}[${i}]`, `${full}[${i}]`, depth + 1);
      return;
    }
    switch (v.kind) {
      case 'tensor': case 'sparse':
        found.push({ name: short === '' ? stem : short, fullName: full === '' ? stem : full, node: v });
        return;
      case 'tuple': case 'set':
        for (let i = 0; i < v.items.length; i++) walk(v.items[i]!, `${short}[${i}]`, `${full}[${i}]`, depth + 1);
        return;
      case 'dict': {
        let i = 0;
        for (const [k, x] of v.map) {
          const key = keyName(k, i++);
          walk(x, joinKey(short, key), joinKey(full, key), depth + 1);
        }
        return;
      }
      case 'record':
        walkRecord(v, short, full, depth);
        return;
      default:
        return;
    }
  };

  const walkAttrs = (state: PyValue, short: string, full: string, depth: number): void => {
    if (isNode(state, 'dict')) {
      if (seen.has(state)) return;
      seen.add(state);
      let i = 0;
      for (const [k, x] of state.map) {
        const key = keyName(k, i++);
        const hidden = typeof k === 'string' && k.startsWith('_') && isContainer(x);
        walk(x, hidden ? short : joinKey(short, key), joinKey(full, key), depth + 1);
      }
    } else if (isNode(state, 'tuple') && state.items.length === 2) {
      // (instance dict, slots dict) from objects with __slots__
      walkAttrs(state.items[0]!, short, full, depth + 1);
      walkAttrs(state.items[1]!, short, full, depth + 1);
    } else if (state !== undefined) {
      walk(state, short, full, depth + 1);
    }
  };

  const walkRecord = (r: PyRecord, short: string, full: string, depth: number): void => {
    for (let i = 0; i < r.args.length; i++) walk(r.args[i]!, `${short}[${i}]`, `${full}[${i}]`, depth + 1);
    if (r.state !== undefined) walkAttrs(r.state, short, full, depth);
    if (r.listItems) {
      for (let i = 0; i < r.listItems.length; i++) {
        walk(r.listItems[i]!, `${short}[${i}]`, `${full}[${i}]`, depth + 1);
      }
    }
    if (r.dictItems) {
      let i = 0;
      for (const [k, x] of r.dictItems) {
        const key = keyName(k, i++);
        walk(x, joinKey(short, key), joinKey(full, key), depth + 1);
      }
    }
  };

  walk(root, '', '', 0);

  // Unique names: the short name when free, else the full path, else a numbered suffix.
  const taken = new Set<string>();
  for (const f of found) {
    let name = taken.has(f.name) ? f.fullName : f.name;
    for (let k = 2; taken.has(name); k++) name = `${f.fullName}#${k}`;
    f.name = name;
    taken.add(name);
  }
  return found;
}

// ---------------------------------------------------------------------------------------------
// Materialising tensors

/** Bytes per element of the arrays the reader produces (int64 counted at its widest). */
function outBytes(dtype: DType): number {
  return dtype === 'float16' || dtype === 'bfloat16' ? 4 : numericItemSize(dtype);
}

class Materialiser {
  /** Decoded storages by member key and element type, so a shared storage is decoded once. */
  private readonly decoded = new Map<string, TensorData>();
  /** Bytes allocated for strided copies and decoded storages so far. */
  private spent = 0;

  constructor(private readonly a: Layout, private readonly limits: ReadLimits) {}

  private charge(bytes: number, what: string): void {
    if (bytes > this.limits.maxDecompressedBytes - this.spent) {
      fail(
        `${what} needs ${bytes} bytes, over the limit of ${this.limits.maxDecompressedBytes} bytes ` +
          'decoded per file',
      );
    }
    this.spent += bytes;
  }

  /** The decoded elements of a storage, as `dtype`. */
  storage(t: PyTensor, dtype: DType, name: string): TensorData {
    const s = t.storage;
    const cacheKey = `${s.key}\u0000${dtype}`;
    const hit = this.decoded.get(cacheKey);
    if (hit) return hit;
    const memberName = `${this.a.root}/data/${s.key}`;
    const entry = this.a.byName.get(memberName);
    if (!entry) fail(`tensor '${name}': its storage member '${memberName}' is missing from the archive`);
    const item = numericItemSize(dtype);
    // numel counts elements of the typed storage, or bytes of an untyped one.
    const storageBytes = s.untyped ? s.numel : s.numel * numericItemSize(s.dtype ?? 'uint8');
    if (entry.uncompressedSize < storageBytes) {
      fail(
        `tensor '${name}': storage '${s.key}' declares ${s.numel} elements of ${s.typeName} ` +
          `(${storageBytes} bytes), but its member holds ${entry.uncompressedSize} bytes`,
        entry.localHeaderOffset,
      );
    }
    const count = Math.floor(storageBytes / item);
    const member = this.a.zip.readEntry(entry);
    if (member.length < count * item) {
      fail(`tensor '${name}': storage member '${memberName}' is shorter than declared`, entry.localHeaderOffset);
    }
    if (dtype === 'int64' || dtype === 'float16' || dtype === 'bfloat16' || !this.a.littleEndian) {
      this.charge(count * outBytes(dtype), `storage '${s.key}'`);
    }
    const data = decodeElements(member, 0, count, dtype, this.a.littleEndian);
    this.decoded.set(cacheKey, data);
    return data;
  }

  dense(t: PyTensor, name: string): DenseTensor {
    const dtype = t.dtype ?? t.storage.dtype;
    if (!dtype) fail(`tensor '${name}' has element type ${t.typeName}, which is not read`);
    const { size, stride, offset } = t;
    let n = 1;
    for (let d = 0; d < size.length; d++) {
      if (size[d]! < 0) fail(`tensor '${name}' has a negative size ${size[d]} in dimension ${d}`);
      if (stride[d]! < 0) fail(`tensor '${name}' has a negative stride ${stride[d]} in dimension ${d}`);
      n *= size[d]!;
    }
    if (!Number.isSafeInteger(n)) fail(`tensor '${name}' of size (${size.join(', ')}) has too many elements`);
    if (offset < 0) fail(`tensor '${name}' has a negative storage offset ${offset}`);
    const src = this.storage(t, dtype, name);
    if (n === 0) return { kind: 'dense', name, dtype, shape: size.slice(), data: sameKind(src, 0) };
    let last = offset;
    for (let d = 0; d < size.length; d++) last += (size[d]! - 1) * stride[d]!;
    if (!(last < src.length)) {
      fail(
        `tensor '${name}' (offset ${offset}, size (${size.join(', ')}), stride (${stride.join(', ')})) ` +
          `reaches element ${last} of a storage with ${src.length} elements`,
      );
    }
    let data: TensorData;
    if (isCContiguous(size, stride)) {
      data = src.subarray(offset, offset + n);
    } else {
      this.charge(n * (src.BYTES_PER_ELEMENT), `tensor '${name}'`);
      data = gather(src, offset, size, stride, n);
    }
    if (dtype === 'int64' && data instanceof Float64Array) data = narrowInt(data);
    return { kind: 'dense', name, dtype, shape: size.slice(), data };
  }

  sparse(s: PySparse, name: string): SparseTensor {
    if (s.size.length !== 2) {
      fail(`sparse tensor '${name}' has ${s.size.length} dimensions; only 2-d sparse matrices are read`);
    }
    const rows = s.size[0]!;
    const cols = s.size[1]!;
    if (rows < 0 || cols < 0 || rows > 0x7fffffff || cols > 0x7fffffff) {
      fail(`sparse tensor '${name}' has an unusable size (${rows}, ${cols})`);
    }
    const part = (i: number, what: string): DenseTensor => this.dense(s.parts[i]!, `${name} (${what})`);
    let row: Int32Array;
    let col: Int32Array;
    let valuesT: DenseTensor;
    if (s.layout === 'sparse_coo') {
      const idx = part(0, 'indices');
      valuesT = part(1, 'values');
      if (idx.shape.length !== 2 || idx.shape[0] !== 2) {
        fail(`sparse tensor '${name}': indices have shape (${idx.shape.join(', ')}); (2, nnz) is expected`);
      }
      const nnz = idx.shape[1]!;
      row = toIndex(idx.data.subarray(0, nnz), rows, name, 'row');
      col = toIndex(idx.data.subarray(nnz, 2 * nnz), cols, name, 'column');
    } else if (s.layout === 'sparse_csr' || s.layout === 'sparse_csc') {
      const csr = s.layout === 'sparse_csr';
      const ptr = part(0, csr ? 'crow_indices' : 'ccol_indices');
      const idx = part(1, csr ? 'col_indices' : 'row_indices');
      valuesT = part(2, 'values');
      const outer = csr ? rows : cols;
      const inner = csr ? cols : rows;
      if (ptr.shape.length !== 1 || ptr.shape[0] !== outer + 1 || idx.shape.length !== 1) {
        fail(`sparse tensor '${name}': compressed indices do not match size (${rows}, ${cols})`);
      }
      const nnz = idx.shape[0]!;
      const p = ptr.data;
      if (p[0] !== 0 || p[outer] !== nnz) fail(`sparse tensor '${name}': compressed indices do not span the ${nnz} entries`);
      const expanded = new Int32Array(nnz);
      for (let o = 0; o < outer; o++) {
        const a = p[o]!;
        const b = p[o + 1]!;
        if (!(b >= a && b <= nnz)) fail(`sparse tensor '${name}': compressed indices decrease at ${o}`);
        for (let k = a; k < b; k++) expanded[k] = o;
      }
      const plain = toIndex(idx.data, inner, name, csr ? 'column' : 'row');
      row = csr ? expanded : plain;
      col = csr ? plain : expanded;
    } else {
      fail(`sparse tensor '${name}' has layout ${s.layout}, which is not read`);
    }
    if (valuesT.shape.length !== 1 || valuesT.shape[0] !== row.length) {
      fail(`sparse tensor '${name}': values have shape (${valuesT.shape.join(', ')}); (${row.length}) is expected`);
    }
    return {
      kind: 'sparse', name, dtype: valuesT.dtype, shape: [rows, cols], row, col,
      values: sparseValues(valuesT.data), layout: s.layout.replace(/^sparse_/, ''),
    };
  }
}

function isCContiguous(size: readonly number[], stride: readonly number[]): boolean {
  let expect = 1;
  for (let d = size.length - 1; d >= 0; d--) {
    if (size[d] !== 1 && stride[d] !== expect) return false;
    expect *= size[d]!;
  }
  return true;
}

/** Rows of a 2-d block copied per pass when the source runs down columns (cache-friendly transpose). */
const BLOCK = 64;

/**
 * Copies a strided view into a fresh C-ordered array: an odometer over all but the last two axes,
 * and a 2-d kernel over those two that walks the source in row blocks when its column stride is the
 * larger one (e.g. `t.t()`), so reads stay sequential.
 */
function gather(src: TensorData, offset: number, size: readonly number[], stride: readonly number[], n: number): TensorData {
  const out = sameKind(src, n);
  const r = size.length;
  if (r === 1) {
    const s = stride[0]!;
    for (let k = 0, p = offset; k < n; k++, p += s) out[k] = src[p]!;
    return out;
  }
  const rows = size[r - 2]!;
  const cols = size[r - 1]!;
  const sRow = stride[r - 2]!;
  const sCol = stride[r - 1]!;
  const plane = rows * cols;
  const outer = r - 2;
  const ctr = new Float64Array(Math.max(outer, 1));
  let base = offset;
  for (let o = 0; o < n; o += plane) {
    if (sCol > sRow) {
      for (let i0 = 0; i0 < rows; i0 += BLOCK) {
        const i1 = Math.min(rows, i0 + BLOCK);
        for (let j = 0; j < cols; j++) {
          for (let i = i0, p = base + i0 * sRow + j * sCol, q = o + i0 * cols + j; i < i1; i++, p += sRow, q += cols) {
            out[q] = src[p]!;
          }
        }
      }
    } else {
      for (let i = 0, q = o; i < rows; i++) {
        for (let j = 0, p = base + i * sRow; j < cols; j++, p += sCol) out[q++] = src[p]!;
      }
    }
    // next plane: advance the odometer over the leading axes
    let d = outer - 1;
    while (d >= 0) {
      ctr[d]!++;
      base += stride[d]!;
      if (ctr[d]! < size[d]!) break;
      base -= stride[d]! * size[d]!;
      ctr[d] = 0;
      d--;
    }
  }
  return out;
}

/** int64 values held as Float64Array → Int32Array when every value fits (types.ts rule). */
function narrowInt(a: Float64Array): Int32Array | Float64Array {
  for (let i = 0; i < a.length; i++) {
    const v = a[i]!;
    if (v < -2147483648 || v > 2147483647) return a;
  }
  return Int32Array.from(a);
}

function toIndex(a: TensorData, bound: number, name: string, what: string): Int32Array {
  const out = new Int32Array(a.length);
  for (let k = 0; k < a.length; k++) {
    const v = a[k]!;
    if (!(v >= 0 && v < bound && Number.isInteger(v))) {
      fail(`sparse tensor '${name}': ${what} index ${v} of entry ${k} is outside 0..${bound - 1}`);
    }
    out[k] = v;
  }
  return out;
}

function sparseValues(d: TensorData): Float64Array | Float32Array | Int32Array {
  if (d instanceof Float64Array || d instanceof Float32Array || d instanceof Int32Array) return d;
  if (d instanceof Uint32Array) return Float64Array.from(d);
  return Int32Array.from(d);
}

// ---------------------------------------------------------------------------------------------

export function readPt(bytes: Uint8Array, fileName: string, limits: ReadLimits): ReadResult {
  const archive = openArchive(bytes, limits);
  const pklEntry = archive.byName.get(`${archive.root}/data.pkl`)!;
  if (pklEntry.uncompressedSize > limits.maxHeaderBytes) {
    fail(
      `data.pkl is ${pklEntry.uncompressedSize} bytes, over the limit of ${limits.maxHeaderBytes} bytes`,
      pklEntry.localHeaderOffset,
    );
  }
  const pkl = archive.zip.readEntry(pklEntry);
  let value: PyValue;
  try {
    value = parsePickle(pkl, PT_ALLOWED_CALLS, { persistentLoad: torchPersistentLoad() });
  } catch (e) {
    if (!(e instanceof UnreadableError)) throw e;
    const base = pklEntry.method === 0 ? archive.zip.dataOffset(pklEntry) : undefined;
    throw new UnreadableError(
      `in ${archive.root}/data.pkl: ${e.message}`,
      base !== undefined && e.offset !== undefined ? base + e.offset : undefined,
    );
  }

  const found = collectTensors(value, ptStem(fileName));
  const m = new Materialiser(archive, limits);
  const tensors: Tensor[] = [];
  const problems: Problem[] = [];
  for (const f of found) {
    const node = f.node;
    const unread = node.kind === 'tensor'
      ? (node.dtype ?? node.storage.dtype) === undefined ? node.typeName : undefined
      : node.parts.map((p) => (p.dtype ?? p.storage.dtype) === undefined ? p.typeName : undefined).find((x) => x);
    if (unread) {
      problems.push({
        code: 'unreadable', severity: 'info', tensor: f.name, count: 1,
        message: `Tensor '${f.name}' (${unread}) was skipped: ${unread} tensors are not read.`,
      });
      continue;
    }
    tensors.push(node.kind === 'tensor' ? m.dense(node, f.name) : m.sparse(node, f.name));
  }
  return { format: 'pt', tensors, problems };
}

/**
 * NumPy .npz reader: a ZIP archive of `<key>.npy` members (numpy.savez: stored; savez_compressed:
 * deflated). Archives written by `scipy.sparse.save_npz` (keys `format`, `shape` and the arrays of
 * one of csr/csc/coo/bsr/dia) become one SparseTensor named `adjacency` in 0-based COO form.
 *
 * A deflated member that inflates to more than `limits.streamAboveBytes` and whose values the
 * checks need only as figures (a feature matrix: its rows, min/max/sum and non-finite values) is
 * inflated piece by piece and summarised (npy-summary.ts): its tensor carries `summary` and empty
 * `data`. Edge indices, adjacency, labels, masks, edge weights, strings and scipy's arrays are
 * always read whole (bounded by `limits.maxDecompressedBytes`).
 */
import {
  DEFAULT_LIMITS, UnreadableError, type DenseTensor, type DType, type ReadLimits, type ReadResult,
  type SparseTensor, type TensorData,
} from './types';
import { parseNpy, parseNpyHeader, type NpyLayout } from './npy';
import { NpySummariser } from './npy-summary';
import { decodeElements } from './elements';
import { openZip, type ZipArchive, type ZipEntry } from './zip';
import { roleFromName } from '../checks/roles';

const SPARSE_FORMATS = ['csr', 'csc', 'coo', 'bsr', 'dia'] as const;
type SparseFormat = (typeof SPARSE_FORMATS)[number];

/** Arrays each scipy layout needs besides `format` and `shape`. */
const SPARSE_KEYS: Record<SparseFormat, readonly string[]> = {
  csr: ['indices', 'indptr', 'data'],
  csc: ['indices', 'indptr', 'data'],
  bsr: ['indices', 'indptr', 'data'],
  coo: ['row', 'col', 'data'],
  dia: ['offsets', 'data'],
};

const INT_DTYPES: ReadonlySet<DType> = new Set<DType>([
  'int8', 'int16', 'int32', 'int64', 'uint8', 'uint16', 'uint32', 'uint64',
]);

export function readNpz(bytes: Uint8Array, _fileName: string, limits: ReadLimits): ReadResult {
  const zip = openZip(bytes, limits);
  const tensors: DenseTensor[] = [];
  const seen = new Set<string>();
  // scipy.sparse.save_npz archives need every array's values.
  const scipyLike = zip.entries.some((e) => e.name === 'format.npy');
  const streamAbove = limits.streamAboveBytes ?? DEFAULT_LIMITS.streamAboveBytes!;
  for (const entry of zip.entries) {
    if (!entry.name.endsWith('.npy')) continue; // directories and non-array members
    const key = entry.name.slice(0, -4);
    if (seen.has(key)) {
      throw new UnreadableError(`the archive holds two members named '${entry.name}'`, entry.localHeaderOffset);
    }
    seen.add(key);
    const summarised = entry.method === 8 && entry.uncompressedSize > streamAbove && !scipyLike && summaryNamed(key)
      ? summariseMember(zip, entry, key, limits) : null;
    if (summarised) {
      tensors.push(summarised);
      continue;
    }
    const member = zip.readEntry(entry);
    tensors.push(inMember(zip, entry, () => parseNpy(member, key, limits)));
  }
  const sparse = asScipySparse(tensors);
  if (sparse) return { format: 'sparse-npz', tensors: [sparse], problems: [] };
  return { format: 'npz', tensors, problems: [] };
}

/** Runs `parse` on a member's bytes; its UnreadableError is told in which member it arose. */
function inMember<T>(zip: ZipArchive, entry: ZipEntry, parse: () => T): T {
  try {
    return parse();
  } catch (e) {
    if (!(e instanceof UnreadableError)) throw e;
    // Stored members are views into the archive, so their offsets map back to file offsets.
    const base = entry.method === 0 ? zip.dataOffset(entry) : undefined;
    const where = base === undefined ? ' (offset within the decompressed member)' : '';
    throw new UnreadableError(
      `in member '${entry.name}': ${e.message}${where}`,
      base !== undefined && e.offset !== undefined ? base + e.offset : undefined,
    );
  }
}

/**
 * Whether the checks need only figures of this member, whatever its values: a feature matrix by
 * name, or an unnamed array whose shape the role guess can never take for an edge index (2-d with
 * a side of 2), an adjacency (square) or a split mask (1-d bool).
 */
function summarisable(key: string, l: NpyLayout): boolean {
  const { dtype } = l.descr;
  if (dtype === 'str' || dtype === 'bytes' || !summaryNamed(key)) return false;
  if (roleFromName(key) !== undefined) return true;
  const s = l.shape;
  if (s.length === 2 && (s[0] === s[1] || s[0] === 2 || s[1] === 2)) return false;
  return !(s.length === 1 && dtype === 'bool');
}

/** Whether the name leaves summarising open: a feature name, or no role name at all. */
function summaryNamed(key: string): boolean {
  const role = roleFromName(key);
  return role === undefined || role === 'features' || role === 'edge-features';
}

/**
 * Inflates a large member piece by piece and returns its summarised tensor, or null (nothing kept)
 * when the header shows the checks need its values: the caller then reads it whole.
 */
function summariseMember(zip: ZipArchive, entry: ZipEntry, key: string, limits: ReadLimits): DenseTensor | null {
  const stream = zip.streamEntry(entry);
  const size = entry.uncompressedSize;
  let prefix = new Uint8Array(0);
  let layout: NpyLayout | null = null;
  while (!layout) {
    const piece = stream.next();
    if (piece === null) return null; // shorter than its header: the whole-member path says why
    const joined = new Uint8Array(prefix.length + piece.length);
    joined.set(prefix);
    joined.set(piece, prefix.length);
    prefix = joined;
    layout = inMember(zip, entry, () => parseNpyHeader(prefix, size, limits));
  }
  if (!summarisable(key, layout)) return null;
  const summariser = new NpySummariser(layout);
  summariser.push(prefix.subarray(layout.dataStart));
  prefix = new Uint8Array(0);
  for (let piece = stream.next(); piece !== null; piece = stream.next()) summariser.push(piece);
  const summary = summariser.finish();
  const { descr, shape } = layout;
  // Empty storage of the kind the whole-member path would give.
  const data = decodeElements(new Uint8Array(0), 0, 0, descr.dtype, descr.littleEndian);
  return { kind: 'dense', name: key, dtype: descr.dtype, shape, data, summary };
}

// ---------------------------------------------------------------------------------------------
// scipy.sparse.save_npz

function bad(message: string): never {
  throw new UnreadableError(`scipy sparse matrix: ${message}`);
}

function sparseFormatOf(t: DenseTensor | undefined): SparseFormat | undefined {
  if (!t || !t.strings || t.strings.length !== 1) return undefined;
  const f = t.strings[0] as SparseFormat;
  return SPARSE_FORMATS.includes(f) ? f : undefined;
}

/** An integer index array of `key`, as numbers (any integer dtype; int64 may be Float64Array). */
function intArray(byKey: Map<string, DenseTensor>, key: string, fmt: string): TensorData {
  const t = byKey.get(key)!;
  if (!INT_DTYPES.has(t.dtype)) bad(`${fmt} '${key}' has dtype ${t.dtype}; an integer array is expected`);
  if (t.shape.length !== 1) bad(`${fmt} '${key}' has shape (${t.shape.join(', ')}); a 1-d array is expected`);
  return t.data;
}

function checkIndices(a: TensorData, key: string, n: number, bound: number, what: string): void {
  for (let k = 0; k < n; k++) {
    const v = a[k];
    if (!(v >= 0 && v < bound)) bad(`${key}[${k}] = ${v} is outside 0..${bound - 1} (${what})`);
  }
}

function checkIndptr(indptr: TensorData, slots: number, nnzMax: number): void {
  if (indptr.length !== slots + 1) {
    bad(`indptr has ${indptr.length} entries; ${slots + 1} are expected for this shape`);
  }
  if (indptr[0] !== 0) bad(`indptr starts at ${indptr[0]}, not 0`);
  for (let i = 1; i <= slots; i++) {
    if (!(indptr[i] >= indptr[i - 1])) bad(`indptr is not non-decreasing at position ${i}`);
  }
  if (indptr[slots] > nnzMax) {
    bad(`indptr ends at ${indptr[slots]}, but there are only ${nnzMax} stored indices`);
  }
}

function valueArray(data: TensorData, n: number): Float64Array | Float32Array {
  const out = data instanceof Float32Array ? new Float32Array(n) : new Float64Array(n);
  return out;
}

function asScipySparse(tensors: DenseTensor[]): SparseTensor | undefined {
  const byKey = new Map<string, DenseTensor>();
  for (const t of tensors) byKey.set(t.name, t);
  const fmt = sparseFormatOf(byKey.get('format'));
  if (!fmt || !byKey.has('shape')) return undefined;
  for (const key of SPARSE_KEYS[fmt]) {
    if (!byKey.has(key)) bad(`a '${fmt}' file has no '${key}' array`);
  }

  const shapeT = byKey.get('shape')!;
  if (!INT_DTYPES.has(shapeT.dtype) || shapeT.data.length !== 2) {
    bad(`'shape' must hold two integers (found ${shapeT.dtype} of shape (${shapeT.shape.join(', ')}))`);
  }
  const rows = shapeT.data[0];
  const cols = shapeT.data[1];
  for (const d of [rows, cols]) {
    if (!(d >= 0 && d <= 2 ** 31)) bad(`shape (${rows}, ${cols}) is not a pair of sizes up to 2^31`);
  }
  const dataT = byKey.get('data')!;
  if (dataT.strings) bad(`'data' holds strings (${dataT.dtype}), not numbers`);
  const data = dataT.data;

  let row: Int32Array;
  let col: Int32Array;
  let values: Float64Array | Float32Array;

  if (fmt === 'csr' || fmt === 'csc') {
    const indptr = intArray(byKey, 'indptr', fmt);
    const indices = intArray(byKey, 'indices', fmt);
    if (dataT.shape.length !== 1 || data.length !== indices.length) {
      bad(`'data' has ${data.length} values but 'indices' has ${indices.length}`);
    }
    const major = fmt === 'csr' ? rows : cols;
    const minor = fmt === 'csr' ? cols : rows;
    checkIndptr(indptr, major, indices.length);
    const nnz = indptr[major];
    checkIndices(indices, 'indices', nnz, minor, fmt === 'csr' ? 'column count' : 'row count');
    const majorIdx = new Int32Array(nnz);
    const minorIdx = new Int32Array(nnz);
    values = valueArray(data, nnz);
    for (let i = 0; i < major; i++) {
      for (let k = indptr[i]; k < indptr[i + 1]; k++) majorIdx[k] = i;
    }
    for (let k = 0; k < nnz; k++) { minorIdx[k] = indices[k]; values[k] = data[k]; }
    row = fmt === 'csr' ? majorIdx : minorIdx;
    col = fmt === 'csr' ? minorIdx : majorIdx;
  } else if (fmt === 'coo') {
    const r = intArray(byKey, 'row', fmt);
    const c = intArray(byKey, 'col', fmt);
    const nnz = r.length;
    if (c.length !== nnz || data.length !== nnz || dataT.shape.length !== 1) {
      bad(`'row', 'col' and 'data' have different lengths (${nnz}, ${c.length}, ${data.length})`);
    }
    checkIndices(r, 'row', nnz, rows, 'row count');
    checkIndices(c, 'col', nnz, cols, 'column count');
    row = new Int32Array(nnz);
    col = new Int32Array(nnz);
    values = valueArray(data, nnz);
    for (let k = 0; k < nnz; k++) { row[k] = r[k]; col[k] = c[k]; values[k] = data[k]; }
  } else if (fmt === 'bsr') {
    const indptr = intArray(byKey, 'indptr', fmt);
    const indices = intArray(byKey, 'indices', fmt);
    if (dataT.shape.length !== 3) bad(`bsr 'data' has shape (${dataT.shape.join(', ')}); (blocks, R, C) is expected`);
    const [nb, br, bc] = dataT.shape as [number, number, number];
    if (br < 1 || bc < 1 || rows % br !== 0 || cols % bc !== 0) {
      bad(`bsr block size ${br}x${bc} does not divide the shape (${rows}, ${cols})`);
    }
    if (nb !== indices.length) bad(`bsr 'data' holds ${nb} blocks but 'indices' has ${indices.length}`);
    const blockRows = rows / br;
    checkIndptr(indptr, blockRows, nb);
    const nnzb = indptr[blockRows];
    checkIndices(indices, 'indices', nnzb, cols / bc, 'block-column count');
    const per = br * bc;
    const nnz = nnzb * per;
    row = new Int32Array(nnz);
    col = new Int32Array(nnz);
    values = valueArray(data, nnz);
    let k = 0;
    for (let ib = 0; ib < blockRows; ib++) {
      for (let b = indptr[ib]; b < indptr[ib + 1]; b++) {
        const r0 = ib * br;
        const c0 = indices[b] * bc;
        for (let r = 0, v = b * per; r < br; r++) {
          for (let c = 0; c < bc; c++, v++, k++) { row[k] = r0 + r; col[k] = c0 + c; values[k] = data[v]; }
        }
      }
    }
  } else {
    // dia: data[i, j] sits at (j - offsets[i], j). Like scipy's dia tocoo, positions outside the
    // matrix and the zeros that pad each diagonal are not entries.
    const offsets = intArray(byKey, 'offsets', fmt);
    if (dataT.shape.length !== 2 || dataT.shape[0] !== offsets.length) {
      bad(`dia 'data' has shape (${dataT.shape.join(', ')}); (${offsets.length}, L) is expected`);
    }
    const diags = offsets.length;
    const L = dataT.shape[1];
    for (let i = 0; i < diags; i++) {
      if (!(Math.abs(offsets[i]) <= 2 ** 31)) bad(`offsets[${i}] = ${offsets[i]} is out of range`);
    }
    const jEnd = Math.min(L, cols);
    let nnz = 0;
    for (let i = 0; i < diags; i++) {
      const off = offsets[i];
      const lo = Math.max(0, off);
      const hi = Math.min(jEnd, rows + off);
      for (let j = lo, v = i * L + lo; j < hi; j++, v++) if (data[v] !== 0) nnz++;
    }
    row = new Int32Array(nnz);
    col = new Int32Array(nnz);
    values = valueArray(data, nnz);
    let k = 0;
    for (let i = 0; i < diags; i++) {
      const off = offsets[i];
      const lo = Math.max(0, off);
      const hi = Math.min(jEnd, rows + off);
      for (let j = lo, v = i * L + lo; j < hi; j++, v++) {
        const x = data[v];
        if (x !== 0) { row[k] = j - off; col[k] = j; values[k] = x; k++; }
      }
    }
  }

  return {
    kind: 'sparse',
    name: 'adjacency',
    dtype: dataT.dtype,
    shape: [rows, cols],
    row,
    col,
    values,
    layout: fmt,
  };
}

/**
 * .npz and scipy.sparse .npz reader tests.
 * Fixture values were written by numpy 1.24 / scipy 1.10 (numpy.savez, numpy.savez_compressed,
 * scipy.sparse.save_npz; see tests/fixtures/make_binary_fixtures.py) and expected.json holds what
 * NumPy/SciPy computed from them (scipy's load_npz(...).toarray() for the dense matrices).
 * Member layouts: docs/references.md §1.2 and §1.3.
 */
import { describe, expect, it } from 'vitest';
import { readNpz } from '../../server/src/core/formats/npz';
import { parseNpy } from '../../server/src/core/formats/npy';
import { openZip } from '../../server/src/core/formats/zip';
import { DEFAULT_LIMITS, type DenseTensor, type SparseTensor } from '../../server/src/core/formats/types';
import {
  bytesOf, buildZip, expectSum, expectTensor, expectUnreadable, expected, fixture, npyBytes, toNum,
  type ZipMember,
} from './binary-helpers';

const entries = Object.entries(expected.files);
const denseFiles = entries.filter(([, f]) => f.format === 'npz');
const sparseFiles = entries.filter(([, f]) => f.format === 'sparse-npz');

function densify(t: SparseTensor): number[][] {
  const [r, c] = t.shape;
  const out = Array.from({ length: r }, () => new Array<number>(c).fill(0));
  for (let k = 0; k < t.row.length; k++) out[t.row[k]!]![t.col[k]!]! += t.values ? t.values[k]! : 1;
  return out;
}

// --- hand-built archives -------------------------------------------------------------------------

function npyMember(key: string, descr: string, shape: string, data: Uint8Array, method = 0): ZipMember {
  return { name: `${key}.npy`, data: npyBytes(`{'descr': '${descr}', 'fortran_order': False, 'shape': ${shape}, }`, data, { align: 64 }), method };
}
const i32 = (...v: number[]) => bytesOf(new Int32Array(v));
const f64 = (...v: number[]) => bytesOf(new Float64Array(v));
const i64 = (...v: number[]) => bytesOf(new BigInt64Array(v.map(BigInt)));
const fmt = (f: string) => npyMember('format', '|S3', '()', new TextEncoder().encode(f));

/** The docs/references.md §1.3 csr example with some arrays replaced. */
function csr(over: Partial<Record<'indptr' | 'indices' | 'data' | 'shape', ZipMember>> = {}): Uint8Array {
  return buildZip([
    over.indices ?? npyMember('indices', '<i4', '(4,)', i32(1, 0, 2, 1)),
    over.indptr ?? npyMember('indptr', '<i4', '(4,)', i32(0, 1, 3, 4)),
    fmt('csr'),
    over.shape ?? npyMember('shape', '<i8', '(2,)', i64(3, 3)),
    over.data ?? npyMember('data', '<f8', '(4,)', f64(1, 1, 2, 2)),
  ]);
}

const readSparse = (b: Uint8Array) => readNpz(b, 'adj.npz', DEFAULT_LIMITS);

describe('readNpz on numpy.savez / savez_compressed files (values from numpy 1.24, make_binary_fixtures.py)', () => {
  for (const [file, exp] of denseFiles) {
    it(file, () => {
      const r = readNpz(fixture(file), file, DEFAULT_LIMITS);
      expect(r.format).toBe('npz');
      expect(r.tensors.map((t) => t.name).sort()).toEqual(Object.keys(exp.tensors!).sort());
      for (const t of r.tensors) expectTensor(t, exp.tensors![t.name]!);
    });
  }

  it('names positional arrays arr_0, arr_1 (docs/references.md §1.2)', () => {
    const r = readNpz(fixture('positional.npz'), 'p.npz', DEFAULT_LIMITS);
    expect(r.tensors.map((t) => t.name)).toEqual(['arr_0', 'arr_1']);
  });

  it('keeps stored members as views into the file bytes', () => {
    const bytes = fixture('graph_stored.npz');
    const mask = readNpz(bytes, 'g.npz', DEFAULT_LIMITS).tensors.find((t) => t.name === 'train_mask') as DenseTensor;
    expect(mask.data.buffer).toBe(bytes.buffer);
  });

  it('an archive without members is an empty npz', () => {
    expect(readNpz(fixture('empty.npz'), 'e.npz', DEFAULT_LIMITS)).toEqual({ format: 'npz', tensors: [], problems: [] });
  });
});

describe('scipy.sparse.save_npz files (values from scipy 1.10, make_binary_fixtures.py)', () => {
  it('has every layout, compressed and not', () => {
    const seen = new Set(sparseFiles.map(([, f]) => `${f.layout}/${f.compressed}`));
    for (const l of ['csr', 'csc', 'coo', 'bsr', 'dia']) {
      expect(seen.has(`${l}/true`)).toBe(true);
      expect(seen.has(`${l}/false`)).toBe(true);
    }
  });

  for (const [file, exp] of sparseFiles) {
    it(file, () => {
      const r = readSparse(fixture(file));
      expect(r.format).toBe('sparse-npz');
      expect(r.tensors).toHaveLength(1);
      const t = r.tensors[0] as SparseTensor;
      expect(t.kind).toBe('sparse');
      expect(t.name).toBe('adjacency');
      expect(t.layout).toBe(exp.layout);
      expect(t.dtype).toBe(exp.dtype);
      expect(t.shape).toEqual(exp.shape);
      expect(t.row).toBeInstanceOf(Int32Array);
      expect(t.col).toBeInstanceOf(Int32Array);
      expect(t.values).toBeInstanceOf(exp.dtype === 'float32' ? Float32Array : Float64Array);
      expect(t.row.length).toBe(exp.nnz);
      expect(t.col.length).toBe(exp.nnz);
      expect(t.values!.length).toBe(exp.nnz);
      expect(densify(t)).toEqual(exp.dense!.map((row) => row.map(toNum)));
      let s = 0;
      for (const v of t.values!) s += v;
      expectSum(s, exp.sum!);
    });
  }

  it('the members of the 3x3 csr example are those of docs/references.md §1.3', () => {
    const bytes = fixture('sparse3_csr.npz');
    const zip = openZip(bytes, DEFAULT_LIMITS);
    const m = new Map(zip.entries.map((e) => [e.name.slice(0, -4), parseNpy(zip.readEntry(e), e.name)]));
    expect([...m.keys()].sort()).toEqual(['data', 'format', 'indices', 'indptr', 'shape']);
    expect(m.get('format')!.strings).toEqual(['csr']);
    expect(m.get('format')!.dtype).toBe('bytes');
    expect(m.get('format')!.shape).toEqual([]);
    expect(m.get('shape')!.dtype).toBe('int64');
    expect(Array.from(m.get('shape')!.data)).toEqual([3, 3]);
    expect(Array.from(m.get('indptr')!.data)).toEqual([0, 1, 3, 4]);
    expect(Array.from(m.get('indices')!.data)).toEqual([1, 0, 2, 1]);
    expect(Array.from(m.get('data')!.data)).toEqual([1, 1, 2, 2]);
    expect(zip.entries.every((e) => e.method === 8)).toBe(true); // compressed=True is the default
  });

  it('csr rows expand to COO in order', () => {
    const t = readSparse(fixture('sparse3_csr.npz')).tensors[0] as SparseTensor;
    expect(Array.from(t.row)).toEqual([0, 1, 1, 2]);
    expect(Array.from(t.col)).toEqual([1, 0, 2, 1]);
  });

  it('bsr keeps every position of a stored block (scipy tocoo does too)', () => {
    const t = readSparse(fixture('sparse_bsr_2x3_blocks.npz')).tensors[0] as SparseTensor;
    expect(t.row.length).toBe(expected.files['sparse_bsr_2x3_blocks.npz']!.nnz);
    expect(t.row.length % 6).toBe(0);
  });

  it('dia skips positions outside the matrix and padding zeros', () => {
    const t = readSparse(fixture('sparse_dia_3x5.npz')).tensors[0] as SparseTensor;
    for (let k = 0; k < t.row.length; k++) {
      expect(t.row[k]).toBeLessThan(3);
      expect(t.col[k]).toBeLessThan(5);
      expect(t.values![k]).not.toBe(0);
    }
  });

  it('accepts the hand-built csr example', () => {
    const t = readSparse(csr()).tensors[0] as SparseTensor;
    expect(densify(t)).toEqual([[0, 1, 0], [1, 0, 2], [0, 2, 0]]);
  });

  it('ignores unknown keys such as _is_array', () => {
    const b = buildZip([
      npyMember('row', '<i4', '(2,)', i32(0, 1)), npyMember('col', '<i4', '(2,)', i32(1, 0)), fmt('coo'),
      npyMember('shape', '<i8', '(2,)', i64(2, 2)), npyMember('data', '<f8', '(2,)', f64(5, 6)),
      npyMember('_is_array', '|b1', '()', new Uint8Array([1])),
    ]);
    const t = readSparse(b).tensors[0] as SparseTensor;
    expect(densify(t)).toEqual([[0, 5], [6, 0]]);
  });

  it('a plain npz that happens to have a non-sparse format key stays a plain npz', () => {
    const b = buildZip([fmt('xyz'), npyMember('shape', '<i8', '(2,)', i64(3, 3))]);
    expect(readSparse(b).format).toBe('npz');
  });
});

describe('unreadable sparse files', () => {
  it('indptr that decreases', () => {
    expectUnreadable(
      () => readSparse(csr({ indptr: npyMember('indptr', '<i4', '(4,)', i32(0, 3, 1, 4)) })),
      /indptr is not non-decreasing at position 2/,
    );
  });
  it('indptr of the wrong length or start', () => {
    expectUnreadable(() => readSparse(csr({ indptr: npyMember('indptr', '<i4', '(3,)', i32(0, 1, 4)) })), /indptr has 3 entries; 4/);
    expectUnreadable(() => readSparse(csr({ indptr: npyMember('indptr', '<i4', '(4,)', i32(1, 1, 3, 4)) })), /starts at 1/);
    expectUnreadable(() => readSparse(csr({ indptr: npyMember('indptr', '<i4', '(4,)', i32(0, 1, 3, 9)) })), /ends at 9, but there are only 4/);
  });
  it('column index outside the shape', () => {
    expectUnreadable(
      () => readSparse(csr({ indices: npyMember('indices', '<i4', '(4,)', i32(1, 0, 3, 1)) })),
      /indices\[2\] = 3 is outside 0\.\.2/,
    );
  });
  it('int64 indices beyond int32', () => {
    expectUnreadable(
      () => readSparse(csr({ indices: npyMember('indices', '<i8', '(4,)', i64(1, 0, 2 ** 40, 1)) })),
      /indices\[2\] = 1099511627776 is outside/,
    );
  });
  it('data and indices of different lengths', () => {
    expectUnreadable(() => readSparse(csr({ data: npyMember('data', '<f8', '(3,)', f64(1, 1, 2)) })), /'data' has 3 values but 'indices' has 4/);
  });
  it('missing arrays, bad shape, float indices', () => {
    expectUnreadable(() => readSparse(buildZip([fmt('csr'), npyMember('shape', '<i8', '(2,)', i64(3, 3))])), /a 'csr' file has no 'indices'/);
    expectUnreadable(() => readSparse(csr({ shape: npyMember('shape', '<i8', '(3,)', i64(3, 3, 3)) })), /'shape' must hold two integers/);
    expectUnreadable(() => readSparse(csr({ shape: npyMember('shape', '<i8', '(2,)', i64(-1, 3)) })), /not a pair of sizes/);
    expectUnreadable(() => readSparse(csr({ indices: npyMember('indices', '<f8', '(4,)', f64(1, 0, 2, 1)) })), /dtype float64; an integer array/);
  });
  it('coo with mismatched lengths or out-of-range rows', () => {
    const coo = (row: Uint8Array, n: number) => buildZip([
      npyMember('row', '<i4', `(${n},)`, row), npyMember('col', '<i4', '(2,)', i32(0, 1)), fmt('coo'),
      npyMember('shape', '<i8', '(2,)', i64(2, 2)), npyMember('data', '<f8', '(2,)', f64(1, 2)),
    ]);
    expectUnreadable(() => readSparse(coo(i32(0, 1, 1), 3)), /different lengths \(3, 2, 2\)/);
    expectUnreadable(() => readSparse(coo(i32(0, 2), 2)), /row\[1\] = 2 is outside 0\.\.1/);
  });
  it('bsr whose blocks do not divide the shape', () => {
    const b = buildZip([
      npyMember('indices', '<i4', '(1,)', i32(0)), npyMember('indptr', '<i4', '(2,)', i32(0, 1)), fmt('bsr'),
      npyMember('shape', '<i8', '(2,)', i64(3, 3)), npyMember('data', '<f8', '(1, 2, 2)', f64(1, 2, 3, 4)),
    ]);
    expectUnreadable(() => readSparse(b), /block size 2x2 does not divide the shape \(3, 3\)/);
  });
  it('dia data that does not match the offsets', () => {
    const b = buildZip([
      npyMember('offsets', '<i4', '(2,)', i32(-1, 1)), fmt('dia'),
      npyMember('shape', '<i8', '(2,)', i64(3, 3)), npyMember('data', '<f8', '(3,)', f64(1, 2, 3)),
    ]);
    expectUnreadable(() => readSparse(b), /dia 'data' has shape \(3\); \(2, L\)/);
  });
});

describe('unreadable npz archives', () => {
  it('names the member whose .npy is broken, with its file offset when stored', () => {
    const good = npyMember('x', '<i4', '(2,)', i32(1, 2));
    const broken = { ...good, data: good.data.subarray(0, good.data.length - 1) };
    const e = expectUnreadable(() => readNpz(buildZip([broken]), 'a.npz', DEFAULT_LIMITS), /in member 'x.npy': .npy data is truncated/);
    // local header (30) + name, then the member's npy data start (preamble 10 + HEADER_LEN)
    const npyDataStart = 10 + good.data[8]! + (good.data[9]! << 8);
    expect(npyDataStart).toBe(128);
    expect(e.offset).toBe(30 + 'x.npy'.length + npyDataStart);
  });
  it('says so when the offset is inside a deflated member', () => {
    const good = npyMember('x', '<i4', '(2,)', i32(1, 2), 8);
    const broken = { ...good, data: good.data.subarray(0, good.data.length - 1) };
    expectUnreadable(() => readNpz(buildZip([broken]), 'a.npz', DEFAULT_LIMITS), /within the decompressed member/);
  });
  it('duplicate member names', () => {
    const m = npyMember('x', '<i4', '(1,)', i32(1));
    expectUnreadable(() => readNpz(buildZip([m, m]), 'a.npz', DEFAULT_LIMITS), /two members named 'x.npy'/);
  });
  it('a member declaring 10 GB (deflate bomb)', () => {
    // An edge index is read whole: refused by the decompression limit before anything is allocated.
    const ei: ZipMember = { ...npyMember('edge_index', '<i4', '(1,)', i32(1), 8), declaredSize: 10 * 1024 ** 3, zip64: true };
    expectUnreadable(() => readNpz(buildZip([ei]), 'a.npz', DEFAULT_LIMITS), /declares 10737418240 uncompressed bytes, over the limit/);
    // Features would be summarised piece by piece (no limit on memory), but 72 compressed bytes
    // cannot inflate to 10 GB: refused before inflating.
    const x: ZipMember = { ...npyMember('x', '<i4', '(1,)', i32(1), 8), declaredSize: 10 * 1024 ** 3, zip64: true };
    expectUnreadable(() => readNpz(buildZip([x]), 'a.npz', DEFAULT_LIMITS), /declares 10737418240 uncompressed bytes from \d+ compressed bytes, beyond what deflate can produce/);
  });
  it('not a zip at all', () => {
    expectUnreadable(() => readNpz(fixture('le_i4.npy'), 'a.npz', DEFAULT_LIMITS), /no end-of-central-directory/);
  });
});

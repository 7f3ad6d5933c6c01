/**
 * PyTorch .pt reader tests.
 * Every fixture was written by PyTorch 1.13 (Debian python3-torch), see
 * tests/fixtures/make_pt_fixtures.py; expected.json holds what torch computed for each tensor
 * (dtype, shape, float64 sum, first values in C order after strides and offsets). The archive
 * layout and the legacy magic bytes are from docs/references.md §1.6. Names (`masks.train`, `[0]`) are
 * this reader's own convention.
 */
import { describe, expect, it } from 'vitest';
import { existsSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { readPt } from '../../server/src/core/formats/pt';
import { readFileBytes, readerFor } from '../../server/src/core/formats';
import {
  DEFAULT_LIMITS, UnreadableError, type DenseTensor, type ReadLimits, type SparseTensor,
} from '../../server/src/core/formats/types';
import { checkPaths } from '../../server/src/node/load';
import { ascii, buildZip, bytesOf, expectTensor, expectUnreadable, storageFor } from './binary-helpers';
import {
  PT_DIR, dictOf, membersOf, op, pk, ptArchive, ptExpected, ptFixture, ptFixtureNames, storageRef, tensorV2,
  type PtExpectedTensor,
} from './pt-helpers';

const files = Object.entries(ptExpected.files);
const readable = files.filter(([, f]) => f.kind === 'tensors');
const read = (name: string, limits: ReadLimits = DEFAULT_LIMITS) => readPt(ptFixture(name), name, limits);

function dense(name: string, tensor: string): DenseTensor {
  const t = read(name).tensors.find((x) => x.name === tensor);
  if (!t || t.kind !== 'dense') throw new Error(`no dense tensor ${tensor} in ${name}`);
  return t;
}

function densify(t: SparseTensor): number[][] {
  const [r, c] = t.shape;
  const out = Array.from({ length: r }, () => new Array<number>(c).fill(0));
  for (let k = 0; k < t.row.length; k++) out[t.row[k]!]![t.col[k]!]! += t.values ? t.values[k]! : 1;
  return out;
}

describe('every torch.save fixture against the values torch computed (PyTorch 1.13, make_pt_fixtures.py)', () => {
  it('expected.json covers every fixture file', () => {
    expect(ptFixtureNames()).toEqual(files.map(([n]) => n).sort());
    expect(ptExpected.generator).toMatch(/torch 1\.13/);
  });

  for (const [file, exp] of readable) {
    it(file, () => {
      const r = read(file);
      expect(r.format).toBe('pt');
      const want = [...Object.keys(exp.tensors ?? {}), ...Object.keys(exp.sparse ?? {})].sort();
      expect(r.tensors.map((t) => t.name).sort()).toEqual(want);
      for (const t of r.tensors) {
        if (t.kind === 'dense') {
          const e = exp.tensors![t.name]!;
          expectTensor(t, e);
          expect(t.data.constructor.name).toBe(storageFor(e.dtype, t.data));
        } else {
          const e = exp.sparse![t.name]!;
          expect([t.dtype, t.shape, t.row.length, `sparse_${t.layout}`]).toEqual([e.dtype, e.shape, e.nnz, e.layout]);
          expect(densify(t)).toEqual(e.dense);
        }
      }
      expect(r.problems.map((p) => p.tensor).sort()).toEqual(Object.keys(exp.skipped ?? {}).sort());
    });
  }
});

describe('views, offsets and strides are materialised in C order', () => {
  const facts = (file: string, t: string): PtExpectedTensor => ptExpected.files[file]!.tensors![t]!;

  it('t.t() of a 3x4 matrix: size (4, 3), stride (1, 4) (docs/references.md §1.6), every value as torch gave it', () => {
    const e = facts('transposed.pt', 'transposed');
    expect([e.contiguous, e.stride]).toEqual([false, [1, 4]]);
    const t = dense('transposed.pt', 'transposed');
    expect(t.shape).toEqual([4, 3]);
    expect(Array.from(t.data)).toEqual(e.first); // all 12 values
  });

  it('t[1:]: storage offset 4, and a column, a step-2 slice and a 3-d permute', () => {
    expect(facts('sliced.pt', 'rows').storage_offset).toBe(4);
    expect(Array.from(dense('sliced.pt', 'rows').data)).toEqual(facts('sliced.pt', 'rows').first.slice(0, 8));
    for (const name of ['col', 'every_other', 'perm']) {
      const e = facts('sliced.pt', name);
      expect(e.contiguous, name).toBe(false);
      expect(Array.from(dense('sliced.pt', name).data.subarray(0, e.first.length)), name).toEqual(e.first);
    }
  });

  it('an expanded view (stride 0), a 0-d scalar and an empty tensor', () => {
    expect(facts('odd_shapes.pt', 'expanded').stride).toEqual([0, 1]);
    expect(Array.from(dense('odd_shapes.pt', 'expanded').data)).toEqual([0, 1, 2, 0, 1, 2]);
    expect(dense('odd_shapes.pt', 'scalar')).toMatchObject({ shape: [], data: new Float32Array([3.5]) });
    expect(dense('odd_shapes.pt', 'empty').data.length).toBe(0);
  });

  it('a contiguous float tensor is a view into the file bytes (no copy)', () => {
    const bytes = ptFixture('graph_dict.pt');
    const x = readPt(bytes, 'graph_dict.pt', DEFAULT_LIMITS).tensors.find((t) => t.name === 'x') as DenseTensor;
    expect(x.data.buffer).toBe(bytes.buffer);
  });
});

describe('storages', () => {
  it('[t, t[0]]: one storage member, decoded once and shared by both tensors', () => {
    expect(ptExpected.files['shared.pt']!.storages).toEqual(['shared/data/0']);
    const bytes = ptFixture('shared.pt');
    const [a, b] = readPt(bytes, 'shared.pt', DEFAULT_LIMITS).tensors as DenseTensor[];
    // int64 is decoded into a new Int32Array: one buffer for both means one decode.
    expect(a!.data).toBeInstanceOf(Int32Array);
    expect(a!.data.buffer).not.toBe(bytes.buffer);
    expect(b!.data.buffer).toBe(a!.data.buffer);
  });

  it('int64 beyond int32 becomes Float64Array, exact up to 2^53', () => {
    const t = dense('bigints.pt', 'big');
    expect(t.data).toBeInstanceOf(Float64Array);
    expect(Array.from(t.data)).toEqual([2 ** 40, -(2 ** 35), 5, 2 ** 53, -1]);
  });

  it('reads only the storages that tensors use', () => {
    // An archive whose pickle names storage '0' only; member '1' is garbage that must not be touched.
    const pkl = pk(op.proto(2), dictOf([['x', tensorV2(storageRef('FloatStorage', '0', 2), 0, [2], [1])]]), op.stop);
    const bytes = buildZip([
      { name: 'archive/data.pkl', data: pkl },
      { name: 'archive/data/0', data: bytesOf(new Float32Array([1.5, -2])) },
      { name: 'archive/data/1', data: new Uint8Array(10), method: 99 },
      { name: 'archive/version', data: ascii('3\n') },
    ]);
    const r = readPt(bytes, 'a.pt', DEFAULT_LIMITS);
    expect(Array.from((r.tensors[0] as DenseTensor).data)).toEqual([1.5, -2]);
  });

  it('finds the top-level folder instead of assuming archive/', () => {
    const pkl = pk(op.proto(2), dictOf([['y', tensorV2(storageRef('IntStorage', '0', 3), 0, [3], [1])]]), op.stop);
    for (const root of ['archive', 'my graph', 'ckpt_epoch_7']) {
      const r = readPt(ptArchive(pkl, { 0: bytesOf(new Int32Array([4, 5, 6])) }, { root }), 'x.pt', DEFAULT_LIMITS);
      expect(Array.from((r.tensors[0] as DenseTensor).data), root).toEqual([4, 5, 6]);
    }
  });

  it('byteorder "big" (torch >= 2.1 record): storages are byte-swapped', () => {
    const members = membersOf(ptFixture('transposed.pt')).map((m) => {
      if (!m.name.endsWith('/data/0')) return m;
      const d = m.data.slice();
      for (let i = 0; i < d.length; i += 4) d.subarray(i, i + 4).reverse();
      return { ...m, data: d };
    });
    const big = buildZip([...members, { name: 'transposed/byteorder', data: ascii('big') }]);
    const t = readPt(big, 'transposed.pt', DEFAULT_LIMITS).tensors[0] as DenseTensor;
    expect(Array.from(t.data)).toEqual(ptExpected.files['transposed.pt']!.tensors!['transposed']!.first);
    const odd = buildZip([...members, { name: 'transposed/byteorder', data: ascii('middle') }]);
    expectUnreadable(() => readPt(odd, 'transposed.pt', DEFAULT_LIMITS), /byteorder record says 'middle'/);
  });
});

describe('refused files, with clear messages', () => {
  it('legacy (pre-1.6) format: starts with the docs/references.md §1.6 magic bytes', () => {
    const f = ptExpected.files['legacy.pt']!;
    expect(f.head_hex).toBe('80028a0a6cfc9c46f9206aa85019');
    expectUnreadable(() => read('legacy.pt'), /legacy \(pre-1\.6\) file format.*torch\.save\(obj, path\).*default zip format/);
  });

  it('TorchScript archive (torch.jit.save): constants.pkl and code/ members', () => {
    const f = ptExpected.files['scripted.pt']!;
    expect([f.has_constants_pkl, f.has_code]).toEqual([true, true]);
    expectUnreadable(() => read('scripted.pt'), /TorchScript archive.*state_dict/);
  });

  it('hostile.pt: refused naming posix.system, and the command did not run', () => {
    const f = ptExpected.files['hostile.pt']!;
    // make_pt_fixtures.py proved that torch.load runs the command (in a throwaway subprocess).
    expect(f.proven_dangerous).toBe(true);
    expect(f.global).toBe('posix.system');
    rmSync(f.marker!, { force: true });
    const e = expectUnreadable(() => read('hostile.pt'), /refused to load posix\.system/);
    expect(e.message).toContain('hostile/data.pkl');
    // Through the registry too, as the CLI and the language server call it.
    expectUnreadable(() => readFileBytes(ptFixture('hostile.pt'), join(PT_DIR, 'hostile.pt')), /refused to load posix\.system/);
    expect(existsSync(f.marker!)).toBe(false);
  });

  it('a bare pickle and a zip without data.pkl are not torch.save archives', () => {
    expectUnreadable(() => readPt(pk(op.proto(2), op.none, op.stop), 'p.pt', DEFAULT_LIMITS), /bare pickle stream/);
    expectUnreadable(() => readPt(buildZip([{ name: 'a/b.txt', data: ascii('x') }]), 'p.pt', DEFAULT_LIMITS), /no <folder>\/data\.pkl/);
    expectUnreadable(() => readPt(ascii('not a zip at all, just some text here'), 'p.pt', DEFAULT_LIMITS), /not a torch\.save archive/);
  });
});

describe('damaged archives give UnreadableError', () => {
  const x = (size: number[], stride: number[], offset = 0, numel = 4) =>
    pk(op.proto(2), dictOf([['x', tensorV2(storageRef('FloatStorage', '0', numel), offset, size, stride)]]), op.stop);
  const f32 = bytesOf(new Float32Array([1, 2, 3, 4]));

  it('every truncation of a real file', () => {
    const bytes = ptFixture('graph_dict.pt');
    for (let n = 0; n < bytes.length; n += 7) {
      let err: unknown;
      try {
        readPt(bytes.subarray(0, n), 'g.pt', DEFAULT_LIMITS);
      } catch (e) {
        err = e;
      }
      expect(err, `truncated at ${n}`).toBeInstanceOf(UnreadableError);
    }
  });

  it('a storage member shorter than its declared element count', () => {
    const members = membersOf(ptFixture('graph_dict.pt')).map((m) =>
      m.name === 'graph_dict/data/0' ? { ...m, data: m.data.subarray(0, m.data.length - 8) } : m);
    expectUnreadable(() => readPt(buildZip(members), 'graph_dict.pt', DEFAULT_LIMITS), /storage '0' declares 36 elements of int64 \(288 bytes\), but its member holds 280 bytes/);
  });

  it('a missing storage member', () => {
    expectUnreadable(() => readPt(ptArchive(x([4], [1]), {}), 'a.pt', DEFAULT_LIMITS), /storage member 'archive\/data\/0' is missing/);
  });

  it('a view that reaches past its storage', () => {
    expectUnreadable(() => readPt(ptArchive(x([2, 2], [2, 1], 1), { 0: f32 }), 'a.pt', DEFAULT_LIMITS), /reaches element 4 of a storage with 4 elements/);
    expectUnreadable(() => readPt(ptArchive(x([5], [1], 0, 5), { 0: f32 }), 'a.pt', DEFAULT_LIMITS), /declares 5 elements/);
  });

  it('a stride-0 view bigger than the decode limit', () => {
    const limits = { ...DEFAULT_LIMITS, maxDecompressedBytes: 1000 };
    expectUnreadable(() => readPt(ptArchive(x([100, 100], [0, 0]), { 0: f32 }), 'a.pt', limits), /over the limit of 1000 bytes/);
  });

  it('pickle errors name the member and map to file offsets', () => {
    const bytes = ptArchive(pk(op.proto(2), op.global('posix', 'system'), op.str('true'), op.tuple1, op.reduce, op.stop), {});
    const e = expectUnreadable(() => readPt(bytes, 'a.pt', DEFAULT_LIMITS), /in archive\/data\.pkl: refused to load posix\.system/);
    expect(bytes[e.offset!]).toBe(0x52); // the REDUCE opcode
  });
});

describe('registry and checks', () => {
  it('.pt and .pth files go to the PyTorch reader', () => {
    expect(readerFor('model.pt')?.format).toBe('pt');
    expect(readerFor('dir/Weights.PTH')?.format).toBe('pt');
  });

  it('graph_dict.pt gets the same tensors, figures and problems as its numpy.savez twin', () => {
    const pt = checkPaths([join(PT_DIR, 'graph_dict.pt')]).files[0]!;
    const npz = checkPaths([join(PT_DIR, 'graph_dict.npz')]).files[0]!;
    expect(pt.format).toBe('pt');
    expect(pt.graph).not.toBeNull();
    expect(pt.graph).toEqual(npz.graph);
    expect(pt.tensors.map(({ name, role, shape }) => ({ name, role, shape })))
      .toEqual(npz.tensors.map(({ name, role, shape }) => ({ name, role, shape })));
    expect(pt.problems.map((p) => p.code)).toEqual(npz.problems.map((p) => p.code));
    // and the figures are the ones computed in Python from the edge list
    expect(pt.graph).toMatchObject(ptExpected.files['graph_dict.pt']!.figures!);
  });

  it('a data object saved whole is checked like the dict of its attributes', () => {
    const obj = checkPaths([join(PT_DIR, 'dockgraph.pt')]).files[0]!;
    const dict = checkPaths([join(PT_DIR, 'graph_dict.pt')]).files[0]!;
    expect(obj.graph).toEqual(dict.graph);
    expect(obj.tensors.find((t) => t.name === 'edge_index')?.role).toBe('edge-index');
    expect(obj.tensors.find((t) => t.name === 'train_mask')?.role).toBe('mask');
  });
});

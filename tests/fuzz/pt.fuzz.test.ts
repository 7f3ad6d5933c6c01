/**
 * Property tests for the pickle parser and the PyTorch reader: random bytes, mutated copies of
 * the torch.save fixtures written by PyTorch 1.13 (tests/fixtures/make_pt_fixtures.py) and of their
 * data.pkl members, and random opcode streams (opcodes from CPython's pickletools table) must
 * either read into well-formed values/tensors or fail with UnreadableError, never anything else.
 */
import { describe, it } from 'vitest';
import fc from 'fast-check';
import { parsePickle } from '../../server/src/core/formats/pickle';
import { PT_ALLOWED_CALLS, torchPersistentLoad } from '../../server/src/core/formats/pt-allowed';
import { readPt } from '../../server/src/core/formats/pt';
import { openZip } from '../../server/src/core/formats/zip';
import { DEFAULT_LIMITS, UnreadableError, type ReadLimits, type ReadResult } from '../../server/src/core/formats/types';
import { ascii, buildZip } from '../unit/binary-helpers';
import { intTuple, op, pk, ptFixture, ptFixtureNames, storageRef, tensorV2 } from '../unit/pt-helpers';
import { byteMutation, checkTensors, mutate, runs } from './fuzz-helpers';


/** Small limits so that a lying header or a stride-0 view cannot make a run slow. */
const LIMITS: ReadLimits = { maxDecompressedBytes: 4 * 1024 * 1024, maxHeaderBytes: 1024 * 1024 };
const PICKLE_BOUNDS = { maxStack: 100_000, maxMemo: 100_000, maxMarks: 1000 };

function checkResult(r: ReadResult): void {
  checkTensors(r);
  const names = new Set(r.tensors.map((t) => t.name));
  if (names.size !== r.tensors.length) throw new Error('two tensors share a name');
}

function onlyUnreadable(fn: () => void): void {
  try {
    fn();
  } catch (e) {
    if (e instanceof UnreadableError) return;
    throw e;
  }
}

const pickle = (b: Uint8Array) => onlyUnreadable(() => {
  parsePickle(b, PT_ALLOWED_CALLS, { ...PICKLE_BOUNDS, persistentLoad: torchPersistentLoad() });
});
const pt = (b: Uint8Array) => onlyUnreadable(() => checkResult(readPt(b, 'f.pt', LIMITS)));

const names = ptFixtureNames();
const fixtures = new Map(names.map((n) => [n, ptFixture(n)]));
/** data.pkl and the other members of every zip fixture, to rebuild archives around mutated pickles. */
const archives = names.flatMap((n) => {
  try {
    const z = openZip(fixtures.get(n)!, DEFAULT_LIMITS);
    const members = z.entries.map((e) => ({ name: e.name, data: z.readEntry(e).slice() }));
    const pkl = members.find((m) => m.name.endsWith('/data.pkl'));
    return pkl ? [{ name: n, pkl: pkl.data, members }] : [];
  } catch {
    return [];
  }
});

const mutation = byteMutation(32);

// --- random opcode streams -----------------------------------------------------------------------

const GLOBALS: Array<[string, string]> = [
  ['torch._utils', '_rebuild_tensor_v2'], ['torch._utils', '_rebuild_tensor'], ['torch._utils', '_rebuild_parameter'],
  ['torch._utils', '_rebuild_sparse_tensor'], ['torch.serialization', '_get_layout'], ['torch', 'FloatStorage'],
  ['torch', 'LongStorage'], ['torch', 'BoolStorage'], ['torch', 'HalfStorage'], ['torch', 'UntypedStorage'],
  ['torch', 'float32'], ['torch', 'sparse_coo'], ['torch', 'Size'], ['torch', 'device'], ['collections', 'OrderedDict'],
  ['builtins', 'set'], ['builtins', 'list'], ['__builtin__', 'tuple'], ['copy_reg', '_reconstructor'], ['copyreg', '__newobj__'],
  ['_codecs', 'encode'], ['builtins', 'slice'], ['builtins', 'object'], ['__main__', 'Graph'], ['posix', 'system'],
];

/** A tensor rebuild with random storage type, key, element count, offset, size and stride. */
const tensorToken: fc.Arbitrary<Uint8Array> = fc.tuple(
  fc.constantFrom('FloatStorage', 'LongStorage', 'BoolStorage', 'HalfStorage', 'ByteStorage'), fc.constantFrom('0', '1', '2'),
  fc.integer({ min: 0, max: 24 }), fc.integer({ min: 0, max: 12 }),
  fc.array(fc.tuple(fc.integer({ min: 0, max: 6 }), fc.integer({ min: 0, max: 8 })), { maxLength: 3 }),
).map(([t, k, n, off, dims]) => tensorV2(storageRef(t, k, n), off, dims.map((d) => d[0]), dims.map((d) => d[1])));

const token: fc.Arbitrary<Uint8Array> = fc.oneof(
  { weight: 6, arbitrary: fc.constantFrom(
    op.none, op.newTrue, op.newFalse, op.emptyList, op.emptyDict, op.emptyTuple, 0x8f, op.mark, op.tuple, op.tuple1,
    op.tuple2, op.tuple3, 0x6c, 0x64, op.append, op.appends, op.setitem, op.setitems, 0x90, 0x91, op.pop, 0x31, op.dup,
    op.memoize, op.reduce, op.newobj, 0x92, op.build, op.binpersid, 0x93,
  ).map((b) => pk(b)) },
  { weight: 4, arbitrary: fc.integer({ min: 0, max: 255 }).map((v) => op.int1(v)) },
  { weight: 1, arbitrary: fc.integer().map((v) => op.int4(v)) },
  { weight: 1, arbitrary: fc.uint8Array({ maxLength: 10 }).map((b) => pk(0x8a, b.length, b)) },
  { weight: 1, arbitrary: fc.double().map((v) => { const b = new Uint8Array(9); b[0] = 0x47; new DataView(b.buffer).setFloat64(1, v); return b; }) },
  { weight: 3, arbitrary: fc.constantFrom('storage', '0', '1', 'cpu', 'x', 'edge_index', 'torch.sparse_coo', '').map((s) => op.str(s)) },
  { weight: 2, arbitrary: fc.integer({ min: 0, max: 8 }).map((i) => op.binput(i)) },
  { weight: 2, arbitrary: fc.integer({ min: 0, max: 8 }).map((i) => op.binget(i)) },
  { weight: 3, arbitrary: fc.constantFrom(...GLOBALS).map(([m, n]) => op.global(m, n)) },
  { weight: 2, arbitrary: fc.tuple(fc.constantFrom('FloatStorage', 'LongStorage', 'BoolStorage', 'HalfStorage', 'ComplexFloatStorage'), fc.constantFrom('0', '1', '9'), fc.integer({ min: -1, max: 20 }))
    .map(([t, k, n]) => storageRef(t, k, n)) },
  { weight: 2, arbitrary: fc.constant(null).chain(() => tensorToken) },
  { weight: 1, arbitrary: fc.array(fc.integer({ min: 0, max: 300 }), { maxLength: 3 }).map((v) => intTuple(...v)) },
  { weight: 1, arbitrary: fc.integer({ min: 0, max: 255 }).map((b) => pk(b)) },
);

const stream = fc.oneof(
  fc.array(token, { maxLength: 40 }).map((ts) => pk(op.proto(2), ...ts, op.stop)),
  // well-formed lists of tensors, so that the reader's view and storage checks are reached
  fc.array(tensorToken, { minLength: 1, maxLength: 4 }).map((ts) => pk(op.proto(2), op.emptyList, op.mark, ...ts, op.appends, op.stop)),
);

const STORAGES = [
  { name: 'archive/data/0', data: new Uint8Array(80).map((_, i) => (i * 29) & 0xff) },
  { name: 'archive/data/1', data: new Uint8Array(160).map((_, i) => (i * 13) & 1) },
];
const wrap = (pkl: Uint8Array) => buildZip([
  { name: 'archive/data.pkl', data: pkl }, ...STORAGES, { name: 'archive/version', data: ascii('3\n') },
]);

describe('pickle parser and .pt reader throw only UnreadableError', () => {
  it('random bytes', () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 600 }), (bytes) => {
        pickle(bytes);
        pt(bytes);
        pickle(pk(op.proto(2), bytes)); // behind a valid protocol header
      }),
      { numRuns: runs(250) },
    );
  });

  it('mutated and truncated fixture archives', () => {
    fc.assert(
      fc.property(fc.constantFrom(...names), fc.array(mutation, { minLength: 1, maxLength: 4 }), (name, muts) => {
        pt(mutate(fixtures.get(name)!, muts));
      }),
      { numRuns: runs(500) },
    );
  });

  it('mutated data.pkl members, alone and inside their archive', () => {
    fc.assert(
      fc.property(fc.constantFrom(...archives), fc.array(mutation, { minLength: 1, maxLength: 3 }), (a, muts) => {
        const pkl = mutate(a.pkl, muts);
        pickle(pkl);
        pt(buildZip(a.members.map((m) => (m.name.endsWith('/data.pkl') ? { ...m, data: pkl } : m))));
      }),
      { numRuns: runs(650) },
    );
  });

  it('random opcode streams', () => {
    fc.assert(
      fc.property(stream, (pkl) => {
        pickle(pkl);
        pt(wrap(pkl));
      }),
      { numRuns: runs(650) },
    );
  });
});

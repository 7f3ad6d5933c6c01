/**
 * Pickle parser tests.
 * Sources: streams written by CPython 3.11's pickle.dumps at protocols 0–5 and the data.pkl
 * members written by PyTorch 1.13 (Debian python3-torch), both with the values Python gave them
 * (tests/fixtures/make_pt_fixtures.py → tests/fixtures/pt/expected.json); opcode bytes and
 * semantics per CPython's pickletools opcode table (docs/references.md §1.7).
 */
import { describe, expect, it } from 'vitest';
import { existsSync } from 'node:fs';
import { NO_CALLS, OPCODE_NAMES, parsePickle as parseWith, type PickleOptions } from '../../server/src/core/formats/pickle';
import { isNode, type PyValue } from '../../server/src/core/formats/pickle-values';
import { PT_ALLOWED_CALLS, isAllowedCall, torchPersistentLoad } from '../../server/src/core/formats/pt-allowed';
import { openZip } from '../../server/src/core/formats/zip';
import { DEFAULT_LIMITS, UnreadableError } from '../../server/src/core/formats/types';
import { ascii } from './binary-helpers';
import { fromHex, op, pk, ptExpected, ptFixture, tagged } from './pt-helpers';
import { expectUnreadable } from './binary-helpers';

function dataPkl(file: string): Uint8Array {
  const z = openZip(ptFixture(file), DEFAULT_LIMITS);
  const e = z.entries.find((x) => x.name.endsWith('/data.pkl'))!;
  return z.readEntry(e);
}

/** The opcode machine with the PyTorch reader's table of allowed calls. */
const parsePickle = (b: Uint8Array, opts?: PickleOptions) => parseWith(b, PT_ALLOWED_CALLS, opts);
const parseTorch = (b: Uint8Array) => parsePickle(b, { persistentLoad: torchPersistentLoad() });

const refusal = (fn: () => unknown): UnreadableError => expectUnreadable(fn);

function dictGet(v: PyValue, key: string): PyValue | undefined {
  if (isNode(v, 'dict')) return v.map.get(key);
  throw new Error('not a dict');
}

describe('CPython pickle.dumps streams, protocols 0-5 (values from CPython 3.11, make_pt_fixtures.py)', () => {
  for (const c of ptExpected.pickles) {
    it(`${c.name}, protocol ${c.protocol}`, () => {
      const v = parsePickle(fromHex(c.hex));
      if (c.recursive) {
        // [[...]]: a list that holds itself (EMPTY_LIST, memo PUT, GET, APPEND)
        expect(Array.isArray(v)).toBe(true);
        expect((v as PyValue[])[0]).toBe(v);
        return;
      }
      expect(tagged(v)).toEqual(c.value);
      if (c.same) {
        const l = v as PyValue[];
        expect(l[c.same[0]]).toBe(l[c.same[1]]); // one object through the memo, not a copy
      }
    });
  }

  it('covers every protocol and the text opcodes of protocol 0', () => {
    expect(new Set(ptExpected.pickles.map((c) => c.protocol))).toEqual(new Set([0, 1, 2, 3, 4, 5]));
    // Protocol 0 streams are text: INT, LONG, FLOAT and UNICODE lines.
    const p0 = (name: string) => {
      const c = ptExpected.pickles.find((x) => x.name === name && x.protocol === 0)!;
      return String.fromCharCode(...fromHex(c.hex));
    };
    expect(p0('ints')).toContain('\naI-1\n');
    expect(p0('ints')).toContain('\naL18446744073709551616L\n');
    expect(p0('floats')).toContain('\naF1.5\n');
    expect(p0('strings')).toMatch(/\naVdock /);
  });
});

describe('torch.save data.pkl streams (PyTorch 1.13, make_pt_fixtures.py)', () => {
  it('the fixtures use every opcode of the docs/references.md §1.7 table', () => {
    const used = new Set(Object.values(ptExpected.files).flatMap((f) => f.opcodes ?? []));
    for (const name of [
      'PROTO', 'EMPTY_DICT', 'EMPTY_LIST', 'MARK', 'BINUNICODE', 'GLOBAL', 'NONE', 'BININT1', 'BININT2', 'BININT',
      'LONG1', 'BINFLOAT', 'NEWTRUE', 'NEWFALSE', 'SETITEMS', 'APPENDS', 'STOP', 'TUPLE', 'TUPLE1', 'TUPLE2',
      'TUPLE3', 'EMPTY_TUPLE', 'REDUCE', 'BINPERSID', 'BINPUT', 'BINGET',
    ]) {
      expect(used, name).toContain(name);
      expect(Object.values(OPCODE_NAMES)).toContain(name);
    }
  });

  for (const file of ['nested.pt', 'nested_p4.pt', 'nested_p5.pt']) {
    it(`${file}: Python scalars and containers as Python saw them`, () => {
      const py = ptExpected.files[file]!.python as Record<string, unknown>;
      const v = parseTorch(dataPkl(file));
      expect(dictGet(v, 'epoch')).toBe(py['epoch']);
      expect(dictGet(v, 'lr')).toBe(py['lr']);
      expect(dictGet(v, 'name')).toBe(py['name']);
      expect(tagged(dictGet(v, 'tags')!)).toEqual({ tuple: py['tags'] });
      expect(tagged(dictGet(v, 'seen')!)).toEqual({ set: py['seen'] });
      expect(tagged(dictGet(v, 'frozen')!)).toEqual({ frozenset: py['frozen'] });
      expect(dictGet(v, 'none')).toBe(py['none']);
      expect(dictGet(v, 'flag')).toBe(py['flag']);
      expect(Array.from(dictGet(v, 'blob') as Uint8Array)).toEqual(py['blob']);
      // torch.Size((8, 3)) is REDUCE of torch.Size: a tuple; torch.device('cpu') a small record.
      expect(tagged(dictGet(v, 'size')!)).toEqual({ tuple: py['size'] });
      expect(tagged(dictGet(v, 'device')!)).toEqual({ record: 'torch.device', args: ['cpu'], state: undefined });
    });
  }

  it('bigints.pt: Python ints beyond int32 and beyond 2^53 (hex from Python)', () => {
    const py = ptExpected.files['bigints.pt']!.python as { meta: Record<string, number>; meta_hex: Record<string, string> };
    const meta = dictGet(parseTorch(dataPkl('bigints.pt')), 'meta')!;
    for (const [k, want] of Object.entries(py.meta)) expect(dictGet(meta, k)).toBe(want);
    for (const [k, want] of Object.entries(py.meta_hex)) expect(tagged(dictGet(meta, k)!)).toEqual({ int: want });
  });

  it('tensors become rebuild nodes over shared storage nodes (docs/references.md §1.6)', () => {
    const v = parseTorch(dataPkl('shared.pt')) as PyValue[];
    expect(v.length).toBe(2);
    const [a, b] = v;
    if (!isNode(a, 'tensor') || !isNode(b, 'tensor')) throw new Error('not tensors');
    expect(a.storage).toBe(b.storage); // the same key gives the same node
    expect(a.storage).toMatchObject({ key: '0', storageType: 'torch.LongStorage', dtype: 'int64', numel: 10, location: 'cpu' });
    expect(a).toMatchObject({ offset: 0, size: [2, 5], stride: [5, 1] });
    expect(b).toMatchObject({ offset: 0, size: [5], stride: [1] });
  });

  it('a state_dict keeps its _metadata attribute set by BUILD', () => {
    const v = parseTorch(dataPkl('state_dict.pt'));
    if (!isNode(v, 'dict')) throw new Error('not a dict');
    expect(v.className).toBe('collections.OrderedDict');
    expect([...v.map.keys()]).toEqual(['lin.weight', 'lin.bias']);
    expect(isNode(v.attrs, 'dict') && v.attrs.map.has('_metadata')).toBe(true);
  });

  it('a data object saved whole is a record of its attributes, never instantiated', () => {
    const v = parseTorch(dataPkl('dockgraph.pt'));
    if (!isNode(v, 'record')) throw new Error('not a record');
    expect(v.className).toBe(ptExpected.files['dockgraph.pt']!.class_name);
    const state = v.state!;
    expect([...(isNode(state, 'dict') ? state.map.keys() : [])]).toEqual(['edge_index', 'x', 'y', 'train_mask', 'num_docks', 'city']);
    expect(dictGet(state, 'num_docks')).toBe(8);
    expect(dictGet(state, 'city')).toBe('Larkhaven');
  });

  it('sparse tensors: layout from torch.serialization._get_layout, parts as tensors', () => {
    const coo = dictGet(parseTorch(dataPkl('sparse_coo.pt')), 'adj')!;
    expect(isNode(coo, 'sparse') && coo.layout).toBe('sparse_coo');
    expect(isNode(coo, 'sparse') && coo.size).toEqual([5, 5]);
    const csr = dictGet(parseTorch(dataPkl('sparse_csr.pt')), 'adj')!;
    expect(isNode(csr, 'sparse') && csr.parts.length).toBe(3);
  });

  it('a module saved whole: records for the modules, parameters marked', () => {
    const v = parseTorch(dataPkl('module.pt'));
    if (!isNode(v, 'record')) throw new Error('not a record');
    expect(v.className).toBe(ptExpected.files['module.pt']!.class_name);
    const lin = dictGet(dictGet(v.state!, '_modules')!, 'lin')!;
    const w = dictGet(dictGet((lin as { state: PyValue }).state, '_parameters')!, 'weight')!;
    expect(isNode(w, 'tensor') && w.parameter).toBe(true);
  });

  it('every strict prefix of a real data.pkl is refused with UnreadableError', () => {
    const b = dataPkl('nested.pt');
    for (let n = 0; n < b.length; n++) {
      expect(() => parseTorch(b.subarray(0, n)), `prefix ${n}`).toThrow(UnreadableError);
    }
  });
});

describe('hostile streams are refused, naming the global, and nothing runs', () => {
  const marker = ptExpected.files['hostile.pt']!.marker!;

  for (const h of ptExpected.hostile_pickles) {
    it(`CPython's os.system payload, protocol ${h.protocol}`, () => {
      const e = refusal(() => parsePickle(fromHex(h.hex)));
      expect(e.message).toContain(`refused to load ${h.global}`);
      expect(existsSync(marker)).toBe(false);
    });
  }

  const cases: Array<[string, Uint8Array, string]> = [
    ['builtins.eval through REDUCE', pk(op.proto(2), op.global('builtins', 'eval'), op.str('1+1'), op.tuple1, op.reduce, op.stop), 'builtins.eval'],
    ['__builtin__.exec (protocol 0-2 module name)', pk(op.global('__builtin__', 'exec'), op.str('x=1'), op.tuple1, op.reduce, op.stop), 'builtins.exec'],
    ['builtins.getattr', pk(op.global('builtins', 'getattr'), op.global('os', 'path'), op.str('join'), op.tuple2, op.reduce, op.stop), 'builtins.getattr'],
    ['subprocess.Popen', pk(op.global('subprocess', 'Popen'), op.mark, op.str('true'), op.tuple, op.reduce, op.stop), 'subprocess.Popen'],
    ['STACK_GLOBAL os.system', pk(op.proto(4), 0x8c, 2, ascii('os'), 0x8c, 6, ascii('system'), 0x93, op.str('true'), op.tuple1, op.reduce, op.stop), 'os.system'],
    ['INST with arguments (protocol 0 instantiation calls the class)', pk(op.mark, op.str('true'), 0x69, ascii('os\nsystem\n'), op.stop), 'os.system'],
    ['OBJ with arguments', pk(op.mark, op.global('posix', 'system'), op.str('true'), 0x6f, op.stop), 'posix.system'],
    ['a rebuild function that is not allowed, inside _rebuild_from_type_v2', pk(
      op.global('torch._tensor', '_rebuild_from_type_v2'), op.mark, op.global('os', 'system'), op.global('torch', 'Tensor'),
      op.str('true'), op.tuple1, op.emptyDict, op.tuple, op.reduce, op.stop), 'os.system'],
    ['numpy reconstruct is not on the list', pk(op.global('numpy.core.multiarray', '_reconstruct'), op.emptyTuple, op.reduce, op.stop), 'numpy.core.multiarray._reconstruct'],
  ];
  for (const [what, bytes, name] of cases) {
    it(what, () => {
      const e = refusal(() => parsePickle(bytes));
      expect(e.message).toContain(`refused to load ${name}`);
    });
  }

  it('a global that is only referenced, never called, is a harmless name', () => {
    expect(parsePickle(pk(op.global('posix', 'system'), op.stop))).toEqual({ kind: 'global', module: 'posix', name: 'system' });
  });

  it('NEWOBJ of any class makes a record (cls.__new__ is never run)', () => {
    const v = parsePickle(pk(op.proto(2), op.global('subprocess', 'Popen'), op.emptyTuple, op.newobj,
      op.emptyDict, op.str('args'), op.str('true'), op.setitem, op.build, op.stop));
    expect(tagged(v)).toEqual({ record: 'subprocess.Popen', state: { dict: [['args', 'true']] } });
  });

  it('the opcode machine calls only what its table lists: with NO_CALLS even OrderedDict is refused', () => {
    const od = pk(op.global('collections', 'OrderedDict'), op.emptyTuple, op.reduce, op.stop);
    expect(isNode(parsePickle(od), 'dict')).toBe(true);
    expect(refusal(() => parseWith(od, NO_CALLS)).message).toContain('refused to load collections.OrderedDict');
    // cls.__new__ needs no table entry: a record without the PyTorch table, a tuple with it
    const size = pk(op.proto(2), op.global('torch', 'Size'), op.emptyTuple, op.newobj, op.stop);
    expect(tagged(parseWith(size, NO_CALLS))).toEqual({ record: 'torch.Size', state: undefined });
    expect(tagged(parsePickle(size))).toEqual({ tuple: [] });
  });

  it('the allow-list holds the torch rebuilds and containers, and nothing that runs code', () => {
    for (const n of ['torch._utils._rebuild_tensor_v2', 'torch._utils._rebuild_parameter', 'collections.OrderedDict', 'torch.Size']) {
      expect(isAllowedCall(n), n).toBe(true);
    }
    for (const n of ['builtins.eval', 'builtins.exec', 'builtins.getattr', 'builtins.__import__', 'os.system', 'posix.system', 'numpy.dtype']) {
      expect(isAllowedCall(n), n).toBe(false);
    }
  });
});

describe('malformed streams', () => {
  const bad: Array<[string, Uint8Array, RegExp]> = [
    ['empty input', new Uint8Array(0), /ends without a STOP/],
    ['unknown opcode', pk(0xff), /unknown pickle opcode 0xff/],
    ['protocol 6', pk(op.proto(6), op.none, op.stop), /protocol 6/],
    ['STOP on an empty stack', pk(op.stop), /empty stack/],
    ['GET before PUT', pk(op.binget(3), op.stop), /memo entry 3/],
    ['BINUNICODE longer than the stream', pk(0x58, [0xff, 0xff, 0xff, 0x7f], ascii('abc')), /needs 2147483647 bytes/],
    ['BINBYTES8 length past 2^53', pk(0x8e, [0, 0, 0, 0, 0, 0, 0x20, 0]), /needs/],
    ['FRAME longer than the stream', pk(op.proto(4), 0x95, [100, 0, 0, 0, 0, 0, 0, 0], op.none, op.stop), /frame of 100 bytes/],
    ['LONG4 with a negative length', pk(0x8b, [0xff, 0xff, 0xff, 0xff]), /negative byte count/],
    ['out-of-band buffer', pk(op.proto(5), 0x97, op.stop), /out-of-band buffers/],
    ['extension registry', pk(op.proto(2), 0x82, 1, op.stop), /extension registry/],
    ['APPEND onto a dict', pk(op.emptyDict, op.none, op.append, op.stop), /APPEND onto a dict/],
    ['SETITEMS without a MARK', pk(op.emptyDict, op.setitems, op.stop), /without a MARK/],
    ['REDUCE with a list of arguments', pk(op.global('collections', 'OrderedDict'), op.emptyList, op.reduce, op.stop), /not a tuple/],
    ['a persistent id without a loader', pk(op.str('x'), op.binpersid, op.stop), /persistent id/],
    ['bad float text', pk(0x46, ascii('1.2.3\n'), op.stop), /FLOAT text/],
    ['bad int text', pk(0x49, ascii('12a\n'), op.stop), /INT text/],
  ];
  for (const [what, bytes, msg] of bad) {
    it(what, () => {
      expect(refusal(() => parsePickle(bytes)).message).toMatch(msg);
    });
  }

  it('bounds the stack, the memo and the nesting of MARKs', () => {
    const many = pk(...Array.from({ length: 50 }, () => op.none), op.stop);
    expect(refusal(() => parsePickle(many, { maxStack: 10 })).message).toMatch(/more than 10 items/);
    const memo = pk(op.none, ...Array.from({ length: 20 }, (_, i) => op.binput(i)), op.stop);
    expect(refusal(() => parsePickle(memo, { maxMemo: 5 })).message).toMatch(/more than 5 memo entries/);
    const marks = pk(...Array.from({ length: 20 }, () => op.mark), op.stop);
    expect(refusal(() => parsePickle(marks, { maxMarks: 8 })).message).toMatch(/more than 8 nested MARKs/);
  });

  it('a persistent id that is not a torch storage is refused', () => {
    const s = pk(op.mark, op.str('storage'), op.global('os', 'system'), op.str('0'), op.str('cpu'), op.int1(4), op.tuple, op.binpersid, op.stop);
    expect(refusal(() => parseTorch(s)).message).toMatch(/names os\.system, which is not a torch storage class/);
    // inherited property names of the lookup tables are not storage classes or callables
    const proto = pk(op.mark, op.str('storage'), op.global('torch', 'constructor'), op.str('0'), op.str('cpu'), op.int1(4), op.tuple, op.binpersid, op.stop);
    expect(refusal(() => parseTorch(proto)).message).toMatch(/names torch\.constructor, which is not a torch storage class/);
    expect(refusal(() => parsePickle(pk(op.global('__proto__', 'toString'), op.emptyTuple, op.reduce, op.stop))).message)
      .toMatch(/refused to load __proto__\.toString/);
    const t = pk(op.mark, op.str('module'), op.tuple1, op.binpersid, op.stop);
    expect(refusal(() => parseTorch(t)).message).toMatch(/not a storage/);
  });

  it('tensor rebuild arguments are checked', () => {
    const storage = pk(op.mark, op.str('storage'), op.global('torch', 'FloatStorage'), op.str('0'), op.str('cpu'), op.int1(4), op.tuple, op.binpersid);
    const rebuild = (size: Uint8Array, stride: Uint8Array) => pk(
      op.global('torch._utils', '_rebuild_tensor_v2'), op.mark, storage, op.int1(0), size, stride, op.newFalse,
      op.none, op.tuple, op.reduce, op.stop);
    expect(refusal(() => parseTorch(rebuild(pk(op.int1(2), op.tuple1), pk(op.str('x'), op.tuple1)))).message)
      .toMatch(/_rebuild_tensor_v2: the stride\[0\] is a string, not an integer/);
    expect(refusal(() => parseTorch(rebuild(pk(op.int1(2), op.tuple1), pk(op.int1(1), op.int1(1), op.tuple2)))).message)
      .toMatch(/size has 1 dimensions but the stride has 2/);
  });
});

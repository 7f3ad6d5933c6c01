/**
 * .npy reader tests.
 * Fixture values were written by numpy 1.24 (see tests/fixtures/make_binary_fixtures.py) and are
 * compared with what NumPy itself computed (expected.json). Byte layouts come from the
 * `numpy.lib.format` docstring / NEP 1 as summarised in docs/references.md §1.1.
 */
import { describe, expect, it } from 'vitest';
import { parseNpy, readNpy } from '../../server/src/core/formats/npy';
import { halfToFloat } from '../../server/src/core/formats/elements';
import { DEFAULT_LIMITS, type DenseTensor } from '../../server/src/core/formats/types';
import {
  ascii, bytesOf, concat, expectTensor, expectUnreadable, expected, fixture, npyBytes, storageFor,
} from './binary-helpers';

const npyFiles = Object.entries(expected.files).filter(([, f]) => f.format === 'npy');

function read(bytes: Uint8Array, name = 'a.npy'): DenseTensor {
  const r = readNpy(bytes, name, DEFAULT_LIMITS);
  expect(r.format).toBe('npy');
  expect(r.tensors).toHaveLength(1);
  return r.tensors[0] as DenseTensor;
}

/** NumPy 1.24's header for a dict text: padded so that the data starts at byte 128. */
const v1 = (dict: string, data: Uint8Array) => npyBytes(dict, data, { headerLen: 118 });

describe('readNpy on files written by numpy.save (values from numpy 1.24, make_binary_fixtures.py)', () => {
  it('has fixtures to read', () => {
    expect(npyFiles.length).toBeGreaterThan(30);
  });

  for (const [file, exp] of npyFiles) {
    it(file, () => {
      const [name, want] = Object.entries(exp.tensors!)[0]!;
      const t = read(fixture(file), `some/dir/${file}`);
      expect(t.name).toBe(name);
      expectTensor(t, want);
      if (!want.strings) expect(t.data.constructor.name).toBe(storageFor(want.dtype, t.data));
    });
  }

  it('narrows int64 to Int32Array only when every value fits', () => {
    expect(read(fixture('le_i8.npy')).data).toBeInstanceOf(Int32Array);
    expect(read(fixture('be_i8.npy')).data).toBeInstanceOf(Int32Array);
    expect(read(fixture('le_u8.npy')).data).toBeInstanceOf(Int32Array);
    expect(read(fixture('le_i8_big.npy')).data).toBeInstanceOf(Float64Array);
    expect(read(fixture('be_u8_big.npy')).data).toBeInstanceOf(Float64Array);
    expect(read(fixture('le_u8_2p31.npy')).data).toBeInstanceOf(Float64Array);
    expect(read(fixture('le_i8_2p31.npy')).data).toBeInstanceOf(Float64Array);
    // 2^63 as uint64 and -2^53 as int64 come through exactly (values written by numpy 1.24)
    expect(Array.from(read(fixture('le_u8_big.npy')).data)).toEqual([0, 2 ** 32 + 5, 2 ** 63, 7, 2 ** 31]);
    expect(read(fixture('le_i8_big.npy')).data[6]).toBe(-(2 ** 53));
  });

  it('makes views without copying when the data is aligned and little-endian', () => {
    const bytes = fixture('le_f8.npy'); // data at byte 128
    const t = read(bytes);
    expect(t.data.buffer).toBe(bytes.buffer);
    expect(t.data.byteOffset).toBe(128);
    // same file at an odd offset inside a larger buffer: copied, same values
    const shifted = new Uint8Array(bytes.length + 1);
    shifted.set(bytes, 1);
    const u = read(shifted.subarray(1));
    expect(u.data.buffer).not.toBe(shifted.buffer);
    expect(Array.from(u.data)).toEqual(Array.from(t.data));
    // big-endian data is swapped into a copy
    const be = read(fixture('be_f8.npy'));
    expect(Array.from(be.data)).toEqual(Array.from(t.data));
  });

  it('reads int64 at an unaligned offset', () => {
    const bytes = fixture('le_i8_big.npy');
    const shifted = new Uint8Array(bytes.length + 3);
    shifted.set(bytes, 3);
    expect(Array.from(read(shifted.subarray(3)).data)).toEqual(Array.from(read(bytes).data));
  });

  it('reads any non-zero bool byte as 1 (types.ts: bool is 0/1)', () => {
    const b = npyBytes("{'descr': '|b1', 'fortran_order': False, 'shape': (4,), }", new Uint8Array([0, 2, 1, 255]), { align: 64 });
    expect(Array.from(read(b).data)).toEqual([0, 1, 1, 1]);
  });

  it('names the tensor after the file stem', () => {
    const b = fixture('edge_index.npy');
    expect(read(b, 'graphs/cora/edge_index.npy').name).toBe('edge_index');
    expect(read(b, 'C:\\data\\Train_Mask.NPY').name).toBe('Train_Mask');
    expect(parseNpy(b, 'member').name).toBe('member');
  });
});

describe('float16 → float32', () => {
  it('matches NumPy on all 65536 bit patterns (check values from numpy 1.24 in expected.json)', () => {
    // NumPy: np.arange(65536, dtype=u2).view(f2).astype(f4).view(u4); compare sums of the bits.
    const f = new Float32Array(1);
    const bits = new Uint32Array(f.buffer);
    let sum = 0;
    let weighted = 0;
    for (let h = 0; h < 65536; h++) {
      f[0] = halfToFloat(h);
      sum += bits[0]!;
      weighted = (weighted + ((h * bits[0]!) % 2147483647)) % 2147483647;
    }
    expect(sum).toBe(expected.half_to_float32.bits_sum);
    expect(weighted).toBe(expected.half_to_float32.weighted_bits_mod_2p31m1);
  });

  it('decodes the IEEE 754 binary16 landmarks', () => {
    // binary16: 1 sign, 5 exponent (bias 15), 10 fraction bits (IEEE 754-2008 §3.6)
    expect(halfToFloat(0x3c00)).toBe(1);
    expect(halfToFloat(0xc100)).toBe(-2.5);
    expect(halfToFloat(0x7bff)).toBe(65504);
    expect(halfToFloat(0x0001)).toBe(2 ** -24); // smallest subnormal
    expect(halfToFloat(0x03ff)).toBe(1023 * 2 ** -24); // largest subnormal
    expect(halfToFloat(0x0400)).toBe(2 ** -14); // smallest normal
    expect(halfToFloat(0x7c00)).toBe(Infinity);
    expect(halfToFloat(0xfc00)).toBe(-Infinity);
    expect(halfToFloat(0x7e00)).toBeNaN();
    expect(Object.is(halfToFloat(0x8000), -0)).toBe(true);
  });
});

describe('byte layouts of docs/references.md §1.1 (np.save in NumPy 1.24), built by hand', () => {
  const i8 = bytesOf(new BigInt64Array([0n, 1n, 2n, 3n, 4n, 5n]));

  it('arange(6, <i8).reshape(2,3): HEADER_LEN 118 (76 00), data at 128, 176 bytes', () => {
    const b = v1("{'descr': '<i8', 'fortran_order': False, 'shape': (2, 3), }", i8);
    expect([b[8], b[9]]).toEqual([0x76, 0x00]);
    expect(b.length).toBe(176);
    expect(b[127]).toBe(0x0a);
    const t = read(b);
    expect(t.shape).toEqual([2, 3]);
    expect(Array.from(t.data)).toEqual([0, 1, 2, 3, 4, 5]);
  });

  it('zeros(3, <f4): 140 bytes', () => {
    const b = v1("{'descr': '<f4', 'fortran_order': False, 'shape': (3,), }", new Uint8Array(12));
    expect(b.length).toBe(140);
    expect(Array.from(read(b).data)).toEqual([0, 0, 0]);
  });

  it('0-d array(5.0): 136 bytes, byte for byte what numpy.save wrote', () => {
    const b = v1("{'descr': '<f8', 'fortran_order': False, 'shape': (), }", bytesOf(new Float64Array([5])));
    expect(b.length).toBe(136);
    expect(b).toEqual(fixture('scalar_f8.npy'));
    const t = read(b);
    expect(t.shape).toEqual([]);
    expect(Array.from(t.data)).toEqual([5]);
  });

  it('Fortran-ordered f8 2x3: 176 bytes, column-major data comes back in C order', () => {
    const cm = bytesOf(new Float64Array([0, 3, 1, 4, 2, 5])); // columns of [[0,1,2],[3,4,5]]
    const b = v1("{'descr': '<f8', 'fortran_order': True, 'shape': (2, 3), }", cm);
    expect(b.length).toBe(176);
    expect(b).toEqual(fixture('fortran_f8_2x3.npy'));
    expect(Array.from(read(b).data)).toEqual([0, 1, 2, 3, 4, 5]);
  });

  it('bool (2,): 130 bytes', () => {
    const b = v1("{'descr': '|b1', 'fortran_order': False, 'shape': (2,), }", new Uint8Array([1, 0]));
    expect(b.length).toBe(130);
    const t = read(b);
    expect(t.dtype).toBe('bool');
    expect(Array.from(t.data)).toEqual([1, 0]);
  });

  it('big-endian int32 2x2: 144 bytes', () => {
    const data = new Uint8Array([0, 0, 0, 1, 0xff, 0xff, 0xff, 0xfe, 0x00, 0x04, 0x93, 0xe0, 0, 0, 0, 4]);
    const b = v1("{'descr': '>i4', 'fortran_order': False, 'shape': (2, 2), }", data);
    expect(b.length).toBe(144);
    expect(b).toEqual(fixture('be_i4_2x2.npy'));
    expect(Array.from(read(b).data)).toEqual([1, -2, 300000, 4]);
  });

  it('empty int64 (0, 2): 128 bytes, no data', () => {
    const b = v1("{'descr': '<i8', 'fortran_order': False, 'shape': (0, 2), }", new Uint8Array(0));
    expect(b.length).toBe(128);
    expect(b).toEqual(fixture('empty_i8_0x2.npy'));
    const t = read(b);
    expect(t.shape).toEqual([0, 2]);
    expect(t.data.length).toBe(0);
  });

  it('v2.0 of arange(3, <i4): uint32 HEADER_LEN 116, data at 128', () => {
    const b = npyBytes("{'descr': '<i4', 'fortran_order': False, 'shape': (3,), }", bytesOf(new Int32Array([0, 1, 2])), {
      version: 2, headerLen: 116,
    });
    expect(b).toEqual(fixture('v2_i4.npy'));
    expect(Array.from(read(b).data)).toEqual([0, 1, 2]);
  });

  it('accepts the old 16-byte-aligned v1.0 layout (NEP 1)', () => {
    const b = npyBytes("{'descr': '<i4', 'fortran_order': False, 'shape': (3,), }", bytesOf(new Int32Array([7, 8, 9])), {
      align: 16,
    });
    expect((10 + b[8]! + (b[9]! << 8)) % 16).toBe(0);
    expect(10 + b[8]! + (b[9]! << 8)).toBeLessThan(128);
    expect(Array.from(read(b).data)).toEqual([7, 8, 9]);
  });
});

describe('header dictionary parsing', () => {
  const data = bytesOf(new Int16Array([1, -2, 3, -4, 5, -6]));
  const ok = (dict: string) => read(npyBytes(dict, data, { align: 64 }));

  it('takes any key order, either quote style, no trailing comma, extra spaces', () => {
    for (const dict of [
      "{'shape': (2, 3), 'fortran_order': False, 'descr': '<i2'}",
      '{"descr":"<i2","fortran_order":False,"shape":(2,3)}',
      "{ 'descr' : '<i2' ,\t'fortran_order' : False , 'shape' : ( 2 , 3 , ) , }",
      "{'descr': '<i2', 'fortran_order': False, 'shape': (2L, 3L)}", // Python 2 writers
      "{u'descr': u'<i2', u'fortran_order': False, u'shape': (2, 3)}",
      "{'descr': '<i2', 'fortran_order': False, 'shape': [2, 3]}",
    ]) {
      const t = ok(dict);
      expect(t.shape).toEqual([2, 3]);
      expect(Array.from(t.data)).toEqual([1, -2, 3, -4, 5, -6]);
    }
  });

  it('reads (6,) and () shapes', () => {
    expect(ok("{'descr': '<i2', 'fortran_order': False, 'shape': (6,), }").shape).toEqual([6]);
    expect(ok("{'descr': '<i2', 'fortran_order': False, 'shape': (), }").data.length).toBe(1);
  });

  it('reads the v3.0 (utf-8) header written by write_array(version=(3, 0))', () => {
    const t = read(fixture('v3_f8.npy'));
    expect(Array.from(t.data)).toEqual([1.5, -2, NaN, 4]);
  });

  it('ignores trailing bytes after the data', () => {
    const b = concat(npyBytes("{'descr': '<i2', 'fortran_order': False, 'shape': (6,), }", data), new Uint8Array(5));
    expect(read(b).data.length).toBe(6);
  });
});

describe('unreadable .npy input', () => {
  const good = fixture('le_i4.npy'); // 6 x int32, data at 128
  const hdr = (dict: string, payload = new Uint8Array(64)) => npyBytes(dict, payload, { align: 64 });

  it('bad magic', () => {
    expectUnreadable(() => readNpy(ascii('PK\x03\x04 not numpy at all'), 'x.npy', DEFAULT_LIMITS), /magic bytes/, 0);
  });

  it('file shorter than the preamble', () => {
    expectUnreadable(() => readNpy(good.subarray(0, 4), 'x.npy', DEFAULT_LIMITS), /too short/);
    expectUnreadable(() => readNpy(good.subarray(0, 9), 'x.npy', DEFAULT_LIMITS), /ends inside its preamble/);
  });

  it('unknown format version', () => {
    const b = good.slice();
    b[6] = 4;
    expectUnreadable(() => readNpy(b, 'x.npy', DEFAULT_LIMITS), /version 4\.0/, 6);
  });

  it('header length past the end of the file', () => {
    const b = good.slice(0, 100);
    expectUnreadable(() => readNpy(b, 'x.npy', DEFAULT_LIMITS), /header length 118 runs past the end.*100 bytes/, 8);
  });

  it('header over the configured limit', () => {
    expectUnreadable(
      () => readNpy(good, 'x.npy', { ...DEFAULT_LIMITS, maxHeaderBytes: 64 }), /header length 118 is over the limit of 64/,
    );
  });

  it('truncated data', () => {
    expectUnreadable(
      () => readNpy(good.subarray(0, good.length - 1), 'x.npy', DEFAULT_LIMITS),
      /truncated: shape \(6\) of int32 needs 24 bytes from byte 128, but the file has 23/,
      128,
    );
  });

  it('shape bigger than the file', () => {
    expectUnreadable(
      () => readNpy(hdr("{'descr': '<f8', 'fortran_order': False, 'shape': (100000, 100000), }"), 'x.npy', DEFAULT_LIMITS),
      /needs 80000000000 bytes/,
    );
  });

  it('bad dictionaries', () => {
    const cases: [string, RegExp][] = [
      ["{'descr' '<i4', 'fortran_order': False, 'shape': (1,), }", /expected ':' after key 'descr'/],
      ["{'descr': '<i4, 'fortran_order': False, 'shape': (1,), }", /valid dictionary/],
      ["{'descr': '<i4', 'fortran_order': False, 'shape': (1,), ", /text ends|expected ','/],
      ["{'descr': '<i4', 'fortran_order': False}", /no 'shape' key/],
      ["{'descr': '<i4', 'fortran_order': False, 'shape': (1,), 'extra': 1}", /unexpected key 'extra'/],
      ["{'descr': '<i4', 'fortran_order': 0, 'shape': (1,)}", /'fortran_order' is not True or False/],
      ["{'descr': '<i4', 'fortran_order': False, 'shape': (-1,)}", /not a non-negative integer/],
      ["{'descr': '<i4', 'fortran_order': False, 'shape': (1.5,)}", /not an integer/],
      ["{'descr': '<i4', 'fortran_order': False, 'shape': (100000000000000000000,)}", /too large/],
      ["{'descr': '<i1', 'fortran_order': False, 'shape': (4294967296, 4294967296, 4294967296)}", /too many elements/],
      ["{'descr': '<i4', 'fortran_order': False, 'shape': 3}", /'shape' is not a tuple/],
      ["{'descr': '<i4', 'fortran_order': False, 'shape': (1,)} junk", /unexpected text after/],
      ["['descr', '<i4']", /not a dictionary/],
      ["{'descr': '<i4', 'fortran_order': False, 'shape': (1,), 'descr': '<i4'}", /appears twice/],
      ["{'descr': '<i4', 'fortran_order': Nope, 'shape': (1,)}", /unexpected name 'Nope'/],
      ['{' + '('.repeat(40) + ')'.repeat(40) + '}', /nested too deeply/],
    ];
    for (const [dict, msg] of cases) {
      expectUnreadable(() => readNpy(hdr(dict), 'x.npy', DEFAULT_LIMITS), msg);
    }
  });

  it('reports the byte offset of a header syntax error', () => {
    // {'descr' '<i4' ... : the error is at the second string, header character 9 → byte 19
    const e = expectUnreadable(
      () => readNpy(hdr("{'descr' '<i4', 'fortran_order': False, 'shape': (1,), }"), 'x.npy', DEFAULT_LIMITS), /byte 19/,
    );
    expect(e.offset).toBe(19);
  });

  it('dtypes that are not read', () => {
    const d = (descr: string) => hdr(`{'descr': ${descr}, 'fortran_order': False, 'shape': (1,), }`);
    expectUnreadable(() => readNpy(d("'|O'"), 'x.npy', DEFAULT_LIMITS), /pickled object arrays are not read/);
    expectUnreadable(() => readNpy(d("[('a', '<i4'), ('b', '<f8')]"), 'x.npy', DEFAULT_LIMITS), /structured/);
    expectUnreadable(() => readNpy(d("'<c8'"), 'x.npy', DEFAULT_LIMITS), /complex/);
    expectUnreadable(() => readNpy(d("'<M8[ns]'"), 'x.npy', DEFAULT_LIMITS), /unknown dtype/);
    expectUnreadable(() => readNpy(d("'<f16'"), 'x.npy', DEFAULT_LIMITS), /float width/);
    expectUnreadable(() => readNpy(d("'|S0'"), 'x.npy', DEFAULT_LIMITS), /no usable width/);
    expectUnreadable(() => readNpy(d('7'), 'x.npy', DEFAULT_LIMITS), /'descr' is not a string/);
  });

  it('v3.0 header that is not UTF-8', () => {
    const b = npyBytes("{'descr': '<i4', 'fortran_order': False, 'shape': (1,), }", new Uint8Array(4), { version: 3 });
    b[20] = 0xff;
    expectUnreadable(() => readNpy(b, 'x.npy', DEFAULT_LIMITS), /not valid UTF-8/, 12);
  });
});

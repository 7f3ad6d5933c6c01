/**
 * safetensors reader tests.
 * Fixtures: bytes written by tests/fixtures/make_binary_fixtures.py from the published layout
 * (docs/references.md §1.4), with values as numpy 1.24 decodes them (expected.json). Two more byte
 * vectors are copied from the tests of the reference implementation (huggingface/safetensors,
 * safetensors/src/tensor.rs: test_serialization and test_empty).
 */
import { describe, expect, it } from 'vitest';
import { readSafetensors, topLevelKeys } from '../../server/src/core/formats/safetensors';
import { DEFAULT_LIMITS, type DenseTensor } from '../../server/src/core/formats/types';
import {
  bytesOf, concat, expectTensor, expectUnreadable, expected, fixture, le, safetensorsBytes, storageFor,
} from './binary-helpers';

const read = (b: Uint8Array) => readSafetensors(b, 'model.safetensors', DEFAULT_LIMITS);
const f32 = (...v: number[]) => bytesOf(new Float32Array(v));

describe('safetensors fixtures (values as numpy 1.24 decodes them, make_binary_fixtures.py)', () => {
  for (const [file, exp] of Object.entries(expected.files)) {
    if (exp.format !== 'safetensors') continue;
    it(file, () => {
      const bytes = fixture(file);
      expect(bytes.length).toBe(exp.size);
      const r = read(bytes);
      expect(r.format).toBe('safetensors');
      expect(r.tensors.map((t) => t.name)).toEqual(exp.order); // header order, even for integer-like names
      for (const t of r.tensors as DenseTensor[]) {
        const want = exp.tensors![t.name]!;
        expectTensor(t, want);
        expect(t.data.constructor.name).toBe(storageFor(want.dtype, t.data));
      }
    });
  }

  it('docs/references.md §1.4 example: N = 160 (a0 00 ..), data from byte 168, 256 bytes', () => {
    const bytes = fixture('example.safetensors');
    expect(Array.from(bytes.subarray(0, 8))).toEqual([0xa0, 0, 0, 0, 0, 0, 0, 0]);
    expect(bytes.length).toBe(256);
    const [ei, x] = read(bytes).tensors as DenseTensor[];
    expect(ei!.dtype).toBe('int64');
    expect(ei!.data).toBeInstanceOf(Int32Array);
    expect(Array.from(ei!.data)).toEqual([0, 1, 1, 2, 1, 0, 2, 1]);
    expect(x!.shape).toEqual([3, 2]);
    expect(x!.data.byteOffset).toBe(168 + 64); // aligned F32: a view into the file
    expect(x!.data.buffer).toBe(bytes.buffer);
  });

  it('the same file built here byte for byte', () => {
    const header =
      '{"__metadata__":{"format":"pt"},"edge_index":{"dtype":"I64","shape":[2,4],"data_offsets":[0,64]},' +
      '"x":{"dtype":"F32","shape":[3,2],"data_offsets":[64,88]}}';
    const data = concat(bytesOf(new BigInt64Array([0n, 1n, 1n, 2n, 1n, 0n, 2n, 1n])), f32(0, 0.5, 1, 1.5, 2, 2.5));
    expect(safetensorsBytes(header, data, 160)).toEqual(fixture('example.safetensors'));
  });

  it('bfloat16 is the upper half of float32', () => {
    const bf = (read(fixture('all_dtypes.safetensors')).tensors as DenseTensor[]).find((t) => t.name === 'bf16')!;
    expect(Array.from(bf.data)).toEqual([1, -2.5, 0.15625, 2 ** 100, -Infinity, NaN]);
  });
});

describe('byte vectors from the reference implementation (safetensors/src/tensor.rs)', () => {
  it('test_serialization: attn.0, F32 [1,2,3]', () => {
    const bytes = new Uint8Array([
      64, 0, 0, 0, 0, 0, 0, 0, 123, 34, 97, 116, 116, 110, 46, 48, 34, 58, 123, 34, 100,
      116, 121, 112, 101, 34, 58, 34, 70, 51, 50, 34, 44, 34, 115, 104, 97, 112, 101, 34,
      58, 91, 49, 44, 50, 44, 51, 93, 44, 34, 100, 97, 116, 97, 95, 111, 102, 102, 115,
      101, 116, 115, 34, 58, 91, 48, 44, 50, 52, 93, 125, 125, 0, 0, 0, 0, 0, 0, 128, 63,
      0, 0, 0, 64, 0, 0, 64, 64, 0, 0, 128, 64, 0, 0, 160, 64,
    ]);
    const [t] = read(bytes).tensors as DenseTensor[];
    expect(t!.name).toBe('attn.0');
    expect(t!.shape).toEqual([1, 2, 3]);
    expect(Array.from(t!.data)).toEqual([0, 1, 2, 3, 4, 5]);
  });

  it('test_empty: no tensors, with and without metadata', () => {
    expect(read(new Uint8Array([8, 0, 0, 0, 0, 0, 0, 0, 123, 125, 32, 32, 32, 32, 32, 32])).tensors).toEqual([]);
    const withMeta = new Uint8Array([
      40, 0, 0, 0, 0, 0, 0, 0, 123, 34, 95, 95, 109, 101, 116, 97, 100, 97, 116, 97, 95,
      95, 34, 58, 123, 34, 102, 114, 97, 109, 101, 119, 111, 114, 107, 34, 58, 34, 112,
      116, 34, 125, 125, 32, 32, 32, 32, 32,
    ]);
    expect(read(withMeta).tensors).toEqual([]);
  });
});

describe('topLevelKeys', () => {
  it('lists top-level keys in file order, with duplicates, skipping nested ones', () => {
    expect(topLevelKeys('{"b":{"x":1,"y":[{"z":2}]},"2":"s,t\\"{","a":[1,2],"b":null}')).toEqual(['b', '2', 'a', 'b']);
    expect(topLevelKeys(' { "\\u0041" : 1 } ')).toEqual(['A']);
    expect(topLevelKeys('{}')).toEqual([]);
  });
});

describe('unreadable safetensors', () => {
  const t = (name: string, dtype: string, shape: number[], b: number, e: number) =>
    `"${name}":{"dtype":"${dtype}","shape":${JSON.stringify(shape)},"data_offsets":[${b},${e}]}`;
  const file = (entries: string[], data: Uint8Array, extra = '') =>
    safetensorsBytes(`{${[extra, ...entries].filter(Boolean).join(',')}}`, data);

  it('shorter than 8 bytes', () => {
    expectUnreadable(() => read(new Uint8Array(5)), /too short/);
  });

  it('N larger than the limit or than the file', () => {
    expectUnreadable(() => read(concat(le(2 ** 40, 8), new Uint8Array(16))), /header size 1099511627776 is over the limit/, 0);
    expectUnreadable(
      () => readSafetensors(fixture('example.safetensors'), 'm', { ...DEFAULT_LIMITS, maxHeaderBytes: 100 }),
      /header size 160 is over the limit of 100/,
    );
    expectUnreadable(() => read(concat(le(500, 8), new Uint8Array(100))), /header size 500 runs past the end of the file \(108 bytes\)/, 0);
  });

  it('header that is not UTF-8, not JSON, or not an object', () => {
    expectUnreadable(() => read(concat(le(4, 8), new Uint8Array([0x7b, 0xff, 0xfe, 0x7d]))), /not valid UTF-8/, 8);
    expectUnreadable(() => read(safetensorsBytes('{"a":', new Uint8Array(0))), /not valid JSON/, 8);
    expectUnreadable(() => read(safetensorsBytes('[1,2]', new Uint8Array(0))), /not a JSON object/);
  });

  it('overlapping offsets', () => {
    expectUnreadable(
      () => read(file([t('a', 'F32', [2], 0, 8), t('b', 'F32', [2], 4, 12)], new Uint8Array(12))),
      /entries 'a' and 'b' overlap at data byte 4/,
    );
  });

  it('offsets that do not match the shape', () => {
    expectUnreadable(
      () => read(file([t('a', 'F32', [3, 2], 0, 20)], new Uint8Array(20))),
      /'a': shape \[3, 2\] of F32 needs 24 bytes but data_offsets \[0, 20\] span 20/,
    );
  });

  it('offsets past the end of the file', () => {
    expectUnreadable(() => read(file([t('a', 'U8', [16], 0, 16)], new Uint8Array(8))), /run past the end of the file/);
  });

  it('gaps and uncovered trailing bytes (the reference implementation refuses both)', () => {
    expectUnreadable(() => read(file([t('a', 'U8', [4], 4, 8)], new Uint8Array(8))), /gap: bytes 0\.\.4/);
    expectUnreadable(() => read(file([t('a', 'U8', [4], 0, 4)], new Uint8Array(8))), /cover 4 data bytes, but the file holds 8/);
  });

  it('end before begin, bad offsets, bad shapes', () => {
    expectUnreadable(() => read(file([t('a', 'U8', [0], 4, 0)], new Uint8Array(4))), /end before they begin/);
    expectUnreadable(() => read(safetensorsBytes('{"a":{"dtype":"U8","shape":[1],"data_offsets":[0]}}', new Uint8Array(1))), /not a pair/);
    expectUnreadable(() => read(safetensorsBytes('{"a":{"dtype":"U8","shape":[-1],"data_offsets":[0,1]}}', new Uint8Array(1))), /not a list of sizes/);
    expectUnreadable(() => read(safetensorsBytes('{"a":{"dtype":"U8","shape":[1.5],"data_offsets":[0,1]}}', new Uint8Array(1))), /not a list of sizes/);
    expectUnreadable(() => read(safetensorsBytes('{"a":{"dtype":"U8","data_offsets":[0,1]}}', new Uint8Array(1))), /no shape list/);
    expectUnreadable(() => read(safetensorsBytes('{"a":[]}', new Uint8Array(0))), /'a' is not an object/);
    expectUnreadable(
      () => read(file([t('a', 'F64', [2 ** 30, 2 ** 30], 0, 8)], new Uint8Array(8))), /shape is too large|needs/,
    );
  });

  it('non-string metadata', () => {
    expectUnreadable(() => read(file([], new Uint8Array(0), '"__metadata__":{"epochs":3}')), /'__metadata__' value of 'epochs' is not a string/);
    expectUnreadable(() => read(file([], new Uint8Array(0), '"__metadata__":"pt"')), /'__metadata__' is not an object/);
  });

  it('duplicate names (JSON.parse would keep only the last)', () => {
    expectUnreadable(
      () => read(file([t('a', 'U8', [1], 0, 1), t('a', 'U8', [1], 1, 2)], new Uint8Array(2))), /names 'a' twice/,
    );
  });

  it('8-bit floats and unknown dtypes', () => {
    expectUnreadable(() => read(file([t('a', 'F8_E4M3', [1], 0, 1)], new Uint8Array(1))), /dtype F8_E4M3 is not supported/);
    expectUnreadable(() => read(file([t('a', 'F8_E5M2', [1], 0, 1)], new Uint8Array(1))), /F8_E5M2 is not supported/);
    expectUnreadable(() => read(file([t('a', 'C64', [1], 0, 8)], new Uint8Array(8))), /unknown dtype 'C64'/);
  });
});

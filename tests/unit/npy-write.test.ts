/**
 * The .npy and .npz writers against files NumPy 1.24 wrote (tests/fixtures/make_write_fixtures.py →
 * tests/fixtures/write): every byte of an .npy (header layout per numpy.lib.format, NEP 1 / docs/references.md
 * §1.1, including the growth-axis spaces and the full 64 spaces NumPy adds to an already aligned
 * header), and the members of an .npz as numpy.savez stores them. ZIP header fields per PKWARE
 * APPNOTE.TXT 4.3.7 (local file header), 4.3.9 (data descriptor), 4.4.4 (flags). That NumPy itself
 * loads what these write is tested in tests/debug/python-snippet.test.ts (`npm run test:debug`).
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { deflateSync } from 'fflate';
import { describe, expect, it, vi } from 'vitest';
import { encodeNpy, encodeNpyFloat32, encodeNpyInt64, npyHeader } from '../../server/src/core/formats/npy-write';
import { encodeNpz, encodeZip } from '../../server/src/core/formats/write';
import { crc32 } from '../../server/src/core/formats/crc32';
import { openZip } from '../../server/src/core/formats/zip';
import { DEFAULT_LIMITS } from '../../server/src/core/formats/types';

const DIR = path.join(__dirname, '../fixtures/write');
interface FileCase { file: string; descr: string; shape: number[]; values: number[] }
const expected = JSON.parse(fs.readFileSync(path.join(DIR, 'expected.json'), 'utf8')) as {
  files: Record<string, FileCase>;
  headers: Array<{ descr: string; shape: number[]; hex: string }>;
  npz: { file: string; arrays: Record<string, string>; members: Array<{ name: string; method: number; crc32: number; size: number }> };
};

const read = (file: string) => new Uint8Array(fs.readFileSync(path.join(DIR, file)));
const hex = (b: Uint8Array) => Buffer.from(b.buffer, b.byteOffset, b.length).toString('hex');

/** The element bytes of `values` in NumPy's `descr` (all little-endian or single-byte here). */
function elementBytes(descr: string, values: number[]): Uint8Array {
  const typed = (() => {
    switch (descr) {
      case '<i8': return BigInt64Array.from(values, (v) => BigInt(v));
      case '<f8': return Float64Array.from(values);
      case '<f4': return Float32Array.from(values);
      case '<i4': return Int32Array.from(values);
      case '|b1': case '|u1': return Uint8Array.from(values);
      default: throw new Error(`no test encoding for ${descr}`);
    }
  })();
  return new Uint8Array(typed.buffer, typed.byteOffset, typed.byteLength);
}

describe('.npy: byte for byte what numpy.save wrote', () => {
  for (const [name, c] of Object.entries(expected.files)) {
    it(`${name}: ${c.descr} shape (${c.shape.join(', ')})`, () => {
      const want = read(c.file);
      expect(hex(encodeNpy(c.descr, c.shape, elementBytes(c.descr, c.values)))).toBe(hex(want));
      if (c.descr === '<i8') expect(hex(encodeNpyInt64(c.shape, c.values))).toBe(hex(want));
      if (c.descr === '<f4' && c.shape.length === 2) {
        expect(hex(encodeNpyFloat32(c.shape[0]!, c.shape[1]!, Float32Array.from(c.values)))).toBe(hex(want));
      }
    });
  }

  it('headers of shapes too large to allocate, numpy.lib.format.write_array_header_1_0', () => {
    for (const h of expected.headers) {
      const got = npyHeader(h.descr, h.shape);
      expect(got.length % 64, h.shape.join('x')).toBe(0);
      expect(hex(got), h.shape.join('x')).toBe(h.hex);
    }
  });

  it('an already aligned header gets a full 64 spaces, as NumPy pads it', () => {
    const aligned = expected.headers.find((h) => h.shape.length === 8)!;
    const text = Buffer.from(npyHeader(aligned.descr, aligned.shape).subarray(10)).toString('latin1');
    const dict = text.slice(0, text.indexOf('}') + 1);
    // 21 − 1 growth spaces for the one-digit first axis, then the 64 of the padding.
    expect(text.length - dict.length - 1).toBe(20 + 64);
    expect((10 + dict.length + 20 + 1) % 64).toBe(0);
  });

  it('refuses shapes that are not whole non-negative numbers', () => {
    expect(() => npyHeader('<i8', [2, -1])).toThrow(/non-negative integers/);
    expect(() => npyHeader('<i8', [1.5])).toThrow(/non-negative integers/);
  });
});

describe('.npz: the members numpy.savez stores', () => {
  const npy = (key: string) => read(expected.files[key]!.file);
  const ours = encodeNpz(expected.npz.members.map((m) => {
    const name = m.name.replace(/\.npy$/, '');
    return { name, npy: npy(expected.npz.arrays[name]!) };
  }));

  it('same member names, order, stored method, CRC-32, sizes and bytes as NumPy’s archive', () => {
    const theirs = openZip(read(expected.npz.file), DEFAULT_LIMITS);
    const mine = openZip(ours, DEFAULT_LIMITS);
    expect(mine.entries.map((e) => ({ name: e.name, method: e.method, crc32: e.crc32, size: e.uncompressedSize })))
      .toEqual(expected.npz.members);
    mine.entries.forEach((e, i) => {
      expect(e.compressedSize).toBe(e.uncompressedSize);
      expect(hex(mine.readEntry(e))).toBe(hex(theirs.readEntry(theirs.entries[i]!)));
    });
  });

  it('local headers (APPNOTE 4.3.7) carry the CRC and sizes themselves: stored, no data descriptor, fixed 1980 time', () => {
    const dv = new DataView(ours.buffer, ours.byteOffset, ours.length);
    const mine = openZip(ours, DEFAULT_LIMITS);
    for (const e of mine.entries) {
      const h = e.localHeaderOffset;
      expect(dv.getUint32(h, true)).toBe(0x04034b50);
      expect(dv.getUint16(h + 4, true)).toBe(20); // version needed: 2.0
      expect(dv.getUint16(h + 6, true) & 0x8).toBe(0); // bit 3 clear: sizes are in this header
      expect(dv.getUint16(h + 8, true)).toBe(0); // stored
      expect(dv.getUint32(h + 10, true)).toBe(0x00210000); // MS-DOS 1980-01-01 00:00
      expect(dv.getUint32(h + 14, true)).toBe(e.crc32);
      expect(dv.getUint32(h + 18, true)).toBe(e.uncompressedSize);
      expect(dv.getUint32(h + 22, true)).toBe(e.uncompressedSize);
      const nameLength = dv.getUint16(h + 26, true);
      expect(Buffer.from(ours.subarray(h + 30, h + 30 + nameLength)).toString()).toBe(e.name);
      expect(crc32(mine.readEntry(e))).toBe(e.crc32);
    }
  });

  it('the same arrays give the same bytes at any time (no clock in the archive)', () => {
    const now = encodeNpz([{ name: 'edge_index', npy: npy('edge_index_i8') }]);
    vi.useFakeTimers();
    try {
      vi.setSystemTime(new Date(2031, 5, 7, 13, 45, 10));
      expect(hex(encodeNpz([{ name: 'edge_index', npy: npy('edge_index_i8') }]))).toBe(hex(now));
    } finally {
      vi.useRealTimers();
    }
  });
});

describe('ZIP with members passed through as they were (corrected copies)', () => {
  it('keeps a deflated member’s bytes, with its CRC and sizes in a data descriptor (APPNOTE 4.3.9)', () => {
    const a = read('x_f8.npy'), b = read('edge_index_i8.npy');
    const deflated = deflateSync(b);
    const zip = encodeZip([
      { name: 'x.npy', method: 0, data: a, crc32: crc32(a), uncompressedSize: a.length },
      { name: 'edge_index.npy', method: 8, data: deflated, crc32: crc32(b), uncompressedSize: b.length },
    ]);
    const z = openZip(zip, DEFAULT_LIMITS);
    expect(z.entries.map((e) => [e.name, e.method, e.compressedSize, e.uncompressedSize]))
      .toEqual([['x.npy', 0, a.length, a.length], ['edge_index.npy', 8, deflated.length, b.length]]);
    expect(hex(z.readEntry(z.entries[0]!))).toBe(hex(a));
    expect(hex(z.readEntry(z.entries[1]!))).toBe(hex(b));
    const e = z.entries[1]!;
    const start = z.dataOffset(e);
    expect(hex(zip.subarray(start, start + deflated.length))).toBe(hex(deflated)); // not inflated and deflated again
    const dv = new DataView(zip.buffer, zip.byteOffset, zip.length);
    expect(dv.getUint16(e.localHeaderOffset + 6, true) & 0x8).toBe(0x8);
    const dd = start + deflated.length;
    expect([dv.getUint32(dd, true), dv.getUint32(dd + 4, true), dv.getUint32(dd + 8, true), dv.getUint32(dd + 12, true)])
      .toEqual([0x08074b50, crc32(b), deflated.length, b.length]);
  });
});

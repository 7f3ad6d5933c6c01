/**
 * ZIP reader tests. Archives written by numpy 1.24 (numpy.savez / savez_compressed, see
 * tests/fixtures/make_binary_fixtures.py) plus archives built here by hand from PKWARE APPNOTE.TXT
 * §4.3 (local header, central directory, ZIP64 end record + locator, end of central directory)
 * and §4.5.3 (ZIP64 extended information extra field).
 */
import * as zlib from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { deflateSync } from 'fflate';
import { MAX_DEFLATE_RATIO, openZip, type ZipArchive, type ZipEntry } from '../../server/src/core/formats/zip';
import { crc32 } from '../../server/src/core/formats/crc32';
import { DEFAULT_LIMITS } from '../../server/src/core/formats/types';
import { ascii, buildZip, concat, expectUnreadable, expected, fixture, le } from './binary-helpers';

const hello = ascii('hello, zip members');
const zeros = new Uint8Array(100_000);

describe('openZip on numpy archives (written by numpy 1.24, make_binary_fixtures.py)', () => {
  for (const [file, exp] of Object.entries(expected.files)) {
    if (exp.format !== 'npz' && exp.format !== 'sparse-npz') continue;
    it(file, () => {
      const bytes = fixture(file);
      const zip = openZip(bytes, DEFAULT_LIMITS);
      if (exp.tensors) {
        expect(zip.entries.map((e) => e.name).sort()).toEqual(Object.keys(exp.tensors).map((k) => `${k}.npy`).sort());
      }
      for (const e of zip.entries) {
        expect(e.method).toBe(exp.compressed ? 8 : 0); // docs/references.md §1.2: savez stores, savez_compressed deflates
        const data = zip.readEntry(e);
        expect(data.length).toBe(e.uncompressedSize);
        expect(Array.from(data.subarray(0, 6))).toEqual([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59]);
        if (e.method === 0) expect(data.buffer).toBe(bytes.buffer); // stored: a view, no copy
      }
    });
  }

  it('skips the 20-byte ZIP64 extra field numpy writes in every local header (docs/references.md §1.2)', () => {
    const bytes = fixture('graph_stored.npz');
    const zip = openZip(bytes, DEFAULT_LIMITS);
    for (const e of zip.entries) {
      const h = e.localHeaderOffset;
      const nameLen = bytes[h + 26]! | (bytes[h + 27]! << 8);
      const extraLen = bytes[h + 28]! | (bytes[h + 29]! << 8);
      expect(extraLen).toBe(20);
      expect(bytes[h + 30 + nameLen]).toBe(0x01); // header id 0x0001
      expect(zip.dataOffset(e)).toBe(h + 30 + nameLen + 20);
    }
  });
});

describe('hand-built archives', () => {
  it('reads stored and deflated members', () => {
    const zip = openZip(buildZip([{ name: 'a.txt', data: hello }, { name: 'b.bin', data: zeros, method: 8 }]), DEFAULT_LIMITS);
    expect(zip.entries.map((e) => [e.name, e.method])).toEqual([['a.txt', 0], ['b.bin', 8]]);
    expect(zip.readEntry(zip.entries[0]!)).toEqual(hello);
    expect(zip.readEntry(zip.entries[1]!)).toEqual(zeros);
    expect(zip.entries[1]!.compressedSize).toBeLessThan(1000);
  });

  it('reads ZIP64 end records and ZIP64 sizes in the central directory', () => {
    const b = buildZip([{ name: 'a', data: hello, zip64: true }, { name: 'b', data: zeros, method: 8, zip64: true }], { zip64End: true });
    const zip = openZip(b, DEFAULT_LIMITS);
    expect(zip.entries.map((e) => e.uncompressedSize)).toEqual([hello.length, zeros.length]);
    expect(zip.entries[1]!.localHeaderOffset).toBe(30 + 1 + hello.length);
    expect(zip.readEntry(zip.entries[1]!)).toEqual(zeros);
  });

  it('finds the end record behind an archive comment', () => {
    const zip = openZip(buildZip([{ name: 'a', data: hello }], { comment: 'PK\x05\x06 looks like a signature'.padEnd(3000, '.') }), DEFAULT_LIMITS);
    expect(zip.readEntry(zip.entries[0]!)).toEqual(hello);
  });

  it('decodes UTF-8 names (flag bit 11) and code page 437 names otherwise', () => {
    const nameBytes = new TextEncoder().encode('\u00e9t\u00e9.npy'); // c3 a9 74 c3 a9 ...
    const b = buildZip([
      { name: '', nameBytes, data: hello, flags: 0x800 },
      { name: '', nameBytes, data: hello },
      { name: '\x82\x9c', data: hello },
    ]);
    const zip = openZip(b, DEFAULT_LIMITS);
    expect(zip.entries[0]!.name).toBe('\u00e9t\u00e9.npy');
    // CP437 (APPNOTE appendix D; code points as Python's cp437 codec decodes them): 0xC3 = U+251C, 0xA9 = U+2310, 0x82 = U+00E9, 0x9C = U+00A3
    expect(zip.entries[1]!.name).toBe('\u251c\u2310t\u251c\u2310.npy');
    expect(zip.entries[2]!.name).toBe('\u00e9\u00a3');
  });

  it('an empty archive has no entries', () => {
    expect(openZip(buildZip([]), DEFAULT_LIMITS).entries).toEqual([]);
  });
});

describe('unreadable archives', () => {
  it('too short / no end record', () => {
    expectUnreadable(() => openZip(new Uint8Array(10), DEFAULT_LIMITS), /shorter than the 22-byte/);
    expectUnreadable(() => openZip(new Uint8Array(5000), DEFAULT_LIMITS), /no end-of-central-directory record/);
  });

  it('truncated archive (central directory cut off)', () => {
    const b = buildZip([{ name: 'a', data: hello }]);
    expectUnreadable(() => openZip(concat(b.subarray(0, 40), b.subarray(b.length - 22)), DEFAULT_LIMITS), /central directory .* runs past/);
  });

  it('central directory offset past the end of the file', () => {
    const b = buildZip([{ name: 'a', data: hello }]);
    b.set(le(1_000_000, 4), b.length - 6);
    expectUnreadable(() => openZip(b, DEFAULT_LIMITS), /central directory \(byte 1000000, \d+ bytes\) runs past/);
  });

  it('entry count larger than the directory can hold', () => {
    expectUnreadable(() => openZip(buildZip([{ name: 'a', data: hello }], { countOverride: 500 }), DEFAULT_LIMITS), /declares 500 entries/);
  });

  it('local header offset past the end of the file', () => {
    const b = buildZip([{ name: 'a', data: hello, localOffset: 99_999 }]);
    expectUnreadable(() => openZip(b, DEFAULT_LIMITS), /local header offset 99999 lies past/);
  });

  it('member data running past the end of the file', () => {
    const b = buildZip([{ name: 'a', data: hello, declaredCompressed: 5000, declaredSize: 5000 }]);
    const zip = openZip(b, DEFAULT_LIMITS);
    expectUnreadable(() => zip.readEntry(zip.entries[0]!), /5000 bytes of data at byte 31 run past the end of the file/, 31);
  });

  it('ZIP64 locator pointing outside the file', () => {
    const b = buildZip([{ name: 'a', data: hello }], { zip64End: true });
    const loc = b.length - 22 - 20;
    b.set(le(7_000_000, 8), loc + 8);
    expectUnreadable(() => openZip(b, DEFAULT_LIMITS), /ZIP64 end record offset 7000000/);
  });

  it('saturated end record without a ZIP64 locator', () => {
    const b = buildZip([{ name: 'a', data: hello }], { zip64End: true });
    const cut = concat(b.subarray(0, b.length - 22 - 20 - 56), b.subarray(b.length - 22));
    expectUnreadable(() => openZip(cut, DEFAULT_LIMITS), /no ZIP64 locator/);
  });

  it('ZIP64 extra field lacking a saturated value', () => {
    const b = buildZip([{ name: 'a', data: hello, zip64: true }]);
    // shrink the extra field's declared size from 24 to 8: only the uncompressed size remains
    const cdStart = 30 + 1 + hello.length;
    b.set(le(8, 2), cdStart + 46 + 1 + 2);
    expectUnreadable(() => openZip(b, DEFAULT_LIMITS), /ZIP64 extra field lacks the compressed size/);
  });

  it('a member declaring 10 GB (deflate bomb) is refused before allocating', () => {
    const b = buildZip([{ name: 'bomb', data: zeros, method: 8, declaredSize: 10 * 1024 ** 3, zip64: true }], { zip64End: true });
    const zip = openZip(b, DEFAULT_LIMITS);
    expect(zip.entries[0]!.uncompressedSize).toBe(10 * 1024 ** 3);
    expectUnreadable(() => zip.readEntry(zip.entries[0]!), /declares 10737418240 uncompressed bytes, over the limit of 4294967296/);
  });

  it('a declared size beyond what deflate can produce from the compressed bytes', () => {
    const c = deflateSync(zeros).length;
    const b = buildZip([{ name: 'z', data: zeros, method: 8, declaredSize: 3 * 1024 ** 3 }]);
    const zip = openZip(b, DEFAULT_LIMITS);
    expect(3 * 1024 ** 3).toBeGreaterThan(c * MAX_DEFLATE_RATIO);
    expectUnreadable(() => zip.readEntry(zip.entries[0]!), /beyond what deflate can produce/);
  });

  it('the decompression limit counts all members together', () => {
    const b = buildZip([{ name: 'a', data: zeros, method: 8 }, { name: 'b', data: zeros, method: 8 }]);
    const zip = openZip(b, { ...DEFAULT_LIMITS, maxDecompressedBytes: 150_000 });
    expect(zip.readEntry(zip.entries[0]!).length).toBe(100_000);
    expectUnreadable(() => zip.readEntry(zip.entries[1]!), /over the limit of 150000/);
  });

  it('inflated length differs from the declared size', () => {
    const more = buildZip([{ name: 'a', data: zeros, method: 8, declaredSize: 99_999 }]);
    let zip = openZip(more, DEFAULT_LIMITS);
    expectUnreadable(() => zip.readEntry(zip.entries[0]!), /declares 99999 uncompressed bytes but inflates to more/);
    const fewer = buildZip([{ name: 'a', data: zeros, method: 8, declaredSize: 100_001 }]);
    zip = openZip(fewer, DEFAULT_LIMITS);
    expectUnreadable(() => zip.readEntry(zip.entries[0]!), /declares 100001 uncompressed bytes but inflates to 100000/);
  });

  it('corrupt deflate data', () => {
    const b = buildZip([{ name: 'a', data: hello, method: 8 }]);
    b.fill(0xff, 31, 31 + 4);
    const zip = openZip(b, DEFAULT_LIMITS);
    expectUnreadable(() => zip.readEntry(zip.entries[0]!), /entry 'a': corrupt deflate data|inflates to/);
  });

  it('stored member whose sizes disagree, unknown method, encryption', () => {
    let zip = openZip(buildZip([{ name: 'a', data: hello, declaredSize: 3 }]), DEFAULT_LIMITS);
    expectUnreadable(() => zip.readEntry(zip.entries[0]!), /stored entry 'a' has compressed size 18 but uncompressed size 3/);
    zip = openZip(buildZip([{ name: 'a', data: hello, method: 12 }]), DEFAULT_LIMITS);
    expectUnreadable(() => zip.readEntry(zip.entries[0]!), /compression method 12/);
    zip = openZip(buildZip([{ name: 'a', data: hello, flags: 1 }]), DEFAULT_LIMITS);
    expectUnreadable(() => zip.readEntry(zip.entries[0]!), /encrypted/);
  });

  it('bad local header signature', () => {
    const b = buildZip([{ name: 'a', data: hello }]);
    b[0] = 0;
    const zip = openZip(b, DEFAULT_LIMITS);
    expectUnreadable(() => zip.readEntry(zip.entries[0]!), /no local file header at byte 0/, 0);
  });
});

describe('CRC-32 (APPNOTE 4.4.7, RFC 1952 §8)', () => {
  it('matches zlib (node:zlib.crc32) on data of every length and alignment, and continues over pieces', () => {
    const data = new Uint8Array(4099).map((_, i) => (i * 2654435761) >>> 24);
    expect(crc32(ascii('123456789'))).toBe(0xcbf43926); // the published check value of this CRC
    expect(crc32(new Uint8Array(0))).toBe(0);
    for (let start = 0; start < 9; start++) {
      for (const len of [0, 1, 3, 7, 8, 9, 15, 16, 17, 100, 4090 - start]) {
        const b = data.subarray(start, start + len);
        expect(crc32(b), `${start}+${len}`).toBe(zlib.crc32(b));
        const cut = len >> 1;
        expect(crc32(b.subarray(cut), crc32(b.subarray(0, cut)))).toBe(zlib.crc32(b));
      }
    }
  });
});

describe('every member read is checked against its CRC-32', () => {
  const wrong = (crc: number) => (crc ^ 0x00800000) >>> 0;
  for (const method of [0, 8]) {
    it(`${method === 0 ? 'stored' : 'deflated'} member with a wrong CRC-32: readEntry and streamEntry refuse it`, () => {
      const b = buildZip([{ name: 'ok', data: hello, method }, { name: 'edge_index.npy', data: zeros, method, crc: wrong(crc32(zeros)) }]);
      const zip = openZip(b, DEFAULT_LIMITS);
      expect(zip.readEntry(zip.entries[0]!)).toEqual(hello);
      const msg = /member 'edge_index\.npy' fails its CRC-32 check \(the archive records 0x[0-9a-f]{8}, its bytes give 0x[0-9a-f]{8}\)/;
      expectUnreadable(() => zip.readEntry(zip.entries[1]!), msg);
      expectUnreadable(() => drain(zip, zip.entries[1]!), msg);
    });
  }
});

/** Every piece of a member, joined. */
function drain(zip: ZipArchive, e: ZipEntry): Uint8Array {
  const s = zip.streamEntry(e);
  const pieces: Uint8Array[] = [];
  for (let p = s.next(); p !== null; p = s.next()) pieces.push(p.slice());
  expect(s.next()).toBeNull(); // stays at the end
  return concat(...pieces);
}

describe('streamEntry: a member in pieces', () => {
  const big = new Uint8Array(3_000_000).map((_, i) => (i % 251) ^ (i >> 12));

  it('gives the bytes readEntry gives, stored and deflated, in pieces (numpy 1.24 archives too)', () => {
    const zip = openZip(buildZip([{ name: 's', data: big }, { name: 'd', data: big, method: 8 }, { name: 'e', data: new Uint8Array(0), method: 8 }]), DEFAULT_LIMITS);
    const same = (a: Uint8Array, b: Uint8Array) => Buffer.from(a.buffer, a.byteOffset, a.length).equals(Buffer.from(b.buffer, b.byteOffset, b.length));
    for (const e of zip.entries) expect(same(drain(zip, e), zip.readEntry(e)), e.name).toBe(true);
    for (const name of ['graph_stored.npz', 'graph_compressed.npz']) {
      const z = openZip(fixture(name), DEFAULT_LIMITS);
      for (const e of z.entries) expect(same(drain(z, e), z.readEntry(e)), e.name).toBe(true);
    }
  });

  it('a deflate bomb is refused before inflating; a longer stream stops at the first piece past the size', () => {
    const bomb = buildZip([{ name: 'z', data: zeros, method: 8, declaredSize: 3 * 1024 ** 3 }]);
    let zip = openZip(bomb, DEFAULT_LIMITS);
    expectUnreadable(() => zip.streamEntry(zip.entries[0]!), /beyond what deflate can produce/);
    zip = openZip(buildZip([{ name: 'a', data: zeros, method: 8, declaredSize: 99_999 }]), DEFAULT_LIMITS);
    expectUnreadable(() => drain(zip, zip.entries[0]!), /declares 99999 uncompressed bytes but inflates to more/);
    zip = openZip(buildZip([{ name: 'a', data: zeros, method: 8, declaredSize: 100_001 }]), DEFAULT_LIMITS);
    expectUnreadable(() => drain(zip, zip.entries[0]!), /declares 100001 uncompressed bytes but inflates to 100000/);
  });

  it('corrupt or truncated deflate data', () => {
    const b = buildZip([{ name: 'a', data: big, method: 8 }]);
    b.fill(0xff, 40, 60);
    const zip = openZip(b, DEFAULT_LIMITS);
    expectUnreadable(() => drain(zip, zip.entries[0]!), /entry 'a': corrupt deflate data|inflates to|CRC-32/);
    const c = deflateSync(big);
    const cut = buildZip([{ name: 'a', data: big, method: 8, declaredCompressed: c.length >> 1 }]);
    const z2 = openZip(cut, DEFAULT_LIMITS);
    expectUnreadable(() => drain(z2, z2.entries[0]!), /entry 'a': corrupt deflate data|inflates to/);
  });

  it('counts against maxStreamedBytes, not maxDecompressedBytes', () => {
    const b = buildZip([{ name: 'a', data: big, method: 8 }, { name: 'b', data: big, method: 8 }]);
    const zip = openZip(b, { ...DEFAULT_LIMITS, maxDecompressedBytes: 1000, maxStreamedBytes: 5_000_000 });
    expect(drain(zip, zip.entries[0]!).length).toBe(big.length);
    expectUnreadable(() => zip.streamEntry(zip.entries[1]!), /over the limit of 5000000 bytes summarised per file/);
  });
});

/**
 * A small ZIP reader over bytes already in memory, for .npz (NumPy) and .pt (PyTorch) archives.
 * It reads the central directory (with ZIP64 records and extra fields) and decodes members
 * lazily: stored members come back as views into the input, deflated ones are inflated into a
 * buffer of exactly the declared size, or handed out piece by piece (streamEntry) when they are
 * too large to hold. Every member read is checked against the CRC-32 of its central directory
 * record, as NumPy's zipfile does (it refuses a member with "Bad CRC-32") — unless the caller
 * reads a format whose own reader ignores it (torch.load: see pt.ts).
 *
 * Layout per PKWARE APPNOTE.TXT (sections 4.3.7 local header, 4.3.12 central directory header,
 * 4.3.14–4.3.16 ZIP64 end records and end of central directory, 4.5.3 ZIP64 extra field).
 */
import { Inflate, inflateSync } from 'fflate';
import { DEFAULT_LIMITS, UnreadableError, type ReadLimits } from './types';
import { u16le, u32le, u64le } from './elements';
import { crc32 } from './crc32';

export interface ZipEntry {
  name: string;
  /** 0 = stored, 8 = deflated; other methods are listed but cannot be read. */
  method: number;
  compressedSize: number;
  uncompressedSize: number;
  /** Byte offset of the member's local file header. */
  localHeaderOffset: number;
  /** General-purpose bit flags (bit 0: encrypted, bit 11: UTF-8 name). */
  flags: number;
  crc32: number;
}

export interface ZipArchive {
  entries: ZipEntry[];
  /** Decoded member bytes. Stored members are views into the archive bytes (no copy). */
  readEntry(entry: ZipEntry): Uint8Array;
  /** Byte offset in the archive where the member's (compressed) data begins. */
  dataOffset(entry: ZipEntry): number;
  /**
   * The member's bytes in pieces, for members too large to hold: nothing but the current piece
   * is allocated. Counts against `limits.maxStreamedBytes`, not `maxDecompressedBytes`.
   */
  streamEntry(entry: ZipEntry): EntryStream;
}

export interface EntryStream {
  /**
   * The next piece of the member (at most about STREAM_STEP · 1032 bytes), valid until the next
   * call; null after the last piece, once the size and the CRC-32 have been verified. Throws
   * UnreadableError for corrupt data, a size other than the declared one, or a CRC mismatch.
   */
  next(): Uint8Array | null;
}

/** Compressed bytes handed to the inflater at a time when streaming: at most ~4.2 MiB comes out. */
export const STREAM_STEP = 4 * 1024;
/** Stored members are handed out in views of this many bytes. */
const STORED_PIECE = 8 * 1024 * 1024;

const SIG_LOCAL = 0x04034b50;
const SIG_CENTRAL = 0x02014b50;
const SIG_EOCD = 0x06054b50;
const SIG_ZIP64_EOCD = 0x06064b50;
const SIG_ZIP64_LOCATOR = 0x07064b50;

const EOCD_SIZE = 22;
/** EOCD record plus the longest possible comment. */
const EOCD_SEARCH = EOCD_SIZE + 0xffff;
const CENTRAL_SIZE = 46;
const LOCAL_SIZE = 30;
const ZIP64_LOCATOR_SIZE = 20;
const ZIP64_EOCD_SIZE = 56;

/**
 * DEFLATE cannot expand better than about 1032:1 (a 258-byte match per 2 bits of code with
 * dynamic Huffman tables). A declared size beyond this, plus a little slack, is a lie.
 */
export const MAX_DEFLATE_RATIO = 1032;
const RATIO_SLACK = 1024;

/** Code page 437 for bytes 0x80–0xFF: the name encoding when the UTF-8 flag (bit 11) is not set. */
const CP437_HIGH =
  '\u00c7\u00fc\u00e9\u00e2\u00e4\u00e0\u00e5\u00e7\u00ea\u00eb\u00e8\u00ef\u00ee\u00ec\u00c4\u00c5' +
  '\u00c9\u00e6\u00c6\u00f4\u00f6\u00f2\u00fb\u00f9\u00ff\u00d6\u00dc\u00a2\u00a3\u00a5\u20a7\u0192' +
  '\u00e1\u00ed\u00f3\u00fa\u00f1\u00d1\u00aa\u00ba\u00bf\u2310\u00ac\u00bd\u00bc\u00a1\u00ab\u00bb' +
  '\u2591\u2592\u2593\u2502\u2524\u2561\u2562\u2556\u2555\u2563\u2551\u2557\u255d\u255c\u255b\u2510' +
  '\u2514\u2534\u252c\u251c\u2500\u253c\u255e\u255f\u255a\u2554\u2569\u2566\u2560\u2550\u256c\u2567' +
  '\u2568\u2564\u2565\u2559\u2558\u2552\u2553\u256b\u256a\u2518\u250c\u2588\u2584\u258c\u2590\u2580' +
  '\u03b1\u00df\u0393\u03c0\u03a3\u03c3\u00b5\u03c4\u03a6\u0398\u03a9\u03b4\u221e\u03c6\u03b5\u2229' +
  '\u2261\u00b1\u2265\u2264\u2320\u2321\u00f7\u2248\u00b0\u2219\u00b7\u221a\u207f\u00b2\u25a0\u00a0';

const utf8 = new TextDecoder('utf-8');

function decodeName(b: Uint8Array, utf8Flag: boolean): string {
  if (utf8Flag) return utf8.decode(b);
  let s = '';
  for (let i = 0; i < b.length; i++) {
    const c = b[i];
    s += c < 0x80 ? String.fromCharCode(c) : CP437_HIGH[c - 0x80];
  }
  return s;
}

function fail(message: string, offset?: number): never {
  throw new UnreadableError(message, offset);
}

const hex32 = (v: number) => `0x${(v >>> 0).toString(16).padStart(8, '0')}`;

function crcMismatch(entry: ZipEntry, got: number, at: number): never {
  fail(
    `member '${entry.name}' fails its CRC-32 check (the archive records ${hex32(entry.crc32)}, its bytes give ` +
      `${hex32(got)}): the file is corrupt; save it again`,
    at,
  );
}

interface EndRecord {
  count: number;
  cdOffset: number;
  cdSize: number;
  /** Where the central directory must end (start of the ZIP64 or classic end records). */
  limit: number;
}

function findEnd(bytes: Uint8Array): EndRecord {
  const len = bytes.length;
  if (len < EOCD_SIZE) {
    fail(`not a zip archive: ${len} bytes is shorter than the 22-byte end-of-central-directory record`);
  }
  const stop = Math.max(0, len - EOCD_SEARCH);
  let eocd = -1;
  for (let p = len - EOCD_SIZE; p >= stop; p--) {
    if (bytes[p] === 0x50 && u32le(bytes, p) === SIG_EOCD && p + EOCD_SIZE + u16le(bytes, p + 20) <= len) {
      eocd = p;
      break;
    }
  }
  if (eocd < 0) {
    fail('not a zip archive: no end-of-central-directory record in the last 65557 bytes');
  }
  let count = u16le(bytes, eocd + 10);
  let cdSize = u32le(bytes, eocd + 12);
  let cdOffset = u32le(bytes, eocd + 16);
  let limit = eocd;

  const loc = eocd - ZIP64_LOCATOR_SIZE;
  if (loc >= 0 && u32le(bytes, loc) === SIG_ZIP64_LOCATOR) {
    const z = u64le(bytes, loc + 8);
    if (z + ZIP64_EOCD_SIZE > loc) {
      fail(`ZIP64 end record offset ${z} (from the locator at byte ${loc}) lies outside the archive`, loc);
    }
    if (u32le(bytes, z) !== SIG_ZIP64_EOCD) {
      fail(`no ZIP64 end-of-central-directory record at byte ${z}, where the locator points`, z);
    }
    count = u64le(bytes, z + 32);
    cdSize = u64le(bytes, z + 40);
    cdOffset = u64le(bytes, z + 48);
    limit = z;
  } else if (count === 0xffff || cdSize === 0xffffffff || cdOffset === 0xffffffff) {
    fail('the end record defers to ZIP64 values, but there is no ZIP64 locator', eocd);
  }
  if (cdOffset + cdSize > limit) {
    fail(
      `central directory (byte ${cdOffset}, ${cdSize} bytes) runs past the end records at byte ${limit}`,
      eocd,
    );
  }
  if (count * CENTRAL_SIZE > cdSize) {
    fail(`the end record declares ${count} entries, more than a ${cdSize}-byte central directory can hold`, eocd);
  }
  return { count, cdOffset, cdSize, limit };
}

function parseCentral(bytes: Uint8Array, end: EndRecord): ZipEntry[] {
  const entries: ZipEntry[] = [];
  const cdEnd = end.cdOffset + end.cdSize;
  let p = end.cdOffset;
  for (let i = 0; i < end.count; i++) {
    if (p + CENTRAL_SIZE > cdEnd) fail(`central directory ends inside entry ${i} of ${end.count}`, p);
    if (u32le(bytes, p) !== SIG_CENTRAL) fail(`central directory entry ${i} has a bad signature at byte ${p}`, p);
    const flags = u16le(bytes, p + 8);
    const method = u16le(bytes, p + 10);
    const crc32 = u32le(bytes, p + 16);
    let compressedSize = u32le(bytes, p + 20);
    let uncompressedSize = u32le(bytes, p + 24);
    const nameLen = u16le(bytes, p + 28);
    const extraLen = u16le(bytes, p + 30);
    const commentLen = u16le(bytes, p + 32);
    let localHeaderOffset = u32le(bytes, p + 42);
    const nameStart = p + CENTRAL_SIZE;
    const extraStart = nameStart + nameLen;
    const next = extraStart + extraLen + commentLen;
    if (next > cdEnd) fail(`central directory entry ${i} (byte ${p}) runs past the end of the directory`, p);
    const name = decodeName(bytes.subarray(nameStart, extraStart), (flags & 0x800) !== 0);

    // ZIP64 extended information: only the fields saturated in the fixed record, in this order.
    const extraEnd = extraStart + extraLen;
    let q = extraStart;
    while (q + 4 <= extraEnd) {
      const id = u16le(bytes, q);
      const size = u16le(bytes, q + 2);
      const body = q + 4;
      if (body + size > extraEnd) fail(`entry '${name}': extra field at byte ${q} runs past its record`, q);
      if (id === 0x0001) {
        let r = body;
        const take = (what: string): number => {
          if (r + 8 > body + size) fail(`entry '${name}': ZIP64 extra field lacks the ${what}`, q);
          const v = u64le(bytes, r);
          r += 8;
          return v;
        };
        if (uncompressedSize === 0xffffffff) uncompressedSize = take('uncompressed size');
        if (compressedSize === 0xffffffff) compressedSize = take('compressed size');
        if (localHeaderOffset === 0xffffffff) localHeaderOffset = take('local header offset');
      }
      q = body + size;
    }
    if (localHeaderOffset + LOCAL_SIZE > end.limit) {
      fail(`entry '${name}': local header offset ${localHeaderOffset} lies past the archive data`, p);
    }
    entries.push({ name, method, compressedSize, uncompressedSize, localHeaderOffset, flags, crc32 });
    p = next;
  }
  return entries;
}

export interface ZipOptions {
  /** Compare every member read with its recorded CRC-32 (default true). */
  checkCrc?: boolean;
}

/** Opens a ZIP archive held in `bytes`. Throws UnreadableError for anything malformed. */
export function openZip(bytes: Uint8Array, limits: ReadLimits, options: ZipOptions = {}): ZipArchive {
  const checkCrc = options.checkCrc ?? true;
  const entries = parseCentral(bytes, findEnd(bytes));
  let inflated = 0;
  let streamed = 0;
  /** Members whose CRC-32 has been verified (readEntry may be asked for one several times). */
  const verified = new Set<ZipEntry>();
  const verify = (entry: ZipEntry, data: Uint8Array, at: number) => {
    if (!checkCrc || verified.has(entry)) return;
    const got = crc32(data);
    if (got !== entry.crc32) crcMismatch(entry, got, at);
    verified.add(entry);
  };

  const dataOffset = (entry: ZipEntry): number => {
    const h = entry.localHeaderOffset;
    if (!(h >= 0) || h + LOCAL_SIZE > bytes.length) {
      fail(`entry '${entry.name}': local header offset ${h} lies past the end of the file (${bytes.length} bytes)`, h);
    }
    if (u32le(bytes, h) !== SIG_LOCAL) fail(`entry '${entry.name}': no local file header at byte ${h}`, h);
    const start = h + LOCAL_SIZE + u16le(bytes, h + 26) + u16le(bytes, h + 28);
    if (start + entry.compressedSize > bytes.length) {
      fail(
        `entry '${entry.name}': ${entry.compressedSize} bytes of data at byte ${start} run past ` +
          `the end of the file (${bytes.length} bytes)`,
        start,
      );
    }
    return start;
  };

  /** An entry's stored bytes (not encrypted, inside the file) and its declared size. */
  const stored = (entry: ZipEntry) => {
    if (entry.flags & 0x1) fail(`entry '${entry.name}' is encrypted`, entry.localHeaderOffset);
    const start = dataOffset(entry);
    return { name: entry.name, start, data: bytes.subarray(start, start + entry.compressedSize), size: entry.uncompressedSize };
  };

  const readEntry = (entry: ZipEntry): Uint8Array => {
    const { name, start, data, size } = stored(entry);
    if (entry.method === 0) {
      if (entry.compressedSize !== size) {
        fail(`stored entry '${name}' has compressed size ${entry.compressedSize} but uncompressed size ${size}`, start);
      }
      verify(entry, data, start);
      return data;
    }
    checkMethod(entry, start);
    if (size > limits.maxDecompressedBytes - inflated) {
      fail(
        `entry '${name}' declares ${size} uncompressed bytes, over the limit of ` +
          `${limits.maxDecompressedBytes} bytes decompressed per file`,
        start,
      );
    }
    checkRatio(entry, start);
    inflated += size;
    let out: Uint8Array;
    try {
      // One spare byte tells "more than declared" apart from "exactly as declared".
      out = new Uint8Array(size + 1);
    } catch {
      fail(`entry '${name}': cannot allocate ${size} bytes to decompress it`, start);
    }
    let got: Uint8Array;
    try {
      got = inflateSync(data, { out });
    } catch (e) {
      fail(`entry '${name}': corrupt deflate data (${e instanceof Error ? e.message : String(e)})`, start);
    }
    if (got.length !== size) {
      fail(
        `entry '${name}' declares ${size} uncompressed bytes but inflates to ` +
          (got.length > size ? 'more' : `${got.length}`),
        start,
      );
    }
    const member = out.subarray(0, size);
    verify(entry, member, start);
    return member;
  };

  const checkMethod = (entry: ZipEntry, start: number) => {
    if (entry.method !== 8) {
      fail(`entry '${entry.name}' uses compression method ${entry.method}; only stored (0) and deflate (8) are read`, start);
    }
  };

  /** A declared size deflate cannot reach from the compressed bytes is a lie: refused before inflating. */
  const checkRatio = (entry: ZipEntry, start: number) => {
    const name = entry.name;
    const size = entry.uncompressedSize;
    if (size > entry.compressedSize * MAX_DEFLATE_RATIO + RATIO_SLACK) {
      fail(
        `entry '${name}' declares ${size} uncompressed bytes from ${entry.compressedSize} compressed bytes, ` +
          `beyond what deflate can produce`,
        start,
      );
    }
  };

  const streamEntry = (entry: ZipEntry): EntryStream => {
    const { name, start, data, size } = stored(entry);
    let produced = 0;
    let crc = 0;
    let finished = false;
    const finish = (): null => {
      if (!finished) {
        finished = true;
        if (produced !== size) fail(`entry '${name}' declares ${size} uncompressed bytes but inflates to ${produced}`, start);
        if (checkCrc && crc !== entry.crc32) crcMismatch(entry, crc, start);
      }
      return null;
    };

    if (entry.method === 0) {
      if (entry.compressedSize !== size) {
        fail(`stored entry '${name}' has compressed size ${entry.compressedSize} but uncompressed size ${size}`, start);
      }
      return {
        next: () => {
          if (produced >= size) return finish();
          const piece = data.subarray(produced, Math.min(size, produced + STORED_PIECE));
          produced += piece.length;
          if (checkCrc) crc = crc32(piece, crc);
          return piece;
        },
      };
    }

    checkMethod(entry, start);
    checkRatio(entry, start);
    const budget = limits.maxStreamedBytes ?? DEFAULT_LIMITS.maxStreamedBytes!;
    if (size > budget - streamed) {
      fail(
        `entry '${name}' declares ${size} uncompressed bytes, over the limit of ${budget} bytes ` +
          `summarised per file`,
        start,
      );
    }
    const queue: Uint8Array[] = [];
    const inflater = new Inflate((piece) => {
      if (piece.length === 0) return;
      // Checked piece by piece: a stream longer than declared stops here, before the next piece.
      if (piece.length > size - produced) fail(`entry '${name}' declares ${size} uncompressed bytes but inflates to more`, start);
      produced += piece.length;
      streamed += piece.length;
      if (checkCrc) crc = crc32(piece, crc);
      queue.push(piece);
    });
    let pos = 0;
    let pushedLast = false;
    return {
      next: () => {
        while (queue.length === 0) {
          if (pushedLast) return finish();
          const end = Math.min(data.length, pos + STREAM_STEP);
          pushedLast = end === data.length;
          try {
            inflater.push(data.subarray(pos, end), pushedLast);
          } catch (e) {
            if (e instanceof UnreadableError) throw e;
            fail(`entry '${name}': corrupt deflate data (${e instanceof Error ? e.message : String(e)})`, start + pos);
          }
          pos = end;
        }
        return queue.shift()!;
      },
    };
  };

  return { entries, readEntry, dataOffset, streamEntry };
}

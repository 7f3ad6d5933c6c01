/**
 * Gzip (RFC 1952) for the text readers: a single-member stream decompressed within the size
 * limits, and the reason a stream failed, told apart by inflating it once more.
 */
import { Inflate, gunzipSync } from 'fflate';
import { UnreadableError, type ReadLimits } from '../types';
import { crc32 } from '../crc32';

/** Deflate cannot expand more than about 1032:1; anything beyond that in the trailer is a lie. */
const MAX_DEFLATE_RATIO = 1032;

/**
 * Decompresses a single-member gzip stream. The ISIZE trailer pre-sizes the output; it is checked
 * against `limits.maxDecompressedBytes` and against the deflate ratio bound before allocating, and
 * the result is checked against ISIZE and the CRC-32 afterwards. Concatenated (multi-member) gzip is
 * not supported: its first member does not match the last member's trailer, so it is refused.
 */
export function gunzipLimited(bytes: Uint8Array, limits: ReadLimits): Uint8Array {
  const n = bytes.length;
  if (n < 2 || bytes[0] !== 0x1f || bytes[1] !== 0x8b) {
    throw new UnreadableError('not gzip data (the name ends in .gz but the gzip signature is missing)', 0);
  }
  if (n < 18) throw new UnreadableError('gzip data is truncated', n);
  if (bytes[2] !== 8) throw new UnreadableError(`unsupported gzip compression method ${bytes[2]}`, 2);
  const isize = (bytes[n - 4]! | (bytes[n - 3]! << 8) | (bytes[n - 2]! << 16) | (bytes[n - 1]! << 24)) >>> 0;
  const crc = (bytes[n - 8]! | (bytes[n - 7]! << 8) | (bytes[n - 6]! << 16) | (bytes[n - 5]! << 24)) >>> 0;
  if (isize > limits.maxDecompressedBytes) {
    throw new UnreadableError(
      `gzip data declares ${isize} decompressed bytes, more than the limit of ${limits.maxDecompressedBytes}`,
      n - 4,
    );
  }
  if (isize > n * MAX_DEFLATE_RATIO + 1024) {
    // A cut-off file ends in compressed data, which then reads as a nonsense trailer.
    throw new UnreadableError(
      gzipFault(bytes, limits.maxDecompressedBytes) ??
        `gzip size trailer (${isize} bytes from ${n} compressed) is impossible: the data is corrupt`,
      n - 4,
    );
  }
  let out: Uint8Array;
  try {
    // One spare byte: when the stream holds more than ISIZE bytes the result fills it, and we notice.
    out = new Uint8Array(isize + 1);
  } catch {
    throw new UnreadableError(`cannot allocate ${isize} bytes to decompress`, n - 4);
  }
  let result: Uint8Array;
  try {
    result = gunzipSync(bytes, { out });
  } catch (e) {
    throw new UnreadableError(
      gzipFault(bytes, limits.maxDecompressedBytes) ?? `invalid gzip data: ${e instanceof Error ? e.message : String(e)}`,
    );
  }
  if (result.length !== isize) {
    throw new UnreadableError(
      gzipFault(bytes, limits.maxDecompressedBytes) ??
        'gzip data does not match its size trailer: it is corrupt, or made of several ' +
        'concatenated gzip members (not supported; decompress and recompress it as one)',
    );
  }
  if (crc32(result) !== crc) {
    throw new UnreadableError(
      gzipFault(bytes, limits.maxDecompressedBytes) ??
        'gzip data fails its CRC-32 check: it is corrupt (or has several members)',
    );
  }
  return result;
}

/**
 * Why a gzip stream failed a check, told apart by inflating it once more without keeping the
 * output. RFC 1952 §2.2: a member is a header, deflate blocks up to the one marked final, then an
 * 8-byte trailer (CRC-32, ISIZE). A file that stops inside any of these is truncated (cut short by
 * a copy or a download); deflate data that does not decode is corrupt. Undefined when the stream
 * and its trailer are complete (the trailer itself is wrong, or several members follow each
 * other) or when the output runs past `limit` before anything is decided.
 */
export function gzipFault(bytes: Uint8Array, limit: number): string | undefined {
  const n = bytes.length;
  const start = gzipHeaderEnd(bytes);
  const cut = (what: string) =>
    `gzip data is truncated: the file (${n} bytes) ends ${what}; it was probably cut short while ` +
    'being copied or downloaded, so copy it again from its source';
  if (start < 0) return cut('inside the gzip header');
  const whole = inflateProbe(bytes.subarray(start), limit);
  if (whole.kind === 'eof') {
    return cut(`before the end of the compressed stream (${whole.out} bytes decompress before the cut)`);
  }
  if (whole.kind === 'bad') {
    return `gzip data is corrupt: the compressed stream is invalid (${whole.message}) after ${whole.out} ` +
      'decompressed bytes';
  }
  if (whole.kind === 'over') return undefined;
  // The deflate data ends inside the file; the 8 trailer bytes must follow it.
  if (n - 8 < start || inflateProbe(bytes.subarray(start, n - 8), limit).kind === 'eof') {
    return cut('inside the 8-byte trailer (CRC-32 and size) after a complete compressed stream');
  }
  return undefined;
}

/** Offset where the deflate data of a gzip member starts (RFC 1952 §2.3), or -1 past the end. */
function gzipHeaderEnd(b: Uint8Array): number {
  const n = b.length;
  if (n < 10) return -1;
  const flags = b[3]!;
  let p = 10;
  if (flags & 4) { // FEXTRA: 2-byte length, then that many bytes
    if (p + 2 > n) return -1;
    p += 2 + (b[p]! | (b[p + 1]! << 8));
  }
  for (const bit of [8, 16]) { // FNAME, FCOMMENT: zero-terminated
    if (flags & bit) {
      while (p < n && b[p] !== 0) p++;
      p++;
    }
  }
  if (flags & 2) p += 2; // FHCRC
  return p > n ? -1 : p;
}

type InflateProbe = { kind: 'end' | 'eof' | 'over'; out: number } | { kind: 'bad'; out: number; message: string };

/** Inflates raw deflate data, counting and dropping the output (at most `limit` bytes). */
function inflateProbe(data: Uint8Array, limit: number): InflateProbe {
  let out = 0;
  const over = new Error('over');
  const inflater = new Inflate((chunk) => {
    out += chunk.length;
    if (out > limit) throw over;
  });
  const step = 1 << 16;
  try {
    for (let p = 0; p < data.length || p === 0; p += step) {
      const end = Math.min(data.length, p + step);
      inflater.push(data.subarray(p, end), end === data.length);
      if (end === data.length) break;
    }
  } catch (e) {
    if (e === over) return { kind: 'over', out };
    const code = (e as { code?: unknown }).code;
    if (code === 0) return { kind: 'eof', out }; // fflate: 'unexpected EOF'
    return { kind: 'bad', out, message: e instanceof Error ? e.message : String(e) };
  }
  return { kind: 'end', out };
}

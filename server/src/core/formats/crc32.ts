/**
 * CRC-32 as ZIP (PKWARE APPNOTE 4.4.7) and gzip (RFC 1952 §8) define it: the reflected polynomial
 * 0xEDB88320, initial value and final XOR 0xFFFFFFFF. The one implementation in the project: the
 * ZIP and gzip readers check it, the ZIP encoder writes it. Slicing-by-8 (eight bytes per step
 * through eight tables), reading aligned 32-bit words on little-endian hosts.
 */
import { HOST_LITTLE_ENDIAN } from './elements';

let TABLES: Uint32Array | undefined;

/** Eight 256-entry tables, each one byte further along than the one before. */
function tables(): Uint32Array {
  if (TABLES) return TABLES;
  const t = new Uint32Array(8 * 256);
  for (let i = 0; i < 256; i++) {
    let c = i;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[i] = c >>> 0;
  }
  for (let i = 0; i < 256; i++) {
    let c = t[i]!;
    for (let s = 1; s < 8; s++) {
      c = t[c & 0xff]! ^ (c >>> 8);
      t[s * 256 + i] = c >>> 0;
    }
  }
  TABLES = t;
  return t;
}

/**
 * CRC-32 of `b`. Pass the CRC of the bytes before as `previous` to continue over data that arrives
 * in pieces: crc32(b, crc32(a)) === crc32(a followed by b).
 */
export function crc32(b: Uint8Array, previous = 0): number {
  const t = tables();
  let c = (previous ^ 0xffffffff) >>> 0;
  const n = b.length;
  let i = 0;
  if (HOST_LITTLE_ENDIAN) {
    while (i < n && ((b.byteOffset + i) & 3) !== 0) c = t[(c ^ b[i++]!) & 0xff]! ^ (c >>> 8);
    const pairs = (n - i) >>> 3;
    if (pairs > 0) {
      const w = new Int32Array(b.buffer, b.byteOffset + i, pairs * 2);
      for (let j = 0; j < w.length; j += 2) {
        const a = c ^ w[j]!;
        const d = w[j + 1]!;
        c = t[1792 + (a & 0xff)]! ^ t[1536 + ((a >>> 8) & 0xff)]! ^ t[1280 + ((a >>> 16) & 0xff)]! ^ t[1024 + (a >>> 24)]! ^
          t[768 + (d & 0xff)]! ^ t[512 + ((d >>> 8) & 0xff)]! ^ t[256 + ((d >>> 16) & 0xff)]! ^ t[d >>> 24]!;
      }
      i += pairs * 8;
    }
  } else {
    for (const n8 = n - ((n - i) & 7); i < n8; i += 8) {
      const a = c ^ (b[i]! | (b[i + 1]! << 8) | (b[i + 2]! << 16) | (b[i + 3]! << 24));
      const d = b[i + 4]! | (b[i + 5]! << 8) | (b[i + 6]! << 16) | (b[i + 7]! << 24);
      c = t[1792 + (a & 0xff)]! ^ t[1536 + ((a >>> 8) & 0xff)]! ^ t[1280 + ((a >>> 16) & 0xff)]! ^ t[1024 + (a >>> 24)]! ^
        t[768 + (d & 0xff)]! ^ t[512 + ((d >>> 8) & 0xff)]! ^ t[256 + ((d >>> 16) & 0xff)]! ^ t[d >>> 24]!;
    }
  }
  for (; i < n; i++) c = t[(c ^ b[i]!) & 0xff]! ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

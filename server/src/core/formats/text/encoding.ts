/**
 * From a file's bytes to the text bytes the readers scan: gzip undone, binary data and UTF-16/UTF-32
 * text refused (the latter with the way to convert it), a UTF-8 byte order mark measured, and lines
 * ended by a bare CR turned into LF. Everything works on Uint8Array.
 */
import { UnreadableError, type ReadLimits } from '../types';
import { CR, LF } from './bytes';
import { gunzipLimited } from './gzip';

/** Largest byte offset the Uint32Array offset tables can hold. */
export const MAX_TEXT_BYTES = 0xffffffff;

/** The file's bytes, decompressed when its name ends in `.gz`. */
export function textBytes(bytes: Uint8Array, fileName: string, limits: ReadLimits): Uint8Array {
  const data = fileName.toLowerCase().endsWith('.gz') ? gunzipLimited(bytes, limits) : bytes;
  if (data.length > MAX_TEXT_BYTES) throw new UnreadableError('text file is larger than 4 GiB');
  assertText(data);
  return onlyCrLineEnds(data) ? crToLf(data) : data;
}

/**
 * Lines ended by a bare CR (classic Mac OS text, some spreadsheet exports): a CR and no LF in the
 * first 64 KiB.
 */
export function onlyCrLineEnds(b: Uint8Array): boolean {
  const end = Math.min(b.length, 65536);
  let cr = false;
  for (let i = 0; i < end; i++) {
    const c = b[i]!;
    if (c === LF) return false;
    if (c === CR) cr = true;
  }
  return cr;
}

/** A copy with every CR turned into LF: byte offsets stay, and lines are those an editor shows. */
function crToLf(b: Uint8Array): Uint8Array {
  const out = b.slice();
  for (let i = 0; i < out.length; i++) if (out[i] === CR) out[i] = LF;
  return out;
}

/**
 * Binary data (a NUL byte within the first KiB) is refused. UTF-16 and UTF-32 text is told apart
 * from binary data and refused with the way to convert it: by its byte order mark (Unicode
 * Standard §23.8: FF FE / FE FF, FF FE 00 00 / 00 00 FE FF), or without one by NUL bytes in every
 * other (every fourth) position, which is what ASCII characters look like in those encodings.
 */
export function assertText(b: Uint8Array): void {
  const wide = wideEncoding(b);
  if (wide) {
    throw new UnreadableError(
      `the file is ${wide.name} text, and Hopscope reads UTF-8 text: convert it first, e.g. ` +
        `\`iconv -f ${wide.iconv} -t UTF-8 FILE > FILE-utf8\` (or save it as UTF-8 from your editor)`,
      0,
    );
  }
  const end = Math.min(b.length, 1024);
  for (let i = 0; i < end; i++) {
    if (b[i] === 0) throw new BinaryDataError(i);
  }
}

/** Binary data where text was expected: a NUL byte in the first KiB (see assertText). */
export class BinaryDataError extends UnreadableError {
  constructor(offset: number) {
    super(`not a text file (NUL byte at offset ${offset})`, offset);
  }
}

/** A UTF-16 or UTF-32 text encoding: its name for messages, for iconv, and for decodeWide. */
export interface WideEncoding {
  name: string;
  iconv: string;
  decode: 'utf-16le' | 'utf-16be' | 'utf-32le' | 'utf-32be';
}

/** A UTF-16 or UTF-32 encoding recognised from the first KiB, for assertText. */
export function wideEncoding(b: Uint8Array): WideEncoding | undefined {
  const n = b.length;
  if (n >= 4 && b[0] === 0xff && b[1] === 0xfe && b[2] === 0 && b[3] === 0) {
    return { name: 'UTF-32 (little-endian, with a byte order mark)', iconv: 'UTF-32', decode: 'utf-32le' };
  }
  if (n >= 4 && b[0] === 0 && b[1] === 0 && b[2] === 0xfe && b[3] === 0xff) {
    return { name: 'UTF-32 (big-endian, with a byte order mark)', iconv: 'UTF-32', decode: 'utf-32be' };
  }
  if (n >= 2 && b[0] === 0xff && b[1] === 0xfe) {
    return { name: 'UTF-16 (little-endian, with a byte order mark)', iconv: 'UTF-16', decode: 'utf-16le' };
  }
  if (n >= 2 && b[0] === 0xfe && b[1] === 0xff) {
    return { name: 'UTF-16 (big-endian, with a byte order mark)', iconv: 'UTF-16', decode: 'utf-16be' };
  }
  // No mark: count NUL bytes by position modulo 4 in the first KiB (whole code units only).
  const end = Math.min(n, 1024) & ~3;
  if (end < 4) return undefined;
  const nul = [0, 0, 0, 0];
  for (let i = 0; i < end; i++) if (b[i] === 0) nul[i & 3]!++;
  const units = end >> 2;
  const all = (k: number) => nul[k] === units;
  const none = (k: number) => nul[k] === 0;
  if (none(0) && all(1) && all(2) && all(3)) return { name: 'UTF-32LE (no byte order mark)', iconv: 'UTF-32LE', decode: 'utf-32le' };
  if (all(0) && all(1) && all(2) && none(3)) return { name: 'UTF-32BE (no byte order mark)', iconv: 'UTF-32BE', decode: 'utf-32be' };
  // UTF-16: the high bytes of ASCII characters are NUL; most characters of a text are ASCII.
  const even = nul[0]! + nul[2]!, odd = nul[1]! + nul[3]!, half = units * 2;
  if (even === 0 && odd * 4 >= half * 3) return { name: 'UTF-16LE (no byte order mark)', iconv: 'UTF-16LE', decode: 'utf-16le' };
  if (odd === 0 && even * 4 >= half * 3) return { name: 'UTF-16BE (no byte order mark)', iconv: 'UTF-16BE', decode: 'utf-16be' };
  return undefined;
}

/**
 * The text of UTF-16 or UTF-32 bytes (a byte order mark dropped; a code unit cut off at the end or
 * an invalid one becomes U+FFFD). For looking at a few lines, not for whole large files.
 */
export function decodeWide(b: Uint8Array, enc: WideEncoding['decode']): string {
  if (enc === 'utf-16le' || enc === 'utf-16be') return new TextDecoder(enc).decode(b);
  const le = enc === 'utf-32le';
  const parts: string[] = [];
  for (let i = 0; i + 4 <= b.length; i += 4) {
    const c = le
      ? (b[i]! | (b[i + 1]! << 8) | (b[i + 2]! << 16) | (b[i + 3]! << 24)) >>> 0
      : ((b[i]! << 24) | (b[i + 1]! << 16) | (b[i + 2]! << 8) | b[i + 3]!) >>> 0;
    if (i === 0 && c === 0xfeff) continue;
    parts.push(c <= 0x10ffff && (c < 0xd800 || c > 0xdfff) ? String.fromCodePoint(c) : '\ufffd');
  }
  return parts.join('');
}

/** Length of a UTF-8 byte order mark at the start, 0 or 3. */
export function bomLength(b: Uint8Array): number {
  return b.length >= 3 && b[0] === 0xef && b[1] === 0xbb && b[2] === 0xbf ? 3 : 0;
}

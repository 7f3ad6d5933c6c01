/**
 * Byte-level helpers shared by the text readers (edge list, Matrix Market, JSON): gzip with size
 * limits, text sniffing, number parsing straight from bytes, lazy line lookup, UTF-16 columns and
 * problem collection. Everything works on Uint8Array; nothing here splits a whole file into strings.
 *
 * Columns are counted in UTF-16 code units, which is what editor and language-server positions use;
 * for text without characters outside the Basic Multilingual Plane this equals the character count.
 */
import { Inflate, gunzipSync } from 'fflate';
import {
  MAX_LOCATIONS,
  UnreadableError,
  type Problem,
  type ProblemCode,
  type ProblemLocation,
  type ReadLimits,
  type Severity,
  type TextSpan,
} from './types';
import { crc32 } from './crc32';

export const LF = 10;
export const CR = 13;
export const SPACE = 32;
export const TAB = 9;
export const HASH = 35;
export const PERCENT = 37;
export const COMMA = 44;
export const SEMICOLON = 59;
export const PIPE = 124;
export const QUOTE = 34;

/** Largest byte offset the Uint32Array offset tables can hold. */
export const MAX_TEXT_BYTES = 0xffffffff;

// ---------------------------------------------------------------------------------------------
// gzip

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

// ---------------------------------------------------------------------------------------------
// text sniffing

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
    if (b[i] === 0) throw new UnreadableError(`not a text file (NUL byte at offset ${i})`, i);
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

export const isBlank = (c: number): boolean => c === SPACE || c === TAB || c === CR;

// ---------------------------------------------------------------------------------------------
// lines and columns

const CHECKPOINT_SHIFT = 16;

/**
 * Maps byte offsets to 1-based line numbers. Built lazily on first use: one pass over the bytes
 * records the line number at every 64 KiB boundary, so a lookup re-counts at most 64 KiB.
 */
export class ByteLines {
  private checkpoints: Float64Array | undefined;

  constructor(
    readonly bytes: Uint8Array,
    /** Offset where line 1 starts (after a byte order mark). */
    readonly first: number,
  ) {}

  lineOf(offset: number): number {
    const b = this.bytes;
    let cp = this.checkpoints;
    if (!cp) {
      const blocks = (b.length >>> CHECKPOINT_SHIFT) + 1;
      cp = new Float64Array(blocks);
      let line = 0;
      for (let k = 0; k < blocks; k++) {
        cp[k] = line;
        line += countLF(b, k * (1 << CHECKPOINT_SHIFT), Math.min(b.length, (k + 1) * (1 << CHECKPOINT_SHIFT)));
      }
      this.checkpoints = cp;
    }
    const k = Math.floor(offset / (1 << CHECKPOINT_SHIFT));
    return cp[k]! + countLF(b, k * (1 << CHECKPOINT_SHIFT), Math.min(offset, b.length)) + 1;
  }

  /** Offset where the line holding `offset` starts. */
  lineStart(offset: number): number {
    const b = this.bytes;
    let p = offset;
    while (p > this.first && b[p - 1] !== LF) p--;
    return p;
  }

  /** 1-based UTF-16 column of `offset` on its line. */
  column(offset: number): number {
    return utf16Length(this.bytes, this.lineStart(offset), offset) + 1;
  }

  span(start: number, end: number): TextSpan {
    return { line: this.lineOf(start), column: this.column(start), length: utf16Length(this.bytes, start, end) };
  }
}

/**
 * Number of LF bytes in b[s, e): four bytes at a time through an Int32Array view where the
 * alignment allows (a SWAR zero-byte test on word ^ 0x0a0a0a0a that is exact, not a filter).
 */
export function countLF(b: Uint8Array, s: number, e: number): number {
  let count = 0;
  let i = s;
  while (i < e && ((b.byteOffset + i) & 3) !== 0) { if (b[i] === LF) count++; i++; }
  const words = (e - i) >> 2;
  if (words > 0) {
    const w = new Int32Array(b.buffer, b.byteOffset + i, words);
    for (let k = 0; k < words; k++) {
      const x = w[k]! ^ 0x0a0a0a0a;
      // High bit of each byte of t is set exactly when that byte of x is zero.
      const t = ~(((x & 0x7f7f7f7f) + 0x7f7f7f7f) | x | 0x7f7f7f7f);
      if (t !== 0) count += Math.imul((t >>> 7) & 0x01010101, 0x01010101) >>> 24;
    }
    i += words << 2;
  }
  for (; i < e; i++) if (b[i] === LF) count++;
  return count;
}

/** Number of UTF-16 code units that the UTF-8 bytes [s, e) decode to (counted by lead bytes). */
export function utf16Length(b: Uint8Array, s: number, e: number): number {
  let n = 0;
  for (let i = s; i < e; i++) {
    const c = b[i]!;
    if (c < 0x80 || c >= 0xc0) n += c >= 0xf0 && c < 0xf8 ? 2 : 1;
  }
  return n;
}

/** Maps UTF-16 offsets of a decoded string to 1-based lines, lazily, like ByteLines. */
export class StringLines {
  private checkpoints: Float64Array | undefined;

  constructor(readonly text: string) {}

  lineOf(offset: number): number {
    const t = this.text;
    let cp = this.checkpoints;
    if (!cp) {
      const blocks = (t.length >>> CHECKPOINT_SHIFT) + 1;
      cp = new Float64Array(blocks);
      let line = 0;
      let i = 0;
      for (let k = 0; k < blocks; k++) {
        cp[k] = line;
        const end = Math.min(t.length, (k + 1) * (1 << CHECKPOINT_SHIFT));
        for (; i < end; i++) if (t.charCodeAt(i) === LF) line++;
      }
      this.checkpoints = cp;
    }
    const k = Math.floor(offset / (1 << CHECKPOINT_SHIFT));
    let line = cp[k]!;
    for (let i = k * (1 << CHECKPOINT_SHIFT); i < offset; i++) if (t.charCodeAt(i) === LF) line++;
    return line + 1;
  }

  column(offset: number): number {
    const t = this.text;
    let p = offset;
    while (p > 0 && t.charCodeAt(p - 1) !== LF) p--;
    return offset - p + 1;
  }

  span(start: number, end: number): TextSpan {
    return { line: this.lineOf(start), column: this.column(start), length: end - start };
  }
}

/** Latin-1/UTF-8 text of a short byte range, for messages; long tokens are cut. */
export function tokenText(b: Uint8Array, s: number, e: number, max = 40): string {
  const cut = e - s > max;
  const text = new TextDecoder('utf-8').decode(b.subarray(s, cut ? s + max : e));
  return cut ? text + '…' : text;
}

// ---------------------------------------------------------------------------------------------
// numbers from bytes

export const INT32_MAX = 2147483647;

/**
 * Parses a strict decimal integer (`[+-]digits`) in [s, e) that fits in int32. Returns NaN for
 * anything else (`1.5`, `1e3`, `abc`, empty, too large). One pair of surrounding double quotes is
 * accepted, as CSV writers may quote every field.
 */
export function parseIntBytes(b: Uint8Array, s: number, e: number): number {
  if (e - s >= 2 && b[s] === QUOTE && b[e - 1] === QUOTE) {
    s++;
    e--;
  }
  let i = s;
  let neg = false;
  if (i < e) {
    const c = b[i]!;
    if (c === 45) {
      neg = true;
      i++;
    } else if (c === 43) i++;
  }
  if (i === e) return NaN;
  while (i < e - 1 && b[i] === 48) i++;
  if (e - i > 10) return NaN;
  let v = 0;
  for (; i < e; i++) {
    const d = b[i]! - 48;
    if (d < 0 || d > 9) return NaN;
    v = v * 10 + d;
  }
  if (neg) return v > INT32_MAX + 1 ? NaN : -v;
  return v > INT32_MAX ? NaN : v;
}

/** Why parseIntBytes refused a token, for messages. */
export function intRefusal(b: Uint8Array, s: number, e: number): string {
  if (s === e) return 'is empty';
  const f = parseNumberBytes(b, s, e);
  if (!numberState.ok) return 'is not a number';
  if (f !== f) return 'is NaN, not a whole number';
  if (f === Infinity || f === -Infinity) return 'is infinite, not a whole number';
  if (!Number.isInteger(f)) return 'is not a whole number';
  if (Math.abs(f) > Number.MAX_SAFE_INTEGER) return 'is beyond 2^53, too large to be held exactly';
  if (f > INT32_MAX || f < -INT32_MAX - 1) return 'is out of the int32 range';
  return 'is a whole number written as a float';
}

const POW10 = [1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15,
  1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22];
/** Largest mantissa m with m * 10 + 9 ≤ 2^53. */
const MANTISSA_CAP = 900719925474099;

/** Set by parseNumberBytes: whether the last token was a number (NaN/Inf spellings included). */
export const numberState = { ok: false };

/**
 * Parses a decimal floating-point number in [s, e): `[+-](digits[.digits]|.digits)[(e|E)[+-]digits]`,
 * or `nan`, `inf`, `infinity` (any case, optional sign) as NumPy and Python write them. The exact
 * fast path (mantissa ≤ 2^53 and |exponent| ≤ 22, one correctly rounded operation) covers almost
 * every token; others go through Number() on the already validated token. Sets `numberState.ok`.
 */
export function parseNumberBytes(b: Uint8Array, s: number, e: number): number {
  if (e - s >= 2 && b[s] === QUOTE && b[e - 1] === QUOTE) {
    s++;
    e--;
  }
  numberState.ok = false;
  let i = s;
  let neg = false;
  if (i < e) {
    const c = b[i]!;
    if (c === 45) {
      neg = true;
      i++;
    } else if (c === 43) i++;
  }
  if (i === e) return NaN;
  const body = i;
  let mant = 0;
  let exp10 = 0;
  let digits = 0;
  let full = false;
  let inexact = false;
  let c = b[i]!;
  while (c >= 48 && c <= 57) {
    const d = c - 48;
    if (!full && mant < MANTISSA_CAP) mant = mant * 10 + d;
    else {
      full = true;
      exp10++;
      if (d !== 0) inexact = true;
    }
    digits++;
    if (++i === e) break;
    c = b[i]!;
  }
  if (i < e && c === 46) {
    i++;
    while (i < e) {
      c = b[i]!;
      if (c < 48 || c > 57) break;
      const d = c - 48;
      if (!full && mant < MANTISSA_CAP) {
        mant = mant * 10 + d;
        exp10--;
      } else {
        full = true;
        if (d !== 0) inexact = true;
      }
      digits++;
      i++;
    }
  }
  if (digits === 0) return parseSpecial(b, s, e);
  if (i < e && (b[i] === 101 || b[i] === 69)) {
    i++;
    let eneg = false;
    if (i < e && (b[i] === 45 || b[i] === 43)) {
      eneg = b[i] === 45;
      i++;
    }
    if (i === e) return NaN;
    let x = 0;
    while (i < e) {
      const d = b[i]! - 48;
      if (d < 0 || d > 9) return NaN;
      if (x < 100000) x = x * 10 + d;
      i++;
    }
    exp10 += eneg ? -x : x;
  }
  if (i !== e) return NaN;
  numberState.ok = true;
  let v: number;
  if (!inexact && exp10 >= -22 && exp10 <= 22) v = exp10 >= 0 ? mant * POW10[exp10]! : mant / POW10[-exp10]!;
  else if (mant === 0 && !inexact) v = 0;
  else v = Number(latin1(b, body, e));
  return neg ? -v : v;
}

/**
 * parseNumberBytes for the common `[-]digits[.digits]` with at most 15 digits (exact: one
 * division by an exact power of ten); anything else goes to the full parser. Small enough to be
 * inlined into the readers' loops.
 */
export function parseDecimalBytes(b: Uint8Array, s: number, e: number): number {
  let i = s;
  const neg = b[i] === 45;
  if (neg) i++;
  let m = 0;
  let digits = 0;
  let dot = -1;
  for (; i < e; i++) {
    const c = b[i]!;
    const d = c - 48;
    if (d >= 0 && d <= 9) {
      m = m * 10 + d;
      digits++;
    } else if (c === 46 && dot < 0) dot = i;
    else return parseNumberBytes(b, s, e);
  }
  if (digits === 0 || digits > 15) return parseNumberBytes(b, s, e);
  numberState.ok = true;
  const v = dot < 0 ? m : m / POW10[e - dot - 1]!;
  return neg ? -v : v;
}

function parseSpecial(b: Uint8Array, s: number, e: number): number {
  let i = s;
  let neg = false;
  if (b[i] === 45 || b[i] === 43) {
    neg = b[i] === 45;
    i++;
  }
  const len = e - i;
  if (len !== 3 && len !== 8) return NaN;
  let word = '';
  for (let k = i; k < e; k++) word += String.fromCharCode(b[k]! | 0x20);
  if (word === 'nan') {
    numberState.ok = true;
    return NaN;
  }
  if (word === 'inf' || word === 'infinity') {
    numberState.ok = true;
    return neg ? -Infinity : Infinity;
  }
  return NaN;
}

function latin1(b: Uint8Array, s: number, e: number): string {
  let t = '';
  for (let i = s; i < e; i++) t += String.fromCharCode(b[i]!);
  return t;
}

// ---------------------------------------------------------------------------------------------
// growable typed arrays

/**
 * Typed-array allocation for sizes that depend on the input: a failed allocation (a hostile or
 * absurd file) becomes an UnreadableError instead of a RangeError.
 */
export function allocInt32(len: number): Int32Array<ArrayBuffer> {
  try {
    return new Int32Array(len);
  } catch {
    throw tooLarge(len, 4);
  }
}

export function allocUint32(len: number): Uint32Array<ArrayBuffer> {
  try {
    return new Uint32Array(len);
  } catch {
    throw tooLarge(len, 4);
  }
}

export function allocFloat64(len: number): Float64Array<ArrayBuffer> {
  try {
    return new Float64Array(len);
  } catch {
    throw tooLarge(len, 8);
  }
}

function tooLarge(len: number, bytesPer: number): UnreadableError {
  return new UnreadableError(`the file needs ${len} values (${len * bytesPer} bytes) in memory, more than can be allocated`);
}

export function growInt32(a: Int32Array, min: number): Int32Array<ArrayBuffer> {
  const next = allocInt32(Math.max(min, Math.ceil(a.length * 1.5) + 16));
  next.set(a);
  return next;
}

export function growUint32(a: Uint32Array, min: number): Uint32Array<ArrayBuffer> {
  const next = allocUint32(Math.max(min, Math.ceil(a.length * 1.5) + 16));
  next.set(a);
  return next;
}

export function growFloat64(a: Float64Array, min: number): Float64Array<ArrayBuffer> {
  const next = allocFloat64(Math.max(min, Math.ceil(a.length * 1.5) + 16));
  next.set(a);
  return next;
}

/** The first `len` elements; copied when the spare capacity is worth giving back. */
export function fit<T extends Int32Array | Uint32Array | Float64Array>(a: T, len: number): T {
  if (len === a.length) return a;
  return (a.length - len > (len >>> 3) ? a.slice(0, len) : a.subarray(0, len)) as T;
}

// ---------------------------------------------------------------------------------------------
// problems

interface ProblemEntry {
  code: ProblemCode;
  severity: Severity;
  tensor: string | undefined;
  summary: (count: number, first: ProblemLocation | undefined) => string;
  count: number;
  locations: ProblemLocation[];
}

/**
 * Collects problems of a few kinds, counting every occurrence and keeping the first locations.
 * Callers ask `wants(key)` before building a location, so hot loops allocate nothing once the
 * location list of a kind is full.
 */
export class ProblemCollector {
  private readonly entries = new Map<string, ProblemEntry>();

  wants(key: string): boolean {
    const e = this.entries.get(key);
    return !e || e.locations.length < MAX_LOCATIONS;
  }

  /** Registers a kind of problem (once) and records occurrences (one by default). */
  add(
    key: string,
    code: ProblemCode,
    severity: Severity,
    tensor: string | undefined,
    summary: (count: number, first: ProblemLocation | undefined) => string,
    location?: ProblemLocation,
    occurrences = 1,
  ): void {
    let entry = this.entries.get(key);
    if (!entry) {
      entry = { code, severity, tensor, summary, count: 0, locations: [] };
      this.entries.set(key, entry);
    }
    entry.count += occurrences;
    if (location && entry.locations.length < MAX_LOCATIONS) entry.locations.push(location);
  }

  get size(): number {
    return this.entries.size;
  }

  problems(): Problem[] {
    const out: Problem[] = [];
    for (const e of this.entries.values()) {
      const first = e.locations[0];
      const p: Problem = {
        code: e.code,
        severity: e.severity,
        message: e.summary(e.count, first),
        count: e.count,
      };
      if (e.tensor !== undefined) p.tensor = e.tensor;
      if (first?.line !== undefined) p.line = first.line;
      if (first?.column !== undefined) p.column = first.column;
      if (e.locations.length > 0) p.locations = e.locations;
      out.push(p);
    }
    return out;
  }
}

export const plural = (n: number, one: string, many = one + 's'): string => `${n} ${n === 1 ? one : many}`;

// ---------------------------------------------------------------------------------------------
// fields

/**
 * Splits one line into fields without allocating. `delim` 0 means runs of spaces/tabs separate
 * fields; otherwise one delimiter byte does, and blanks around each field are trimmed (so
 * `a, b` gives `a` and `b`, and `a,,b` has an empty middle field). Bounds are byte offsets.
 */
export class FieldSplitter {
  starts = new Float64Array(16);
  ends = new Float64Array(16);
  count = 0;
  /** Offset of the LF ending the line (or the end of the data). */
  lineEnd = 0;
  /** Offset where the next line starts. */
  next = 0;
  /**
   * Fields kept per line: a line with more stops being split there (`count` is then `maxFields`
   * and `cut` is set), so one enormous line costs a scan for its end, not memory per field.
   */
  maxFields = Infinity;
  /** The last line had more than `maxFields` fields. */
  cut = false;

  constructor(readonly delim: number) {}

  /** `i` must point at the first non-blank byte of the line. */
  split(b: Uint8Array, i: number, n: number): void {
    const d = this.delim;
    let f = 0;
    this.cut = false;
    for (;;) {
      const s = i;
      let e: number;
      if (d === 0) {
        while (i < n) {
          const c = b[i]!;
          if (c === SPACE || c === TAB || c === LF || c === CR) break;
          i++;
        }
        e = i;
        while (i < n) {
          const c = b[i]!;
          if (c !== SPACE && c !== TAB && c !== CR) break;
          i++;
        }
      } else {
        while (i < n) {
          const c = b[i]!;
          if (c === d || c === LF) break;
          i++;
        }
        e = i;
        while (e > s) {
          const c = b[e - 1]!;
          if (c !== SPACE && c !== TAB && c !== CR) break;
          e--;
        }
      }
      if (f === this.maxFields) {
        // One field too many: skip to the end of the line.
        this.cut = true;
        i = lineEndFrom(b, i, n);
        break;
      }
      if (f === this.starts.length) this.growFields();
      this.starts[f] = s;
      this.ends[f] = e;
      f++;
      if (i >= n || b[i] === LF) break;
      if (d !== 0) {
        i++; // past the delimiter
        while (i < n) {
          const c = b[i]!;
          if ((c !== SPACE && c !== TAB && c !== CR) || c === d) break;
          i++;
        }
      }
    }
    this.count = f;
    this.lineEnd = i;
    this.next = i < n ? i + 1 : n;
  }

  private growFields(): void {
    const s = new Float64Array(this.starts.length * 2);
    s.set(this.starts);
    this.starts = s;
    const e = new Float64Array(this.ends.length * 2);
    e.set(this.ends);
    this.ends = e;
  }
}

/** Offset of the first byte of the line at `i` that is not a space, tab or CR (may be LF or n). */
export function skipBlanks(b: Uint8Array, i: number, n: number): number {
  while (i < n) {
    const c = b[i]!;
    if (c !== SPACE && c !== TAB && c !== CR) break;
    i++;
  }
  return i;
}

/**
 * Offset of the LF that ends the line holding `i` (or n). Long spans are searched four bytes at a
 * time (the zero-byte test of countLF), so the end of a 200 MB line is found in a fraction of a
 * second, over shared memory as well (where the runtime's own indexOf can be slow).
 */
export function lineEndFrom(b: Uint8Array, i: number, n: number): number {
  if (n - i >= 64) {
    while (((b.byteOffset + i) & 3) !== 0) {
      if (b[i] === LF) return i;
      i++;
    }
    const words = (n - i) >> 2;
    const w = new Int32Array(b.buffer, b.byteOffset + i, words);
    for (let k = 0; k < words; k++) {
      const x = w[k]! ^ 0x0a0a0a0a;
      if ((((x & 0x7f7f7f7f) + 0x7f7f7f7f) | x | 0x7f7f7f7f) !== -1) {
        i += k << 2; // an LF is in this word
        while (b[i] !== LF) i++;
        return i;
      }
    }
    i += words << 2;
  }
  while (i < n && b[i] !== LF) i++;
  return i;
}

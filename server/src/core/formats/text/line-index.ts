/**
 * Byte offsets to lines and columns, looked up lazily (no whole-file split into strings), and the
 * end of a line found four bytes at a time.
 *
 * Columns are counted in UTF-16 code units, which is what editor and language-server positions use;
 * for text without characters outside the Basic Multilingual Plane this equals the character count.
 */
import type { TextSpan } from '../types';
import { LF } from './bytes';

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

// Line numbers of text readers: the word-at-a-time LF count must equal a byte-by-byte count for
// every alignment, and ByteLines must give each offset's 1-based line across 64 KiB checkpoints.
import { describe, expect, it } from 'vitest';
import { seededRandom } from './random';
import { ByteLines, countLF, lineEndFrom } from '../../server/src/core/formats/text/line-index';

function naive(b: Uint8Array, s: number, e: number): number {
  let c = 0;
  for (let i = s; i < e; i++) if (b[i] === 10) c++;
  return c;
}

describe('countLF', () => {
  it('equals a byte-by-byte count for all alignments and bytes next to 0x0a', () => {
    const next = seededRandom(5);
    const rnd = (): number => next(256);
    // Bytes 0x09, 0x0a, 0x0b, 0x8a and 0x00 are the ones a loose zero-byte test gets wrong.
    const pool = [0x0a, 0x0a, 0x09, 0x0b, 0x8a, 0x00, 0x20, 0x31, 0xff, 0x7f];
    const buf = new Uint8Array(4099);
    for (let i = 0; i < buf.length; i++) buf[i] = pool[rnd() % pool.length]!;
    for (let off = 0; off < 4; off++) {
      const b = buf.subarray(off);
      for (const [s, e] of [[0, b.length], [1, 7], [3, 3], [5, 4000], [2, 9]] as const) {
        expect(countLF(b, s, e)).toBe(naive(b, s, e));
      }
    }
  });
});

describe('ByteLines', () => {
  it('maps offsets to lines across checkpoint blocks', () => {
    const lines: string[] = [];
    for (let i = 0; i < 30_000; i++) lines.push(`${i} ${(i * 7) % 1000}`);
    const b = new TextEncoder().encode(lines.join('\n') + '\n');
    const bl = new ByteLines(b, 0);
    let line = 1;
    for (let off = 0; off < b.length; off += 997) {
      while (naive(b, 0, off) + 1 > line) line++;
      expect(bl.lineOf(off)).toBe(line);
    }
    expect(bl.lineOf(b.length - 1)).toBe(30_000);
  });
});

describe('lineEndFrom', () => {
  it('finds the same LF as a byte-by-byte search for all alignments, span lengths and buffer kinds', () => {
    const next = seededRandom(8);
    const naiveEnd = (b: Uint8Array, i: number, n: number) => { while (i < n && b[i] !== 10) i++; return i; };
    for (const shared of [false, true]) {
      const size = 3000;
      const buf = new Uint8Array(shared ? new SharedArrayBuffer(size) : new ArrayBuffer(size));
      // Mostly bytes next to 0x0a (0x0b, 0x8a, 0x09) with a few LFs, so words without LF look close to one.
      const pool = [0x0b, 0x8a, 0x09, 0x20, 0x30, 0x00, 0xff];
      for (let i = 0; i < size; i++) buf[i] = next(97) === 0 ? 10 : pool[next(pool.length)]!;
      for (let off = 0; off < 4; off++) {
        const b = buf.subarray(off, size - 3);
        for (let t = 0; t < 300; t++) {
          const i = next(b.length), n = i + next(b.length - i + 1);
          expect(lineEndFrom(b, i, n)).toBe(naiveEnd(b, i, n));
        }
        expect(lineEndFrom(b, 0, b.length)).toBe(naiveEnd(b, 0, b.length));
      }
    }
    // A 1 MB line ends where its LF is.
    const long = new Uint8Array(1 << 20).fill(0x31);
    long[long.length - 2] = 10;
    expect(lineEndFrom(long, 5, long.length)).toBe(long.length - 2);
    expect(lineEndFrom(long, 5, long.length - 2)).toBe(long.length - 2);
  });
});

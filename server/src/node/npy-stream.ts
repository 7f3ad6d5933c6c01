/**
 * Reads a large integer .npy edge index without holding the file in memory: the header is parsed
 * by the core reader, then the data is read in 1 MiB steps and int64 values are narrowed straight
 * into an int32 array over shared memory (which the two-thread graph builder can hand to its
 * helper without a copy). Gives exactly the tensor `parseNpy` gives for the same file, or null
 * when this path does not apply (other dtypes, byte order, Fortran order, a value beyond int32,
 * a header longer than the prefix read) — the caller then reads the file the ordinary way.
 */
import * as fs from 'node:fs';
import { npyStem, parseNpyHeader } from '../core/formats/npy';
import { HOST_LITTLE_ENDIAN, narrowInt64Into } from '../core/formats/elements';
import type { ReadLimits, ReadResult } from '../core/formats/types';

/**
 * Files below this size take the ordinary path. Above it this path writes only the int32 ids into
 * fresh memory, where the whole-file path first writes the file's bytes too; first writes to new
 * pages are the largest cost of reading (bench/README.md), so it pays from small sizes on: the
 * 16 MB bench `.npy` is read in 31 ms this way against 94 ms whole (the threshold was 32 MiB).
 */
export const STREAM_MIN_BYTES = 1 * 1024 ** 2;
/** One step's bytes: small enough to stay in cache and be written to warm pages after the first step. */
const CHUNK_BYTES = 1 * 1024 ** 2;
const PREFIX_BYTES = 64 * 1024;

export function readNpyStreaming(p: string, size: number, limits: ReadLimits, minBytes = STREAM_MIN_BYTES): ReadResult | null {
  if (size < minBytes || !HOST_LITTLE_ENDIAN) return null;
  const fd = fs.openSync(p, 'r');
  try {
    const prefix = new Uint8Array(Math.min(size, PREFIX_BYTES));
    if (readFully(fd, prefix, 0) !== prefix.length) return null;
    // Throws UnreadableError for a bad or truncated header, exactly as the whole-file path does.
    const layout = parseNpyHeader(prefix, size, limits);
    if (!layout) return null;
    const { descr, fortran, shape, count, dataStart } = layout;
    const { dtype } = descr;
    if (!descr.littleEndian || (fortran && shape.length > 1)) return null;
    if (dtype !== 'int64' && dtype !== 'uint64' && dtype !== 'int32') return null;
    const out = new Int32Array(new SharedArrayBuffer(count * 4));
    if (dtype === 'int32') {
      const view = new Uint8Array(out.buffer);
      if (readFully(fd, view, dataStart) !== view.length) return null;
    } else {
      const chunk = new Uint8Array(CHUNK_BYTES);
      const words = new Int32Array(chunk.buffer);
      const signed = dtype === 'int64';
      for (let done = 0; done < count;) {
        const take = Math.min(CHUNK_BYTES / 8, count - done);
        const part = chunk.subarray(0, take * 8);
        if (readFully(fd, part, dataStart + done * 8) !== part.length) return null;
        if (!narrowInt64Into(words, take, signed, out, done)) return null;
        done += take;
      }
    }
    return { format: 'npy', tensors: [{ kind: 'dense', name: npyStem(p), dtype, shape, data: out }], problems: [] };
  } finally {
    fs.closeSync(fd);
  }
}

/** Reads into `buf` from file position `pos` until it is full or the file ends; bytes read. */
function readFully(fd: number, buf: Uint8Array, pos: number): number {
  let off = 0;
  while (off < buf.length) {
    const n = fs.readSync(fd, buf, off, buf.length - off, pos + off);
    if (n <= 0) break;
    off += n;
  }
  return off;
}

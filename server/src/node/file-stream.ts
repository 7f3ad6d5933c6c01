/**
 * Reads a large file on the helper thread while the caller parses it: the helper fills a shared
 * buffer in 4 MiB steps and publishes how many are done; the parser waits (Atomics.wait) only when
 * it catches up. Reading a file costs about a third of parsing it (copying from the page cache
 * and first-touching fresh memory), so overlapping the two takes that share off the parse time.
 */
import * as fs from 'node:fs';
import { UnreadableError } from '../core/formats/types';
import type { ArrivingBytes } from '../core/formats/edgelist';
import { dropHelper, getHelper, sharedInt32, signal, waitWhile } from './helper-thread';

/** Files below this size are read the ordinary way. */
export const ARRIVING_MIN_BYTES = 32 * 1024 ** 2;
const CHUNK = 4 * 1024 ** 2;
/** Control words: chunks filled so far (-1 once reading failed), and a stop request from the reader. */
const CHUNKS = 0, FAILED = -1, STOP = 1;
/** Longest wait for the next chunk before giving up. */
const STALL_MS = 60_000;

export interface ReadJob {
  kind: 'read';
  path: string;
  bytes: Uint8Array;
  control: Int32Array;
}

/**
 * Starts reading `p` (of `size` bytes) on the helper thread. Returns the buffer (final length,
 * filled as it arrives), the waiting side for the parser, and `stop` for a parser that gave up
 * early (the file is refused from its first bytes): the helper then reads no further chunks.
 * Null when there is no helper.
 */
export function readArriving(p: string, size: number, minBytes = ARRIVING_MIN_BYTES): { bytes: Uint8Array; arriving: ArrivingBytes; stop(): void } | null {
  if (size < minBytes) return null;
  const w = getHelper();
  if (!w) return null;
  const bytes = new Uint8Array(new SharedArrayBuffer(size));
  const control = sharedInt32(2);
  const job: ReadJob = { kind: 'read', path: p, bytes, control };
  w.postMessage(job);
  const arriving: ArrivingBytes = {
    waitBeyond(have: number): number {
      for (;;) {
        const chunks = Atomics.load(control, CHUNKS);
        if (chunks === FAILED) {
          throw new UnreadableError('the file changed or could not be read to its end while it was being checked');
        }
        const filled = Math.min(size, chunks * CHUNK);
        if (filled > have || filled === size) return filled;
        if (!waitWhile(control, CHUNKS, chunks, STALL_MS)) {
          dropHelper(w);
          throw new UnreadableError(`reading the file stalled for ${STALL_MS / 1000} s`);
        }
      }
    },
  };
  return { bytes, arriving, stop: () => signal(control, STOP, 1) };
}

/** The helper thread's side: fills the buffer chunk by chunk. */
export function runReadJob(job: ReadJob): void {
  const { bytes, control } = job;
  let fd: number | undefined;
  try {
    fd = fs.openSync(job.path, 'r');
    let off = 0, chunks = 0;
    while (off < bytes.length) {
      if (Atomics.load(control, STOP) !== 0) return; // nobody waits for the rest
      const end = Math.min(bytes.length, off + CHUNK);
      while (off < end) {
        const n = fs.readSync(fd, bytes, off, end - off, off);
        if (n <= 0) throw new Error('the file ended early');
        off += n;
      }
      signal(control, CHUNKS, ++chunks);
    }
  } catch {
    // Wakes a parser waiting on the count (and tells one about to wait not to).
    signal(control, CHUNKS, FAILED);
  } finally {
    if (fd !== undefined) fs.closeSync(fd);
  }
}

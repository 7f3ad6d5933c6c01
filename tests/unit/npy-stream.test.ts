// The streaming .npy path (node/npy-stream.ts) must give exactly the tensor of the whole-file
// reader, or step aside (null). Format ground truth: every .npy here was written by the real NumPy
// (tests/fixtures/make_binary_fixtures.py, Debian python3-numpy), so the comparison runs over
// files from outside the project; the large and truncated cases are written by our own encoder to
// reach chunk boundaries, and only compare our two paths with each other.
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { describe, expect, it } from 'vitest';
import { parseNpy } from '../../server/src/core/formats/npy';
import { encodeNpyInt64 } from '../../server/src/core/formats/npy-write';
import { DEFAULT_LIMITS, UnreadableError, type DenseTensor } from '../../server/src/core/formats/types';
import { readNpyStreaming } from '../../server/src/node/npy-stream';

const dir = path.join(__dirname, '../fixtures/binary');

function whole(p: string): DenseTensor {
  return parseNpy(new Uint8Array(fs.readFileSync(p)), path.basename(p, '.npy'), DEFAULT_LIMITS);
}

function streamed(p: string): DenseTensor | null {
  const r = readNpyStreaming(p, fs.statSync(p).size, DEFAULT_LIMITS, 0);
  return r ? (r.tensors[0] as DenseTensor) : null;
}

describe('streaming .npy reader agrees with the whole-file reader', () => {
  const files = fs.readdirSync(dir).filter((f) => f.endsWith('.npy'));
  it('covers the NumPy-written fixtures', () => expect(files.length).toBeGreaterThan(30));

  for (const f of files) {
    it(f, () => {
      const p = path.join(dir, f);
      let expected: DenseTensor | Error;
      try { expected = whole(p); } catch (e) { expected = e as Error; }
      if (expected instanceof Error) {
        expect(() => streamed(p)).toThrow(expected.message);
        return;
      }
      const s = streamed(p);
      const applies = ['int64', 'uint64', 'int32'].includes(expected.dtype) && expected.data instanceof Int32Array
        && !f.startsWith('be_') && !f.startsWith('fortran_');
      if (!applies) {
        // Floats, big-endian, Fortran order and int64 values beyond int32 stay on the ordinary path.
        if (s) expect(s.data).toBeInstanceOf(Int32Array);
        if (s) expect(Array.from(s.data)).toEqual(Array.from(expected.data));
        return;
      }
      expect(s).not.toBeNull();
      expect(s!.dtype).toBe(expected.dtype);
      expect(s!.shape).toEqual(expected.shape);
      expect(s!.data).toBeInstanceOf(Int32Array);
      expect(Array.from(s!.data)).toEqual(Array.from(expected.data));
      expect(s!.data.buffer).toBeInstanceOf(SharedArrayBuffer);
    });
  }

  it('crosses 8 MiB chunk boundaries, and steps aside for a value past int32 in the last chunk', () => {
    const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-npy-'));
    try {
      const e = 1_300_000; // 2 x 1.3M int64 = 20.8 MB: three chunks, the last one partial
      const vals = new Float64Array(2 * e);
      for (let i = 0; i < vals.length; i++) vals[i] = (i * 7919) % 2_000_003 - (i % 5 === 0 ? 3 : 0);
      const p = path.join(tmp, 'edge_index.npy');
      fs.writeFileSync(p, encodeNpyInt64([2, e], vals));
      const s = streamed(p)!;
      expect(s.shape).toEqual([2, e]);
      expect(Array.from(s.data)).toEqual(Array.from(whole(p).data));

      vals[vals.length - 1] = 2 ** 31;
      fs.writeFileSync(p, encodeNpyInt64([2, e], vals));
      expect(streamed(p)).toBeNull();
      expect(whole(p).data).toBeInstanceOf(Float64Array);
    } finally {
      fs.rmSync(tmp, { recursive: true, force: true });
    }
  });

  it('reports a truncated file as unreadable with the whole-file reader\'s message', () => {
    const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-npy-'));
    try {
      const bytes = encodeNpyInt64([2, 1000], Float64Array.from({ length: 2000 }, (_, i) => i));
      const p = path.join(tmp, 'cut.npy');
      fs.writeFileSync(p, bytes.subarray(0, bytes.length - 9));
      let msg = '';
      try { whole(p); } catch (e) { expect(e).toBeInstanceOf(UnreadableError); msg = (e as Error).message; }
      expect(msg).toMatch(/truncated/);
      expect(() => streamed(p)).toThrow(msg);
    } finally {
      fs.rmSync(tmp, { recursive: true, force: true });
    }
  });
});

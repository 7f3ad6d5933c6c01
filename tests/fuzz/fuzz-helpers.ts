// Shared by the binary fuzz tests: byte-level edits of fixture files (set a byte, write a 32-bit
// word, insert, delete, truncate — at positions spread over the whole file), the run-count scale,
// and the consistency every read result must have.
import fc from 'fast-check';
import { numel, type ReadResult } from '../../server/src/core/formats/types';

/** HOPSCOPE_FUZZ_SCALE=50 runs every property 50 times longer (for bug hunts, not for CI). */
const SCALE = Math.max(1, Number(process.env['HOPSCOPE_FUZZ_SCALE'] ?? 1) || 1);
export const runs = (n: number): number => n * SCALE;

/** Every tensor holds as many elements as its shape says; sparse entries lie inside the shape. */
export function checkTensors(r: ReadResult): void {
  for (const t of r.tensors) {
    if (t.kind === 'dense') {
      const n = numel(t.shape);
      // A summarised tensor (a large .npz member) keeps no values, only figures over all n.
      if (t.summary && t.data.length !== 0) throw new Error(`tensor ${t.name}: summarised but holds values`);
      const got = t.strings ? t.strings.length : t.summary ? n : t.data.length;
      if (got !== n) throw new Error(`tensor ${t.name}: ${got} elements for shape (${t.shape})`);
    } else {
      const n = t.row.length;
      if (t.col.length !== n || (t.values && t.values.length !== n)) throw new Error('sparse arrays differ in length');
      for (let k = 0; k < n; k++) {
        if (!(t.row[k]! >= 0 && t.row[k]! < t.shape[0] && t.col[k]! >= 0 && t.col[k]! < t.shape[1])) {
          throw new Error(`sparse entry ${k} outside the shape`);
        }
      }
    }
  }
}

// A fraction of the file length, spread over the whole file. (fc.double would not do: it draws
// bit patterns, so nearly all of its values in [0, 1) are tiny and every edit lands at byte 0.)
const POSITION_SCALE = 2 ** 30;
const interesting = fc.oneof(fc.integer({ min: 0, max: 255 }), fc.constantFrom(0, 1, 0x7f, 0x80, 0xfe, 0xff));

/** One edit; `maxDelete` bounds how many bytes a deletion removes. */
export function byteMutation(maxDelete: number) {
  return fc.record({
    op: fc.constantFrom('set', 'set', 'set', 'truncate', 'insert', 'delete', 'u32'),
    pos: fc.integer({ min: 0, max: POSITION_SCALE - 1 }),
    value: fc.oneof(interesting, fc.constantFrom(0xffffffff, 0x7fffffff, 0x80000000, 1 << 20, 65535)),
    bytes: fc.array(interesting, { minLength: 1, maxLength: 8 }),
    len: fc.integer({ min: 1, max: maxDelete }),
  });
}

export type ByteMutation = ReturnType<typeof byteMutation> extends fc.Arbitrary<infer T> ? T : never;

/** A copy of `src` with the edits applied in order. */
export function mutate(src: Uint8Array, muts: ByteMutation[]): Uint8Array {
  let b = src.slice();
  for (const m of muts) {
    const at = Math.floor((m.pos / POSITION_SCALE) * (b.length + 1));
    switch (m.op) {
      case 'set': if (at < b.length) b[at] = m.value & 0xff; break;
      case 'truncate': b = b.slice(0, at); break;
      case 'insert': {
        const out = new Uint8Array(b.length + m.bytes.length);
        out.set(b.subarray(0, at));
        out.set(m.bytes, at);
        out.set(b.subarray(at), at + m.bytes.length);
        b = out;
        break;
      }
      case 'delete': {
        const out = new Uint8Array(Math.max(0, b.length - Math.min(m.len, b.length - at)));
        out.set(b.subarray(0, at));
        out.set(b.subarray(at + m.len), at);
        b = out;
        break;
      }
      case 'u32':
        for (let k = 0; k < 4 && at + k < b.length; k++) b[at + k] = (m.value >>> (8 * k)) & 0xff;
        break;
    }
  }
  return b;
}

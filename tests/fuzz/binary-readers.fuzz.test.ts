/**
 * Property tests for the binary readers: random bytes, and mutated / truncated copies of the
 * fixtures written by numpy 1.24 / scipy 1.10 (tests/fixtures/make_binary_fixtures.py), must
 * either read into well-formed tensors or fail with UnreadableError, never anything else.
 */
import { describe, it } from 'vitest';
import fc from 'fast-check';
import { readNpy } from '../../server/src/core/formats/npy';
import { readNpz } from '../../server/src/core/formats/npz';
import { readSafetensors } from '../../server/src/core/formats/safetensors';
import { openZip } from '../../server/src/core/formats/zip';
import { UnreadableError, type ReadLimits } from '../../server/src/core/formats/types';
import { fixture, fixtureNames, npyBytes, safetensorsBytes } from '../unit/binary-helpers';
import { byteMutation, checkTensors, mutate, runs } from './fuzz-helpers';

/** Small limits so that a lying header cannot make a run slow. */
const LIMITS: ReadLimits = { maxDecompressedBytes: 64 * 1024 * 1024, maxHeaderBytes: 1024 * 1024 };
/** The same, with every deflated .npz member that may be summarised read in pieces. */
const SUMMARISING: ReadLimits = { ...LIMITS, streamAboveBytes: 0, maxStreamedBytes: 64 * 1024 * 1024 };

/** Runs `fn`; any exception other than UnreadableError fails the property. */
function onlyUnreadable(fn: () => void): void {
  try {
    fn();
  } catch (e) {
    if (e instanceof UnreadableError) return;
    throw e;
  }
}

function readAll(bytes: Uint8Array, kind: 'npy' | 'npz' | 'safetensors' | 'zip'): void {
  switch (kind) {
    case 'npy': onlyUnreadable(() => checkTensors(readNpy(bytes, 'f.npy', LIMITS))); break;
    case 'npz':
      onlyUnreadable(() => checkTensors(readNpz(bytes, 'f.npz', LIMITS)));
      onlyUnreadable(() => checkTensors(readNpz(bytes, 'f.npz', SUMMARISING)));
      break;
    case 'safetensors': onlyUnreadable(() => checkTensors(readSafetensors(bytes, 'f.safetensors', LIMITS))); break;
    case 'zip':
      onlyUnreadable(() => {
        const zip = openZip(bytes, LIMITS);
        for (const e of zip.entries) {
          onlyUnreadable(() => {
            const d = zip.readEntry(e);
            if (d.length !== e.uncompressedSize) throw new Error('entry length differs from its declared size');
          });
          onlyUnreadable(() => {
            const s = zip.streamEntry(e);
            let n = 0;
            for (let p = s.next(); p !== null; p = s.next()) n += p.length;
            if (n !== e.uncompressedSize) throw new Error('streamed length differs from its declared size');
          });
        }
      });
      break;
  }
}

const kindOf = (name: string): 'npy' | 'npz' | 'safetensors' =>
  name.endsWith('.npy') ? 'npy' : name.endsWith('.npz') ? 'npz' : 'safetensors';

const files = fixtureNames();
const fixtures = new Map(files.map((n) => [n, fixture(n)]));

const mutation = byteMutation(64);

describe('binary readers throw only UnreadableError', () => {
  it('random bytes', () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 700 }), (bytes) => {
        for (const k of ['npy', 'npz', 'safetensors', 'zip'] as const) readAll(bytes, k);
      }),
      { numRuns: runs(300) },
    );
  });

  it('random bytes behind valid magic numbers', () => {
    const prefixes = [
      new Uint8Array([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0]),
      new Uint8Array([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 3, 0]),
      new Uint8Array([0x50, 0x4b, 0x03, 0x04]),
    ];
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 2 }), fc.uint8Array({ maxLength: 400 }), (p, rest) => {
        const b = new Uint8Array(prefixes[p]!.length + rest.length);
        b.set(prefixes[p]!);
        b.set(rest, prefixes[p]!.length);
        readAll(b, 'npy');
        readAll(b, 'npz');
        readAll(b, 'zip');
        // a random tail behind a plausible end-of-central-directory record
        const eocd = new Uint8Array(rest.length + 22);
        eocd.set(rest);
        eocd.set([0x50, 0x4b, 0x05, 0x06], rest.length);
        for (let k = 4; k < 22; k++) eocd[rest.length + k] = rest[k % Math.max(1, rest.length)] ?? 0;
        eocd[rest.length + 20] = 0;
        eocd[rest.length + 21] = 0;
        readAll(eocd, 'zip');
        readAll(eocd, 'npz');
      }),
      { numRuns: runs(250) },
    );
  });

  it('mutated and truncated fixtures', () => {
    fc.assert(
      fc.property(fc.constantFrom(...files), fc.array(mutation, { minLength: 1, maxLength: 4 }), (name, muts) => {
        const b = mutate(fixtures.get(name)!, muts);
        const kind = kindOf(name);
        readAll(b, kind);
        if (kind === 'npz') readAll(b, 'zip');
      }),
      { numRuns: runs(1100) },
    );
  });

  it('generated .npy headers', () => {
    const descr = fc.constantFrom('<i8', '>i8', '<u8', '|b1', '<f2', '>f2', '<i4', '>u2', '|u1', '<f8', '|S3', '<U2', '>U1', '|O', '<c8', 'x');
    const dim = fc.oneof(fc.integer({ min: 0, max: 6 }), fc.constantFrom(-1, 2 ** 31, 2 ** 53, 1e20));
    fc.assert(
      fc.property(descr, fc.boolean(), fc.array(dim, { maxLength: 4 }), fc.integer({ min: 0, max: 200 }), fc.integer({ min: 1, max: 3 }),
        (d, fortran, shape, dataLen, version) => {
          const tuple = shape.length === 1 ? `(${shape[0]},)` : `(${shape.join(', ')})`;
          const dict = `{'descr': '${d}', 'fortran_order': ${fortran ? 'True' : 'False'}, 'shape': ${tuple}, }`;
          const data = new Uint8Array(dataLen).map((_, i) => (i * 37) & 0xff);
          readAll(npyBytes(dict, data, { version: version as 1 | 2 | 3, align: 64 }), 'npy');
        }),
      { numRuns: runs(200) },
    );
  });

  it('generated safetensors headers', () => {
    const dtype = fc.constantFrom('BOOL', 'U8', 'I8', 'I16', 'U16', 'F16', 'BF16', 'I32', 'U32', 'F32', 'F64', 'I64', 'U64', 'F8_E4M3', 'X');
    const entry = fc.record({
      name: fc.constantFrom('a', 'b', 'c', '0', '__metadata__'),
      dtype,
      shape: fc.array(fc.oneof(fc.integer({ min: 0, max: 4 }), fc.constantFrom(-1, 2 ** 53)), { maxLength: 3 }),
      begin: fc.integer({ min: 0, max: 40 }),
      len: fc.integer({ min: -2, max: 40 }),
    });
    fc.assert(
      fc.property(fc.array(entry, { maxLength: 4 }), fc.integer({ min: 0, max: 120 }), (entries, dataLen) => {
        const body = entries
          .map((e) => `"${e.name}":{"dtype":"${e.dtype}","shape":${JSON.stringify(e.shape)},"data_offsets":[${e.begin},${e.begin + e.len}]}`)
          .join(',');
        readAll(safetensorsBytes(`{${body}}`, new Uint8Array(dataLen)), 'safetensors');
      }),
      { numRuns: runs(150) },
    );
  });
});

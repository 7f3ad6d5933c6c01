/**
 * Helpers for the binary reader tests: fixture loading, expected.json access, and builders that
 * write .npy / ZIP / safetensors bytes by hand from the published layouts.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { expect } from 'vitest';
import { deflateSync } from 'fflate';
import { UnreadableError, type Tensor, type TensorData } from '../../server/src/core/formats/types';
import { crc32 } from '../../server/src/core/formats/crc32';

export const FIXTURE_DIR = fileURLToPath(new URL('../fixtures/binary/', import.meta.url));

export function fixture(name: string): Uint8Array {
  const b = readFileSync(join(FIXTURE_DIR, name));
  // A Uint8Array over exactly the file bytes (Buffer pools small files at odd offsets).
  return new Uint8Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.length));
}

export function fixtureNames(): string[] {
  return readdirSync(FIXTURE_DIR).filter((n) => n !== 'expected.json').sort();
}

export type JsonNum = number | 'nan' | 'inf' | '-inf';

export interface ExpectedTensor {
  dtype: string;
  shape: number[];
  sum?: JsonNum;
  first?: JsonNum[];
  strings?: string[];
}

/** What NumPy computes for a tensor a summarised member must reproduce (make_binary_fixtures.py array_figures). */
export interface ExpectedFigures {
  min: JsonNum | null;
  max: JsonNum | null;
  sum: JsonNum;
  nonfinite: number;
  nan: number;
  first_nonfinite: number[];
  columns: Array<{ min: JsonNum | null; max: JsonNum | null; mean: JsonNum | null; std: JsonNum | null; nan: number; inf: number }>;
}

export interface ExpectedFile {
  format: 'npy' | 'npz' | 'sparse-npz' | 'safetensors' | 'corrupt-npz';
  compressed?: boolean;
  tensors?: Record<string, ExpectedTensor>;
  figures?: Record<string, ExpectedFigures>;
  // corrupt-npz: a copy of `source` with one bit flipped in `member`, and what NumPy said loading it
  source?: string;
  member?: string;
  flipped?: 'data' | 'crc';
  numpy_error?: string | null;
  // sparse-npz
  layout?: string;
  dtype?: string;
  shape?: number[];
  nnz?: number;
  sum?: JsonNum;
  dense?: JsonNum[][];
  // safetensors
  header_len?: number;
  size?: number;
  order?: string[];
}

export interface Expected {
  generator: string;
  half_to_float32: { bits_sum: number; weighted_bits_mod_2p31m1: number };
  files: Record<string, ExpectedFile>;
}

export const expected: Expected = JSON.parse(readFileSync(join(FIXTURE_DIR, 'expected.json'), 'utf8'));

export function toNum(v: JsonNum): number {
  if (v === 'nan') return NaN;
  if (v === 'inf') return Infinity;
  if (v === '-inf') return -Infinity;
  return v;
}

/** Float64 sum in index order (NumPy sums pairwise, so compare with a relative tolerance). */
export function sumOf(data: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < data.length; i++) s += data[i]!;
  return s;
}

export function expectSum(actual: number, want: JsonNum): void {
  const w = toNum(want);
  if (!Number.isFinite(w)) {
    expect(actual).toBe(w);
    return;
  }
  expect(Math.abs(actual - w)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(w)));
}

/** Compares a decoded tensor with its expected.json record (exact values, -0 and NaN included). */
export function expectTensor(t: Tensor, e: ExpectedTensor): void {
  expect(t.kind).toBe('dense');
  if (t.kind !== 'dense') return;
  expect(t.dtype).toBe(e.dtype);
  expect(t.shape).toEqual(e.shape);
  if (e.strings) {
    expect(t.strings).toEqual(e.strings);
    return;
  }
  expect(t.data.length).toBe(e.shape.reduce((a, b) => a * b, 1));
  const first = Array.from(t.data.subarray(0, e.first!.length) as ArrayLike<number>);
  expect(first).toEqual(e.first!.map(toNum));
  // toEqual treats -0 and 0 alike; check the signs of zero separately
  e.first!.forEach((v, i) => {
    if (v === 0) expect(Object.is(first[i], -0)).toBe(Object.is(v, -0));
  });
  expectSum(sumOf(t.data), e.sum!);
}

/** Typed-array class the reader must produce for a dtype (types.ts normalisation rules). */
export function storageFor(dtype: string, data: TensorData): string {
  switch (dtype) {
    case 'bool': case 'uint8': return 'Uint8Array';
    case 'int8': return 'Int8Array';
    case 'int16': return 'Int16Array';
    case 'uint16': return 'Uint16Array';
    case 'int32': return 'Int32Array';
    case 'uint32': return 'Uint32Array';
    case 'float16': case 'bfloat16': case 'float32': return 'Float32Array';
    case 'float64': return 'Float64Array';
    case 'int64': case 'uint64':
      return data instanceof Int32Array ? 'Int32Array' : 'Float64Array';
    default: return 'Uint8Array';
  }
}

/** Runs `fn`, expects it to throw UnreadableError (with a matching message / offset when given) and returns it. */
export function expectUnreadable(fn: () => unknown, message?: RegExp, offset?: number): UnreadableError {
  let caught: unknown;
  try {
    fn();
  } catch (e) {
    caught = e;
  }
  expect(caught, 'expected an UnreadableError').toBeInstanceOf(UnreadableError);
  const err = caught as UnreadableError;
  if (message) expect(err.message).toMatch(message);
  if (offset !== undefined) expect(err.offset).toBe(offset);
  return err;
}

// ---------------------------------------------------------------------------------------------
// byte builders

export function ascii(s: string): Uint8Array {
  const out = new Uint8Array(s.length);
  for (let i = 0; i < s.length; i++) out[i] = s.charCodeAt(i) & 0xff;
  return out;
}

export function concat(...parts: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let o = 0;
  for (const p of parts) { out.set(p, o); o += p.length; }
  return out;
}

export function le(value: number, bytes: number): Uint8Array {
  const out = new Uint8Array(bytes);
  let v = value;
  for (let i = 0; i < bytes; i++) {
    out[i] = v % 256;
    v = Math.floor(v / 256);
  }
  return out;
}

/**
 * A .npy file from a header dict text, as `numpy.lib.format` lays it out: magic, version, header
 * length, the text padded with spaces and ended by '\n' so that the preamble + header is a
 * multiple of `align` (NumPy 1.24: 64, plus growth padding; NEP 1 / old NumPy: 16).
 */
export function npyBytes(
  dict: string, data: Uint8Array, opts: { version?: 1 | 2 | 3; align?: number; headerLen?: number } = {},
): Uint8Array {
  const version = opts.version ?? 1;
  const pre = version === 1 ? 10 : 12;
  let len = opts.headerLen ?? dict.length + 1;
  if (opts.headerLen === undefined && opts.align) {
    while ((pre + len) % opts.align !== 0) len++;
  }
  const text = dict.padEnd(len - 1, ' ') + '\n';
  const body = version === 3 ? new TextEncoder().encode(text) : ascii(text);
  return concat(
    new Uint8Array([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, version, 0]),
    le(body.length, version === 1 ? 2 : 4),
    body,
    data,
  );
}

/** Little-endian bytes of numbers in a typed-array class. */
export function bytesOf(a: ArrayBufferView): Uint8Array {
  return new Uint8Array(a.buffer, a.byteOffset, a.byteLength).slice();
}

export interface ZipMember {
  name: string;
  /** Raw name bytes, written instead of the latin1 bytes of `name`. */
  nameBytes?: Uint8Array;
  data: Uint8Array;
  /** 0 stored (default) or 8 deflate; any other number is written as-is. */
  method?: number;
  /** Overrides the uncompressed size written in the central directory. */
  declaredSize?: number;
  /** Overrides the compressed size written in the central directory. */
  declaredCompressed?: number;
  /** Write sizes through a ZIP64 extra field in the central directory. */
  zip64?: boolean;
  /** Bytes of extra field in the local header (NumPy writes a 20-byte ZIP64 one). */
  localExtra?: Uint8Array;
  flags?: number;
  /** Overrides the local header offset written in the central directory. */
  localOffset?: number;
  /** Overrides the CRC-32 written in both headers (default: the CRC-32 of `data`). */
  crc?: number;
}

/**
 * A ZIP archive per PKWARE APPNOTE 4.3: local headers + data, central directory, optional ZIP64
 * end record and locator, end-of-central-directory record (with an optional comment).
 */
export function buildZip(
  members: ZipMember[], opts: { zip64End?: boolean; comment?: string; countOverride?: number } = {},
): Uint8Array {
  const parts: Uint8Array[] = [];
  const central: Uint8Array[] = [];
  let offset = 0;
  for (const m of members) {
    const method = m.method ?? 0;
    const payload = method === 8 ? deflateSync(m.data) : m.data;
    const name = m.nameBytes ?? ascii(m.name);
    const localExtra = m.localExtra ?? new Uint8Array(0);
    const crc = m.crc ?? crc32(m.data);
    const local = concat(
      le(0x04034b50, 4), le(20, 2), le(m.flags ?? 0, 2), le(method, 2), le(0, 2), le(0x21, 2), le(crc, 4),
      le(payload.length, 4), le(m.data.length, 4), le(name.length, 2), le(localExtra.length, 2), name, localExtra,
    );
    const usize = m.declaredSize ?? m.data.length;
    const csize = m.declaredCompressed ?? payload.length;
    const loff = m.localOffset ?? offset;
    const extra = m.zip64 ? concat(le(1, 2), le(24, 2), le(usize, 8), le(csize, 8), le(loff, 8)) : new Uint8Array(0);
    central.push(concat(
      le(0x02014b50, 4), le(45, 2), le(45, 2), le(m.flags ?? 0, 2), le(method, 2), le(0, 2), le(0x21, 2), le(crc, 4),
      le(m.zip64 ? 0xffffffff : csize, 4), le(m.zip64 ? 0xffffffff : usize, 4),
      le(name.length, 2), le(extra.length, 2), le(0, 2), le(0, 2), le(0, 2), le(0, 4),
      le(m.zip64 ? 0xffffffff : loff, 4), name, extra,
    ));
    parts.push(local, payload);
    offset += local.length + payload.length;
  }
  const cd = concat(...central);
  const cdOffset = offset;
  const count = opts.countOverride ?? members.length;
  const tail: Uint8Array[] = [];
  if (opts.zip64End) {
    const z = cdOffset + cd.length;
    tail.push(concat(
      le(0x06064b50, 4), le(44, 8), le(45, 2), le(45, 2), le(0, 4), le(0, 4),
      le(count, 8), le(count, 8), le(cd.length, 8), le(cdOffset, 8),
    ));
    tail.push(concat(le(0x07064b50, 4), le(0, 4), le(z, 8), le(1, 4)));
  }
  const comment = ascii(opts.comment ?? '');
  tail.push(concat(
    le(0x06054b50, 4), le(0, 2), le(0, 2),
    le(opts.zip64End ? 0xffff : count, 2), le(opts.zip64End ? 0xffff : count, 2),
    le(opts.zip64End ? 0xffffffff : cd.length, 4), le(opts.zip64End ? 0xffffffff : cdOffset, 4),
    le(comment.length, 2), comment,
  ));
  return concat(...parts, cd, ...tail);
}

/** A safetensors file: u64 LE header size, the header text (padded with spaces), the data. */
export function safetensorsBytes(header: string, data: Uint8Array, padTo = 8): Uint8Array {
  let text = header;
  while (text.length % padTo !== 0) text += ' ';
  const h = new TextEncoder().encode(text);
  return concat(le(h.length, 8), h, data);
}

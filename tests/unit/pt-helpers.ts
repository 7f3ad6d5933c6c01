/**
 * Helpers for the PyTorch reader tests: the pt fixtures and their expected.json, a value-tree →
 * tagged-JSON converter matching make_pt_fixtures.py's `tag()`, and builders that write pickle
 * opcodes and torch.save-shaped archives by hand (opcode bytes per CPython's pickletools table,
 * archive layout per docs/references.md §1.6).
 */
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { isNode, type PyValue } from '../../server/src/core/formats/pickle-values';
import { openZip } from '../../server/src/core/formats/zip';
import { DEFAULT_LIMITS } from '../../server/src/core/formats/types';
import { ascii, buildZip, concat, le, type ZipMember } from './binary-helpers';

export const PT_DIR = fileURLToPath(new URL('../fixtures/pt/', import.meta.url));

export function ptFixture(name: string): Uint8Array {
  const b = readFileSync(join(PT_DIR, name));
  return new Uint8Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.length));
}

export function ptFixtureNames(): string[] {
  return readdirSync(PT_DIR).filter((n) => n.endsWith('.pt')).sort();
}

export type JsonNum = number | 'nan' | 'inf' | '-inf';

export interface PtExpectedTensor {
  dtype: string;
  shape: number[];
  sum: JsonNum;
  first: JsonNum[];
  contiguous: boolean;
  storage_offset: number;
  stride: number[];
}

export interface PtExpectedSparse {
  layout: string;
  dtype: string;
  shape: [number, number];
  nnz: number;
  sum: JsonNum;
  dense: JsonNum[][];
}

export interface PtExpectedFile {
  kind: 'tensors' | 'refused';
  tensors?: Record<string, PtExpectedTensor>;
  sparse?: Record<string, PtExpectedSparse>;
  storages?: string[];
  opcodes?: string[];
  python?: Record<string, unknown>;
  class_name?: string;
  skipped?: Record<string, string>;
  figures?: Record<string, number | boolean>;
  // refused files
  reason?: 'legacy' | 'torchscript' | 'global';
  head_hex?: string;
  has_constants_pkl?: boolean;
  has_code?: boolean;
  global?: string;
  command?: string;
  marker?: string;
  proven_dangerous?: boolean;
}

export interface PickleCase {
  name: string;
  protocol: number;
  hex: string;
  value?: unknown;
  same?: [number, number];
  recursive?: boolean;
}

export interface PtExpected {
  generator: string;
  files: Record<string, PtExpectedFile>;
  pickles: PickleCase[];
  hostile_pickles: Array<{ protocol: number; hex: string; global: string }>;
}

export const ptExpected: PtExpected = JSON.parse(readFileSync(join(PT_DIR, 'expected.json'), 'utf8'));

export function fromHex(hex: string): Uint8Array {
  const out = new Uint8Array(hex.length / 2);
  for (let i = 0; i < out.length; i++) out[i] = parseInt(hex.slice(2 * i, 2 * i + 2), 16);
  return out;
}

function toHex(b: Uint8Array): string {
  let s = '';
  for (const x of b) s += x.toString(16).padStart(2, '0');
  return s;
}

/** The tagged JSON form make_pt_fixtures.py's `tag()` gives the same Python value. */
export function tagged(v: PyValue): unknown {
  if (v === null || typeof v === 'boolean' || typeof v === 'string') return v;
  if (typeof v === 'number') {
    if (Number.isNaN(v)) return { float: 'nan' };
    if (v === Infinity) return { float: 'inf' };
    if (v === -Infinity) return { float: '-inf' };
    if (Object.is(v, -0)) return { float: '-0' };
    return v;
  }
  if (v instanceof Uint8Array) return { bytes: toHex(v) };
  if (Array.isArray(v)) return v.map(tagged);
  switch (v.kind) {
    case 'tuple': return { tuple: v.items.map(tagged) };
    case 'set': return { [v.frozen ? 'frozenset' : 'set']: v.items.map(tagged) };
    case 'dict':
      return { [v.className === 'collections.OrderedDict' ? 'odict' : 'dict']: [...v.map].map(([k, x]) => [tagged(k), tagged(x)]) };
    case 'bigint': return { int: v.hex };
    case 'record':
      return v.args.length
        ? { record: v.className, args: v.args.map(tagged), state: v.state === undefined ? undefined : tagged(v.state) }
        : { record: v.className, state: v.state === undefined ? undefined : tagged(v.state) };
    case 'global': return { global: `${v.module}.${v.name}` };
    default: return { [v.kind]: true };
  }
}

/** Member bytes of a fixture archive, by name (to rebuild variants of it). */
export function membersOf(bytes: Uint8Array): ZipMember[] {
  const z = openZip(bytes, DEFAULT_LIMITS);
  return z.entries.map((e) => ({ name: e.name, data: z.readEntry(e).slice() }));
}

// ---------------------------------------------------------------------------------------------
// Hand-written pickles

type Part = number | number[] | Uint8Array;

/** Concatenates opcode bytes, arrays of bytes and Uint8Arrays into one stream. */
export function pk(...parts: Part[]): Uint8Array {
  return concat(...parts.map((p) => (typeof p === 'number' ? new Uint8Array([p]) : p instanceof Uint8Array ? p : new Uint8Array(p))));
}

const utf8 = new TextEncoder();

/** Opcode builders (byte values from CPython's pickletools opcode table). */
export const op = {
  proto: (v: number) => pk(0x80, v),
  stop: 0x2e,
  mark: 0x28,
  none: 0x4e,
  newTrue: 0x88,
  newFalse: 0x89,
  emptyTuple: 0x29,
  emptyList: 0x5d,
  emptyDict: 0x7d,
  tuple: 0x74,
  tuple1: 0x85,
  tuple2: 0x86,
  tuple3: 0x87,
  append: 0x61,
  appends: 0x65,
  setitem: 0x73,
  setitems: 0x75,
  reduce: 0x52,
  build: 0x62,
  newobj: 0x81,
  binpersid: 0x51,
  memoize: 0x94,
  pop: 0x30,
  dup: 0x32,
  int1: (v: number) => pk(0x4b, v),
  int4: (v: number) => pk(0x4a, le(v >>> 0, 4)),
  str: (s: string) => { const b = utf8.encode(s); return pk(0x58, le(b.length, 4), b); },
  global: (module: string, name: string) => pk(0x63, ascii(`${module}\n${name}\n`)),
  binput: (i: number) => pk(0x71, i),
  binget: (i: number) => pk(0x68, i),
};

/** `(ints...)` as a tuple of BININT opcodes. */
export function intTuple(...v: number[]): Uint8Array {
  return pk(op.mark, ...v.map((x) => (x >= 0 && x < 256 ? op.int1(x) : op.int4(x))), op.tuple);
}

/** torch.save's storage persistent id: ('storage', torch.<type>, key, 'cpu', numel), then BINPERSID. */
export function storageRef(type: string, key: string, numel: number): Uint8Array {
  return pk(op.mark, op.str('storage'), op.global('torch', type), op.str(key), op.str('cpu'), op.int4(numel), op.tuple, op.binpersid);
}

/** `_rebuild_tensor_v2(storage, offset, size, stride, False, OrderedDict())` as torch 1.13 writes it. */
export function tensorV2(storage: Uint8Array, offset: number, size: number[], stride: number[]): Uint8Array {
  return pk(
    op.global('torch._utils', '_rebuild_tensor_v2'), op.mark, storage, op.int4(offset), intTuple(...size), intTuple(...stride),
    op.newFalse, op.global('collections', 'OrderedDict'), op.emptyTuple, op.reduce, op.tuple, op.reduce,
  );
}

/** `{key: value, ...}` from already-encoded values. */
export function dictOf(entries: Array<[string, Uint8Array]>): Uint8Array {
  return pk(op.emptyDict, op.mark, ...entries.flatMap(([k, v]) => [op.str(k), v]), op.setitems);
}

/** A torch.save-shaped archive: `<root>/data.pkl`, `<root>/data/<key>`, `<root>/version`, extras. */
export function ptArchive(
  pkl: Uint8Array, storages: Record<string, Uint8Array>, opts: { root?: string; extra?: ZipMember[] } = {},
): Uint8Array {
  const root = opts.root ?? 'archive';
  return buildZip([
    { name: `${root}/data.pkl`, data: pkl },
    ...Object.entries(storages).map(([k, data]) => ({ name: `${root}/data/${k}`, data })),
    { name: `${root}/version`, data: ascii('3\n') },
    ...(opts.extra ?? []),
  ]);
}

export { isNode };

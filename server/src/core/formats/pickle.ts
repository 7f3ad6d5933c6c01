/**
 * A pickle PARSER for the streams `torch.save` writes (protocols 2–5; the text forms of protocols
 * 0/1 are read too). Nothing from the stream is ever evaluated, imported or called: every global a
 * stream refers to becomes a name node, and the few that a stream may "call" (REDUCE, INST, OBJ)
 * are looked up in an allow-list that maps them to safe constructors of plain values (tensor and
 * storage rebuilds, OrderedDict, builtin containers). Any other callable is refused with its name.
 *
 * An object of an unknown class made by `cls.__new__` (NEWOBJ, NEWOBJ_EX, copyreg.__newobj__,
 * copyreg._reconstructor) and filled by BUILD is kept as a named record of its state, which is how
 * saved data objects (edge_index, x, y, masks as attributes) are read.
 *
 * Opcode semantics per CPython's `pickle.py` / `pickletools` opcode table (REFERENCES.md §1.7);
 * the torch rebuild signatures per REFERENCES.md §1.6.
 */
import { UnreadableError, type DType } from './types';

// ---------------------------------------------------------------------------------------------
// Value tree

/** Python tuple (kept apart from lists, which are plain arrays). */
export interface PyTuple { kind: 'tuple'; items: PyValue[] }
/** dict / OrderedDict. Keys keep insertion order; str and int keys compare by value. */
export interface PyDict {
  kind: 'dict';
  map: Map<PyValue, PyValue>;
  /** 'builtins.dict' or 'collections.OrderedDict'. */
  className: string;
  /** Instance attributes set by BUILD (e.g. a state_dict's `_metadata`). */
  attrs?: PyValue;
}
export interface PySet { kind: 'set'; items: PyValue[]; frozen: boolean }
/** An integer outside ±2^53: sign and magnitude in hex (exact), plus a float approximation. */
export interface PyBigInt { kind: 'bigint'; approx: number; hex: string }
/** A reference to a module attribute (class, function, dtype). Harmless: it is never resolved. */
export interface PyGlobal { kind: 'global'; module: string; name: string }
/**
 * An object of a class that is not on the allow-list, made without calling user code
 * (cls.__new__), or a small allow-listed object such as torch.device / slice.
 */
export interface PyRecord {
  kind: 'record';
  className: string;
  /** Arguments given to __new__ (or to the allow-listed constructor). */
  args: PyValue[];
  /** What BUILD set (usually a dict of attributes; may be a (dict, slots) tuple). */
  state?: PyValue;
  /** Items added by APPEND(S) (list subclasses). */
  listItems?: PyValue[];
  /** Items added by SETITEM(S) (dict subclasses). */
  dictItems?: Map<PyValue, PyValue>;
}
/** A storage named by a torch.save persistent id: `('storage', torch.XStorage, key, location, numel)`. */
export interface PyStorage {
  kind: 'storage';
  /** Member name under `<root>/data/`. */
  key: string;
  /** e.g. 'torch.FloatStorage'. */
  storageType: string;
  /** Element type, or undefined for element types Hopscope does not read (see `typeName`). */
  dtype: DType | undefined;
  /** torch's name of the element type, e.g. 'float32', 'complex64'. */
  typeName: string;
  /** True for torch.UntypedStorage: `numel` counts bytes. */
  untyped: boolean;
  location: string;
  numel: number;
}
/** `torch._utils._rebuild_tensor_v2(storage, offset, size, stride, …)` and relatives. */
export interface PyTensor {
  kind: 'tensor';
  storage: PyStorage;
  /** In elements. */
  offset: number;
  size: number[];
  /** In elements. */
  stride: number[];
  /** Element type when it differs from the storage's (untyped storages, _rebuild_tensor_v3). */
  dtype: DType | undefined;
  typeName: string;
  requiresGrad: boolean;
  /** Rebuilt through torch._utils._rebuild_parameter*. */
  parameter: boolean;
}
/** `torch._utils._rebuild_sparse_tensor(layout, data)` (and the 1.13 CSR variant). */
export interface PySparse {
  kind: 'sparse';
  /** 'sparse_coo', 'sparse_csr', 'sparse_csc', … */
  layout: string;
  /** coo: [indices, values]; csr: [crow_indices, col_indices, values]; csc: [ccol, row, values]. */
  parts: PyTensor[];
  size: number[];
}
/** A tensor layout object (torch.sparse_coo), from `torch.serialization._get_layout(name)`. */
export interface PyLayout { kind: 'layout'; name: string }

export type PyValue =
  | null | boolean | number | string
  | Uint8Array
  | PyValue[]
  | PyTuple | PyDict | PySet | PyBigInt | PyGlobal | PyRecord
  | PyStorage | PyTensor | PySparse | PyLayout;

type PyObject = Exclude<PyValue, null | boolean | number | string | Uint8Array | PyValue[]>;

export function isNode<K extends PyObject['kind']>(v: PyValue | undefined, kind: K): v is Extract<PyObject, { kind: K }> {
  return typeof v === 'object' && v !== null && !Array.isArray(v) && !(v instanceof Uint8Array) && v.kind === kind;
}

// ---------------------------------------------------------------------------------------------
// Options

export interface PickleOptions {
  /**
   * Resolves a persistent id (PERSID/BINPERSID). The default refuses every persistent id;
   * `torchPersistentLoad()` reads torch.save's storage ids.
   */
  persistentLoad?: (pid: PyValue, offset: number) => PyValue;
  /** Largest number of items on the stack above the innermost MARK. */
  maxStack?: number;
  /** Largest number of memo entries. */
  maxMemo?: number;
  /** Largest number of nested MARKs. */
  maxMarks?: number;
}

export const PICKLE_DEFAULTS = { maxStack: 4_000_000, maxMemo: 4_000_000, maxMarks: 100_000 } as const;

/** Highest protocol this parser knows (Python 3.8+ writes up to 5). */
export const HIGHEST_PROTOCOL = 5;

// ---------------------------------------------------------------------------------------------
// torch names

/** torch storage class → [element type, torch's type name] (REFERENCES.md §1.6); undefined: known, not read. */
const STORAGE_TYPES: Record<string, [DType | undefined, string]> = {
  FloatStorage: ['float32', 'float32'],
  DoubleStorage: ['float64', 'float64'],
  HalfStorage: ['float16', 'float16'],
  BFloat16Storage: ['bfloat16', 'bfloat16'],
  LongStorage: ['int64', 'int64'],
  IntStorage: ['int32', 'int32'],
  ShortStorage: ['int16', 'int16'],
  CharStorage: ['int8', 'int8'],
  ByteStorage: ['uint8', 'uint8'],
  BoolStorage: ['bool', 'bool'],
  UntypedStorage: ['uint8', 'uint8'],
  ComplexFloatStorage: [undefined, 'complex64'],
  ComplexDoubleStorage: [undefined, 'complex128'],
  ComplexHalfStorage: [undefined, 'complex32'],
  QInt8Storage: [undefined, 'qint8'],
  QUInt8Storage: [undefined, 'quint8'],
  QInt32Storage: [undefined, 'qint32'],
  QUInt4x2Storage: [undefined, 'quint4x2'],
  QUInt2x4Storage: [undefined, 'quint2x4'],
};

/** `torch.<attr>` dtype objects → element type. */
const TORCH_DTYPES: Record<string, [DType | undefined, string]> = {
  float32: ['float32', 'float32'], float: ['float32', 'float32'],
  float64: ['float64', 'float64'], double: ['float64', 'float64'],
  float16: ['float16', 'float16'], half: ['float16', 'float16'],
  bfloat16: ['bfloat16', 'bfloat16'],
  int64: ['int64', 'int64'], long: ['int64', 'int64'],
  int32: ['int32', 'int32'], int: ['int32', 'int32'],
  int16: ['int16', 'int16'], short: ['int16', 'int16'],
  int8: ['int8', 'int8'], uint8: ['uint8', 'uint8'], bool: ['bool', 'bool'],
  uint16: ['uint16', 'uint16'], uint32: ['uint32', 'uint32'], uint64: ['uint64', 'uint64'],
  complex64: [undefined, 'complex64'], cfloat: [undefined, 'complex64'],
  complex128: [undefined, 'complex128'], cdouble: [undefined, 'complex128'],
  complex32: [undefined, 'complex32'], chalf: [undefined, 'complex32'],
};

/** Python 2 module names that Python 3's pickle maps when reading protocol 0–2 streams. */
const MODULE_ALIASES: Record<string, string> = { __builtin__: 'builtins', copy_reg: 'copyreg' };

/** A table lookup that ignores inherited properties (a stream may name 'constructor' or '__proto__'). */
function own<T>(table: Record<string, T>, key: string): T | undefined {
  return Object.prototype.hasOwnProperty.call(table, key) ? table[key] : undefined;
}

export function qualifiedName(g: PyGlobal): string {
  return `${g.module}.${g.name}`;
}

// ---------------------------------------------------------------------------------------------
// Small helpers

const utf8 = new TextDecoder('utf-8');

function latin1(b: Uint8Array): string {
  let s = '';
  for (let i = 0; i < b.length; i += 8192) {
    s += String.fromCharCode.apply(null, Array.from(b.subarray(i, i + 8192)));
  }
  return s;
}

function describe(v: PyValue | undefined): string {
  if (v === undefined) return 'nothing';
  if (v === null) return 'None';
  if (typeof v === 'boolean') return 'a bool';
  if (typeof v === 'number') return 'a number';
  if (typeof v === 'string') return 'a string';
  if (v instanceof Uint8Array) return 'bytes';
  if (Array.isArray(v)) return 'a list';
  switch (v.kind) {
    case 'global': return `the global ${qualifiedName(v)}`;
    case 'record': return `an object of ${v.className}`;
    case 'bigint': return 'a large integer';
    default: return `a ${v.kind}`;
  }
}

/** Items of a list, tuple or set, or undefined for anything else. */
function itemsOf(v: PyValue | undefined): PyValue[] | undefined {
  if (Array.isArray(v)) return v;
  if (isNode(v, 'tuple') || isNode(v, 'set')) return v.items;
  return undefined;
}

/** Signed little-endian two's complement integer of `n` bytes at `p` (LONG1 / LONG4 payload). */
function decodeLong(b: Uint8Array, p: number, n: number): number | PyBigInt {
  if (n === 0) return 0;
  const negative = (b[p + n - 1]! & 0x80) !== 0;
  if (n <= 6) {
    let v = 0;
    for (let i = n - 1; i >= 0; i--) v = v * 256 + b[p + i]!;
    return negative ? v - 2 ** (8 * n) : v;
  }
  // Magnitude bytes (two's complement negated for negative numbers), little-endian.
  const mag = new Uint8Array(n);
  let carry = 1;
  for (let i = 0; i < n; i++) {
    const x = b[p + i]!;
    if (negative) {
      const y = (~x & 0xff) + carry;
      mag[i] = y & 0xff;
      carry = y >> 8;
    } else {
      mag[i] = x;
    }
  }
  let top = n - 1;
  while (top > 0 && mag[top] === 0) top--;
  let approx = 0;
  for (let i = top; i >= 0; i--) approx = approx * 256 + mag[i]!;
  if (Number.isSafeInteger(approx)) return negative ? -approx : approx;
  let hex = '';
  for (let i = top; i >= 0; i--) hex += mag[i]!.toString(16).padStart(2, '0');
  hex = hex.replace(/^0+/, '');
  return { kind: 'bigint', approx: negative ? -approx : approx, hex: (negative ? '-0x' : '0x') + hex };
}

/** Decimal integer text (INT / LONG opcodes). */
function parseDecimal(text: string): number | PyBigInt | undefined {
  const m = /^\s*([-+]?)(\d+)L?\s*$/.exec(text);
  if (!m) return undefined;
  const negative = m[1] === '-';
  const digits = m[2]!.replace(/^0+(?=\d)/, '');
  const v = Number(digits);
  if (Number.isSafeInteger(v)) return negative ? -v : v;
  if (digits.length > 10_000) return undefined;
  // Exact hex of a decimal string by schoolbook base conversion on 16-bit limbs (no BigInt).
  const limbs: number[] = [0];
  for (let i = 0; i < digits.length; i++) {
    let carry = digits.charCodeAt(i) - 48;
    for (let k = 0; k < limbs.length; k++) {
      const x = limbs[k]! * 10 + carry;
      limbs[k] = x & 0xffff;
      carry = x >>> 16;
    }
    if (carry) limbs.push(carry);
  }
  let hex = '';
  for (let k = limbs.length - 1; k >= 0; k--) hex += limbs[k]!.toString(16).padStart(4, '0');
  hex = hex.replace(/^0+/, '') || '0';
  return { kind: 'bigint', approx: negative ? -v : v, hex: (negative ? '-0x' : '0x') + hex };
}

/** Body of a Python `repr` of a byte string (STRING opcode), quotes removed. */
function unescapeBytes(s: string): Uint8Array | undefined {
  const out: number[] = [];
  for (let i = 0; i < s.length; i++) {
    const c = s.charCodeAt(i);
    if (c !== 0x5c) {
      if (c > 0xff) return undefined;
      out.push(c);
      continue;
    }
    const e = s[++i];
    switch (e) {
      case undefined: return undefined;
      case '\n': break;
      case '\\': out.push(0x5c); break;
      case "'": out.push(0x27); break;
      case '"': out.push(0x22); break;
      case 'a': out.push(7); break;
      case 'b': out.push(8); break;
      case 'f': out.push(12); break;
      case 'n': out.push(10); break;
      case 'r': out.push(13); break;
      case 't': out.push(9); break;
      case 'v': out.push(11); break;
      case 'x': {
        const h = s.slice(i + 1, i + 3);
        if (!/^[0-9a-fA-F]{2}$/.test(h)) return undefined;
        out.push(parseInt(h, 16));
        i += 2;
        break;
      }
      default:
        if (e >= '0' && e <= '7') {
          const m = /^[0-7]{1,3}/.exec(s.slice(i, i + 3))!;
          out.push(parseInt(m[0], 8) & 0xff);
          i += m[0].length - 1;
        } else {
          out.push(0x5c, e.charCodeAt(0) & 0xff);
        }
    }
  }
  return Uint8Array.from(out);
}

/** raw-unicode-escape (UNICODE opcode): latin-1 text with \uXXXX and \UXXXXXXXX escapes. */
function rawUnicodeEscape(b: Uint8Array): string | undefined {
  const s = latin1(b);
  let out = '';
  for (let i = 0; i < s.length; i++) {
    const c = s[i]!;
    if (c === '\\' && (s[i + 1] === 'u' || s[i + 1] === 'U')) {
      const width = s[i + 1] === 'u' ? 4 : 8;
      const h = s.slice(i + 2, i + 2 + width);
      if (h.length !== width || !/^[0-9a-fA-F]+$/.test(h)) return undefined;
      const cp = parseInt(h, 16);
      if (cp > 0x10ffff) return undefined;
      out += String.fromCodePoint(cp);
      i += 1 + width;
    } else {
      out += c;
    }
  }
  return out;
}

// ---------------------------------------------------------------------------------------------
// The parser

const OP_NAMES: Record<number, string> = {};
function op(name: string, byte: number): number {
  OP_NAMES[byte] = name;
  return byte;
}

const MARK = op('MARK', 0x28), STOP = op('STOP', 0x2e), POP = op('POP', 0x30), POP_MARK = op('POP_MARK', 0x31);
const DUP = op('DUP', 0x32), FLOAT = op('FLOAT', 0x46), INT = op('INT', 0x49), BININT = op('BININT', 0x4a);
const BININT1 = op('BININT1', 0x4b), LONG = op('LONG', 0x4c), BININT2 = op('BININT2', 0x4d), NONE = op('NONE', 0x4e);
const PERSID = op('PERSID', 0x50), BINPERSID = op('BINPERSID', 0x51), REDUCE = op('REDUCE', 0x52);
const STRING = op('STRING', 0x53), BINSTRING = op('BINSTRING', 0x54), SHORT_BINSTRING = op('SHORT_BINSTRING', 0x55);
const UNICODE = op('UNICODE', 0x56), BINUNICODE = op('BINUNICODE', 0x58), APPEND = op('APPEND', 0x61);
const BUILD = op('BUILD', 0x62), GLOBAL = op('GLOBAL', 0x63), DICT = op('DICT', 0x64), EMPTY_DICT = op('EMPTY_DICT', 0x7d);
const APPENDS = op('APPENDS', 0x65), GET = op('GET', 0x67), BINGET = op('BINGET', 0x68), INST = op('INST', 0x69);
const LONG_BINGET = op('LONG_BINGET', 0x6a), LIST = op('LIST', 0x6c), EMPTY_LIST = op('EMPTY_LIST', 0x5d);
const OBJ = op('OBJ', 0x6f), PUT = op('PUT', 0x70), BINPUT = op('BINPUT', 0x71), LONG_BINPUT = op('LONG_BINPUT', 0x72);
const SETITEM = op('SETITEM', 0x73), TUPLE = op('TUPLE', 0x74), EMPTY_TUPLE = op('EMPTY_TUPLE', 0x29);
const SETITEMS = op('SETITEMS', 0x75), BINFLOAT = op('BINFLOAT', 0x47);
const PROTO = op('PROTO', 0x80), NEWOBJ = op('NEWOBJ', 0x81), EXT1 = op('EXT1', 0x82), EXT2 = op('EXT2', 0x83);
const EXT4 = op('EXT4', 0x84), TUPLE1 = op('TUPLE1', 0x85), TUPLE2 = op('TUPLE2', 0x86), TUPLE3 = op('TUPLE3', 0x87);
const NEWTRUE = op('NEWTRUE', 0x88), NEWFALSE = op('NEWFALSE', 0x89), LONG1 = op('LONG1', 0x8a), LONG4 = op('LONG4', 0x8b);
const BINBYTES = op('BINBYTES', 0x42), SHORT_BINBYTES = op('SHORT_BINBYTES', 0x43);
const SHORT_BINUNICODE = op('SHORT_BINUNICODE', 0x8c), BINUNICODE8 = op('BINUNICODE8', 0x8d);
const BINBYTES8 = op('BINBYTES8', 0x8e), EMPTY_SET = op('EMPTY_SET', 0x8f), ADDITEMS = op('ADDITEMS', 0x90);
const FROZENSET = op('FROZENSET', 0x91), NEWOBJ_EX = op('NEWOBJ_EX', 0x92), STACK_GLOBAL = op('STACK_GLOBAL', 0x93);
const MEMOIZE = op('MEMOIZE', 0x94), FRAME = op('FRAME', 0x95), BYTEARRAY8 = op('BYTEARRAY8', 0x96);
const NEXT_BUFFER = op('NEXT_BUFFER', 0x97), READONLY_BUFFER = op('READONLY_BUFFER', 0x98);

/** Opcode byte → name, for messages and tests. */
export const OPCODE_NAMES: Readonly<Record<number, string>> = OP_NAMES;

class Parser {
  pos = 0;
  /** Offset of the opcode being run, for messages. */
  at = 0;
  stack: PyValue[] = [];
  readonly metastack: PyValue[][] = [];
  readonly memo = new Map<number, PyValue>();
  private readonly maxStack: number;
  private readonly maxMemo: number;
  private readonly maxMarks: number;

  constructor(private readonly b: Uint8Array, private readonly opts: PickleOptions) {
    this.maxStack = opts.maxStack ?? PICKLE_DEFAULTS.maxStack;
    this.maxMemo = opts.maxMemo ?? PICKLE_DEFAULTS.maxMemo;
    this.maxMarks = opts.maxMarks ?? PICKLE_DEFAULTS.maxMarks;
  }

  fail(message: string): never {
    throw new UnreadableError(`${message} (pickle byte ${this.at})`, this.at);
  }

  // --- input

  need(n: number, what: string): void {
    if (!(n >= 0) || n > this.b.length - this.pos) {
      this.fail(`${what} needs ${n} bytes, but the pickle ends after ${this.b.length - this.pos}`);
    }
  }
  u8(): number {
    this.need(1, OP_NAMES[this.b[this.at]!] ?? 'opcode');
    return this.b[this.pos++]!;
  }
  u16(): number {
    this.need(2, OP_NAMES[this.b[this.at]!] ?? 'opcode');
    const v = this.b[this.pos]! | (this.b[this.pos + 1]! << 8);
    this.pos += 2;
    return v;
  }
  i32(): number {
    this.need(4, OP_NAMES[this.b[this.at]!] ?? 'opcode');
    const p = this.pos;
    const v = this.b[p]! | (this.b[p + 1]! << 8) | (this.b[p + 2]! << 16) | (this.b[p + 3]! << 24);
    this.pos += 4;
    return v;
  }
  u32(): number {
    return this.i32() >>> 0;
  }
  u64(): number {
    const lo = this.u32();
    const hi = this.u32();
    return hi * 4294967296 + lo;
  }
  bytes(n: number, what: string): Uint8Array {
    this.need(n, what);
    const out = this.b.subarray(this.pos, this.pos + n);
    this.pos += n;
    return out;
  }
  /** A text line ending in '\n' (the newline is consumed, not returned). */
  line(what: string): string {
    const end = this.b.indexOf(0x0a, this.pos);
    if (end < 0) this.fail(`${what}: the pickle ends inside a text line`);
    const s = latin1(this.b.subarray(this.pos, end));
    this.pos = end + 1;
    return s;
  }

  // --- stack

  push(v: PyValue): void {
    if (this.stack.length >= this.maxStack) this.fail(`more than ${this.maxStack} items on the pickle stack`);
    this.stack.push(v);
  }
  pop(): PyValue {
    if (this.stack.length === 0) this.fail(`${OP_NAMES[this.b[this.at]!]} on an empty stack`);
    return this.stack.pop()!;
  }
  top(): PyValue {
    if (this.stack.length === 0) this.fail(`${OP_NAMES[this.b[this.at]!]} on an empty stack`);
    return this.stack[this.stack.length - 1]!;
  }
  mark(): void {
    if (this.metastack.length >= this.maxMarks) this.fail(`more than ${this.maxMarks} nested MARKs`);
    this.metastack.push(this.stack);
    this.stack = [];
  }
  popMark(): PyValue[] {
    const items = this.stack;
    const prev = this.metastack.pop();
    if (!prev) this.fail(`${OP_NAMES[this.b[this.at]!]} without a MARK`);
    this.stack = prev;
    return items;
  }
  put(index: number): void {
    if (!Number.isSafeInteger(index) || index < 0) this.fail(`memo index ${index} is not valid`);
    if (!this.memo.has(index) && this.memo.size >= this.maxMemo) this.fail(`more than ${this.maxMemo} memo entries`);
    this.memo.set(index, this.top());
  }
  get(index: number): void {
    const v = this.memo.get(index);
    if (v === undefined) this.fail(`memo entry ${index} is read before it is written`);
    this.push(v);
  }

  // --- run

  run(): PyValue {
    const b = this.b;
    for (;;) {
      if (this.pos >= b.length) {
        this.at = this.pos;
        this.fail('the pickle ends without a STOP opcode');
      }
      this.at = this.pos;
      const code = b[this.pos++]!;
      switch (code) {
        case PROTO: {
          const v = this.u8();
          if (v > HIGHEST_PROTOCOL) this.fail(`pickle protocol ${v} is newer than the highest known (${HIGHEST_PROTOCOL})`);
          break;
        }
        case FRAME: {
          const n = this.u64();
          if (n > b.length - this.pos) this.fail(`a frame of ${n} bytes runs past the end of the pickle`);
          break; // frames only group opcodes; the bytes follow inline
        }
        case STOP: {
          const v = this.pop();
          return v;
        }
        case MARK: this.mark(); break;
        case POP:
          if (this.stack.length > 0) this.stack.pop();
          else this.popMark();
          break;
        case POP_MARK: this.popMark(); break;
        case DUP: this.push(this.top()); break;

        // ints, floats, constants
        case NONE: this.push(null); break;
        case NEWTRUE: this.push(true); break;
        case NEWFALSE: this.push(false); break;
        case BININT1: this.push(this.u8()); break;
        case BININT2: this.push(this.u16()); break;
        case BININT: this.push(this.i32()); break;
        case LONG1: {
          const n = this.u8();
          this.need(n, 'LONG1');
          this.push(decodeLong(b, this.pos, n));
          this.pos += n;
          break;
        }
        case LONG4: {
          const n = this.i32();
          if (n < 0) this.fail(`LONG4 has a negative byte count ${n}`);
          this.need(n, 'LONG4');
          this.push(decodeLong(b, this.pos, n));
          this.pos += n;
          break;
        }
        case INT: {
          const s = this.line('INT');
          if (s === '01') this.push(true);
          else if (s === '00') this.push(false);
          else {
            const v = parseDecimal(s);
            if (v === undefined) this.fail(`INT text ${JSON.stringify(s.slice(0, 40))} is not an integer`);
            this.push(v);
          }
          break;
        }
        case LONG: {
          const s = this.line('LONG');
          const v = parseDecimal(s);
          if (v === undefined) this.fail(`LONG text ${JSON.stringify(s.slice(0, 40))} is not an integer`);
          this.push(v);
          break;
        }
        case BINFLOAT: {
          this.need(8, 'BINFLOAT');
          const v = new DataView(b.buffer, b.byteOffset + this.pos, 8).getFloat64(0, false);
          this.pos += 8;
          this.push(v);
          break;
        }
        case FLOAT: {
          const s = this.line('FLOAT').trim();
          let v: number;
          if (/^[-+]?inf(inity)?$/i.test(s)) v = s.startsWith('-') ? -Infinity : Infinity;
          else if (/^[-+]?nan$/i.test(s)) v = NaN;
          else if (/^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(s)) v = Number(s);
          else this.fail(`FLOAT text ${JSON.stringify(s.slice(0, 40))} is not a number`);
          this.push(v);
          break;
        }

        // strings and bytes
        case BINUNICODE: this.push(utf8.decode(this.bytes(this.u32(), 'BINUNICODE'))); break;
        case SHORT_BINUNICODE: this.push(utf8.decode(this.bytes(this.u8(), 'SHORT_BINUNICODE'))); break;
        case BINUNICODE8: this.push(utf8.decode(this.bytes(this.u64(), 'BINUNICODE8'))); break;
        case UNICODE: {
          const end = b.indexOf(0x0a, this.pos);
          if (end < 0) this.fail('UNICODE: the pickle ends inside a text line');
          const s = rawUnicodeEscape(b.subarray(this.pos, end));
          if (s === undefined) this.fail('UNICODE text has a bad escape');
          this.pos = end + 1;
          this.push(s);
          break;
        }
        case BINSTRING: {
          const n = this.i32();
          if (n < 0) this.fail(`BINSTRING has a negative length ${n}`);
          this.push(utf8.decode(this.bytes(n, 'BINSTRING')));
          break;
        }
        case SHORT_BINSTRING: this.push(utf8.decode(this.bytes(this.u8(), 'SHORT_BINSTRING'))); break;
        case STRING: {
          const s = this.line('STRING');
          const q = s[0];
          if (s.length < 2 || (q !== "'" && q !== '"') || s[s.length - 1] !== q) {
            this.fail('STRING text is not a quoted string');
          }
          const raw = unescapeBytes(s.slice(1, -1));
          if (!raw) this.fail('STRING text has a bad escape');
          this.push(utf8.decode(raw));
          break;
        }
        case BINBYTES: this.push(this.bytes(this.u32(), 'BINBYTES').slice()); break;
        case SHORT_BINBYTES: this.push(this.bytes(this.u8(), 'SHORT_BINBYTES').slice()); break;
        case BINBYTES8: this.push(this.bytes(this.u64(), 'BINBYTES8').slice()); break;
        case BYTEARRAY8: this.push(this.bytes(this.u64(), 'BYTEARRAY8').slice()); break;
        case NEXT_BUFFER: case READONLY_BUFFER:
          this.fail(`${OP_NAMES[code]}: out-of-band buffers (pickle protocol 5) are not read`);

        // containers
        case EMPTY_LIST: this.push([]); break;
        case EMPTY_DICT: this.push(newDict('builtins.dict')); break;
        case EMPTY_TUPLE: this.push({ kind: 'tuple', items: [] }); break;
        case EMPTY_SET: this.push({ kind: 'set', items: [], frozen: false }); break;
        case TUPLE1: { const a = this.pop(); this.push({ kind: 'tuple', items: [a] }); break; }
        case TUPLE2: { const b2 = this.pop(); const a = this.pop(); this.push({ kind: 'tuple', items: [a, b2] }); break; }
        case TUPLE3: {
          const c = this.pop(); const b2 = this.pop(); const a = this.pop();
          this.push({ kind: 'tuple', items: [a, b2, c] });
          break;
        }
        case TUPLE: { const items = this.popMark(); this.push({ kind: 'tuple', items }); break; }
        case LIST: { const items = this.popMark(); this.push(items); break; }
        case FROZENSET: { const items = this.popMark(); this.push({ kind: 'set', items, frozen: true }); break; }
        case DICT: {
          const items = this.popMark();
          if (items.length % 2 !== 0) this.fail('DICT has an odd number of items');
          const d = newDict('builtins.dict');
          for (let i = 0; i < items.length; i += 2) d.map.set(items[i]!, items[i + 1]!);
          this.push(d);
          break;
        }
        case APPEND: { const v = this.pop(); this.append(this.top(), [v]); break; }
        case APPENDS: { const items = this.popMark(); this.append(this.top(), items); break; }
        case SETITEM: {
          const v = this.pop();
          const k = this.pop();
          this.setItems(this.top(), [k, v]);
          break;
        }
        case SETITEMS: {
          const items = this.popMark();
          if (items.length % 2 !== 0) this.fail('SETITEMS has an odd number of items');
          this.setItems(this.top(), items);
          break;
        }
        case ADDITEMS: {
          const items = this.popMark();
          const s = this.top();
          if (!isNode(s, 'set') || s.frozen) this.fail(`ADDITEMS onto ${describe(s)}`);
          for (const it of items) s.items.push(it);
          break;
        }

        // memo
        case BINPUT: this.put(this.u8()); break;
        case LONG_BINPUT: this.put(this.u32()); break;
        case PUT: {
          const s = this.line('PUT');
          if (!/^\d{1,15}$/.test(s)) this.fail(`PUT index ${JSON.stringify(s.slice(0, 20))} is not a number`);
          this.put(Number(s));
          break;
        }
        case MEMOIZE: this.put(this.memo.size); break;
        case BINGET: this.get(this.u8()); break;
        case LONG_BINGET: this.get(this.u32()); break;
        case GET: {
          const s = this.line('GET');
          if (!/^\d{1,15}$/.test(s)) this.fail(`GET index ${JSON.stringify(s.slice(0, 20))} is not a number`);
          this.get(Number(s));
          break;
        }

        // globals, objects
        case GLOBAL: {
          const module = this.line('GLOBAL module');
          const name = this.line('GLOBAL name');
          this.push(makeGlobal(module, name));
          break;
        }
        case STACK_GLOBAL: {
          const name = this.pop();
          const module = this.pop();
          if (typeof module !== 'string' || typeof name !== 'string') this.fail('STACK_GLOBAL needs two strings');
          this.push(makeGlobal(module, name));
          break;
        }
        case EXT1: case EXT2: case EXT4:
          this.fail(`${OP_NAMES[code]}: globals from the copyreg extension registry are not read`);
        case REDUCE: {
          const args = this.pop();
          const fn = this.pop();
          const list = itemsOf(args);
          if (!isNode(args, 'tuple') || !list) this.fail(`REDUCE arguments are ${describe(args)}, not a tuple`);
          this.push(this.call(fn, list));
          break;
        }
        case NEWOBJ: {
          const args = this.pop();
          const cls = this.pop();
          if (!isNode(args, 'tuple')) this.fail(`NEWOBJ arguments are ${describe(args)}, not a tuple`);
          this.push(this.newObject(cls, args.items));
          break;
        }
        case NEWOBJ_EX: {
          const kwargs = this.pop();
          const args = this.pop();
          const cls = this.pop();
          if (!isNode(args, 'tuple')) this.fail(`NEWOBJ_EX arguments are ${describe(args)}, not a tuple`);
          if (!isNode(kwargs, 'dict')) this.fail(`NEWOBJ_EX keyword arguments are ${describe(kwargs)}, not a dict`);
          const rec = this.newObject(cls, args.items);
          if (isNode(rec, 'record') && kwargs.map.size > 0) rec.args.push(kwargs);
          this.push(rec);
          break;
        }
        case INST: {
          const module = this.line('INST module');
          const name = this.line('INST name');
          const args = this.popMark();
          this.push(this.instantiate(makeGlobal(module, name), args));
          break;
        }
        case OBJ: {
          const items = this.popMark();
          if (items.length === 0) this.fail('OBJ without a class');
          const cls = items[0]!;
          this.push(this.instantiate(cls, items.slice(1)));
          break;
        }
        case BUILD: {
          const state = this.pop();
          this.build(this.top(), state);
          break;
        }
        case PERSID: {
          const pid = this.line('PERSID');
          this.push(this.persistent(pid));
          break;
        }
        case BINPERSID: this.push(this.persistent(this.pop())); break;

        default:
          this.fail(`unknown pickle opcode 0x${code.toString(16).padStart(2, '0')}`);
      }
    }
  }

  private persistent(pid: PyValue): PyValue {
    const load = this.opts.persistentLoad;
    if (!load) this.fail('the pickle refers to external data (a persistent id), which is not read here');
    return load(pid, this.at);
  }

  private append(target: PyValue, items: PyValue[]): void {
    if (Array.isArray(target)) {
      for (let i = 0; i < items.length; i++) target.push(items[i]!);
    } else if (isNode(target, 'record')) {
      const l = (target.listItems ??= []);
      for (let i = 0; i < items.length; i++) l.push(items[i]!);
    } else {
      this.fail(`${OP_NAMES[this.b[this.at]!]} onto ${describe(target)}`);
    }
  }

  private setItems(target: PyValue, items: PyValue[]): void {
    let map: Map<PyValue, PyValue>;
    if (isNode(target, 'dict')) map = target.map;
    else if (isNode(target, 'record')) map = target.dictItems ??= new Map();
    else this.fail(`${OP_NAMES[this.b[this.at]!]} onto ${describe(target)}`);
    for (let i = 0; i < items.length; i += 2) map.set(items[i]!, items[i + 1]!);
  }

  private build(target: PyValue, state: PyValue): void {
    if (isNode(target, 'record')) {
      target.state = state;
    } else if (isNode(target, 'dict')) {
      target.attrs = state;
    } else if (isNode(target, 'tensor') || isNode(target, 'sparse')) {
      // Tensor subclass / parameter state (e.g. attributes set on a Parameter): not needed.
    } else {
      this.fail(`BUILD on ${describe(target)}`);
    }
  }

  /** NEWOBJ / copyreg.__newobj__: `cls.__new__(cls, *args)`; never calls the class. */
  private newObject(cls: PyValue, args: PyValue[]): PyValue {
    if (!isNode(cls, 'global')) this.fail(`a new object of ${describe(cls)}, which is not a class`);
    return newObjectOf(cls, args);
  }

  /** INST / OBJ: Python calls the class when there are arguments, else uses cls.__new__. */
  private instantiate(cls: PyValue, args: PyValue[]): PyValue {
    if (args.length === 0) return this.newObject(cls, args);
    return this.call(cls, args);
  }

  /** REDUCE: `fn(*args)`, only for allow-listed globals. */
  private call(fn: PyValue, args: PyValue[]): PyValue {
    if (!isNode(fn, 'global')) this.fail(`the pickle calls ${describe(fn)}, which is not a function`);
    const name = qualifiedName(fn);
    const ctor = own(SAFE_CALLS, name);
    if (!ctor) {
      this.fail(
        `refused to load ${name}: the pickle would call it when loaded in Python, and it is not one of ` +
          'the PyTorch tensor/storage rebuilds or plain containers Hopscope reads',
      );
    }
    try {
      return ctor(args);
    } catch (e) {
      if (e instanceof ArgError) this.fail(`${name}: ${e.message}`);
      throw e;
    }
  }
}

function newDict(className: string): PyDict {
  return { kind: 'dict', map: new Map(), className };
}

function makeGlobal(module: string, name: string): PyGlobal {
  const m = module.trim();
  return { kind: 'global', module: own(MODULE_ALIASES, m) ?? m, name: name.trim() };
}

// ---------------------------------------------------------------------------------------------
// Allow-list of callables

/** Thrown by a safe constructor for arguments it cannot use; becomes an UnreadableError. */
class ArgError extends Error {}

function argFail(message: string): never {
  throw new ArgError(message);
}

function intArg(v: PyValue | undefined, what: string): number {
  if (typeof v === 'boolean') return v ? 1 : 0;
  if (typeof v !== 'number' || !Number.isSafeInteger(v)) argFail(`${what} is ${describe(v)}, not an integer`);
  return v;
}

function intTuple(v: PyValue | undefined, what: string): number[] {
  const items = itemsOf(v);
  if (!items || Array.isArray(v)) argFail(`${what} is ${describe(v)}, not a tuple of integers`);
  if (items.length > 64) argFail(`${what} has ${items.length} dimensions`);
  return items.map((x, i) => intArg(x, `${what}[${i}]`));
}

function storageArg(v: PyValue | undefined): PyStorage {
  if (!isNode(v, 'storage')) argFail(`the storage argument is ${describe(v)}, not a storage`);
  return v;
}

function dtypeOfGlobal(v: PyValue | undefined): [DType | undefined, string] | undefined {
  if (!isNode(v, 'global') || v.module !== 'torch') return undefined;
  return own(TORCH_DTYPES, v.name);
}

function rebuildTensor(args: PyValue[], withDtype: boolean): PyTensor {
  if (args.length < 4) argFail(`expects at least 4 arguments, got ${args.length}`);
  const storage = storageArg(args[0]);
  const offset = intArg(args[1], 'the storage offset');
  const size = intTuple(args[2], 'the size');
  const stride = intTuple(args[3], 'the stride');
  if (stride.length !== size.length) argFail(`the size has ${size.length} dimensions but the stride has ${stride.length}`);
  let dtype = storage.dtype;
  let typeName = storage.typeName;
  if (withDtype) {
    const d = dtypeOfGlobal(args[6]);
    if (!d) argFail(`the dtype argument is ${describe(args[6])}, not a torch dtype`);
    [dtype, typeName] = d;
  }
  return {
    kind: 'tensor', storage, offset, size, stride, dtype, typeName,
    requiresGrad: args[4] === true, parameter: false,
  };
}

function rebuildParameter(args: PyValue[]): PyTensor {
  const data = args[0];
  if (!isNode(data, 'tensor')) argFail(`the data argument is ${describe(data)}, not a tensor`);
  return { ...data, requiresGrad: args[1] === true, parameter: true };
}

function layoutName(v: PyValue | undefined): string {
  if (isNode(v, 'layout')) return v.name.replace(/^torch\./, '');
  if (isNode(v, 'global') && v.module === 'torch') return v.name;
  argFail(`the layout argument is ${describe(v)}, not a tensor layout`);
}

function rebuildSparse(args: PyValue[]): PySparse {
  const layout = layoutName(args[0]);
  const data = itemsOf(args[1]);
  if (!data) argFail(`the data argument is ${describe(args[1])}, not a tuple`);
  const tensorAt = (i: number, what: string): PyTensor => {
    const t = data[i];
    if (!isNode(t, 'tensor')) argFail(`${what} is ${describe(t)}, not a tensor`);
    return t;
  };
  if (layout === 'sparse_coo') {
    if (data.length < 3) argFail('sparse COO data needs (indices, values, size)');
    return { kind: 'sparse', layout, parts: [tensorAt(0, 'indices'), tensorAt(1, 'values')], size: intTuple(data[2], 'the size') };
  }
  if (layout === 'sparse_csr' || layout === 'sparse_csc' || layout === 'sparse_bsr' || layout === 'sparse_bsc') {
    if (data.length < 4) argFail(`${layout} data needs (compressed indices, plain indices, values, size)`);
    return {
      kind: 'sparse', layout,
      parts: [tensorAt(0, 'the compressed indices'), tensorAt(1, 'the plain indices'), tensorAt(2, 'values')],
      size: intTuple(data[3], 'the size'),
    };
  }
  argFail(`sparse layout ${layout} is not read`);
}

function dictFrom(className: string, args: PyValue[]): PyDict {
  const d = newDict(className);
  const src = args[0];
  if (src === undefined) return d;
  if (isNode(src, 'dict')) {
    for (const [k, v] of src.map) d.map.set(k, v);
    return d;
  }
  const pairs = itemsOf(src);
  if (!pairs) argFail(`cannot make a dict from ${describe(src)}`);
  for (const p of pairs) {
    const kv = itemsOf(p);
    if (!kv || kv.length !== 2) argFail(`a dict item is ${describe(p)}, not a pair`);
    d.map.set(kv[0]!, kv[1]!);
  }
  return d;
}

function itemsArg(args: PyValue[], what: string): PyValue[] {
  if (args.length === 0) return [];
  const items = itemsOf(args[0]);
  if (items) return items.slice();
  if (isNode(args[0], 'dict')) return [...args[0].map.keys()];
  argFail(`cannot make a ${what} from ${describe(args[0])}`);
}

function latin1Bytes(s: string, what: string): Uint8Array {
  const out = new Uint8Array(s.length);
  for (let i = 0; i < s.length; i++) {
    const c = s.charCodeAt(i);
    if (c > 0xff) argFail(`${what}: character ${c} is outside latin-1`);
    out[i] = c;
  }
  return out;
}

function bytesFromText(args: PyValue[], what: string): Uint8Array {
  const s = args[0];
  if (s === undefined) return new Uint8Array(0);
  if (s instanceof Uint8Array) return s.slice();
  if (typeof s !== 'string') argFail(`${what} of ${describe(s)}`);
  const enc = typeof args[1] === 'string' ? args[1].toLowerCase().replace(/[-_]/g, '') : 'utf8';
  if (enc === 'latin1' || enc === 'iso88591') return latin1Bytes(s, what);
  if (enc === 'utf8') return new TextEncoder().encode(s);
  if (enc === 'ascii') return latin1Bytes(s, what);
  argFail(`${what} with the encoding ${String(args[1])}`);
}

const SAFE_CALLS: Record<string, (args: PyValue[]) => PyValue> = {
  'torch._utils._rebuild_tensor': (a) => rebuildTensor(a, false),
  'torch._utils._rebuild_tensor_v2': (a) => rebuildTensor(a, false),
  'torch._utils._rebuild_tensor_v3': (a) => rebuildTensor(a, true),
  'torch._utils._rebuild_parameter': rebuildParameter,
  'torch._utils._rebuild_parameter_with_state': rebuildParameter,
  'torch._utils._rebuild_sparse_tensor': rebuildSparse,
  'torch._utils._rebuild_sparse_csr_tensor': rebuildSparse,
  /** Tensor subclasses: `_rebuild_from_type_v2(func, new_type, args, state)`; the subclass is not made. */
  'torch._tensor._rebuild_from_type_v2': (a) => {
    const fn = a[0];
    const inner = itemsOf(a[2]);
    if (!isNode(fn, 'global')) argFail(`the rebuild function is ${describe(fn)}`);
    const name = qualifiedName(fn);
    const ctor = name.startsWith('torch._utils._rebuild_') ? own(SAFE_CALLS, name) : undefined;
    if (!ctor) argFail(`refused to load ${name}: it is not one of the tensor rebuilds Hopscope reads`);
    if (!inner) argFail(`the arguments are ${describe(a[2])}, not a tuple`);
    return ctor(inner);
  },
  'torch.serialization._get_layout': (a) => {
    if (typeof a[0] !== 'string') argFail(`the layout name is ${describe(a[0])}`);
    return { kind: 'layout', name: a[0] };
  },
  'torch.Size': (a) => ({ kind: 'tuple', items: itemsArg(a, 'torch.Size') }),
  'torch.device': (a) => {
    if (!a.every((x) => typeof x === 'string' || typeof x === 'number')) argFail('arguments are not a device name');
    return { kind: 'record', className: 'torch.device', args: a.slice() };
  },
  'collections.OrderedDict': (a) => dictFrom('collections.OrderedDict', a),
  'builtins.dict': (a) => dictFrom('builtins.dict', a),
  'builtins.list': (a) => itemsArg(a, 'list'),
  'builtins.tuple': (a) => ({ kind: 'tuple', items: itemsArg(a, 'tuple') }),
  'builtins.set': (a) => ({ kind: 'set', items: itemsArg(a, 'set'), frozen: false }),
  'builtins.frozenset': (a) => ({ kind: 'set', items: itemsArg(a, 'frozenset'), frozen: true }),
  'builtins.slice': (a) => {
    if (a.length < 1 || a.length > 3 || !a.every((x) => x === null || typeof x === 'number')) argFail('arguments are not slice bounds');
    return { kind: 'record', className: 'builtins.slice', args: a.slice() };
  },
  'builtins.bytearray': (a) => bytesFromText(a, 'bytearray'),
  'builtins.bytes': (a) => bytesFromText(a, 'bytes'),
  '_codecs.encode': (a) => bytesFromText(a, '_codecs.encode'),
  /** copyreg.__newobj__(cls, *args) is cls.__new__(cls, *args): a record, never a call. */
  'copyreg.__newobj__': (a) => {
    const cls = a[0];
    if (!isNode(cls, 'global')) argFail(`the class is ${describe(cls)}`);
    return newObjectOf(cls, a.slice(1));
  },
  'copyreg.__newobj_ex__': (a) => {
    const cls = a[0];
    if (!isNode(cls, 'global')) argFail(`the class is ${describe(cls)}`);
    const args = itemsOf(a[1]) ?? [];
    return newObjectOf(cls, args.slice());
  },
  /** copyreg._reconstructor(cls, base, state): base.__new__(cls[, state]). Never calls the class. */
  'copyreg._reconstructor': (a) => {
    const cls = a[0];
    if (!isNode(cls, 'global')) argFail(`the class is ${describe(cls)}`);
    const base = a[1];
    if (isNode(base, 'global') && qualifiedName(base) !== 'builtins.object') {
      return { kind: 'record', className: qualifiedName(cls), args: [a[2] ?? null] };
    }
    return { kind: 'record', className: qualifiedName(cls), args: [] };
  },
};

/** `cls.__new__(cls, *args)` as data: an empty container for the builtin ones, else a record. */
function newObjectOf(cls: PyGlobal, args: PyValue[]): PyValue {
  const name = qualifiedName(cls);
  // Containers whose __new__ makes an empty container: their items come by SETITEMS/APPENDS.
  if (name === 'collections.OrderedDict' || name === 'builtins.dict') return newDict(name);
  if (name === 'builtins.list') return [];
  if (name === 'builtins.set') return { kind: 'set', items: [], frozen: false };
  if (name === 'builtins.tuple' || name === 'torch.Size') {
    const items = itemsOf(args[0]);
    return { kind: 'tuple', items: items ? items.slice() : [] };
  }
  return { kind: 'record', className: name, args };
}

/** Whether a global may be called by a stream (for tests and messages). */
export function isAllowedCall(qualified: string): boolean {
  return own(SAFE_CALLS, qualified) !== undefined;
}

// ---------------------------------------------------------------------------------------------
// Entry points

/**
 * Parses one pickle stream into a value tree. Throws UnreadableError (only) for anything it
 * cannot or will not read; its offset is the byte offset of the failing opcode in `bytes`.
 */
export function parsePickle(bytes: Uint8Array, opts: PickleOptions = {}): PyValue {
  const p = new Parser(bytes, opts);
  try {
    return p.run();
  } catch (e) {
    if (e instanceof UnreadableError) throw e;
    if (e instanceof RangeError) {
      // An allocation the bounds above did not foresee (e.g. a string past the engine's limit).
      throw new UnreadableError(`the pickle cannot be held in memory: ${e.message} (pickle byte ${p.at})`, p.at);
    }
    throw e;
  }
}

/**
 * Persistent-id reader for torch.save: `('storage', torch.XStorage, key, location, numel)`
 * (REFERENCES.md §1.6). The same key always yields the same storage node, so tensors sharing a
 * storage share one node (and the reader decodes the member once).
 */
export function torchPersistentLoad(): (pid: PyValue, offset: number) => PyStorage {
  const seen = new Map<string, PyStorage>();
  return (pid, offset) => {
    const bad: (why: string) => never = (why) => {
      throw new UnreadableError(`a persistent id ${why} (pickle byte ${offset})`, offset);
    };
    const items = isNode(pid, 'tuple') ? pid.items : undefined;
    if (!items) bad(`is ${describe(pid)}, not a tuple`);
    if (items[0] !== 'storage') {
      bad(`of type ${typeof items[0] === 'string' ? JSON.stringify(items[0].slice(0, 40)) : describe(items[0])} is not a storage`);
    }
    if (items.length < 5) bad(`has ${items.length} fields; ('storage', type, key, location, numel) has 5`);
    const cls = items[1];
    const key = items[2];
    const location = items[3];
    const numel = items[4];
    let typeInfo: [DType | undefined, string] | undefined;
    let storageType = describe(cls);
    if (isNode(cls, 'global')) {
      storageType = qualifiedName(cls);
      if (cls.module === 'torch' || cls.module === 'torch.cuda') typeInfo = own(STORAGE_TYPES, cls.name) ?? dtypeOfGlobal(cls);
    }
    if (!typeInfo) bad(`names ${storageType}, which is not a torch storage class`);
    if (typeof key !== 'string' || key.length === 0 || key.length > 256 || /[/\\]/.test(key)) bad('has a bad storage key');
    if (typeof numel !== 'number' || !Number.isSafeInteger(numel) || numel < 0) bad(`has a bad element count ${describe(numel)}`);
    const prev = seen.get(key);
    if (prev) {
      if (prev.storageType !== storageType || prev.numel !== numel) {
        bad(`reuses storage key '${key}' with a different type or size`);
      }
      return prev;
    }
    const s: PyStorage = {
      kind: 'storage', key, storageType, dtype: typeInfo[0], typeName: typeInfo[1],
      untyped: isNode(cls, 'global') && cls.name === 'UntypedStorage',
      location: typeof location === 'string' ? location : String(describe(location)),
      numel,
    };
    seen.set(key, s);
    return s;
  };
}

/**
 * A pickle PARSER: an opcode machine for pickle protocols 0–5 (the streams `torch.save` writes use
 * 2–5) that builds plain values (pickle-values.ts). Nothing from the stream is ever evaluated,
 * imported or called: every global a stream refers to becomes a name node, and the few that a
 * stream may "call" (REDUCE, INST, OBJ) are looked up in the table of allowed calls the caller
 * passes, which maps them to constructors of plain values. Any other callable is refused with its
 * name. The PyTorch reader's table is pt-allowed.ts; with NO_CALLS nothing may be called.
 *
 * An object of an unknown class made by `cls.__new__` (NEWOBJ, NEWOBJ_EX) and filled by BUILD is
 * kept as a named record of its state, which is how saved data objects (edge_index, x, y, masks as
 * attributes) are read.
 *
 * Opcode semantics per CPython's `pickle.py` / `pickletools` opcode table (docs/references.md §1.7).
 */
import { UnreadableError } from './types';
import {
  describe, isNode, itemsOf, newDict, newObjectOf, own, qualifiedName,
  type PyBigInt, type PyGlobal, type PyValue,
} from './pickle-values';

// ---------------------------------------------------------------------------------------------
// Options and the table of allowed calls

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

/** A constructor of a plain value from a call's arguments. Never runs anything from the stream. */
export type AllowedCall = (args: PyValue[]) => PyValue;

/** The callables a stream may call, and how it may make objects. */
export interface AllowedCalls {
  /** Qualified name ('module.name') → constructor of a plain value. */
  readonly calls: Readonly<Record<string, AllowedCall>>;
  /** What the table holds, ending the refusal message "…and it is not one of <description>". */
  readonly description: string;
  /** `cls.__new__(cls, *args)` as data; newObjectOf when absent. */
  readonly newObject?: (cls: PyGlobal, args: PyValue[]) => PyValue;
}

/** A table that allows no call at all. */
export const NO_CALLS: AllowedCalls = { calls: {}, description: 'the calls allowed here (none)' };

/** Thrown by an allowed call for arguments it cannot use; becomes an UnreadableError naming the call. */
export class CallArgumentError extends Error {}

/** Python 2 module names that Python 3's pickle maps when reading protocol 0–2 streams. */
const MODULE_ALIASES: Record<string, string> = { __builtin__: 'builtins', copy_reg: 'copyreg' };

// ---------------------------------------------------------------------------------------------
// Decoding of opcode arguments

const utf8 = new TextDecoder('utf-8');

function latin1(b: Uint8Array): string {
  let s = '';
  for (let i = 0; i < b.length; i += 8192) {
    s += String.fromCharCode.apply(null, Array.from(b.subarray(i, i + 8192)));
  }
  return s;
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
// The machine

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

  constructor(
    private readonly b: Uint8Array,
    private readonly allowed: AllowedCalls,
    private readonly opts: PickleOptions,
  ) {
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
    return (this.allowed.newObject ?? newObjectOf)(cls, args);
  }

  /** INST / OBJ: Python calls the class when there are arguments, else uses cls.__new__. */
  private instantiate(cls: PyValue, args: PyValue[]): PyValue {
    if (args.length === 0) return this.newObject(cls, args);
    return this.call(cls, args);
  }

  /** REDUCE: `fn(*args)`, only for globals on the call table. */
  private call(fn: PyValue, args: PyValue[]): PyValue {
    if (!isNode(fn, 'global')) this.fail(`the pickle calls ${describe(fn)}, which is not a function`);
    const name = qualifiedName(fn);
    const make = own(this.allowed.calls, name);
    if (!make) {
      this.fail(
        `refused to load ${name}: the pickle would call it when loaded in Python, and it is not one of ` +
          this.allowed.description,
      );
    }
    try {
      return make(args);
    } catch (e) {
      if (e instanceof CallArgumentError) this.fail(`${name}: ${e.message}`);
      throw e;
    }
  }
}

function makeGlobal(module: string, name: string): PyGlobal {
  const m = module.trim();
  return { kind: 'global', module: own(MODULE_ALIASES, m) ?? m, name: name.trim() };
}

// ---------------------------------------------------------------------------------------------
// Entry point

/**
 * Parses one pickle stream into a value tree, calling only what `allowed` lists. Throws
 * UnreadableError (only) for anything it cannot or will not read; its offset is the byte offset of
 * the failing opcode in `bytes`.
 */
export function parsePickle(bytes: Uint8Array, allowed: AllowedCalls, opts: PickleOptions = {}): PyValue {
  const p = new Parser(bytes, allowed, opts);
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

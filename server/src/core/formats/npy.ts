/**
 * NumPy .npy reader (format versions 1.0, 2.0 and 3.0, as described in the `numpy.lib.format`
 * docstring / NEP 1). The header is a Python dict literal, parsed here by a small tokenizer;
 * nothing is evaluated.
 */
import {
  DEFAULT_LIMITS, UnreadableError, type DType, type DenseTensor, type ReadLimits, type ReadResult,
  type TensorData,
} from './types';
import { decodeElements, fortranToC, numericItemSize, sameKind, u16le, u32le } from './elements';

const MAGIC = [0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59]; // \x93NUMPY
const MAX_NESTING = 16;

// ---------------------------------------------------------------------------------------------
// Header dict literal

type PyValue = string | number | boolean | null | PyValue[] | Map<string, PyValue>;

class HeaderParser {
  pos = 0;
  constructor(
    private readonly s: string,
    /** Byte offset of the header text in the file, for error offsets. */
    private readonly base: number,
    private readonly utf8: boolean,
  ) {}

  byteOffset(at: number): number {
    return this.base + (this.utf8 ? new TextEncoder().encode(this.s.slice(0, at)).length : at);
  }

  fail(what: string, at = this.pos): never {
    const off = this.byteOffset(at);
    throw new UnreadableError(`the .npy header is not a valid dictionary: ${what} (byte ${off})`, off);
  }

  ws(): void {
    const s = this.s;
    while (this.pos < s.length) {
      const c = s.charCodeAt(this.pos);
      if (c === 0x20 || c === 0x0a || c === 0x09 || c === 0x0d) this.pos++;
      else break;
    }
  }

  value(depth: number): PyValue {
    if (depth > MAX_NESTING) this.fail('nested too deeply');
    this.ws();
    const s = this.s;
    if (this.pos >= s.length) this.fail('text ends where a value should start');
    const c = s[this.pos];
    if (c === '{') return this.dict(depth);
    if (c === '(' || c === '[') return this.seq(depth, c === '(' ? ')' : ']');
    if (c === "'" || c === '"') return this.str();
    if ((c === 'u' || c === 'b') && (s[this.pos + 1] === "'" || s[this.pos + 1] === '"')) {
      this.pos++;
      return this.str();
    }
    if (c === '-' || c === '+' || (c >= '0' && c <= '9')) return this.int();
    const m = /^[A-Za-z_]\w*/.exec(s.slice(this.pos, this.pos + 32));
    if (m) {
      const word = m[0];
      if (word === 'True' || word === 'False' || word === 'None') {
        this.pos += word.length;
        return word === 'None' ? null : word === 'True';
      }
      this.fail(`unexpected name '${word}'`);
    }
    this.fail(`unexpected character ${JSON.stringify(c)}`);
  }

  dict(depth: number): Map<string, PyValue> {
    const out = new Map<string, PyValue>();
    this.pos++; // {
    for (;;) {
      this.ws();
      if (this.s[this.pos] === '}') { this.pos++; return out; }
      const at = this.pos;
      const key = this.value(depth + 1);
      if (typeof key !== 'string') this.fail('a key is not a string', at);
      this.ws();
      if (this.s[this.pos] !== ':') this.fail(`expected ':' after key '${key}'`);
      this.pos++;
      if (out.has(key)) this.fail(`key '${key}' appears twice`, at);
      out.set(key, this.value(depth + 1));
      this.ws();
      const c = this.s[this.pos];
      if (c === ',') { this.pos++; continue; }
      if (c === '}') { this.pos++; return out; }
      this.fail("expected ',' or '}'");
    }
  }

  seq(depth: number, close: string): PyValue[] {
    const out: PyValue[] = [];
    this.pos++;
    for (;;) {
      this.ws();
      if (this.s[this.pos] === close) { this.pos++; return out; }
      out.push(this.value(depth + 1));
      this.ws();
      const c = this.s[this.pos];
      if (c === ',') { this.pos++; continue; }
      if (c === close) { this.pos++; return out; }
      this.fail(`expected ',' or '${close}'`);
    }
  }

  str(): string {
    const s = this.s;
    const q = s[this.pos];
    const start = this.pos;
    this.pos++;
    let out = '';
    while (this.pos < s.length) {
      const c = s[this.pos++];
      if (c === q) return out;
      if (c === '\n') break;
      if (c !== '\\') { out += c; continue; }
      if (this.pos >= s.length) break;
      const e = s[this.pos++];
      switch (e) {
        case 'n': out += '\n'; break;
        case 't': out += '\t'; break;
        case 'r': out += '\r'; break;
        case '0': out += '\0'; break;
        case 'x': case 'u': {
          const width = e === 'x' ? 2 : 4;
          const hex = s.slice(this.pos, this.pos + width);
          if (!/^[0-9a-fA-F]+$/.test(hex) || hex.length !== width) this.fail('bad escape in a string');
          out += String.fromCharCode(parseInt(hex, 16));
          this.pos += width;
          break;
        }
        default: out += e;
      }
    }
    this.fail('unterminated string', start);
  }

  int(): number {
    const m = /^[-+]?\d+/.exec(this.s.slice(this.pos, this.pos + 40));
    if (!m) this.fail('expected a number');
    const at = this.pos;
    this.pos += m[0].length;
    const next = this.s[this.pos];
    if (next === 'L' || next === 'l') this.pos++; // Python 2 long literal, e.g. (3L, 4L)
    else if (next === '.' || next === 'e' || next === 'E') this.fail('a number is not an integer', at);
    const v = Number(m[0]);
    if (!Number.isSafeInteger(v)) this.fail(`integer ${m[0]} is too large`, at);
    return v;
  }
}

// ---------------------------------------------------------------------------------------------
// dtype descriptors

export interface Descr {
  dtype: DType;
  itemSize: number;
  littleEndian: boolean;
  /** For 'str' (UCS-4) and 'bytes': characters per element. */
  chars: number;
}

const NUMERIC: Record<string, DType> = {
  b1: 'bool',
  i1: 'int8', i2: 'int16', i4: 'int32', i8: 'int64',
  u1: 'uint8', u2: 'uint16', u4: 'uint32', u8: 'uint64',
  f2: 'float16', f4: 'float32', f8: 'float64',
};

function parseDescr(descr: PyValue, at: number): Descr {
  if (Array.isArray(descr)) {
    throw new UnreadableError('structured (record) dtypes are not read; save plain numeric arrays', at);
  }
  if (typeof descr !== 'string') throw new UnreadableError("the .npy header's 'descr' is not a string", at);
  const m = /^([<>|=]?)([a-zA-Z?])(\d*)$/.exec(descr);
  if (!m) throw new UnreadableError(`unknown dtype '${descr}' in the .npy header`, at);
  const order = m[1];
  const kind = m[2];
  const digits = m[3];
  const littleEndian = order !== '>';
  if (kind === 'O') {
    throw new UnreadableError(
      `dtype '${descr}' is a pickled object array; pickled object arrays are not read (save a numeric array)`,
      at,
    );
  }
  if (kind === 'S' || kind === 'a' || kind === 'U') {
    const chars = Number(digits);
    if (!(chars >= 1) || !Number.isSafeInteger(chars)) {
      throw new UnreadableError(`string dtype '${descr}' has no usable width`, at);
    }
    return kind === 'U'
      ? { dtype: 'str', itemSize: chars * 4, littleEndian, chars }
      : { dtype: 'bytes', itemSize: chars, littleEndian, chars };
  }
  const dtype = NUMERIC[kind + digits] ?? (kind === '?' && digits === '' ? 'bool' : undefined);
  if (!dtype) {
    const what =
      kind === 'c' ? 'complex numbers' : kind === 'M' || kind === 'm' ? 'dates and time spans'
        : kind === 'V' ? 'raw void records' : kind === 'f' ? 'this float width' : 'this element type';
    throw new UnreadableError(`dtype '${descr}' (${what}) is not read`, at);
  }
  return { dtype, itemSize: numericItemSize(dtype), littleEndian, chars: 0 };
}

// ---------------------------------------------------------------------------------------------
// strings

const utf8Lenient = new TextDecoder('utf-8');

function decodeStrings(bytes: Uint8Array, offset: number, count: number, d: Descr): string[] {
  const out = new Array<string>(count);
  if (d.dtype === 'bytes') {
    for (let i = 0, p = offset; i < count; i++, p += d.itemSize) {
      let end = p + d.itemSize;
      while (end > p && bytes[end - 1] === 0) end--; // NumPy pads with NUL
      out[i] = utf8Lenient.decode(bytes.subarray(p, end));
    }
    return out;
  }
  const view = new DataView(bytes.buffer, bytes.byteOffset + offset, count * d.itemSize);
  const codes: number[] = [];
  for (let i = 0; i < count; i++) {
    codes.length = 0;
    const p = i * d.itemSize;
    for (let k = 0; k < d.chars; k++) codes.push(view.getUint32(p + 4 * k, d.littleEndian));
    while (codes.length > 0 && codes[codes.length - 1] === 0) codes.pop();
    let s = '';
    for (const c of codes) s += c <= 0x10ffff && (c < 0xd800 || c > 0xdfff) ? String.fromCodePoint(c) : '\ufffd';
    out[i] = s;
  }
  return out;
}

// ---------------------------------------------------------------------------------------------

/** What a .npy header says: element type, order, shape and where the data starts. */
export interface NpyLayout {
  descr: Descr;
  fortran: boolean;
  shape: number[];
  /** Number of elements (product of the shape). */
  count: number;
  /** Byte offset of the first element. */
  dataStart: number;
}

/**
 * Parses and validates the preamble and header of a .npy file of `fileSize` bytes, of which
 * `bytes` holds a prefix (or all). Checks that the data the header describes fits in the file.
 * Returns null when the prefix ends before the header does (read more and call again).
 */
export function parseNpyHeader(bytes: Uint8Array, fileSize: number, limits: ReadLimits = DEFAULT_LIMITS): NpyLayout | null {
  const len = fileSize;
  if (bytes.length < Math.min(len, 12)) return null;
  for (let i = 0; i < MAGIC.length; i++) {
    if (bytes[i] !== MAGIC[i]) {
      if (i >= len) throw new UnreadableError(`file is too short for .npy (${len} bytes)`, len);
      throw new UnreadableError('not a .npy file: it does not start with the magic bytes \\x93NUMPY', 0);
    }
  }
  if (len < 10) throw new UnreadableError(`.npy file ends inside its preamble (${len} bytes)`, len);
  const major = bytes[6];
  const minor = bytes[7];
  if (!((major === 1 || major === 2 || major === 3) && minor === 0)) {
    throw new UnreadableError(`unsupported .npy format version ${major}.${minor} (1.0, 2.0 and 3.0 are read)`, 6);
  }
  let headerStart: number;
  let headerLen: number;
  if (major === 1) {
    headerLen = u16le(bytes, 8);
    headerStart = 10;
  } else {
    if (len < 12) throw new UnreadableError(`.npy file ends inside its preamble (${len} bytes)`, len);
    headerLen = u32le(bytes, 8);
    headerStart = 12;
  }
  if (headerLen > limits.maxHeaderBytes) {
    throw new UnreadableError(
      `.npy header length ${headerLen} is over the limit of ${limits.maxHeaderBytes} bytes`, 8,
    );
  }
  const dataStart = headerStart + headerLen;
  if (dataStart > len) {
    throw new UnreadableError(
      `.npy header length ${headerLen} runs past the end of the file (header would end at byte ` +
        `${dataStart}, file is ${len} bytes)`,
      8,
    );
  }

  if (dataStart > bytes.length) return null;
  const raw = bytes.subarray(headerStart, dataStart);
  let text: string;
  if (major === 3) {
    try {
      text = new TextDecoder('utf-8', { fatal: true }).decode(raw);
    } catch {
      throw new UnreadableError('the .npy v3.0 header is not valid UTF-8', headerStart);
    }
  } else {
    text = '';
    for (let i = 0; i < raw.length; i += 4096) {
      text += String.fromCharCode.apply(null, Array.from(raw.subarray(i, i + 4096)));
    }
  }

  const p = new HeaderParser(text, headerStart, major === 3);
  const header = p.value(0);
  p.ws();
  if (p.pos !== text.length) p.fail('unexpected text after the dictionary');
  if (!(header instanceof Map)) {
    throw new UnreadableError('the .npy header is not a dictionary', headerStart);
  }
  for (const key of ['descr', 'fortran_order', 'shape']) {
    if (!header.has(key)) throw new UnreadableError(`the .npy header has no '${key}' key`, headerStart);
  }
  for (const key of header.keys()) {
    if (key !== 'descr' && key !== 'fortran_order' && key !== 'shape') {
      throw new UnreadableError(`the .npy header has an unexpected key '${key}'`, headerStart);
    }
  }
  const descr = parseDescr(header.get('descr')!, headerStart);
  const fortran = header.get('fortran_order');
  if (typeof fortran !== 'boolean') {
    throw new UnreadableError("the .npy header's 'fortran_order' is not True or False", headerStart);
  }
  const shapeValue = header.get('shape');
  if (!Array.isArray(shapeValue)) {
    throw new UnreadableError("the .npy header's 'shape' is not a tuple", headerStart);
  }
  const shape: number[] = [];
  let count = 1;
  for (const d of shapeValue) {
    if (typeof d !== 'number' || !Number.isSafeInteger(d) || d < 0) {
      throw new UnreadableError(
        `the .npy shape (${shapeValue.map(String).join(', ')}) has a dimension that is not a non-negative integer`,
        headerStart,
      );
    }
    shape.push(d);
    count *= d;
  }
  if (!Number.isSafeInteger(count)) {
    throw new UnreadableError(`the .npy shape (${shape.join(', ')}) has too many elements`, headerStart);
  }

  const need = count * descr.itemSize;
  if (need > len - dataStart) {
    throw new UnreadableError(
      `.npy data is truncated: shape (${shape.join(', ')}) of ${descr.dtype} needs ${need} bytes from ` +
        `byte ${dataStart}, but the file has ${len - dataStart}`,
      dataStart,
    );
  }
  return { descr, fortran, shape, count, dataStart };
}

/** Parses one .npy file (or .npz member) into a dense tensor named `name`. */
export function parseNpy(bytes: Uint8Array, name: string, limits: ReadLimits = DEFAULT_LIMITS): DenseTensor {
  const layout = parseNpyHeader(bytes, bytes.length, limits)!;
  const { descr, fortran, shape, count, dataStart } = layout;
  if (descr.dtype === 'bytes' || descr.dtype === 'str') {
    let strings = decodeStrings(bytes, dataStart, count, descr);
    if (fortran && shape.length > 1) {
      const c = new Array<string>(count);
      fortranToC(strings, c, shape);
      strings = c;
    }
    return { kind: 'dense', name, dtype: descr.dtype, shape, data: new Uint8Array(0), strings };
  }

  let data: TensorData = decodeElements(bytes, dataStart, count, descr.dtype, descr.littleEndian);
  if (fortran && shape.length > 1) {
    const c = sameKind(data, count);
    fortranToC(data, c, shape);
    data = c;
  }
  return { kind: 'dense', name, dtype: descr.dtype, shape, data };
}

/** File stem used as the tensor name: `path/to/edge_index.npy` → `edge_index`. */
export function npyStem(fileName: string): string {
  const base = fileName.slice(Math.max(fileName.lastIndexOf('/'), fileName.lastIndexOf('\\')) + 1);
  return base.toLowerCase().endsWith('.npy') && base.length > 4 ? base.slice(0, -4) : base;
}

export function readNpy(bytes: Uint8Array, fileName: string, limits: ReadLimits): ReadResult {
  return { format: 'npy', tensors: [parseNpy(bytes, npyStem(fileName), limits)], problems: [] };
}

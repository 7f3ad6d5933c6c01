/**
 * Element decoding shared by the binary readers (.npy/.npz, safetensors, later .pt): raw bytes of
 * a fixed-width dtype → the normalised typed array of types.ts. Views are made without copying
 * when byte order and alignment allow; otherwise the bytes are copied (and swapped) once.
 *
 * Callers check that `offset + count * itemSize(dtype)` lies inside `bytes` before calling.
 */
import type { DType, TensorData } from './types';

/** True on every platform we ship to; checked rather than assumed. */
export const HOST_LITTLE_ENDIAN = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

/** Bytes per element of the numeric dtypes (strings have a per-file width). */
export function numericItemSize(dtype: DType): number {
  switch (dtype) {
    case 'bool': case 'int8': case 'uint8': return 1;
    case 'int16': case 'uint16': case 'float16': case 'bfloat16': return 2;
    case 'int32': case 'uint32': case 'float32': return 4;
    case 'int64': case 'uint64': case 'float64': return 8;
    default: return 0;
  }
}

/** Little-endian integer reads (callers bound-check). u64 values above 2^53 lose precision but stay huge. */
export function u16le(b: Uint8Array, p: number): number {
  return b[p] | (b[p + 1] << 8);
}
export function u32le(b: Uint8Array, p: number): number {
  return (b[p] | (b[p + 1] << 8) | (b[p + 2] << 16) | (b[p + 3] << 24)) >>> 0;
}
export function u64le(b: Uint8Array, p: number): number {
  return u32le(b, p) + u32le(b, p + 4) * 4294967296;
}

/**
 * `count` elements of `size` bytes at `offset`, as a Uint8Array whose absolute byte offset is a
 * multiple of `align` and whose elements are in host byte order: the input itself when possible,
 * otherwise a fresh (swapped) copy.
 */
function nativeBytes(
  bytes: Uint8Array, offset: number, count: number, size: number, little: boolean, align: number,
): Uint8Array {
  const n = count * size;
  const src = bytes.subarray(offset, offset + n);
  const sameOrder = size === 1 || little === HOST_LITTLE_ENDIAN;
  if (sameOrder && src.byteOffset % align === 0) return src;
  const out = new Uint8Array(n);
  if (sameOrder) {
    out.set(src);
  } else if (size === 2) {
    for (let i = 0; i < n; i += 2) { out[i] = src[i + 1]; out[i + 1] = src[i]; }
  } else if (size === 4) {
    for (let i = 0; i < n; i += 4) {
      out[i] = src[i + 3]; out[i + 1] = src[i + 2]; out[i + 2] = src[i + 1]; out[i + 3] = src[i];
    }
  } else {
    for (let i = 0; i < n; i += size) {
      for (let k = 0; k < size; k++) out[i + k] = src[i + size - 1 - k];
    }
  }
  return out;
}

let halfTable: Uint32Array | undefined;

/** float32 bit patterns of all 65536 float16 values (normals, subnormals, ±0, ±inf, NaN payloads). */
function halfBits(): Uint32Array {
  if (halfTable) return halfTable;
  const t = new Uint32Array(65536);
  for (let h = 0; h < 65536; h++) {
    const sign = (h & 0x8000) << 16;
    let exp = (h >> 10) & 0x1f;
    let man = h & 0x3ff;
    let bits: number;
    if (exp === 0) {
      if (man === 0) {
        bits = sign;
      } else {
        // subnormal: man * 2^-24; renormalise so the leading 1 becomes implicit
        exp = 113; // 127 - 15 + 1
        while ((man & 0x400) === 0) { man <<= 1; exp--; }
        bits = sign | (exp << 23) | ((man & 0x3ff) << 13);
      }
    } else if (exp === 31) {
      bits = sign | 0x7f800000 | (man << 13);
    } else {
      bits = sign | ((exp + 112) << 23) | (man << 13);
    }
    t[h] = bits >>> 0;
  }
  halfTable = t;
  return t;
}

/** One float16 bit pattern as a number (used by tests and scalar paths). */
export function halfToFloat(h: number): number {
  const f = new Float32Array(new Uint32Array([halfBits()[h & 0xffff]]).buffer);
  return f[0];
}

/** int64/uint64 words (low, high per element in host word order) → Int32Array if all fit, else Float64Array. */
function narrow64(words: Int32Array, count: number, signed: boolean): Int32Array | Float64Array {
  const lo = HOST_LITTLE_ENDIAN ? 0 : 1;
  const hi = 1 - lo;
  let fits = true;
  if (signed) {
    for (let i = 0, j = 0; i < count; i++, j += 2) {
      if (words[j + hi] !== (words[j + lo] >> 31)) { fits = false; break; }
    }
  } else {
    for (let i = 0, j = 0; i < count; i++, j += 2) {
      if (words[j + hi] !== 0 || words[j + lo] < 0) { fits = false; break; }
    }
  }
  if (fits) {
    const out = new Int32Array(count);
    for (let i = 0, j = lo; i < count; i++, j += 2) out[i] = words[j];
    return out;
  }
  const out = new Float64Array(count);
  if (signed) {
    for (let i = 0, j = 0; i < count; i++, j += 2) out[i] = words[j + hi] * 4294967296 + (words[j + lo] >>> 0);
  } else {
    for (let i = 0, j = 0; i < count; i++, j += 2) {
      out[i] = (words[j + hi] >>> 0) * 4294967296 + (words[j + lo] >>> 0);
    }
  }
  return out;
}

/**
 * Narrows `count` host-order 64-bit integers (as 2·count int32 words) into out[at, at + count)
 * when every value fits in int32; returns false, leaving `out` partly written, when one does not.
 * One pass that checks and copies together: the streaming reader's inner loop.
 */
export function narrowInt64Into(words: Int32Array, count: number, signed: boolean, out: Int32Array, at: number): boolean {
  const lo = HOST_LITTLE_ENDIAN ? 0 : 1;
  const hi = 1 - lo;
  if (signed) {
    for (let i = 0, j = 0; i < count; i++, j += 2) {
      const v = words[j + lo]!;
      if (words[j + hi] !== (v >> 31)) return false;
      out[at + i] = v;
    }
  } else {
    for (let i = 0, j = 0; i < count; i++, j += 2) {
      const v = words[j + lo]!;
      if (words[j + hi] !== 0 || v < 0) return false;
      out[at + i] = v;
    }
  }
  return true;
}

/**
 * Decodes `count` elements of a numeric `dtype` starting at `offset` of `bytes`, stored
 * little- or big-endian, into the normalised storage of types.ts.
 */
export function decodeElements(
  bytes: Uint8Array, offset: number, count: number, dtype: DType, littleEndian: boolean,
): TensorData {
  switch (dtype) {
    case 'bool': {
      const src = bytes.subarray(offset, offset + count);
      for (let i = 0; i < count; i++) {
        if (src[i] > 1) {
          // Not what NumPy writes, but any non-zero byte is true; keep the 0/1 contract.
          const out = new Uint8Array(count);
          for (let k = 0; k < count; k++) out[k] = src[k] !== 0 ? 1 : 0;
          return out;
        }
      }
      return src;
    }
    case 'uint8':
      return bytes.subarray(offset, offset + count);
    case 'int8': {
      const src = bytes.subarray(offset, offset + count);
      return new Int8Array(src.buffer, src.byteOffset, count);
    }
    case 'int16': case 'uint16': case 'int32': case 'uint32': case 'float32': case 'float64': {
      const size = numericItemSize(dtype);
      const b = nativeBytes(bytes, offset, count, size, littleEndian, size);
      switch (dtype) {
        case 'int16': return new Int16Array(b.buffer, b.byteOffset, count);
        case 'uint16': return new Uint16Array(b.buffer, b.byteOffset, count);
        case 'int32': return new Int32Array(b.buffer, b.byteOffset, count);
        case 'uint32': return new Uint32Array(b.buffer, b.byteOffset, count);
        case 'float32': return new Float32Array(b.buffer, b.byteOffset, count);
        default: return new Float64Array(b.buffer, b.byteOffset, count);
      }
    }
    case 'int64': case 'uint64': {
      const b = nativeBytes(bytes, offset, count, 8, littleEndian, 4);
      return narrow64(new Int32Array(b.buffer, b.byteOffset, count * 2), count, dtype === 'int64');
    }
    case 'float16': case 'bfloat16': {
      const b = nativeBytes(bytes, offset, count, 2, littleEndian, 2);
      const h = new Uint16Array(b.buffer, b.byteOffset, count);
      const out = new Float32Array(count);
      const bits = new Uint32Array(out.buffer);
      if (dtype === 'bfloat16') {
        for (let i = 0; i < count; i++) bits[i] = h[i] << 16;
      } else {
        const t = halfBits();
        for (let i = 0; i < count; i++) bits[i] = t[h[i]];
      }
      return out;
    }
    default:
      throw new Error(`decodeElements: ${dtype} is not a numeric dtype`);
  }
}

/**
 * Writes the elements of a Fortran-ordered (column-major) array `src` of `shape` into `dst` in
 * C (row-major) order. `dst` must have the same length.
 */
export function fortranToC<E>(src: ArrayLike<E>, dst: { [i: number]: E }, shape: readonly number[]): void {
  const n = src.length;
  const r = shape.length;
  if (n === 0) return;
  if (r <= 1) {
    for (let i = 0; i < n; i++) dst[i] = src[i];
    return;
  }
  if (r === 2) {
    const rows = shape[0];
    const cols = shape[1];
    let f = 0;
    for (let j = 0; j < cols; j++) {
      for (let i = 0, c = j; i < rows; i++, c += cols) dst[c] = src[f++];
    }
    return;
  }
  // Odometer over the Fortran order (first axis fastest), tracking the C-order position.
  const cs = new Float64Array(r);
  cs[r - 1] = 1;
  for (let k = r - 2; k >= 0; k--) cs[k] = cs[k + 1] * shape[k + 1];
  const ctr = new Float64Array(r);
  let c = 0;
  for (let f = 0; f < n; f++) {
    dst[c] = src[f];
    let k = 0;
    ctr[0]++;
    c += cs[0];
    while (k < r - 1 && ctr[k] === shape[k]) {
      c -= cs[k] * shape[k];
      ctr[k] = 0;
      k++;
      ctr[k]++;
      c += cs[k];
    }
  }
}

/** Fresh typed array of the same kind and length. */
export function sameKind(data: TensorData, length: number): TensorData {
  const Ctor = data.constructor as new (n: number) => TensorData;
  return new Ctor(length);
}

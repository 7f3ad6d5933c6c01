/** Typed arrays sized by the input: allocated without a RangeError, grown, and trimmed. */
import { UnreadableError } from '../types';

/**
 * Typed-array allocation for sizes that depend on the input: a failed allocation (a hostile or
 * absurd file) becomes an UnreadableError instead of a RangeError.
 */
export function allocInt32(len: number): Int32Array<ArrayBuffer> {
  try {
    return new Int32Array(len);
  } catch {
    throw tooLarge(len, 4);
  }
}

export function allocUint32(len: number): Uint32Array<ArrayBuffer> {
  try {
    return new Uint32Array(len);
  } catch {
    throw tooLarge(len, 4);
  }
}

export function allocFloat64(len: number): Float64Array<ArrayBuffer> {
  try {
    return new Float64Array(len);
  } catch {
    throw tooLarge(len, 8);
  }
}

function tooLarge(len: number, bytesPer: number): UnreadableError {
  return new UnreadableError(`the file needs ${len} values (${len * bytesPer} bytes) in memory, more than can be allocated`);
}

export function growInt32(a: Int32Array, min: number): Int32Array<ArrayBuffer> {
  const next = allocInt32(Math.max(min, Math.ceil(a.length * 1.5) + 16));
  next.set(a);
  return next;
}

export function growUint32(a: Uint32Array, min: number): Uint32Array<ArrayBuffer> {
  const next = allocUint32(Math.max(min, Math.ceil(a.length * 1.5) + 16));
  next.set(a);
  return next;
}

export function growFloat64(a: Float64Array, min: number): Float64Array<ArrayBuffer> {
  const next = allocFloat64(Math.max(min, Math.ceil(a.length * 1.5) + 16));
  next.set(a);
  return next;
}

/** The first `len` elements; copied when the spare capacity is worth giving back. */
export function fit<T extends Int32Array | Uint32Array | Float64Array>(a: T, len: number): T {
  if (len === a.length) return a;
  return (a.length - len > (len >>> 3) ? a.slice(0, len) : a.subarray(0, len)) as T;
}

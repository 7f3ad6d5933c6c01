/** Numbers parsed straight from the bytes of a token, without making a string first. */
import { QUOTE } from './bytes';

export const INT32_MAX = 2147483647;

/**
 * Parses a strict decimal integer (`[+-]digits`) in [s, e) that fits in int32. Returns NaN for
 * anything else (`1.5`, `1e3`, `abc`, empty, too large). One pair of surrounding double quotes is
 * accepted, as CSV writers may quote every field.
 */
export function parseIntBytes(b: Uint8Array, s: number, e: number): number {
  if (e - s >= 2 && b[s] === QUOTE && b[e - 1] === QUOTE) {
    s++;
    e--;
  }
  let i = s;
  let neg = false;
  if (i < e) {
    const c = b[i]!;
    if (c === 45) {
      neg = true;
      i++;
    } else if (c === 43) i++;
  }
  if (i === e) return NaN;
  while (i < e - 1 && b[i] === 48) i++;
  if (e - i > 10) return NaN;
  let v = 0;
  for (; i < e; i++) {
    const d = b[i]! - 48;
    if (d < 0 || d > 9) return NaN;
    v = v * 10 + d;
  }
  if (neg) return v > INT32_MAX + 1 ? NaN : -v;
  return v > INT32_MAX ? NaN : v;
}

/** Why parseIntBytes refused a token, for messages. */
export function intRefusal(b: Uint8Array, s: number, e: number): string {
  if (s === e) return 'is empty';
  const f = parseNumberBytes(b, s, e);
  if (!numberState.ok) return 'is not a number';
  if (f !== f) return 'is NaN, not a whole number';
  if (f === Infinity || f === -Infinity) return 'is infinite, not a whole number';
  if (!Number.isInteger(f)) return 'is not a whole number';
  if (Math.abs(f) > Number.MAX_SAFE_INTEGER) return 'is beyond 2^53, too large to be held exactly';
  if (f > INT32_MAX || f < -INT32_MAX - 1) return 'is out of the int32 range';
  return 'is a whole number written as a float';
}

const POW10 = [1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15,
  1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22];
/** Largest mantissa m with m * 10 + 9 ≤ 2^53. */
const MANTISSA_CAP = 900719925474099;

/** Set by parseNumberBytes: whether the last token was a number (NaN/Inf spellings included). */
export const numberState = { ok: false };

/**
 * Parses a decimal floating-point number in [s, e): `[+-](digits[.digits]|.digits)[(e|E)[+-]digits]`,
 * or `nan`, `inf`, `infinity` (any case, optional sign) as NumPy and Python write them. The exact
 * fast path (mantissa ≤ 2^53 and |exponent| ≤ 22, one correctly rounded operation) covers almost
 * every token; others go through Number() on the already validated token. Sets `numberState.ok`.
 */
export function parseNumberBytes(b: Uint8Array, s: number, e: number): number {
  if (e - s >= 2 && b[s] === QUOTE && b[e - 1] === QUOTE) {
    s++;
    e--;
  }
  numberState.ok = false;
  let i = s;
  let neg = false;
  if (i < e) {
    const c = b[i]!;
    if (c === 45) {
      neg = true;
      i++;
    } else if (c === 43) i++;
  }
  if (i === e) return NaN;
  const body = i;
  let mant = 0;
  let exp10 = 0;
  let digits = 0;
  let full = false;
  let inexact = false;
  let c = b[i]!;
  while (c >= 48 && c <= 57) {
    const d = c - 48;
    if (!full && mant < MANTISSA_CAP) mant = mant * 10 + d;
    else {
      full = true;
      exp10++;
      if (d !== 0) inexact = true;
    }
    digits++;
    if (++i === e) break;
    c = b[i]!;
  }
  if (i < e && c === 46) {
    i++;
    while (i < e) {
      c = b[i]!;
      if (c < 48 || c > 57) break;
      const d = c - 48;
      if (!full && mant < MANTISSA_CAP) {
        mant = mant * 10 + d;
        exp10--;
      } else {
        full = true;
        if (d !== 0) inexact = true;
      }
      digits++;
      i++;
    }
  }
  if (digits === 0) return parseSpecial(b, s, e);
  if (i < e && (b[i] === 101 || b[i] === 69)) {
    i++;
    let eneg = false;
    if (i < e && (b[i] === 45 || b[i] === 43)) {
      eneg = b[i] === 45;
      i++;
    }
    if (i === e) return NaN;
    let x = 0;
    while (i < e) {
      const d = b[i]! - 48;
      if (d < 0 || d > 9) return NaN;
      if (x < 100000) x = x * 10 + d;
      i++;
    }
    exp10 += eneg ? -x : x;
  }
  if (i !== e) return NaN;
  numberState.ok = true;
  let v: number;
  if (!inexact && exp10 >= -22 && exp10 <= 22) v = exp10 >= 0 ? mant * POW10[exp10]! : mant / POW10[-exp10]!;
  else if (mant === 0 && !inexact) v = 0;
  else v = Number(latin1(b, body, e));
  return neg ? -v : v;
}

/**
 * parseNumberBytes for the common `[-]digits[.digits]` with at most 15 digits (exact: one
 * division by an exact power of ten); anything else goes to the full parser. Small enough to be
 * inlined into the readers' loops.
 */
export function parseDecimalBytes(b: Uint8Array, s: number, e: number): number {
  let i = s;
  const neg = b[i] === 45;
  if (neg) i++;
  let m = 0;
  let digits = 0;
  let dot = -1;
  for (; i < e; i++) {
    const c = b[i]!;
    const d = c - 48;
    if (d >= 0 && d <= 9) {
      m = m * 10 + d;
      digits++;
    } else if (c === 46 && dot < 0) dot = i;
    else return parseNumberBytes(b, s, e);
  }
  if (digits === 0 || digits > 15) return parseNumberBytes(b, s, e);
  numberState.ok = true;
  const v = dot < 0 ? m : m / POW10[e - dot - 1]!;
  return neg ? -v : v;
}

function parseSpecial(b: Uint8Array, s: number, e: number): number {
  let i = s;
  let neg = false;
  if (b[i] === 45 || b[i] === 43) {
    neg = b[i] === 45;
    i++;
  }
  const len = e - i;
  if (len !== 3 && len !== 8) return NaN;
  let word = '';
  for (let k = i; k < e; k++) word += String.fromCharCode(b[k]! | 0x20);
  if (word === 'nan') {
    numberState.ok = true;
    return NaN;
  }
  if (word === 'inf' || word === 'infinity') {
    numberState.ok = true;
    return neg ? -Infinity : Infinity;
  }
  return NaN;
}

function latin1(b: Uint8Array, s: number, e: number): string {
  let t = '';
  for (let i = s; i < e; i++) t += String.fromCharCode(b[i]!);
  return t;
}

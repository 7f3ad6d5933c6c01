/**
 * The one .npy writer: byte for byte what NumPy 1.24's `numpy.save` writes for a C-ordered array
 * (format 1.0, docs/references.md §1.1; `numpy.lib.format._write_array_header` / `_wrap_header`):
 *
 *   \x93NUMPY, version 1.0, the header length (uint16 LE), then the header: the dict literal
 *   "{'descr': <descr>, 'fortran_order': False, 'shape': <Python tuple>, }", spare spaces so the
 *   first axis can grow to 21 digits in place (GROWTH_AXIS_MAX_DIGITS; none for a 0-d array), then
 *   64 − ((10 + length + 1) mod 64) more spaces (a full 64 when it is already aligned, as NumPy
 *   does) and a final '\n'. The elements follow in C order.
 *
 * Checked against files numpy.save wrote (tests/fixtures/write, tests/fixtures/spectrum).
 * Pure: returns the bytes, writes nothing.
 */

const ARRAY_ALIGN = 64;
const GROWTH_AXIS_MAX_DIGITS = 21;
const PREAMBLE = 10; // magic (6) + version (2) + header length (2)

/** Python's repr of a tuple of ints: (), (3,), (2, 5). */
function shapeRepr(shape: readonly number[]): string {
  return shape.length === 1 ? `(${shape[0]},)` : `(${shape.join(', ')})`;
}

/**
 * The .npy 1.0 header (magic included) of a C-ordered array. `descr` is NumPy's type string
 * ('<f8', '<f4', '<i8', '|b1', …).
 */
export function npyHeader(descr: string, shape: readonly number[]): Uint8Array {
  for (const d of shape) {
    if (!Number.isSafeInteger(d) || d < 0) throw new Error(`.npy shape entries must be non-negative integers, got ${d}`);
  }
  let dict = `{'descr': '${descr}', 'fortran_order': False, 'shape': ${shapeRepr(shape)}, }`;
  if (shape.length > 0) dict += ' '.repeat(Math.max(0, GROWTH_AXIS_MAX_DIGITS - String(shape[0]).length));
  const hlen = dict.length + 1; // + '\n'
  const pad = ARRAY_ALIGN - ((PREAMBLE + hlen) % ARRAY_ALIGN);
  const total = hlen + pad;
  if (total > 0xffff) throw new Error('.npy 1.0 header too long (too many dimensions)');
  const out = new Uint8Array(PREAMBLE + total);
  out.set([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0, total & 0xff, total >>> 8]);
  for (let i = 0; i < dict.length; i++) out[PREAMBLE + i] = dict.charCodeAt(i);
  out.fill(0x20, PREAMBLE + dict.length, out.length - 1);
  out[out.length - 1] = 0x0a;
  return out;
}

/** A complete .npy file: the header, then `data`, the elements' bytes already in `descr`'s byte order. */
export function encodeNpy(descr: string, shape: readonly number[], data: Uint8Array): Uint8Array {
  const header = npyHeader(descr, shape);
  const out = new Uint8Array(header.length + data.length);
  out.set(header, 0);
  out.set(data, header.length);
  return out;
}

/** Little-endian int64 bytes of whole numbers. */
export function int64Bytes(values: ArrayLike<number>): Uint8Array {
  const out = new Uint8Array(values.length * 8);
  const dv = new DataView(out.buffer);
  for (let i = 0; i < values.length; i++) dv.setBigInt64(i * 8, BigInt(values[i]!), true);
  return out;
}

/** An int64 C-order array ('<i8'), e.g. a corrected edge index. */
export function encodeNpyInt64(shape: readonly number[], values: ArrayLike<number>): Uint8Array {
  return encodeNpy('<i8', shape, int64Bytes(values));
}

/** The rows x cols float32 matrix `data` (row-major, length rows·cols) as '<f4', e.g. positional encodings. */
export function encodeNpyFloat32(rows: number, cols: number, data: Float32Array): Uint8Array {
  const header = npyHeader('<f4', [rows, cols]);
  const count = rows * cols;
  if (data.length !== count) throw new Error(`data has ${data.length} values, shape (${rows}, ${cols}) needs ${count}`);
  const out = new Uint8Array(header.length + 4 * count);
  out.set(header, 0);
  const view = new DataView(out.buffer, out.byteOffset + header.length, 4 * count);
  for (let i = 0; i < count; i++) view.setFloat32(4 * i, data[i]!, true);
  return out;
}

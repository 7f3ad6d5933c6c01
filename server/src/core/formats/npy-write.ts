/**
 * .npy writer for 2-D float32 matrices (positional encodings), byte-for-byte what NumPy 1.24's
 * `numpy.save` writes for a C-ordered '<f4' array:
 *
 *   \x93NUMPY, version 1.0, header length (uint16 LE), then the header: the dict literal
 *   "{'descr': '<f4', 'fortran_order': False, 'shape': (R, C), }", spare spaces so the first axis
 *   can grow to 21 digits in place (numpy.lib.format.GROWTH_AXIS_MAX_DIGITS), more spaces so that
 *   magic + length + header is a multiple of 64 bytes, and a final '\n'. The data follows as
 *   little-endian float32 in C order (row-major).
 *
 * Pure: returns the bytes, writes nothing.
 */

const ARRAY_ALIGN = 64;
const GROWTH_AXIS_MAX_DIGITS = 21;
const PREAMBLE = 10; // magic (6) + version (2) + header length (2)

/** The .npy 1.0 header (magic included) for a C-ordered float32 array of shape (rows, cols). */
export function npyFloat32Header(rows: number, cols: number): Uint8Array {
  for (const d of [rows, cols]) {
    if (!Number.isSafeInteger(d) || d < 0) throw new Error(`.npy shape entries must be non-negative integers, got ${d}`);
  }
  let dict = `{'descr': '<f4', 'fortran_order': False, 'shape': (${rows}, ${cols}), }`;
  dict += ' '.repeat(Math.max(0, GROWTH_AXIS_MAX_DIGITS - String(rows).length));
  const hlen = dict.length + 1; // + '\n'
  const pad = ARRAY_ALIGN - ((PREAMBLE + hlen) % ARRAY_ALIGN);
  const total = hlen + pad;
  if (total > 0xffff) throw new Error('.npy 1.0 header too long');
  const out = new Uint8Array(PREAMBLE + total);
  out.set([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0, total & 0xff, total >>> 8]);
  for (let i = 0; i < dict.length; i++) out[PREAMBLE + i] = dict.charCodeAt(i);
  out.fill(0x20, PREAMBLE + dict.length, out.length - 1);
  out[out.length - 1] = 0x0a;
  return out;
}

/**
 * A complete .npy file holding the rows x cols float32 matrix `data` (row-major, length rows·cols).
 */
export function encodeNpyFloat32(rows: number, cols: number, data: Float32Array): Uint8Array {
  const header = npyFloat32Header(rows, cols);
  const count = rows * cols;
  if (data.length !== count) throw new Error(`data has ${data.length} values, shape (${rows}, ${cols}) needs ${count}`);
  const out = new Uint8Array(header.length + 4 * count);
  out.set(header, 0);
  const view = new DataView(out.buffer, out.byteOffset + header.length, 4 * count);
  for (let i = 0; i < count; i++) view.setFloat32(4 * i, data[i]!, true);
  return out;
}

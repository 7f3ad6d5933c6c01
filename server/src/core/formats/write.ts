/**
 * Encoders for writing corrected copies: an int64 .npy, a ZIP archive (for .npz, members passed
 * through as they were or stored anew) and a safetensors file with one tensor replaced.
 * Pure: bytes in, bytes out.
 */
import { crc32 } from './crc32';

const MAGIC = [0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59];

/** Little-endian int64 bytes of whole numbers. */
export function int64Bytes(values: ArrayLike<number>): Uint8Array {
  const out = new Uint8Array(values.length * 8);
  const dv = new DataView(out.buffer);
  for (let i = 0; i < values.length; i++) dv.setBigInt64(i * 8, BigInt(values[i]!), true);
  return out;
}

/** NumPy format 1.0 .npy of an int64 C-order array (header padded to a multiple of 64 bytes). */
export function encodeNpyInt64(shape: number[], values: ArrayLike<number>): Uint8Array {
  return encodeNpy('<i8', shape, int64Bytes(values));
}

export interface ZipMember {
  name: string;
  /** 0 stored, 8 deflated: `data` is already in that form. */
  method: number;
  data: Uint8Array;
  crc32: number;
  uncompressedSize: number;
}

/** A ZIP archive of the members (no ZIP64: members and archive below 4 GiB). */
export function encodeZip(members: ZipMember[]): Uint8Array {
  const enc = new TextEncoder();
  const names = members.map((m) => enc.encode(m.name));
  let size = 22;
  members.forEach((m, i) => { size += 30 + names[i]!.length + m.data.length + 46 + names[i]!.length; });
  if (size >= 0xffffffff) throw new Error('archive too large for a plain ZIP');
  const out = new Uint8Array(size);
  const dv = new DataView(out.buffer);
  let p = 0;
  const offsets: number[] = [];
  members.forEach((m, i) => {
    offsets.push(p);
    dv.setUint32(p, 0x04034b50, true); dv.setUint16(p + 4, 20, true); dv.setUint16(p + 6, 0, true);
    dv.setUint16(p + 8, m.method, true); dv.setUint32(p + 10, 0x00210000, true); // 1980-01-01 00:00
    dv.setUint32(p + 14, m.crc32, true); dv.setUint32(p + 18, m.data.length, true); dv.setUint32(p + 22, m.uncompressedSize, true);
    dv.setUint16(p + 26, names[i]!.length, true); dv.setUint16(p + 28, 0, true);
    out.set(names[i]!, p + 30);
    out.set(m.data, p + 30 + names[i]!.length);
    p += 30 + names[i]!.length + m.data.length;
  });
  const cd = p;
  members.forEach((m, i) => {
    dv.setUint32(p, 0x02014b50, true); dv.setUint16(p + 4, 20, true); dv.setUint16(p + 6, 20, true); dv.setUint16(p + 8, 0, true);
    dv.setUint16(p + 10, m.method, true); dv.setUint32(p + 12, 0x00210000, true);
    dv.setUint32(p + 16, m.crc32, true); dv.setUint32(p + 20, m.data.length, true); dv.setUint32(p + 24, m.uncompressedSize, true);
    dv.setUint16(p + 28, names[i]!.length, true);
    dv.setUint32(p + 42, offsets[i]!, true);
    out.set(names[i]!, p + 46);
    p += 46 + names[i]!.length;
  });
  dv.setUint32(p, 0x06054b50, true);
  dv.setUint16(p + 8, members.length, true); dv.setUint16(p + 10, members.length, true);
  dv.setUint32(p + 12, p - cd, true); dv.setUint32(p + 16, cd, true);
  return out;
}

/**
 * A safetensors file with tensor `name` replaced by an int64 tensor of the given shape; the other
 * tensors' bytes and the metadata are kept as they were.
 */
export function replaceSafetensor(bytes: Uint8Array, name: string, shape: number[], values: ArrayLike<number>): Uint8Array {
  const n = Number(new DataView(bytes.buffer, bytes.byteOffset, 8).getBigUint64(0, true));
  const header = JSON.parse(new TextDecoder().decode(bytes.subarray(8, 8 + n))) as Record<string, { dtype: string; shape: number[]; data_offsets: [number, number] } | Record<string, string>>;
  const base = 8 + n;
  const parts: Uint8Array[] = [];
  const out: Record<string, unknown> = {};
  if (header.__metadata__) out.__metadata__ = header.__metadata__;
  let offset = 0;
  for (const [key, v] of Object.entries(header)) {
    if (key === '__metadata__') continue;
    const entry = v as { dtype: string; shape: number[]; data_offsets: [number, number] };
    let data: Uint8Array;
    let dtype = entry.dtype, shp = entry.shape;
    if (key === name) {
      data = int64Bytes(values);
      dtype = 'I64'; shp = shape;
    } else {
      data = bytes.subarray(base + entry.data_offsets[0], base + entry.data_offsets[1]);
    }
    out[key] = { dtype, shape: shp, data_offsets: [offset, offset + data.length] };
    parts.push(data);
    offset += data.length;
  }
  let text = JSON.stringify(out);
  text = text.padEnd(Math.ceil(text.length / 8) * 8, ' ');
  const head = new TextEncoder().encode(text);
  const result = new Uint8Array(8 + head.length + offset);
  new DataView(result.buffer).setBigUint64(0, BigInt(head.length), true);
  result.set(head, 8);
  let p = 8 + head.length;
  for (const d of parts) { result.set(d, p); p += d.length; }
  return result;
}

/**
 * NumPy format 1.0 .npy of a C-order array. `descr` is the NumPy type string (e.g. '<f8', '<f4',
 * '|b1', '<i8') and `data` holds the elements' bytes already in that byte order.
 */
export function encodeNpy(descr: string, shape: number[], data: Uint8Array): Uint8Array {
  const shp = shape.length === 1 ? `(${shape[0]},)` : `(${shape.join(', ')})`;
  let header = `{'descr': '${descr}', 'fortran_order': False, 'shape': ${shp}, }`;
  const total = Math.ceil((10 + header.length + 1) / 64) * 64;
  if (total - 10 > 0xffff) throw new Error('shape too long for a version 1.0 .npy header');
  header = header.padEnd(total - 11, ' ') + '\n';
  const out = new Uint8Array(total + data.length);
  out.set(MAGIC);
  out[6] = 1; out[7] = 0;
  out[8] = header.length & 0xff; out[9] = header.length >> 8;
  for (let i = 0; i < header.length; i++) out[10 + i] = header.charCodeAt(i);
  out.set(data, total);
  return out;
}

/** An .npz laid out like numpy.savez writes it: one stored (uncompressed) `<name>.npy` member per array. */
export function encodeNpz(arrays: Array<{ name: string; npy: Uint8Array }>): Uint8Array {
  return encodeZip(arrays.map(({ name, npy }) => ({
    name: `${name}.npy`, method: 0, data: npy, crc32: crc32(npy), uncompressedSize: npy.length,
  })));
}

/**
 * Encoders for written files: ZIP archives with fflate (an .npz laid out as numpy.savez writes it,
 * and corrected copies of an .npz with members passed through as they were), and a safetensors
 * file with one tensor replaced. The .npy encoder is npy-write.ts. Pure: bytes in, bytes out.
 *
 * ZIP layout per PKWARE APPNOTE.TXT (docs/references.md §1.2).
 */
import { Zip, zipSync, type ZipInputFile } from 'fflate';
import { int64Bytes } from './npy-write';

/**
 * Every member's time stamp: 1980-01-01 00:00, the earliest MS-DOS date a ZIP header holds (local
 * time, as fflate writes it), so the bytes of an archive do not depend on the clock.
 */
const ZIP_TIME = new Date(1980, 0, 1);

/** Plain ZIP (no ZIP64) offsets and sizes are 32-bit. */
const ZIP_LIMIT = 0xffffffff;

function checkSize(total: number): void {
  if (total >= ZIP_LIMIT) throw new Error('archive too large for a plain ZIP');
}

/** An .npz laid out like numpy.savez writes it: one stored (uncompressed) `<name>.npy` member per array. */
export function encodeNpz(arrays: Array<{ name: string; npy: Uint8Array }>): Uint8Array {
  let total = 22;
  const files: Record<string, [Uint8Array, { level: 0 }]> = {};
  for (const { name, npy } of arrays) {
    const member = `${name}.npy`;
    if (Object.prototype.hasOwnProperty.call(files, member)) throw new Error(`two arrays named ${name}`);
    files[member] = [npy, { level: 0 }];
    total += 76 + 2 * member.length + npy.length;
  }
  checkSize(total);
  return zipSync(files, { mtime: ZIP_TIME });
}

export interface ZipMember {
  name: string;
  /** 0 stored, 8 deflated: `data` is already in that form. */
  method: number;
  data: Uint8Array;
  crc32: number;
  uncompressedSize: number;
}

/**
 * A ZIP archive of members whose bytes are already in their stored or deflated form (a corrected
 * copy keeps the other members of an .npz as they were, without inflating and deflating them
 * again). fflate's streaming writer puts each member's CRC and sizes in a data descriptor after it
 * (APPNOTE 4.3.9) and in the central directory.
 */
export function encodeZip(members: ZipMember[]): Uint8Array {
  let total = 22;
  for (const m of members) total += 30 + 16 + 46 + 2 * new TextEncoder().encode(m.name).length + m.data.length;
  checkSize(total);
  const chunks: Uint8Array[] = [];
  let failure = null as Error | null;
  const zip = new Zip((err, chunk) => {
    if (err) failure = err;
    else chunks.push(chunk);
  });
  for (const m of members) {
    const file: ZipInputFile = { filename: m.name, size: m.uncompressedSize, crc: m.crc32, compression: m.method, mtime: ZIP_TIME };
    zip.add(file);
    file.ondata!(null, m.data as Uint8Array<ArrayBuffer>, true);
  }
  zip.end();
  if (failure) throw failure;
  let length = 0;
  for (const c of chunks) length += c.length;
  const out = new Uint8Array(length);
  let p = 0;
  for (const c of chunks) { out.set(c, p); p += c.length; }
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

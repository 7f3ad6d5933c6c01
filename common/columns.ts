/**
 * Columns of numbers packed for the wire (PackedColumn in protocol.ts): the little-endian bytes of
 * an Int32Array or Float64Array, base64-encoded. The viewer's table of graphs travels this way
 * from the worker to the webview: one string per column, unpacked in the page straight into a
 * typed array (no array of 100,000 numbers or objects on the way). Plain JavaScript (atob/btoa),
 * so the server, the extension and the webview share it.
 */
import type { PackedColumn } from './protocol';

const CHUNK = 0x8000;

/** Node's Buffer when there is one (the server side), for speed; the page uses btoa. */
const NodeBuffer = (globalThis as { Buffer?: { from(b: ArrayBufferLike, offset: number, length: number): { toString(enc: 'base64'): string } } }).Buffer;

function bytesToBase64(bytes: Uint8Array): string {
  if (NodeBuffer) return NodeBuffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString('base64');
  let s = '';
  for (let i = 0; i < bytes.length; i += CHUNK) s += String.fromCharCode.apply(null, Array.from(bytes.subarray(i, i + CHUNK)));
  return btoa(s);
}

/** Whether this machine stores numbers little-endian (typed arrays use the machine's order). */
const LITTLE = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

function swapped(bytes: Uint8Array, width: number): Uint8Array<ArrayBuffer> {
  const out = new Uint8Array(bytes.length);
  for (let i = 0; i < bytes.length; i += width) for (let j = 0; j < width; j++) out[i + j] = bytes[i + width - 1 - j]!;
  return out;
}

export function packColumn(a: Int32Array | Float64Array): PackedColumn {
  let bytes: Uint8Array = new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
  const width = a.BYTES_PER_ELEMENT;
  if (!LITTLE) bytes = swapped(bytes, width);
  return { dtype: a instanceof Int32Array ? 'int32' : 'float64', length: a.length, base64: bytesToBase64(bytes) };
}

/**
 * The typed array of a packed column. A column whose byte count does not match its length and
 * dtype is refused (a plain Error: the server made it, so that is a programming error).
 */
export function unpackColumn(c: PackedColumn): Int32Array | Float64Array {
  const bin = atob(c.base64);
  const width = c.dtype === 'int32' ? 4 : 8;
  if (bin.length !== c.length * width) throw new Error(`packed column: ${bin.length} bytes for ${c.length} ${c.dtype} values`);
  let bytes: Uint8Array<ArrayBuffer> = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) bytes[i] = bin.charCodeAt(i);
  if (!LITTLE) bytes = swapped(bytes, width);
  return c.dtype === 'int32' ? new Int32Array(bytes.buffer) : new Float64Array(bytes.buffer);
}

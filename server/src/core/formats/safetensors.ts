/**
 * safetensors reader. Layout (huggingface/safetensors README): 8-byte little-endian u64 N, N bytes
 * of UTF-8 JSON header, then the data buffer. Header entries are
 * `name: {dtype, shape, data_offsets: [begin, end]}` with offsets relative to byte 8+N; the optional
 * `__metadata__` maps strings to strings. Data is little-endian, C order.
 *
 * Validation follows the reference implementation (safetensors crate, `Metadata::validate` and
 * `read_metadata`): offsets sorted by begin must be contiguous from 0 with no overlap or gap,
 * `end - begin == numel * itemsize`, and the last end must be the end of the file.
 */
import { UnreadableError, type DType, type DenseTensor, type ReadLimits, type ReadResult } from './types';
import { decodeElements, u32le } from './elements';

const DTYPES: Record<string, { dtype: DType; size: number }> = {
  BOOL: { dtype: 'bool', size: 1 },
  U8: { dtype: 'uint8', size: 1 },
  I8: { dtype: 'int8', size: 1 },
  U16: { dtype: 'uint16', size: 2 },
  I16: { dtype: 'int16', size: 2 },
  U32: { dtype: 'uint32', size: 4 },
  I32: { dtype: 'int32', size: 4 },
  U64: { dtype: 'uint64', size: 8 },
  I64: { dtype: 'int64', size: 8 },
  F16: { dtype: 'float16', size: 2 },
  BF16: { dtype: 'bfloat16', size: 2 },
  F32: { dtype: 'float32', size: 4 },
  F64: { dtype: 'float64', size: 8 },
};

function fail(message: string, offset?: number): never {
  throw new UnreadableError(message, offset);
}

const isRecord = (v: unknown): v is Record<string, unknown> =>
  typeof v === 'object' && v !== null && !Array.isArray(v);

/**
 * Names of the top-level keys of a JSON object text, in file order, duplicates included.
 * `text` must already have passed JSON.parse as an object.
 */
export function topLevelKeys(text: string): string[] {
  const keys: string[] = [];
  let i = text.indexOf('{') + 1;
  let depth = 0;
  let expectKey = true;
  while (i < text.length) {
    const c = text.charCodeAt(i);
    if (c === 0x22 /* " */) {
      const start = i;
      i++;
      while (i < text.length) {
        const d = text.charCodeAt(i);
        if (d === 0x5c /* \ */) i += 2;
        else if (d === 0x22) break;
        else i++;
      }
      i++;
      if (depth === 0 && expectKey) {
        keys.push(JSON.parse(text.slice(start, i)) as string);
        expectKey = false;
      }
      continue;
    }
    if (c === 0x7b /* { */ || c === 0x5b /* [ */) depth++;
    else if (c === 0x7d /* } */ || c === 0x5d /* ] */) {
      if (depth === 0) break;
      depth--;
    } else if (c === 0x2c /* , */ && depth === 0) expectKey = true;
    i++;
  }
  return keys;
}

interface Entry {
  name: string;
  dtype: DType;
  shape: number[];
  count: number;
  begin: number;
  end: number;
}

export function readSafetensors(bytes: Uint8Array, _fileName: string, limits: ReadLimits): ReadResult {
  const len = bytes.length;
  if (len < 8) fail(`file is too short for safetensors (${len} bytes; the header size alone takes 8)`, 0);
  const lo = u32le(bytes, 0);
  const hi = u32le(bytes, 4);
  const n = hi * 4294967296 + lo;
  if (hi !== 0 || n > limits.maxHeaderBytes) {
    fail(`safetensors header size ${n} is over the limit of ${limits.maxHeaderBytes} bytes`, 0);
  }
  const dataStart = 8 + n;
  if (dataStart > len) {
    fail(`safetensors header size ${n} runs past the end of the file (${len} bytes)`, 0);
  }

  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes.subarray(8, dataStart));
  } catch {
    fail('safetensors header is not valid UTF-8', 8);
  }
  let header: unknown;
  try {
    header = JSON.parse(text);
  } catch (e) {
    fail(`safetensors header is not valid JSON (${e instanceof Error ? e.message : String(e)})`, 8);
  }
  if (!isRecord(header)) fail('safetensors header is not a JSON object', 8);

  // JSON.parse keeps only the last of duplicate keys, and puts integer-like keys first: read the
  // key order from the text itself.
  const names = topLevelKeys(text);
  const seen = new Set<string>();
  for (const k of names) {
    if (seen.has(k)) fail(`safetensors header names '${k}' twice`, 8);
    seen.add(k);
  }

  const meta = header['__metadata__'];
  if (meta !== undefined && meta !== null) {
    if (!isRecord(meta)) fail("safetensors '__metadata__' is not an object", 8);
    for (const [k, v] of Object.entries(meta)) {
      if (typeof v !== 'string') fail(`safetensors '__metadata__' value of '${k}' is not a string`, 8);
    }
  }

  const entries: Entry[] = [];
  for (const name of names) {
    if (name === '__metadata__') continue;
    const info = header[name];
    if (!isRecord(info)) fail(`safetensors entry '${name}' is not an object`, 8);
    const dtypeName = info['dtype'];
    if (typeof dtypeName !== 'string') fail(`safetensors entry '${name}' has no dtype string`, 8);
    const dt = DTYPES[dtypeName];
    if (!dt) {
      if (/^F[4-8]_/.test(dtypeName)) fail(`safetensors entry '${name}': dtype ${dtypeName} is not supported`, 8);
      fail(`safetensors entry '${name}': unknown dtype '${dtypeName}'`, 8);
    }
    const shapeV = info['shape'];
    if (!Array.isArray(shapeV)) fail(`safetensors entry '${name}' has no shape list`, 8);
    const shape: number[] = [];
    let count = 1;
    for (const d of shapeV as unknown[]) {
      if (typeof d !== 'number' || !Number.isSafeInteger(d) || d < 0) {
        fail(`safetensors entry '${name}': shape ${JSON.stringify(shapeV)} is not a list of sizes`, 8);
      }
      shape.push(d);
      count *= d;
    }
    if (!Number.isSafeInteger(count * dt.size)) fail(`safetensors entry '${name}': shape is too large`, 8);
    const offs = info['data_offsets'];
    if (!Array.isArray(offs) || offs.length !== 2 ||
        !offs.every((o) => typeof o === 'number' && Number.isSafeInteger(o) && o >= 0)) {
      fail(`safetensors entry '${name}': data_offsets is not a pair of byte offsets`, 8);
    }
    const [begin, end] = offs as [number, number];
    if (end < begin) fail(`safetensors entry '${name}': data_offsets [${begin}, ${end}] end before they begin`, 8);
    if (end - begin !== count * dt.size) {
      fail(
        `safetensors entry '${name}': shape [${shape.join(', ')}] of ${dtypeName} needs ` +
          `${count * dt.size} bytes but data_offsets [${begin}, ${end}] span ${end - begin}`,
        8,
      );
    }
    if (dataStart + end > len) {
      fail(
        `safetensors entry '${name}': data_offsets [${begin}, ${end}] run past the end of the file ` +
          `(data buffer is ${len - dataStart} bytes from byte ${dataStart})`,
        dataStart + begin,
      );
    }
    entries.push({ name, dtype: dt.dtype, shape, count, begin, end });
  }

  const byOffset = [...entries].sort((a, b) => a.begin - b.begin || a.end - b.end);
  let at = 0;
  let prev = '';
  for (const e of byOffset) {
    if (e.begin < at) {
      fail(`safetensors entries '${prev}' and '${e.name}' overlap at data byte ${e.begin}`, dataStart + e.begin);
    }
    if (e.begin > at) {
      fail(`safetensors data has a gap: bytes ${at}..${e.begin} belong to no tensor`, dataStart + at);
    }
    at = e.end;
    prev = e.name;
  }
  if (dataStart + at !== len) {
    fail(
      `safetensors tensors cover ${at} data bytes, but the file holds ${len - dataStart} after the header`,
      dataStart + at,
    );
  }

  const tensors: DenseTensor[] = entries.map((e) => ({
    kind: 'dense',
    name: e.name,
    dtype: e.dtype,
    shape: e.shape,
    data: decodeElements(bytes, dataStart + e.begin, e.count, e.dtype, true),
  }));
  return { format: 'safetensors', tensors, problems: [] };
}

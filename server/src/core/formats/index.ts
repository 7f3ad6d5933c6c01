/**
 * Reader registry: picks a reader by file name. New formats (e.g. PyTorch .pt) slot in by adding
 * one entry to READERS.
 */
import { DEFAULT_LIMITS, type Format, type ReadLimits, type ReadResult } from './types';
import { readNpy } from './npy';
import { readNpz } from './npz';
import { readSafetensors } from './safetensors';
import { readPt } from './pt';
import { readEdgeList } from './edgelist';
import { readMtx } from './mtx';
import { readJson } from './json';

export interface Reader {
  /** The format reported when the reader cannot tell more (npz may turn into sparse-npz). */
  format: Format;
  /** Lower-case name endings this reader takes, longest first where they overlap. */
  extensions: readonly string[];
  read(bytes: Uint8Array, fileName: string, limits: ReadLimits): ReadResult;
}

const EDGE_LIST_EXTENSIONS = ['.txt', '.edges', '.el', '.csv', '.tsv'];

export const READERS: readonly Reader[] = [
  { format: 'npy', extensions: ['.npy'], read: readNpy },
  { format: 'npz', extensions: ['.npz'], read: readNpz },
  { format: 'safetensors', extensions: ['.safetensors'], read: readSafetensors },
  { format: 'pt', extensions: ['.pt', '.pth'], read: readPt },
  {
    format: 'edgelist',
    extensions: [...EDGE_LIST_EXTENSIONS.map((e) => e + '.gz'), ...EDGE_LIST_EXTENSIONS],
    read: readEdgeList,
  },
  { format: 'mtx', extensions: ['.mtx', '.mtx.gz'], read: readMtx },
  { format: 'json', extensions: ['.json'], read: readJson },
];

/** The manifest is JSON too, but it is configuration, not a graph. */
export const MANIFEST_NAME = 'hopscope.json';

export function readerFor(fileName: string): Reader | undefined {
  const lower = fileName.toLowerCase();
  const base = lower.slice(Math.max(lower.lastIndexOf('/'), lower.lastIndexOf('\\')) + 1);
  if (base === MANIFEST_NAME) return undefined;
  for (const r of READERS) {
    if (r.extensions.some((e) => base.endsWith(e))) return r;
  }
  return undefined;
}

export function isSupportedFile(fileName: string): boolean {
  return readerFor(fileName) !== undefined;
}

/** Reads one file's bytes. Throws UnreadableError (only) when the bytes cannot be read. */
export function readFileBytes(
  bytes: Uint8Array,
  fileName: string,
  limits: ReadLimits = DEFAULT_LIMITS,
): ReadResult {
  const reader = readerFor(fileName);
  if (!reader) throw new Error(`no reader for ${fileName}`);
  return reader.read(bytes, fileName, limits);
}

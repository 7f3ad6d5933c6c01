/**
 * File-system side of checking: walks folders, reads files into memory, hands bytes to the pure
 * readers and the check set. Shared by the CLI and the language server.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import * as v8 from 'node:v8';
import * as vm from 'node:vm';
import { MANIFEST_NAME, readerFor } from '../core/formats';
import { DEFAULT_LIMITS, UnreadableError, type ReadLimits, type ReadResult } from '../core/formats/types';
import { checkSet, type CheckSetOptions, type CheckSetResult, type LoadedFile, type LoadedManifest } from '../core/checks/check-set';
import { ManifestError, parseManifest } from '../core/checks/manifest';
import { roleFromName } from '../core/checks/roles';
import { timed } from '../core/timing';
import { readNpyStreaming } from './npy-stream';
import { readArriving } from './file-stream';
import { readEdgeList } from '../core/formats/edgelist';
import type { FileCache } from './service';

export interface LoadOptions {
  /** Files larger than this are reported unreadable without being read. */
  maxFileBytes?: number;
  limits?: ReadLimits;
  /** Folder names never descended into. */
  skipDirs?: ReadonlySet<string>;
  /** Extra predicate to leave paths out (e.g. the editor's exclude globs). */
  exclude?: (absPath: string) => boolean;
  /** Files already read, keyed by absolute path, reused while mtime and size are unchanged. */
  cache?: FileCache;
}

export const DEFAULT_MAX_FILE_BYTES = 2 * 1024 ** 3;
const DEFAULT_SKIP = new Set(['node_modules', '.git', '.hg', '.svn', '__pycache__', '.venv', 'venv', '.cache', '.mypy_cache']);

export interface Collected {
  files: string[];
  manifests: string[];
  /** Inputs that do not exist. */
  missing: string[];
  /** Inputs that exist but are not a supported file type. */
  unsupported: string[];
}

/** Expands inputs (files or folders) into supported files and manifests, recursively. */
export function collect(inputs: string[], opts: LoadOptions = {}): Collected {
  const skip = opts.skipDirs ?? DEFAULT_SKIP;
  const out: Collected = { files: [], manifests: [], missing: [], unsupported: [] };
  const seen = new Set<string>();
  const add = (p: string, list: string[]) => { if (!seen.has(p)) { seen.add(p); list.push(p); } };
  const walk = (dir: string) => {
    let entries: fs.Dirent[];
    try {
      entries = fs.readdirSync(dir, { withFileTypes: true });
    } catch {
      return;
    }
    entries.sort((a, b) => (a.name < b.name ? -1 : 1));
    for (const e of entries) {
      const p = path.join(dir, e.name);
      if (opts.exclude?.(path.resolve(p))) continue;
      if (e.isDirectory()) {
        if (!skip.has(e.name) && !e.name.startsWith('.')) walk(p);
      } else if (e.isFile()) {
        if (e.name === MANIFEST_NAME) add(p, out.manifests);
        else if (readerFor(e.name)) add(p, out.files);
      }
    }
  };
  for (const input of inputs) {
    let st: fs.Stats;
    try {
      st = fs.statSync(input);
    } catch {
      out.missing.push(input);
      continue;
    }
    if (st.isDirectory()) walk(input);
    else if (path.basename(input) === MANIFEST_NAME) add(input, out.manifests);
    else if (readerFor(input)) add(input, out.files);
    else out.unsupported.push(input);
  }
  return out;
}

export function loadFile(p: string, opts: LoadOptions = {}): LoadedFile {
  const reader = readerFor(p);
  if (!reader) return { path: p, format: 'json', error: { message: 'not a supported graph file type' } };
  const max = opts.maxFileBytes ?? DEFAULT_MAX_FILE_BYTES;
  try {
    const st = fs.statSync(p);
    const size = st.size;
    const abs = path.resolve(p);
    const cached = opts.cache?.get(abs, st.mtimeMs, size);
    if (cached) return { ...cached, path: p };
    if (size > max) {
      return { path: p, format: reader.format, error: { message: `the file is ${(size / 1024 ** 2).toFixed(0)} MiB, above the ${(max / 1024 ** 2).toFixed(0)} MiB limit for checking` } };
    }
    const limits = opts.limits ?? DEFAULT_LIMITS;
    const result = timed('read', () => readLarge(p, reader.format, size, limits))
      ?? timed('read', () => reader.read(readWhole(p, size), p, limits));
    const loaded: LoadedFile = { path: p, format: result.format, result };
    opts.cache?.set(abs, st.mtimeMs, size, loaded);
    return loaded;
  } catch (e) {
    if (e instanceof UnreadableError) {
      return { path: p, format: reader.format, error: { message: e.message, ...(e.line !== undefined ? { line: e.line } : {}), ...(e.offset !== undefined ? { offset: e.offset } : {}) } };
    }
    const err = e as NodeJS.ErrnoException;
    if (err && typeof err.code === 'string') {
      return { path: p, format: reader.format, error: { message: `the file could not be opened (${err.code})` } };
    }
    // Anything else is a bug in a reader; never let it take down the caller, but say so plainly.
    return { path: p, format: reader.format, error: { message: `internal reader error: ${(e as Error)?.message ?? String(e)}` } };
  }
}

/**
 * The large-file paths: integer .npy edge indices streamed into int32, plain-text edge lists
 * parsed while the helper thread reads them. Null when neither applies (read the whole file).
 */
function readLarge(p: string, format: string, size: number, limits: ReadLimits): ReadResult | null {
  if (format === 'npy') return readNpyStreaming(p, size, limits);
  if (format === 'edgelist' && !p.toLowerCase().endsWith('.gz')) {
    const a = readArriving(p, size);
    if (a) return readEdgeList(a.bytes, p, limits, a.arriving);
  }
  return null;
}

/** Reads a file into one Uint8Array (not a pooled Buffer slice), in 64 MiB steps. */
function readWhole(p: string, size: number): Uint8Array {
  const fd = fs.openSync(p, 'r');
  try {
    const buf = new Uint8Array(size);
    let off = 0;
    while (off < size) {
      const n = fs.readSync(fd, buf, off, Math.min(64 * 1024 ** 2, size - off), off);
      if (n <= 0) break;
      off += n;
    }
    return off === size ? buf : buf.subarray(0, off);
  } finally {
    fs.closeSync(fd);
  }
}

export function loadManifest(p: string): LoadedManifest {
  try {
    const text = fs.readFileSync(p, 'utf8');
    return { path: p, manifest: parseManifest(text) };
  } catch (e) {
    if (e instanceof ManifestError) return { path: p, error: `${path.basename(p)}: ${e.message}` };
    return { path: p, error: `${path.basename(p)} could not be read: ${(e as Error).message}` };
  }
}

/** Manifests in `dir` and its parents (nearest last), stopping at a repository root. */
export function manifestsAbove(dir: string): string[] {
  const found: string[] = [];
  let d = path.resolve(dir);
  for (;;) {
    const m = path.join(d, MANIFEST_NAME);
    if (fs.existsSync(m)) found.unshift(m);
    if (fs.existsSync(path.join(d, '.git'))) break;
    const parent = path.dirname(d);
    if (parent === d) break;
    d = parent;
  }
  return found;
}

export interface CheckPathsResult extends CheckSetResult {
  missing: string[];
  unsupported: string[];
}

/**
 * Checks files and folders. Files that a manifest names, and role-named siblings of a file given
 * on its own, are read too so cross-file checks work; only requested files are reported.
 */
export function checkPaths(inputs: string[], options: CheckSetOptions = {}, load: LoadOptions = {}): CheckPathsResult {
  const c = collect(inputs, load);
  const requested = new Set(c.files.map((f) => path.resolve(f)));
  const manifestPaths = new Set(c.manifests.map((m) => path.resolve(m)));
  const filePaths = new Set(requested);
  for (const f of c.files) {
    const dir = path.dirname(path.resolve(f));
    for (const m of manifestsAbove(dir)) manifestPaths.add(m);
    // Siblings whose names give a role (x.npy beside edge_index.npy).
    for (const s of siblings(dir)) filePaths.add(s);
  }
  const manifests = [...manifestPaths].map(loadManifest);
  for (const m of manifests) {
    for (const g of m.manifest?.graphs ?? []) {
      for (const ref of g.parts) filePaths.add(path.resolve(path.dirname(m.path), ref.file));
    }
  }
  const loaded = [...filePaths].filter((p) => readerFor(p) && fs.existsSync(p)).map((p) => loadFile(p, load));
  // The raw file bytes are garbage now; a 10M-edge .npy is 160 MB of them. Return them before the
  // graph is built, so peak memory is the tensors plus the graph, not plus the file as well.
  if (loaded.reduce((s, f) => s + tensorBytes(f), 0) > 64 * 1024 ** 2) collectGarbage();
  const result = checkSet(loaded, manifests, options);
  const shown = result.files.filter((f) => requested.has(path.resolve(f.path)));
  return {
    ...result,
    files: shown.map((f) => ({ ...f, path: displayPath(f.path) })),
    manifestProblems: result.manifestProblems.map((m) => ({ ...m, path: displayPath(m.path) })),
    missing: c.missing,
    unsupported: c.unsupported,
  };
}

function tensorBytes(f: LoadedFile): number {
  let b = 0;
  for (const t of f.result?.tensors ?? []) b += t.kind === 'dense' ? t.data.byteLength : t.row.byteLength * 2;
  return b;
}

let gc: (() => void) | null | undefined;
/** Runs a full garbage collection when the runtime allows exposing it; otherwise does nothing. */
function collectGarbage(): void {
  if (gc === undefined) {
    try {
      v8.setFlagsFromString('--expose-gc');
      gc = vm.runInNewContext('gc') as () => void;
    } catch {
      gc = null;
    }
  }
  gc?.();
}

function siblings(dir: string): string[] {
  let names: string[];
  try {
    names = fs.readdirSync(dir);
  } catch {
    return [];
  }
  return names
    .filter((n) => readerFor(n) && roleFromName(n.replace(/\.[^.]*(\.gz)?$/, '')) !== undefined)
    .map((n) => path.join(dir, n));
}

function displayPath(p: string): string {
  const rel = path.relative(process.cwd(), p);
  return rel && !rel.startsWith('..') && !path.isAbsolute(rel) ? rel : p;
}

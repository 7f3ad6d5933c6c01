/**
 * File-system side of checking: walks folders, reads files into memory, hands bytes to the pure
 * readers and the check set. Shared by the CLI and the language server.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { MANIFEST_NAME, readerFor } from '../core/formats';
import { DEFAULT_LIMITS, UnreadableError, type Problem, type ProblemCode, type ReadLimits, type ReadResult } from '../core/formats/types';
import { withoutGraphTensors } from '../core/formats/json';
import { checkSet, type CheckSetOptions, type CheckSetResult, type LoadedFile, type LoadedManifest } from '../core/checks/check-set';
import { ManifestError, parseManifest } from '../core/checks/manifest';
import { roleFromName } from '../core/checks/roles';
import { isTypedFileName } from '../core/typed/recognise';
import { typedManifestFiles } from '../core/typed/manifest';
import { timed } from '../core/timing';
import { readNpyStreaming } from './npy-stream';
import { collectGarbage } from './collect-garbage';
import { SKIPPED_DIRS, walkedDir } from './skipped-dirs';
import { readArriving } from './file-stream';
import { assertEdgeListText, NotEdgeListError, notEdgeListReason, readEdgeList, type EdgeListReadResult } from '../core/formats/edgelist';
import { assertText, wideEncoding } from '../core/formats/text/encoding';
import { throwIfCancelled, type Cancel } from '../core/cancel';
import { isDatasetText, isSplitFileName, readColumnsText } from '../core/datasets/text-files';
import { datasetManifestFiles } from '../core/datasets/manifest';

/** What loadFile consults before reading a file again (the graph store's LRU). */
export interface FileCache {
  get(absPath: string, mtimeMs: number, size: number): LoadedFile | undefined;
  set(absPath: string, mtimeMs: number, size: number, file: LoadedFile): void;
}

export interface LoadOptions {
  /** Files larger than this are reported unreadable without being read. */
  maxFileBytes?: number;
  limits?: ReadLimits;
  /** Folder names never descended into. */
  skipDirs?: ReadonlySet<string>;
  /**
   * Extra predicate to leave paths out (the editor's exclude globs): excluded paths are not
   * walked, not taken as inputs and not read as siblings.
   */
  exclude?: (absPath: string) => boolean;
  /** Files already read, keyed by absolute path, reused while mtime and size are unchanged. */
  cache?: FileCache;
  /** Called with the absolute path each time a file is read from disk (not served by `cache`). */
  onRead?: (absPath: string) => void;
  /** Looked at between folders of a walk and between files of a check. */
  cancel?: Cancel;
  /**
   * A text file named on its own (not found in a folder) that is not an edge list is reported
   * `unreadable` ("not an edge list: …") instead of being skipped. For the command line; editors
   * pass every file of a folder by name and skip such files quietly.
   */
  refuseNamedText?: boolean;
  /**
   * A JSON file named on its own (not found in a folder) that holds no graph tensors gets a
   * `no-graph-tensors` info, so the user sees it was looked at. Off for editors, which pass every
   * file of a folder (package.json, tsconfig.json) by name.
   */
  explainNamedJson?: boolean;
  /**
   * Absolute paths a re-check is about (an editor's changed files): every input is still read, so
   * files group as in a check of them all, but only the graphs holding one of these are checked,
   * and only these and the other files of those graphs are reported.
   */
  focus?: readonly string[];
}

export const DEFAULT_MAX_FILE_BYTES = 2 * 1024 ** 3;

export interface Collected {
  files: string[];
  manifests: string[];
  /** Inputs that do not exist. */
  missing: string[];
  /** Inputs that exist but are not a supported file type. */
  unsupported: string[];
}

/**
 * Expands inputs (files or folders) into supported files and manifests, recursively. Symbolic
 * links are followed (a linked file is listed under the link's path); a folder reached twice —
 * a link back to a parent, or a second link to one folder — is walked once, by its real path.
 */
export function collect(inputs: string[], opts: LoadOptions = {}): Collected {
  const skip = opts.skipDirs ?? SKIPPED_DIRS;
  const out: Collected = { files: [], manifests: [], missing: [], unsupported: [] };
  const seen = new Set<string>();
  const walked = new Set<string>();
  const add = (p: string, list: string[]) => { if (!seen.has(p)) { seen.add(p); list.push(p); } };
  const walk = (dir: string) => {
    let entries: fs.Dirent[];
    try {
      const real = fs.realpathSync(dir);
      if (walked.has(real)) return;
      walked.add(real);
      entries = fs.readdirSync(dir, { withFileTypes: true });
    } catch {
      return;
    }
    throwIfCancelled(opts.cancel);
    entries.sort((a, b) => (a.name < b.name ? -1 : 1));
    for (const e of entries) {
      const p = path.join(dir, e.name);
      if (opts.exclude?.(path.resolve(p))) continue;
      let isDir = e.isDirectory(), isFile = e.isFile();
      if (e.isSymbolicLink()) {
        try {
          const target = fs.statSync(p);
          isDir = target.isDirectory();
          isFile = target.isFile();
        } catch {
          continue; // a dangling link
        }
      }
      if (isDir) {
        if (walkedDir(e.name, skip)) walk(p);
      } else if (isFile) {
        if (e.name === MANIFEST_NAME) add(p, out.manifests);
        else if (readerFor(e.name)) add(p, out.files);
      }
    }
  };
  for (const input of inputs) {
    if (opts.exclude?.(path.resolve(input))) continue;
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

/** A loaded file; `notEdgeList` is set when a text file was not read because it is not an edge list. */
export interface LoadedText extends LoadedFile {
  notEdgeList?: string;
  /** On a refusal kept in a FileCache: whether the file was read as an edge list (the refusal depends on it). */
  readAsEdgeList?: boolean;
}

/** Whether a cached outcome answers a read with this `asEdgeList`. */
function cacheFits(c: LoadedText, asEdgeList: boolean): boolean {
  // A text file read as an edge list only because a manifest said so is not one otherwise.
  if (c.result) return asEdgeList || !(c.result as EdgeListReadResult).notEdgeList;
  return c.readAsEdgeList === asEdgeList;
}

/**
 * Reads one file. `asEdgeList` (a manifest names the file) reads text as an edge list whatever its
 * lines look like; otherwise text that is not an edge list comes back with `notEdgeList` set.
 */
export function loadFile(p: string, opts: LoadOptions = {}, asEdgeList = false): LoadedText {
  const reader = readerFor(p);
  if (!reader) return { path: p, format: 'json', error: { message: 'not a supported graph file type' } };
  const max = opts.maxFileBytes ?? DEFAULT_MAX_FILE_BYTES;
  // Set once the file is about to be read: a refusal of these bytes is kept in the cache too, so
  // an unreadable 1 GiB file is not read again for every request while it is unchanged.
  let stamp: { abs: string; mtimeMs: number; size: number } | undefined;
  const remember = (f: LoadedText): LoadedText => {
    if (stamp) opts.cache?.set(stamp.abs, stamp.mtimeMs, stamp.size, { ...f, readAsEdgeList: asEdgeList } as LoadedText);
    return f;
  };
  try {
    const st = fs.statSync(p);
    // A named pipe would block the read until something writes to it; devices never end.
    if (!st.isFile()) return { path: p, format: reader.format, error: { message: notRegularFile(st) } };
    const size = st.size;
    const abs = path.resolve(p);
    const cached = opts.cache?.get(abs, st.mtimeMs, size) as LoadedText | undefined;
    if (cached && cacheFits(cached, asEdgeList)) {
      const { readAsEdgeList: _how, ...kept } = cached;
      return { ...kept, path: p };
    }
    if (size > max) {
      return { path: p, format: reader.format, error: { message: `the file is ${mib(size)} MiB, above the ${mib(max)} MiB limit for checking` } };
    }
    const limits = opts.limits ?? DEFAULT_LIMITS;
    stamp = { abs, mtimeMs: st.mtimeMs, size };
    opts.onRead?.(abs);
    // Text files of a dataset folder (a graph indicator, counts per graph): numeric tables, not edge lists.
    const table = !asEdgeList && datasetText(p) ? timed('read', () => readColumnsText(readWhole(p, size), p, limits)) : undefined;
    if (!table) probeText(p, reader.format, size, asEdgeList);
    const result = table ?? timed('read', () => readLarge(p, reader.format, size, limits, asEdgeList))
      ?? timed('read', () => reader.format === 'edgelist'
        ? readEdgeList(readWhole(p, size), p, limits, undefined, { asEdgeList })
        : reader.read(readWhole(p, size), p, limits));
    const loaded: LoadedFile = { path: p, format: result.format, result };
    opts.cache?.set(abs, st.mtimeMs, size, loaded);
    return loaded;
  } catch (e) {
    if (e instanceof NotEdgeListError) {
      return remember({ path: p, format: reader.format, error: { message: e.message }, notEdgeList: e.reason });
    }
    if (e instanceof UnreadableError) {
      return remember({ path: p, format: reader.format, error: { message: e.message, ...(e.line !== undefined ? { line: e.line } : {}), ...(e.offset !== undefined ? { offset: e.offset } : {}) } });
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
function readLarge(p: string, format: string, size: number, limits: ReadLimits, asEdgeList: boolean): ReadResult | null {
  if (format === 'npy') return readNpyStreaming(p, size, limits);
  if (format === 'edgelist' && !p.toLowerCase().endsWith('.gz')) {
    const a = readArriving(p, size);
    if (a) {
      try {
        return readEdgeList(a.bytes, p, limits, a.arriving, { asEdgeList });
      } catch (e) {
        a.stop(); // refused from its first megabytes: the helper reads no further
        throw e;
      }
    }
  }
  return null;
}

/** Bytes of a large text file looked at before the rest is read. */
export const PROBE_BYTES = 64 * 1024;

/**
 * What the first 64 KiB of a large text file already decide, before the rest is read: binary or
 * UTF-16 data, and (for a text file no manifest names) lines that are not an edge list. Throws
 * what the reader would throw; a 1000 MiB file of zeros is refused after 64 KiB, not 1000 MiB.
 */
function probeText(p: string, format: string, size: number, asEdgeList: boolean): void {
  if (size <= PROBE_BYTES || p.toLowerCase().endsWith('.gz')) return;
  if (format !== 'edgelist' && format !== 'mtx' && format !== 'json') return;
  const head = new Uint8Array(PROBE_BYTES);
  let got = 0;
  const fd = fs.openSync(p, 'r');
  try {
    while (got < PROBE_BYTES) {
      const n = fs.readSync(fd, head, got, PROBE_BYTES - got, got);
      if (n <= 0) break;
      got += n;
    }
  } finally {
    fs.closeSync(fd);
  }
  const b = head.subarray(0, got);
  // UTF-16 text that is not an edge list is skipped like other text, not refused as UTF-16.
  if (format === 'edgelist' && !asEdgeList && wideEncoding(b)) {
    const reason = notEdgeListReason(b, false);
    if (reason !== undefined) throw new NotEdgeListError(reason);
  }
  if (format === 'edgelist') assertEdgeListText(b, p, asEdgeList);
  else assertText(b);
  if (format === 'edgelist' && !asEdgeList) {
    const reason = notEdgeListReason(b, false);
    if (reason !== undefined) throw new NotEdgeListError(reason);
  }
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

/** Mebibytes with one decimal below 10 (1.4 MiB is not "1 MiB, above the 1 MiB limit"). */
function mib(bytes: number): string {
  const m = bytes / 1024 ** 2;
  return m < 10 ? (Math.floor(m * 10) / 10).toString() : Math.floor(m).toString();
}

/** Why a path that exists is not read: it is not a regular file. */
function notRegularFile(st: fs.Stats): string {
  const what = st.isFIFO() ? 'a named pipe (FIFO)' : st.isSocket() ? 'a socket'
    : st.isCharacterDevice() ? 'a character device' : st.isBlockDevice() ? 'a block device'
      : st.isDirectory() ? 'a folder' : 'not a regular file';
  return `it is ${what}, not a regular file; only regular files are read (copy the data into a file to check it)`;
}

export function loadManifest(p: string): LoadedManifest {
  try {
    const st = fs.statSync(p);
    if (!st.isFile()) return { path: p, error: `${path.basename(p)} could not be read: ${notRegularFile(st)}` };
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
    if (fs.existsSync(m)) found.unshift(m); // loadManifest refuses one that is not a regular file
    if (fs.existsSync(path.join(d, '.git'))) break;
    const parent = path.dirname(d);
    if (parent === d) break;
    d = parent;
  }
  return found;
}

export interface SkippedFile {
  path: string;
  /** Why it is not an edge list: the rule and what the first lines hold. */
  reason: string;
}

export interface CheckPathsResult extends CheckSetResult {
  missing: string[];
  unsupported: string[];
  /** Text files that are not edge lists, left out of the check (found in folders, or any for editors). */
  skipped: SkippedFile[];
  /**
   * Problems of files that were not asked for but were read beside an asked file and disagree
   * with it or with a declaration (a feature matrix whose rows differ from --num-nodes): the asked
   * file carries an info naming them; callers count these toward their exit status.
   */
  related: RelatedProblem[];
}

export interface RelatedProblem {
  /** The sibling that has the problem. */
  path: string;
  /** The asked file whose check depends on it. */
  for: string;
  problem: Problem;
}

/** Problems of a sibling that are about its agreement with the rest of the graph. */
const RELAYED_CODES: ReadonlySet<ProblemCode> = new Set<ProblemCode>([
  'feature-rows-mismatch', 'label-length-mismatch', 'mask-length-mismatch', 'edge-features-rows-mismatch',
]);

/**
 * Checks files and folders. Files that a manifest names, and role-named siblings of a file given
 * on its own, are read too so cross-file checks work; only requested files are reported.
 */
export function checkPaths(inputs: string[], options: CheckSetOptions = {}, load: LoadOptions = {}): CheckPathsResult {
  const c = collect(inputs, load);
  const requested = new Set(c.files.map((f) => path.resolve(f)));
  const named = new Set(inputs.filter((i) => !isFolder(i)).map((i) => path.resolve(i)));
  const manifestPaths = new Set(c.manifests.map((m) => path.resolve(m)));
  const filePaths = new Set(requested);
  for (const f of c.files) {
    const dir = path.dirname(path.resolve(f));
    for (const m of manifestsAbove(dir)) manifestPaths.add(m);
    // Siblings whose names give a role (x.npy beside edge_index.npy).
    for (const s of siblings(dir)) if (!load.exclude?.(path.resolve(s))) filePaths.add(s);
  }
  const manifests = [...manifestPaths].map(loadManifest);
  // Files a manifest names are read as it says: text as an edge list, whatever its lines hold.
  const declared = new Set<string>();
  for (const m of manifests) {
    for (const g of m.manifest?.graphs ?? []) {
      for (const ref of [...g.parts, ...(g.typed ? typedManifestFiles(g.typed) : []), ...(g.dataset ? datasetManifestFiles(g.dataset) : [])]) {
        const f = path.resolve(path.dirname(m.path), ref.file);
        filePaths.add(f);
        declared.add(f);
      }
    }
  }
  const givenPaths = new Set(inputs.map((i) => path.resolve(i)));
  const skipped: SkippedFile[] = [];
  const loaded: LoadedFile[] = [];
  for (const p of filePaths) {
    throwIfCancelled(load.cancel);
    if (!readerFor(p) || !fs.existsSync(p)) continue;
    const f = loadFile(p, load, declared.has(p));
    // Text that is not an edge list (a README, a metrics table): left out, and listed when it was
    // asked for, unless the command line named it (then it is one `unreadable` problem).
    if (f.notEdgeList !== undefined && !(load.refuseNamedText && givenPaths.has(p))) {
      if (requested.has(p)) skipped.push({ path: displayPath(p), reason: f.notEdgeList });
      continue;
    }
    loaded.push(f);
  }
  // The raw file bytes are garbage now; a 10M-edge .npy is 160 MB of them. Return them before the
  // graph is built, so peak memory is the tensors plus the graph, not plus the file as well.
  if (loaded.reduce((s, f) => s + tensorBytes(f), 0) > 64 * 1024 ** 2) collectGarbage();
  const focus = load.focus ? new Set(load.focus.map((f) => path.resolve(f))) : undefined;
  const result = checkSet(loaded, manifests, { ...options, maxFileBytes: load.maxFileBytes ?? DEFAULT_MAX_FILE_BYTES },
    focus ? (p) => focus.has(path.resolve(p)) : undefined);
  const shown = result.files.filter((f) => requested.has(path.resolve(f.path)));
  if (load.explainNamedJson) {
    for (const f of shown) {
      if (f.format === 'json' && named.has(path.resolve(f.path)) && f.tensors.length === 0 && f.problems.length === 0) {
        f.problems.push(withoutGraphTensors());
      }
    }
  }
  const related = relayRelated(result, requested, options);
  return {
    ...result,
    files: shown.map((f) => ({ ...f, path: displayPath(f.path) })),
    manifestProblems: result.manifestProblems.map((m) => ({ ...m, path: displayPath(m.path) })),
    missing: c.missing,
    unsupported: c.unsupported,
    skipped,
    related: related.map((r) => ({ ...r, path: displayPath(r.path), for: displayPath(r.for) })),
  };
}

function isFolder(p: string): boolean {
  try {
    return fs.statSync(p).isDirectory();
  } catch {
    return false;
  }
}

/**
 * For each graph that joins asked files with siblings that were not asked for: the siblings'
 * disagreements (RELAYED_CODES) become an info on the asked file — naming the sibling and the node
 * count the graph was checked with — and are returned so callers count them.
 */
function relayRelated(result: CheckSetResult, requested: ReadonlySet<string>, options: CheckSetOptions): RelatedProblem[] {
  const out: RelatedProblem[] = [];
  const reportOf = new Map(result.files.map((f) => [path.resolve(f.path), f]));
  for (const g of result.graphs) {
    const asked = g.files.filter((f) => requested.has(path.resolve(f)));
    const hidden = g.files.filter((f) => !requested.has(path.resolve(f)));
    if (!asked.length || !hidden.length) continue;
    const sf = g.check.structureFile;
    const target = sf && requested.has(path.resolve(sf)) ? sf : asked[0]!;
    const targetReport = reportOf.get(path.resolve(target));
    if (!targetReport) continue;
    for (const h of hidden) {
      for (const p of reportOf.get(path.resolve(h))?.problems ?? []) {
        if (!RELAYED_CODES.has(p.code)) continue;
        out.push({ path: h, for: target, problem: p });
        const figures = g.check.figures;
        const used = figures ? ` ${path.basename(target)} was checked with ${figures.nodes} nodes${nodeSource(g.check, figures.nodes)}` +
          (options.nodes !== undefined && options.nodes !== figures.nodes ? `, not the ${options.nodes} given on the command line.` : '.') : '';
        targetReport.problems.push({
          code: p.code, severity: 'info', count: p.count,
          message: `${path.basename(h)} (read beside ${path.basename(target)}, not asked for) has ${p.severity === 'warning' ? 'a' : 'an'} ${p.severity}: ${p.message}${used} ` +
            `The ${p.severity} in ${path.basename(h)} counts toward the exit status.`,
        });
      }
    }
  }
  return out;
}

/** Where the node count came from, when a part of the graph explains it (", the rows of x in x.npy"). */
function nodeSource(check: CheckSetResult['graphs'][number]['check'], n: number): string {
  const features = check.parts.find((p) => p.guess.role === 'features' && p.tensor.shape[0] === n);
  if (features) return `, the rows of ${features.tensor.name} in ${path.basename(features.file)}`;
  const perNode = check.parts.find((p) => (p.guess.role === 'labels' || (p.guess.role === 'mask' && !p.guess.indexList)) &&
    p.tensor.shape.length === 1 && p.tensor.shape[0] === n);
  if (perNode) return `, the length of ${perNode.tensor.name} in ${path.basename(perNode.file)}`;
  return '';
}

function tensorBytes(f: LoadedFile): number {
  let b = 0;
  for (const t of f.result?.tensors ?? []) b += t.kind === 'dense' ? t.data.byteLength : t.row.byteLength * 2;
  return b;
}

/** Whether a text file belongs to a dataset folder (core/datasets/text-files.ts). */
function datasetText(p: string): boolean {
  return isDatasetText(path.resolve(p).replace(/\\/g, '/'), (q) => isRegularFile(q));
}

function siblings(dir: string): string[] {
  let names: string[];
  try {
    names = fs.readdirSync(dir);
  } catch {
    return [];
  }
  return names
    .filter((n) => readerFor(n) && (roleFromName(n.replace(/\.[^.]*(\.gz)?$/, '')) !== undefined || isTypedFileName(n) || isSplitFileName(n) || datasetText(path.join(dir, n))))
    .map((n) => path.join(dir, n))
    .filter(isRegularFile); // as folder scans do: a pipe named x.npy is not read
}

function isRegularFile(p: string): boolean {
  try {
    return fs.statSync(p).isFile();
  } catch {
    return false;
  }
}

function displayPath(p: string): string {
  const rel = path.relative(process.cwd(), p);
  return rel && !rel.startsWith('..') && !path.isAbsolute(rel) ? rel : p;
}


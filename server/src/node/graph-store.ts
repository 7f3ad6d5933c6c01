/**
 * The graph store: the one place the worker thread keeps what it read and checked, and the
 * implementation of every worker request (worker-methods.ts). Checks, node hovers, tensor pages and
 * statistics, the panel's analyses, corrected copies and the workspace walk all read through it,
 * so a file is read once while it is unchanged, and `maxFileSizeMB` and the exclude settings apply
 * to every path whichever request names it.
 *
 * What is kept, per absolute path, in one least-recently-used map bounded in bytes:
 * - the read file (keyed by size + mtime): its tensors and the raw bytes its text locators keep
 *   for placing problems on lines;
 * - the file's last report;
 * - the graph structure (forward and reverse CSR) when the path is a graph's structure file.
 * The panel's analysed graphs are kept beside it (AnalysisService: at most two graphs).
 * `forget(path)` drops all of it for a deleted file.
 *
 * Plain Node, no LSP types: worker.ts hosts it; tests use it directly.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import type { CheckSetOptions, FileReport, LoadedFile } from '../core/checks/check-set';
import type { Tensor } from '../core/formats/types';
import { guessRole } from '../core/checks/roles';
import { columnStats } from '../core/checks/stats';
import type { Cancel } from '../core/cancel';
import { checkPaths, collect, type FileCache, type LoadOptions } from './load';
import { addGraphLines, datasetTable, datasetsFor, findDatasetFor, forgetDataset, loadAnalysisGraph } from './dataset-views';
import { ceilingAnswer } from './ceiling-input';
import { AnalysisService } from './analysis-service';
import { describeFixedCopy, writeFixedCopy } from './fixed-copy';
import { globMatcher } from './glob';
import { nodeInfoOf, shareStructure, type SharedStructure } from './shared-structure';
import { isTypedCheck } from '../core/typed/check';
import { collectGarbage } from './collect-garbage';
import type { NodeInfo, TensorPage, TensorStats } from '../../../common/protocol';
import type {
  CheckOutcome, ConfigureParams, MethodHandlers, ParamsOf, ResultOf, WalkResult,
} from './worker-methods';

export type { CheckOutcome } from './worker-methods';

/** Kept over shared memory: the same arrays go to the language-server thread with the check's outcome. */
type StructureInfo = SharedStructure;

/** Everything kept for one path. */
interface Entry {
  read?: { mtimeMs: number; size: number; file: LoadedFile; bytes: number };
  report?: { report: FileReport; bytes: number };
  /** null: the path was checked and is no graph's structure file. */
  structure?: { info: StructureInfo | null; bytes: number };
  lastUse: number;
}

export interface GraphStoreOptions {
  /** Bytes of read files, reports and structures kept (least recently used dropped first). Default 768 MiB. */
  limitBytes?: number;
  /** Panel graphs kept with their analyses. Default 2. */
  analysisGraphs?: number;
  /** Called with the absolute path each time a file is read from disk (tests count reads). */
  onRead?: (absPath: string) => void;
}

export interface StoreUsage {
  /** Bytes counted against `limitBytes`. */
  bytes: number;
  files: number;
  reports: number;
  structures: number;
  /** Panel graphs kept, and the bytes of their edge and CSR arrays (bounded by count, not in `bytes`). */
  analysisGraphs: number;
  analysisBytes: number;
}

const NOT_CANCELLED: Cancel = { isCancellationRequested: false };

export class GraphStore implements MethodHandlers {
  private readonly entries = new Map<string, Entry>();
  private total = 0;
  private clock = 0;
  private options: CheckSetOptions = {};
  private maxFileBytes: number | undefined;
  private excluded: (absPath: string) => boolean = () => false;
  private readonly limitBytes: number;
  private readonly onRead: ((absPath: string) => void) | undefined;
  /** The receptive-field panel's analyses, reading through this store. */
  readonly analysis: AnalysisService;

  constructor(opts: GraphStoreOptions = {}) {
    this.limitBytes = opts.limitBytes ?? 768 * 1024 ** 2;
    this.onRead = opts.onRead;
    this.analysis = new AnalysisService({}, opts.analysisGraphs ?? 2,
      // A key naming graph g of a dataset (dataset-views.ts graphKey) reads that graph alone.
      (file, options, cancel) => loadAnalysisGraph(file, options, this.loadOptions(cancel)));
  }

  // ---- requests (worker-methods.ts) ---------------------------------------------------------------

  configure(p: ConfigureParams): void {
    const sameChecks = JSON.stringify(p.options) === JSON.stringify(this.options) && p.maxFileBytes === this.maxFileBytes;
    this.options = p.options;
    this.maxFileBytes = p.maxFileBytes;
    this.excluded = excludeMatcher(p.roots ?? [], p.exclude ?? []);
    if (!sameChecks) {
      // Reports and structures depend on the options; a read file on the size limit.
      for (const e of this.entries.values()) { delete e.report; delete e.structure; }
      this.recount();
      this.analysis.configure(p.options);
    }
    if (p.maxFileBytes !== undefined) this.dropReadAbove(p.maxFileBytes);
  }

  walk(p: { paths: string[] }, cancel: Cancel = NOT_CANCELLED): WalkResult {
    const c = collect(p.paths.map((x) => path.resolve(x)), { exclude: this.excluded, cancel });
    return { files: c.files.map((f) => path.resolve(f)), manifests: c.manifests.map((m) => path.resolve(m)), missing: c.missing, unsupported: c.unsupported };
  }

  /** Checks files/folders and keeps the reports and graph structures. */
  check(p: ParamsOf<'check'>, cancel: Cancel = NOT_CANCELLED): CheckOutcome {
    const from = this.clock + 1;
    const abs = p.paths.map((x) => path.resolve(x));
    // With `focus` (an editor's re-check of changed files) only their graphs are checked and reported.
    const r = checkPaths(abs, this.options, { ...this.loadOptions(cancel), ...(p.focus ? { focus: p.focus } : {}) });
    // Dataset problems in text layouts: each listed place learns its graph's lines (the editor's related information).
    addGraphLines(r.datasets);
    const structures: CheckOutcome['structures'] = [];
    for (const g of r.graphs) {
      const s = g.check.structure;
      // A typed graph's structure numbers nodes across types: ids written in its relations are not its node ids.
      if (g.check.structureFile && s && g.check.figures && !isTypedCheck(g.check)) {
        const file = path.resolve(g.check.structureFile);
        const info = shareStructure({ n: g.check.figures.nodes, fwd: s.fwd, rev: s.rev, indexBase: g.check.figures.indexBase, ...(s.ids ? { ids: s.ids } : {}) });
        structures.push({ file, structure: info });
        this.setPart(file, 'structure', { info, bytes: structureBytes(info) });
      }
    }
    const structureFiles = new Set(structures.map((x) => x.file));
    for (const f of r.files) {
      const file = path.resolve(f.path);
      this.setPart(file, 'report', { report: f, bytes: reportBytes(f) });
      // A checked file that is no graph's structure file has no structure (hovers do not check it again).
      if (!structureFiles.has(file)) this.setPart(file, 'structure', { info: null, bytes: 0 });
    }
    this.evict(from);
    return {
      files: r.files.map((f) => ({ ...f, path: path.resolve(f.path) })),
      manifestProblems: r.manifestProblems.map((m) => ({ path: path.resolve(m.path), problem: m.problem })),
      graphs: r.graphs.map((g) => ({ name: g.name, files: g.files.map((f) => path.resolve(f)), structureFile: g.check.structureFile ? path.resolve(g.check.structureFile) : null })),
      skipped: r.skipped.map((s) => path.resolve(s.path)),
      structures,
    };
  }

  report(p: { path: string }): FileReport | null {
    const e = this.touch(path.resolve(p.path));
    return e?.report?.report ?? null;
  }

  /** Drops everything kept for a path: read file, report, structure, and any panel graph read from it. */
  forget(p: { path: string }): void {
    const abs = path.resolve(p.path);
    const e = this.entries.get(abs);
    if (e) {
      this.total -= entryBytes(e);
      this.entries.delete(abs);
      // A large file's bytes and structure are garbage now (shared memory too, once the language
      // server's thread drops its views): collect them rather than wait for the next allocation.
      if (entryBytes(e) >= 8 * 1024 ** 2) collectGarbage();
    }
    this.analysis.forget(abs);
    forgetDataset(abs);
  }

  nodeInfo(p: ParamsOf<'nodeInfo'>): NodeInfo | null {
    const s = this.structureOf(path.resolve(p.path));
    return s ? nodeInfoOf(s, p.node, p.maxNeighbours ?? 8) : null;
  }

  tensorPage(p: ParamsOf<'tensorPage'>): TensorPage | null {
    const t = this.tensor(p.path, p.tensor);
    if (!t) return null;
    const maxCols = p.maxCols ?? 64;
    const { rows: totalRows, cols: totalCols } = matrixShape(t);
    const start = Math.max(0, Math.min(p.rowStart | 0, totalRows));
    const end = Math.min(totalRows, start + Math.max(0, Math.min(p.rowCount | 0, 2000)));
    const colsShown = Math.min(totalCols, maxCols);
    const rows: TensorPage['rows'] = [];
    if (t.kind === 'dense' && t.summary) {
      const mib = (t.summary.dataBytes / 1024 ** 2).toFixed(0);
      return { tensor: t.name, shape: [...t.shape], totalRows, totalCols, rowStart: start, rows: [], colsShown: 0,
        note: `${t.name} holds ${mib} MiB of values, too many to keep: it was summarised while it was read (see the column statistics).` };
    }
    if (t.kind === 'dense') {
      for (let r = start; r < end; r++) {
        const row: Array<number | string | null> = [];
        for (let c = 0; c < colsShown; c++) {
          const i = r * totalCols + c;
          if (t.strings) row.push(t.strings[i] ?? '');
          else row.push(cell(t.data[i]!));
        }
        rows.push(row);
      }
    } else {
      // Sparse: show stored entries as (row, col, value) triples.
      for (let k = start; k < end; k++) rows.push([t.row[k]!, t.col[k]!, t.values ? cell(t.values[k]!) : 1]);
    }
    return { tensor: t.name, shape: [...t.shape], totalRows, totalCols: t.kind === 'sparse' ? 3 : totalCols, rowStart: start, rows, colsShown: t.kind === 'sparse' ? 3 : colsShown };
  }

  tensorStats(p: ParamsOf<'tensorStats'>, cancel: Cancel = NOT_CANCELLED): TensorStats | null {
    const t = this.tensor(p.path, p.tensor, cancel);
    if (!t) return null;
    const maxCols = p.maxCols ?? 256;
    const role = guessRole(t, p.path).role;
    const out: TensorStats = { tensor: t.name, role, columns: [], colsShown: 0, totalCols: 0 };
    if (t.kind === 'dense' && !t.strings) {
      const { rows, cols } = matrixShape(t);
      const shown = Math.min(cols, maxCols);
      out.totalCols = cols;
      out.colsShown = shown;
      out.columns = columnStats(t, rows, cols, shown);
      out.colsShown = out.columns.length;
      if (role === 'labels' && t.shape.length === 1) out.labelHistogram = histogram(t.data, 10_000);
    }
    if (role === 'edge-index' || role === 'adjacency') {
      const s = this.entries.get(path.resolve(p.path))?.structure?.info;
      if (s) {
        // Over the CSR's nodes (the touched ids when the graph was too large for per-node arrays);
        // the untouched ids of such a graph are nodes of degree 0.
        const m = s.fwd.n;
        const deg = new Int32Array(m);
        for (let u = 0; u < m; u++) deg[u] = s.fwd.indptr[u + 1]! - s.fwd.indptr[u]! + s.rev.indptr[u + 1]! - s.rev.indptr[u]!;
        const bins = histogram(deg, 100_000);
        if (s.n > m && bins.length) {
          if (bins[0]!.value === 0) bins[0]!.count += s.n - m;
          else bins.unshift({ value: 0, count: s.n - m });
        }
        out.degreeHistogram = bins.map(({ value, count }) => ({ degree: value, count }));
      }
    }
    return out;
  }

  fieldView(p: ParamsOf<'fieldView'>, cancel: Cancel = NOT_CANCELLED): ResultOf<'fieldView'> {
    const { path: file, ...rest } = p;
    const from = this.clock + 1;
    const r = this.analysis.field(file, rest, cancel);
    this.evict(from);
    return r;
  }

  pairField(p: ParamsOf<'pairField'>, cancel: Cancel = NOT_CANCELLED): ResultOf<'pairField'> {
    const { path: file, ...rest } = p;
    const from = this.clock + 1;
    const r = this.analysis.pairField(file, rest, cancel);
    this.evict(from);
    return r;
  }

  wlClasses(p: ParamsOf<'wlClasses'>, cancel: Cancel = NOT_CANCELLED): ResultOf<'wlClasses'> {
    const from = this.clock + 1;
    const r = this.analysis.wlClasses(p.path, p.nodes, cancel);
    this.evict(from);
    return r;
  }

  bottlenecks(p: ParamsOf<'bottlenecks'>, cancel: Cancel = NOT_CANCELLED): ResultOf<'bottlenecks'> {
    const from = this.clock + 1;
    const r = this.analysis.bottlenecks(p.path, p.edges, cancel);
    this.evict(from);
    return r;
  }

  smoothing(p: ParamsOf<'smoothing'>, cancel: Cancel = NOT_CANCELLED): ResultOf<'smoothing'> {
    const from = this.clock + 1;
    const r = this.analysis.smoothing(p.path, p.steps, cancel);
    this.evict(from);
    return r;
  }

  datasetTable(p: { path: string }, cancel: Cancel = NOT_CANCELLED): ResultOf<'datasetTable'> {
    const file = path.resolve(p.path);
    if (this.excluded(file)) return { error: `${path.basename(file)} is left out by the files.exclude or hopscope.exclude setting.` };
    const from = this.clock + 1;
    const found = findDatasetFor(file, this.options, this.loadOptions(cancel));
    this.evict(from);
    return found ? datasetTable(found) : null;
  }

  ceiling(p: ParamsOf<'ceiling'>, cancel: Cancel = NOT_CANCELLED): ResultOf<'ceiling'> {
    const { path: file, ...rest } = p;
    const abs = path.resolve(file);
    if (this.excluded(abs)) return { error: `${path.basename(abs)} is left out by the files.exclude or hopscope.exclude setting.` };
    const from = this.clock + 1;
    try {
      // The file's datasets as the viewer's table found them (kept while unchanged), not checked again.
      const load = this.loadOptions(cancel);
      return ceilingAnswer(abs, rest, this.options, load, datasetsFor(abs, this.options, load));
    } finally {
      this.evict(from);
    }
  }

  fixedCopyPlan(p: { path: string }): ResultOf<'fixedCopyPlan'> {
    const file = path.resolve(p.path);
    const from = this.clock + 1;
    const r = describeFixedCopy(file, this.reportFor(file), this.loadOptions());
    this.evict(from);
    return r;
  }

  writeFixedCopy(p: { path: string; target?: string }): ResultOf<'writeFixedCopy'> {
    const file = path.resolve(p.path);
    const from = this.clock + 1;
    const r = writeFixedCopy(file, p.target, this.reportFor(file), this.loadOptions());
    this.evict(from);
    return r;
  }

  // ---- what is kept -------------------------------------------------------------------------------

  usage(): StoreUsage {
    let files = 0, reports = 0, structures = 0;
    for (const e of this.entries.values()) {
      if (e.read) files++;
      if (e.report) reports++;
      if (e.structure?.info) structures++;
    }
    const a = this.analysis.usage();
    return { bytes: this.total, files, reports, structures, analysisGraphs: a.graphs, analysisBytes: a.bytes };
  }

  /** How every read goes: through this store's cache, size limit, exclusions and the request's cancel. */
  private loadOptions(cancel?: Cancel): LoadOptions {
    return {
      cache: this.fileCache(),
      exclude: this.excluded,
      ...(this.maxFileBytes !== undefined ? { maxFileBytes: this.maxFileBytes } : {}),
      ...(this.onRead ? { onRead: this.onRead } : {}),
      ...(cancel ? { cancel } : {}),
    };
  }

  /** The report a corrected copy is planned from: the last check's, or a check now. */
  private reportFor(file: string): FileReport | undefined {
    const known = this.touch(file)?.report?.report;
    if (known) return known;
    return this.check({ paths: [file] }).files.find((f) => f.path === file);
  }

  /** The structure of a graph whose structure file is `file`, checking it when it is not known (never checked, or dropped). */
  private structureOf(file: string): StructureInfo | null {
    let s = this.touch(file)?.structure;
    if (!s) {
      this.check({ paths: [file] });
      s = this.entries.get(file)?.structure;
    }
    return s?.info ?? null;
  }

  /** The loaded tensor, checking the file again if it changed or was dropped. */
  private tensor(file: string, name: string, cancel?: Cancel): Tensor | undefined {
    const p = path.resolve(file);
    let read = this.fresh(p);
    if (!read) {
      this.check({ paths: [p] }, cancel);
      read = this.fresh(p);
    }
    return read?.file.result?.tensors.find((t) => t.name === name);
  }

  /** The read file of `p` if it is unchanged on disk (dropped when it changed). */
  private fresh(p: string): Entry['read'] {
    const e = this.touch(p);
    const read = e?.read;
    if (!e || !read) return undefined;
    try {
      const st = fs.statSync(p);
      if (st.mtimeMs === read.mtimeMs && st.size === read.size) return read;
    } catch {
      /* deleted */
    }
    this.setPart(p, 'read', undefined);
    return undefined;
  }

  /** The view loadFile consults and fills. */
  private fileCache(): FileCache {
    return {
      get: (p, mtimeMs, size) => {
        const read = this.touch(p)?.read;
        return read && read.mtimeMs === mtimeMs && read.size === size ? read.file : undefined;
      },
      set: (p, mtimeMs, size, file) => {
        this.setPart(p, 'read', { mtimeMs, size, file, bytes: loadedBytes(file, size) });
      },
    };
  }

  private touch(p: string): Entry | undefined {
    const e = this.entries.get(p);
    if (e) e.lastUse = ++this.clock;
    return e;
  }

  private setPart<K extends 'read' | 'report' | 'structure'>(p: string, part: K, value: Entry[K] | undefined): void {
    let e = this.entries.get(p);
    if (!e) {
      if (value === undefined) return;
      e = { lastUse: ++this.clock };
      this.entries.set(p, e);
    }
    this.total -= entryBytes(e);
    if (value === undefined) delete e[part];
    else e[part] = value;
    e.lastUse = ++this.clock;
    this.total += entryBytes(e);
    if (!e.read && !e.report && !e.structure) this.entries.delete(p);
  }

  private recount(): void {
    this.total = 0;
    for (const [p, e] of [...this.entries]) {
      if (!e.read && !e.report && !e.structure) this.entries.delete(p);
      else this.total += entryBytes(e);
    }
  }

  private dropReadAbove(maxBytes: number): void {
    for (const [p, e] of this.entries) if (e.read && e.read.size > maxBytes) this.setPart(p, 'read', undefined);
  }

  /**
   * Drops least recently used paths until the kept bytes fit the limit, sparing what the request
   * in progress used (touched at clock `from` or later): the request is answered from it.
   */
  private evict(from: number): void {
    if (this.total <= this.limitBytes) return;
    const order = [...this.entries.entries()].sort((a, b) => a[1].lastUse - b[1].lastUse);
    for (const [p, e] of order) {
      if (this.total <= this.limitBytes || e.lastUse >= from) break;
      this.total -= entryBytes(e);
      this.entries.delete(p);
    }
  }
}

/** Paths matched by the exclude globs, relative to the workspace folder that holds them. */
function excludeMatcher(roots: string[], patterns: string[]): (absPath: string) => boolean {
  if (!patterns.some((g) => g.trim())) return () => false;
  const match = globMatcher(patterns);
  const folders = roots.map((r) => path.resolve(r));
  return (abs) => {
    for (const root of folders) {
      const rel = path.relative(root, abs);
      if (rel && !rel.startsWith('..') && !path.isAbsolute(rel)) return match(rel);
    }
    return false;
  };
}

function entryBytes(e: Entry): number {
  return (e.read?.bytes ?? 0) + (e.report?.bytes ?? 0) + (e.structure?.bytes ?? 0);
}

/**
 * Bytes a read file keeps alive: tensor values, decoded strings, and the raw text its locators
 * hold to place problems on lines (each buffer counted once, however many tensors share it).
 */
export function loadedBytes(f: LoadedFile, fileSize: number): number {
  let b = 256;
  const holders = new Set<object>();
  let unmeasured = false;
  for (const t of f.result?.tensors ?? []) {
    if (t.kind === 'dense') {
      b += t.data.byteLength;
      if (t.strings) for (const s of t.strings) b += 32 + 2 * s.length;
    } else {
      b += t.row.byteLength + t.col.byteLength + (t.values?.byteLength ?? 0);
    }
    if (!t.locator) continue;
    const kept = t.locator.kept?.();
    if (!kept) unmeasured = true;
    else if (!holders.has(kept.holder)) {
      holders.add(kept.holder);
      b += kept.bytes;
    }
  }
  // A locator that does not say what it keeps holds at least the file's text.
  if (unmeasured && holders.size === 0) b += fileSize;
  return b;
}

function structureBytes(s: StructureInfo): number {
  return 128 + s.fwd.indptr.byteLength + s.fwd.indices.byteLength + s.rev.indptr.byteLength + s.rev.indices.byteLength + (s.ids?.byteLength ?? 0);
}

/** An estimate of a report's size in memory: its messages and locations. */
function reportBytes(r: FileReport): number {
  let b = 512 + 2 * r.path.length;
  for (const p of r.problems) {
    b += 128 + 2 * p.message.length + 64 * (p.locations?.length ?? 0);
    for (const l of p.locations ?? []) b += 2 * (l.detail?.length ?? 0);
  }
  b += 256 * r.tensors.length;
  return b;
}

function matrixShape(t: Tensor): { rows: number; cols: number } {
  if (t.kind === 'sparse') return { rows: t.row.length, cols: 3 };
  if (t.shape.length === 0) return { rows: 1, cols: 1 };
  const rows = t.shape[0]!;
  const cols = t.shape.slice(1).reduce((a, b) => a * b, 1);
  return { rows, cols };
}

function cell(v: number): number | string {
  if (Number.isFinite(v)) return v;
  return v !== v ? 'NaN' : v > 0 ? 'Infinity' : '-Infinity';
}

/** Counts per integer value; gives up (returns []) beyond `maxDistinct` distinct values. */
function histogram(d: ArrayLike<number>, maxDistinct: number): Array<{ value: number; count: number }> {
  const counts = new Map<number, number>();
  for (let i = 0; i < d.length; i++) {
    const v = d[i]!;
    if (!Number.isFinite(v)) continue;
    counts.set(v, (counts.get(v) ?? 0) + 1);
    if (counts.size > maxDistinct) return [];
  }
  return [...counts].sort((a, b) => a[0] - b[0]).map(([value, count]) => ({ value, count }));
}

/**
 * The graph service: checks files with a cache of what was read, and answers the editor's
 * questions about them (summaries, tensor pages, statistics, node neighbourhoods). Plain Node,
 * no LSP types: it runs inside a worker thread (worker.ts) and directly in tests.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import type { CheckSetOptions, FileReport, LoadedFile } from '../core/checks/check-set';
import type { Csr } from '../core/graph/structure/csr';
import { indexOfId } from '../core/graph/structure/compact';
import type { Tensor } from '../core/formats/types';
import { guessRole } from '../core/checks/roles';
import { columnStats } from '../core/checks/stats';
import { checkPaths, type LoadOptions } from './load';
import type { NodeInfo, TensorPage, TensorStats } from '../../../common/protocol';
import { AnalysisService } from './analysis-service';

interface CacheEntry {
  mtimeMs: number;
  size: number;
  file: LoadedFile;
  bytes: number;
  lastUse: number;
}

export interface CheckOutcome {
  files: FileReport[];
  manifestProblems: Array<{ path: string; problem: FileReport['problems'][number] }>;
  /** For every graph: its files (absolute). */
  graphs: Array<{ name: string; files: string[]; structureFile: string | null }>;
  /** Text files that are not edge lists (absolute): no report, and no diagnostics in the editor. */
  skipped: string[];
}

interface StructureInfo {
  n: number;
  fwd: Csr;
  rev: Csr;
  indexBase: 0 | 1;
  /** Present when the graph was checked on its touched ids: CSR node c is the 0-based id ids[c]. */
  ids?: Float64Array;
}

export class GraphService {
  private readonly cache = new Map<string, CacheEntry>();
  private readonly structures = new Map<string, StructureInfo>();
  private readonly reports = new Map<string, FileReport>();
  private clock = 0;
  /** The receptive-field panel's analyses (analysis-service.ts). */
  readonly analysis = new AnalysisService();

  constructor(
    private options: CheckSetOptions = {},
    private load: LoadOptions = {},
    /** Cached tensor bytes are evicted beyond this many bytes (least recently used first). */
    private readonly cacheLimitBytes = 768 * 1024 ** 2,
  ) {}

  configure(options: CheckSetOptions, load: LoadOptions): void {
    this.options = options;
    this.load = load;
    this.structures.clear();
    this.analysis.configure(options);
  }

  /** Checks files/folders and remembers the reports and graph structures. */
  check(paths: string[]): CheckOutcome {
    const abs = paths.map((p) => path.resolve(p));
    const r = checkPaths(abs, this.options, { ...this.load, cache: this.loadedCache() });
    for (const f of r.files) this.reports.set(path.resolve(f.path), f);
    for (const g of r.graphs) {
      const s = g.check.structure;
      if (g.check.structureFile && s && g.check.figures) {
        this.structures.set(path.resolve(g.check.structureFile), {
          n: g.check.figures.nodes, fwd: s.fwd, rev: s.rev, indexBase: g.check.figures.indexBase, ...(s.ids ? { ids: s.ids } : {}),
        });
      }
    }
    this.evict();
    return {
      files: r.files.map((f) => ({ ...f, path: path.resolve(f.path) })),
      manifestProblems: r.manifestProblems.map((m) => ({ path: path.resolve(m.path), problem: m.problem })),
      graphs: r.graphs.map((g) => ({ name: g.name, files: g.files.map((f) => path.resolve(f)), structureFile: g.check.structureFile ? path.resolve(g.check.structureFile) : null })),
      skipped: r.skipped.map((s) => path.resolve(s.path)),
    };
  }

  report(file: string): FileReport | undefined {
    return this.reports.get(path.resolve(file));
  }

  forget(file: string): void {
    const p = path.resolve(file);
    this.cache.delete(p);
    this.reports.delete(p);
    this.structures.delete(p);
    this.analysis.forget(p);
  }

  fieldView(...a: Parameters<AnalysisService['field']>) { return this.analysis.field(...a); }
  wlClasses(...a: Parameters<AnalysisService['wlClasses']>) { return this.analysis.wlClasses(...a); }
  bottlenecks(...a: Parameters<AnalysisService['bottlenecks']>) { return this.analysis.bottlenecks(...a); }
  smoothing(...a: Parameters<AnalysisService['smoothing']>) { return this.analysis.smoothing(...a); }

  nodeInfo(file: string, node: number, maxNeighbours = 8): NodeInfo | undefined {
    const s = this.structures.get(path.resolve(file));
    if (!s) return undefined;
    const id = node - s.indexBase;
    if (!Number.isInteger(id) || id < 0 || (!s.ids && id >= s.n)) return undefined;
    // A graph checked on its touched ids: find the id's CSR node (an untouched id below the node
    // count is an isolated node; one beyond the distinct ids of a sparse graph is not a node).
    const u = s.ids ? indexOfId(s.ids, id) : id;
    if (u < 0) {
      return s.ids!.length < s.n && id < s.n ? { node, nodes: s.n, outDegree: 0, inDegree: 0, outNeighbours: [], inNeighbours: [] } : undefined;
    }
    const idOf = (v: number) => (s.ids ? s.ids[v]! : v) + s.indexBase;
    const row = (g: Csr) => Array.from(g.indices.subarray(g.indptr[u]!, Math.min(g.indptr[u + 1]!, g.indptr[u]! + maxNeighbours)), idOf);
    return {
      node, nodes: s.n,
      outDegree: s.fwd.indptr[u + 1]! - s.fwd.indptr[u]!,
      inDegree: s.rev.indptr[u + 1]! - s.rev.indptr[u]!,
      outNeighbours: row(s.fwd),
      inNeighbours: row(s.rev),
    };
  }

  tensorPage(file: string, tensorName: string, rowStart: number, rowCount: number, maxCols = 64): TensorPage | undefined {
    const t = this.tensor(file, tensorName);
    if (!t) return undefined;
    const { rows: totalRows, cols: totalCols } = matrixShape(t);
    const start = Math.max(0, Math.min(rowStart | 0, totalRows));
    const end = Math.min(totalRows, start + Math.max(0, Math.min(rowCount | 0, 2000)));
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

  tensorStats(file: string, tensorName: string, maxCols = 256): TensorStats | undefined {
    const t = this.tensor(file, tensorName);
    if (!t) return undefined;
    const role = guessRole(t).role;
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
      const s = this.structures.get(path.resolve(file));
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

  /** The loaded tensor, re-reading the file if it changed or was evicted. */
  private tensor(file: string, name: string): Tensor | undefined {
    const p = path.resolve(file);
    let entry = this.fresh(p);
    if (!entry) {
      this.check([p]);
      entry = this.fresh(p);
    }
    if (!entry) return undefined;
    entry.lastUse = ++this.clock;
    return entry.file.result?.tensors.find((t) => t.name === name);
  }

  private fresh(p: string): CacheEntry | undefined {
    const e = this.cache.get(p);
    if (!e) return undefined;
    try {
      const st = fs.statSync(p);
      if (st.mtimeMs === e.mtimeMs && st.size === e.size) return e;
    } catch {
      /* deleted */
    }
    this.cache.delete(p);
    return undefined;
  }

  /** The cache seen by loadFile: a Map-like view that records what was loaded. */
  private loadedCache(): FileCache {
    return {
      get: (p, mtimeMs, size) => {
        const e = this.cache.get(p);
        if (e && e.mtimeMs === mtimeMs && e.size === size) { e.lastUse = ++this.clock; return e.file; }
        return undefined;
      },
      set: (p, mtimeMs, size, file) => {
        this.cache.set(p, { mtimeMs, size, file, bytes: resultBytes(file), lastUse: ++this.clock });
      },
    };
  }

  private evict(): void {
    let total = 0;
    for (const e of this.cache.values()) total += e.bytes;
    if (total <= this.cacheLimitBytes) return;
    const order = [...this.cache.entries()].sort((a, b) => a[1].lastUse - b[1].lastUse);
    for (const [p, e] of order) {
      if (total <= this.cacheLimitBytes) break;
      this.cache.delete(p);
      total -= e.bytes;
    }
  }
}

/** What loadFile consults before reading a file again. */
export interface FileCache {
  get(absPath: string, mtimeMs: number, size: number): LoadedFile | undefined;
  set(absPath: string, mtimeMs: number, size: number, file: LoadedFile): void;
}

function resultBytes(f: LoadedFile): number {
  let b = 0;
  for (const t of f.result?.tensors ?? []) {
    if (t.kind === 'dense') b += t.data.byteLength;
    else b += t.row.byteLength + t.col.byteLength + (t.values?.byteLength ?? 0);
  }
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

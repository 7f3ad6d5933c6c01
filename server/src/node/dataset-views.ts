/**
 * The editor's views of a dataset of many graphs (core/datasets): the viewer's table of graphs
 * (one packed column per figure, common/columns.ts) and one graph of the dataset taken as a
 * standalone graph for the receptive-field panel (its local ids, its slice of the node tensors).
 *
 * Datasets are found the way `hopscope check` and node/dataset-load.ts find them (checkPaths over
 * the store's cache, size limit and exclusions), synchronously: the worker answers one request at
 * a time. The last dataset found is kept while its files are unchanged on disk, so stepping from
 * graph to graph in the panel does not check the whole dataset again.
 *
 * The panel's requests name a graph by a key: the file's path, a NUL and the graph index
 * (`graphKey`). The analyses keep graphs by that key, and `loadAnalysisGraph` reads it back.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import type { CheckSetOptions } from '../core/checks/check-set';
import type { DenseTensor, DType, Problem, TensorData } from '../core/formats/types';
import type { Dataset, DatasetColumn } from '../core/datasets/model';
import { inRange, labelClasses } from '../core/datasets/check';
import { analyseStructure } from '../core/graph/structure/figures';
import { packColumn } from '../../../common/columns';
import type { DatasetTable } from '../../../common/protocol';
import type { LoadOptions } from './load';
import { datasetNamedBy, datasetsOf, type LoadedDataset } from './dataset-load';
import { GraphLoadError, loadGraph, type LoadedGraph } from './graph-input';
import { parseGraphKey } from './graph-key';

export { graphKey, parseGraphKey } from './graph-key';

export interface FoundDataset {
  dataset: Dataset;
  problems: Problem[];
  files: string[];
}

/** Which graph of which dataset an analysed graph is (the panel says "graph g of G"). */
export interface DatasetGraphInfo { index: number; of: number }
const graphInfo = new WeakMap<LoadedGraph, DatasetGraphInfo>();
export function datasetGraphOf(g: LoadedGraph): DatasetGraphInfo | undefined {
  return graphInfo.get(g);
}

// ---- finding the dataset of a file, with a one-entry memo -----------------------------------------

let memo: {
  file: string; options: string; stamp: string; files: string[]; all: LoadedDataset[]; found: FoundDataset;
  clean?: Dataset; table?: DatasetTable;
} | undefined;

function stampOf(files: string[]): string {
  return files.map((f) => {
    try { const st = fs.statSync(f); return `${f}:${st.mtimeMs}:${st.size}`; } catch { return `${f}:-`; }
  }).join('|');
}

/**
 * Every dataset `file` takes part in (dataset-load.ts `datasetsOf`, as `hopscope check` reads them),
 * kept in the memo while their files are unchanged: the viewer's table, the panel's graphs and the
 * ceiling all ask for the same file in turn.
 */
export function datasetsFor(file: string, options: CheckSetOptions, load: LoadOptions): LoadedDataset[] {
  const abs = path.resolve(file);
  const opts = JSON.stringify(options);
  if (memo && memo.file === abs && memo.options === opts && memo.stamp === stampOf(memo.files)) return memo.all;
  const all = datasetsOf(abs, { ...load, check: options });
  const named = datasetNamedBy(all, abs) ?? all[0];
  const found: FoundDataset | null = named
    ? { dataset: named.dataset, problems: named.problems, files: withFile(named.files.map((f) => path.resolve(f)), abs) }
    : null;
  // Only datasets are kept: "no dataset here" can change without this file changing (a sibling added).
  if (found) {
    const files = withFile([...new Set(all.flatMap((d) => d.files.map((f) => path.resolve(f))))], abs);
    memo = { file: abs, options: opts, stamp: stampOf(files), files, all, found };
  } else {
    memo = undefined;
  }
  return all;
}

function withFile(files: string[], abs: string): string[] {
  return files.includes(abs) ? files : [abs, ...files];
}

/** The dataset `file` belongs to (the one it names, else the first it takes part in), or null when it is none. */
export function findDatasetFor(file: string, options: CheckSetOptions, load: LoadOptions): FoundDataset | null {
  const abs = path.resolve(file);
  datasetsFor(abs, options, load);
  return memo && memo.file === abs ? memo.found : null;
}

/** Drops the memo when one of its files changed or went away. */
export function forgetDataset(file: string): void {
  const abs = path.resolve(file);
  if (memo && (memo.file === abs || memo.files.includes(abs))) memo = undefined;
}

function cleanDataset(found: FoundDataset): Dataset {
  if (memo && memo.found === found) return (memo.clean ??= inRange(found.dataset));
  return inRange(found.dataset);
}

// ---- the lines of a graph (text layouts) ----------------------------------------------------------------

/** Entries scanned per graph for its lines; beyond, the first and last entries' lines are taken. */
const SCAN_LIMIT = 100_000;

/**
 * For datasets read from lines of text: each listed place of a problem that names a graph gets
 * that graph's lines (`graphLines`: the first and last line holding its edges), so the editor can
 * point at the graph's slice. Places are changed in place (the reports share them).
 */
export function addGraphLines(datasets: ReadonlyArray<{ dataset?: Dataset; problems: ReadonlyArray<{ problem: Problem }> }> | undefined): void {
  for (const d of datasets ?? []) {
    const ds = d.dataset, et = ds?.edgeTensor, locator = et?.locator;
    if (!ds || !et || !locator) continue;
    const known = new Map<number, { first: number; last: number } | null>();
    const lineOf = (j: number) => {
      const col = ds.edgeColumn ? ds.edgeColumn[j]! : j;
      return locator.locate(et.layout === 'columns' ? col : 2 * col)?.line;
    };
    const linesOf = (g: number) => {
      if (known.has(g)) return known.get(g)!;
      let first = Infinity, last = -Infinity;
      const e0 = ds.edgeOffsets[g] ?? 0, e1 = ds.edgeOffsets[g + 1] ?? 0;
      const scan = e1 - e0 <= SCAN_LIMIT ? Array.from({ length: e1 - e0 }, (_, k) => e0 + k) : [e0, e1 - 1];
      for (const j of scan) {
        const line = lineOf(j);
        if (line === undefined) continue;
        if (line < first) first = line;
        if (line > last) last = line;
      }
      const r = Number.isFinite(first) ? { first, last } : null;
      known.set(g, r);
      return r;
    };
    for (const { problem } of d.problems) {
      for (const l of problem.locations ?? []) {
        if (l.graph === undefined || l.line === undefined || l.graphLines || l.graph < 0 || l.graph >= ds.graphs) continue;
        const r = linesOf(l.graph);
        if (r) l.graphLines = r;
      }
    }
  }
}

// ---- the table of graphs ------------------------------------------------------------------------------

/** Per graph: how many of the problems list a place in it (or name it as their first graph). */
export function problemsPerGraph(problems: readonly Problem[], graphs: number): Int32Array {
  const out = new Int32Array(graphs);
  for (const p of problems) {
    const seen = new Set<number>();
    if (p.graph !== undefined) seen.add(p.graph);
    for (const l of p.locations ?? []) if (l.graph !== undefined) seen.add(l.graph);
    for (const g of seen) if (Number.isInteger(g) && g >= 0 && g < graphs) out[g]!++;
  }
  return out;
}

export function datasetTable(found: FoundDataset): DatasetTable {
  if (memo && memo.found === found) return (memo.table ??= tableOf(found));
  return tableOf(found);
}

function tableOf(found: FoundDataset): DatasetTable {
  const ds = found.dataset;
  const G = ds.graphs;
  const nodes = new Int32Array(G), edges = new Int32Array(G);
  for (let g = 0; g < G; g++) {
    nodes[g] = ds.nodeOffsets[g + 1]! - ds.nodeOffsets[g]!;
    edges[g] = ds.edgeOffsets[g + 1]! - ds.edgeOffsets[g]!;
  }
  let label: DatasetTable['label'] = null;
  const gl = ds.graphLabels;
  if (gl && gl.rows > 0) {
    const classes = labelClasses(ds);
    if (classes && gl.columns === 1) {
      // Class values sorted as labelClasses sorts them; each graph's code is its value's position.
      const sorted = Float64Array.from(gl.data.subarray(0, Math.min(gl.rows, G))).sort();
      const at = new Map<number, number>();
      for (let i = 0; i < sorted.length; i++) if (!at.has(sorted[i]!)) at.set(sorted[i]!, at.size);
      const codes = new Int32Array(G).fill(-1);
      for (let g = 0; g < G && g < gl.rows; g++) codes[g] = at.get(gl.data[g]!) ?? -1;
      label = { kind: 'class', classes: classes.classes, codes: packColumn(codes) };
    } else {
      // Numeric targets: the first target column per graph (NaN where there is none).
      const v = new Float64Array(G).fill(NaN);
      for (let g = 0; g < G && g < gl.rows; g++) v[g] = gl.data[g * gl.columns]!;
      label = { kind: 'value', values: packColumn(v) };
    }
  }
  let split: DatasetTable['split'] = null;
  if (ds.splits) {
    const s = new Int32Array(G);
    const mark = (ids: Int32Array | undefined, code: number) => { if (ids) for (const g of ids) if (g >= 0 && g < G) s[g] = code; };
    mark(ds.splits.train, 1); mark(ds.splits.val, 2); mark(ds.splits.test, 3);
    split = packColumn(s);
  }
  const codes = new Map<string, number>();
  for (const p of found.problems) codes.set(p.code, (codes.get(p.code) ?? 0) + (p.graphs ?? (p.graph !== undefined ? 1 : 0)));
  return {
    file: ds.structureFile, graphs: G, layout: ds.layout,
    nodes: packColumn(nodes), edges: packColumn(edges), label, split,
    problems: packColumn(problemsPerGraph(found.problems, G)),
    problemCodes: [...codes].map(([code, graphs]) => ({ code, graphs })),
  };
}

// ---- one graph of a dataset as a standalone graph ---------------------------------------------------

function dtypeOf(d: TensorData): DType {
  if (d instanceof Float64Array) return 'float64';
  if (d instanceof Float32Array) return 'float32';
  if (d instanceof Int32Array) return 'int32';
  if (d instanceof Uint32Array) return 'uint32';
  if (d instanceof Int16Array) return 'int16';
  if (d instanceof Uint16Array) return 'uint16';
  if (d instanceof Int8Array) return 'int8';
  return 'uint8';
}

/** Rows from..to of a per-node column, as a tensor of graph g. */
function rowsOf(c: DatasetColumn | undefined, from: number, to: number): DenseTensor | undefined {
  if (!c || to > c.rows) return undefined;
  const data = c.data.slice(from * c.columns, to * c.columns) as TensorData;
  const t: DenseTensor = { kind: 'dense', name: c.tensor, dtype: dtypeOf(c.data), shape: c.columns === 1 ? [to - from] : [to - from, c.columns], data };
  if (c.strings) t.strings = c.strings;
  return t;
}

/** Graph g of the dataset, local ids, in-range edges only, as the analyses take a graph. */
export function datasetGraph(found: FoundDataset, g: number, file: string, options: CheckSetOptions): LoadedGraph {
  const ds = found.dataset;
  if (!Number.isInteger(g) || g < 0 || g >= ds.graphs) {
    throw new GraphLoadError(`${path.basename(file)} holds ${ds.graphs} graph${ds.graphs === 1 ? '' : 's'} (0 to ${ds.graphs - 1}); there is no graph ${g}.`);
  }
  const clean = cleanDataset(found);
  const n0 = clean.nodeOffsets[g]!, n1 = clean.nodeOffsets[g + 1]!;
  const e0 = clean.edgeOffsets[g]!, e1 = clean.edgeOffsets[g + 1]!;
  const n = n1 - n0;
  const src = clean.src.slice(e0, e1), dst = clean.dst.slice(e0, e1);
  const s = analyseStructure(n, src, dst);
  const features = rowsOf(clean.nodeFeatures, n0, n1);
  const labels = rowsOf(clean.nodeLabels, n0, n1);
  const problems = found.problems.filter((p) => p.graph === g || p.locations?.some((l) => l.graph === g));
  const loaded: LoadedGraph = {
    file, n, src, dst, fwd: s.fwd, rev: s.rev,
    ...(features ? { features } : {}), ...(labels ? { labels } : {}),
    figures: { ...s.figures, indexBase: 0 },
    problems, options: { ...(options.defaults ?? {}), indexBase: 0 },
    files: found.files,
  };
  graphInfo.set(loaded, { index: g, of: ds.graphs });
  return loaded;
}

/**
 * The analyses' loader: a graph key names graph g of a dataset; a plain path is read as one graph,
 * and when it holds a dataset instead (no single graph to walk), its graph 0 is taken.
 */
export function loadAnalysisGraph(key: string, options: CheckSetOptions, load: LoadOptions): LoadedGraph {
  const { file, graph } = parseGraphKey(key);
  if (graph === undefined) {
    try {
      return loadGraph(file, options, load);
    } catch (e) {
      if (!(e instanceof GraphLoadError)) throw e;
      const found = load.exclude?.(path.resolve(file)) ? null : findDatasetFor(file, options, load);
      if (!found) throw e;
      return datasetGraph(found, 0, file, options);
    }
  }
  if (load.exclude?.(path.resolve(file))) {
    throw new GraphLoadError(`${file} is left out by the files.exclude or hopscope.exclude setting, so Hopscope does not read it. Remove the pattern that matches it to analyse it.`);
  }
  const found = findDatasetFor(file, options, load);
  if (!found) throw new GraphLoadError(`${path.basename(file)} is not a dataset of many graphs, so it has no graph ${graph}.`);
  return datasetGraph(found, graph, file, options);
}

/**
 * The accuracy ceiling of a file, for `hopscope ceiling` and the worker's `ceiling` method: a dataset
 * of many graphs (read by dataset-load.ts) gets the graph-level ceiling, one graph with node classes
 * (read by graph-input.ts, like the other analyses) the node-level ceiling per layer count.
 */
import * as path from 'node:path';
import type { CeilingParams, CeilingResult } from '../../../common/ceiling';
import type { CheckSetOptions } from '../core/checks/check-set';
import type { DenseTensor } from '../core/formats/types';
import {
  CeilingInputError, datasetNodeCeiling, graphCeiling, nodeCeiling, nodeClasses, parseAugmentation,
  type Augmentation, type CeilingOptions,
} from '../core/graph/refinement/ceiling';
import { undirectedView } from '../core/graph/structure/undirected';
import { timed } from '../core/timing';
import type { LoadedFile } from '../core/checks/check-set';
import type { FileCache, LoadOptions } from './load';
import { datasetNamedBy, datasetsOf, type LoadedDataset } from './dataset-load';
import { GraphLoadError, loadGraph } from './graph-input';

export interface CeilingRequest extends Omit<CeilingOptions, 'with'> {
  with?: Augmentation[];
  /** Node-level: largest layer count. */
  layers?: number;
}

export interface CeilingOutcome {
  result: CeilingResult;
  /** Things the user should know (errors in the file the ceiling worked around). */
  notes: string[];
}

/** A FileCache for one call, so the dataset attempt and the single-graph attempt read each file once. */
function callCache(): FileCache {
  const m = new Map<string, { mtimeMs: number; size: number; file: LoadedFile }>();
  return {
    get: (p, mtimeMs, size) => { const e = m.get(p); return e && e.mtimeMs === mtimeMs && e.size === size ? e.file : undefined; },
    set: (p, mtimeMs, size, file) => { m.set(p, { mtimeMs, size, file }); },
  };
}

/** Class codes of a label tensor whose values are strings (in sorted order of the strings). */
function stringCodes(t: DenseTensor): { data: Int32Array; strings: string[] } {
  const strings = [...new Set(t.strings!)].sort();
  const index = new Map(strings.map((s, i) => [s, i]));
  return { data: Int32Array.from(t.strings!, (s) => index.get(s)!), strings };
}

/**
 * Throws CeilingInputError when the file has nothing to bound (no labels, numeric node labels, …)
 * and GraphLoadError when it cannot be read as a graph.
 */
export function computeCeiling(
  file: string, request: CeilingRequest, check: CheckSetOptions = {}, load: LoadOptions = {},
  datasets?: readonly LoadedDataset[],
): CeilingOutcome {
  const opts = { ...load, cache: load.cache ?? callCache() };
  // The datasets the file takes part in: given by the caller (the worker's memo), or read here.
  const found = datasets ?? datasetsOf(file, { ...opts, check });
  const notes: string[] = [];
  if (found.length) {
    const pick = datasetNamedBy(found, file);
    if (!pick) {
      throw new CeilingInputError(`${found.length} datasets use this file (${found.map((d) => path.basename(d.dataset.structureFile)).join(', ')}); name the file holding the edges of one`);
    }
    const errors = pick.problems.filter((p) => p.severity === 'error').length;
    if (errors) notes.push(`${file}: the dataset has ${errors} error${errors === 1 ? '' : 's'} (see hopscope check); the ceiling uses the edges that lie within their graph`);
    // Graph labels: the graph-level ceiling; node labels alone: node classification across the graphs.
    const ds = pick.dataset;
    const result = ds.graphLabels || !ds.nodeLabels
      ? timed('ceiling', () => graphCeiling(ds, request))
      : timed('ceiling', () => datasetNodeCeiling(ds, request));
    return { result, notes };
  }
  const loaded = loadGraph(file, check, opts);
  const errors = loaded.problems.filter((p) => p.severity === 'error').length;
  if (errors) notes.push(`${file} has ${errors} error${errors === 1 ? '' : 's'} (see hopscope check); the ceiling uses the edges that are in range`);
  const y = loaded.labels;
  if (!y) {
    throw new CeilingInputError('no node labels found (a tensor named y, labels, node_labels, …, in the file or beside it), and it is not a dataset ' +
      'of many graphs with graph labels: the ceiling needs labels to bound the accuracy on');
  }
  if (y.summary) throw new CeilingInputError(`${y.name} is too large to keep in memory (it was only summarised while it was read)`);
  const rows = y.shape[0] ?? 0;
  if (rows !== loaded.n) throw new CeilingInputError(`${y.name} has ${rows} rows but the graph has ${loaded.n} nodes (see hopscope check: label-length-mismatch)`);
  const width = y.shape.length <= 1 ? 1 : y.shape.slice(1).reduce((a, b) => a * b, 1);
  const labels = y.strings ? stringCodes(y) : { data: y.data, strings: undefined };
  const { cls, names } = nodeClasses(labels.data, rows, width, labels.strings);
  let features: { data: ArrayLike<number>; width: number } | undefined;
  if (request.features) {
    const x = loaded.features;
    if (!x) throw new CeilingInputError('--features: no node feature matrix found in the file or beside it');
    if (x.summary) throw new CeilingInputError(`--features: ${x.name} is too large to keep in memory (it was only summarised while it was read)`);
    const xr = x.shape[0] ?? 0;
    if (xr !== loaded.n) throw new CeilingInputError(`--features: ${x.name} has ${xr} rows but the graph has ${loaded.n} nodes`);
    features = { data: x.data, width: x.shape.length <= 1 ? 1 : x.shape.slice(1).reduce((a, b) => a * b, 1) };
  }
  const g = undirectedView(loaded.fwd, loaded.rev, request.cancel);
  const result = timed('ceiling', () => nodeCeiling(g, {
    cls, classCount: names.length,
    ...(features ? { features } : {}),
    ...(request.layers !== undefined ? { layers: request.layers } : {}),
  }, request));
  return { result, notes };
}

/**
 * The worker's `ceiling` request (worker-methods.ts): `with` as strings, and a sentence instead of
 * an exception for a file that cannot be bounded or read (the LSP turns it into a request error).
 * `datasets`: the file's datasets when the caller has them already (the worker's memo).
 */
export function ceilingAnswer(
  file: string, params: Omit<CeilingParams, 'path'>, check: CheckSetOptions, load: LoadOptions,
  datasets?: readonly LoadedDataset[],
): CeilingResult | { error: string } {
  try {
    const augs = (params.with ?? []).map(parseAugmentation);
    return computeCeiling(file, {
      with: augs,
      ...(params.layers !== undefined ? { layers: params.layers } : {}),
      ...(params.features ? { features: true } : {}),
      ...(params.budgetMs !== undefined ? { budgetMs: params.budgetMs } : {}),
      ...(load.cancel ? { cancel: load.cancel } : {}),
    }, check, load, datasets).result;
  } catch (e) {
    if (e instanceof CeilingInputError || e instanceof GraphLoadError) return { error: `${path.basename(file)}: ${e.message}` };
    throw e;
  }
}

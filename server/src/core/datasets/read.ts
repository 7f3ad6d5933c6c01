/**
 * Finds datasets of many graphs among files already read (check-set.ts's LoadedFile list) and
 * builds one `Dataset` (model.ts) for each: saved `(data, slices)` tuples (read-slices.ts), batch /
 * ptr vectors beside an edge index with global ids (read-batch.ts), the graph-kernel benchmark
 * text folders and per-dataset CSV folders (read-folders.ts), and datasets a manifest declares
 * (read-manifest.ts). Split index vectors found beside a dataset are attached to it. Pure.
 */
import type { DenseTensor, Tensor } from '../formats/types';
import { guessRole, isIntegerDType, lastSegment } from '../checks/roles';
import { dirOf, baseOf } from '../paths';
import { attrOf, denseOf, intVector, problem, type DatasetInputFile, type FiledProblem } from './read-common';
import { readSlices, type FoundDataset } from './read-slices';
import { readBatch, type BatchInput, type BatchPart } from './read-batch';
import { readFolders } from './read-folders';
import type { Dataset } from './model';
import { isSplitFileName } from './text-files';

export type { FoundDataset } from './read-slices';
export type { DatasetInputFile, FiledProblem } from './read-common';

/**
 * Every dataset among `files`. A file takes part in at most one dataset; the caller leaves the
 * files of each found dataset out of the one-graph checks (even when its offsets are broken and no
 * dataset could be built: the problems then say why).
 */
export function findDatasets(files: readonly DatasetInputFile[]): FoundDataset[] {
  const out: FoundDataset[] = [];
  const taken = new Set<string>();
  const add = (f: FoundDataset) => { out.push(f); for (const p of f.files) taken.add(p); };
  // A batch vector found by its name alone makes a dataset only when it holds two graphs or more
  // (or something is wrong with it): one graph is better served by the one-graph checks.
  const addBatch = (f: FoundDataset) => { if (f.problems.length || (f.dataset && f.dataset.graphs >= 2)) add(f); };

  // 1. Folder layouts (named files): graph-kernel text folders, per-dataset CSV folders.
  for (const f of readFolders(files)) add(f);

  // 2. Saved (data, slices) tuples, and containers holding a batch / ptr vector with their edges.
  for (const file of files) {
    if (taken.has(file.path) || !file.result) continue;
    const sliced = readSlices(file);
    if (sliced.length) { add(merge(sliced)); continue; }
    const input = batchInContainer(file);
    if (input) addBatch(readBatch(input));
  }

  // 3. A batch / ptr vector saved on its own, beside the one edge-index file of its folder.
  const byDir = new Map<string, DatasetInputFile[]>();
  for (const f of files) {
    if (taken.has(f.path) || !f.result) continue;
    const d = dirOf(f.path);
    if (!byDir.has(d)) byDir.set(d, []);
    byDir.get(d)!.push(f);
  }
  for (const [, dirFiles] of byDir) {
    const input = batchInFolder(dirFiles);
    if (input) addBatch(readBatch(input));
  }

  // 4. Splits: graph-index vectors beside each dataset.
  for (const f of out) if (f.dataset) attachSplits(f, files, taken);
  return out;
}

/** Several tuples in one file (rare): one found dataset with the first buildable one. */
function merge(list: FoundDataset[]): FoundDataset {
  const first = list.find((f) => f.dataset) ?? list[0]!;
  return { ...first, problems: list.flatMap((f) => f.problems) };
}

const isBatchName = (t: Tensor) => attrOf(t.name) === 'batch' && !!intVector(t);
const isPtrName = (t: Tensor) => attrOf(t.name) === 'ptr' && !!intVector(t);

function partsOf(file: DatasetInputFile): Array<BatchPart & { role: string }> {
  const out: Array<BatchPart & { role: string }> = [];
  for (const t of file.result?.tensors ?? []) {
    const d = denseOf(t);
    if (d) out.push({ file: file.path, tensor: d, role: guessRole(t, file.path).role });
  }
  return out;
}

function pick(parts: Array<BatchPart & { role: string }>, input: BatchInput): BatchInput {
  for (const p of parts) {
    if (p.tensor === input.edges.tensor || p.tensor === input.batch?.tensor || p.tensor === input.ptr?.tensor) continue;
    if (p.role === 'features' && !input.features) input.features = p;
    else if (p.role === 'labels' && !input.labels && p.tensor.shape.length <= 2) input.labels = p;
    else if (p.role === 'edge-features' && !input.edgeFeatures) input.edgeFeatures = p;
  }
  return input;
}

function batchInContainer(file: DatasetInputFile): BatchInput | undefined {
  const tensors = file.result?.tensors ?? [];
  const batch = tensors.find(isBatchName), ptr = tensors.find(isPtrName);
  if (!batch && !ptr) return undefined;
  const parts = partsOf(file);
  const edges = parts.find((p) => p.role === 'edge-index' && p.tensor.shape.length === 2 && (p.tensor.shape[0] === 2 || p.tensor.shape[1] === 2));
  if (!edges) return undefined;
  return pick(parts, {
    edges,
    ...(batch ? { batch: { file: file.path, tensor: denseOf(batch)! } } : {}),
    ...(ptr ? { ptr: { file: file.path, tensor: denseOf(ptr)! } } : {}),
  });
}

function batchInFolder(dirFiles: DatasetInputFile[]): BatchInput | undefined {
  let batch: BatchPart | undefined, ptr: BatchPart | undefined;
  for (const f of dirFiles) {
    const ts = f.result?.tensors ?? [];
    if (ts.length !== 1) continue;
    const stem = baseOf(f.path).replace(/\.[^.]*(\.gz)?$/, '').toLowerCase();
    if (isBatchName(ts[0]!) || (stem === 'batch' && intVector(ts[0]))) batch ??= { file: f.path, tensor: denseOf(ts[0])! };
    if (isPtrName(ts[0]!) || (stem === 'ptr' && intVector(ts[0]))) ptr ??= { file: f.path, tensor: denseOf(ts[0])! };
  }
  if (!batch && !ptr) return undefined;
  const parts = dirFiles.flatMap(partsOf);
  const structures = parts.filter((p) => p.role === 'edge-index' && p.tensor.shape.length === 2 && (p.tensor.shape[0] === 2 || p.tensor.shape[1] === 2));
  if (structures.length !== 1) return undefined;
  return pick(parts, { edges: structures[0]!, ...(batch ? { batch } : {}), ...(ptr ? { ptr } : {}) });
}

type SplitName = 'train' | 'val' | 'test';

function splitNameOf(name: string): SplitName | undefined {
  const seg = lastSegment(name).replace(/\.(csv|txt|npy|pt)(\.gz)?$/, '');
  const m = /^(train|training|val|valid|validation|dev|test|testing)(_?(idx|index|indices|ids|graphs|mask))?$/.exec(seg);
  if (!m) return undefined;
  const w = m[1]!;
  return w.startsWith('train') ? 'train' : w.startsWith('test') ? 'test' : 'val';
}

/**
 * Split index vectors: tensors named train / val / valid / test (optionally _idx, _index, _mask …)
 * in the dataset's files, in the other files of its folder, or in a `split/<name>/` folder beside
 * it, holding graph indices (integers below G) or one boolean per graph.
 */
function attachSplits(found: FoundDataset, files: readonly DatasetInputFile[], taken: Set<string>): void {
  const ds = found.dataset!;
  const dir = dirOf(ds.structureFile);
  // Beside the dataset, or in <dir>/split/<scheme>/ or <dir>/../split/<scheme>/ (raw files in raw/).
  const near = (p: string) => {
    const d = dirOf(p);
    if (d === dir) return true;
    const splitDir = dirOf(d);
    return baseOf(splitDir) === 'split' && (dirOf(splitDir) === dir || dirOf(splitDir) === dirOf(dir));
  };
  const splits: NonNullable<Dataset['splits']> = {};
  const used: string[] = [];
  for (const f of files) {
    if (!f.result) continue;
    const mine = found.files.includes(f.path);
    if (!mine && (taken.has(f.path) || !near(f.path))) continue;
    for (const t of f.result.tensors) {
      const name: string = f.result.tensors.length === 1 && !mine ? baseOf(f.path) : t.name;
      const s = splitNameOf(name) ?? splitNameOf(t.name);
      if (!s || splits[s]) continue;
      const idx = graphIndices(t, ds.graphs);
      // A mask or index list that does not fit the graphs may be a node split (one entry per node,
      // node ids): said only where the name promises graph splits (a split file or folder, "graph" in the name).
      const promised = isSplitFileName(f.path) || baseOf(dirOf(dirOf(f.path))) === 'split' || /graph/i.test(t.name);
      if (idx === 'bad' && !promised) continue;
      if (idx === 'bad') {
        found.problems.push({ file: f.path, problem: problem('bad-graph-offsets',
          `${t.name} names graphs outside the dataset's ${ds.graphs} (a split of a dataset lists graph indices 0..${ds.graphs - 1}, or one boolean per graph).`,
          { tensor: t.name }) });
        continue;
      }
      if (!idx) continue;
      splits[s] = idx;
      if (!mine) used.push(f.path);
    }
  }
  if (splits.train || splits.val || splits.test) {
    ds.splits = splits;
    for (const p of used) if (!found.files.includes(p)) { found.files.push(p); ds.files.push(p); taken.add(p); }
  }
}

/** Graph indices of a split tensor, 'bad' when it names graphs that do not exist, undefined when it is no split. */
function graphIndices(t: Tensor, G: number): Int32Array | 'bad' | undefined {
  const d: DenseTensor | undefined = denseOf(t);
  if (!d || d.shape.length > 2 || (d.shape.length === 2 && d.shape[1] !== 1)) return undefined;
  const v = d.data;
  if (d.dtype === 'bool') {
    if (v.length !== G) return 'bad';
    const out: number[] = [];
    for (let i = 0; i < v.length; i++) if (v[i]) out.push(i);
    return Int32Array.from(out);
  }
  if (!isIntegerDType(d.dtype) && !(d.dtype.startsWith('float') && Array.prototype.every.call(v, Number.isInteger))) return undefined;
  const out = new Int32Array(v.length);
  for (let i = 0; i < v.length; i++) {
    const x = v[i]!;
    if (!(Number.isInteger(x) && x >= 0 && x < G)) return 'bad';
    out[i] = x;
  }
  return out;
}

export type { FiledProblem as DatasetProblem };

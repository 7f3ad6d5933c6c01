/**
 * Datasets of many graphs from files and folders, read the way `hopscope check` reads them (the
 * same walk, siblings, manifests and readers of node/load.ts) and checked per graph. For the
 * analyses (the accuracy ceiling, the viewer's table of graphs): `inRange(dataset)` from
 * core/datasets/check.ts gives the dataset with out-of-range and cross-graph edges dropped.
 */
import type { Problem } from '../core/formats/types';
import type { Dataset } from '../core/datasets/model';
import type { CheckSetOptions } from '../core/checks/check-set';
import * as path from 'node:path';
import { checkPaths, type LoadOptions } from './load';

export { inRange } from '../core/datasets/check';

export interface DatasetLoadOptions extends LoadOptions {
  /** Declared options (direction, self-loop policy) as `hopscope check` takes them. */
  check?: CheckSetOptions;
}

export interface LoadedDataset {
  dataset: Dataset;
  /** The dataset's problems (layout and per-graph checks), each with `graph` / `graphs` where it applies. */
  problems: Problem[];
  /** The files it was read from. */
  files: string[];
}

/**
 * Every dataset of many graphs in `paths` (files or folders). A layout recognised but not buildable
 * (broken offsets) is left out: `hopscope check` reports why.
 */
export async function loadDatasets(paths: string[], opts: DatasetLoadOptions = {}): Promise<LoadedDataset[]> {
  return readDatasets(paths, opts);
}

/** `loadDatasets` for synchronous callers (the command line's commands, the worker's handlers). */
export function readDatasets(paths: string[], opts: DatasetLoadOptions = {}): LoadedDataset[] {
  const { check, ...load } = opts;
  const result = checkPaths(paths, check ?? {}, load);
  const out: LoadedDataset[] = [];
  for (const d of result.datasets ?? []) {
    if (!d.dataset || !d.checked) continue;
    out.push({ dataset: d.dataset, problems: d.problems.map((p) => p.problem), files: d.files });
  }
  return out;
}

/**
 * The datasets `file` takes part in: as the file holding their edges, or as one of the files they
 * were read from (a file read with its siblings can bring in other datasets, which are left out).
 */
export function datasetsOf(file: string, opts: DatasetLoadOptions = {}): LoadedDataset[] {
  const abs = path.resolve(file);
  return readDatasets([abs], opts)
    .filter((d) => path.resolve(d.dataset.structureFile) === abs || d.files.some((f) => path.resolve(f) === abs));
}

/**
 * Of the datasets a file takes part in (`datasetsOf`), the one it names: the only one, or the one
 * whose edges it holds. Null when there is none, or several and none holds its edges in this file.
 */
export function datasetNamedBy(found: readonly LoadedDataset[], file: string): LoadedDataset | null {
  if (found.length === 1) return found[0]!;
  const abs = path.resolve(file);
  return found.find((d) => path.resolve(d.dataset.structureFile) === abs) ?? null;
}

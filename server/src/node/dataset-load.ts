/**
 * Datasets of many graphs from files and folders, read the way `hopscope check` reads them (the
 * same walk, siblings, manifests and readers of node/load.ts) and checked per graph. For the
 * analyses (the accuracy ceiling, the viewer's table of graphs): `inRange(dataset)` from
 * core/datasets/check.ts gives the dataset with out-of-range and cross-graph edges dropped.
 */
import type { Problem } from '../core/formats/types';
import type { Dataset } from '../core/datasets/model';
import type { CheckSetOptions } from '../core/checks/check-set';
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

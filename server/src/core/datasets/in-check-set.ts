/**
 * The check set's hook for datasets of many graphs: finds them among the files not yet claimed,
 * checks each per graph, and says which files they claim (the one-graph checks then leave those
 * alone), which problems go on which file and which file carries the dataset summary.
 */
import type { DatasetSummary, Problem } from '../../../../common/report';
import type { Role } from '../formats/types';
import type { Dataset } from './model';
import { findDatasets, type DatasetInputFile } from './read';
import { checkDataset, summarise, type DatasetCheckOptions } from './check';
import type { FiledProblem } from './read-common';
import { datasetFromManifest, type DatasetManifestGraph, type LookedUp } from './manifest';
import type { FoundDataset } from './read-slices';

/** The manifests' dataset entries, and how to find the files they name. */
export interface DatasetManifests {
  manifests: ReadonlyArray<{ path: string; manifest: { graphs: ReadonlyArray<{ name: string; dataset?: DatasetManifestGraph }> } }>;
  lookup: (manifestPath: string, file: string) => LookedUp | undefined;
  /** Problems of the manifests themselves (a named file missing) go here. */
  problems: Array<{ path: string; problem: Problem }>;
}

export interface CheckedDataset {
  /** Undefined when the layout was recognised but could not be built (problems say why). */
  dataset?: Dataset;
  files: string[];
  problems: FiledProblem[];
  summary?: { file: string; summary: DatasetSummary };
  /** False when a focus left it out: files claimed, nothing checked. */
  checked: boolean;
  /** The role each tensor plays in the dataset, for the tensor tables (file, tensor name, role). */
  roles: Array<{ file: string; tensor: string; role: Role }>;
}

/** Roles of the dataset's tensors: edges, features, labels; everything else (offsets, counts) unknown. */
function rolesOf(ds: Dataset): CheckedDataset['roles'] {
  const out: CheckedDataset['roles'] = [];
  if (ds.edgeTensor) out.push({ file: ds.edgeTensor.file, tensor: ds.edgeTensor.tensor, role: 'edge-index' });
  if (ds.nodeFeatures) out.push({ file: ds.nodeFeatures.file, tensor: ds.nodeFeatures.tensor, role: 'features' });
  if (ds.nodeLabels) out.push({ file: ds.nodeLabels.file, tensor: ds.nodeLabels.tensor, role: 'labels' });
  if (ds.graphLabels) out.push({ file: ds.graphLabels.file, tensor: ds.graphLabels.tensor, role: 'labels' });
  if (ds.edgeFeatures) out.push({ file: ds.edgeFeatures.file, tensor: ds.edgeFeatures.tensor, role: 'edge-features' });
  return out;
}

export function checkDatasetsIn(
  files: readonly DatasetInputFile[],
  optionsFor: (path: string) => DatasetCheckOptions,
  focus?: (path: string) => boolean,
  declared?: DatasetManifests,
): CheckedDataset[] {
  const out: CheckedDataset[] = [];
  const fromManifests: FoundDataset[] = [];
  for (const m of declared?.manifests ?? []) {
    for (const g of m.manifest.graphs) {
      if (!g.dataset) continue;
      const r = datasetFromManifest(g.name, g.dataset, (f) => declared!.lookup(m.path, f));
      for (const message of r.missing) declared!.problems.push({ path: m.path, problem: { code: 'unreadable', severity: 'error', count: 1, message } });
      if (r.found) fromManifests.push(r.found);
    }
  }
  const taken = new Set(fromManifests.flatMap((f) => f.files));
  for (const found of [...fromManifests, ...findDatasets(files.filter((f) => !taken.has(f.path)))]) {
    const checked = !focus || found.files.some(focus);
    const item: CheckedDataset = { files: found.files, problems: [], checked, roles: found.dataset ? rolesOf(found.dataset) : [] };
    if (!checked) { out.push(item); continue; }
    item.problems.push(...found.problems);
    if (found.dataset) {
      const ds = found.dataset;
      item.dataset = ds;
      item.problems.push(...checkDataset(ds, optionsFor(ds.structureFile)));
      item.summary = { file: ds.structureFile, summary: summarise(ds) };
    }
    out.push(item);
  }
  return out;
}

/** A dataset's problems without their files (for callers that want one list). */
export function problemsOf(d: CheckedDataset): Problem[] {
  return d.problems.map((p) => p.problem);
}

import type { DatasetInputFile } from './read-common';
import type { FoundDataset } from './read-slices';
export function readFolders(_files: readonly DatasetInputFile[]): FoundDataset[] { return []; }

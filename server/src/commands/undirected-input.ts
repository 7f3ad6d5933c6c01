/**
 * Loading a graph into its undirected view, for the structure commands (`wl`, `compare`,
 * `bottlenecks`, `spectrum`).
 */
import type { CliIo } from './types';
import { loadGraph, type LoadedGraph } from '../node/graph-input';
import type { CheckSetOptions } from '../core/checks/check-set';
import { undirectedView, type UndirectedGraph } from '../core/graph/structure/undirected';

export interface StructureInput {
  loaded: LoadedGraph;
  g: UndirectedGraph;
  /** Added to node ids in output, so they read as written in the file. */
  base: number;
}

export function loadUndirected(file: string, options: CheckSetOptions, command: string, io: CliIo): StructureInput {
  const loaded = loadGraph(file, options);
  const errors = loaded.problems.filter((p) => p.severity === 'error').length;
  if (errors) {
    io.err(`hopscope ${command}: note: ${file} has ${errors} error${errors === 1 ? '' : 's'} (see hopscope check); the analysis uses the edges that are in range\n`);
  }
  return { loaded, g: undirectedView(loaded.fwd, loaded.rev), base: loaded.figures.indexBase };
}

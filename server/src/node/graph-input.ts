/**
 * Loads one graph for the analyses (receptive field, 1-WL, spectrum, …): reads the file (and its
 * siblings/manifest, like `hopscope check`), runs the checks, and returns the CSR graph built
 * from the in-range edges plus the per-node tensors.
 */
import * as path from 'node:path';
import type { Csr } from '../core/graph/csr';
import type { DenseTensor, Problem } from '../core/formats/types';
import type { CheckSetOptions } from '../core/checks/check-set';
import type { GraphFigures, GraphOptions } from '../core/checks/graph-check';
import { checkPaths } from './load';

export interface LoadedGraph {
  file: string;
  /** Node count (see the README's `nodes` figure). */
  n: number;
  /** In-range edge entries, 0-based: src[k] → dst[k] (row 0 / first column = sender by default). */
  src: Int32Array;
  dst: Int32Array;
  /** Rows sorted: fwd row u = targets of u; rev row v = sources of edges into v. */
  fwd: Csr;
  rev: Csr;
  features?: DenseTensor;
  labels?: DenseTensor;
  figures: GraphFigures;
  /** Problems found on the way (the analyses still run on the in-range edges). */
  problems: Problem[];
  options: GraphOptions;
  /** The files the graph was read from (absolute): the structure file, siblings, manifest parts. */
  files: string[];
}

export class GraphLoadError extends Error {
  override readonly name = 'GraphLoadError';
}

export function loadGraph(file: string, options: CheckSetOptions = {}): LoadedGraph {
  // A text file that is not an edge list is one clear `unreadable` ("not an edge list: …").
  const r = checkPaths([file], options, { refuseNamedText: true });
  if (r.missing.length) throw new GraphLoadError(`${file}: no such file`);
  if (r.unsupported.length) throw new GraphLoadError(`${file}: not a supported graph file`);
  const report = r.files[0];
  const unreadable = report?.problems.find((p) => p.code === 'unreadable');
  if (!report || unreadable) throw new GraphLoadError(unreadable?.message ?? `${file}: could not be read`);
  const abs = path.resolve(file);
  const g = r.graphs.find((x) => x.check.structureFile !== null && path.resolve(x.check.structureFile) === abs && x.check.structure);
  if (!g || !g.check.structure || !g.check.figures) {
    throw new GraphLoadError(`${file}: no edge index or adjacency matrix found (tensors: ${report.tensors.map((t) => `${t.name} ${t.role}`).join(', ') || 'none'})`);
  }
  const s = g.check.structure;
  const parts = g.check.parts;
  const dense = (role: string) => parts.find((p) => p.guess.role === role && p.tensor.kind === 'dense')?.tensor as DenseTensor | undefined;
  const features = dense('features');
  const labels = dense('labels');
  return {
    file, n: s.figures.nodes, src: s.src, dst: s.dst, fwd: s.fwd, rev: s.rev,
    ...(features ? { features } : {}), ...(labels ? { labels } : {}),
    figures: g.check.figures, problems: report.problems, options: g.check.options,
    files: g.files.map((f) => path.resolve(f)),
  };
}

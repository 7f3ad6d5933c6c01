/**
 * Loads one graph for the analyses (receptive field, 1-WL, spectrum, …): reads the file (and its
 * siblings/manifest, like `hopscope check`), runs the checks, and returns the CSR graph built
 * from the in-range edges plus the per-node tensors. With `options.lean` (the analysis commands
 * without --check) only the bounds pass runs: `problems` then holds what it found (ids out of
 * range, lengths that disagree), `figures` only nodes, edges and the index base (the rest NaN),
 * and `fwd` / `rev` are each built when first read.
 */
import * as path from 'node:path';
import type { Csr } from '../core/graph/structure/csr';
import type { DenseTensor, Problem } from '../core/formats/types';
import type { CheckSetOptions } from '../core/checks/check-set';
import type { GraphFigures, GraphOptions } from '../core/checks/graph-check';
import { checkPaths, type LoadOptions } from './load';
import { isTypedCheck, type TypeSpace } from '../core/typed/check';

export interface LoadedGraph {
  file: string;
  /** Node count (see the README's `nodes` figure). */
  n: number;
  /** In-range edge entries, 0-based: src[k] → dst[k] (row 0 / first column = sender by default). */
  src: Int32Array;
  dst: Int32Array;
  /** Rows sorted: fwd row u = targets of u; rev row v = sources of edges into v (built on first read when lean). */
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
  /** A typed graph (core/typed): how its node types share the id space of this (types-forgotten) graph. */
  types?: TypeSpace;
  /** A typed graph: each type's label tensor (by type index, ids within the type), where it has one. */
  typeLabels?: Array<DenseTensor | undefined>;
}

export class GraphLoadError extends Error {
  override readonly name = 'GraphLoadError';
}

/**
 * `load` carries the graph store's cache, size limit, exclusions and cancellation (the worker);
 * the command line passes nothing.
 */
export function loadGraph(file: string, options: CheckSetOptions = {}, load: LoadOptions = {}): LoadedGraph {
  if (load.exclude?.(path.resolve(file))) {
    throw new GraphLoadError(`${file} is left out by the files.exclude or hopscope.exclude setting, so Hopscope does not read it. Remove the pattern that matches it to analyse it.`);
  }
  // A text file that is not an edge list is one clear `unreadable` ("not an edge list: …").
  const r = checkPaths([file], options, { ...load, refuseNamedText: true });
  if (r.missing.length) throw new GraphLoadError(`${file}: no such file`);
  if (r.unsupported.length) throw new GraphLoadError(`${file}: not a supported graph file`);
  const report = r.files[0];
  const unreadable = report?.problems.find((p) => p.code === 'unreadable');
  if (!report || unreadable) throw new GraphLoadError(unreadable?.message ?? `${file}: could not be read`);
  const abs = path.resolve(file);
  const g = r.graphs.find((x) => x.check.structureFile !== null && path.resolve(x.check.structureFile) === abs && x.check.structure) ??
    // A typed graph of sibling files is found from any of its files.
    r.graphs.find((x) => isTypedCheck(x.check) && x.check.structure && x.files.some((f) => path.resolve(f) === abs));
  const ds = !g ? r.datasets?.find((d) => d.dataset && d.files.some((f) => path.resolve(f) === abs)) : undefined;
  if (ds?.dataset) {
    throw new GraphLoadError(`${file} holds a dataset of ${ds.dataset.graphs} graphs (see hopscope check); this analysis takes one graph at a time (hopscope ceiling takes the whole dataset)`);
  }
  if (!g || !g.check.structure || !g.check.figures) {
    throw new GraphLoadError(`${file}: no edge index or adjacency matrix found (tensors: ${report.tensors.map((t) => `${t.name} ${t.role}`).join(', ') || 'none'})`);
  }
  const s = g.check.structure;
  if (s.ids) throw new GraphLoadError(tooManyNodes(file, g.check.figures, s.ids));
  const parts = g.check.parts;
  const dense = (role: string) => parts.find((p) => p.guess.role === role && p.tensor.kind === 'dense')?.tensor as DenseTensor | undefined;
  // A typed graph's per-node tensors are per type: none of them covers the types-forgotten graph.
  const features = isTypedCheck(g.check) ? undefined : dense('features');
  const labels = isTypedCheck(g.check) ? undefined : dense('labels');
  return {
    file, n: s.figures.nodes, src: s.src, dst: s.dst,
    // Read through: a lean reading (options.lean) builds each direction on first use.
    get fwd() { return s.fwd; }, get rev() { return s.rev; },
    ...(features ? { features } : {}), ...(labels ? { labels } : {}),
    figures: g.check.figures, problems: report.problems, options: g.check.options,
    files: g.files.map((f) => path.resolve(f)),
    ...(isTypedCheck(g.check) ? {
      types: g.check.typed.space,
      typeLabels: g.check.typed.graph.nodeTypes.map((t) => t.parts.find((p) => p.guess.role === 'labels' && p.tensor.kind === 'dense')?.tensor as DenseTensor | undefined),
    } : {}),
  };
}

/**
 * Why a graph checked on its touched ids (see GraphCheck.structure.ids) is not analysed: the
 * analyses keep several numbers per node, for every node id.
 */
function tooManyNodes(file: string, figures: GraphFigures, ids: Float64Array): string {
  const touched = ids.length;
  const base = figures.indexBase;
  if (figures.nodes === touched) {
    const largest = (touched ? ids[touched - 1]! : 0) + base;
    return `${file}: its node ids are sparse (${touched} distinct id${touched === 1 ? '' : 's'} up to ${largest}); the analyses ` +
      `index nodes by id and would need memory for ${largest + 1 - base} nodes. Renumber the ids to ${base}..${touched - 1 + base} ` +
      'first (e.g. np.unique(edge_index, return_inverse=True)); hopscope check reports this file as it is.';
  }
  return `${file}: the graph has ${figures.nodes} nodes (its declared node count, feature rows or size line) but its edges ` +
    `touch only ${touched}; the analyses keep several numbers per node and are not run on a graph this large and this empty. ` +
    'Check the node count; hopscope check reports this file as it is.';
}

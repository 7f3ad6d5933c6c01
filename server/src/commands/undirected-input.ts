/**
 * Loading a graph into its undirected view, for the structure commands (`wl`, `compare`,
 * `bottlenecks`, `spectrum`).
 */
import type { CliIo } from './types';
import { loadGraph, type LoadedGraph } from '../node/graph-input';
import type { CheckSetOptions } from '../core/checks/check-set';
import { undirectedView, type UndirectedGraph } from '../core/graph/structure/undirected';
import { phaseTotals, timed } from '../core/timing';

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
  const fwd = loaded.fwd, rev = loaded.rev;
  return { loaded, g: timed('view', () => undirectedView(fwd, rev)), base: loaded.figures.indexBase };
}

/**
 * With HOPSCOPE_TIMINGS set (the benchmarks), one stderr line of phase times in ms: read, checks
 * (the bounds pass, or the whole check with --check; CSR building excluded), build (CSR directions),
 * view (undirected view), analysis (the rest), total.
 */
export function printTimings(io: CliIo, started: number, options: CheckSetOptions): void {
  if (!process.env.HOPSCOPE_TIMINGS) return;
  const ph = phaseTotals();
  const r = (x: number) => Math.round(x * 10) / 10;
  const total = performance.now() - started;
  const read = ph.read ?? 0, build = ph.build ?? 0, view = ph.view ?? 0;
  // A full check (--check) builds both directions inside its own phase; a lean reading after it.
  const checks = (ph.checks ?? 0) - (options.lean ? 0 : build);
  io.err(`HOPSCOPE_TIMINGS ${JSON.stringify({
    read: r(read), checks: r(checks), build: r(build), view: r(view), analysis: r(total - read - checks - build - view), total: r(total),
    peakRssMiB: r(process.resourceUsage().maxRSS / 1024),
  })}\n`);
}

/**
 * The edges as pairs: self-loops (a warning when the graph declares them forbidden), duplicate
 * entries, and edges without their reverse when the graph is, or looks, undirected (most pairs
 * have their reverse). When no pair has its reverse and nothing is declared, both readings are
 * told (directed, or undirected stored once per edge) as information.
 */
import { MAX_LOCATIONS } from '../../formats/types';
import { CODES } from '../../../../../common/problem-codes';
import { asymmetricExamples, duplicateExamples } from '../../graph/structure/figures';
import type { GraphContext } from './context';
import { describe, EXAMPLES_IN_MESSAGE } from './locations';

export function checkSelfLoops(g: GraphContext): void {
  const f = g.structure.figures;
  if (f.selfLoops === 0) return;
  const { src: gSrc, dst: gDst } = g.kept;
  const ids: number[] = [];
  for (let j = 0; j < gSrc.length && ids.length < MAX_LOCATIONS; j++) if (gSrc[j] === gDst[j]) ids.push(j);
  const locs = edgeLocs(g, ids, (k) => `self-loop ${arrow(g, k)}`);
  const forbidden = g.opts.selfLoops === 'forbidden';
  g.report(g.edges.part, 'self-loops',
    `${f.selfLoops} self-loop${f.selfLoops === 1 ? '' : 's'} (${locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')}). ` +
    (forbidden
      ? 'This graph declares self-loops forbidden: remove them.'
      : 'Layers that add self-loops themselves (GCN normalisation) will count these twice; remove them or skip that step.'),
    f.selfLoops, locs, forbidden ? 'warning' : CODES['self-loops'].severity);
}

export function checkDuplicates(g: GraphContext): void {
  const f = g.structure.figures;
  if (f.duplicateEdges === 0) return;
  const ids = duplicateExamples(g.structure.fwd, g.kept.src, g.kept.dst, MAX_LOCATIONS);
  const locs = edgeLocs(g, ids, (k) => `repeat of ${arrow(g, k)}`);
  g.report(g.edges.part, 'duplicate-edges',
    `${f.duplicateEdges} duplicate edge entr${f.duplicateEdges === 1 ? 'y' : 'ies'} (${locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')}). ` +
    'Sum aggregation counts such a neighbour several times and degrees are inflated; coalesce the edges (or keep one entry per pair).',
    f.duplicateEdges, locs);
}

export function checkSymmetry(g: GraphContext): void {
  const { structure, kept: { src: gSrc, dst: gDst }, edges, opts, report } = g;
  const f = structure.figures;
  const sp = edges.part;
  if (f.asymmetricPairs > 0 && opts.directed !== true) {
    const reciprocity = f.distinctNonLoopPairs > 0 ? 1 - f.asymmetricPairs / f.distinctNonLoopPairs : 0;
    const declaredUndirected = opts.directed === false;
    if (declaredUndirected || reciprocity >= 0.5) {
      const ids = asymmetricExamples(structure.fwd, gSrc, gDst, MAX_LOCATIONS);
      const locs = edgeLocs(g, ids, (k) => `${arrow(g, k)} has no ${edges.raw(k, 1)} → ${edges.raw(k, 0)}`);
      const why = declaredUndirected
        ? 'The graph is declared undirected'
        : `${Math.round(reciprocity * 100)}% of the other pairs have their reverse, so the graph looks undirected`;
      report(sp, 'asymmetric-adjacency',
        `${f.asymmetricPairs} edge${f.asymmetricPairs === 1 ? '' : 's'} without a reverse edge (${locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')}). ` +
        `${why}: messages will travel one way only along these. Add the missing reverse edges, or declare the graph directed.`,
        f.asymmetricPairs, locs, declaredUndirected ? 'error' : CODES['asymmetric-adjacency'].severity);
    } else if (opts.directed === undefined && f.asymmetricPairs === f.distinctNonLoopPairs) {
      // Not one pair has its reverse: either a directed graph, or an undirected one stored with
      // each edge once (the usual layout of published edge-list files). Say both readings.
      const ids = asymmetricExamples(structure.fwd, gSrc, gDst, EXAMPLES_IN_MESSAGE);
      const locs = edgeLocs(g, ids, (k) => `${arrow(g, k)} has no ${edges.raw(k, 1)} → ${edges.raw(k, 0)}`);
      report(sp, 'asymmetric-adjacency',
        `None of the ${f.asymmetricPairs} edge${f.asymmetricPairs === 1 ? '' : 's'} has its reverse (${locs.map(describe).join('; ')}). ` +
        'An undirected graph stored with each edge once looks like this, and a message-passing layer then sends ' +
        'messages one way only. If the graph is undirected, add the reverse edges (a quick fix does it for text edge lists); ' +
        'if it is directed, declare it: "directed": true in hopscope.json (or --directed).',
        f.asymmetricPairs, locs, 'info');
    }
  }
}

/** Locations of kept edges `ids` (indices into the built graph's edges), each with a phrase. */
function edgeLocs(g: GraphContext, ids: number[], what: (k: number) => string) {
  return ids.map((j) => {
    const k = g.kept.orig(j);
    const loc = g.edges.locate(k, 'edge');
    loc.detail = loc.detail ? `${what(k)} at ${loc.detail}` : what(k);
    return loc;
  });
}

/** Edge k of the source as written, "a → b". */
function arrow(g: GraphContext, k: number): string {
  return `${g.edges.raw(k, 0)} → ${g.edges.raw(k, 1)}`;
}

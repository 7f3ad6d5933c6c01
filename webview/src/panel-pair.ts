/**
 * Pair mode of the panel (link prediction): what a model sees of the pair (U, V). The server's
 * answer (hopscope/pairField) is turned into the shape the stage draws — the union of both fields,
 * hop = distance to the nearer end, U at index 0 and V at index 1 — and the pair's own edge is
 * found among the drawn edges so the stage can mark it. Pure functions: no DOM.
 */
import type { FieldViewPayload, PairFieldPayload } from '../../common/protocol';
import { pct, plural } from './panel-numbers';

/** The words drawn beside the pair's own edge when the message-passing graph holds it. */
export const PAIR_EDGE_NOTE = 'pair edge in the message graph';

/** The pair's union drawn like one field: hop = distance to the nearer end; every node weighs the same. */
export function pairAsView(p: PairFieldPayload): FieldViewPayload {
  const hops = p.ids.map((_, i) => nearer(p.hopsU[i]!, p.hopsV[i]!));
  const shownPerHop = new Array<number>(p.layers + 1).fill(0);
  for (const k of hops) shownPerHop[k]!++;
  return {
    file: p.file, node: p.u, layers: p.layers, sendingRow: p.sendingRow, symmetrised: p.symmetrised, selfLoops: p.selfLoops,
    graphNodes: p.graphNodes, indexBase: p.indexBase,
    perHop: p.perHop.union, total: p.total.union, coverage: p.coverage, centreInField: true,
    ids: p.ids, hops, weights: p.ids.map(() => 1),
    shown: p.shown, shownPerHop, sampled: p.sampled,
    edges: p.edges, edgeDirs: p.edgeDirs, edgesTotal: p.edgesTotal,
    coverageCurve: { layers: [], median: [], p90: [], sampled: 0, allNodes: true },
    hasFeatures: false, fileErrors: p.fileErrors,
  };
}

function nearer(a: number, b: number): number {
  return a < 0 ? b : b < 0 ? a : Math.min(a, b);
}

/** Index of the drawn edge between U (index 0) and V (index 1), or -1 when the graph has none. */
export function pairEdgeIndex(p: PairFieldPayload): number {
  for (let e = 0; 2 * e + 1 < p.edges.length; e++) if (p.edges[2 * e] === 0 && p.edges[2 * e + 1] === 1) return e;
  return -1;
}

/** The tooltip text of drawn node i: its distances to both ends. */
export function pairNodeTitle(p: PairFieldPayload, i: number): string {
  const side = (h: number, end: number) => (h < 0 ? `outside node ${end}'s field` : h === 0 ? `node ${end} itself` : `hop ${h} from node ${end}`);
  if (i === 0) return `node ${p.u} · first end of the pair`;
  if (i === 1) return `node ${p.v} · second end of the pair`;
  return `node ${p.ids[i]} · ${side(p.hopsU[i]!, p.u)} · ${side(p.hopsV[i]!, p.v)}`;
}

/** The panel's summary line in pair mode. */
export function pairSummary(p: PairFieldPayload): string {
  const L = plural(p.layers, 'layer');
  const how = p.symmetrised ? 'messages both ways' : p.sendingRow === 0 ? 'row 0 sends to row 1' : 'row 1 sends to row 0';
  let text = `Nodes ${p.u} and ${p.v} hear from ${plural(p.total.union, 'node')} together — ${pct(p.coverage)} of ${p.graphNodes.toLocaleString('en-US')} — after ${L} (${how}); ${plural(p.total.overlap, 'node')} reach both.`;
  const e = p.pairEdge;
  if (e.uToV || e.vToU) {
    const stored = [e.uToV ? `${p.u} → ${p.v}` : '', e.vToU ? `${p.v} → ${p.u}` : ''].filter(Boolean).join(' and ');
    text += ` The message-passing graph holds the pair's own edge (${stored}): a model asked to predict this pair sees it. If the pair is a validation or test positive, remove the edge from the message-passing edges.`;
  } else {
    text += ` No edge joins ${p.u} and ${p.v} in the message-passing graph.`;
  }
  const d = p.distanceWithoutPairEdge;
  text += d === null ? ' Without their own edge no path joins them.' : ` Without their own edge they are ${plural(d, 'hop')} apart (direction ignored).`;
  if (p.sampled) text += ` Showing the nearest ${p.shown.toLocaleString('en-US')} of ${p.total.union.toLocaleString('en-US')}.`;
  if (p.fileErrors) text += ` The file has ${plural(p.fileErrors, 'error')}; only in-range edges are used.`;
  return text;
}

/**
 * The receptive field across node types: which type each node of the types-forgotten graph
 * belongs to (type t owns ids offsets[t] .. offsets[t + 1] - 1), and a field's members counted per
 * hop and per type (a paper's 2-hop field: how many authors, how many papers at each hop).
 */
import type { TypeSpace } from './check';

/** The type index of types-forgotten id u (offsets ascending; binary search). */
export function typeOfId(offsets: ArrayLike<number>, u: number): number {
  let lo = 0, hi = offsets.length - 2;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (offsets[mid]! <= u) lo = mid; else hi = mid - 1;
  }
  return lo;
}

/** `counts[k][t]`: members at hop k of type t, from the members and their hop distances. */
export function perHopByType(space: TypeSpace, nodes: ArrayLike<number>, hops: ArrayLike<number>, layers: number): number[][] {
  const T = space.names.length;
  const out: number[][] = [];
  for (let k = 0; k <= layers; k++) out.push(new Array<number>(T).fill(0));
  for (let i = 0; i < nodes.length; i++) {
    const k = hops[i]!;
    if (k >= 0 && k <= layers) out[k]![typeOfId(space.offsets, nodes[i]!)]!++;
  }
  return out;
}

/** `TYPE:ID` → the types-forgotten id, or a sentence saying why not. */
export function typedNodeId(space: TypeSpace, type: string, id: number): number | { error: string } {
  const t = space.names.indexOf(type);
  if (t < 0) return { error: `node type "${type}" is not in the graph (types: ${space.names.join(', ')})` };
  const n = space.counts[t]!;
  if (!Number.isInteger(id) || id < 0 || id >= n) return { error: `${type} ${id} is out of range: the graph has ${n} ${type} node${n === 1 ? '' : 's'} (ids 0..${n - 1})` };
  return space.offsets[t]! + id;
}

/**
 * Edge ids that name no node (below 0, or at or beyond the node count) are reported, and the
 * graph is built from the in-range, whole-number edges only. When the node count is beyond what
 * per-node arrays may hold (denseNodeLimit), the graph is built on the ids its edges touch,
 * renumbered 0..N-1 in order: untouched ids are counted, never stored.
 */
import { MAX_LOCATIONS, type ProblemLocation } from '../../formats/types';
import { compactIds } from '../../graph/structure/compact';
import type { CheckContext } from './context';
import type { EdgeSource } from './edge-source';
import type { NodeCount } from './node-count';
import type { IndexBase } from './index-base';
import { describe, EXAMPLES_IN_MESSAGE } from './locations';

/** The edges the graph is built from. */
export interface GraphEdges {
  /** Endpoints of the kept edges, as nodes of the built graph. */
  src: Int32Array;
  dst: Int32Array;
  /** Index in the edge source of kept edge j. */
  orig(j: number): number;
  /** Set when the graph is built on the ids its edges touch: compact node c is id nodeIds[c]. */
  nodeIds: Float64Array | undefined;
  /** The node count is beyond per-node arrays (the graph is built on the touched ids). */
  wide: boolean;
  /** …and the ids are a sparse numbering: the graph's nodes are its distinct ids. */
  sparseIds: boolean;
  /** Endpoint of edge k as a 0-based id (ids beyond int32 come from the tensor itself). */
  idOf(k: number, side: 0 | 1): number;
}

export function keepInRange(ctx: CheckContext, edges: EdgeSource, count: NodeCount, base: IndexBase): GraphEdges {
  const { report } = ctx;
  const { n, minId, maxId, denseLimit, idsLookSparse, blameFeatures, featureRows, nSource } = count;
  const { indexBase, src, dst, shiftBy } = base;
  const sp = edges.part;
  const e = edges.src.length;
  let outOfRange = 0;
  const oorExamples: number[] = [];
  const flags = edges.flags;
  /** Endpoint of edge k as a 0-based id (ids beyond int32 come from the tensor itself). */
  const idOf = (k: number, side: 0 | 1): number =>
    flags && flags[k]! & (side === 0 ? 4 : 8) ? edges.raw(k, side) - shiftBy : (side === 0 ? src : dst)[k]!;
  const wide = n > denseLimit;
  const sparseIds = wide && idsLookSparse;
  // Every id flagged or in range is known from the range alone: the common case skips the pass.
  const allInRange = !flags && (e === 0 || (minId >= 0 && maxId < n));
  for (let k = 0; k < e && !allInRange; k++) {
    const f = flags ? flags[k]! : 0;
    if ((f & 3) !== 0) continue; // non-integer: reported separately, left out
    const a = f & 4 ? idOf(k, 0) : src[k]!, b = f & 8 ? idOf(k, 1) : dst[k]!;
    if (a < 0 || a >= n || b < 0 || b >= n) {
      outOfRange++;
      if (oorExamples.length < MAX_LOCATIONS) oorExamples.push(k);
    }
  }
  if (outOfRange > 0) {
    const locs: ProblemLocation[] = [];
    for (const k of oorExamples) {
      for (const side of [0, 1] as const) {
        const v = idOf(k, side);
        const bad = v < 0 || v >= n;
        if (bad && locs.length < MAX_LOCATIONS) {
          const loc = edges.locate(k, side);
          loc.detail = loc.detail ? `${loc.detail} = ${edges.raw(k, side)}` : `id ${edges.raw(k, side)}`;
          locs.push(loc);
        }
      }
    }
    const ex = locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ');
    const hint = sparseIds ? 'Node ids must be 0 or more.' : blameFeatures || featureRows === undefined || featureRows === n
      ? `Node ids must lie in ${indexBase}..${n - 1 + indexBase} (${n} nodes from ${nSource}).`
      : `Node ids must lie in ${indexBase}..${n - 1 + indexBase}.`;
    report(sp, 'index-out-of-range',
      `${outOfRange} edge entr${outOfRange === 1 ? 'y refers' : 'ies refer'} to nodes that do not exist: ${ex}. ${hint} ` +
      `Those entries are left out of the graph figures; gather/scatter on them fails or reads another node's row.`,
      outOfRange, locs);
  }

  // Keep the in-range, integer edges.
  let keep: Int32Array | null = null;
  let gSrc = src, gDst = dst;
  /** Set when the graph is checked on the ids its edges touch: compact node c is id nodeIds[c]. */
  let nodeIds: Float64Array | undefined;
  if (wide) {
    // Too many nodes for per-node arrays: keep the in-range edges as ids, then renumber the
    // touched ids 0..N-1 (in order). Untouched ids are counted, never stored.
    const m = e - outOfRange - edges.nonInteger;
    const fs = new Float64Array(m), fd = new Float64Array(m);
    if (m < e) keep = new Int32Array(m);
    let j = 0;
    for (let k = 0; k < e; k++) {
      const fl = flags ? flags[k]! : 0;
      if (fl & 3) continue;
      const a = fl & 4 ? idOf(k, 0) : src[k]!, b = fl & 8 ? idOf(k, 1) : dst[k]!;
      if (a < 0 || a >= n || b < 0 || b >= n) continue;
      if (keep) keep[j] = k;
      fs[j] = a; fd[j] = b; j++;
    }
    const c = compactIds(fs, fd);
    gSrc = c.src; gDst = c.dst; nodeIds = c.ids;
  } else if (outOfRange > 0 || edges.nonInteger > 0) {
    const m = e - outOfRange - edges.nonInteger;
    keep = new Int32Array(m); gSrc = new Int32Array(m); gDst = new Int32Array(m);
    let j = 0;
    for (let k = 0; k < e; k++) {
      const f = flags ? flags[k]! : 0;
      const a = src[k]!, b = dst[k]!;
      if (f !== 0 || a < 0 || a >= n || b < 0 || b >= n) continue;
      keep[j] = k; gSrc[j] = a; gDst[j] = b; j++;
    }
  }
  return { src: gSrc, dst: gDst, orig: (j) => (keep ? keep[j]! : j), nodeIds, wide, sparseIds, idOf };
}

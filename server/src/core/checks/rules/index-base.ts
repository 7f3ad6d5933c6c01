/**
 * The index base of an edge index: 1-based ids shifted to 0-based when declared so (the node
 * count from the ids follows), and ids that look 1-based reported when nothing was declared (no
 * id 0, and the largest id equals the node count).
 */
import type { CheckContext } from './context';
import type { EdgeSource } from './edge-source';
import type { NodeCount } from './node-count';

export interface IndexBase {
  /** The base ids are written in (reported in the figures and messages). */
  indexBase: 0 | 1;
  /** Endpoints as 0-based ids (the tensor's own arrays when no shift was needed). */
  src: Int32Array;
  dst: Int32Array;
  /** What was subtracted from each id (1 for a declared 1-based edge index, else 0). */
  shiftBy: 0 | 1;
}

/** The index base, and the node count with its id range made 0-based. */
export function readIndexBase(ctx: CheckContext, edges: EdgeSource, count: NodeCount): { base: IndexBase; count: NodeCount } {
  const { opts, report } = ctx;
  const sp = edges.part;
  const isIndex = sp.guess.role === 'edge-index';
  const e = edges.src.length;
  let { n, maxId, minId } = count;
  const { nodeCountFromIds, idsLookSparse, nSource } = count;
  let indexBase: 0 | 1 = sp.hints?.indexBase ?? 0;
  let src = edges.src, dst = edges.dst;
  if (isIndex && opts.indexBase === 1) {
    indexBase = 1;
    src = shift(src); dst = shift(dst);
    if (nodeCountFromIds) n = Math.max(0, maxId);
    maxId -= 1; minId -= 1;
  } else if (isIndex && opts.indexBase === undefined && e > 0 && minId === 1 && !idsLookSparse &&
    (nodeCountFromIds || maxId === n)) {
    const zeroNote = nodeCountFromIds
      ? `no id is 0, so node 0 would be an isolated phantom node`
      : `no id is 0 and the largest id equals the node count ${n} (${nSource})`;
    report(sp, 'one-based-index',
      `${sp.tensor.name}: ids run from 1 to ${maxId}: ${zeroNote}. If the ids are 1-based, subtract 1 ` +
      `(or declare indexBase 1 in hopscope.json / pass --index-base 1).`, 1, [edges.locate(firstWith(edges, 1), 'edge')]);
  }
  const shiftBy = isIndex && opts.indexBase === 1 ? 1 : 0;
  return { base: { indexBase, src, dst, shiftBy }, count: { ...count, n, maxId, minId } };
}

function shift(a: Int32Array): Int32Array {
  const out = new Int32Array(a.length);
  for (let i = 0; i < a.length; i++) out[i] = a[i]! - 1;
  return out;
}

function firstWith(edges: EdgeSource, id: number): number {
  for (let k = 0; k < edges.src.length; k++) if (edges.src[k] === id || edges.dst[k] === id) return k;
  return 0;
}

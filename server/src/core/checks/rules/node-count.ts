/**
 * How many nodes the graph has, and who says so. The contract: the rows of the feature matrix,
 * else the declared count (manifest, --num-nodes, the adjacency shape, the size a file states),
 * else the largest id + 1; labels and masks that agree among themselves can outvote the feature
 * rows, or stand in for a missing declaration. No problems are reported here: the rules that
 * follow compare the tensors with this count.
 */
import type { GraphPart } from '../graph-check-types';
import { denseNodeLimit } from '../../graph/structure/compact';
import type { CheckContext } from './context';
import type { EdgeSource } from './edge-source';
import { int32Figures } from '../stats';

export interface NodeCount {
  n: number;
  /** Where n comes from, for messages ("the rows of x", "the declared node count", …). */
  nSource: string;
  /** The labels, masks and edge ids agree on n and the feature matrix does not. */
  blameFeatures: boolean;
  /** The count declared by the user, the file or the adjacency shape. */
  declaredN: number | undefined;
  /** Who declared it, for messages. */
  declaredSource: string;
  featureRows: number | undefined;
  /** Smallest and largest whole-number id in the edges (Infinity and -1 without any). */
  minId: number;
  maxId: number;
  /** n is the largest id + 1, with no declaration and no feature matrix. */
  nodeCountFromIds: boolean;
  /** Most nodes held in per-node arrays (denseNodeLimit). */
  denseLimit: number;
  /** The ids look like a sparse numbering (user or product numbers): see countNodes. */
  idsLookSparse: boolean;
  /** Whether there is a node count to hold per-node tensors to. */
  nKnown: boolean;
}

export function countNodes(ctx: CheckContext, edges: EdgeSource | undefined): NodeCount {
  const { opts, limits, parts, features, labels, masks } = ctx;
  const featureRows = features && features.tensor.shape.length >= 1 ? features.tensor.shape[0]! : undefined;
  const labelLen = labels && labels.tensor.shape.length >= 1 ? labels.tensor.shape[0]! : undefined;
  const boolMasks = masks.filter((m) => !m.guess.indexList && m.tensor.shape.length === 1);
  const otherLens = [labelLen, ...boolMasks.map((m) => m.tensor.shape[0]!)].filter((x): x is number => x !== undefined);
  const agreed = otherLens.length > 0 && otherLens.every((x) => x === otherLens[0]) ? otherLens[0] : undefined;

  let maxId = -1, minId = Infinity;
  if (edges && !edges.flags) {
    const whole = wholeInt32(edges);
    if (whole) {
      // Both rows of one int32 tensor: its figures, which the tensor table reuses.
      const f = int32Figures(whole);
      if (f.min !== null && f.max !== null) { minId = f.min; maxId = Math.max(maxId, f.max); }
    } else {
      const a = int32Range(edges.src), b = int32Range(edges.dst);
      minId = Math.min(a[0], b[0]); maxId = Math.max(maxId, a[1], b[1]);
    }
  } else if (edges) {
    const { src, dst, flags } = edges;
    for (let k = 0; k < src.length; k++) {
      const fl = flags ? flags[k]! : 0;
      if (fl & 3) continue; // not a whole number: left out
      // Ids beyond int32 are ids like any other (a sparse numbering): their value is in the tensor.
      const a = fl & 4 ? edges.raw(k, 0) : src[k]!, b = fl & 8 ? edges.raw(k, 1) : dst[k]!;
      if (a > maxId) maxId = a;
      if (b > maxId) maxId = b;
      if (a < minId) minId = a;
      if (b < minId) minId = b;
    }
  }
  const hinted = edges?.part.hints?.nodes;
  const declaredN = opts.nodes ?? hinted ?? edges?.naturalN;
  let n: number;
  let nSource: string;
  let blameFeatures = false;
  const declaredSource = opts.nodes !== undefined ? 'the declared node count' : edges?.naturalN !== undefined ? 'the adjacency shape' : 'the size stated in the file';
  // The contract: feature rows, else the declared count, else the largest id + 1.
  if (featureRows !== undefined) {
    if (declaredN === undefined && agreed !== undefined && agreed !== featureRows && maxId < agreed) {
      // Labels, masks and edge ids agree on another count: the feature matrix is the odd one out.
      n = agreed; nSource = 'the labels and masks'; blameFeatures = true;
    } else {
      n = featureRows; nSource = `the rows of ${features!.tensor.name}`;
    }
  } else if (declaredN !== undefined) {
    n = declaredN;
    nSource = declaredSource;
  } else if (agreed !== undefined && agreed > maxId) {
    n = agreed; nSource = 'the length of the labels/masks';
  } else {
    n = maxId + 1; nSource = 'the largest id + 1';
  }
  const nodeCountFromIds = declaredN === undefined && featureRows === undefined && nSource === 'the largest id + 1';
  // Per-node arrays are bounded by what the files hold: above `denseLimit` nodes the graph is
  // checked on the ids its edges touch (id-range.ts). With no per-node tensor to say otherwise, ids far
  // beyond that are a sparse numbering (user or product numbers): the graph's nodes are its
  // distinct ids, as NetworkX reads such a file.
  const denseLimit = denseNodeLimit(graphDataBytes(parts), limits.maxFileBytes);
  const idsLookSparse = nodeCountFromIds && otherLens.length === 0 && n > denseLimit;
  // Without edges, a declaration or features there is no node count to hold per-node tensors to.
  const nKnown = edges !== undefined || declaredN !== undefined || featureRows !== undefined;
  return {
    n, nSource, blameFeatures, declaredN, declaredSource, featureRows, minId, maxId, nodeCountFromIds,
    denseLimit, idsLookSparse, nKnown,
  };
}

/** The int32 tensor whose two rows are exactly `src` then `dst` (a 2 x E edge index read as int32), if so. */
function wholeInt32(edges: EdgeSource): Int32Array | null {
  const t = edges.part.tensor;
  if (t.kind !== 'dense' || !(t.data instanceof Int32Array)) return null;
  const d = t.data, { src, dst } = edges;
  return src.buffer === d.buffer && dst.buffer === d.buffer && src.byteOffset === d.byteOffset
    && dst.byteOffset === src.byteOffset + src.byteLength && src.length + dst.length === d.length ? d : null;
}

/** [min, max] of a non-empty array ([Infinity, -1] when empty), in a loop that only sees Int32Array. */
function int32Range(a: Int32Array): [number, number] {
  if (a.length === 0) return [Infinity, -1];
  let lo = a[0]!, hi = a[0]!;
  for (let k = 1; k < a.length; k++) {
    const v = a[k]!;
    if (v < lo) lo = v;
    else if (v > hi) hi = v;
  }
  return [lo, hi];
}

/** Bytes of values the graph's tensors hold (what its files hold), for denseNodeLimit. */
function graphDataBytes(parts: GraphPart[]): number {
  let b = 0;
  for (const { tensor: t } of parts) {
    if (t.kind === 'sparse') b += t.row.byteLength + t.col.byteLength + (t.values?.byteLength ?? 0);
    else b += t.summary ? t.summary.dataBytes : t.data.byteLength;
  }
  return b;
}

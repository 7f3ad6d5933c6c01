/**
 * Graphs whose node count is far beyond what their edges touch: sparse ids (user or product
 * numbers used as node ids) or a declared count much larger than the stored edges. Such a graph is
 * checked on the ids its edges touch, renumbered 0..N-1 in increasing order, so per-node memory
 * follows what the file holds instead of the largest id.
 */

/** Per-node arrays for up to this many nodes are always allowed (a few tens of MB). */
export const MIN_DENSE_NODES = 1 << 20;

/** The largest file checked when the caller does not say (the CLI's default limit). */
export const DEFAULT_MAX_FILE_BYTES = 2 * 1024 ** 3;

/** Int32 CSR arrays cap any node count; this keeps far below that. */
const HARD_CAP = 1 << 30;

/**
 * The most nodes a check allocates per-node arrays for. `dataBytes` is what the graph's files hold
 * in memory (its tensors); a file of S bytes can name at most about S/2 distinct ids (one digit and
 * a separator each), so a graph needing more nodes than that is mostly ids no edge touches.
 * `maxFileBytes` (the `hopscope.maxFileSizeMB` setting, or the CLI's limit) bounds it the same way
 * for the largest file that would be read at all.
 */
export function denseNodeLimit(dataBytes: number, maxFileBytes: number = DEFAULT_MAX_FILE_BYTES): number {
  const byData = Math.max(MIN_DENSE_NODES, Math.floor(dataBytes / 2));
  const byMax = Math.max(MIN_DENSE_NODES, Math.floor(maxFileBytes / 2));
  return Math.min(byData, byMax, HARD_CAP);
}

export interface CompactIds {
  /** The distinct ids, increasing: compact node c is id ids[c]. */
  ids: Float64Array;
  /** The edges over compact nodes 0..ids.length-1. */
  src: Int32Array;
  dst: Int32Array;
}

/**
 * Renumbers the ids of the edges src[k] → dst[k] to 0..N-1, N the number of distinct ids, keeping
 * their order (so "smallest id first" stays true of the compact ids). Ids may be any numbers
 * (int64 values beyond int32 arrive as doubles). O(E log E): one sort of the 2E ids.
 */
export function compactIds(src: ArrayLike<number>, dst: ArrayLike<number>): CompactIds {
  const m = src.length;
  const all = new Float64Array(2 * m);
  for (let k = 0; k < m; k++) { all[k] = src[k]!; all[m + k] = dst[k]!; }
  all.sort();
  let u = 0;
  for (let i = 0; i < all.length; i++) {
    const v = all[i]!;
    if (u === 0 || all[u - 1] !== v) all[u++] = v;
  }
  const ids = all.slice(0, u);
  const cs = new Int32Array(m), cd = new Int32Array(m);
  for (let k = 0; k < m; k++) { cs[k] = indexOfId(ids, src[k]!); cd[k] = indexOfId(ids, dst[k]!); }
  return { ids, src: cs, dst: cd };
}

/** Position of `v` in the increasing `ids`, or -1 when it is not there. */
export function indexOfId(ids: Float64Array, v: number): number {
  let lo = 0, hi = ids.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (ids[mid]! < v) lo = mid + 1;
    else hi = mid;
  }
  return lo < ids.length && ids[lo] === v ? lo : -1;
}

/**
 * The first `limit` ids in 0..n-1 (increasing) that are isolated: absent from `ids`, or present
 * at a compact node for which `isolatedCompact(c)` holds. O(limit + |ids|).
 */
export function isolatedIdExamples(n: number, ids: Float64Array, isolatedCompact: (c: number) => boolean, limit: number): number[] {
  const out: number[] = [];
  let c = 0;
  for (let v = 0; v < n && out.length < limit; v++) {
    while (c < ids.length && ids[c]! < v) c++;
    if (c < ids.length && ids[c] === v) {
      if (isolatedCompact(c)) out.push(v);
    } else {
      out.push(v);
    }
  }
  return out;
}

/**
 * Compressed sparse row graphs over typed arrays.
 *
 * Every builder is O(N + E) (counting sorts, no comparison sort) and allocates only Int32Arrays.
 * Row r of a Csr lists the targets of node r in `indices[indptr[r] .. indptr[r+1])`.
 */

export interface Csr {
  readonly n: number;
  readonly indptr: Int32Array;
  readonly indices: Int32Array;
}

/** Row counts → prefix sums (length n + 1). */
function prefixFromKeys(n: number, keys: Int32Array): Int32Array {
  const indptr = new Int32Array(n + 1);
  for (let k = 0; k < keys.length; k++) indptr[keys[k]! + 1]!++;
  for (let i = 0; i < n; i++) indptr[i + 1]! += indptr[i]!;
  return indptr;
}

/**
 * CSR of the edges src[k] → dst[k], rows in edge order (not sorted). All ids must be in [0, n).
 * `out` may pass a buffer of length ≥ E to reuse.
 */
export function buildCsr(n: number, src: Int32Array, dst: Int32Array, out?: Int32Array): Csr {
  const e = src.length;
  const indptr = prefixFromKeys(n, src);
  const indices = out && out.length >= e ? out.subarray(0, e) : new Int32Array(e);
  const fill = indptr.slice(0, n);
  for (let k = 0; k < e; k++) indices[fill[src[k]!]!++] = dst[k]!;
  return { n, indptr, indices };
}

/**
 * Transpose of a CSR. Scanning rows in increasing order makes every row of the result sorted
 * ascending, so `transpose(transpose(g))` sorts a graph's rows in two O(N + E) passes.
 * `out` may pass a buffer of length ≥ E to reuse (it must not be `g.indices`).
 */
export function transpose(g: Csr, out?: Int32Array): Csr {
  const { n, indptr, indices } = g;
  const e = indptr[n]!;
  const tptr = prefixFromKeys(n, indices.subarray(0, e));
  const tind = out && out.length >= e ? out.subarray(0, e) : new Int32Array(e);
  const fill = tptr.slice(0, n);
  for (let u = 0; u < n; u++) {
    const end = indptr[u + 1]!;
    for (let p = indptr[u]!; p < end; p++) tind[fill[indices[p]!]!++] = u;
  }
  return { n, indptr: tptr, indices: tind };
}

/**
 * Forward and reverse CSR, both with sorted rows, from an edge list.
 * Memory: two Int32Arrays of length E plus two of length N + 1.
 */
export function buildSortedPair(n: number, src: Int32Array, dst: Int32Array): { fwd: Csr; rev: Csr } {
  // Reverse graph with unsorted rows (row v = sources of edges into v) ...
  const rev0 = buildCsr(n, dst, src);
  // ... its transpose is the forward graph with sorted rows ...
  const fwd = transpose(rev0);
  // ... and the forward graph's transpose is the reverse graph with sorted rows, reusing rev0's buffer.
  const rev = transpose(fwd, rev0.indices);
  return { fwd, rev };
}

/** Lower bound of `v` in the sorted slice indices[lo, hi). */
export function lowerBound(indices: Int32Array, lo: number, hi: number, v: number): number {
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (indices[mid]! < v) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** Whether the sorted-row graph has the edge u → v. */
export function hasEdge(g: Csr, u: number, v: number): boolean {
  const hi = g.indptr[u + 1]!;
  const p = lowerBound(g.indices, g.indptr[u]!, hi, v);
  return p < hi && g.indices[p] === v;
}

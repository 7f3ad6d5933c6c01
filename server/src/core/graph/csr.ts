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
 *
 * Least-significant-digit radix sort over (source, target) pairs with 2^ceil(log2(N)/2) buckets per
 * pass (1,024 for a million nodes): every pass streams through the arrays and writes into a few thousand sequential runs, so
 * it stays cache-friendly on graphs far larger than the cache (a plain counting sort into N
 * buckets costs one cache miss per edge per pass once N is large; measured 2x slower at
 * E = 10M, N = 1M). Six streaming passes for N > 2^11 (three below).
 * Memory: four Int32Arrays of length E while sorting, two of them kept.
 */
export function buildSortedPair(n: number, src: Int32Array, dst: Int32Array): { fwd: Csr; rev: Csr } {
  const e = src.length;
  const bits = Math.max(1, 32 - Math.clz32(Math.max(1, n - 1)));
  // One digit up to 2^11 nodes, else two (up to 2^16 buckets each: ids are below 2^31). With two
  // digits the reverse sort below has the spare buffers it needs while the forward rows stay.
  const digits = bits <= 11 ? 1 : 2;
  const width = Math.ceil(bits / digits);
  const count = new Int32Array(1 << width);
  const mask = (1 << width) - 1;
  const buf = [new Int32Array(e), new Int32Array(e), new Int32Array(e), new Int32Array(e)];
  /** One stable pass: (inK, inP) reordered by digit `shift` of the key into (outK, outP); keys dropped when outK is null. */
  const pass = (inK: Int32Array, inP: Int32Array, outK: Int32Array | null, outP: Int32Array, shift: number) => {
    count.fill(0);
    for (let k = 0; k < e; k++) count[(inK[k]! >>> shift) & mask]!++;
    let s = 0;
    for (let i = 0; i < count.length; i++) { const c = count[i]!; count[i] = s; s += c; }
    if (outK) {
      for (let k = 0; k < e; k++) {
        const key = inK[k]!;
        const p = count[(key >>> shift) & mask]!++;
        outK[p] = key;
        outP[p] = inP[k]!;
      }
    } else {
      for (let k = 0; k < e; k++) outP[count[(inK[k]! >>> shift) & mask]!++] = inP[k]!;
    }
  };
  /** Stable sort of (keys, payload) by key, using the buffers not in `busy`. */
  const sortBy = (keys: Int32Array, payload: Int32Array, busy: Int32Array[], keepKeys: boolean): [Int32Array | null, Int32Array] => {
    let inK = keys, inP = payload;
    for (let d = 0; d < digits; d++) {
      const last = d === digits - 1;
      const spare = buf.filter((b) => b !== inK && b !== inP && !busy.includes(b));
      const outK = last && !keepKeys ? null : spare[0]!;
      const outP = last && !keepKeys ? spare[0]! : spare[1]!;
      pass(inK, inP, outK, outP, d * width);
      if (!outK) return [null, outP];
      inK = outK; inP = outP;
    }
    return [inK, inP];
  };
  // Sort by target, then stably by source: rows in source order, targets ascending in each row.
  const [byTarget, srcByTarget] = sortBy(dst, src, [], true) as [Int32Array, Int32Array];
  const [fu, fv] = sortBy(srcByTarget, byTarget, [], true) as [Int32Array, Int32Array];
  const fwd: Csr = { n, indptr: rowPointers(n, fu), indices: fv };
  // Reverse: (target, source) pairs in forward order, stably sorted by target. The forward
  // indices stay untouched; the target counts give the row pointers.
  const [, rp] = sortBy(fv, fu, [fv], false);
  const indptr = new Int32Array(n + 1);
  for (let k = 0; k < e; k++) indptr[dst[k]! + 1]!++;
  for (let i = 0; i < n; i++) indptr[i + 1]! += indptr[i]!;
  return { fwd, rev: { n, indptr, indices: rp } };
}

/** Row pointers (length n + 1) from row ids sorted ascending: one sequential pass. */
function rowPointers(n: number, sortedRows: Int32Array): Int32Array {
  const indptr = new Int32Array(n + 1);
  const e = sortedRows.length;
  let k = 0;
  for (let r = 0; r < n; r++) {
    indptr[r] = k;
    while (k < e && sortedRows[k] === r) k++;
  }
  indptr[n] = e;
  return indptr;
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

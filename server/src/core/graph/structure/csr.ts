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
 * CSR of the entries keys[k] → payload[k] with every row sorted ascending: row r lists, in
 * increasing order, the payloads of all entries whose key is r. Keys must lie in [0, n).
 *
 * A plain counting sort into N buckets costs a cache miss per entry once N is large. Instead a
 * most-significant-digit pass scatters (key, payload) pairs into at most 2^11 buckets of
 * consecutive node ranges (a few thousand streaming writes), then each bucket — a node range of at
 * most 2^20 ids whose entries sit together — is counting-sorted by node into `indices` while its
 * slice of `indptr` and of the output is in cache, and finally each row is sorted in place (rows
 * are short and in cache). O(N + E) apart from the row sorts; the row sorts cost O(d log d) each.
 * Scratch: one interleaved buffer of 2E int32 (none when n ≤ 2^11), freed on return.
 * `out` may pass the buffers to fill (e.g. shared memory); they must have lengths n + 1 and E.
 */
export function sortedCsr(n: number, keys: Int32Array, payload: Int32Array,
  out?: { indptr: Int32Array; indices: Int32Array }): Csr {
  const e = keys.length;
  const indptr = out?.indptr ?? new Int32Array(n + 1);
  const indices = out?.indices ?? new Int32Array(e);
  const bits = Math.max(1, 32 - Math.clz32(Math.max(1, n - 1)));
  if (bits <= 11) {
    // Few nodes: one counting sort, its counters stay in cache.
    indptr.fill(0);
    for (let k = 0; k < e; k++) indptr[keys[k]! + 1]!++;
    for (let i = 0; i < n; i++) indptr[i + 1]! += indptr[i]!;
    const fill = indptr.slice(0, n);
    for (let k = 0; k < e; k++) indices[fill[keys[k]!]!++] = payload[k]!;
  } else {
    const lowBits = bits - Math.min(11, Math.ceil(bits / 2));
    const buckets = ((n - 1) >>> lowBits) + 1;
    const start = new Int32Array(buckets + 1);
    for (let k = 0; k < e; k++) start[(keys[k]! >>> lowBits) + 1]!++;
    for (let b = 0; b < buckets; b++) start[b + 1]! += start[b]!;
    const fill = start.slice(0, buckets);
    const pairs = new Int32Array(2 * e);
    for (let k = 0; k < e; k++) {
      const key = keys[k]!;
      const p = fill[key >>> lowBits]!++ << 1;
      pairs[p] = key;
      pairs[p + 1] = payload[k]!;
    }
    indptr.fill(0);
    for (let b = 0; b < buckets; b++) {
      const lo = b << lowBits;
      const hi = Math.min(n, lo + (1 << lowBits));
      const a = start[b]!, z = start[b + 1]!;
      // Row sizes of this node range, then their prefix sums from the bucket's start.
      for (let p = a; p < z; p++) indptr[pairs[p << 1]! + 1]!++;
      indptr[lo] = a;
      for (let r = lo; r < hi; r++) indptr[r + 1]! += indptr[r]!;
      // Scatter using indptr[r] as the fill cursor, then shift the cursors back into place.
      for (let p = a; p < z; p++) indices[indptr[pairs[p << 1]!]!++] = pairs[(p << 1) + 1]!;
      for (let r = hi; r > lo; r--) indptr[r] = indptr[r - 1]!;
      indptr[lo] = a;
    }
    indptr[n] = e;
  }
  sortRows(indptr, indices);
  return { n, indptr, indices };
}

/** Forward and reverse CSR of one edge list, both with sorted rows. */
export interface PairBuild {
  fwd: Csr;
  rev: Csr;
  /** Weakly connected components, when asked for and computed alongside the build. */
  components?: () => number;
  /** The row figures of every node (figures.ts `rowFigures`), when asked for and shared with another thread. */
  rowFigures?: () => RowFigures;
}

/** Counts read from both sorted directions row by row (figures.ts `rowFigures`). */
export interface RowFigures {
  /** Entries u → u (repeats included). */
  selfLoops: number;
  duplicates: number;
  distinctNonLoop: number;
  asymmetric: number;
  isolated: number;
}

/** What the caller of a PairBuilder will want besides the two directions (a builder may compute them alongside). */
export interface PairExtras {
  components?: boolean;
  rowFigures?: boolean;
}

/**
 * Builds the forward and reverse CSR of src[k] → dst[k]. `opts` says what else the caller will
 * want (the component count, the row figures), which a builder may compute alongside.
 */
export type PairBuilder = (n: number, src: Int32Array, dst: Int32Array, opts?: PairExtras) => PairBuild;

/**
 * The work of one sorted pair, in four steps that may each be cut into parts over node ranges (so
 * two threads can share a step: node/pair-build.ts). With no comparison sort and no scratch beyond
 * the two outputs:
 *   0. counts: out-degrees into fwdIndptr, in-degrees into revIndptr, prefix sums, part bounds;
 *   1. scatter by target: revIndices gets the sources in edge order per target (rows unsorted);
 *   2. scatter by source while scanning those rows in target order: fwdIndices, rows sorted;
 *   3. scatter by target while scanning the sorted forward rows: revIndices, rows sorted.
 * Each scatter uses the indptr itself as its fill cursor and shifts it back afterwards (no fill
 * array). A part of steps 1–3 scans every entry and writes only the rows of its node range, so
 * parts of one step touch disjoint memory. Memory: 4 bytes per edge per direction, 4 per node per
 * direction.
 */
export interface PairPlan {
  n: number;
  src: Int32Array;
  dst: Int32Array;
  fwdIndptr: Int32Array;
  fwdIndices: Int32Array;
  revIndptr: Int32Array;
  revIndices: Int32Array;
  /** parts + 1 node bounds over the forward rows, then parts + 1 over the reverse rows (step 0 fills them). */
  bounds: Int32Array;
  /** Above BUCKETED_MIN_NODES: the bucket starts of step 1 (step 0 fills them). */
  bucketStart: Int32Array;
  parts: number;
}

export function pairPlan(n: number, src: Int32Array, dst: Int32Array, parts = 1,
  alloc: (length: number) => Int32Array = (length) => new Int32Array(length)): PairPlan {
  const e = src.length;
  return {
    n, src, dst, parts,
    fwdIndptr: alloc(n + 1), fwdIndices: alloc(e), revIndptr: alloc(n + 1), revIndices: alloc(e),
    bounds: alloc(2 * (parts + 1)), bucketStart: alloc(n > BUCKETED_MIN_NODES ? (1 << 11) + 2 : 1),
  };
}

/** Number of parts step `step` of a plan is cut into (step 0: one per direction when parts > 1). */
export function pairStepParts(plan: PairPlan, step: number): number {
  return step === 0 ? Math.min(2, plan.parts) : plan.parts;
}

/** Degree counts → prefix sums, and the node bounds that cut the rows into `parts` even shares of entries. */
function countInto(n: number, keys: Int32Array, indptr: Int32Array, bounds: Int32Array, at: number, parts: number): void {
  for (let k = 0; k < keys.length; k++) indptr[keys[k]! + 1]!++;
  for (let i = 0; i < n; i++) indptr[i + 1]! += indptr[i]!;
  boundsInto(n, keys.length, indptr, bounds, at, parts);
}

/**
 * Above this many nodes the cursors of step 1 (4 bytes a node) no longer stay in cache and each
 * entry of a plain scatter costs a cache and TLB miss: step 0 then builds the reverse rows itself
 * by buckets (bucketedReverse) and step 1 does nothing.
 */
export const BUCKETED_MIN_NODES = 1 << 22;

/** Bits of a node id below its bucket (at most 2^11 buckets of consecutive ids). */
function bucketLowBits(n: number): number {
  const bits = Math.max(1, 32 - Math.clz32(n - 1));
  return bits - Math.min(11, Math.ceil(bits / 2));
}

/**
 * Step 1 by buckets, first half (in step 0): a most-significant-digit pass scatters (target,
 * source) into at most 2^11 buckets of consecutive target ranges — the targets into `scratch`
 * (the forward indices, unused until step 2), the sources into `ri` — and records where each
 * bucket starts.
 */
function bucketScatter(n: number, src: Int32Array, dst: Int32Array, start: Int32Array, ri: Int32Array, scratch: Int32Array): void {
  const e = src.length;
  const lowBits = bucketLowBits(n);
  const buckets = ((n - 1) >>> lowBits) + 1;
  start.fill(0);
  for (let k = 0; k < e; k++) start[(dst[k]! >>> lowBits) + 1]!++;
  for (let b = 0; b < buckets; b++) start[b + 1]! += start[b]!;
  const fill = start.slice(0, buckets);
  for (let k = 0; k < e; k++) {
    const v = dst[k]!;
    const p = fill[v >>> lowBits]!++;
    scratch[p] = v;
    ri[p] = src[k]!;
  }
}

/**
 * Step 1 by buckets, second half: each bucket of this part's share is counting-sorted in place
 * through a copy of its sources, its slice of `rp` in cache (rows in edge order, as the plain
 * scatter leaves them). Writes only `rp` rows of its own buckets, so parts may run together. Also
 * fills `rp` (no degree count pass over the targets).
 */
function bucketSort(n: number, start: Int32Array, rp: Int32Array, ri: Int32Array, scratch: Int32Array, part: number, parts: number): void {
  const lowBits = bucketLowBits(n);
  const buckets = ((n - 1) >>> lowBits) + 1;
  const e = start[buckets]!;
  // This part's buckets: an even share of the entries.
  let b0 = 0, b1 = 0;
  const from = Math.floor((e * part) / parts), to = Math.floor((e * (part + 1)) / parts);
  while (b0 < buckets && start[b0]! < from) b0++;
  b1 = b0;
  while (b1 < buckets && (start[b1]! < to || part === parts - 1)) b1++;
  let most = 0;
  for (let b = b0; b < b1; b++) most = Math.max(most, start[b + 1]! - start[b]!);
  const temp = new Int32Array(most);
  for (let b = b0; b < b1; b++) {
    const lo = b << lowBits;
    const hi = Math.min(n, lo + (1 << lowBits));
    const a = start[b]!, z = start[b + 1]!;
    // Row sizes into rp[lo, hi), then their starts from a (rp[hi] belongs to the next bucket).
    rp.fill(0, lo, hi);
    for (let p = a; p < z; p++) rp[scratch[p]!]!++;
    for (let r = lo, run = a; r < hi; r++) { const c = rp[r]!; rp[r] = run; run += c; }
    temp.set(ri.subarray(a, z));
    for (let p = a; p < z; p++) ri[rp[scratch[p]!]!++] = temp[p - a]!;
    shiftBack(rp, lo, hi, a);
  }
}

/** The node bounds that cut the rows of `indptr` into `parts` even shares of its e entries. */
function boundsInto(n: number, e: number, indptr: Int32Array, bounds: Int32Array, at: number, parts: number): void {
  bounds[at] = 0;
  bounds[at + parts] = n;
  for (let p = 1, r = 0; p < parts; p++) {
    const want = Math.floor((e * p) / parts);
    while (r < n && indptr[r]! < want) r++;
    bounds[at + p] = r;
  }
}

/** Shifts a fill cursor back into an indptr over rows [lo, hi) (its old start at lo was `a`). */
function shiftBack(indptr: Int32Array, lo: number, hi: number, a: number): void {
  for (let r = hi - 1; r > lo; r--) indptr[r] = indptr[r - 1]!;
  if (hi > lo) indptr[lo] = a;
}

/** Runs part `part` of step `step` (see PairPlan). */
export function runPairStep(plan: PairPlan, step: number, part: number): void {
  const { n, src, dst, fwdIndptr: fp, fwdIndices: fi, revIndptr: rp, revIndices: ri, bounds, parts } = plan;
  const e = src.length;
  const bucketed = n > BUCKETED_MIN_NODES;
  if (step === 0) {
    if (part === 0) countInto(n, src, fp, bounds, 0, parts);
    if (part === 1 || parts === 1) {
      if (bucketed) {
        bucketScatter(n, src, dst, plan.bucketStart, ri, fi);
        rp[n] = e;
      } else {
        countInto(n, dst, rp, bounds, parts + 1, parts);
      }
    }
    return;
  }
  if (step === 1 && bucketed) {
    bucketSort(n, plan.bucketStart, rp, ri, fi, part, parts);
    return;
  }
  // With buckets the reverse indptr is complete only after step 1: its bounds are taken here
  // (step 2 does not change it; step 3 uses them).
  if (step === 2 && bucketed && part === 0) boundsInto(n, e, rp, bounds, parts + 1, parts);
  const fwdRows = step === 2;
  const at = fwdRows ? 0 : parts + 1;
  const lo = bounds[at + part]!, hi = bounds[at + part + 1]!, width = hi - lo;
  if (width <= 0) return;
  if (step === 1) {
    const a = rp[lo]!;
    for (let k = 0; k < e; k++) {
      const v = dst[k]!;
      if ((v - lo) >>> 0 < width) ri[rp[v]!++] = src[k]!;
    }
    shiftBack(rp, lo, hi, a);
  } else if (step === 2) {
    const a = fp[lo]!;
    for (let v = 0, q = 0; v < n; v++) {
      const end = rp[v + 1]!;
      for (; q < end; q++) {
        const u = ri[q]!;
        if ((u - lo) >>> 0 < width) fi[fp[u]!++] = v;
      }
    }
    shiftBack(fp, lo, hi, a);
  } else {
    const a = rp[lo]!;
    for (let u = 0, q = 0; u < n; u++) {
      const end = fp[u + 1]!;
      for (; q < end; q++) {
        const v = fi[q]!;
        if ((v - lo) >>> 0 < width) ri[rp[v]!++] = u;
      }
    }
    shiftBack(rp, lo, hi, a);
  }
}

/** The plan's result (after all four steps). */
export function pairOf(plan: PairPlan): PairBuild {
  const { n } = plan;
  return { fwd: { n, indptr: plan.fwdIndptr, indices: plan.fwdIndices }, rev: { n, indptr: plan.revIndptr, indices: plan.revIndices } };
}

export const PAIR_STEPS = 4;

/** The forward and reverse CSR of src[k] → dst[k] on this thread: the four steps of a PairPlan, one part each. */
export const sequentialPair: PairBuilder = (n, src, dst) => {
  const plan = pairPlan(n, src, dst);
  for (let s = 0; s < PAIR_STEPS; s++) runPairStep(plan, s, 0);
  return pairOf(plan);
};

let pairBuilder: PairBuilder = sequentialPair;

/**
 * Lets the host supply a faster way to build the pair (the node layer builds the two directions
 * on two threads for large graphs). The builder must return exactly what `sequentialPair` would.
 */
export function setPairBuilder(builder: PairBuilder | null): void {
  pairBuilder = builder ?? sequentialPair;
}

/** Forward and reverse CSR, both with sorted rows, from an edge list (ids in [0, n)). */
export function buildSortedPair(n: number, src: Int32Array, dst: Int32Array, opts?: PairExtras): PairBuild {
  return pairBuilder(n, src, dst, opts);
}

/** Sorts every row ascending in place. */
function sortRows(indptr: Int32Array, indices: Int32Array): void {
  const n = indptr.length - 1;
  for (let u = 0; u < n; u++) sortRange(indices, indptr[u]!, indptr[u + 1]!);
}

/** Sorts a[lo, hi) ascending in place: insertion sort for short ranges, the typed-array sort otherwise. */
export function sortRange(a: Int32Array, lo: number, hi: number): void {
  if (hi - lo < 2) return;
  if (hi - lo > 32) { a.subarray(lo, hi).sort(); return; }
  for (let i = lo + 1; i < hi; i++) {
    const x = a[i]!;
    let j = i - 1;
    while (j >= lo && a[j]! > x) { a[j + 1] = a[j]!; j--; }
    a[j + 1] = x;
  }
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

/**
 * 1-WL colour refinement (Weisfeiler & Leman 1968) and what it says about message passing: nodes
 * that end with the same colour get the same embedding from every message-passing network that sees
 * only the graph (Xu et al., ICLR 2019; Morris et al., AAAI 2019), and two graphs whose colour
 * histograms agree at every round look the same to such a network.
 *
 * All analyses here run on the undirected simple view (see undirected.ts): edge directions are
 * ignored (the graph is symmetrised), self-loops dropped and repeated edges merged. A directed
 * message-passing model can separate more than this view shows.
 *
 * One refinement round, in O(N + E·log d + K) over typed arrays:
 *  1. gather each node's neighbour colours into its row and sort the row (rows are short and in
 *     cache; this reads memory in order, unlike scattering colours into neighbours' rows);
 *  2. hash the signature (old colour, sorted neighbour colours) of every node;
 *  3. group equal signatures in an open-addressing table, comparing signatures exactly whenever two
 *     hashes meet (no hash collision can merge two colours);
 *  4. number the groups in an order fixed by the signatures alone (old colour, hash, then the
 *     signature itself; radix passes, a comparison sort only for hash ties), so the colours do not
 *     depend on node numbering and two graphs refined together in one disjoint union get
 *     comparable colours.
 */
import {
  disjointUnion, throwIfCancelled, undirectedEdgeCount,
  type Cancel, type UndirectedRows,
} from '../structure/undirected';
import { lowerBound, sortRange } from '../structure/csr';

// ---------------------------------------------------------------------------------------------
// Hashing and dense canonical class ids

function mixWord(h: number, x: number): number {
  h = Math.imul(h ^ x, 0x5bd1e995);
  return h ^ (h >>> 15);
}

function finish(h: number): number {
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  return h ^ (h >>> 16);
}

/** Scratch buffers for `classify`, reused across rounds. */
class ClassTable {
  private table = new Int32Array(0);
  readonly rep: Int32Array;
  readonly prov: Int32Array;
  readonly rank: Int32Array;

  constructor(n: number) {
    this.rep = new Int32Array(n);
    this.prov = new Int32Array(n);
    this.rank = new Int32Array(n);
  }

  /**
   * Dense class ids for items 0..n-1: items get the same id iff `same` says so. Ids follow the total
   * order `cmp` of the class representatives, which must depend only on what `same` compares.
   * `hash[i]` must be equal for equal items. Writes `out`, returns the class count.
   */
  classify(
    n: number, hash: Int32Array,
    same: (x: number, y: number) => boolean, cmp: (x: number, y: number) => number,
    out: Int32Array,
    /** When `cmp` orders first by primary[x] (dense ids below primaryCount), then by hash[x] unsigned. */
    primary?: { keys: Int32Array; count: number },
    /** Looked at every 65,536 items. */
    cancel?: Cancel,
    /** False: ids in order of first appearance instead (same classes, no ordering work). */
    canonical = true,
  ): number {
    let size = 16;
    while (size < 2 * n) size *= 2;
    if (this.table.length !== size) this.table = new Int32Array(size);
    const table = this.table, rep = this.rep, prov = this.prov, rank = this.rank;
    table.fill(-1);
    const mask = size - 1;
    let k = 0;
    for (let v = 0; v < n; v++) {
      if ((v & 0xffff) === 0) throwIfCancelled(cancel);
      const h = hash[v]!;
      let pos = h & mask;
      for (;;) {
        const s = table[pos]!;
        if (s < 0) {
          rep[k] = v;
          table[pos] = k;
          prov[v] = k++;
          break;
        }
        const r = rep[s]!;
        if (hash[r] === h && same(r, v)) {
          prov[v] = s;
          break;
        }
        pos = (pos + 1) & mask;
      }
    }
    if (!canonical) {
      for (let v = 0; v < n; v++) out[v] = prov[v]!;
      return k;
    }
    const ids = primary && k > 4096 ? this.radixOrder(k, hash, primary, cmp) : new Int32Array(k);
    if (!(primary && k > 4096)) {
      for (let p = 0; p < k; p++) ids[p] = p;
      ids.sort((p, q) => cmp(rep[p]!, rep[q]!));
    }
    for (let r = 0; r < k; r++) rank[ids[r]!] = r;
    for (let v = 0; v < n; v++) out[v] = rank[prov[v]!]!;
    return k;
  }

  /**
   * The k classes in `cmp` order without a comparison sort of all of them: a stable radix sort by
   * the representative's hash (two 16-bit digits), then a stable counting sort by its primary key,
   * gives the order by (primary, hash); only runs that tie on both (hash collisions between
   * different classes) are then sorted with `cmp`. Same result as sorting everything with `cmp`.
   */
  private radixOrder(k: number, hash: Int32Array, primary: { keys: Int32Array; count: number }, cmp: (x: number, y: number) => number): Int32Array {
    const rep = this.rep;
    // Class ids with their two keys side by side, so every pass reads in order.
    let ids = new Int32Array(k), hs = new Int32Array(k), ps = new Int32Array(k);
    let ids2 = new Int32Array(k), hs2 = new Int32Array(k), ps2 = new Int32Array(k);
    for (let p = 0; p < k; p++) { const r = rep[p]!; ids[p] = p; hs[p] = hash[r]!; ps[p] = primary.keys[r]!; }
    const count = new Int32Array(Math.max(65536, primary.count) + 1);
    for (let digit = 0; digit < 3; digit++) {
      const buckets = digit < 2 ? 65536 : primary.count;
      const key = (i: number) => (digit === 0 ? hs[i]! & 0xffff : digit === 1 ? hs[i]! >>> 16 : ps[i]!);
      count.fill(0, 0, buckets + 1);
      for (let i = 0; i < k; i++) count[key(i) + 1]!++;
      for (let c = 0; c < buckets; c++) count[c + 1]! += count[c]!;
      for (let i = 0; i < k; i++) {
        const q = count[key(i)]!++;
        ids2[q] = ids[i]!; hs2[q] = hs[i]!; ps2[q] = ps[i]!;
      }
      [ids, ids2] = [ids2, ids]; [hs, hs2] = [hs2, hs]; [ps, ps2] = [ps2, ps];
    }
    for (let i = 0; i < k;) {
      let j = i + 1;
      while (j < k && ps[j] === ps[i] && hs[j] === hs[i]) j++;
      if (j - i > 1) ids.subarray(i, j).sort((p, q) => cmp(rep[p]!, rep[q]!));
      i = j;
    }
    return ids;
  }
}

// ---------------------------------------------------------------------------------------------
// Initial colours from feature rows

/**
 * Initial colours from the rows of an n x width matrix (row-major): equal rows get equal colours,
 * compared exactly (−0 equals 0, every NaN equals every NaN). Colour ids are ordered by the row
 * contents, so they do not depend on node numbering. Returns the colours and the class count.
 */
export function rowColours(data: ArrayLike<number>, n: number, width: number): { colours: Int32Array; classes: number } {
  if (data.length < n * width) throw new Error(`rowColours: ${data.length} values for ${n} rows of ${width}`);
  const f64 = new Float64Array(1);
  const words = new Int32Array(f64.buffer);
  const hash = new Int32Array(n);
  for (let v = 0; v < n; v++) {
    let h = 0x2f0b3c1d ^ width;
    const base = v * width;
    for (let c = 0; c < width; c++) {
      const x = data[base + c]!;
      if (x !== x) { h = mixWord(h, 0x7ff80000); continue; }
      f64[0] = x === 0 ? 0 : x;
      h = mixWord(mixWord(h, words[0]!), words[1]!);
    }
    hash[v] = finish(h);
  }
  const cmpValue = (a: number, b: number): number => {
    if (a === b) return 0;
    const an = a !== a, bn = b !== b;
    if (an || bn) return an && bn ? 0 : an ? 1 : -1;
    return a < b ? -1 : 1;
  };
  const same = (x: number, y: number): boolean => {
    const bx = x * width, by = y * width;
    for (let c = 0; c < width; c++) if (cmpValue(data[bx + c]!, data[by + c]!) !== 0) return false;
    return true;
  };
  const cmp = (x: number, y: number): number => {
    const hx = hash[x]! >>> 0, hy = hash[y]! >>> 0;
    if (hx !== hy) return hx < hy ? -1 : 1;
    const bx = x * width, by = y * width;
    for (let c = 0; c < width; c++) {
      const d = cmpValue(data[bx + c]!, data[by + c]!);
      if (d !== 0) return d;
    }
    return 0;
  };
  const colours = new Int32Array(n);
  const classes = new ClassTable(n).classify(n, hash, same, cmp, colours);
  return { colours, classes };
}

// ---------------------------------------------------------------------------------------------
// The refinement engine

/**
 * Runs refinement rounds on one graph; keeps its scratch buffers between rounds. Exported for the
 * accuracy ceiling (ceiling.ts), which refines many graphs jointly with its own stopping rule.
 */
export class Refiner {
  private readonly nb: Int32Array;
  private readonly hash: Int32Array;
  private readonly table: ClassTable;

  /**
   * `cancel` is looked at every 16,384 nodes of each pass of a round (a round of 20M entries takes
   * seconds). `canonical: false` numbers the classes of each round in order of their first node
   * instead of by signature: the same partitions, for callers that never compare colour ids across
   * graphs or refinements (see WlOptions.canonical).
   */
  constructor(readonly g: UndirectedRows, private readonly cancel?: Cancel, private readonly canonical = true) {
    const n = g.n;
    this.nb = new Int32Array(g.indptr[n]!);
    this.hash = new Int32Array(n);
    this.table = new ClassTable(n);
  }

  /**
   * One round: `next` gets the new colours from `cur` (dense ids 0..k-1). Returns the new class
   * count (≥ k; equal to k iff the partition did not change).
   */
  step(cur: Int32Array, k: number, next: Int32Array): number {
    const { n, indptr, indices } = this.g;
    if (k === 1 && n > 0) return this.byDegree(next);
    const { nb, hash } = this;
    // Each node's neighbour colours, gathered row by row (sequential writes, one read of `cur`
    // per entry) and sorted in place.
    const cancel = this.cancel;
    // In the same pass (the row is still in cache), hash the signature.
    for (let v = 0; v < n; v++) {
      if ((v & 0x3fff) === 0) throwIfCancelled(cancel);
      const lo = indptr[v]!, hi = indptr[v + 1]!;
      for (let p = lo; p < hi; p++) nb[p] = cur[indices[p]!]!;
      sortRange(nb, lo, hi);
      let h = mixWord(0x1b873593 ^ cur[v]!, hi - lo);
      for (let p = lo; p < hi; p++) h = mixWord(h, nb[p]!);
      hash[v] = finish(h);
    }
    const same = (x: number, y: number): boolean => {
      if (cur[x] !== cur[y]) return false;
      let px = indptr[x]!, py = indptr[y]!;
      const ex = indptr[x + 1]!;
      if (ex - px !== indptr[y + 1]! - py) return false;
      while (px < ex) if (nb[px++] !== nb[py++]) return false;
      return true;
    };
    const cmp = (x: number, y: number): number => {
      const cx = cur[x]!, cy = cur[y]!;
      if (cx !== cy) return cx - cy;
      const hx = hash[x]! >>> 0, hy = hash[y]! >>> 0;
      if (hx !== hy) return hx < hy ? -1 : 1;
      let px = indptr[x]!, py = indptr[y]!;
      const dx = indptr[x + 1]! - px, dy = indptr[y + 1]! - py;
      if (dx !== dy) return dx - dy;
      for (let i = 0; i < dx; i++, px++, py++) if (nb[px] !== nb[py]) return nb[px]! - nb[py]!;
      return 0;
    };
    return this.table.classify(n, hash, same, cmp, next, { keys: cur, count: k }, cancel, this.canonical);
  }

  /**
   * `step` from one colour (every `cur` entry 0): a node's signature is then (0, its degree zeros),
   * so the classes are the distinct degrees, ordered as `step` orders them (by the signature's hash,
   * unsigned, then by degree). The hash is computed once per distinct degree: O(N + Σ d over the
   * distinct degrees d) instead of a gather, sort and table over every entry. Same colours as `step`.
   */
  private byDegree(next: Int32Array): number {
    const { n, indptr } = this.g;
    let maxDeg = 0;
    for (let v = 0; v < n; v++) { const d = indptr[v + 1]! - indptr[v]!; if (d > maxDeg) maxDeg = d; }
    const colourOf = new Int32Array(maxDeg + 1).fill(-1);
    for (let v = 0; v < n; v++) colourOf[indptr[v + 1]! - indptr[v]!] = 0;
    const degrees: number[] = [];
    const hashOf = new Int32Array(maxDeg + 1);
    for (let d = 0; d <= maxDeg; d++) {
      if (colourOf[d] !== 0) continue;
      degrees.push(d);
      let h = mixWord(0x1b873593 ^ 0, d);
      for (let i = 0; i < d; i++) h = mixWord(h, 0);
      hashOf[d] = finish(h);
    }
    degrees.sort((a, b) => {
      const ha = hashOf[a]! >>> 0, hb = hashOf[b]! >>> 0;
      return ha !== hb ? (ha < hb ? -1 : 1) : a - b;
    });
    degrees.forEach((d, rank) => { colourOf[d] = rank; });
    for (let v = 0; v < n; v++) next[v] = colourOf[indptr[v + 1]! - indptr[v]!]!;
    return degrees.length;
  }

  /**
   * Whether a round from `cur` would split a class (`step` would return more than k classes),
   * without computing the new colours: each node's sorted neighbour colours are compared with
   * those of the first node of its colour, stopping at the first difference.
   */
  splits(cur: Int32Array, k: number): boolean {
    const { n, indptr, indices } = this.g;
    const nb = this.nb;
    const first = new Int32Array(k).fill(-1);
    for (let v = 0; v < n; v++) {
      if ((v & 0x3fff) === 0) throwIfCancelled(this.cancel);
      const lo = indptr[v]!, hi = indptr[v + 1]!;
      for (let p = lo; p < hi; p++) nb[p] = cur[indices[p]!]!;
      sortRange(nb, lo, hi);
      const c = cur[v]!;
      const r = first[c]!;
      if (r < 0) { first[c] = v; continue; }
      let pr = indptr[r]!;
      if (indptr[r + 1]! - pr !== hi - lo) return true;
      for (let p = lo; p < hi; p++, pr++) if (nb[p] !== nb[pr]) return true;
    }
    return false;
  }
}

// ---------------------------------------------------------------------------------------------
// Public API

export interface WlOptions {
  /** Most refinement rounds to run (default: until stable; at most n + 1 are ever needed). */
  maxRounds?: number;
  /** Start colours (dense ids 0..k-1, e.g. from `rowColours`); default: one colour for all. */
  initial?: Int32Array;
  cancel?: Cancel;
  /**
   * Default true: colour ids depend only on the signatures (comparable across graphs refined
   * apart). False: ids in order of each class's first node — the same classes per round, the same
   * groups and stable round, less work; `colours` is then not comparable with another refinement.
   */
  canonical?: boolean;
}

export interface WlResult {
  /** Colour classes at round 0, 1, …; the last entry is the stable count when `stableAfter` is set. */
  classesPerRound: number[];
  /**
   * The round from which the partition no longer changes (`classesPerRound.length - 1`), or null
   * when `maxRounds` ran out before that could be confirmed.
   */
  stableAfter: number | null;
  /** Colour of each node after the last round in `classesPerRound` (dense ids, canonical order). */
  colours: Int32Array;
}

function startColours(n: number, initial: Int32Array | undefined): { colours: Int32Array; classes: number } {
  if (!initial) return { colours: new Int32Array(n), classes: n > 0 ? 1 : 0 };
  if (initial.length !== n) throw new Error(`initial colours: ${initial.length} for ${n} nodes`);
  let k = 0;
  for (let v = 0; v < n; v++) {
    const c = initial[v]!;
    if (c < 0) throw new Error('initial colours must be non-negative');
    if (c + 1 > k) k = c + 1;
  }
  // Compact to dense ids, keeping their order.
  const seen = new Int32Array(k).fill(-1);
  for (let v = 0; v < n; v++) seen[initial[v]!] = 0;
  let d = 0;
  for (let c = 0; c < k; c++) if (seen[c] === 0) seen[c] = d++;
  const colours = new Int32Array(n);
  for (let v = 0; v < n; v++) colours[v] = seen[initial[v]!]!;
  return { colours, classes: d };
}

/**
 * 1-WL colour refinement of the undirected view `g`. Stops at the first round that splits no
 * class (that round is not listed: the stable count comes last) or after `maxRounds` rounds.
 */
export function refineWl(g: UndirectedRows, options: WlOptions = {}): WlResult {
  const n = g.n;
  const maxRounds = options.maxRounds ?? Number.MAX_SAFE_INTEGER;
  let { colours: cur, classes: k } = startColours(n, options.initial);
  const classesPerRound = [k];
  const ref = new Refiner(g, options.cancel, options.canonical ?? true);
  let next: Int32Array = new Int32Array(n);
  let round = 0;
  for (;;) {
    throwIfCancelled(options.cancel);
    // The last round allowed only decides whether the refinement is stable: no colours needed.
    if (round === maxRounds) return { classesPerRound, stableAfter: ref.splits(cur, k) ? null : round, colours: cur };
    const k2 = ref.step(cur, k, next);
    if (k2 === k) return { classesPerRound, stableAfter: round, colours: cur };
    [cur, next] = [next, cur];
    k = k2;
    round++;
    classesPerRound.push(k);
  }
}

export interface WlGroup {
  colour: number;
  size: number;
  /** Members, ascending (at most `maxMembers`). */
  nodes: number[];
}

/**
 * Nodes sharing a colour, as groups of at least `minSize` members: largest first, ties by smallest
 * member. With final 1-WL colours these are the nodes no message-passing network without extra
 * node features can tell apart.
 */
export function colourGroups(colours: Int32Array, options: { minSize?: number; limit?: number; maxMembers?: number } = {}): WlGroup[] {
  const n = colours.length;
  const minSize = options.minSize ?? 2;
  const limit = options.limit ?? Number.MAX_SAFE_INTEGER;
  const maxMembers = options.maxMembers ?? Number.MAX_SAFE_INTEGER;
  let k = 0;
  for (let v = 0; v < n; v++) if (colours[v]! + 1 > k) k = colours[v]! + 1;
  const size = new Int32Array(k);
  const first = new Int32Array(k).fill(-1);
  for (let v = 0; v < n; v++) {
    const c = colours[v]!;
    size[c]!++;
    if (first[c]! < 0) first[c] = v;
  }
  const picked: number[] = [];
  for (let c = 0; c < k; c++) if (size[c]! >= minSize) picked.push(c);
  picked.sort((a, b) => size[b]! - size[a]! || first[a]! - first[b]!);
  const groups: WlGroup[] = picked.slice(0, limit).map((c) => ({ colour: c, size: size[c]!, nodes: [] as number[] }));
  const slot = new Int32Array(k).fill(-1);
  groups.forEach((gr, i) => { slot[gr.colour] = i; });
  for (let v = 0; v < n; v++) {
    const s = slot[colours[v]!]!;
    if (s >= 0 && groups[s]!.nodes.length < maxMembers) groups[s]!.nodes.push(v);
  }
  return groups;
}

/** Nodes whose final colour is shared with at least one other node. */
export function sharedColourCount(colours: Int32Array): number {
  let k = 0;
  for (let v = 0; v < colours.length; v++) if (colours[v]! + 1 > k) k = colours[v]! + 1;
  const size = new Int32Array(k);
  for (let v = 0; v < colours.length; v++) size[colours[v]!]!++;
  let shared = 0;
  for (let c = 0; c < k; c++) if (size[c]! > 1) shared += size[c]!;
  return shared;
}

// ---------------------------------------------------------------------------------------------
// Two graphs

/** Whether colours of nodes [0, split) and of nodes [split, n) have different histograms. */
function histogramsDiffer(colours: Int32Array, k: number, split: number, diff: Int32Array): boolean {
  diff.fill(0, 0, k);
  const n = colours.length;
  for (let v = 0; v < split; v++) diff[colours[v]!]!++;
  for (let v = split; v < n; v++) diff[colours[v]!]!--;
  for (let c = 0; c < k; c++) if (diff[c] !== 0) return true;
  return false;
}

export interface WlComparison {
  /** True iff the colour histograms of the two graphs differ at some round. */
  distinguishable: boolean;
  /** The round at which they first differ, or the last round refined when they never do. */
  roundsUsed: number;
  /** Classes per round of the joint refinement (both graphs together). */
  jointClassesPerRound: number[];
  /** False when `maxRounds` stopped the refinement before it was stable or a difference showed. */
  complete: boolean;
}

/**
 * Refines the disjoint union of `a` and `b` jointly from a uniform start (or from `initial`
 * colours for the union: a's nodes first) and compares the two colour histograms round by round.
 */
export function compareWl(a: UndirectedRows, b: UndirectedRows, options: WlOptions = {}): WlComparison {
  const u = disjointUnion(a, b);
  const n = u.n;
  const maxRounds = options.maxRounds ?? Number.MAX_SAFE_INTEGER;
  let { colours: cur, classes: k } = startColours(n, options.initial);
  const jointClassesPerRound = [k];
  let diff = new Int32Array(Math.max(k, 1));
  if (histogramsDiffer(cur, k, a.n, diff)) return { distinguishable: true, roundsUsed: 0, jointClassesPerRound, complete: true };
  const ref = new Refiner(u, options.cancel);
  let next: Int32Array = new Int32Array(n);
  let round = 0;
  for (;;) {
    throwIfCancelled(options.cancel);
    const k2 = ref.step(cur, k, next);
    if (k2 === k) return { distinguishable: false, roundsUsed: round, jointClassesPerRound, complete: true };
    if (round === maxRounds) return { distinguishable: false, roundsUsed: round, jointClassesPerRound, complete: false };
    [cur, next] = [next, cur];
    k = k2;
    round++;
    jointClassesPerRound.push(k);
    if (diff.length < k) diff = new Int32Array(k);
    if (histogramsDiffer(cur, k, a.n, diff)) return { distinguishable: true, roundsUsed: round, jointClassesPerRound, complete: true };
  }
}

export interface IsomorphismOptions {
  /** Largest node count searched (default 2000). */
  maxNodes?: number;
  /** Most individualise-and-refine steps (default 20000). */
  budget?: number;
  cancel?: Cancel;
}

/**
 * Exact isomorphism test of two undirected views by individualisation and refinement: refine the
 * union jointly; while some class holds two or more nodes of each graph, fix the smallest such
 * class, give one of a's nodes in it and, in turn, each of b's nodes in it the same fresh colour
 * and refine again, backtracking (on an explicit stack) when the histograms stop matching. A
 * discrete colouring pairs the nodes; the pairing is then checked edge by edge.
 *
 * Returns true or false, or null when the graphs have more than `maxNodes` nodes or the search
 * used up its budget. Different node or edge counts give false at any size.
 */
export function isomorphic(a: UndirectedRows, b: UndirectedRows, options: IsomorphismOptions = {}): boolean | null {
  if (a.n !== b.n || undirectedEdgeCount(a) !== undirectedEdgeCount(b)) return false;
  if (a.n > (options.maxNodes ?? 2000)) return null;
  let budget = options.budget ?? 20000;
  const na = a.n;
  if (na === 0) return true;
  const u = disjointUnion(a, b);
  const n = u.n;
  const ref = new Refiner(u, options.cancel);
  let diff = new Int32Array(n + 1);
  let spare = new Int32Array(n);

  /** Refines `col` (k classes) in place to a stable colouring; returns its class count, or -1 on a mismatch. */
  const settle = (col: Int32Array, k: number): number => {
    for (;;) {
      if (diff.length < k) diff = new Int32Array(k);
      if (histogramsDiffer(col, k, na, diff)) return -1;
      const k2 = ref.step(col, k, spare);
      if (k2 === k) return k;
      col.set(spare);
      k = k2;
    }
  };

  /** The leaf check: each colour holds one node of a and one of b; does the pairing keep edges? */
  const pairingIsIsomorphism = (col: Int32Array): boolean => {
    const bOf = new Int32Array(na);
    const byColour = new Int32Array(na);
    for (let v = na; v < n; v++) byColour[col[v]!] = v - na;
    for (let v = 0; v < na; v++) bOf[v] = byColour[col[v]!]!;
    for (let v = 0; v < na; v++) {
      const bv = bOf[v]!;
      const lo = b.indptr[bv]!, hi = b.indptr[bv + 1]!;
      if (hi - lo !== a.indptr[v + 1]! - a.indptr[v]!) return false;
      for (let p = a.indptr[v]!; p < a.indptr[v + 1]!; p++) {
        const w = bOf[a.indices[p]!]!;
        const q = lowerBound(b.indices, lo, hi, w);
        if (q >= hi || b.indices[q] !== w) return false;
      }
    }
    return true;
  };

  interface Frame { col: Int32Array; k: number; target: number; candidates: Int32Array; next: number }
  /** A frame for a stable, histogram-matching colouring; null for a leaf (discrete colouring). */
  const frameFor = (col: Int32Array, k: number): Frame | null => {
    if (k === na) return null;
    const size = new Int32Array(k);
    for (let v = 0; v < na; v++) size[col[v]!]!++;
    let best = -1;
    for (let c = 0; c < k; c++) if (size[c]! >= 2 && (best < 0 || size[c]! < size[best]!)) best = c;
    let target = -1;
    for (let v = 0; v < na; v++) if (col[v] === best) { target = v; break; }
    const candidates = new Int32Array(size[best]!);
    let i = 0;
    for (let v = na; v < n; v++) if (col[v] === best) candidates[i++] = v;
    return { col, k, target, candidates, next: 0 };
  };

  const col0 = new Int32Array(n);
  const k0 = settle(col0, 1);
  if (k0 < 0) return false;
  const root = frameFor(col0, k0);
  if (!root) return pairingIsIsomorphism(col0);
  const stack: Frame[] = [root];
  while (stack.length) {
    const top = stack[stack.length - 1]!;
    if (top.next >= top.candidates.length) { stack.pop(); continue; }
    if (--budget < 0) return null;
    throwIfCancelled(options.cancel);
    const bv = top.candidates[top.next++]!;
    const col = top.col.slice();
    col[top.target] = top.k;
    col[bv] = top.k;
    const k = settle(col, top.k + 1);
    if (k < 0) continue;
    const child = frameFor(col, k);
    if (!child) {
      if (pairingIsIsomorphism(col)) return true;
      continue;
    }
    stack.push(child);
  }
  return false;
}

export interface GraphComparison extends WlComparison {
  /** Exact answer, or null when the graphs are too large for the search or it ran out of budget. */
  isomorphic: boolean | null;
}

/**
 * 1-WL comparison plus the exact isomorphism answer. Graphs that 1-WL tells apart are never
 * isomorphic, so the search only runs when it cannot.
 */
export function compareGraphs(
  a: UndirectedRows, b: UndirectedRows,
  options: { maxRounds?: number } & IsomorphismOptions = {},
): GraphComparison {
  const wl = compareWl(a, b, { ...(options.maxRounds !== undefined ? { maxRounds: options.maxRounds } : {}), ...(options.cancel ? { cancel: options.cancel } : {}) });
  const iso = wl.distinguishable ? false : isomorphic(a, b, options);
  return { ...wl, isomorphic: iso };
}

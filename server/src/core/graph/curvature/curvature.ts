/**
 * Edge curvature of the undirected view (undirected.ts: symmetrised, self-loops dropped, repeated
 * edges merged; degrees are simple-graph degrees). Strongly negative edges are where many paths
 * squeeze through few edges — the over-squashing bottlenecks of message passing (Topping et al.,
 * ICLR 2022).
 *
 * For an edge (i, j) with degrees d_i, d_j and #Δ triangles on it:
 *  - Forman curvature: 4 − d_i − d_j.
 *  - Forman curvature with triangles as 2-cells: 4 − d_i − d_j + 3·#Δ.
 *  - Balanced Forman curvature (Topping et al., ICLR 2022, Definition 1): 0 when min(d_i, d_j) = 1,
 *    otherwise
 *      2/d_i + 2/d_j − 2 + 2·#Δ/max(d_i, d_j) + #Δ/min(d_i, d_j) + (#□ⁱ + #□ʲ)/(γmax·max(d_i, d_j)),
 *    the last term being 0 when γmax = 0. #□ⁱ counts the neighbours k of i (k ≠ j, k not adjacent
 *    to j) that close a 4-cycle i–j–w–k with some w ≠ i not adjacent to i; #□ʲ likewise from j's
 *    side; γmax is the largest number of such w seen from one k (either side).
 *
 * Triangles come from merging the two sorted neighbour rows. The 4-cycle terms mark both rows in
 * stamp arrays and enumerate the 4-cycles once from the cheaper end: for each neighbour k of that
 * end, either scan k's row against the marks or binary-search the other end's candidates in it.
 * One edge costs O(d_i + d_j + Σ_k min(d_k, d · log d_k)); heavy around hubs, hence cancellable.
 */
import type { Cancel, UndirectedRows } from '../structure/undirected';
import { throwIfCancelled } from '../structure/undirected';
import { lowerBound } from '../structure/csr';

export interface EdgeCurvature {
  /** Undirected edges, each once. */
  m: number;
  /** Edge e joins u[e] < v[e]; edges in row order (by u, then v). */
  u: Int32Array;
  v: Int32Array;
  /** Triangles on the edge. */
  triangles: Int32Array;
  /** 4 − d_u − d_v. */
  forman: Int32Array;
  /** 4 − d_u − d_v + 3·triangles. */
  formanTriangles: Int32Array;
  /** Balanced Forman curvature (NaN when `balanced: false` was asked). */
  balancedForman: Float64Array;
}

/** log2 rounded up, for the cost of a binary search in a row of length d. */
const log2 = (d: number): number => 32 - Math.clz32(d);

export interface CurvatureOptions {
  /**
   * Compute balanced Forman curvature (the costly part): for every edge (true, the default), for
   * none (false; NaN), or for the edges whose entry in the mask is 1 (NaN elsewhere).
   */
  balanced?: boolean | Uint8Array;
  cancel?: Cancel;
}

export function edgeCurvature(g: UndirectedRows, options: CurvatureOptions = {}): EdgeCurvature {
  const { n, indptr, indices } = g;
  const balanced = options.balanced ?? true;
  let m = 0;
  for (let i = 0; i < n; i++) {
    const end = indptr[i + 1]!;
    for (let p = indptr[i]!; p < end; p++) if (indices[p]! > i) m++;
  }
  const u = new Int32Array(m), v = new Int32Array(m);
  const triangles = new Int32Array(m), forman = new Int32Array(m), formanTriangles = new Int32Array(m);
  const balancedForman = new Float64Array(m).fill(NaN);
  /** markOfI[w] === i + 1 when w is a neighbour of the current i. */
  const markOfI = new Int32Array(n);
  let e = 0;
  for (let i = 0; i < n; i++) {
    const iLo = indptr[i]!, iHi = indptr[i + 1]!;
    const di = iHi - iLo;
    let marked = false;
    for (let p = iLo; p < iHi; p++) {
      const j = indices[p]!;
      if (j <= i) continue;
      if ((e & 0xffff) === 0) throwIfCancelled(options.cancel);
      const jLo = indptr[j]!, jHi = indptr[j + 1]!;
      const dj = jHi - jLo;
      // Triangles = common neighbours. Merging the two sorted rows reads memory in order and wins
      // for ordinary degrees; next to a hub, scan j's row against marks of i's neighbours or look
      // i's neighbours up in j's row: O(min(d_i + d_j, 4·min(d_j, d_i log d_j))) per edge.
      let t = 0;
      const scan = dj, search = di * log2(dj);
      if (di + dj <= 4 * (scan < search ? scan : search)) {
        for (let a = iLo, b = jLo; a < iHi && b < jHi;) {
          const x = indices[a]!, y = indices[b]!;
          if (x === y) { t++; a++; b++; } else if (x < y) a++; else b++;
        }
      } else if (scan <= search) {
        if (!marked) { for (let a = iLo; a < iHi; a++) markOfI[indices[a]!] = i + 1; marked = true; }
        for (let b = jLo; b < jHi; b++) if (markOfI[indices[b]!] === i + 1) t++;
      } else {
        for (let a = iLo; a < iHi; a++) {
          const x = indices[a]!;
          const q = lowerBound(indices, jLo, jHi, x);
          if (q < jHi && indices[q] === x) t++;
        }
      }
      u[e] = i; v[e] = j;
      triangles[e] = t;
      forman[e] = 4 - di - dj;
      formanTriangles[e] = 4 - di - dj + 3 * t;
      e++;
    }
  }
  const curv: EdgeCurvature = { m, u, v, triangles, forman, formanTriangles, balancedForman };
  if (balanced !== false) fillBalancedForman(g, curv, balanced === true ? null : balanced, options.cancel);
  return curv;
}

/**
 * Balanced Forman curvature of the edges of `c` whose mask entry is 1 (all when `mask` is null),
 * written into c.balancedForman. The triangle counts must already be in `c`.
 */
export function fillBalancedForman(g: UndirectedRows, c: EdgeCurvature, mask: Uint8Array | null, cancel?: Cancel): number {
  const { n, indptr, indices } = g;
  const markI = new Int32Array(n), markJ = new Int32Array(n);
  /** Per w: 4-cycles seen through w for the current edge (reset after each edge). */
  const perW = new Int32Array(n);
  let maxDeg = 0;
  for (let x = 0; x < n; x++) if (indptr[x + 1]! - indptr[x]! > maxDeg) maxDeg = indptr[x + 1]! - indptr[x]!;
  /** Neighbours w of the inner end that may close a 4-cycle. */
  const cand = new Int32Array(maxDeg);
  let squaresOuter = 0, squaresInner = 0, gamma = 0;

  /**
   * The 4-cycles a–b–w–k without diagonals through the edge (a, b): k ~ a, k ≠ b, k not ~ b;
   * w ~ b, w ≠ a, w not ~ a; k ~ w. Sets squaresOuter (distinct k), squaresInner (distinct w) and
   * gamma (most cycles through one k or one w). For each k the pairs come either from scanning
   * k's row against the marks or from binary searches of the candidates w in k's row, whichever
   * is cheaper, so hubs next to the edge cost O(#candidates · log d_k) instead of O(d_k).
   */
  const fourCycles = (a: number, inA: Int32Array, b: number, inB: Int32Array, stamp: number): void => {
    let f = 0;
    const bHi = indptr[b + 1]!;
    for (let q = indptr[b]!; q < bHi; q++) {
      const w = indices[q]!;
      if (w !== a && inA[w] !== stamp) cand[f++] = w;
    }
    squaresOuter = 0; squaresInner = 0; gamma = 0;
    if (f === 0) return;
    const aHi = indptr[a + 1]!;
    for (let p = indptr[a]!; p < aHi; p++) {
      const k = indices[p]!;
      if (k === b || inB[k] === stamp) continue;
      const kLo = indptr[k]!, kHi = indptr[k + 1]!;
      let c = 0;
      if (kHi - kLo <= f * log2(kHi - kLo)) {
        for (let q = kLo; q < kHi; q++) {
          const w = indices[q]!;
          if (w !== a && inB[w] === stamp && inA[w] !== stamp) { c++; perW[w]!++; }
        }
      } else {
        for (let x = 0; x < f; x++) {
          const w = cand[x]!;
          const pos = lowerBound(indices, kLo, kHi, w);
          if (pos < kHi && indices[pos] === w) { c++; perW[w]!++; }
        }
      }
      if (c > 0) { squaresOuter++; if (c > gamma) gamma = c; }
    }
    for (let x = 0; x < f; x++) {
      const w = cand[x]!;
      const c = perW[w]!;
      if (c > 0) { squaresInner++; if (c > gamma) gamma = c; perW[w] = 0; }
    }
  };

  /** Rough work of `fourCycles` with outer end a and inner end b. */
  const cost = (a: number, db: number): number => {
    let sum = 0;
    const aHi = indptr[a + 1]!;
    for (let p = indptr[a]!; p < aHi; p++) {
      const k = indices[p]!;
      const dk = indptr[k + 1]! - indptr[k]!;
      const viaSearch = db * log2(dk);
      sum += dk < viaSearch ? dk : viaSearch;
    }
    return sum;
  };

  let stamp = 0, done = 0;
  for (let e = 0; e < c.m; e++) {
    if (mask && mask[e] !== 1) continue;
    if ((done++ & 0x3ff) === 0) throwIfCancelled(cancel);
    const i = c.u[e]!, j = c.v[e]!, t = c.triangles[e]!;
    const iLo = indptr[i]!, iHi = indptr[i + 1]!, jLo = indptr[j]!, jHi = indptr[j + 1]!;
    const di = iHi - iLo, dj = jHi - jLo;
    const lo = di < dj ? di : dj, hi = di < dj ? dj : di;
    if (lo === 1) { c.balancedForman[e] = 0; continue; }
    stamp++;
    for (let a = iLo; a < iHi; a++) markI[indices[a]!] = stamp;
    for (let b = jLo; b < jHi; b++) markJ[indices[b]!] = stamp;
    // #□ⁱ + #□ʲ and γmax do not depend on which end the search starts from.
    if (cost(i, dj) <= cost(j, di)) fourCycles(i, markI, j, markJ, stamp);
    else fourCycles(j, markJ, i, markI, stamp);
    let ric = 2 / di + 2 / dj - 2 + (2 * t) / hi + t / lo;
    if (gamma > 0) ric += (squaresOuter + squaresInner) / (gamma * hi);
    c.balancedForman[e] = ric;
  }
  return done;
}

/**
 * A lower bound of balanced Forman curvature from degrees and triangles alone: the 4-cycle term
 * is never negative, so dropping it bounds the curvature from below (0 exactly when an end has
 * degree 1).
 */
export function balancedFormanLowerBound(g: UndirectedRows, c: EdgeCurvature): Float64Array {
  const { indptr } = g;
  const lb = new Float64Array(c.m);
  for (let e = 0; e < c.m; e++) {
    const i = c.u[e]!, j = c.v[e]!, t = c.triangles[e]!;
    const di = indptr[i + 1]! - indptr[i]!, dj = indptr[j + 1]! - indptr[j]!;
    const lo = di < dj ? di : dj, hi = di < dj ? dj : di;
    lb[e] = lo === 1 ? 0 : 2 / di + 2 / dj - 2 + (2 * t) / hi + t / lo;
  }
  return lb;
}

export interface LowestBalanced {
  curvature: EdgeCurvature;
  /** The `top` edges of lowest balanced Forman curvature, most negative first (as mostNegativeFirst). */
  order: Int32Array;
  /** Edges whose balanced Forman curvature was computed (the others are NaN). */
  computed: number;
}

/**
 * The `top` most negatively curved edges by balanced Forman curvature, exactly, without computing
 * it on every edge: edges are taken in increasing order of their lower bound (balancedFormanLowerBound)
 * in growing batches, and the search stops once the top-th lowest exact value found is at most
 * the bound of every edge not yet computed (such an edge cannot rank among the first `top`).
 * On graphs with up to `fullBelow` edges every edge is computed.
 */
export function lowestBalancedForman(g: UndirectedRows, top: number, options: { cancel?: Cancel; fullBelow?: number } = {}): LowestBalanced {
  const curv = edgeCurvature(g, { balanced: false, ...(options.cancel ? { cancel: options.cancel } : {}) });
  const m = curv.m;
  const want = Math.min(Math.max(0, top), m);
  if (m <= (options.fullBelow ?? 200_000) || want === 0) {
    fillBalancedForman(g, curv, null, options.cancel);
    return { curvature: curv, order: mostNegativeFirst(curv, 'balancedForman').subarray(0, want), computed: m };
  }
  const lb = balancedFormanLowerBound(g, curv);
  const sortedLb = Float64Array.from(lb).sort();
  const mask = new Uint8Array(m);
  let computed = 0;
  let batch = Math.max(4 * want, 4096);
  for (;;) {
    const theta = sortedLb[Math.min(batch, m) - 1]!;
    const todo = new Uint8Array(m);
    for (let e = 0; e < m; e++) if (mask[e] === 0 && lb[e]! <= theta) { todo[e] = 1; mask[e] = 1; computed++; }
    fillBalancedForman(g, curv, todo, options.cancel);
    if (computed === m) break;
    // The want-th lowest exact value so far.
    const values = new Float64Array(computed);
    for (let e = 0, k = 0; e < m; e++) if (mask[e] === 1) values[k++] = curv.balancedForman[e]!;
    values.sort();
    if (computed >= want && values[want - 1]! <= theta) break;
    batch *= 4;
  }
  const ids: number[] = [];
  for (let e = 0; e < m; e++) if (mask[e] === 1) ids.push(e);
  return { curvature: curv, order: orderByCurvature(curv, Int32Array.from(ids), 'balancedForman').subarray(0, want), computed };
}

export type CurvatureKey = 'balancedForman' | 'forman' | 'formanTriangles';

/**
 * Edge ids ordered most negative first by `key` (ties: lower Forman curvature, then u, then v).
 * NaN values go last.
 */
export function mostNegativeFirst(c: EdgeCurvature, key: CurvatureKey = 'balancedForman'): Int32Array {
  const order = new Int32Array(c.m);
  for (let e = 0; e < c.m; e++) order[e] = e;
  return orderByCurvature(c, order, key);
}

/** Sorts the edge ids in `ids` in place as mostNegativeFirst orders them, and returns them. */
function orderByCurvature(c: EdgeCurvature, ids: Int32Array, key: CurvatureKey): Int32Array {
  const val = c[key];
  return ids.sort((x, y) => {
    const a = val[x]!, b = val[y]!;
    const an = a !== a, bn = b !== b;
    if (an !== bn) return an ? 1 : -1;
    if (!an && a !== b) return a < b ? -1 : 1;
    return c.forman[x]! - c.forman[y]! || c.u[x]! - c.u[y]! || c.v[x]! - c.v[y]!;
  });
}

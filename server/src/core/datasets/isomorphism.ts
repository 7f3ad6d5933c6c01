/**
 * Isomorphic graphs in a dataset, node features (and node labels) included: candidates by a hashed
 * 1-WL refinement run over all graphs at once (initial colour = a hash of the node's exact feature
 * row and label; each round adds order-free sums of hashed out- and in-neighbour colours), graphs
 * grouped by node count, distinct edge count and two order-free sums of their final colours (groups
 * of three or more split further by individualisationCertificate); then every candidate confirmed by
 * an exact test by individualisation and refinement (isomorphic; features compared exactly). Hash
 * collisions only make more candidates or coarser cells; the exact test decides. A test that
 * exceeds its budget is counted as undecided and said so.
 *
 * Graphs are compared as their sets of distinct directed pairs (self-loops kept, repeated entries
 * counted once); an undirected graph stored both ways is thereby compared as undirected. Edge
 * features are not compared.
 *
 * Two problems: isomorphic graphs with different labels (isomorphic-label-conflict) and a
 * validation/test graph isomorphic to a training graph (isomorphic-across-splits).
 */
import { CODES } from '../../../../common/problem-codes';
import type { ProblemLocation } from '../formats/types';
import type { Dataset, DatasetColumn } from './model';
import type { FiledProblem } from './read-common';

export interface IsomorphismOptions {
  /** Refinements (search nodes) allowed for one pair (default 20,000). */
  isoStepsPerPair?: number;
  /** Milliseconds for all exact tests together (default 5,000). */
  isoBudgetMs?: number;
  /** Refinement rounds for the candidates (default 3). */
  isoRounds?: number;
  /** False: no isomorphism checks at all (the analyses' lean reading: the ceiling does its own refinement). */
  isomorphism?: boolean;
}

const KEPT = 20;

function fmix(h: number): number {
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

/** Distinct directed pairs of each graph, sorted: keys u * n + v and offsets. */
export interface SimpleGraphs {
  off: Float64Array;
  src: Int32Array;
  dst: Int32Array;
  key: Float64Array;
}

export function simpleGraphs(ds: Dataset): SimpleGraphs {
  const { nodeOffsets: no, edgeOffsets: eo } = ds;
  const G = ds.graphs;
  const key = new Float64Array(ds.src.length);
  const off = new Float64Array(G + 1);
  let m = 0;
  for (let g = 0; g < G; g++) {
    const n = no[g + 1]! - no[g]!;
    const start = m;
    for (let j = eo[g]!; j < eo[g + 1]!; j++) key[m++] = ds.src[j]! * n + ds.dst[j]!;
    if (m - start > 1) {
      const k = key.subarray(start, m).sort();
      let d = 1;
      for (let i = 1; i < k.length; i++) if (k[i] !== k[d - 1]) k[d++] = k[i]!;
      m = start + d;
    }
    off[g + 1] = m;
  }
  const keys = key.slice(0, m);
  const src = new Int32Array(m), dst = new Int32Array(m);
  for (let g = 0; g < G; g++) {
    const n = no[g + 1]! - no[g]!;
    for (let i = off[g]!; i < off[g + 1]!; i++) { const u = Math.floor(keys[i]! / n); src[i] = u; dst[i] = keys[i]! - u * n; }
  }
  return { off, src, dst, key: keys };
}

/** Hashed colours of every node (two lanes) after `rounds` rounds, from features and node labels. */
export function refinedColours(ds: Dataset, sg: SimpleGraphs, rounds: number): { a: Uint32Array; b: Uint32Array } {
  const N = ds.nodeOffsets[ds.graphs]!;
  let a = new Uint32Array(N), b = new Uint32Array(N);
  const scratch = new Float64Array(1);
  const bits = new Uint32Array(scratch.buffer);
  const mixRow = (col: DatasetColumn | undefined, i: number, ha: number, hb: number): [number, number] => {
    if (!col || col.rows !== N) return [ha, hb];
    const c = col.columns;
    for (let q = 0; q < c; q++) {
      scratch[0] = col.data[i * c + q]!;
      ha = fmix((ha ^ bits[0]!) + Math.imul(bits[1]!, 0x9e3779b1));
      hb = fmix((hb + bits[1]!) ^ Math.imul(bits[0]!, 0x7feb352d));
    }
    return [ha, hb];
  };
  for (let i = 0; i < N; i++) {
    let [ha, hb] = mixRow(ds.nodeFeatures, i, 0x12345, 0x6789a);
    [ha, hb] = mixRow(ds.nodeLabels, i, ha, hb);
    a[i] = ha; b[i] = hb;
  }
  const outA = new Uint32Array(N), outB = new Uint32Array(N), inA = new Uint32Array(N), inB = new Uint32Array(N);
  for (let r = 0; r < rounds; r++) {
    outA.fill(0); outB.fill(0); inA.fill(0); inB.fill(0);
    for (let g = 0; g < ds.graphs; g++) {
      const base = ds.nodeOffsets[g]!;
      for (let i = sg.off[g]!; i < sg.off[g + 1]!; i++) {
        const u = base + sg.src[i]!, v = base + sg.dst[i]!;
        outA[u] = (outA[u]! + fmix(a[v]! ^ 0x5bd1e995)) >>> 0;
        outB[u] = (outB[u]! + fmix(b[v]! + 0x27d4eb2f)) >>> 0;
        inA[v] = (inA[v]! + fmix(a[u]! + 0x165667b1)) >>> 0;
        inB[v] = (inB[v]! + fmix(b[u]! ^ 0x61c88647)) >>> 0;
      }
    }
    const na = new Uint32Array(N), nb = new Uint32Array(N);
    for (let i = 0; i < N; i++) {
      na[i] = fmix(Math.imul(a[i]!, 31) ^ fmix(outA[i]! + 0x3c6ef372) ^ Math.imul(fmix(inA[i]!), 7));
      nb[i] = fmix(Math.imul(b[i]!, 37) + fmix(outB[i]! ^ 0xa54ff53a) + Math.imul(fmix(inB[i]!), 11));
    }
    a = na; b = nb;
  }
  return { a, b };
}

/** Classes of isomorphic graphs among groups of candidates; pairs left undecided. */
export interface IsomorphismClasses {
  /** Each class: graph indices (increasing), only classes of two or more. */
  classes: number[][];
  /** The first undecided pairs (at most 20), and how many graphs were left undecided in all. */
  undecided: Array<[number, number]>;
  undecidedCount: number;
}

export function isomorphismClasses(ds: Dataset, opts: IsomorphismOptions = {}, only?: (g: number) => boolean): IsomorphismClasses {
  const G = ds.graphs;
  const sg = simpleGraphs(ds);
  const { a, b } = refinedColours(ds, sg, opts.isoRounds ?? 3);
  // Signature per graph.
  const groups = new Map<string, number[]>();
  for (let g = 0; g < G; g++) {
    if (only && !only(g)) continue;
    const base = ds.nodeOffsets[g]!, n = ds.nodeOffsets[g + 1]! - base;
    let sa = 0, sb = 0;
    for (let u = base; u < base + n; u++) { sa = (sa + fmix(a[u]! ^ 0xdeadbeef)) >>> 0; sb = (sb + fmix(b[u]! + 0x1b873593)) >>> 0; }
    const k = `${n}:${sg.off[g + 1]! - sg.off[g]!}:${sa}:${sb}`;
    const list = groups.get(k);
    if (list) list.push(g); else groups.set(k, [g]);
  }
  const out: IsomorphismClasses = { classes: [], undecided: [], undecidedCount: 0 };
  const steps = opts.isoStepsPerPair ?? 20_000;
  const start = Date.now(), budget = opts.isoBudgetMs ?? 5000;
  const deadline = start + budget;
  const undecided = (a0: number, b0: number) => {
    out.undecidedCount++;
    if (out.undecided.length < 20) out.undecided.push([a0, b0]);
  };
  for (const list of groups.values()) {
    if (list.length < 2) continue;
    // 1. Graphs stored identically (same pairs, same feature rows node by node) are one unit: the
    //    identity matches them, no search needed. Only units are compared below.
    const byForm = new Map<string, number[][]>();
    const units: number[][] = [];
    for (const g of list) {
      const key = storedKey(ds, sg, g);
      const forms = byForm.get(key);
      const same = forms?.find((f) => sameStored(ds, sg, f[0]!, g));
      if (same) { same.push(g); continue; }
      const unit = [g];
      units.push(unit);
      if (forms) forms.push(unit); else byForm.set(key, [unit]);
    }
    if (units.length === 1) { out.classes.push(units[0]!); continue; }
    // 2. Among three or more look-alike units (regular graphs, where 1-WL sees nothing) each unit
    //    gets a stronger invariant, what refinement makes of each node singled out
    //    (individualisationCertificate), where 1-WL left nodes in shared cells and within the first
    //    half of the budget.
    const g0 = units[0]![0]!, n0 = ds.nodeOffsets[g0 + 1]! - ds.nodeOffsets[g0]!;
    const discrete = new Set(a.subarray(ds.nodeOffsets[g0]!, ds.nodeOffsets[g0 + 1]!)).size === n0;
    const certify = units.length >= 3 && !discrete;
    // 3. The exact test between units' first graphs; units with different certificates are not
    //    isomorphic, a unit without one (past half the budget) is compared with every class.
    const reps: Array<{ cert?: string; cls: number[] }> = [];
    for (const unit of units) {
      const g = unit[0]!;
      const cert = certify && Date.now() <= start + budget / 2 ? individualisationCertificate(ds, sg, a, g) : undefined;
      let placed = false, unknown = false;
      for (const rep of reps) {
        if (cert !== undefined && rep.cert !== undefined && cert !== rep.cert) continue;
        // Past the budget, a unit is not compared at all: counted once as undecided.
        if (Date.now() > deadline) { undecided(rep.cls[0]!, g); unknown = true; break; }
        const verdict = isomorphic(ds, sg, a, rep.cls[0]!, g, steps, deadline);
        if (verdict === undefined) { undecided(rep.cls[0]!, g); unknown = true; break; }
        if (verdict) { rep.cls.push(...unit); placed = true; break; }
      }
      if (!placed && !unknown) reps.push({ ...(cert !== undefined ? { cert } : {}), cls: [...unit] });
    }
    for (const { cls } of reps) if (cls.length > 1) out.classes.push(cls.sort((x, y) => x - y));
  }
  out.classes.sort((x, y) => x[0]! - y[0]!);
  return out;
}

/** A hash of how graph g is stored: its sorted pairs, feature and label rows in node order. */
function storedKey(ds: Dataset, sg: SimpleGraphs, g: number): string {
  let h1 = 0x811c9dc5, h2 = 0x1234567;
  for (let i = sg.off[g]!; i < sg.off[g + 1]!; i++) { const k = sg.key[i]!; h1 = fmix(h1 ^ (k >>> 0)) + Math.imul(h1, 31); h2 = fmix(h2 + Math.floor(k / 4294967296) + i - sg.off[g]!); }
  const N = ds.nodeOffsets[ds.graphs]!;
  const scratch = new Float64Array(1), bits = new Uint32Array(scratch.buffer);
  for (const col of [ds.nodeFeatures, ds.nodeLabels]) {
    if (!col || col.rows !== N) continue;
    for (let i = ds.nodeOffsets[g]! * col.columns; i < ds.nodeOffsets[g + 1]! * col.columns; i++) {
      scratch[0] = col.data[i]!;
      h1 = fmix(h1 ^ bits[0]!) + bits[1]!;
      h2 = fmix(h2 + bits[1]!) ^ bits[0]!;
    }
  }
  return `${h1 >>> 0}:${h2 >>> 0}`;
}

/** Whether graphs g and h are stored identically (the identity is an isomorphism, features included). */
function sameStored(ds: Dataset, sg: SimpleGraphs, g: number, h: number): boolean {
  const n = ds.nodeOffsets[g + 1]! - ds.nodeOffsets[g]!;
  if (ds.nodeOffsets[h + 1]! - ds.nodeOffsets[h]! !== n) return false;
  const m = sg.off[g + 1]! - sg.off[g]!;
  if (sg.off[h + 1]! - sg.off[h]! !== m) return false;
  for (let i = 0; i < m; i++) if (sg.key[sg.off[g]! + i] !== sg.key[sg.off[h]! + i]) return false;
  const N = ds.nodeOffsets[ds.graphs]!;
  for (const col of [ds.nodeFeatures, ds.nodeLabels]) {
    if (!col || col.rows !== N) continue;
    const c = col.columns, a0 = ds.nodeOffsets[g]! * c, b0 = ds.nodeOffsets[h]! * c;
    for (let i = 0; i < n * c; i++) {
      const p = col.data[a0 + i]!, q = col.data[b0 + i]!;
      if (p !== q && !(p !== p && q !== q)) return false;
    }
  }
  return true;
}

/**
 * An isomorphism invariant of graph g stronger than its 1-WL colours: for each node v, refine the
 * graph's colours (`colour`, already refined jointly) with v alone in a colour of its own until the
 * number of colours stops growing, and hash the resulting colour histogram (order-free); the sorted
 * list of these per-node hashes is the certificate. Isomorphic graphs have equal certificates.
 */
export function individualisationCertificate(ds: Dataset, sg: SimpleGraphs, colour: Uint32Array, g: number): string {
  const base = ds.nodeOffsets[g]!, n = ds.nodeOffsets[g + 1]! - base;
  const o0 = sg.off[g]!, o1 = sg.off[g + 1]!;
  let col = new Uint32Array(n), next = new Uint32Array(n);
  const sumOut = new Uint32Array(n), sumIn = new Uint32Array(n);
  const per: number[] = [];
  const distinct = (c: Uint32Array) => new Set(c).size;
  for (let v = 0; v < n; v++) {
    for (let u = 0; u < n; u++) col[u] = colour[base + u]!;
    col[v] = fmix(col[v]! ^ 0xa5a5a5a5) ^ 0x5bd1e995;
    let k = distinct(col);
    for (let round = 0; round < n; round++) {
      sumOut.fill(0); sumIn.fill(0);
      for (let i = o0; i < o1; i++) {
        const u = sg.src[i]!, w = sg.dst[i]!;
        sumOut[u] = (sumOut[u]! + fmix(col[w]! + 0x9e3779b9)) >>> 0;
        sumIn[w] = (sumIn[w]! + fmix(col[u]! ^ 0x85ebca6b)) >>> 0;
      }
      for (let u = 0; u < n; u++) next[u] = fmix(Math.imul(col[u]!, 0x27d4eb2f) ^ fmix(sumOut[u]! + 0x165667b1) ^ Math.imul(fmix(sumIn[u]!), 3));
      [col, next] = [next, col];
      const k2 = distinct(col);
      if (k2 <= k) break;
      k = k2;
    }
    let h = 0;
    for (let u = 0; u < n; u++) h = (h + fmix(col[u]! + 0x61c88647)) >>> 0;
    per.push(h);
  }
  return per.sort((x, y) => x - y).join(',');
}

/** Sorted out- and in-neighbour lists of one graph (local ids). */
function adjacency(sg: SimpleGraphs, g: number, n: number) {
  const o0 = sg.off[g]!, o1 = sg.off[g + 1]!;
  const outPtr = new Int32Array(n + 1), inPtr = new Int32Array(n + 1);
  for (let i = o0; i < o1; i++) { outPtr[sg.src[i]! + 1]!++; inPtr[sg.dst[i]! + 1]!++; }
  for (let u = 0; u < n; u++) { outPtr[u + 1]! += outPtr[u]!; inPtr[u + 1]! += inPtr[u]!; }
  const outIdx = new Int32Array(o1 - o0), inIdx = new Int32Array(o1 - o0);
  const fill = inPtr.slice(0, n);
  for (let i = o0; i < o1; i++) { outIdx[i - o0] = sg.dst[i]!; inIdx[fill[sg.dst[i]!]!++] = sg.src[i]!; }
  return { outPtr, outIdx, inPtr, inIdx, o0, o1 };
}

function hasPair(sg: SimpleGraphs, lo: number, hi: number, key: number): boolean {
  hi--;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const x = sg.key[mid]!;
    if (x === key) return true;
    if (x < key) lo = mid + 1; else hi = mid - 1;
  }
  return false;
}

/**
 * Whether graphs g and h are isomorphic with equal features (and node labels) on matched nodes, by
 * individualisation and refinement: both graphs are refined jointly (one dictionary of colour
 * signatures: own colour, sorted out- and in-neighbour colours) to a stable partition, which must
 * have the same cell sizes on both sides; then a node of the smallest non-singleton cell of g is
 * given a colour of its own, and so in turn each node of the same cell of h, and the search goes on
 * until every cell is a single node; that bijection is then verified edge by edge and feature by
 * feature. Refinement keeps regular graphs (where 1-WL sees nothing) to a shallow search. Undefined
 * when `maxSteps` refinements did not decide it.
 */
export function isomorphic(ds: Dataset, sg: SimpleGraphs, colour: Uint32Array, g: number, h: number, maxSteps: number, deadline = Infinity): boolean | undefined {
  const bg = ds.nodeOffsets[g]!, bh = ds.nodeOffsets[h]!;
  const n = ds.nodeOffsets[g + 1]! - bg;
  if (ds.nodeOffsets[h + 1]! - bh !== n) return false;
  if (sg.off[g + 1]! - sg.off[g]! !== sg.off[h + 1]! - sg.off[h]!) return false;
  if (n === 0) return true;
  const A = adjacency(sg, g, n), B = adjacency(sg, h, n);
  const N = ds.nodeOffsets[ds.graphs]!;
  const feats = ds.nodeFeatures && ds.nodeFeatures.rows === N ? ds.nodeFeatures : undefined;
  const labs = ds.nodeLabels && ds.nodeLabels.rows === N ? ds.nodeLabels : undefined;
  const sameRow = (col: DatasetColumn | undefined, x: number, y: number) => {
    if (!col) return true;
    const c = col.columns;
    for (let q = 0; q < c; q++) {
      const p = col.data[(bg + x) * c + q]!, r = col.data[(bh + y) * c + q]!;
      if (p !== r && !(p !== p && r !== r)) return false;
    }
    return true;
  };

  // Joint colours: both graphs' nodes numbered 0..n-1 (g) and n..2n-1 (h).
  const start = new Int32Array(2 * n);
  {
    const ids = new Map<number, number>();
    for (let i = 0; i < 2 * n; i++) {
      const c = colour[i < n ? bg + i : bh + i - n]!;
      let id = ids.get(c);
      if (id === undefined) { id = ids.size; ids.set(c, id); }
      start[i] = id;
    }
  }
  /** Cell sizes of both sides agree; returns the number of colours, or -1 when they differ. */
  const balanced = (col: Int32Array, k: number): number => {
    const cnt = new Int32Array(k);
    for (let i = 0; i < n; i++) cnt[col[i]!]!++;
    for (let i = n; i < 2 * n; i++) if (--cnt[col[i]!]! < 0) return -1;
    return k;
  };
  /**
   * Refines in place to a stable partition; the number of colours, or -1 when the sides disagree.
   * A node's next colour is a hash of its colour and order-free sums of hashed out- and in-neighbour
   * colours, numbered jointly: a hash collision can only merge cells (a coarser partition, which
   * every isomorphism still respects), never split them, so the pruning stays sound and the final
   * bijection is verified exactly anyway.
   */
  const sumOut = new Uint32Array(2 * n), sumIn = new Uint32Array(2 * n), hashed = new Uint32Array(2 * n);
  const refine = (col: Int32Array): number => {
    let k = 0;
    for (let i = 0; i < 2 * n; i++) if (col[i]! + 1 > k) k = col[i]! + 1;
    if (balanced(col, k) < 0) return -1;
    for (;;) {
      sumOut.fill(0); sumIn.fill(0);
      for (const [G, off] of [[A, 0], [B, n]] as const) {
        for (let u = 0; u < n; u++) {
          for (let p = G.outPtr[u]!; p < G.outPtr[u + 1]!; p++) {
            const v = G.outIdx[p]!;
            sumOut[u + off] = (sumOut[u + off]! + fmix(col[v + off]! + 0x9e3779b9)) >>> 0;
            sumIn[v + off] = (sumIn[v + off]! + fmix(col[u + off]! ^ 0x85ebca6b)) >>> 0;
          }
        }
      }
      for (let i = 0; i < 2 * n; i++) hashed[i] = fmix(Math.imul(col[i]! + 1, 0x27d4eb2f) ^ fmix(sumOut[i]! + 0x165667b1) ^ Math.imul(fmix(sumIn[i]!), 3));
      const ids = new Map<number, number>();
      for (let i = 0; i < 2 * n; i++) {
        let id = ids.get(hashed[i]!);
        if (id === undefined) { id = ids.size; ids.set(hashed[i]!, id); }
        col[i] = id;
      }
      const k2 = ids.size;
      if (balanced(col, k2) < 0) return -1;
      if (k2 <= k) return k2;
      k = k2;
    }
  };
  const verify = (col: Int32Array): boolean => {
    const map = new Int32Array(n);
    const at = new Int32Array(2 * n).fill(-1);
    for (let i = n; i < 2 * n; i++) at[col[i]!] = i - n;
    for (let x = 0; x < n; x++) {
      const y = at[col[x]!]!;
      if (y < 0) return false;
      map[x] = y;
    }
    for (let x = 0; x < n; x++) {
      const y = map[x]!;
      if (!sameRow(feats, x, y) || !sameRow(labs, x, y)) return false;
      for (let p = A.outPtr[x]!; p < A.outPtr[x + 1]!; p++) if (!hasPair(sg, B.o0, B.o1, y * n + map[A.outIdx[p]!]!)) return false;
    }
    return true; // equal distinct-pair counts, and every pair of g maps to one of h
  };
  let steps = maxSteps;
  let undecided = false;
  const search = (col: Int32Array): boolean => {
    if (--steps < 0 || ((steps & 31) === 0 && Date.now() > deadline)) { undecided = true; return false; }
    const k = refine(col);
    if (k < 0) return false;
    if (k === n) return verify(col);
    // The smallest cell with more than one node (colour ids are joint).
    const cnt = new Int32Array(k);
    for (let i = 0; i < n; i++) cnt[col[i]!]!++;
    let cell = -1;
    for (let c = 0; c < k; c++) if (cnt[c]! > 1 && (cell < 0 || cnt[c]! < cnt[cell]!)) cell = c;
    let x = 0;
    while (col[x] !== cell) x++;
    for (let y = n; y < 2 * n; y++) {
      if (col[y] !== cell) continue;
      const next = col.slice();
      next[x] = k;
      next[y] = k;
      if (search(next)) return true;
      if (undecided) return false;
    }
    return false;
  };
  const found = search(start);
  return undecided ? undefined : found;
}

function labelText(col: DatasetColumn, g: number): string {
  const c = col.columns;
  const vals: string[] = [];
  for (let q = 0; q < c; q++) {
    const v = col.data[g * c + q]!;
    vals.push(col.strings ? col.strings[v] ?? String(v) : String(v));
  }
  return c === 1 ? vals[0]! : `[${vals.join(', ')}]`;
}

/** The two isomorphism problems; nothing to do (and nothing computed) without labels or splits. */
export function isomorphismProblems(ds: Dataset, labels: DatasetColumn | undefined, opts: IsomorphismOptions = {}): FiledProblem[] {
  const splits = ds.splits;
  const hasSplits = !!splits && !!splits.train?.length && (!!splits.val?.length || !!splits.test?.length);
  if ((!labels && !hasSplits) || opts.isomorphism === false) return [];
  const out: FiledProblem[] = [];
  const { classes, undecided, undecidedCount } = isomorphismClasses(ds, opts);
  const undecidedNote = undecidedCount
    ? ` ${undecidedCount} graph${undecidedCount === 1 ? '' : 's'} could not be compared with ${undecidedCount === 1 ? 'its' : 'their'} look-alikes within the time allowed (first: graphs ${undecided[0]![0]} and ${undecided[0]![1]}); ${undecidedCount === 1 ? 'it is' : 'they are'} not counted.`
    : '';
  const tensor = ds.edgeTensor?.tensor;
  if (labels) {
    let conflicting = 0, graphsIn = 0, first = -1;
    const locs: ProblemLocation[] = [];
    const quoted: string[] = [];
    for (const cls of classes) {
      const texts = cls.map((g) => labelText(labels, g));
      const distinct = [...new Set(texts)];
      if (distinct.length < 2) continue;
      conflicting++;
      graphsIn += cls.length;
      if (first < 0 || cls[0]! < first) first = cls[0]!;
      const other = cls.find((_g, i) => texts[i] !== texts[0])!;
      if (quoted.length < 3) quoted.push(`graphs ${cls[0]} and ${other}: labels ${texts[0]} and ${labelText(labels, other)}${cls.length > 2 ? `, ${cls.length} graphs in the group` : ''}`);
      for (const g of cls) {
        if (locs.length < KEPT) locs.push({ graph: g, detail: `graph ${g} (label ${labelText(labels, g)})${g === cls[0] ? '' : ` isomorphic to graph ${cls[0]}`}`, ...(tensor ? { tensor } : {}) });
      }
    }
    if (conflicting) {
      out.push({ file: ds.structureFile, problem: {
        code: 'isomorphic-label-conflict', severity: CODES['isomorphic-label-conflict'].severity, count: conflicting, graph: first, graphs: graphsIn,
        ...(tensor ? { tensor } : {}), locations: locs,
        message: `${conflicting} group${conflicting === 1 ? '' : 's'} of isomorphic graphs (node features included) ${conflicting === 1 ? 'carries' : 'carry'} different labels (${quoted.join('; ')}). ` +
          'No model that sees only the structure and these features can get every graph of such a group right; check the labels, or add the information that tells them apart.' + undecidedNote,
      } });
    }
  }
  if (hasSplits) {
    const role = new Uint8Array(ds.graphs); // bit 1 train, 2 val, 4 test
    for (const g of splits!.train ?? []) role[g]! |= 1;
    for (const g of splits!.val ?? []) role[g]! |= 2;
    for (const g of splits!.test ?? []) role[g]! |= 4;
    const leaked: Array<{ g: number; to: number }> = [];
    for (let g = 0; g < ds.graphs; g++) if ((role[g]! & 1) && (role[g]! & 6)) leaked.push({ g, to: g });
    for (const cls of classes) {
      const train = cls.find((g) => role[g]! & 1);
      if (train === undefined) continue;
      for (const g of cls) if ((role[g]! & 6) && !(role[g]! & 1)) leaked.push({ g, to: train });
    }
    if (leaked.length) {
      leaked.sort((x, y) => x.g - y.g);
      const name = (g: number) => (role[g]! & 4 ? 'test' : 'validation');
      const say = (l: { g: number; to: number }) => l.g === l.to ? `graph ${l.g} is in the training split and the ${name(l.g)} split` : `${name(l.g)} graph ${l.g} is isomorphic to training graph ${l.to}`;
      const locs = leaked.slice(0, KEPT).map((l) => ({ graph: l.g, detail: say(l), ...(tensor ? { tensor } : {}) }));
      out.push({ file: ds.structureFile, problem: {
        code: 'isomorphic-across-splits', severity: CODES['isomorphic-across-splits'].severity, count: leaked.length, graph: leaked[0]!.g, graphs: leaked.length,
        ...(tensor ? { tensor } : {}), locations: locs,
        message: `${leaked.length} validation/test graph${leaked.length === 1 ? '' : 's'} ${leaked.length === 1 ? 'is' : 'are'} isomorphic to a training graph, node features included (${leaked.slice(0, 3).map(say).join('; ')}). ` +
          'The model has seen these inputs in training, so the held-out score overstates how it generalises; split by structure (e.g. keep isomorphic graphs in one split).' + undecidedNote,
      } });
    }
  }
  // Graphs left undecided and nothing else to say: an info, so a silent check is never mistaken for a complete one.
  if (undecidedCount && !out.length) {
    const code = labels ? 'isomorphic-label-conflict' : 'isomorphic-across-splits';
    out.push({ file: ds.structureFile, problem: {
      code, severity: 'info', count: undecidedCount, graph: undecided[0]![1], graphs: undecidedCount, ...(tensor ? { tensor } : {}),
      message: `No isomorphic graphs ${labels ? 'with different labels' : 'across the splits'} were found, but the search is incomplete:${undecidedNote}`,
    } });
  }
  return out;
}

/**
 * Isomorphic graphs in a dataset, node features (and node labels) included: candidates by a hashed
 * 1-WL refinement run over all graphs at once (initial colour = a hash of the node's exact feature
 * row and label; each round adds order-free sums of hashed out- and in-neighbour colours), graphs
 * grouped by node count, distinct edge count and two order-free sums of their final colours; then
 * every candidate confirmed by an exact test (backtracking over nodes in breadth-first order, a
 * node tried only on nodes of its refined colour and, past the first, only on neighbours of where
 * its parent went; features compared exactly). Hash collisions only make more candidates; the
 * exact test decides. A test that exceeds its step budget is counted as undecided and said so.
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
  /** Backtracking steps allowed for one pair (default 200,000). */
  isoStepsPerPair?: number;
  /** Milliseconds for all exact tests together (default 5,000). */
  isoBudgetMs?: number;
  /** Refinement rounds for the candidates (default 3). */
  isoRounds?: number;
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
  undecided: Array<[number, number]>;
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
  const out: IsomorphismClasses = { classes: [], undecided: [] };
  const deadline = Date.now() + (opts.isoBudgetMs ?? 5000);
  const steps = opts.isoStepsPerPair ?? 200_000;
  for (const list of groups.values()) {
    if (list.length < 2) continue;
    const reps: number[][] = [];
    for (const g of list) {
      let placed = false;
      for (const cls of reps) {
        const verdict = Date.now() > deadline ? undefined : isomorphic(ds, sg, a, cls[0]!, g, steps);
        if (verdict === undefined) { out.undecided.push([cls[0]!, g]); continue; }
        if (verdict) { cls.push(g); placed = true; break; }
      }
      if (!placed) reps.push([g]);
    }
    for (const cls of reps) if (cls.length > 1) out.classes.push(cls);
  }
  out.classes.sort((x, y) => x[0]! - y[0]!);
  return out;
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
 * Whether graphs g and h are isomorphic with equal features (and node labels) on matched nodes.
 * Undefined when `maxSteps` backtracking steps did not decide it.
 */
export function isomorphic(ds: Dataset, sg: SimpleGraphs, colour: Uint32Array, g: number, h: number, maxSteps: number): boolean | undefined {
  const bg = ds.nodeOffsets[g]!, bh = ds.nodeOffsets[h]!;
  const n = ds.nodeOffsets[g + 1]! - bg;
  if (ds.nodeOffsets[h + 1]! - bh !== n) return false;
  if (sg.off[g + 1]! - sg.off[g]! !== sg.off[h + 1]! - sg.off[h]!) return false;
  if (n === 0) return true;
  const A = adjacency(sg, g, n), B = adjacency(sg, h, n);
  // Colour multisets must agree.
  const ca = Array.from(colour.subarray(bg, bg + n)).sort(), cb = Array.from(colour.subarray(bh, bh + n)).sort();
  for (let i = 0; i < n; i++) if (ca[i] !== cb[i]) return false;
  const sameRow = (col: DatasetColumn | undefined, x: number, y: number) => {
    if (!col) return true;
    const c = col.columns;
    for (let q = 0; q < c; q++) {
      const p = col.data[(bg + x) * c + q]!, r = col.data[(bh + y) * c + q]!;
      if (p !== r && !(p !== p && r !== r)) return false;
    }
    return true;
  };
  const N = ds.nodeOffsets[ds.graphs]!;
  const feats = ds.nodeFeatures && ds.nodeFeatures.rows === N ? ds.nodeFeatures : undefined;
  const labs = ds.nodeLabels && ds.nodeLabels.rows === N ? ds.nodeLabels : undefined;

  // Order: breadth-first over both directions, each component from its rarest-coloured node.
  const freq = new Map<number, number>();
  for (let u = 0; u < n; u++) freq.set(colour[bg + u]!, (freq.get(colour[bg + u]!) ?? 0) + 1);
  const byRarity = Array.from({ length: n }, (_, u) => u).sort((x, y) => freq.get(colour[bg + x]!)! - freq.get(colour[bg + y]!)! || x - y);
  const order = new Int32Array(n), parent = new Int32Array(n).fill(-1);
  const seen = new Uint8Array(n);
  let len = 0;
  for (const s of byRarity) {
    if (seen[s]) continue;
    seen[s] = 1; order[len++] = s;
    for (let q = len - 1; q < len; q++) {
      const u = order[q]!;
      for (const [ptr, idx] of [[A.outPtr, A.outIdx], [A.inPtr, A.inIdx]] as const) {
        for (let p = ptr[u]!; p < ptr[u + 1]!; p++) {
          const v = idx[p]!;
          if (!seen[v]) { seen[v] = 1; parent[v] = u; order[len++] = v; }
        }
      }
    }
  }
  const map = new Int32Array(n).fill(-1), used = new Uint8Array(n);
  let stepsLeft = maxSteps;
  const ok = (x: number, y: number): boolean => {
    if (colour[bg + x] !== colour[bh + y]) return false;
    if (A.outPtr[x + 1]! - A.outPtr[x]! !== B.outPtr[y + 1]! - B.outPtr[y]!) return false;
    if (A.inPtr[x + 1]! - A.inPtr[x]! !== B.inPtr[y + 1]! - B.inPtr[y]!) return false;
    if (hasPair(sg, A.o0, A.o1, x * n + x) !== hasPair(sg, B.o0, B.o1, y * n + y)) return false;
    // Every edge to an already-matched node must exist on the other side, and vice versa (counts).
    let ma = 0, mb = 0;
    for (let p = A.outPtr[x]!; p < A.outPtr[x + 1]!; p++) {
      const z = A.outIdx[p]!;
      if (z === x || map[z]! < 0) continue;
      ma++;
      if (!hasPair(sg, B.o0, B.o1, y * n + map[z]!)) return false;
    }
    for (let p = B.outPtr[y]!; p < B.outPtr[y + 1]!; p++) { const w = B.outIdx[p]!; if (w !== y && used[w]) mb++; }
    if (ma !== mb) return false;
    ma = 0; mb = 0;
    for (let p = A.inPtr[x]!; p < A.inPtr[x + 1]!; p++) {
      const z = A.inIdx[p]!;
      if (z === x || map[z]! < 0) continue;
      ma++;
      if (!hasPair(sg, B.o0, B.o1, map[z]! * n + y)) return false;
    }
    for (let p = B.inPtr[y]!; p < B.inPtr[y + 1]!; p++) { const w = B.inIdx[p]!; if (w !== y && used[w]) mb++; }
    if (ma !== mb) return false;
    return sameRow(feats, x, y) && sameRow(labs, x, y);
  };
  let undecided = false;
  const place = (depth: number): boolean => {
    if (depth === n) return true;
    if (--stepsLeft < 0) { undecided = true; return false; }
    const x = order[depth]!;
    const try1 = (y: number): boolean => {
      if (used[y] || !ok(x, y)) return false;
      map[x] = y; used[y] = 1;
      if (place(depth + 1)) return true;
      map[x] = -1; used[y] = 0;
      return false;
    };
    const p = parent[x]!;
    if (p >= 0) {
      const py = map[p]!;
      for (const [ptr, idx] of [[B.outPtr, B.outIdx], [B.inPtr, B.inIdx]] as const) {
        for (let q = ptr[py]!; q < ptr[py + 1]!; q++) { if (try1(idx[q]!)) return true; if (undecided) return false; }
      }
      return false;
    }
    for (let y = 0; y < n; y++) { if (try1(y)) return true; if (undecided) return false; }
    return false;
  };
  const found = place(0);
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
  if (!labels && !hasSplits) return [];
  const out: FiledProblem[] = [];
  const { classes, undecided } = isomorphismClasses(ds, opts);
  const undecidedNote = undecided.length
    ? ` ${undecided.length} candidate pair${undecided.length === 1 ? '' : 's'} could not be decided within the time allowed (first: graphs ${undecided[0]![0]} and ${undecided[0]![1]}); they are not counted.`
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
  return out;
}

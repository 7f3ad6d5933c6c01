/**
 * The accuracy ceiling of message passing: a message-passing network whose only inputs are the
 * structure (and the given node features) gives the same output to graphs, or nodes, that 1-WL
 * colour refinement cannot tell apart (Xu et al., ICLR 2019; Morris et al., AAAI 2019). So when such
 * look-alikes carry different labels, at most the largest label share of each look-alike group can
 * be right, whatever the model and its training:
 *
 * - graph-level (a dataset of many graphs with one label each): refinement runs JOINTLY over all
 *   graphs (one colour dictionary: the canonical colours of wl.ts depend only on each node's
 *   unfolding tree), from one uniform colour or from each node's exact feature row and node label.
 *   When the joint partition stops changing, two graphs are equivalent iff their colour histograms
 *   agree (each round's colour determines the earlier ones, so agreement at the last round is
 *   agreement at every round). Ceiling = Σ over groups of the largest label count ÷ labelled graphs.
 * - node-level (one graph with node classes): after L rounds, nodes of one colour have the same
 *   computation tree of depth L, so an L-layer model gives them one output. ceiling(L) = Σ over
 *   colours of the largest label count ÷ labelled nodes.
 * - numeric targets (regression) have no accuracy: the groups with the largest spread of targets
 *   are reported, with the error floor (each group predicting its mean / median).
 *
 * Labels are classes when they are strings, or one column of whole numbers with at most
 * MAX_CLASSES distinct values; anything else (fractions, more distinct values, several target
 * columns) is numeric targets. Graphs with a NaN label, and nodes with label −1 / NaN or outside
 * the label mask, are left out of the counts.
 *
 * Augmentations (`triangles`, `cycles:K`) add each node's substructure counts (substructures.ts)
 * to its initial colour and compute the figures again (Bouritsas et al., IEEE TPAMI 2022).
 *
 * Everything runs on the undirected simple view, like wl.ts: edge directions are ignored,
 * self-loops dropped, repeated edges merged.
 */
import type {
  CeilingGroup, ErrorFloor, GraphCeilingAugmented, GraphCeilingResult,
  NodeCeilingAugmented, NodeCeilingLayer, NodeCeilingResult,
} from '../../../../../common/ceiling';
import type { Dataset, DatasetColumn } from '../../datasets/model';
import { throwIfCancelled, type Cancel } from '../../cancel';
import { sortRange } from '../structure/csr';
import type { UndirectedRows } from '../structure/undirected';
import { Refiner, rowColours } from './wl';
import {
  CountBudgetExceeded, MAX_CYCLE_LENGTH, cycleCounts, triangleCounts,
} from './substructures';

/** Labels with more distinct whole-number values than this are read as numeric targets. */
export const MAX_CLASSES = 1000;
/** Graph indices listed per group. */
export const GRAPHS_PER_GROUP = 20;
/** Groups listed by default. */
export const DEFAULT_GROUP_LIMIT = 100;
/** Node-level: default largest layer count. */
export const DEFAULT_LAYERS = 4;
/** Default time budget of each substructure count, in milliseconds. */
export const DEFAULT_COUNT_BUDGET_MS = 20_000;

/** The input cannot give a ceiling (no labels, labels of the wrong length, …): the message says why. */
export class CeilingInputError extends Error {
  override readonly name = 'CeilingInputError';
}

export type Augmentation = { kind: 'triangles' } | { kind: 'cycles'; upTo: number };

/** `triangles` or `cycles:K` (3 ≤ K ≤ 8); throws CeilingInputError otherwise. */
export function parseAugmentation(text: string): Augmentation {
  const t = text.trim();
  if (t === 'triangles') return { kind: 'triangles' };
  const m = /^cycles:(\d+)$/.exec(t);
  if (m) {
    const k = Number(m[1]);
    if (k >= 3 && k <= MAX_CYCLE_LENGTH) return { kind: 'cycles', upTo: k };
    throw new CeilingInputError(`cycles:${m[1]}: cycle lengths go from 3 up to ${MAX_CYCLE_LENGTH} (longer cycles take too long to count)`);
  }
  throw new CeilingInputError(`"${text}" is not an augmentation: use triangles or cycles:K with K from 3 to ${MAX_CYCLE_LENGTH}`);
}

export function augmentationName(a: Augmentation): string {
  return a.kind === 'triangles' ? 'triangles' : `cycles:${a.upTo}`;
}

export interface CeilingOptions {
  /** Start from node feature rows (and, for datasets, node labels). */
  features?: boolean;
  with?: Augmentation[];
  /** Most groups listed (graph-level; default 100). */
  groupLimit?: number;
  /** Time budget of each substructure count (default 20 s). */
  budgetMs?: number;
  now?: () => number;
  cancel?: Cancel;
}

// ---------------------------------------------------------------------------------------------
// Start colours

/** Colours of the rows of `cols` side by side (each n × its width). */
function combinedColours(n: number, cols: Array<{ data: ArrayLike<number>; width: number }>): { colours: Int32Array; classes: number } {
  if (cols.length === 1) return rowColours(cols[0]!.data, n, cols[0]!.width);
  const width = cols.reduce((a, c) => a + c.width, 0);
  const m = new Float64Array(n * width);
  let off = 0;
  for (const c of cols) {
    const d = c.data, w = c.width;
    for (let v = 0; v < n; v++) for (let j = 0; j < w; j++) m[v * width + off + j] = d[v * w + j]!;
    off += w;
  }
  return rowColours(m, n, width);
}

/** Start colours plus the substructure counts of `aug` (null: a count ran past its budget). */
function augmentedStart(
  g: UndirectedRows, base: Int32Array, aug: Augmentation, options: CeilingOptions,
): { colours: Int32Array; classes: number } {
  const n = g.n;
  if (aug.kind === 'triangles') {
    return combinedColours(n, [{ data: base, width: 1 }, { data: triangleCounts(g, options.cancel), width: 1 }]);
  }
  const counts = cycleCounts(g, aug.upTo, {
    budgetMs: options.budgetMs ?? DEFAULT_COUNT_BUDGET_MS,
    ...(options.now ? { now: options.now } : {}),
    ...(options.cancel ? { cancel: options.cancel } : {}),
  });
  return combinedColours(n, [{ data: base, width: 1 }, { data: counts, width: aug.upTo - 2 }]);
}

// ---------------------------------------------------------------------------------------------
// Labels

/** Per graph (or node): class index, or −1 when unlabelled; and the class names. */
interface ClassLabels { kind: 'classes'; cls: Int32Array; names: string[]; labelled: number }
/** Per graph: `width` target values (row-major), NaN rows unlabelled. */
interface TargetLabels { kind: 'targets'; values: Float64Array; width: number; labelled: number; rowOk: Uint8Array }

/**
 * Classes or targets, by the rule in the file comment. `exclude(i, value)` leaves items out
 * (node-level: −1 and outside the mask).
 */
export function readLabels(
  data: ArrayLike<number>, rows: number, width: number, strings?: string[],
  exclude?: (i: number, value: number) => boolean,
): ClassLabels | TargetLabels {
  if (data.length < rows * width) throw new CeilingInputError(`the labels hold ${data.length} values for ${rows} rows of ${width}`);
  const skip = (i: number, x: number) => x !== x || (exclude ? exclude(i, x) : false);
  let whole = width === 1;
  if (whole && !strings) {
    for (let i = 0; i < rows; i++) {
      const x = data[i]!;
      if (skip(i, x)) continue;
      if (!Number.isSafeInteger(x)) { whole = false; break; }
    }
  }
  if (whole) {
    const vals = new Float64Array(rows);
    let m = 0;
    for (let i = 0; i < rows; i++) { const x = data[i]!; if (!skip(i, x)) vals[m++] = x; }
    const sorted = vals.subarray(0, m).sort();
    const distinct: number[] = [];
    for (let i = 0; i < m; i++) if (i === 0 || sorted[i] !== sorted[i - 1]) { distinct.push(sorted[i]!); if (!strings && distinct.length > MAX_CLASSES) break; }
    if (strings || distinct.length <= MAX_CLASSES) {
      const index = new Map<number, number>();
      distinct.forEach((x, i) => index.set(x, i));
      const cls = new Int32Array(rows).fill(-1);
      for (let i = 0; i < rows; i++) { const x = data[i]!; if (!skip(i, x)) cls[i] = index.get(x)!; }
      const names = distinct.map((x) => (strings && strings[x] !== undefined ? strings[x]! : String(x)));
      return { kind: 'classes', cls, names, labelled: m };
    }
  }
  const values = new Float64Array(rows * width);
  const rowOk = new Uint8Array(rows);
  let labelled = 0;
  for (let i = 0; i < rows; i++) {
    let ok = !(exclude && exclude(i, data[i * width]!));
    for (let j = 0; j < width; j++) { const x = data[i * width + j]!; values[i * width + j] = x; if (x !== x) ok = false; }
    if (ok) { rowOk[i] = 1; labelled++; }
  }
  return { kind: 'targets', values, width, labelled, rowOk };
}

// ---------------------------------------------------------------------------------------------
// Graph-level

/**
 * The dataset's graphs as one undirected simple graph over global node ids (graph g's node v is
 * nodeOffsets[g] + v), from its in-range edges: every entry put in both endpoints' rows, each short
 * row sorted, self-loops and repeats dropped. Built straight from the per-graph ranges (no global
 * sort: rows are filled graph by graph). Rows only: the ceiling never reads multiplicities.
 */
export function datasetUnion(ds: Dataset, cancel?: Cancel): UndirectedRows {
  const G = ds.graphs;
  const N = ds.nodeOffsets[G]!;
  const { src, dst, nodeOffsets, edgeOffsets } = ds;
  const start = new Int32Array(N + 1);
  for (let g = 0; g < G; g++) {
    if ((g & 0x3fff) === 0) throwIfCancelled(cancel);
    const off = nodeOffsets[g]!;
    const n = nodeOffsets[g + 1]! - off;
    for (let e = edgeOffsets[g]!, end = edgeOffsets[g + 1]!; e < end; e++) {
      const s = src[e]!, d = dst[e]!;
      if (s >= 0 && s < n && d >= 0 && d < n && s !== d) { start[s + off + 1]!++; start[d + off + 1]!++; }
    }
  }
  for (let v = 0; v < N; v++) start[v + 1]! += start[v]!;
  const raw = new Int32Array(start[N]!);
  const fill = start.slice(0, N);
  for (let g = 0; g < G; g++) {
    const off = nodeOffsets[g]!;
    const n = nodeOffsets[g + 1]! - off;
    for (let e = edgeOffsets[g]!, end = edgeOffsets[g + 1]!; e < end; e++) {
      const s = src[e]!, d = dst[e]!;
      if (s >= 0 && s < n && d >= 0 && d < n && s !== d) { raw[fill[s + off]!++] = d + off; raw[fill[d + off]!++] = s + off; }
    }
  }
  // Sort each row and drop repeats, compacting in place (the write cursor never passes the read one).
  const indptr = new Int32Array(N + 1);
  let w = 0;
  for (let v = 0; v < N; v++) {
    if ((v & 0xffff) === 0) throwIfCancelled(cancel);
    const lo = start[v]!, hi = start[v + 1]!;
    sortRange(raw, lo, hi);
    for (let p = lo; p < hi; p++) if (p === lo || raw[p] !== raw[p - 1]) raw[w++] = raw[p]!;
    indptr[v + 1] = w;
  }
  const indices = raw.slice(0, w);
  return { n: N, indptr, indices };
}

function mix(h: number, x: number): number {
  h = Math.imul(h ^ x, 0x5bd1e995);
  return h ^ (h >>> 15);
}

/**
 * Groups the graphs by their multiset of colours: group ids 0..count-1 in order of each group's
 * first graph. Each graph's colours are sorted (a signature array), hashed, and equal hashes are
 * compared exactly.
 */
export function groupByHistogram(colours: Int32Array, offsets: Float64Array, graphs: number, cancel?: Cancel): { groupOf: Int32Array; count: number } {
  const sorted = colours.slice();
  const hash = new Int32Array(graphs);
  for (let g = 0; g < graphs; g++) {
    if ((g & 0x3fff) === 0) throwIfCancelled(cancel);
    const lo = offsets[g]!, hi = offsets[g + 1]!;
    sortRange(sorted, lo, hi);
    let h = mix(0x3c6ef372, hi - lo);
    for (let p = lo; p < hi; p++) h = mix(h, sorted[p]!);
    h ^= h >>> 16; h = Math.imul(h, 0x85ebca6b); h ^= h >>> 13;
    hash[g] = h;
  }
  let size = 16;
  while (size < 2 * graphs) size *= 2;
  const table = new Int32Array(size).fill(-1);
  const rep = new Int32Array(graphs);
  const groupOf = new Int32Array(graphs);
  const mask = size - 1;
  let count = 0;
  const same = (a: number, b: number): boolean => {
    let pa = offsets[a]!, pb = offsets[b]!;
    const ea = offsets[a + 1]!;
    if (ea - pa !== offsets[b + 1]! - pb) return false;
    while (pa < ea) if (sorted[pa++] !== sorted[pb++]) return false;
    return true;
  };
  for (let g = 0; g < graphs; g++) {
    const h = hash[g]!;
    let pos = h & mask;
    for (;;) {
      const s = table[pos]!;
      if (s < 0) { table[pos] = count; rep[count] = g; groupOf[g] = count++; break; }
      const r = rep[s]!;
      if (hash[r] === h && same(r, g)) { groupOf[g] = s; break; }
      pos = (pos + 1) & mask;
    }
  }
  return { groupOf, count };
}

interface GroupFigures {
  ceiling: number | null;
  conflictingGroups: number;
  groupCount: number;
  errorFloor?: ErrorFloor;
  groups: CeilingGroup[];
}

/** Ceiling (classes) or spread and error floor (targets) of a grouping. */
function groupFigures(
  groupOf: Int32Array, count: number, labels: ClassLabels | TargetLabels, limit: number,
): GroupFigures {
  const G = groupOf.length;
  const size = new Int32Array(count);
  const first = new Int32Array(count).fill(-1);
  for (let g = 0; g < G; g++) { const q = groupOf[g]!; size[q]!++; if (first[q]! < 0) first[q] = g; }
  const order = new Int32Array(count);
  for (let q = 0; q < count; q++) order[q] = q;
  let ceiling: number | null = null;
  let conflicting = 0;
  let errorFloor: ErrorFloor | undefined;
  const conflict = new Uint8Array(count);
  let spread: Float64Array | undefined;
  if (labels.kind === 'classes') {
    // Runs of equal (group, class) keys give each group's label counts.
    const C = Math.max(1, labels.names.length);
    const keys = new Float64Array(labels.labelled);
    let m = 0;
    for (let g = 0; g < G; g++) { const c = labels.cls[g]!; if (c >= 0) keys[m++] = groupOf[g]! * C + c; }
    keys.sort();
    let right = 0;
    let best = 0, lastGroup = -1;
    for (let i = 0; i < m;) {
      let j = i + 1;
      while (j < m && keys[j] === keys[i]) j++;
      const q = Math.floor(keys[i]! / C);
      if (q !== lastGroup) { if (lastGroup >= 0) right += best; lastGroup = q; best = 0; }
      else conflict[q] = 1;
      if (j - i > best) best = j - i;
      i = j;
    }
    if (lastGroup >= 0) right += best;
    for (let q = 0; q < count; q++) conflicting += conflict[q]!;
    ceiling = labels.labelled ? right / labels.labelled : null;
    order.sort((a, b) => conflict[b]! - conflict[a]! || size[b]! - size[a]! || first[a]! - first[b]!);
  } else {
    const { values, width, rowOk } = labels;
    spread = new Float64Array(count);
    // Graphs ordered by group (counting sort), then each group's values sorted per column.
    const start = new Int32Array(count + 1);
    for (let g = 0; g < G; g++) if (rowOk[g]) start[groupOf[g]! + 1]!++;
    for (let q = 0; q < count; q++) start[q + 1]! += start[q]!;
    const m = start[count]!;
    const col = new Float64Array(m);
    let sq = 0, abs = 0;
    for (let j = 0; j < width; j++) {
      const fill = start.slice(0, count);
      for (let g = 0; g < G; g++) if (rowOk[g]) col[fill[groupOf[g]!]!++] = values[g * width + j]!;
      for (let q = 0; q < count; q++) {
        const lo = start[q]!, hi = start[q + 1]!;
        if (hi <= lo) continue;
        const s = col.subarray(lo, hi).sort();
        const d = s[hi - lo - 1]! - s[0]!;
        if (d > spread[q]!) spread[q] = d;
        let mean = 0;
        for (let i = 0; i < s.length; i++) mean += s[i]!;
        mean /= s.length;
        const mid = s.length >> 1;
        const median = s.length % 2 ? s[mid]! : (s[mid - 1]! + s[mid]!) / 2;
        for (let i = 0; i < s.length; i++) { sq += (s[i]! - mean) ** 2; abs += Math.abs(s[i]! - median); }
      }
    }
    const entries = m * width;
    errorFloor = { mse: entries ? sq / entries : 0, mae: entries ? abs / entries : 0 };
    for (let q = 0; q < count; q++) if (spread[q]! > 0) { conflict[q] = 1; conflicting++; }
    const sp = spread;
    order.sort((a, b) => sp[b]! - sp[a]! || size[b]! - size[a]! || first[a]! - first[b]!);
  }
  // The listed groups: their members and label counts in one pass over the graphs.
  const shown = Math.min(limit, count);
  const slot = new Int32Array(count).fill(-1);
  const groups: CeilingGroup[] = [];
  for (let i = 0; i < shown; i++) {
    const q = order[i]!;
    slot[q] = i;
    const gr: CeilingGroup = labels.kind === 'classes'
      ? { size: size[q]!, labels: {}, graphs: [] }
      : { size: size[q]!, spread: spread![q]!, min: new Array<number>(labels.width).fill(Infinity), max: new Array<number>(labels.width).fill(-Infinity), graphs: [] };
    groups.push(gr);
  }
  for (let g = 0; g < G; g++) {
    const s = slot[groupOf[g]!]!;
    if (s < 0) continue;
    const gr = groups[s]!;
    if (gr.graphs.length < GRAPHS_PER_GROUP) gr.graphs.push(g);
    if (labels.kind === 'classes') {
      const c = labels.cls[g]!;
      if (c >= 0) { const name = labels.names[c]!; gr.labels![name] = (gr.labels![name] ?? 0) + 1; }
    } else if (labels.rowOk[g]) {
      for (let j = 0; j < labels.width; j++) {
        const x = labels.values[g * labels.width + j]!;
        if (x < gr.min![j]!) gr.min![j] = x;
        if (x > gr.max![j]!) gr.max![j] = x;
      }
    }
  }
  for (const gr of groups) {
    if (gr.min) { gr.min = gr.min.map((x) => (Number.isFinite(x) ? x : 0)); gr.max = gr.max!.map((x) => (Number.isFinite(x) ? x : 0)); }
  }
  return { ceiling, conflictingGroups: conflicting, groupCount: count, groups, ...(errorFloor ? { errorFloor } : {}) };
}

function columnWidth(c: DatasetColumn): number {
  return Math.max(1, c.columns);
}

/** Graph labels of a dataset as classes or targets; CeilingInputError when there are none. */
export function datasetLabels(ds: Dataset): ClassLabels | TargetLabels {
  const y = ds.graphLabels;
  if (!y) throw new CeilingInputError('the dataset has no graph labels, so there is nothing to be right or wrong about: the ceiling needs one label per graph');
  if (y.rows !== ds.graphs) {
    throw new CeilingInputError(`${y.tensor} holds ${y.rows} graph labels for ${ds.graphs} graphs (see hopscope check: graph-labels-mismatch)`);
  }
  return readLabels(y.data, y.rows, columnWidth(y), y.strings);
}

/** The dataset's start colours: uniform, or its exact node feature rows and node labels. */
function datasetStart(ds: Dataset, features: boolean): { colours: Int32Array; classes: number } {
  const N = ds.nodeOffsets[ds.graphs]!;
  if (!features) return { colours: new Int32Array(N), classes: N > 0 ? 1 : 0 };
  const cols: Array<{ data: ArrayLike<number>; width: number }> = [];
  for (const c of [ds.nodeFeatures, ds.nodeLabels]) {
    if (!c || c.columns === 0) continue;
    if (c.rows !== N) throw new CeilingInputError(`${c.tensor} has ${c.rows} rows but the dataset has ${N} nodes`);
    cols.push({ data: c.data, width: columnWidth(c) });
  }
  if (!cols.length) throw new CeilingInputError('features asked for, but the dataset has no node features or node labels');
  return combinedColours(N, cols);
}

function tooDenseMessage(aug: Augmentation, e: CountBudgetExceeded, where: string): string {
  return `${where} is too dense to count its cycles up to length ${aug.kind === 'cycles' ? aug.upTo : 3} within ` +
    `${e.budgetMs / 1000} s, so ${augmentationName(aug)} was left out; try a shorter length`;
}

/** Which graph of the dataset holds global node `v` (offsets non-decreasing). */
function graphOfNode(offsets: Float64Array, graphs: number, v: number): number {
  let lo = 0, hi = graphs - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >>> 1;
    if (offsets[mid]! <= v) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

/**
 * The active graphs' part of the union: their nodes renumbered contiguously (graph order kept),
 * rows copied with the shift. Edges never leave a graph, so this is the induced subgraph.
 */
function subUnion(g: UndirectedRows, offsets: Float64Array, keep: Int32Array): { g: UndirectedRows; offsets: Float64Array; nodes: Int32Array } {
  let n = 0, m = 0;
  for (let i = 0; i < keep.length; i++) {
    const lo = offsets[keep[i]!]!, hi = offsets[keep[i]! + 1]!;
    n += hi - lo;
    m += g.indptr[hi]! - g.indptr[lo]!;
  }
  const indptr = new Int32Array(n + 1), indices = new Int32Array(m), nodes = new Int32Array(n);
  const off2 = new Float64Array(keep.length + 1);
  let v2 = 0, p2 = 0;
  for (let i = 0; i < keep.length; i++) {
    const lo = offsets[keep[i]!]!, hi = offsets[keep[i]! + 1]!;
    const shift = v2 - lo;
    for (let v = lo; v < hi; v++) {
      nodes[v2] = v;
      for (let p = g.indptr[v]!; p < g.indptr[v + 1]!; p++) indices[p2++] = g.indices[p]! + shift;
      indptr[++v2] = p2;
    }
    off2[i + 1] = v2;
  }
  return { g: { n, indptr, indices }, offsets: off2, nodes };
}

/** Dense ids for `colours` (order kept): returns the class count. */
function compact(colours: Int32Array): number {
  let k = 0;
  for (let v = 0; v < colours.length; v++) if (colours[v]! + 1 > k) k = colours[v]! + 1;
  const id = new Int32Array(k).fill(-1);
  for (let v = 0; v < colours.length; v++) id[colours[v]!] = 0;
  let d = 0;
  for (let c = 0; c < k; c++) if (id[c] === 0) id[c] = d++;
  for (let v = 0; v < colours.length; v++) colours[v] = id[colours[v]!]!;
  return d;
}

/**
 * Joint refinement of all graphs and their grouping by colour histogram. Groups only ever split
 * as rounds go on, so a graph alone in its group is settled: it is set aside, and once settled
 * graphs hold a quarter of the nodes still refined, the rest is copied into a smaller union and
 * refined on (its colours kept, made dense). Stops when every graph is settled or the partition
 * of the remaining nodes no longer changes; `rounds` counts the rounds run until then.
 */
export function refineGraphs(
  union: UndirectedRows, offsets: Float64Array, graphs: number,
  start: { colours: Int32Array; classes: number }, cancel?: Cancel,
): { groupOf: Int32Array; count: number; rounds: number } {
  const groupOf = new Int32Array(graphs).fill(-1);
  let count = 0;
  let g = union, off = offsets, ids = new Int32Array(graphs);
  for (let i = 0; i < graphs; i++) ids[i] = i;
  let cur: Int32Array = start.colours.slice(), k = start.classes;
  let next: Int32Array = new Int32Array(g.n);
  let ref = new Refiner(g, cancel);
  let rounds = 0;
  let settledNodes = 0;
  for (;;) {
    throwIfCancelled(cancel);
    // Settle the graphs alone in their group.
    const grouping = groupByHistogram(cur, off, ids.length, cancel);
    const size = new Int32Array(grouping.count);
    for (let i = 0; i < ids.length; i++) size[grouping.groupOf[i]!]!++;
    let open = 0;
    for (let i = 0; i < ids.length; i++) {
      if (size[grouping.groupOf[i]!] === 1) {
        if (groupOf[ids[i]!]! < 0) { groupOf[ids[i]!] = count++; settledNodes += off[i + 1]! - off[i]!; }
      } else open++;
    }
    const finish = () => {
      const id = new Int32Array(grouping.count).fill(-1);
      for (let i = 0; i < ids.length; i++) {
        if (groupOf[ids[i]!]! >= 0) continue;
        const q = grouping.groupOf[i]!;
        if (id[q]! < 0) id[q] = count++;
        groupOf[ids[i]!] = id[q]!;
      }
      return { groupOf, count, rounds };
    };
    if (open === 0) return finish();
    if (settledNodes > 0 && settledNodes * 4 >= g.n) {
      const keep = new Int32Array(open);
      let j = 0;
      for (let i = 0; i < ids.length; i++) if (groupOf[ids[i]!]! < 0) keep[j++] = i;
      const sub = subUnion(g, off, keep);
      const colours = new Int32Array(sub.g.n);
      for (let v = 0; v < sub.g.n; v++) colours[v] = cur[sub.nodes[v]!]!;
      k = compact(colours);
      cur = colours;
      next = new Int32Array(sub.g.n);
      const ids2 = new Int32Array(open);
      for (let i = 0; i < open; i++) ids2[i] = ids[keep[i]!]!;
      ids = ids2;
      g = sub.g;
      off = sub.offsets;
      ref = new Refiner(g, cancel);
      settledNodes = 0;
      continue;
    }
    const k2 = ref.step(cur, k, next);
    if (k2 === k) return finish();
    [cur, next] = [next, cur];
    k = k2;
    rounds++;
  }
}

/** The graph-level ceiling of a dataset (see the file comment). */
export function graphCeiling(ds: Dataset, options: CeilingOptions = {}): GraphCeilingResult {
  const labels = datasetLabels(ds);
  const union = datasetUnion(ds, options.cancel);
  throwIfCancelled(options.cancel);
  const limit = options.groupLimit ?? DEFAULT_GROUP_LIMIT;
  const start = datasetStart(ds, !!options.features);
  const run = (initial: { colours: Int32Array; classes: number }) => {
    const { groupOf, count, rounds } = refineGraphs(union, ds.nodeOffsets, ds.graphs, initial, options.cancel);
    return { rounds, ...groupFigures(groupOf, count, labels, limit) };
  };
  const base = run(start);
  const result: GraphCeilingResult = {
    task: 'graph', graphs: ds.graphs, labelled: labels.labelled, labelKind: labels.kind,
    start: options.features ? 'features' : 'uniform',
    groups: base.groups, groupCount: base.groupCount, conflictingGroups: base.conflictingGroups,
    ceiling: base.ceiling, ...(base.errorFloor ? { errorFloor: base.errorFloor } : {}),
    rounds: base.rounds,
  };
  if (options.with?.length) {
    result.with = options.with.map((aug): GraphCeilingAugmented => {
      const name = augmentationName(aug);
      try {
        const fig = run(augmentedStart(union, start.colours, aug, options));
        return {
          with: name, ceiling: fig.ceiling, conflictingGroups: fig.conflictingGroups, groupCount: fig.groupCount,
          rounds: fig.rounds, ...(fig.errorFloor ? { errorFloor: fig.errorFloor } : {}),
        };
      } catch (e) {
        if (!(e instanceof CountBudgetExceeded)) throw e;
        const g = graphOfNode(ds.nodeOffsets, ds.graphs, e.node);
        const n = ds.nodeOffsets[g + 1]! - ds.nodeOffsets[g]!;
        return {
          with: name, ceiling: null, conflictingGroups: 0, groupCount: 0, rounds: 0,
          skipped: tooDenseMessage(aug, e, `graph ${g} (${n} nodes, ${ds.edgeOffsets[g + 1]! - ds.edgeOffsets[g]!} edge entries)`),
        };
      }
    });
  }
  return result;
}

// ---------------------------------------------------------------------------------------------
// Node-level

/**
 * Node classes from a label tensor (rows × width): one column of classes, or one-hot rows
 * (width > 1, each row 0/1 with one 1). Label −1 / NaN, all-zero one-hot rows and nodes where
 * `mask` is 0 are left out (class −1). CeilingInputError for numeric targets.
 */
export function nodeClasses(
  data: ArrayLike<number>, rows: number, width: number, strings?: string[], mask?: ArrayLike<number>,
): { cls: Int32Array; names: string[]; labelled: number } {
  let column: ArrayLike<number> = data;
  if (width > 1) {
    const arg = new Float64Array(rows);
    for (let v = 0; v < rows; v++) {
      let one = -1, ok = true;
      for (let j = 0; j < width; j++) {
        const x = data[v * width + j]!;
        if (x === 1 && one < 0) one = j;
        else if (x !== 0) { ok = false; break; }
      }
      if (!ok) throw new CeilingInputError(`the node labels are ${rows} × ${width} but not one-hot rows (row ${v}); the node-level ceiling needs one class per node`);
      arg[v] = one;
    }
    column = arg;
  }
  const lab = readLabels(column, rows, 1, strings, (v, x) => x === -1 || (mask !== undefined && !mask[v]));
  if (lab.kind !== 'classes') {
    throw new CeilingInputError('the node labels are numbers rather than classes (fractions, or more than ' +
      `${MAX_CLASSES} distinct values); the node-level ceiling needs classes`);
  }
  return { cls: lab.cls, names: lab.names, labelled: lab.labelled };
}

function nodeLayerFigures(colours: Int32Array, classes: number, cls: Int32Array, C: number, layers: number, labelled: number): NodeCeilingLayer {
  const n = colours.length;
  const keys = new Float64Array(labelled);
  let m = 0;
  for (let v = 0; v < n; v++) { const c = cls[v]!; if (c >= 0) keys[m++] = colours[v]! * C + c; }
  keys.sort();
  let right = 0, conflicting = 0;
  for (let i = 0; i < m;) {
    // One colour: its runs of equal classes.
    const q = Math.floor(keys[i]! / C);
    let best = 0, total = 0, runs = 0;
    let j = i;
    while (j < m && Math.floor(keys[j]! / C) === q) {
      let r = j + 1;
      while (r < m && keys[r] === keys[j]) r++;
      if (r - j > best) best = r - j;
      total += r - j;
      runs++;
      j = r;
    }
    right += best;
    if (runs > 1) conflicting += total;
    i = j;
  }
  return { layers, ceiling: labelled ? right / labelled : 0, conflictingNodes: conflicting, classes };
}

/** ceiling(L) for L = 0..layers from the given start colours; stableAfter when reached. */
function perLayer(
  g: UndirectedRows, start: { colours: Int32Array; classes: number }, cls: Int32Array, C: number,
  labelled: number, layers: number, cancel?: Cancel,
): { perLayer: NodeCeilingLayer[]; stableAfter: number | null } {
  const ref = new Refiner(g, cancel);
  let cur: Int32Array = start.colours.slice(), k = start.classes, next: Int32Array = new Int32Array(g.n);
  const out: NodeCeilingLayer[] = [nodeLayerFigures(cur, k, cls, C, 0, labelled)];
  let stableAfter: number | null = null;
  for (let L = 1; L <= layers; L++) {
    throwIfCancelled(cancel);
    if (stableAfter === null) {
      const k2 = ref.step(cur, k, next);
      if (k2 === k) stableAfter = L - 1;
      else { [cur, next] = [next, cur]; k = k2; }
    }
    out.push(stableAfter === null ? nodeLayerFigures(cur, k, cls, C, L, labelled) : { ...out[out.length - 1]!, layers: L });
  }
  return { perLayer: out, stableAfter };
}

export interface NodeCeilingInput {
  /** Class per node (−1: left out), e.g. from `nodeClasses`. */
  cls: Int32Array;
  classCount: number;
  /** Node feature rows (n × width), used with `options.features`. */
  features?: { data: ArrayLike<number>; width: number };
  /** Largest layer count (default 4). */
  layers?: number;
}

/** The node-level ceiling of one graph (see the file comment). */
export function nodeCeiling(g: UndirectedRows, input: NodeCeilingInput, options: CeilingOptions = {}): NodeCeilingResult {
  const n = g.n;
  const { cls } = input;
  if (cls.length !== n) throw new CeilingInputError(`${cls.length} node labels for ${n} nodes`);
  let labelled = 0;
  for (let v = 0; v < n; v++) if (cls[v]! >= 0) labelled++;
  if (!labelled) throw new CeilingInputError('no node carries a class label (all are −1, missing or outside the mask)');
  const layers = input.layers ?? DEFAULT_LAYERS;
  const C = Math.max(1, input.classCount);
  let start: { colours: Int32Array; classes: number };
  if (options.features) {
    if (!input.features) throw new CeilingInputError('features asked for, but the graph has no node feature matrix');
    start = rowColours(input.features.data, n, input.features.width);
  } else {
    start = { colours: new Int32Array(n), classes: n > 0 ? 1 : 0 };
  }
  const base = perLayer(g, start, cls, C, labelled, layers, options.cancel);
  const result: NodeCeilingResult = {
    task: 'node', nodes: n, labelled, start: options.features ? 'features' : 'uniform',
    perLayer: base.perLayer, stableAfter: base.stableAfter,
  };
  if (options.with?.length) {
    result.with = options.with.map((aug): NodeCeilingAugmented => {
      const name = augmentationName(aug);
      try {
        const s = augmentedStart(g, start.colours, aug, options);
        return { with: name, perLayer: perLayer(g, s, cls, C, labelled, layers, options.cancel).perLayer };
      } catch (e) {
        if (!(e instanceof CountBudgetExceeded)) throw e;
        return { with: name, perLayer: null, skipped: tooDenseMessage(aug, e, `the graph (stopped at node ${e.node})`) };
      }
    });
  }
  return result;
}

/**
 * Node classes over a dataset of many graphs (node labels, no graph labels: node classification
 * across graphs): the node-level ceiling per layer count on all graphs at once — they are disjoint,
 * so a node's colour depends on its own graph only. `features` starts from the node feature rows.
 */
export function datasetNodeCeiling(ds: Dataset, options: CeilingOptions & { layers?: number } = {}): NodeCeilingResult {
  const y = ds.nodeLabels;
  if (!y) throw new CeilingInputError('the dataset has neither graph labels nor node labels: the ceiling needs labels to bound the accuracy on');
  const N = ds.nodeOffsets[ds.graphs]!;
  if (y.rows !== N) throw new CeilingInputError(`${y.tensor} holds ${y.rows} node labels for ${N} nodes`);
  const { cls, names } = nodeClasses(y.data, y.rows, columnWidth(y), y.strings);
  const x = ds.nodeFeatures;
  if (options.features && x && x.rows !== N) throw new CeilingInputError(`${x.tensor} has ${x.rows} rows but the dataset has ${N} nodes`);
  return nodeCeiling(datasetUnion(ds, options.cancel), {
    cls, classCount: names.length,
    ...(x ? { features: { data: x.data, width: columnWidth(x) } } : {}),
    ...(options.layers !== undefined ? { layers: options.layers } : {}),
  }, options);
}

/**
 * Link-prediction edge splits: the message-passing edges (the graph's edge index) and, per split
 * (train / val / test), the positive and negative node pairs a model is asked to score.
 *
 * Pair tensors are recognised by name (pairRoleOf), in this order:
 *  (a) `{split}_pos_edge_index` / `{split}_neg_edge_index`, `{split}_pos` / `{split}_neg`;
 *  (b) the nested dict benchmark suites save: `{split}.edge` (positives) and `{split}.edge_neg`;
 *  (c) `edge_label_index` (2 x K) with `edge_label` (K, 0/1), the split taken from the parent key
 *      (`val.edge_label_index`) or from the file (`val_data.pt`).
 * Split names: train, val, valid, test. Pairs are 2 x K or K x 2.
 *
 * The model holds raw values (as written); rules/edge-splits.ts turns them into sorted pair keys.
 */
import { baseOf } from '../paths';
import type { Tensor } from '../formats/types';
import type { Split } from '../checks/roles';

export type PairKind = 'pos' | 'neg' | 'pairs' | 'labels';

export interface PairRole {
  split: Split;
  kind: PairKind;
  /** The tensor name without its last segment (pairs and labels of one object share it). */
  owner: string;
}

/** Owner of pairs declared in hopscope.json ("edgeSplits"): a split's pairs and labels match by it, whatever their files. */
export const DECLARED_PAIRS = '#declared';

const SPLIT_WORD = /^(train|val|valid|test)$/;

function splitWord(w: string | undefined): Split | undefined {
  if (!w || !SPLIT_WORD.test(w)) return undefined;
  return w === 'valid' ? 'val' : (w as Split);
}

/** A split named by a file's stem: `val_data.pt`, `test.npz`, `train_split.safetensors`. */
export function splitOfFile(file: string): Split | undefined {
  const base = baseOf(file).toLowerCase();
  const stem = base.replace(/\.[^.]*(\.gz)?$/, '');
  const m = /^(train|val|valid|test)(_data|_graph|_split)?$/.exec(stem);
  return m ? splitWord(m[1]) : undefined;
}

/** Whether tensor `name` (in `file`) holds link-prediction pairs or pair labels, and of which split. */
export function pairRoleOf(name: string, file: string): PairRole | undefined {
  const segs = name.toLowerCase().split(/[./\\]/).filter((s) => s.length > 0);
  const last = segs[segs.length - 1];
  if (!last) return undefined;
  const owner = segs.slice(0, -1).join('.');
  const a = /^(train|val|valid|test)_(pos|neg)(_edge_index|_edge_label_index|_edges?)?$/.exec(last);
  if (a) return { split: splitWord(a[1])!, kind: a[2] as 'pos' | 'neg', owner };
  const parent = splitWord(segs[segs.length - 2]);
  if (parent && (last === 'edge' || last === 'edges')) return { split: parent, kind: 'pos', owner };
  if (parent && (last === 'edge_neg' || last === 'edges_neg')) return { split: parent, kind: 'neg', owner };
  if (last === 'edge_label_index' || last === 'edge_label') {
    const split = parent ?? (segs.length === 1 ? splitOfFile(file) : undefined);
    if (split) return { split, kind: last === 'edge_label' ? 'labels' : 'pairs', owner };
  }
  return undefined;
}

/** One pair tensor read as two columns of raw values (as written, before any index base). */
export interface PairColumns {
  u: Float64Array;
  v: Float64Array;
  /** Stored K x 2 (pair k at flat 2k, 2k+1) rather than 2 x K (pair k at flat k, K + k). */
  transposed: boolean;
}

/** The pairs of a 2 x K or K x 2 numeric tensor, or why it cannot be read as pairs. */
export function readPairs(t: Tensor): PairColumns | string {
  if (t.kind !== 'dense' || t.strings || t.summary) return 'it is not a dense numeric tensor whose values were kept';
  const s = t.shape;
  let transposed: boolean;
  if (s.length === 2 && s[0] === 2) transposed = false;
  else if (s.length === 2 && s[1] === 2) transposed = true;
  else return `it has shape [${s.join(', ')}]; pairs must be 2 x K (row 0 = one end, row 1 = the other) or K x 2`;
  const k = transposed ? s[0]! : s[1]!;
  const d = t.data;
  const u = new Float64Array(k), v = new Float64Array(k);
  for (let i = 0; i < k; i++) {
    u[i] = Number(transposed ? d[2 * i]! : d[i]!);
    v[i] = Number(transposed ? d[2 * i + 1]! : d[k + i]!);
  }
  return { u, v, transposed };
}

/** Flat index in the tensor of end `side` of pair `k`. */
export function flatOf(p: PairColumns, k: number, side: 0 | 1): number {
  return p.transposed ? 2 * k + side : side * p.u.length + k;
}

export type { EdgeSplitCounts } from '../../../../common/report';

// ---------------------------------------------------------------------------------------------
// Sorted pair keys: (u, v) is the number u * n + v (exact while n * n < 2^53).

/** The largest node count whose pair keys are exact doubles. */
export const MAX_KEYED_NODES = 94_906_265;

/** Keys of pairs, canonical (min, max) when `undirected`. */
export function pairKeys(u: ArrayLike<number>, v: ArrayLike<number>, n: number, undirected: boolean): Float64Array {
  const out = new Float64Array(u.length);
  for (let i = 0; i < u.length; i++) {
    const a = u[i]!, b = v[i]!;
    out[i] = undirected && b < a ? b * n + a : a * n + b;
  }
  return out;
}

/**
 * A sorted copy of pair keys (whole numbers in 0 .. 2^53): an LSD radix sort over the low and high
 * 32-bit halves in 11-bit digits, passes whose digit is the same for every key skipped; small or
 * unusual inputs fall back to the typed-array sort.
 */
export function sortedKeys(keys: Float64Array): Float64Array {
  const m = keys.length;
  if (m < 4096) return keys.slice().sort();
  let lo = new Uint32Array(m), hi = new Uint32Array(m);
  for (let i = 0; i < m; i++) {
    const k = keys[i]!;
    if (!(k >= 0 && k <= MAX_SAFE_KEY) || k !== Math.floor(k)) return keys.slice().sort();
    const h = Math.floor(k / TWO32);
    hi[i] = h;
    lo[i] = k - h * TWO32;
  }
  let lo2 = new Uint32Array(m), hi2 = new Uint32Array(m);
  const count = new Int32Array(2048);
  // Digits: low half bits 0-10, 11-21, 22-31; high half bits 0-10, 11-21.
  const passes: Array<[boolean, number]> = [[false, 0], [false, 11], [false, 22], [true, 0], [true, 11]];
  for (const [useHi, shift] of passes) {
    const src = useHi ? hi : lo;
    count.fill(0);
    for (let i = 0; i < m; i++) count[(src[i]! >>> shift) & 2047]++;
    if (count[(src[0]! >>> shift) & 2047] === m) continue; // one digit for all: nothing moves
    let sum = 0;
    for (let d = 0; d < 2048; d++) { const c = count[d]!; count[d] = sum; sum += c; }
    for (let i = 0; i < m; i++) {
      const at = count[(src[i]! >>> shift) & 2047]++;
      lo2[at] = lo[i]!;
      hi2[at] = hi[i]!;
    }
    [lo, lo2] = [lo2, lo];
    [hi, hi2] = [hi2, hi];
  }
  const out = new Float64Array(m);
  for (let i = 0; i < m; i++) out[i] = hi[i]! * TWO32 + lo[i]!;
  return out;
}

const TWO32 = 4294967296;
const MAX_SAFE_KEY = Number.MAX_SAFE_INTEGER;

/** Whether `key` is in sorted `set` (binary search). */
export function hasKey(set: Float64Array, key: number): boolean {
  let lo = 0, hi = set.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (set[mid]! < key) lo = mid + 1; else hi = mid;
  }
  return lo < set.length && set[lo] === key;
}

/**
 * Positions i of `keys` whose key is in sorted `set`: the count and the first `keep` positions.
 * Large inputs are not searched key by key (a binary search per pair misses the cache on every
 * step of a 10M-key set): the keys are sorted, walked against the set with galloping steps, and the
 * distinct member keys found are then looked up, in the keys' own order, for the first positions.
 * `sortedKeysOfKeys`, when the caller already has it, is `sortedKeys(keys)`.
 */
export function memberPositions(keys: Float64Array, set: Float64Array, keep: number, sortedKeysOfKeys?: Float64Array): { count: number; first: number[] } {
  let count = 0;
  const first: number[] = [];
  if (set.length === 0 || keys.length === 0) return { count, first };
  if (keys.length < 256) {
    for (let i = 0; i < keys.length; i++) {
      if (hasKey(set, keys[i]!)) {
        count++;
        if (first.length < keep) first.push(i);
      }
    }
    return { count, first };
  }
  const sorted = sortedKeysOfKeys ?? sortedKeys(keys);
  const members: number[] = [];
  let j = 0;
  const m = set.length;
  for (let i = 0; i < sorted.length && j < m; i++) {
    const k = sorted[i]!;
    if (set[j]! < k) {
      // Gallop: double the step while the set is still below k, then binary search that range.
      let step = 1, hi = j + 1;
      while (hi < m && set[hi]! < k) { j = hi; step *= 2; hi = j + step; }
      let lo = j + 1;
      if (hi > m) hi = m;
      while (lo < hi) {
        const mid = (lo + hi) >>> 1;
        if (set[mid]! < k) lo = mid + 1; else hi = mid;
      }
      j = lo;
      if (j >= m) break;
    }
    if (set[j] === k) {
      count++;
      if (members.length === 0 || members[members.length - 1] !== k) members.push(k);
    }
  }
  if (count > 0 && keep > 0) {
    const found = Float64Array.from(members);
    for (let i = 0; i < keys.length && first.length < keep; i++) if (hasKey(found, keys[i]!)) first.push(i);
  }
  return { count, first };
}

/** The sorted union (duplicates kept) of sorted key sets: pairwise linear merges, no re-sort. */
export function mergeSorted(sets: Float64Array[]): Float64Array {
  let cur = sets.filter((x) => x.length > 0);
  if (cur.length === 0) return new Float64Array(0);
  while (cur.length > 1) {
    const next: Float64Array[] = [];
    for (let i = 0; i < cur.length; i += 2) next.push(i + 1 < cur.length ? mergeTwo(cur[i]!, cur[i + 1]!) : cur[i]!);
    cur = next;
  }
  return cur[0]!;
}

function mergeTwo(a: Float64Array, b: Float64Array): Float64Array {
  const out = new Float64Array(a.length + b.length);
  let i = 0, j = 0, o = 0;
  while (i < a.length && j < b.length) out[o++] = a[i]! <= b[j]! ? a[i++]! : b[j++]!;
  while (i < a.length) out[o++] = a[i++]!;
  while (j < b.length) out[o++] = b[j++]!;
  return out;
}

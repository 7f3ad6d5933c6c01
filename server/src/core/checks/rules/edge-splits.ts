/**
 * Link-prediction splits over the message-passing graph (core/splits/edge-splits.ts reads them):
 * pair ids in range, label vectors that fit their pairs, val/test positives leaked into the
 * message edges, negatives that are edges, a positive in two splits, self-pairs, and val/test
 * pairs touching a node with no message-passing edge. Set operations over sorted pair keys
 * (u * n + v in Float64Arrays, canonical (min, max) when the graph is undirected).
 */
import { MAX_LOCATIONS, type ProblemCode, type ProblemLocation, type Severity } from '../../formats/types';
import type { Split } from '../roles';
import type { GraphPart } from '../graph-check-types';
import type { GraphContext } from './context';
import { describe, EXAMPLES_IN_MESSAGE } from './locations';
import {
  DECLARED_PAIRS, flatOf, MAX_KEYED_NODES, memberPositions, mergeSorted, pairKeys, readPairs, sortedKeys,
  type EdgeSplitCounts, type PairColumns,
} from '../../splits/edge-splits';

const SPLITS: Split[] = ['train', 'val', 'test'];
const SPLIT_NAME: Record<Split, string> = { train: 'train', val: 'validation', test: 'test' };

/** One side (positives or negatives) of one split, as in-range 0-based pairs. */
interface PairSide {
  split: Split;
  sign: 'pos' | 'neg';
  part: GraphPart;
  cols: PairColumns;
  /** Pair positions (in the tensor) kept: in range and whole numbers. */
  at: Int32Array;
  u: Float64Array;
  v: Float64Array;
  keys: Float64Array;
}

/**
 * One side of a split as checked, kept for the checks across per-split files (check-set.ts:
 * `train_data.pt`, `val_data.pt`, `test_data.pt` are three graphs, so a pair in two of them is
 * only seen when they are compared). 0-based in-range pairs; `at` maps back to tensor positions.
 */
export interface SplitSide {
  split: Split;
  sign: 'pos' | 'neg';
  file: string;
  tensor: string;
  cols: PairColumns;
  at: Int32Array;
  u: Float64Array;
  v: Float64Array;
  undirected: boolean;
  /** Added to 0-based ids to write them as the file does (its index base). */
  shift: number;
}

/** Groups of pair parts: plain pos/neg tensors, or labelled pairs with their label vector. */
export function checkEdgeSplits(g: GraphContext, out?: SplitSide[]): EdgeSplitCounts | undefined {
  const pairParts = g.parts.filter((p) => p.guess.role === 'edge-pairs' && p.guess.pair);
  if (pairParts.length === 0) return undefined;
  const labelParts = g.parts.filter((p) => p.guess.role === 'edge-labels' && p.guess.pair);
  const { report, kept, count, base } = g;
  const counts: EdgeSplitCounts = { messageEdges: g.edges.src.length, train: null, val: null, test: null };
  // The graph was built on the ids its edges touch (sparse or huge ids): counts only.
  const keyed = !kept.nodeIds && count.n <= MAX_KEYED_NODES;
  // With the node count taken from the largest edge id, a pair may name a node beyond it (a node
  // with no message edge): widen rather than call it out of range.
  let n = count.n;
  const shift = base.shiftBy;

  interface Raw { split: Split; sign: 'pos' | 'neg'; part: GraphPart; cols: PairColumns; take: Uint8Array | null }
  const raws: Raw[] = [];
  for (const p of pairParts) {
    const role = p.guess.pair!;
    const cols = readPairs(p.tensor);
    if (typeof cols === 'string') {
      report(p, 'edge-shape', `${p.tensor.name} is read as ${SPLIT_NAME[role.split]} pairs, but ${cols}.`, 1);
      continue;
    }
    if (role.kind === 'pos' || role.kind === 'neg') { raws.push({ split: role.split, sign: role.kind, part: p, cols, take: null }); continue; }
    // Labelled pairs: the label vector of the same object says which are positive.
    const lp = labelParts.find((l) => l.guess.pair!.owner === role.owner && l.guess.pair!.split === role.split &&
      (l.file === p.file || role.owner === DECLARED_PAIRS));
    if (!lp) { raws.push({ split: role.split, sign: 'pos', part: p, cols, take: null }); continue; }
    const lt = lp.tensor;
    const k = cols.u.length;
    const len = lt.shape.length === 1 ? lt.shape[0]! : lt.shape.length === 2 && lt.shape[1] === 1 ? lt.shape[0]! : -1;
    if (lt.kind !== 'dense' || lt.strings || lt.summary || len !== k) {
      report(lp, 'pair-labels-mismatch',
        `${lt.name} has shape [${lt.shape.join(', ')}] but ${p.tensor.name} holds ${k} pair${k === 1 ? '' : 's'}: ` +
        'a label vector needs exactly one 0/1 label per pair, in the same order. Its pairs are not checked further.', Math.abs(len - k) || 1);
      if (!counts[role.split]) counts[role.split] = { pos: null, neg: null };
      continue;
    }
    const pos = new Uint8Array(k), neg = new Uint8Array(k);
    let bad = 0;
    const badAt: ProblemLocation[] = [];
    for (let i = 0; i < k; i++) {
      const y = Number(lt.data[i]!);
      if (y === 1) pos[i] = 1;
      else if (y === 0) neg[i] = 1;
      else { bad++; if (badAt.length < MAX_LOCATIONS) badAt.push({ tensor: lt.name, index: i, detail: `${lt.name}[${i}] = ${y}` }); }
    }
    if (bad > 0) {
      report(lp, 'pair-labels-mismatch',
        `${bad} label${bad === 1 ? '' : 's'} in ${lt.name} ${bad === 1 ? 'is' : 'are'} neither 0 nor 1 (${badAt.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')}). ` +
        'Link-prediction labels say whether each pair is an edge (1) or a negative (0); those pairs are left out of the checks.', bad, badAt);
    }
    raws.push({ split: role.split, sign: 'pos', part: p, cols, take: pos });
    raws.push({ split: role.split, sign: 'neg', part: p, cols, take: neg });
  }

  // Counts for the report (every pair as written, labelled ones by their label).
  for (const r of raws) {
    const c = counts[r.split] ?? (counts[r.split] = { pos: null, neg: null });
    let k = r.cols.u.length;
    if (r.take) { k = 0; for (let i = 0; i < r.take.length; i++) k += r.take[i]!; }
    c[r.sign] = (c[r.sign] ?? 0) + k;
  }
  if (!keyed) return counts;

  // Ids: whole numbers in range (after the declared index base).
  if (count.nodeCountFromIds) {
    for (const r of raws) {
      for (let i = 0; i < r.cols.u.length; i++) {
        const a = r.cols.u[i]! - shift, b = r.cols.v[i]! - shift;
        if (Number.isInteger(a) && a >= n) n = a + 1;
        if (Number.isInteger(b) && b >= n) n = b + 1;
      }
    }
    if (n > MAX_KEYED_NODES) return counts;
  }
  const undirected = g.opts.directed === false || (g.opts.directed !== true && looksUndirected(g));
  const sides: PairSide[] = [];
  const outOfRange = new Map<GraphPart, { count: number; locs: ProblemLocation[] }>();
  for (const r of raws) {
    const k = r.cols.u.length;
    const at = new Int32Array(k);
    let m = 0;
    for (let i = 0; i < k; i++) {
      if (r.take && !r.take[i]) continue;
      const a = r.cols.u[i]! - shift, b = r.cols.v[i]! - shift;
      const okA = Number.isInteger(a) && a >= 0 && a < n, okB = Number.isInteger(b) && b >= 0 && b < n;
      if (okA && okB) { at[m++] = i; continue; }
      let o = outOfRange.get(r.part);
      if (!o) { o = { count: 0, locs: [] }; outOfRange.set(r.part, o); }
      o.count++;
      if (o.locs.length < MAX_LOCATIONS) {
        const side: 0 | 1 = okA ? 1 : 0;
        const bad = side === 0 ? r.cols.u[i]! : r.cols.v[i]!;
        o.locs.push({ tensor: r.part.tensor.name, index: flatOf(r.cols, i, side), detail: `pair ${i}: id ${bad}` });
      }
    }
    const kept = at.subarray(0, m);
    const u = new Float64Array(m), v = new Float64Array(m);
    for (let j = 0; j < m; j++) { u[j] = r.cols.u[kept[j]!]! - shift; v[j] = r.cols.v[kept[j]!]! - shift; }
    sides.push({ split: r.split, sign: r.sign, part: r.part, cols: r.cols, at: kept, u, v, keys: pairKeys(u, v, n, undirected) });
  }
  if (out) {
    for (const s of sides) {
      out.push({ split: s.split, sign: s.sign, file: s.part.file, tensor: s.part.tensor.name, cols: s.cols, at: s.at, u: s.u, v: s.v, undirected, shift });
    }
  }
  for (const [part, o] of outOfRange) {
    report(part, 'index-out-of-range',
      `${o.count} pair${o.count === 1 ? '' : 's'} in ${part.tensor.name} name a node that is not in the graph ` +
      `(${o.locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')}); the graph has ${n} nodes (${count.nSource}). ` +
      'Those pairs are left out of the split checks.', o.count, o.locs);
  }

  const locsOf = (s: PairSide, positions: number[], what: (j: number) => string): ProblemLocation[] =>
    positions.map((j) => ({ tensor: s.part.tensor.name, index: flatOf(s.cols, s.at[j]!, 0), detail: `${s.part.tensor.name} pair ${s.at[j]!}: ${what(j)}` }));
  const pairText = (s: PairSide, j: number) => `${s.u[j]! + shift} – ${s.v[j]! + shift}`;
  const say = (s: PairSide, code: ProblemCode, c: { count: number; first: number[] }, what: (j: number) => string, text: (ex: string) => string, severity?: Severity) => {
    if (c.count === 0) return;
    const locs = locsOf(s, c.first, what);
    report(s.part, code, text(locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')), c.count, locs, severity);
  };
  const label = (s: PairSide) => `${SPLIT_NAME[s.split]} ${s.sign === 'pos' ? 'positive' : 'negative'}`;

  // The message edges as sorted keys.
  const message = sortedKeys(pairKeys(kept.src, kept.dst, n, undirected));
  const either = undirected ? ' (in either direction: the graph is undirected)' : '';

  // Positives as sorted keys, made once: the leak, negative and two-split checks all walk them.
  const sortedPos = new Map<PairSide, Float64Array>();
  for (const s of sides) if (s.sign === 'pos') sortedPos.set(s, sortedKeys(s.keys));

  // Leaked positives: val/test positives among the message edges.
  for (const s of sides) {
    if (s.sign !== 'pos' || s.split === 'train') continue;
    const c = memberPositions(s.keys, message, MAX_LOCATIONS, sortedPos.get(s));
    say(s, 'leaked-positive-pairs', c, (j) => `${pairText(s, j)} is a message edge`, (ex) =>
      `${c.count} ${label(s)} pair${c.count === 1 ? '' : 's'} of ${s.part.tensor.name} ${c.count === 1 ? 'is' : 'are'} also in the message-passing edges ` +
      `${g.edges.part.tensor.name}${either} (${ex}). The model can see the edges it is asked to predict, so the ${SPLIT_NAME[s.split]} score is inflated: ` +
      `remove the ${SPLIT_NAME[s.split]} edges (and their reverses) from the message-passing graph.`);
  }

  // Negatives that are edges: among the message edges or any split's positives.
  const known = mergeSorted([message, ...sortedPos.values()]);
  for (const s of sides) {
    if (s.sign !== 'neg') continue;
    const c = memberPositions(s.keys, known, MAX_LOCATIONS);
    say(s, 'negative-pairs-are-edges', c, (j) => `${pairText(s, j)} is an edge`, (ex) =>
      `${c.count} ${label(s)} pair${c.count === 1 ? '' : 's'} of ${s.part.tensor.name} ${c.count === 1 ? 'is' : 'are'} in fact ${c.count === 1 ? 'an edge' : 'edges'} ` +
      `among the message-passing edges or a split's positives${either} (${ex}). Such a pair is scored as a non-edge although it is one; ` +
      'sample negatives against all known edges.', s.split === 'train' ? 'warning' : 'error');
  }

  // A positive in two splits.
  const posBySplit = new Map<Split, PairSide[]>();
  for (const s of sides) if (s.sign === 'pos') { if (!posBySplit.has(s.split)) posBySplit.set(s.split, []); posBySplit.get(s.split)!.push(s); }
  for (let a = 0; a < SPLITS.length; a++) {
    for (let b = a + 1; b < SPLITS.length; b++) {
      const earlier = posBySplit.get(SPLITS[a]!), later = posBySplit.get(SPLITS[b]!);
      if (!earlier || !later) continue;
      const set = mergeSorted(earlier.map((s) => sortedPos.get(s)!));
      for (const s of later) {
        const c = memberPositions(s.keys, set, MAX_LOCATIONS, sortedPos.get(s));
        say(s, 'pairs-in-two-splits', c, (j) => `${pairText(s, j)} is also a ${SPLIT_NAME[SPLITS[a]!]} positive`, (ex) =>
          `${c.count} ${label(s)} pair${c.count === 1 ? '' : 's'} of ${s.part.tensor.name} ${c.count === 1 ? 'is also a' : 'are also'} ${SPLIT_NAME[SPLITS[a]!]} positive${c.count === 1 ? '' : 's'}${either} (${ex}). ` +
          'Each edge belongs to one split: a pair in two splits is seen in one and scored in the other.');
      }
    }
  }

  // Self-pairs.
  for (const s of sides) {
    let cnt = 0;
    const first: number[] = [];
    for (let j = 0; j < s.u.length; j++) if (s.u[j] === s.v[j]) { cnt++; if (first.length < MAX_LOCATIONS) first.push(j); }
    say(s, 'self-pairs', { count: cnt, first }, (j) => `${pairText(s, j)}`, (ex) =>
      `${cnt} ${label(s)} pair${cnt === 1 ? '' : 's'} of ${s.part.tensor.name} join${cnt === 1 ? 's' : ''} a node to itself (${ex}). ` +
      'A self-pair is trivially easy (or impossible) to score; drop it unless the task is about self-loops.');
  }

  // Cold-start pairs: val/test pairs touching a node with no message-passing edge.
  const hasEdge = new Uint8Array(n);
  for (let j = 0; j < kept.src.length; j++) {
    if (kept.src[j] !== kept.dst[j]) { hasEdge[kept.src[j]!] = 1; hasEdge[kept.dst[j]!] = 1; }
  }
  for (const s of sides) {
    if (s.split === 'train') continue;
    let cnt = 0;
    const first: number[] = [];
    for (let j = 0; j < s.u.length; j++) {
      if (!hasEdge[s.u[j]!] || !hasEdge[s.v[j]!]) { cnt++; if (first.length < MAX_LOCATIONS) first.push(j); }
    }
    say(s, 'cold-start-pairs', { count: cnt, first }, (j) => `${pairText(s, j)} touches a node with no message edge`, (ex) =>
      `${cnt} ${label(s)} pair${cnt === 1 ? '' : 's'} of ${s.part.tensor.name} touch${cnt === 1 ? 'es' : ''} a node with no message-passing edge (${ex}). ` +
      "The model sees only such a node's own features: fine for an inductive setup, a surprise otherwise.");
  }
  return counts;
}

/** Undirected when declared, or when most non-loop pairs have their reverse (as the symmetry check decides). */
function looksUndirected(g: GraphContext): boolean {
  const f = g.structure.figures;
  if (f.distinctNonLoopPairs === 0) return false;
  return 1 - f.asymmetricPairs / f.distinctNonLoopPairs >= 0.5;
}

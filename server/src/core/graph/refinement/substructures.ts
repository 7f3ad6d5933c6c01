/**
 * Per-node substructure counts for the accuracy ceiling's augmentations (ceiling.ts): how many
 * triangles, and how many simple cycles of each length 3..K, pass through each node. Added to a
 * node's initial colour they let colour refinement separate graphs 1-WL alone cannot (Bouritsas et
 * al., IEEE TPAMI 2022: counts of substructures as node features lift a message-passing network
 * beyond 1-WL; docs/references.md).
 *
 * Both run on the undirected simple view (undirected.ts). Triangles are counted by intersecting
 * sorted rows, O(Σ d²). Cycles are enumerated: from each start s, a depth-first walk over nodes
 * greater than s, closing back to s; a cycle is counted when its second node is smaller than its
 * last, so each cycle is found exactly once, and every node on it gets one more cycle of that
 * length. The walk's cost grows quickly with density and length, so lengths stop at 8 and the walk
 * looks at a deadline every 65,536 steps: past it, CountBudgetExceeded says in which graph (of a
 * dataset) the count stopped.
 */
import { throwIfCancelled, type Cancel } from '../../cancel';
import type { UndirectedRows } from '../structure/undirected';

/** The longest cycles counted (the bound: the walk grows about as d^K). */
export const MAX_CYCLE_LENGTH = 8;

/** Counting ran past its time budget; `node` is the start node being walked from. */
export class CountBudgetExceeded extends Error {
  override readonly name = 'CountBudgetExceeded';
  constructor(readonly node: number, readonly budgetMs: number) {
    super(`counting stopped after ${budgetMs / 1000} s at node ${node}`);
  }
}

export interface CountOptions {
  /** Milliseconds the count may take (default 20,000). */
  budgetMs?: number;
  /** The clock (default Date.now); tests pass their own. */
  now?: () => number;
  cancel?: Cancel;
}

/** Triangles through each node. */
export function triangleCounts(g: UndirectedRows, cancel?: Cancel): Int32Array {
  const { n, indptr, indices } = g;
  const out = new Int32Array(n);
  for (let u = 0; u < n; u++) {
    if ((u & 0x3fff) === 0) throwIfCancelled(cancel);
    const ue = indptr[u + 1]!;
    for (let p = indptr[u]!; p < ue; p++) {
      const v = indices[p]!;
      if (v <= u) continue;
      // Common neighbours w > v of u and v: rows are sorted, merge from the first entry above v.
      let a = p + 1, b = indptr[v]!;
      const be = indptr[v + 1]!;
      while (b < be && indices[b]! <= v) b++;
      while (a < ue && b < be) {
        const x = indices[a]!, y = indices[b]!;
        if (x < y) a++;
        else if (y < x) b++;
        else { out[u]!++; out[v]!++; out[x]!++; a++; b++; }
      }
    }
  }
  return out;
}

/**
 * Simple cycles of length 3..maxLength through each node: an n × (maxLength − 2) row-major matrix,
 * column j holding cycles of length j + 3. Throws CountBudgetExceeded past the budget.
 */
export function cycleCounts(g: UndirectedRows, maxLength: number, options: CountOptions = {}): Float64Array {
  if (!Number.isInteger(maxLength) || maxLength < 3 || maxLength > MAX_CYCLE_LENGTH) {
    throw new Error(`cycle length must be 3..${MAX_CYCLE_LENGTH}, got ${maxLength}`);
  }
  const { n, indptr, indices } = g;
  const width = maxLength - 2;
  const out = new Float64Array(n * width);
  const budgetMs = options.budgetMs ?? 20_000;
  const now = options.now ?? Date.now;
  const deadline = now() + budgetMs;
  const cancel = options.cancel;
  // The walk's state: path[0..depth] the nodes, pos[d] the next row entry to try at depth d.
  const path = new Int32Array(maxLength);
  const pos = new Int32Array(maxLength);
  const onPath = new Uint8Array(n);
  let steps = 0;
  for (let s = 0; s < n; s++) {
    if (indptr[s + 1]! - indptr[s]! < 2) continue;
    path[0] = s;
    pos[0] = indptr[s]!;
    onPath[s] = 1;
    let depth = 0;
    while (depth >= 0) {
      if ((++steps & 0xffff) === 0) {
        throwIfCancelled(cancel);
        if (now() > deadline) {
          for (let d = 0; d <= depth; d++) onPath[path[d]!] = 0;
          throw new CountBudgetExceeded(s, budgetMs);
        }
      }
      const u = path[depth]!;
      const p = pos[depth]!;
      if (p >= indptr[u + 1]!) { onPath[u] = 0; depth--; continue; }
      pos[depth] = p + 1;
      const w = indices[p]!;
      if (w === s) {
        // Closing edge: a cycle of depth + 1 nodes, counted once (second node < last node).
        if (depth >= 2 && path[1]! < u) {
          const col = depth - 2;
          for (let d = 0; d <= depth; d++) out[path[d]! * width + col]! += 1;
        }
        continue;
      }
      if (w < s || onPath[w] || depth + 1 >= maxLength) continue;
      depth++;
      path[depth] = w;
      pos[depth] = indptr[w]!;
      onPath[w] = 1;
    }
  }
  return out;
}

/**
 * Bridges (cut edges) of the undirected view: edges whose removal splits a connected component.
 * Every message between the two sides has to cross such an edge, which makes bridges the tightest
 * bottlenecks a message-passing model meets.
 *
 * Tarjan's low-link method with an explicit stack (no recursion, so path-like graphs with millions
 * of nodes are fine). The undirected view (undirected.ts) is symmetrised and merges repeated
 * entries; an edge whose multiplicity is 2 or more (stored twice in each direction) is a cycle of
 * its own and never a bridge.
 */
import type { Cancel, UndirectedGraph } from './undirected';
import { throwIfCancelled } from './undirected';

export interface Bridges {
  count: number;
  /** Bridge k joins u[k] and v[k], with u[k] < v[k]; sorted by u, then v. */
  u: Int32Array;
  v: Int32Array;
}

export function findBridges(g: UndirectedGraph, options: { cancel?: Cancel } = {}): Bridges {
  const { n, indptr, indices, mult } = g;
  const disc = new Int32Array(n).fill(-1);
  const low = new Int32Array(n);
  const parent = new Int32Array(n);
  /** Multiplicity of the tree edge from parent[v] to v. */
  const treeMult = new Int32Array(n);
  /** Next adjacency position to look at, per node on the stack. */
  const next = new Int32Array(n);
  const stack = new Int32Array(n);
  const found: number[] = [];
  let time = 0;
  let steps = 0;
  throwIfCancelled(options.cancel);
  for (let root = 0; root < n; root++) {
    if (disc[root]! >= 0) continue;
    let sp = 0;
    stack[sp++] = root;
    disc[root] = low[root] = time++;
    parent[root] = -1;
    next[root] = indptr[root]!;
    while (sp > 0) {
      if ((++steps & 0x3fff) === 0) throwIfCancelled(options.cancel);
      const v = stack[sp - 1]!;
      if (next[v]! < indptr[v + 1]!) {
        const p = next[v]!++;
        const w = indices[p]!;
        if (disc[w]! < 0) {
          parent[w] = v;
          treeMult[w] = mult[p]!;
          disc[w] = low[w] = time++;
          next[w] = indptr[w]!;
          stack[sp++] = w;
        } else if (w !== parent[v] && disc[w]! < low[v]!) {
          low[v] = disc[w]!;
        }
      } else {
        sp--;
        const p = parent[v]!;
        if (p >= 0) {
          if (low[v]! < low[p]!) low[p] = low[v]!;
          if (low[v]! > disc[p]! && treeMult[v] === 1) found.push(p < v ? p : v, p < v ? v : p);
        }
      }
    }
  }
  const count = found.length / 2;
  const order = new Int32Array(count);
  for (let i = 0; i < count; i++) order[i] = i;
  order.sort((x, y) => found[2 * x]! - found[2 * y]! || found[2 * x + 1]! - found[2 * y + 1]!);
  const u = new Int32Array(count), v = new Int32Array(count);
  for (let i = 0; i < count; i++) {
    u[i] = found[2 * order[i]!]!;
    v[i] = found[2 * order[i]! + 1]!;
  }
  return { count, u, v };
}

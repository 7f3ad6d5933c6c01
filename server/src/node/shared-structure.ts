/**
 * A checked graph's degree and neighbour structure (forward and reverse CSR) over
 * SharedArrayBuffers. The graph worker owns the store and keeps this as the structure of every
 * checked graph; a check's outcome hands the same views to the language-server thread (posting a
 * view of shared memory shares it, nothing is copied), which answers node-id hovers from them at
 * once instead of queueing behind the check that keeps the worker busy. The views are read-only
 * by convention: nobody writes a structure after it is built, and a re-check makes a new one.
 *
 * Plain Node, no LSP types; `nodeInfoOf` is the one node-hover computation (worker and LSP).
 */
import type { Csr } from '../core/graph/structure/csr';
import { indexOfId } from '../core/graph/structure/compact';
import type { NodeInfo } from '../../../common/protocol';

export interface SharedStructure {
  /** Nodes of the graph (ids run from indexBase to n - 1 + indexBase). */
  n: number;
  indexBase: 0 | 1;
  /** Forward and reverse CSR over the checked nodes (all n, or the touched ids of `ids`). */
  fwd: Csr;
  rev: Csr;
  /** Present when the graph was checked on its touched ids: CSR node c is the 0-based id ids[c]. */
  ids?: Float64Array;
}

/** The structure a check produced, as the store receives it (plain or shared arrays). */
export interface StructureInput {
  n: number;
  indexBase: 0 | 1;
  fwd: Csr;
  rev: Csr;
  ids?: Float64Array;
}

/** A typed array over shared memory with the contents of `a` (`a` itself when already shared). */
function sharedCopy<T extends Int32Array | Float64Array>(a: T): T {
  if (a.buffer instanceof SharedArrayBuffer) return a;
  const Ctor = a.constructor as { new (b: SharedArrayBuffer): T };
  const s = new Ctor(new SharedArrayBuffer(a.byteLength));
  s.set(a as never);
  return s;
}

const sharedCsr = (g: Csr): Csr => ({ n: g.n, indptr: sharedCopy(g.indptr), indices: sharedCopy(g.indices) });

/**
 * The structure over shared memory. Arrays already shared (the reverse CSR the helper thread
 * builds for large graphs, or a forward one built into shared buffers) are kept as they are;
 * the others are copied once, and the caller keeps the shared copy in place of the original.
 */
export function shareStructure(s: StructureInput): SharedStructure {
  return {
    n: s.n, indexBase: s.indexBase, fwd: sharedCsr(s.fwd), rev: sharedCsr(s.rev),
    ...(s.ids ? { ids: sharedCopy(s.ids) } : {}),
  };
}

/** Whether every array of `s` lives in shared memory (what crosses to the LSP thread uncopied). */
export function isShared(s: SharedStructure): boolean {
  const arrays = [s.fwd.indptr, s.fwd.indices, s.rev.indptr, s.rev.indices, ...(s.ids ? [s.ids] : [])];
  return arrays.every((a) => a.buffer instanceof SharedArrayBuffer);
}

/** Bytes the views span (for the LSP thread's bound on the views it keeps). */
export function structureBytes(s: SharedStructure): number {
  return s.fwd.indptr.byteLength + s.fwd.indices.byteLength + s.rev.indptr.byteLength + s.rev.indices.byteLength + (s.ids?.byteLength ?? 0);
}

/**
 * Degree and first neighbours of `node` (an id as written in the file), or null when it is not a
 * node of the graph. A graph checked on its touched ids answers for an untouched id below the node
 * count as an isolated node; one beyond the distinct ids of a sparse graph is not a node.
 */
export function nodeInfoOf(s: SharedStructure, node: number, maxNeighbours = 8): NodeInfo | null {
  const id = node - s.indexBase;
  if (!Number.isInteger(id) || id < 0 || (!s.ids && id >= s.n)) return null;
  const u = s.ids ? indexOfId(s.ids, id) : id;
  if (u < 0) {
    return s.ids!.length < s.n && id < s.n ? { node, nodes: s.n, outDegree: 0, inDegree: 0, outNeighbours: [], inNeighbours: [] } : null;
  }
  if (u >= s.fwd.n) return null;
  const idOf = (v: number) => (s.ids ? s.ids[v]! : v) + s.indexBase;
  const max = Math.max(0, Math.min(maxNeighbours | 0, 1000));
  const row = (g: Csr) => Array.from(g.indices.subarray(g.indptr[u]!, Math.min(g.indptr[u + 1]!, g.indptr[u]! + max)), idOf);
  return {
    node, nodes: s.n,
    outDegree: s.fwd.indptr[u + 1]! - s.fwd.indptr[u]!,
    inDegree: s.rev.indptr[u + 1]! - s.rev.indptr[u]!,
    outNeighbours: row(s.fwd),
    inNeighbours: row(s.rev),
  };
}

/**
 * Whole-graph figures of a directed edge list: self-loops, duplicates, asymmetric pairs, isolated
 * nodes, weakly connected components. O(N + E) time, typed arrays only.
 */
import { buildSortedPair, lowerBound, type Csr } from './csr';
import { timed } from '../../timing';
import type { GraphFigures } from '../../../../../common/report';

/**
 * The report's graph figures (common/report.ts) as computed here, without the index base (the
 * checks know it) and with the count of distinct non-loop pairs the symmetry rule needs.
 */
export interface StructureFigures extends Omit<GraphFigures, 'indexBase'> {
  /** Distinct (u, v), u ≠ v (so reciprocity = 1 − asymmetricPairs / distinctNonLoopPairs). */
  distinctNonLoopPairs: number;
}

export interface Structure {
  figures: StructureFigures;
  /** Forward graph, rows sorted (targets of each node). */
  fwd: Csr;
  /** Reverse graph, rows sorted (sources of edges into each node). */
  rev: Csr;
}

/** Ids in src/dst must already be in [0, n). */
export function analyseStructure(n: number, src: Int32Array, dst: Int32Array): Structure {
  const e = src.length;
  const build = timed('build', () => buildSortedPair(n, src, dst, { components: true }));
  const { fwd, rev } = build;

  let selfLoops = 0;
  for (let k = 0; k < e; k++) if (src[k] === dst[k]) selfLoops++;

  let duplicates = 0;
  let distinctNonLoop = 0;
  let asymmetric = 0;
  let isolated = 0;
  const fp = fwd.indptr, fi = fwd.indices, rp = rev.indptr, ri = rev.indices;
  for (let u = 0; u < n; u++) {
    const fEnd = fp[u + 1]!;
    const rEnd = rp[u + 1]!;
    let r = rp[u]!;
    let prev = -1;
    let incident = false;
    for (let p = fp[u]!; p < fEnd; p++) {
      const v = fi[p]!;
      if (v === prev) { duplicates++; continue; }
      prev = v;
      if (v === u) continue;
      incident = true;
      distinctNonLoop++;
      // Is there an edge v → u, i.e. is v among the sources of edges into u? Both rows are sorted.
      while (r < rEnd && ri[r]! < v) r++;
      if (r >= rEnd || ri[r] !== v) asymmetric++;
    }
    if (!incident) {
      // Any in-edge from another node?
      for (let q = rp[u]!; q < rEnd; q++) {
        if (ri[q] !== u) { incident = true; break; }
      }
      if (!incident) isolated++;
    }
  }

  return {
    fwd,
    rev,
    figures: {
      nodes: n,
      edges: e,
      directed: asymmetric > 0,
      selfLoops,
      duplicateEdges: duplicates,
      asymmetricPairs: asymmetric,
      distinctNonLoopPairs: distinctNonLoop,
      isolatedNodes: isolated,
      components: build.components ? build.components() : countComponentsCsr(fwd),
    },
  };
}

/**
 * Weakly connected components by union-find with path halving, over a CSR with rows in node
 * order: the root of each row's node is found once per row, so half of the finds walk
 * sequentially through memory. Links the larger root under the smaller (deterministic).
 */
export function countComponentsCsr(g: Csr): number {
  const { n, indptr, indices } = g;
  const parent = new Int32Array(n);
  for (let i = 0; i < n; i++) parent[i] = i;
  let components = n;
  for (let u = 0; u < n; u++) {
    const end = indptr[u + 1]!;
    let p = indptr[u]!;
    if (p === end) continue;
    let ru = u;
    while (parent[ru] !== ru) { const g2 = parent[parent[ru]!]!; parent[ru] = g2; ru = g2; }
    for (; p < end; p++) {
      let rv = indices[p]!;
      while (parent[rv] !== rv) { const g2 = parent[parent[rv]!]!; parent[rv] = g2; rv = g2; }
      if (rv === ru) continue;
      if (ru < rv) parent[rv] = ru;
      else { parent[ru] = rv; ru = rv; }
      components--;
    }
  }
  return components;
}

/**
 * Edge ids (positions in src/dst) of the first `limit` entries that repeat an earlier (u, v),
 * in file order. Needs the sorted forward graph. Each entry is looked up in its sorted row (its
 * lower bound p) and a bit per CSR position records the pairs met; an entry whose pair occurs
 * once is skipped. Repeats usually show up early, so the first PROBE_ENTRIES entries are looked
 * up directly; past them only entries whose source row holds a repeated target are looked up (one
 * pass over the rows marks those sources), so the rest of the file-order scan is a sequential read
 * for most entries. O(N + E + R log d) for R looked-up entries.
 */
export function duplicateExamples(fwd: Csr, src: Int32Array, dst: Int32Array, limit: number): number[] {
  const { n, indptr, indices } = fwd;
  const out: number[] = [];
  const e = src.length;
  const seen = new Int32Array((indices.length >>> 5) + 1);
  let hasRepeat: Uint8Array | null = null;
  for (let k = 0; k < e && out.length < limit; k++) {
    const u = src[k]!;
    if (k === PROBE_ENTRIES) {
      hasRepeat = new Uint8Array(n);
      let any = false;
      for (let r = 0; r < n; r++) {
        const end = indptr[r + 1]!;
        for (let q = indptr[r]! + 1; q < end; q++) {
          if (indices[q] === indices[q - 1]) { hasRepeat[r] = 1; any = true; break; }
        }
      }
      if (!any) break;
    }
    if (hasRepeat && !hasRepeat[u]) continue;
    const v = dst[k]!;
    const end = indptr[u + 1]!;
    const p = lowerBound(indices, indptr[u]!, end, v);
    if (p + 1 >= end || indices[p + 1] !== v) continue;
    const bit = 1 << (p & 31);
    if (seen[p >>> 5]! & bit) out.push(k);
    else seen[p >>> 5]! |= bit;
  }
  return out;
}

/** Entries duplicateExamples looks up one by one before it marks the rows that hold repeats. */
const PROBE_ENTRIES = 1 << 16;

/** Edge ids of the first `limit` entries u → v (u ≠ v) whose reverse is absent, in file order. */
export function asymmetricExamples(fwd: Csr, src: Int32Array, dst: Int32Array, limit: number): number[] {
  const out: number[] = [];
  const fp = fwd.indptr, fi = fwd.indices;
  for (let k = 0; k < src.length && out.length < limit; k++) {
    const u = src[k]!, v = dst[k]!;
    if (u === v) continue;
    const hi = fp[v + 1]!;
    const p = lowerBound(fi, fp[v]!, hi, u);
    if (p >= hi || fi[p] !== u) out.push(k);
  }
  return out;
}

/** The first `limit` isolated node ids. */
export function isolatedExamples(fwd: Csr, rev: Csr, limit: number): number[] {
  const out: number[] = [];
  for (let u = 0; u < fwd.n && out.length < limit; u++) {
    let incident = false;
    for (let p = fwd.indptr[u]!; p < fwd.indptr[u + 1]! && !incident; p++) if (fwd.indices[p] !== u) incident = true;
    for (let p = rev.indptr[u]!; p < rev.indptr[u + 1]! && !incident; p++) if (rev.indices[p] !== u) incident = true;
    if (!incident) out.push(u);
  }
  return out;
}

/**
 * Whole-graph figures of a directed edge list: self-loops, duplicates, asymmetric pairs, isolated
 * nodes, weakly connected components. O(N + E) time, typed arrays only.
 */
import { buildSortedPair, lowerBound, type Csr, type RowFigures } from './csr';
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
  const build = timed('build', () => buildSortedPair(n, src, dst, { components: true, rowFigures: true }));
  const { fwd, rev } = build;

  const rows = build.rowFigures ? build.rowFigures() : rowFigures(fwd, rev, 0, n);
  const { selfLoops, duplicates, distinctNonLoop, asymmetric, isolated } = rows;

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
      components: build.components ? build.components() : countComponentsPair(fwd, rev),
    },
  };
}

/**
 * The figures read row by row from both sorted directions, over the nodes [lo, hi): self-loop
 * entries, repeated entries, distinct (u, v) with u ≠ v, those without their reverse, and isolated
 * nodes (no edge to or from another node). Ranges add up: a builder may share the rows between threads
 * (node/pair-build.ts) and sum the parts.
 */
export function rowFigures(fwd: Csr, rev: Csr, lo: number, hi: number): RowFigures {
  let selfLoops = 0;
  let duplicates = 0;
  let distinctNonLoop = 0;
  let asymmetric = 0;
  let isolated = 0;
  const fp = fwd.indptr, fi = fwd.indices, rp = rev.indptr, ri = rev.indices;
  for (let u = lo; u < hi; u++) {
    const fEnd = fp[u + 1]!;
    const rEnd = rp[u + 1]!;
    let r = rp[u]!;
    let prev = -1;
    let incident = false;
    for (let p = fp[u]!; p < fEnd; p++) {
      const v = fi[p]!;
      if (v === u) selfLoops++;
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
  return { selfLoops, duplicates, distinctNonLoop, asymmetric, isolated };
}

/**
 * Weakly connected components from both CSR directions, skipping most of the edges of a graph
 * with one large component (the sampling idea of Afforest, Sutton, Gawande and Bhattacharya,
 * IPDPS 2018). First each node is linked to the first node of its forward row and of its reverse
 * row; then the most common root among up to 1,024 evenly spaced nodes names the large component;
 * last, every node not in it links along its whole forward and reverse rows, while the nodes in it
 * are skipped. Skipping is safe because every edge u → v is in u's forward row and in v's reverse
 * row: if both ends were skipped they were both in the large component already, and if one was
 * not, that end's turn linked the edge (a node's set only grows, so one in the large component at
 * its turn stays in it). About three random reads per node instead of one per edge entry (the
 * union-find over every entry this replaced took 5 s of the 100M-entry check).
 */
export function countComponentsPair(fwd: Csr, rev: Csr): number {
  const { n } = fwd;
  const parent = new Int32Array(n);
  for (let i = 0; i < n; i++) parent[i] = i;
  const find = (x: number): number => {
    while (parent[x] !== x) { const g = parent[parent[x]!]!; parent[x] = g; x = g; }
    return x;
  };
  const link = (a: number, b: number): void => {
    const ra = find(a), rb = find(b);
    if (ra < rb) parent[rb] = ra;
    else if (rb < ra) parent[ra] = rb;
  };
  const fp = fwd.indptr, fi = fwd.indices, rp = rev.indptr, ri = rev.indices;
  for (let u = 0; u < n; u++) {
    if (fp[u + 1]! > fp[u]!) link(u, fi[fp[u]!]!);
    if (rp[u + 1]! > rp[u]!) link(u, ri[rp[u]!]!);
  }
  // The large component: the most common root among evenly spaced samples.
  const samples = Math.min(n, 1024);
  const roots = new Int32Array(samples);
  for (let k = 0; k < samples; k++) roots[k] = find(Math.floor((k * n) / samples));
  roots.sort();
  let big = -1, best = 0;
  for (let k = 0; k < samples;) {
    let j = k;
    while (j < samples && roots[j] === roots[k]) j++;
    if (j - k > best) { best = j - k; big = roots[k]!; }
    k = j;
  }
  for (let u = 0; u < n; u++) {
    if (big >= 0 && find(u) === find(big)) continue;
    for (let p = fp[u]!, end = fp[u + 1]!; p < end; p++) link(u, fi[p]!);
    for (let p = rp[u]!, end = rp[u + 1]!; p < end; p++) link(u, ri[p]!);
  }
  let components = 0;
  for (let i = 0; i < n; i++) if (parent[i] === i) components++;
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

/**
 * The receptive-field panel's two structure views, for the nodes and edges it draws:
 * - 1-WL classes: the stable colour of each drawn node after refining the whole graph (wl.ts), and
 *   the groups of drawn nodes that share a colour — nodes that no message-passing network without
 *   distinguishing node features can tell apart;
 * - bottlenecks: Forman and balanced Forman curvature of each drawn edge (curvature.ts) and whether
 *   it is a bridge of the whole graph (bridges.ts).
 * All on the undirected simple view (undirected.ts).
 *
 * Curvature is computed on a small piece of the graph instead of all of it: the curvature of an
 * edge (i, j) reads only the degrees of i and j, their common neighbours and the 4-cycles
 * i–j–w–k with k ~ i and w ~ j, so it depends only on the subgraph induced by N[i] ∪ N[j]. The
 * subgraph induced by the drawn nodes and their neighbours contains that set for every drawn edge,
 * so its curvatures of the drawn edges equal those of the whole graph, at a cost bounded by the
 * neighbourhood of the drawing.
 */
import { lowerBound } from './structure/csr';
import { undirectedView, type Cancel, type UndirectedGraph, type UndirectedRows } from './structure/undirected';
import { colourGroups, refineWl, type WlResult } from './refinement/wl';
import { findBridges, type Bridges } from './structure/bridges';
import { edgeCurvature } from './curvature/curvature';
import type { Csr } from './structure/csr';

export interface WlForNodes {
  /** Classes per refinement round of the whole graph from a uniform start (stable count last). */
  classesPerRound: number[];
  stableAfter: number | null;
  /** Final colour per requested node (-1 for an id outside the graph). */
  colours: Int32Array;
  /** Size of each requested node's colour class in the whole graph (0 outside). */
  classSizes: Int32Array;
  /** Requested nodes sharing a colour, two or more per group: largest first, then by smallest id. */
  groups: Array<{ colour: number; nodes: number[]; inGraph: number }>;
  /** Nodes of the whole graph whose colour is shared with another node. */
  sharedInGraph: number;
}

export interface CurvatureForEdges {
  /** Per requested pair: whether u and v are adjacent in the undirected view. */
  present: Uint8Array;
  forman: Float64Array;
  formanTriangles: Float64Array;
  balancedForman: Float64Array;
  triangles: Int32Array;
  bridge: Uint8Array;
  /** Balanced Forman is skipped (NaN) when the neighbourhood of the drawing is very large. */
  balancedComputed: boolean;
  /** Nodes and edges of the piece the curvature was computed on. */
  pieceNodes: number;
  pieceEdges: number;
}

/** Undirected entries (2 per edge) beyond which only the Forman curvatures are computed. */
const BALANCED_LIMIT = 4_000_000;

export class StructureAnalyzer {
  private und: UndirectedGraph | undefined;
  private wlResult: WlResult | undefined;
  private classSize: Int32Array | undefined;
  private bridgeKeys: Set<number> | undefined;
  private bridgeList: Bridges | undefined;

  constructor(private readonly g: { n: number; fwd: Csr; rev: Csr }) {}

  get n(): number { return this.g.n; }

  undirected(cancel?: Cancel): UndirectedGraph {
    return (this.und ??= undirectedView(this.g.fwd, this.g.rev, cancel));
  }

  /** 1-WL refinement of the whole graph (computed once). */
  wl(cancel?: Cancel): WlResult {
    if (!this.wlResult) {
      this.wlResult = refineWl(this.undirected(cancel), cancel ? { cancel } : {});
      const c = this.wlResult.colours;
      let k = 0;
      for (let v = 0; v < c.length; v++) if (c[v]! + 1 > k) k = c[v]! + 1;
      const size = new Int32Array(k);
      for (let v = 0; v < c.length; v++) size[c[v]!]!++;
      this.classSize = size;
    }
    return this.wlResult;
  }

  wlFor(nodes: ArrayLike<number>, cancel?: Cancel): WlForNodes {
    const r = this.wl(cancel);
    const size = this.classSize!;
    const m = nodes.length;
    const colours = new Int32Array(m).fill(-1);
    const classSizes = new Int32Array(m);
    for (let i = 0; i < m; i++) {
      const u = nodes[i]!;
      if (Number.isInteger(u) && u >= 0 && u < this.n) { colours[i] = r.colours[u]!; classSizes[i] = size[r.colours[u]!]!; }
    }
    // Groups among the requested nodes: colourGroups over their colours (compacted).
    const present: number[] = [];
    for (let i = 0; i < m; i++) if (colours[i]! >= 0) present.push(i);
    const dense = new Map<number, number>();
    const local = new Int32Array(present.length);
    present.forEach((i, j) => {
      const c = colours[i]!;
      if (!dense.has(c)) dense.set(c, dense.size);
      local[j] = dense.get(c)!;
    });
    // colourGroups orders by size, then by smallest member index; re-sort by smallest node id.
    const groups = colourGroups(local, { minSize: 2 }).map((gr) => {
      const ids = gr.nodes.map((j) => nodes[present[j]!]!).sort((a, b) => a - b);
      const colour = colours[present[gr.nodes[0]!]!]!;
      return { colour, nodes: ids, inGraph: size[colour]! };
    });
    groups.sort((a, b) => b.nodes.length - a.nodes.length || a.nodes[0]! - b.nodes[0]!);
    let shared = 0;
    for (let c = 0; c < size.length; c++) if (size[c]! > 1) shared += size[c]!;
    return { classesPerRound: r.classesPerRound, stableAfter: r.stableAfter, colours, classSizes, groups, sharedInGraph: shared };
  }

  /** Bridges of the whole graph (computed once). */
  bridges(cancel?: Cancel): Bridges {
    if (!this.bridgeList) {
      this.bridgeList = findBridges(this.undirected(cancel), cancel ? { cancel } : {});
      const keys = new Set<number>();
      for (let i = 0; i < this.bridgeList.count; i++) keys.add(this.bridgeList.u[i]! * this.n + this.bridgeList.v[i]!);
      this.bridgeKeys = keys;
    }
    return this.bridgeList;
  }

  /** Curvature and bridge flag of each pair (pairs[2k], pairs[2k+1]), node ids 0..n-1. */
  curvatureFor(pairs: ArrayLike<number>, cancel?: Cancel): CurvatureForEdges {
    const g = this.undirected(cancel);
    const n = g.n;
    this.bridges(cancel);
    const m = Math.floor(pairs.length / 2);
    const valid = (x: number) => Number.isInteger(x) && x >= 0 && x < n;

    // The piece: drawn endpoints and all their neighbours, local ids in ascending global order so
    // the sorted rows stay sorted.
    const inPiece = new Uint8Array(n);
    for (let k = 0; k < 2 * m; k++) {
      const u = pairs[k]!;
      if (!valid(u) || inPiece[u]) continue;
      inPiece[u] = 1;
    }
    const seeds: number[] = [];
    for (let u = 0; u < n; u++) if (inPiece[u] === 1) seeds.push(u);
    for (const u of seeds) {
      for (let p = g.indptr[u]!; p < g.indptr[u + 1]!; p++) if (!inPiece[g.indices[p]!]) inPiece[g.indices[p]!] = 2;
    }
    const local = new Int32Array(n).fill(-1);
    let pn = 0;
    for (let u = 0; u < n; u++) if (inPiece[u]) local[u] = pn++;
    const globalOf = new Int32Array(pn);
    for (let u = 0; u < n; u++) if (local[u]! >= 0) globalOf[local[u]!] = u;
    const indptr = new Int32Array(pn + 1);
    for (let a = 0; a < pn; a++) {
      const u = globalOf[a]!;
      let d = 0;
      for (let p = g.indptr[u]!; p < g.indptr[u + 1]!; p++) if (local[g.indices[p]!]! >= 0) d++;
      indptr[a + 1] = indptr[a]! + d;
    }
    const indices = new Int32Array(indptr[pn]!);
    for (let a = 0; a < pn; a++) {
      const u = globalOf[a]!;
      let w = indptr[a]!;
      for (let p = g.indptr[u]!; p < g.indptr[u + 1]!; p++) {
        const b = local[g.indices[p]!]!;
        if (b >= 0) indices[w++] = b;
      }
    }
    // The curvature reads the rows only (no multiplicities).
    const piece: UndirectedRows = { n: pn, indptr, indices };
    const balanced = indices.length <= BALANCED_LIMIT;
    const curv = edgeCurvature(piece, { balanced, ...(cancel ? { cancel } : {}) });
    // Edge id of (a, b), a < b: edges are numbered row by row, over the entries greater than the row.
    const firstEdge = new Int32Array(pn + 1);
    for (let a = 0; a < pn; a++) {
      const above = indptr[a + 1]! - lowerBound(indices, indptr[a]!, indptr[a + 1]!, a + 1);
      firstEdge[a + 1] = firstEdge[a]! + above;
    }

    const out: CurvatureForEdges = {
      present: new Uint8Array(m),
      forman: new Float64Array(m).fill(NaN),
      formanTriangles: new Float64Array(m).fill(NaN),
      balancedForman: new Float64Array(m).fill(NaN),
      triangles: new Int32Array(m),
      bridge: new Uint8Array(m),
      balancedComputed: balanced,
      pieceNodes: pn,
      pieceEdges: curv.m,
    };
    for (let k = 0; k < m; k++) {
      const x = pairs[2 * k]!, y = pairs[2 * k + 1]!;
      if (!valid(x) || !valid(y) || x === y) continue;
      const u = Math.min(x, y), v = Math.max(x, y);
      const a = local[u]!, b = local[v]!;
      const lo = indptr[a]!, hi = indptr[a + 1]!;
      const p = lowerBound(indices, lo, hi, b);
      if (p >= hi || indices[p] !== b) continue;
      const e = firstEdge[a]! + (p - lowerBound(indices, lo, hi, a + 1));
      out.present[k] = 1;
      out.forman[k] = curv.forman[e]!;
      out.formanTriangles[k] = curv.formanTriangles[e]!;
      out.balancedForman[k] = curv.balancedForman[e]!;
      out.triangles[k] = curv.triangles[e]!;
      out.bridge[k] = this.bridgeKeys!.has(u * n + v) ? 1 : 0;
    }
    return out;
  }
}

/**
 * Label homophily (do neighbours share a class?) and degree histograms.
 *
 * Both homophily measures use the symmetrised simple graph (see `simpleUndirected`): each
 * undirected pair once, self-loops dropped, direction ignored.
 * - Edge homophily (Zhu et al. 2020): share of edges whose two ends carry the same label.
 * - Node homophily (Pei et al. 2020): mean over nodes v of the share of v's neighbours that carry
 *   v's label.
 *
 * Unlabelled nodes (label < 0, non-integer or non-finite, or beyond the end of the label vector)
 * are left out everywhere: an edge counts only when both ends are labelled; a node counts only
 * when it is labelled, and its neighbour share is taken over its labelled neighbours. Nodes with
 * no (labelled) neighbours — degree 0 — are excluded from node homophily, since the share is
 * undefined for them; `nodeCounted` says how many nodes the mean is over.
 */
import type { Csr } from '../structure/csr';
import type { DenseTensor } from '../../formats/types';
import { throwIfCancelled, type Cancel } from '../structure/simple-undirected';

export interface Homophily {
  /** Edge homophily, or null when no edge has two labelled ends. */
  edge: number | null;
  /** Edges with both ends labelled, and those among them whose ends agree. */
  edgeCounted: number;
  edgeSame: number;
  /** Node homophily, or null when no node qualifies. */
  node: number | null;
  nodeCounted: number;
  /** Per-node share of same-label neighbours; NaN for the nodes left out. */
  perNode: Float64Array;
  labelledNodes: number;
  /** Distinct labels seen (largest label + 1 is not assumed). */
  classes: number;
}

const ROW_CHUNK = 1 << 15;

/**
 * Node labels as one Int32Array of length n, -1 = unlabelled. Accepts shape [N], [N, 1] or a
 * one-hot [N, C] (a row with a single 1 gives that class, a row of zeros is unlabelled).
 * Returns a message instead when the tensor cannot be read as labels.
 */
export function labelVector(t: DenseTensor, n: number): Int32Array | { error: string } {
  const out = new Int32Array(n).fill(-1);
  const s = t.shape;
  const d = t.data;
  if (t.strings) return { error: `${t.name}: string labels are not supported` };
  if (s.length === 1 || (s.length === 2 && s[1] === 1)) {
    const m = Math.min(n, s[0]!);
    for (let i = 0; i < m; i++) {
      const y = d[i]!;
      out[i] = Number.isInteger(y) && y >= 0 && y <= 0x7fffffff ? y : -1;
    }
    return out;
  }
  if (s.length === 2) {
    const c = s[1]!;
    const m = Math.min(n, s[0]!);
    for (let i = 0; i < m; i++) {
      let cls = -1;
      for (let j = 0; j < c; j++) {
        const y = d[i * c + j]!;
        if (y === 0) continue;
        if (y !== 1 || cls !== -1) return { error: `${t.name}: shape [${s.join(', ')}] is neither a label vector nor one-hot rows` };
        cls = j;
      }
      out[i] = cls;
    }
    return out;
  }
  return { error: `${t.name}: shape [${s.join(', ')}] is not a label vector` };
}

/** Edge and node homophily of the labels over a simple undirected graph. */
export function homophily(sym: Csr, labels: Int32Array, cancel?: Cancel): Homophily {
  const n = sym.n;
  const { indptr, indices } = sym;
  const perNode = new Float64Array(n).fill(NaN);
  let edgeCounted = 0, edgeSame = 0, nodeCounted = 0, nodeSum = 0, labelledNodes = 0;
  for (let v = 0; v < n; v++) {
    if ((v & (ROW_CHUNK - 1)) === 0) throwIfCancelled(cancel);
    const yv = v < labels.length ? labels[v]! : -1;
    if (yv < 0) continue;
    labelledNodes++;
    let nb = 0, same = 0;
    const end = indptr[v + 1]!;
    for (let p = indptr[v]!; p < end; p++) {
      const u = indices[p]!;
      const yu = u < labels.length ? labels[u]! : -1;
      if (yu < 0) continue;
      nb++;
      if (yu === yv) same++;
      // each undirected edge once, from its smaller end
      if (u > v) {
        edgeCounted++;
        if (yu === yv) edgeSame++;
      }
    }
    if (nb > 0) {
      const h = same / nb;
      perNode[v] = h;
      nodeSum += h;
      nodeCounted++;
    }
  }
  return {
    edge: edgeCounted ? edgeSame / edgeCounted : null,
    edgeCounted, edgeSame,
    node: nodeCounted ? nodeSum / nodeCounted : null,
    nodeCounted, perNode, labelledNodes, classes: distinctLabels(labels, n),
  };
}

/** Distinct labels ≥ 0 among the first n entries (sorts a copy: O(n log n), no per-label objects). */
function distinctLabels(labels: Int32Array, n: number): number {
  const c = labels.slice(0, n);
  c.sort();
  let k = 0;
  for (let i = 0; i < c.length; i++) if (c[i]! >= 0 && (i === 0 || c[i] !== c[i - 1])) k++;
  return k;
}

export interface DegreeHistograms {
  /** h[d] = nodes with in-degree d: edge entries into the node, as stored (duplicates count). */
  in: number[];
  /** h[d] = nodes with out-degree d: edge entries out of the node, as stored. */
  out: number[];
  /** h[d] = nodes with in + out = d (a self-loop counts twice; an undirected graph stored in both directions gives twice the degree). */
  total: number[];
  /** h[d] = nodes with d distinct neighbours on the symmetrised simple graph (present when `sym` is given). */
  undirected?: number[];
}

function histogram(n: number, deg: (u: number) => number): number[] {
  const h: number[] = [];
  for (let u = 0; u < n; u++) {
    const d = deg(u);
    while (h.length <= d) h.push(0);
    h[d]!++;
  }
  return h;
}

/** Degree histograms (counts per degree value, index = degree) of the stored edges. */
export function degreeHistograms(fwd: Csr, rev: Csr, sym?: Csr): DegreeHistograms {
  const n = fwd.n;
  const outDeg = (u: number) => fwd.indptr[u + 1]! - fwd.indptr[u]!;
  const inDeg = (u: number) => rev.indptr[u + 1]! - rev.indptr[u]!;
  const h: DegreeHistograms = {
    in: histogram(n, inDeg),
    out: histogram(n, outDeg),
    total: histogram(n, (u) => inDeg(u) + outDeg(u)),
  };
  if (sym) h.undirected = histogram(n, (u) => sym.indptr[u + 1]! - sym.indptr[u]!);
  return h;
}

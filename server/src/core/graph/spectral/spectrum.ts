/**
 * The K smallest eigenvalues and eigenvectors of a graph Laplacian, for spectral figures and
 * Laplacian positional encodings.
 *
 * The graph is the symmetrised simple graph (`simpleUndirected`: an edge u — w when the file has
 * u → w or w → u, each pair once, no self-loops). Two Laplacians:
 *
 *   combinatorial  L = D − A
 *   normalized     𝓛 = I − D^-1/2 A D^-1/2, with Chung's convention for isolated nodes
 *                  (Spectral Graph Theory, 1997, Ch. 1): 𝓛(v, v) = 1 only when d_v > 0, so an
 *                  isolated node has an all-zero row and contributes the eigenvalue 0, exactly as
 *                  `networkx.normalized_laplacian_matrix` does. (Writing I − D^-1/2 A D^-1/2 with
 *                  1/√0 := 0 would give it the eigenvalue 1 instead.)
 *
 * Method (no N x N matrix is ever formed; L is block-diagonal over connected components):
 *
 * 1. Eigenvalue 0 is handled exactly. Its multiplicity is the number of connected components
 *    (isolated nodes count as components), and an orthonormal basis of the null space is known in
 *    closed form: per component C the vector w·1_C / ‖w·1_C‖ with w_v = 1 for L and w_v = √d_v for
 *    𝓛 (w_v = 1 for an isolated node). When K ≤ #components the answer is K of these vectors (the
 *    components in order of their smallest node id); projecting them out costs O(N) per vector
 *    whatever the number of components.
 *
 * 2. Small components (≤ `denseComponents` nodes, default 32, within a total work budget) are
 *    solved exactly, each on its own dense s x s Laplacian (ml-matrix). Exported graphs often
 *    carry many small identical islands whose eigenvalues repeat once per copy, which a Krylov
 *    method can only find one copy at a time; here every copy is found at once.
 *
 * 3. The rest (the larger components) comes from thick-restart Lanczos (lanczos.ts) on the
 *    complement of the null space and the small components, with a basis of
 *    m = max(2K' + 20, 40) vectors (K' = K minus the zeros). Its tolerance is relative to the
 *    Gershgorin bound σ (2·max degree for L, 2 for 𝓛); repeated eigenvalues are found by fresh
 *    seeded random starts.
 *
 * Everything is deterministic for a given `seed`. Eigenvectors have unit 2-norm and a fixed sign:
 * the first entry whose magnitude is at least 1e-3 of the largest is positive.
 */
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import type { Csr } from '../structure/csr';
import { throwIfCancelled, type Cancel } from '../structure/simple-undirected';
import { lanczosSmallest, type Deflation, type SymmetricOperator } from './lanczos';
import { axpy, fixSign, norm, scale } from './vectors';

export type LaplacianKind = 'combinatorial' | 'normalized';

export interface SpectrumOptions {
  /** Default 'combinatorial'. */
  laplacian?: LaplacianKind;
  /** Relative residual: every pair satisfies ‖L x − λ x‖₂ ≤ tol·σ (σ ≥ ‖L‖₂). Default 1e-8, clamped to [1e-12, 1e-2]. */
  tol?: number;
  /** Lanczos basis size m. Default max(2·K' + 20, 40), K' = K minus the zero eigenvalues. */
  basis?: number;
  /** Budget of sparse matrix–vector products. Default 20000. */
  maxMatvecs?: number;
  /**
   * Components with at most this many nodes are solved densely (within a work budget); 0 sends
   * everything except eigenvalue 0 through Lanczos. Default 32.
   */
  denseComponents?: number;
  /** Seed of the start vectors. */
  seed?: number;
  cancel?: Cancel;
}

export interface SpectrumResult {
  laplacian: LaplacianKind;
  n: number;
  k: number;
  /** The K smallest eigenvalues, ascending (with multiplicity). */
  eigenvalues: Float64Array;
  /** Matching orthonormal eigenvectors, one Float64Array of length N each. */
  vectors: Float64Array[];
  /** ‖L x − λ x‖₂ for each pair, computed with an explicit product. */
  residuals: Float64Array;
  /** σ: the Gershgorin bound on ‖L‖₂ (2·max degree for L, 2 for 𝓛). */
  normBound: number;
  /** The relative tolerance used (residuals ≤ tol·normBound when converged). */
  tol: number;
  /** Connected components of the symmetrised graph, isolated nodes included (= multiplicity of 0). */
  components: number;
  /** False when the product budget ran out; the unconverged pairs are then the best Ritz pairs. */
  converged: boolean;
  matvecs: number;
  /** Components solved densely. */
  denseComponents: number;
  /** Lanczos passes (fresh random starts) and thick restarts. */
  passes: number;
  restarts: number;
}

const DEFAULT_TOL = 1e-8;
const DEFAULT_SEED = 0x5bec7a11;
const DEFAULT_MAX_MATVECS = 20000;
const DEFAULT_DENSE_COMPONENTS = 32;
/** Work budget of the dense small-component solves, in units of s³ (+ a fixed cost per component). */
const DENSE_WORK_BUDGET = 2e7;
const DENSE_CALL_COST = 2000;
/** Largest N accepted by the dense cross-check path. */
export const DENSE_LIMIT = 4096;

// ---------------------------------------------------------------------------------------------
// Operator

/** y = L x (combinatorial) or y = 𝓛 x (normalized, Chung's convention) on a simple undirected CSR. */
export class LaplacianOperator implements SymmetricOperator {
  readonly n: number;
  readonly kind: LaplacianKind;
  /** Gershgorin bound on ‖L‖₂. */
  readonly normBound: number;
  readonly degree: Float64Array;
  /** 1/√d_v, 0 for isolated nodes (normalized only). */
  private readonly scale: Float64Array | null;
  private readonly tmp: Float64Array | null;
  private readonly indptr: Int32Array;
  private readonly indices: Int32Array;

  constructor(sym: Csr, kind: LaplacianKind) {
    const n = sym.n;
    this.n = n;
    this.kind = kind;
    this.indptr = sym.indptr;
    this.indices = sym.indices;
    const degree = new Float64Array(n);
    let maxDeg = 0;
    for (let v = 0; v < n; v++) {
      const d = sym.indptr[v + 1]! - sym.indptr[v]!;
      degree[v] = d;
      if (d > maxDeg) maxDeg = d;
    }
    this.degree = degree;
    if (kind === 'normalized') {
      const s = new Float64Array(n);
      for (let v = 0; v < n; v++) s[v] = degree[v]! > 0 ? 1 / Math.sqrt(degree[v]!) : 0;
      this.scale = s;
      this.tmp = new Float64Array(n);
      this.normBound = maxDeg > 0 ? 2 : 0; // eigenvalues lie in [0, 2] (Chung 1997, Lemma 1.7; lemma number recalled from memory)
    } else {
      this.scale = null;
      this.tmp = null;
      this.normBound = 2 * maxDeg; // Gershgorin: row v has d_v on the diagonal and d_v ones off it
    }
  }

  apply(x: Float64Array, y: Float64Array): void {
    const n = this.n, ptr = this.indptr, ind = this.indices, deg = this.degree;
    if (this.scale === null) {
      for (let v = 0; v < n; v++) {
        let s = 0;
        const end = ptr[v + 1]!;
        for (let p = ptr[v]!; p < end; p++) s += x[ind[p]!]!;
        y[v] = deg[v]! * x[v]! - s;
      }
      return;
    }
    const sc = this.scale, t = this.tmp!;
    for (let v = 0; v < n; v++) t[v] = sc[v]! * x[v]!;
    for (let v = 0; v < n; v++) {
      let s = 0;
      const end = ptr[v + 1]!;
      for (let p = ptr[v]!; p < end; p++) s += t[ind[p]!]!;
      y[v] = (deg[v]! > 0 ? x[v]! : 0) - sc[v]! * s;
    }
  }
}

// ---------------------------------------------------------------------------------------------
// Null space: one vector per connected component

/** Connected components by breadth-first search; ids numbered in order of each component's smallest node. */
export function connectedComponents(sym: Csr): { count: number; comp: Int32Array } {
  const n = sym.n, ptr = sym.indptr, ind = sym.indices;
  const comp = new Int32Array(n).fill(-1);
  const queue = new Int32Array(n);
  let count = 0;
  for (let s = 0; s < n; s++) {
    if (comp[s] !== -1) continue;
    let head = 0, tail = 0;
    queue[tail++] = s;
    comp[s] = count;
    while (head < tail) {
      const u = queue[head++]!;
      const end = ptr[u + 1]!;
      for (let p = ptr[u]!; p < end; p++) {
        const w = ind[p]!;
        if (comp[w] === -1) { comp[w] = count; queue[tail++] = w; }
      }
    }
    count++;
  }
  return { count, comp };
}

class NullSpace implements Deflation {
  readonly count: number;
  readonly comp: Int32Array;
  /** w_v (null: all ones). */
  private readonly weight: Float64Array | null;
  private readonly norm2: Float64Array;
  private readonly acc: Float64Array;
  /** Components solved densely: their nodes are held at zero in the Lanczos vectors. */
  excluded: Uint8Array | null = null;

  constructor(comps: { count: number; comp: Int32Array }, op: LaplacianOperator) {
    const { count, comp } = comps;
    this.count = count;
    this.comp = comp;
    const n = comp.length;
    let weight: Float64Array | null = null;
    if (op.kind === 'normalized') {
      weight = new Float64Array(n);
      for (let v = 0; v < n; v++) weight[v] = op.degree[v]! > 0 ? Math.sqrt(op.degree[v]!) : 1;
    }
    this.weight = weight;
    const norm2 = new Float64Array(count);
    for (let v = 0; v < n; v++) norm2[comp[v]!]! += weight ? weight[v]! * weight[v]! : 1;
    this.norm2 = norm2;
    this.acc = new Float64Array(count);
  }

  /** x ← x minus its projection on the null space (and zero on excluded components). O(N). */
  project(x: Float64Array): void {
    const { comp, weight, norm2, acc, excluded } = this;
    const n = comp.length;
    acc.fill(0);
    if (weight) {
      for (let v = 0; v < n; v++) acc[comp[v]!]! += weight[v]! * x[v]!;
      for (let c = 0; c < acc.length; c++) acc[c] = acc[c]! / norm2[c]!;
      for (let v = 0; v < n; v++) x[v]! -= acc[comp[v]!]! * weight[v]!;
    } else {
      for (let v = 0; v < n; v++) acc[comp[v]!]! += x[v]!;
      for (let c = 0; c < acc.length; c++) acc[c] = acc[c]! / norm2[c]!;
      for (let v = 0; v < n; v++) x[v]! -= acc[comp[v]!]!;
    }
    if (excluded) for (let v = 0; v < n; v++) if (excluded[v]) x[v] = 0;
  }

  /** Unit null vectors of the first `k` components. */
  vectors(k: number): Float64Array[] {
    const out: Float64Array[] = [];
    for (let c = 0; c < k; c++) out.push(new Float64Array(this.comp.length));
    const { comp, weight, norm2 } = this;
    for (let v = 0; v < comp.length; v++) {
      const c = comp[v]!;
      if (c < k) out[c]![v] = (weight ? weight[v]! : 1) / Math.sqrt(norm2[c]!);
    }
    return out;
  }
}

// ---------------------------------------------------------------------------------------------
// Small components, solved densely

interface DenseCandidates {
  /** Sorted ascending: the smallest nonzero eigenvalues found in the dense components (at most `want`). */
  values: number[];
  vectors: Float64Array[];
  /** Components solved. */
  solved: number;
}

/** The dense Laplacian of one component (nodes listed in `nodes`, local index in `local`). */
function componentMatrix(op: LaplacianOperator, sym: Csr, nodes: Int32Array, local: Int32Array): Matrix {
  const s = nodes.length;
  const A = new Matrix(s, s);
  const normalized = op.kind === 'normalized';
  for (let i = 0; i < s; i++) {
    const u = nodes[i]!;
    const du = op.degree[u]!;
    A.set(i, i, normalized ? 1 : du);
    for (let p = sym.indptr[u]!; p < sym.indptr[u + 1]!; p++) {
      const w = sym.indices[p]!;
      A.set(i, local[w]!, normalized ? -1 / Math.sqrt(du * op.degree[w]!) : -1);
    }
  }
  return A;
}

function sortedEigen(A: Matrix): { values: number[]; vectors: Matrix; order: number[] } {
  const evd = new EigenvalueDecomposition(A, { assumeSymmetric: true });
  const vals = evd.realEigenvalues;
  const order = Array.from({ length: vals.length }, (_, i) => i).sort((a, b) => vals[a]! - vals[b]!);
  return { values: order.map((i) => vals[i]!), vectors: evd.eigenvectorMatrix, order };
}

/**
 * Solves components of 2..maxSize nodes densely (smallest first, within the work budget), marks
 * their nodes in `nul.excluded`, and returns the `want` smallest nonzero eigenpairs among them.
 */
function solveSmallComponents(sym: Csr, op: LaplacianOperator, nul: NullSpace, maxSize: number, want: number, cancel: Cancel | undefined): DenseCandidates {
  const n = sym.n, comp = nul.comp, count = nul.count;
  const size = new Int32Array(count);
  for (let v = 0; v < n; v++) size[comp[v]!]!++;
  const chosen: number[] = [];
  for (let c = 0; c < count; c++) if (size[c]! >= 2 && size[c]! <= maxSize) chosen.push(c);
  if (chosen.length === 0 || want === 0) return { values: [], vectors: [], solved: 0 };
  chosen.sort((a, b) => size[a]! - size[b]! || a - b);
  let work = 0, take = 0;
  for (; take < chosen.length; take++) {
    const sz = size[chosen[take]!]!;
    work += sz * sz * sz + DENSE_CALL_COST;
    if (work > DENSE_WORK_BUDGET) break;
  }
  chosen.length = take;
  chosen.sort((a, b) => a - b);
  if (chosen.length === 0) return { values: [], vectors: [], solved: 0 };

  // Node lists of the chosen components (counting sort by component id).
  const slot = new Int32Array(count).fill(-1);
  chosen.forEach((c, i) => { slot[c] = i; });
  const ptr = new Int32Array(chosen.length + 1);
  for (let v = 0; v < n; v++) { const i = slot[comp[v]!]!; if (i >= 0) ptr[i + 1]!++; }
  for (let i = 0; i < chosen.length; i++) ptr[i + 1]! += ptr[i]!;
  const nodes = new Int32Array(ptr[chosen.length]!);
  const local = new Int32Array(n);
  const fill = ptr.slice(0, chosen.length);
  const excluded = new Uint8Array(n);
  for (let v = 0; v < n; v++) {
    const i = slot[comp[v]!]!;
    if (i < 0) continue;
    local[v] = fill[i]! - ptr[i]!;
    nodes[fill[i]!++] = v;
    excluded[v] = 1;
  }
  nul.excluded = excluded;

  // Eigenvalues of every chosen component (the smallest, 0, is dropped: the null space has it).
  const candValue: number[] = [];
  const candComp: number[] = [];
  const candIndex: number[] = [];
  for (let i = 0; i < chosen.length; i++) {
    if ((i & 1023) === 0) throwIfCancelled(cancel);
    const sub = nodes.subarray(ptr[i]!, ptr[i + 1]!);
    let values: number[];
    if (sub.length === 2) values = [0, 2]; // a single edge: L and 𝓛 both have eigenvalues 0 and 2
    else values = sortedEigen(componentMatrix(op, sym, sub, local)).values;
    for (let t = 1; t < values.length; t++) { candValue.push(values[t]!); candComp.push(i); candIndex.push(t); }
  }
  const order = Array.from({ length: candValue.length }, (_, t) => t)
    .sort((a, b) => candValue[a]! - candValue[b]! || candComp[a]! - candComp[b]! || candIndex[a]! - candIndex[b]!)
    .slice(0, want);

  // Eigenvectors of the selected pairs, embedded in N-vectors.
  const byComp = new Map<number, number[]>();
  for (const t of order) {
    const list = byComp.get(candComp[t]!) ?? [];
    list.push(t);
    byComp.set(candComp[t]!, list);
  }
  const vecOf = new Map<number, Float64Array>();
  for (const [i, list] of byComp) {
    const sub = nodes.subarray(ptr[i]!, ptr[i + 1]!);
    let E: (t: number, r: number) => number;
    if (sub.length === 2) {
      E = (_t, r) => (r === 0 ? Math.SQRT1_2 : -Math.SQRT1_2);
    } else {
      const e = sortedEigen(componentMatrix(op, sym, sub, local));
      E = (t, r) => e.vectors.get(r, e.order[t]!);
    }
    for (const t of list) {
      const x = new Float64Array(n);
      let s2 = 0;
      for (let r = 0; r < sub.length; r++) { const val = E(candIndex[t]!, r); x[sub[r]!] = val; s2 += val * val; }
      scale(1 / Math.sqrt(s2), x);
      vecOf.set(t, x);
    }
  }
  return { values: order.map((t) => candValue[t]!), vectors: order.map((t) => vecOf.get(t)!), solved: chosen.length };
}

// ---------------------------------------------------------------------------------------------
// Public entry points

/**
 * The `k` smallest eigenpairs of the Laplacian of `sym`, which must be a simple undirected CSR
 * (symmetric, no self-loops, no repeated entries), as `simpleUndirected` builds it.
 * Throws `AnalysisCancelled` when `options.cancel` is set between two iterations.
 */
export function laplacianSpectrum(sym: Csr, k: number, options: SpectrumOptions = {}): SpectrumResult {
  const n = sym.n;
  if (!Number.isInteger(k) || k < 1 || k > n) throw new Error(`k must be an integer in [1, ${n}], got ${k}`);
  const kind = options.laplacian ?? 'combinatorial';
  const tol = Math.min(1e-2, Math.max(1e-12, options.tol ?? DEFAULT_TOL));
  const op = new LaplacianOperator(sym, kind);
  const comps = connectedComponents(sym);
  const nul = new NullSpace(comps, op);
  throwIfCancelled(options.cancel);

  const zeros = Math.min(k, nul.count);
  const vectors = nul.vectors(zeros);
  const values: number[] = new Array(zeros).fill(0);
  let converged = true, matvecs = 0, passes = 0, restarts = 0, solved = 0;

  const want = k - zeros;
  if (want > 0) {
    const small = solveSmallComponents(sym, op, nul, options.denseComponents ?? DEFAULT_DENSE_COMPONENTS, want, options.cancel);
    solved = small.solved;
    const pairs: { value: number; vec: Float64Array }[] = small.values.map((value, i) => ({ value, vec: small.vectors[i]! }));
    // Dimension left for Lanczos: nodes outside the dense components, minus one per component there.
    let complement = n - nul.count;
    if (nul.excluded) {
      let ex = 0;
      for (let v = 0; v < n; v++) ex += nul.excluded[v]!;
      complement -= ex - solved;
    }
    if (complement > 0) {
      const m = Math.max(1, Math.min(complement, Math.max(options.basis ?? Math.max(2 * want + 20, 40), want + 2)));
      const out = lanczosSmallest(op, nul, want, small.values, m, tol, options.maxMatvecs ?? DEFAULT_MAX_MATVECS, options.seed ?? DEFAULT_SEED, options.cancel);
      converged = out.converged;
      matvecs += out.matvecs;
      passes = out.passes;
      restarts = out.restarts;
      for (const p of out.pairs) pairs.push({ value: p.value, vec: p.vec });
    }
    // Stable: equal values keep the dense components' order first.
    pairs.sort((a, b) => a.value - b.value);
    for (const p of pairs.slice(0, want)) {
      values.push(p.value);
      vectors.push(p.vec);
    }
  }
  // Residuals of every returned pair, by an explicit product.
  const residuals = new Float64Array(vectors.length);
  const work = new Float64Array(n);
  vectors.forEach((x, i) => {
    op.apply(x, work);
    matvecs++;
    axpy(-values[i]!, x, work);
    residuals[i] = norm(work);
  });
  for (const x of vectors) fixSign(x);
  return {
    laplacian: kind, n, k: values.length,
    eigenvalues: Float64Array.from(values), vectors, residuals,
    normBound: op.normBound, tol, components: nul.count, denseComponents: solved, converged, matvecs, passes, restarts,
  };
}

/** The eigenvectors as an N x K row-major float32 matrix (row v = node v), for positional encodings. */
export function positionalEncoding(result: SpectrumResult): Float32Array {
  const { n, k, vectors } = result;
  const out = new Float32Array(n * k);
  for (let c = 0; c < k; c++) {
    const x = vectors[c]!;
    for (let v = 0; v < n; v++) out[v * k + c] = x[v]!;
  }
  return out;
}

// ---------------------------------------------------------------------------------------------
// Dense path (small graphs, cross-checks)

/** The dense N x N Laplacian (ml-matrix). Only for small graphs (N ≤ DENSE_LIMIT). */
export function denseLaplacian(sym: Csr, kind: LaplacianKind = 'combinatorial'): Matrix {
  const n = sym.n;
  if (n > DENSE_LIMIT) throw new Error(`dense Laplacian refused for ${n} nodes (limit ${DENSE_LIMIT})`);
  const A = new Matrix(n, n);
  const deg = (v: number) => sym.indptr[v + 1]! - sym.indptr[v]!;
  for (let u = 0; u < n; u++) {
    const du = deg(u);
    if (du > 0) A.set(u, u, kind === 'normalized' ? 1 : du);
    for (let p = sym.indptr[u]!; p < sym.indptr[u + 1]!; p++) {
      const w = sym.indices[p]!;
      A.set(u, w, kind === 'normalized' ? -1 / Math.sqrt(du * deg(w)) : -1);
    }
  }
  return A;
}

/** All eigenpairs of the dense Laplacian by ml-matrix's EigenvalueDecomposition, ascending. */
export function denseLaplacianSpectrum(sym: Csr, kind: LaplacianKind = 'combinatorial'): { eigenvalues: Float64Array; vectors: Float64Array[] } {
  const n = sym.n;
  const A = denseLaplacian(sym, kind);
  const evd = new EigenvalueDecomposition(A, { assumeSymmetric: true });
  const vals = evd.realEigenvalues;
  const E = evd.eigenvectorMatrix;
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => vals[a]! - vals[b]!);
  const vectors = order.map((c) => {
    const x = new Float64Array(n);
    for (let r = 0; r < n; r++) x[r] = E.get(r, c);
    let s = 0;
    for (let r = 0; r < n; r++) s += x[r]! * x[r]!;
    scale(1 / Math.sqrt(s), x);
    fixSign(x);
    return x;
  });
  return { eigenvalues: Float64Array.from(order.map((c) => vals[c]!)), vectors };
}

/**
 * The smallest eigenpairs of a large sparse symmetric positive semi-definite operator by
 * thick-restart Lanczos (Wu & Simon, 2000; the reference is recalled from memory) with full
 * reorthogonalisation, on the complement of a known invariant subspace (the `Deflation`) and of
 * the vectors already locked. The operator is only applied to vectors (`SymmetricOperator`): no
 * N x N matrix is formed. The K-th smallest value known so far (from any source) bounds what it
 * must find:
 *   - a basis of m Float64Array vectors (memory O(N·m)). Each new vector is made orthogonal to the
 *     last two basis vectors, then to the deflated space, the locked vectors and the whole basis by
 *     classical Gram–Schmidt, repeated when a sweep removes more than 1/√2 of it. The projected
 *     matrix H = Vᵀ A V (m x m, small and dense) is filled from those coefficients and
 *     diagonalised by ml-matrix's EigenvalueDecomposition (Householder tridiagonalisation + tql2);
 *   - residual estimates ‖A x − θ x‖ = β·|s_m| from the Lanczos relation; a Ritz pair is locked
 *     (deflated) once its estimate is below 0.01·tol·σ, the smallest unlocked first, and is then
 *     verified with an explicit product (Rayleigh quotient and residual, ≤ tol·σ), where
 *     σ = `normBound` ≥ ‖A‖₂;
 *   - Krylov spaces are shift-invariant, so Lanczos on A and on σI − A build the same spaces and
 *     the same Ritz vectors; we work with A directly and keep its smallest Ritz values;
 *   - repeated eigenvalues: a Krylov space from one start vector holds one direction per distinct
 *     eigenvalue, so copies (cycles, hypercubes, twin leaves) are found by restarts from fresh
 *     seeded random vectors: on breakdown (an invariant subspace) a random vector orthogonal to
 *     everything found so far continues the basis, and after a pass that locked something a new
 *     pass starts from a fresh random vector. The run ends only when a pass that locked nothing
 *     converges its smallest Ritz value at or above the K-th smallest eigenvalue known (or the
 *     basis has exhausted the whole space, making every Ritz pair exact).
 * Deterministic for a given seed.
 */
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { throwIfCancelled, type Cancel } from '../structure/simple-undirected';
import { axpy, dot, gramSchmidtSweep, norm, scale } from './vectors';
import { fillSymmetric, seededRandom } from '../../random';

/** y = A x for a symmetric positive semi-definite A of order n. */
export interface SymmetricOperator {
  readonly n: number;
  /** An upper bound σ ≥ ‖A‖₂; tolerances are relative to it. */
  readonly normBound: number;
  apply(x: Float64Array, y: Float64Array): void;
}

/** A subspace known in advance (e.g. a null space) that the solver keeps its vectors out of. */
export interface Deflation {
  /** x ← x minus its component in the subspace. */
  project(x: Float64Array): void;
}

/** Eigen-decomposition of the leading j x j block of the symmetric m x m matrix H (row-major). */
function eigSmall(H: Float64Array, j: number, m: number): { values: Float64Array; vectors: Float64Array } {
  const A = new Matrix(j, j);
  for (let r = 0; r < j; r++) for (let c = 0; c < j; c++) A.set(r, c, H[r * m + c]!);
  const evd = new EigenvalueDecomposition(A, { assumeSymmetric: true });
  const vals = evd.realEigenvalues;
  const V = evd.eigenvectorMatrix;
  const order = Array.from({ length: j }, (_, i) => i).sort((a, b) => vals[a]! - vals[b]!);
  const values = new Float64Array(j);
  // vectors[c * j + r] = component r of the c-th Ritz vector (column-contiguous).
  const vectors = new Float64Array(j * j);
  for (let c = 0; c < j; c++) {
    values[c] = vals[order[c]!]!;
    for (let r = 0; r < j; r++) vectors[c * j + r] = V.get(r, order[c]!);
  }
  return { values, vectors };
}

/**
 * V[0..q) ← V[0..j) · S[:, 0..q) in place, where S is column-contiguous (S[c * j + r]).
 * Rows are processed in blocks so the inner loops run over contiguous memory.
 */
function rotateBasis(V: Float64Array[], j: number, S: Float64Array, q: number, block: Float64Array[]): void {
  const n = V[0]!.length;
  const B = block[0]!.length;
  for (let i0 = 0; i0 < n; i0 += B) {
    const len = Math.min(B, n - i0);
    for (let c = 0; c < q; c++) {
      const out = block[c]!;
      out.fill(0, 0, len);
      for (let r = 0; r < j; r++) {
        const s = S[c * j + r]!;
        if (s === 0) continue;
        const vr = V[r]!;
        for (let i = 0; i < len; i++) out[i]! += s * vr[i0 + i]!;
      }
    }
    for (let c = 0; c < q; c++) V[c]!.set(block[c]!.subarray(0, len), i0);
  }
}

// ---------------------------------------------------------------------------------------------
// Thick-restart Lanczos with locking

export interface Pair { value: number; vec: Float64Array; residual: number }

export interface LanczosOut {
  pairs: Pair[];
  converged: boolean;
  matvecs: number;
  passes: number;
  restarts: number;
}

/**
 * The eigenpairs of `op` below the `want`-th smallest of (external ∪ found), on the complement of
 * what `deflation` removes; `external` (ascending) are eigenvalues already known elsewhere. `m` is
 * the basis size, `tol` relative to `op.normBound`, `seed` the seed of the random start vectors.
 */
export function lanczosSmallest(op: SymmetricOperator, deflation: Deflation, want: number, external: readonly number[], m: number, tol: number, maxMatvecs: number, seed: number, cancel: Cancel | undefined): LanczosOut {
  const n = op.n;
  const sigma = op.normBound;
  const tolAbs = tol * sigma;
  const lockTol = 0.01 * tolAbs;
  const breakTol = 1e-3 * lockTol;
  const delta = tolAbs;
  const rand = seededRandom(seed);
  const random = (x: Float64Array): void => fillSymmetric(rand, x);

  const locked: Pair[] = [];
  const pool: Float64Array[] = [];
  const take = (): Float64Array => pool.pop() ?? new Float64Array(n);
  const release = (x: Float64Array): void => { pool.push(x); };
  const V: Float64Array[] = [];
  const H = new Float64Array(m * m);
  const coef = new Float64Array(m);
  const lockedVecs: Float64Array[] = [];
  const blockRows = Math.max(1, Math.min(n, 1024));
  const block: Float64Array[] = Array.from({ length: m }, () => new Float64Array(blockRows));
  let matvecs = 0, passes = 0, restarts = 0;

  /**
   * Removes from x its components on the null space, the locked vectors and V; coefficients on V
   * are added to `c`. When `local` is true (a Lanczos step) x is first made orthogonal to the last
   * two basis vectors, which removes nearly all of it; one blocked classical Gram–Schmidt sweep
   * over everything follows, repeated while it still removes more than 1/√2 of the norm.
   */
  const orthogonalise = (x: Float64Array, c: Float64Array | null, local: boolean): number => {
    if (local) {
      for (let i = Math.max(0, V.length - 2); i < V.length; i++) {
        const h = dot(V[i]!, x);
        if (c) c[i]! += h;
        axpy(-h, V[i]!, x);
      }
    }
    let before = norm(x);
    let after = before;
    for (let pass = 0; pass < 3; pass++) {
      deflation.project(x);
      gramSchmidtSweep(x, lockedVecs, null);
      gramSchmidtSweep(x, V, c);
      after = norm(x);
      if (after > 0.7071 * before) break;
      before = after;
    }
    return after;
  };

  /** A fresh random vector orthogonal to everything found so far, or null when nothing is left. */
  const randomVector = (): { v: Float64Array; norm: number } | null => {
    const u = take();
    random(u);
    const orig = norm(u);
    const after = orthogonalise(u, null, false);
    if (!(after > 1e-10 * orig)) { release(u); return null; }
    return { v: u, norm: after };
  };

  let converged = false;
  let finished = false;
  // Continuation vector (unnormalised) and its norm; `beta` is the coupling in L V = V H + β v⁺ eₘᵀ.
  let r: Float64Array | null = null;
  let rnorm = 0;
  let beta = 0;
  let dropped = 0;
  let lockedThisPass = 0;

  const startPass = (): boolean => {
    while (V.length) release(V.pop()!);
    if (r) { release(r); r = null; }
    const s = randomVector();
    passes++;
    lockedThisPass = 0;
    dropped = 0;
    beta = 0;
    if (!s) return false;
    r = s.v;
    rnorm = s.norm;
    return true;
  };

  if (!startPass()) return { pairs: [], converged: true, matvecs, passes, restarts };

  while (!finished) {
    // ---- expand the basis to m vectors
    let exhausted = false;
    while (V.length < m && r !== null) {
      throwIfCancelled(cancel);
      if (matvecs >= maxMatvecs) break;
      const j = V.length;
      const v: Float64Array = r;
      scale(1 / rnorm, v);
      V.push(v);
      r = null;
      const w = take();
      op.apply(v, w);
      matvecs++;
      coef.fill(0, 0, j + 1);
      const wn = orthogonalise(w, coef, true);
      for (let i = 0; i <= j; i++) { H[i * m + j] = coef[i]!; H[j * m + i] = coef[i]!; }
      if (wn > breakTol) {
        r = w; rnorm = wn; beta = wn;
      } else {
        // Invariant subspace: continue with a random vector orthogonal to everything so far.
        release(w);
        dropped += wn;
        beta = 0;
        const s = randomVector();
        if (s) { r = s.v; rnorm = s.norm; } else exhausted = true;
      }
    }
    const j = V.length;
    if (j === 0) break;

    // ---- Rayleigh–Ritz on the basis
    const { values: theta, vectors: S } = eigSmall(H, j, m);
    const estimate = (i: number): number => beta * Math.abs(S[i * j + (j - 1)]!) + dropped;
    const vals = [...external, ...locked.map((p) => p.value)].sort((a, b) => a - b);
    let nLock = 0;
    let certified = false;
    for (let i = 0; i < j; i++) {
      // Locking asks for 0.01·tol·σ; the bound that ends a pass only for tol·σ (the pair is then
      // within tol·σ of an eigenvalue, which is all the comparison needs).
      const est = estimate(i);
      const threshold = vals.length >= want ? vals[want - 1]! : Infinity;
      if (est <= lockTol && theta[i]! < threshold - delta) {
        nLock++;
        let at = vals.length;
        while (at > 0 && vals[at - 1]! > theta[i]!) at--;
        vals.splice(at, 0, theta[i]!);
      } else {
        if (est <= tolAbs && theta[i]! >= threshold - delta) certified = true;
        break;
      }
    }
    const wantLeft = Math.max(1, want - external.length - locked.length - nLock);
    let keep = Math.min(j - nLock, wantLeft + Math.floor((m - wantLeft) / 2), m - 2);
    if (exhausted || certified) keep = 0;
    keep = Math.max(0, keep);
    const q = nLock + keep;
    if (q > 0) rotateBasis(V, j, S, q, block);
    while (V.length > q) release(V.pop()!);

    // ---- verify and lock
    const kept: { vec: Float64Array; theta: number }[] = [];
    for (let c = 0; c < q; c++) {
      const y = V[c]!;
      if (c < nLock) {
        const ly = take();
        op.apply(y, ly);
        matvecs++;
        const lambda = dot(y, ly);
        axpy(-lambda, y, ly);
        const res = norm(ly);
        release(ly);
        if (res <= tolAbs) {
          locked.push({ value: lambda, vec: y, residual: res });
          lockedVecs.push(y);
          lockedThisPass++;
          continue;
        }
      }
      kept.push({ vec: y, theta: theta[c]! });
    }
    V.length = 0;

    // ---- decide: finished, new pass, or thick restart
    const haveAll = external.length + locked.length >= want;
    if (exhausted && kept.length === 0 && (certified || nLock === j)) {
      // The basis spanned everything left: every Ritz pair was exact.
      converged = haveAll;
      finished = true;
      break;
    }
    if (certified && lockedThisPass === 0 && haveAll) {
      // A pass from a fresh random start found nothing below the K-th locked eigenvalue.
      for (const p of kept) release(p.vec);
      converged = true;
      finished = true;
      break;
    }
    if (matvecs >= maxMatvecs) {
      // Out of budget: report the best Ritz pairs for what is missing.
      for (const p of kept) {
        if (external.length + locked.length >= want) { release(p.vec); continue; }
        const ly = take();
        op.apply(p.vec, ly);
        const lambda = dot(p.vec, ly);
        axpy(-lambda, p.vec, ly);
        locked.push({ value: lambda, vec: p.vec, residual: norm(ly) });
        release(ly);
      }
      converged = false;
      finished = true;
      break;
    }
    if (certified || exhausted || (passes === 1 && haveAll && lockedThisPass > 0) || r === null) {
      for (const p of kept) release(p.vec);
      if (!startPass()) { converged = external.length + locked.length >= want; finished = true; }
      continue;
    }
    // Thick restart: the kept Ritz vectors, then the continuation vector.
    restarts++;
    H.fill(0);
    for (let c = 0; c < kept.length; c++) {
      V.push(kept[c]!.vec);
      H[c * m + c] = kept[c]!.theta;
    }
  }
  if (r) release(r);
  locked.sort((a, b) => a.value - b.value);
  return { pairs: locked.slice(0, want), converged: converged && external.length + locked.length >= want, matvecs, passes, restarts };
}

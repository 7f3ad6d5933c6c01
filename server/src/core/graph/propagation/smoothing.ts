/**
 * Over-smoothing curve: the Dirichlet energy of the feature matrix after k = 0..L steps of
 * X ← Â X, Â = D̃^-1/2 (A + I) D̃^-1/2 (GCN normalisation) on the symmetrised simple graph.
 *
 * The curve to read is the degree-normalised Dirichlet energy of Cai & Wang (2020):
 *   E(X) = tr(Xᵀ (I − Â) X) = Σ_{undirected edges (i,j)} ‖x_i/√(1+d_i) − x_j/√(1+d_j)‖².
 * Its fixed points under Â are multiples of √(1+d), so it falls towards 0 exactly when repeated
 * propagation makes nodes indistinguishable (up to the degree scaling every GCN layer applies);
 * a steep drop at depth k says k layers already wash the features out.
 *
 * The plain graph-signal energy tr(XᵀLX) = Σ_{(i,j)} ‖x_i − x_j‖² is returned beside it for
 * reference only: on graphs that are not regular, Â^k X tends to a multiple of √(1+d), which is not
 * constant over the nodes, so tr(XᵀLX) levels off (or even grows) while the features are in fact
 * fully smoothed. Only on regular graphs are the two proportional.
 */
import type { Csr } from '../structure/csr';
import type { DenseTensor } from '../../formats/types';
import { throwIfCancelled, type Cancel } from '../structure/simple-undirected';

export interface FeatureMatrix {
  /** Row-major N x F values. */
  data: Float64Array;
  rows: number;
  cols: number;
  /** Non-finite entries (NaN, ±Inf) that were replaced by 0. */
  nonFinite: number;
}

export interface SmoothingCurve {
  /** energy after k steps, k = 0..steps. */
  caiWang: Float64Array;
  unnormalised: Float64Array;
  steps: number;
  cols: number;
  nonFinite: number;
}

/** Rows between two looks at the cancellation token. */
const ROW_CHUNK = 1 << 12;

/**
 * Features as a row-major Float64Array with `n` rows: shape [N] is one column, [N, F, ...] is
 * flattened to F·... columns. Non-finite values become 0 (and are counted). Returns a message
 * when the row count differs from n.
 */
export function featureMatrix(t: DenseTensor, n: number): FeatureMatrix | { error: string } {
  if (t.strings) return { error: `${t.name}: string features are not supported` };
  if (t.summary) return { error: `${t.name}: too large to keep in memory (only summarised while it was read)` };
  if (t.shape.length === 0) return { error: `${t.name}: a scalar is not a feature matrix` };
  const rows = t.shape[0]!;
  if (rows !== n) return { error: `${t.name}: ${rows} feature rows for ${n} nodes` };
  let cols = 1;
  for (let i = 1; i < t.shape.length; i++) cols *= t.shape[i]!;
  const src = t.data;
  const data = new Float64Array(rows * cols);
  let nonFinite = 0;
  for (let i = 0; i < data.length; i++) {
    const v = src[i]!;
    if (Number.isFinite(v)) data[i] = v;
    else nonFinite++;
  }
  return { data, rows, cols, nonFinite };
}

/** 1/√(1 + d_i) for every node of a simple undirected graph. */
export function inverseSqrtDegrees(sym: Csr): Float64Array {
  const s = new Float64Array(sym.n);
  for (let i = 0; i < sym.n; i++) s[i] = 1 / Math.sqrt(1 + sym.indptr[i + 1]! - sym.indptr[i]!);
  return s;
}

/** Both Dirichlet energies of X (row-major n x cols) on the simple undirected graph `sym`. */
export function dirichletEnergies(sym: Csr, x: Float64Array, cols: number, invSqrt = inverseSqrtDegrees(sym), cancel?: Cancel): { caiWang: number; unnormalised: number } {
  const { n, indptr, indices } = sym;
  let cw = 0, un = 0;
  for (let i = 0; i < n; i++) {
    if ((i & (ROW_CHUNK - 1)) === 0) throwIfCancelled(cancel);
    const si = invSqrt[i]!;
    const end = indptr[i + 1]!;
    const bi = i * cols;
    for (let p = indptr[i]!; p < end; p++) {
      const j = indices[p]!;
      if (j <= i) continue; // each undirected edge once
      const sj = invSqrt[j]!;
      const bj = j * cols;
      for (let f = 0; f < cols; f++) {
        const a = x[bi + f]!, b = x[bj + f]!;
        const dn = a * si - b * sj;
        const du = a - b;
        cw += dn * dn;
        un += du * du;
      }
    }
  }
  return { caiWang: cw, unnormalised: un };
}

/**
 * Energies of X, ÂX, …, Â^steps X. Each step is one sparse product over all columns at once
 * (Float64Array buffers of N·F, two of them).
 */
export function smoothingCurve(sym: Csr, features: FeatureMatrix, steps: number, cancel?: Cancel): SmoothingCurve {
  const { n, indptr, indices } = sym;
  const cols = features.cols;
  if (features.rows !== n) throw new Error(`feature rows ${features.rows} differ from node count ${n}`);
  if (!Number.isInteger(steps) || steps < 0) throw new RangeError(`steps must be a non-negative integer, got ${steps}`);
  const invSqrt = inverseSqrtDegrees(sym);
  const caiWang = new Float64Array(steps + 1);
  const unnormalised = new Float64Array(steps + 1);
  let x = features.data.slice();
  let y = new Float64Array(x.length);
  for (let k = 0; k < steps; k++) {
    throwIfCancelled(cancel);
    // One pass over the edges does both: the energies of x (pairs j > i) and
    // y_i = (1/√d̃_i) (x_i/√d̃_i + Σ_{j ∈ N(i)} x_j/√d̃_j).
    let cw = 0, un = 0;
    for (let i = 0; i < n; i++) {
      if ((i & (ROW_CHUNK - 1)) === 0) throwIfCancelled(cancel);
      const si = invSqrt[i]!;
      const bi = i * cols;
      for (let f = 0; f < cols; f++) y[bi + f] = x[bi + f]! * si;
      const end = indptr[i + 1]!;
      for (let p = indptr[i]!; p < end; p++) {
        const j = indices[p]!;
        const sj = invSqrt[j]!;
        const bj = j * cols;
        if (j > i) {
          for (let f = 0; f < cols; f++) {
            const a = x[bi + f]!, b = x[bj + f]!;
            const dn = a * si - b * sj;
            const du = a - b;
            cw += dn * dn;
            un += du * du;
            y[bi + f]! += b * sj;
          }
        } else {
          for (let f = 0; f < cols; f++) y[bi + f]! += x[bj + f]! * sj;
        }
      }
      for (let f = 0; f < cols; f++) y[bi + f]! *= si;
    }
    caiWang[k] = cw;
    unnormalised[k] = un;
    const t = x; x = y; y = t;
  }
  throwIfCancelled(cancel);
  const e = dirichletEnergies(sym, x, cols, invSqrt, cancel);
  caiWang[steps] = e.caiWang;
  unnormalised[steps] = e.unnormalised;
  return { caiWang, unnormalised, steps, cols, nonFinite: features.nonFinite };
}

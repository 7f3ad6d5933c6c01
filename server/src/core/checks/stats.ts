/**
 * Per-tensor summary figures: min, max and sum over finite values, and the non-finite count; and
 * per-column figures for the tensor tables. A tensor summarised while it was read (`summary`, its
 * values not kept) gives the same figures from its summary.
 */
import type { ColumnStats } from '../../../../common/protocol';
import type { DenseTensor, Tensor } from '../formats/types';

export interface TensorStats {
  min: number | null;
  max: number | null;
  sum: number | null;
  nonFinite: number;
}

export function tensorStats(t: Tensor): TensorStats {
  if (t.kind === 'dense' && t.strings) return { min: null, max: null, sum: null, nonFinite: 0 };
  if (t.kind === 'dense' && t.summary) {
    const s = t.summary;
    return { min: s.min, max: s.max, sum: s.sum, nonFinite: s.nonFinite };
  }
  const d = t.kind === 'dense' ? t.data : t.values;
  if (!d) {
    // Pattern matrix: every stored entry is 1.
    const n = t.kind === 'sparse' ? t.row.length : 0;
    return n === 0 ? { min: null, max: null, sum: 0, nonFinite: 0 } : { min: 1, max: 1, sum: n, nonFinite: 0 };
  }
  if (d instanceof Int32Array) return int32Figures(d);
  let min = Infinity, max = -Infinity, sum = 0, nonFinite = 0;
  if (d instanceof Float32Array || d instanceof Float64Array) {
    for (let i = 0; i < d.length; i++) {
      const v = d[i]!;
      if (v - v !== 0) { nonFinite++; continue; } // NaN or ±Inf
      if (v < min) min = v;
      if (v > max) max = v;
      sum += v;
    }
  } else {
    for (let i = 0; i < d.length; i++) {
      const v = d[i]!;
      if (v < min) min = v;
      if (v > max) max = v;
      sum += v;
    }
  }
  if (min === Infinity) return { min: null, max: null, sum: 0, nonFinite };
  return { min, max, sum, nonFinite };
}

const int32Memo = new WeakMap<Int32Array, TensorStats>();

/**
 * Min, max and sum of an Int32Array, computed once per array: the bounds of an edge index
 * (rules/node-count.ts) and its row in the tensor table both want them, and a tensor's values are
 * never written after it is read. Callers must not change the object returned.
 */
export function int32Figures(d: Int32Array): TensorStats {
  let r = int32Memo.get(d);
  if (!r) { r = int32Stats(d); int32Memo.set(d, r); }
  return r;
}

/** The common case of large tensors (edge indices), in a loop that only ever sees Int32Array. */
function int32Stats(d: Int32Array): TensorStats {
  if (d.length === 0) return { min: null, max: null, sum: 0, nonFinite: 0 };
  let min = d[0]!, max = d[0]!, sum = 0;
  for (let i = 0; i < d.length; i++) {
    const v = d[i]!;
    if (v < min) min = v;
    else if (v > max) max = v;
    sum += v;
  }
  return { min, max, sum, nonFinite: 0 };
}

/** One column of a matrix view ([N] is one column, [N, F, ...] has F·... columns): the viewer's ColumnStats. */
export type ColumnFigures = ColumnStats;

/**
 * Figures of the first `shown` columns of a numeric dense tensor seen as `rows` x `cols`. For a
 * summarised tensor only the columns its summary holds (SUMMARY_COLUMNS) are given.
 */
export function columnStats(t: DenseTensor, rows: number, cols: number, shown: number): ColumnFigures[] {
  if (t.summary) {
    const c = t.summary.columns;
    return Array.from({ length: Math.min(shown, c.count) }, (_, j) => {
      const n = c.finite[j]!;
      if (n === 0) return { min: null, max: null, mean: null, std: null, nan: c.nan[j]!, inf: c.inf[j]! };
      // Shifted sums (the shift is the column's first value): the variance without cancellation.
      const d = c.shifted[j]!;
      const variance = Math.max(0, (c.shiftedSquares[j]! - (d * d) / n) / n);
      return { min: c.min[j]!, max: c.max[j]!, mean: c.sum[j]! / n, std: Math.sqrt(variance), nan: c.nan[j]!, inf: c.inf[j]! };
    });
  }
  const d = t.data;
  const min = new Float64Array(shown).fill(Infinity);
  const max = new Float64Array(shown).fill(-Infinity);
  const sum = new Float64Array(shown);
  const n = new Float64Array(shown);
  const nan = new Float64Array(shown);
  const inf = new Float64Array(shown);
  // Welford would be steadier; two passes keep it exact enough and allocation-free.
  for (let r = 0; r < rows; r++) {
    const base = r * cols;
    for (let c = 0; c < shown; c++) {
      const v = d[base + c]!;
      if (v !== v) { nan[c]!++; continue; }
      if (v === Infinity || v === -Infinity) { inf[c]!++; continue; }
      if (v < min[c]!) min[c] = v;
      if (v > max[c]!) max[c] = v;
      sum[c]! += v;
      n[c]!++;
    }
  }
  const sq = new Float64Array(shown);
  for (let r = 0; r < rows; r++) {
    const base = r * cols;
    for (let c = 0; c < shown; c++) {
      const v = d[base + c]!;
      if (Number.isFinite(v)) { const dv = v - sum[c]! / n[c]!; sq[c]! += dv * dv; }
    }
  }
  return Array.from({ length: shown }, (_, c) => n[c]! === 0
    ? { min: null, max: null, mean: null, std: null, nan: nan[c]!, inf: inf[c]! }
    : { min: min[c]!, max: max[c]!, mean: sum[c]! / n[c]!, std: Math.sqrt(sq[c]! / n[c]!), nan: nan[c]!, inf: inf[c]! });
}

/** Per-tensor summary figures: min, max and sum over finite values, and the non-finite count. */
import type { Tensor } from '../formats/types';

export interface TensorStats {
  min: number | null;
  max: number | null;
  sum: number | null;
  nonFinite: number;
}

export function tensorStats(t: Tensor): TensorStats {
  if (t.kind === 'dense' && t.strings) return { min: null, max: null, sum: null, nonFinite: 0 };
  const d = t.kind === 'dense' ? t.data : t.values;
  if (!d) {
    // Pattern matrix: every stored entry is 1.
    const n = t.kind === 'sparse' ? t.row.length : 0;
    return n === 0 ? { min: null, max: null, sum: 0, nonFinite: 0 } : { min: 1, max: 1, sum: n, nonFinite: 0 };
  }
  if (d instanceof Int32Array) return int32Stats(d);
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

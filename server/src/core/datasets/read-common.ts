/**
 * What every dataset layout reader shares: tensors looked up by name, offsets checked, columns
 * made, problems attributed to files. Pure: the tensors were read by core/formats already.
 */
import { CODES } from '../../../../common/problem-codes';
import type { DenseTensor, Problem, ProblemCode, Tensor, TensorData } from '../formats/types';
import { isIntegerDType } from '../checks/roles';
import type { DatasetColumn } from './model';

/** A problem and the file it belongs on. */
export interface FiledProblem {
  file: string;
  problem: Problem;
}

/** A read file's tensors (LoadedFile of check-set.ts, narrowed to what the readers need). */
export interface DatasetInputFile {
  path: string;
  result?: { tensors: Tensor[] };
}

export function problem(code: ProblemCode, message: string, extra: Partial<Problem> = {}): Problem {
  return { code, severity: CODES[code].severity, message, count: 1, ...extra };
}

/** A dense numeric tensor (no strings, values kept), else undefined. */
export function denseOf(t: Tensor | undefined): DenseTensor | undefined {
  if (!t || t.kind !== 'dense' || t.strings || t.summary) return undefined;
  return t;
}

/** A dense integer vector (1-d, or n × 1), else undefined. */
export function intVector(t: Tensor | undefined): DenseTensor | undefined {
  const d = denseOf(t);
  if (!d || !isIntegerDType(d.dtype)) return undefined;
  if (d.shape.length === 1 || (d.shape.length === 2 && d.shape[1] === 1)) return d;
  return undefined;
}

/** The last path segment of a tensor name: `[0].edge_index` → `edge_index`. */
export function attrOf(name: string): string {
  const i = name.lastIndexOf('.');
  return (i >= 0 ? name.slice(i + 1) : name).toLowerCase();
}

/**
 * Checks G + 1 offsets: whole numbers, starting at 0, never decreasing, ending at `total`.
 * Returns a sentence about the first fault, or undefined when they are good.
 */
export function offsetsFault(off: ArrayLike<number>, total: number): string | undefined {
  const n = off.length;
  if (n === 0) return 'there are no offsets at all (G graphs need G + 1)';
  if (off[0] !== 0) return `the first offset is ${off[0]}, not 0`;
  for (let i = 1; i < n; i++) {
    const a = off[i - 1]!, b = off[i]!;
    if (!Number.isInteger(b)) return `offset ${i} is ${b}, not a whole number`;
    if (b < a) return `offset ${i} is ${b}, below offset ${i - 1} (${a}): graph ${i - 1} would have a negative size`;
  }
  if (off[n - 1] !== total) return `the last offset is ${off[n - 1]} but the tensor it cuts has ${total}`;
  return undefined;
}

export function toFloat64(d: ArrayLike<number>): Float64Array {
  const out = new Float64Array(d.length);
  for (let i = 0; i < d.length; i++) out[i] = d[i]!;
  return out;
}

/** Rows × columns of a tensor read as a table (a vector is n × 1). */
export function tableShape(t: DenseTensor): [number, number] {
  if (t.shape.length === 0) return [1, 1];
  const rows = t.shape[0]!;
  let cols = 1;
  for (let i = 1; i < t.shape.length; i++) cols *= t.shape[i]!;
  return [rows, cols];
}

export function columnOf(file: string, t: DenseTensor, data?: TensorData, rows?: number): DatasetColumn {
  const [r, c] = tableShape(t);
  return { file, tensor: t.name, rows: rows ?? r, columns: c, data: data ?? t.data };
}

/** Id values of an edge endpoint as int32 (ids that do not fit, or are not whole, become INT32_MIN: out of range). */
export const BAD_ID = -2147483648;

export function toId(v: number): number {
  return Number.isInteger(v) && v >= -2147483647 && v <= 2147483647 ? v : BAD_ID;
}

/**
 * The endpoints of an edge tensor: 2 × E (columns) or E × 2 (rows), as int32 arrays.
 * Undefined when the tensor is neither.
 */
export function endpoints(t: DenseTensor): { src: Int32Array; dst: Int32Array; layout: 'columns' | 'rows' } | undefined {
  if (t.shape.length !== 2) return undefined;
  const d = t.data;
  if (t.shape[0] === 2) {
    const e = t.shape[1]!;
    const src = new Int32Array(e), dst = new Int32Array(e);
    if (d instanceof Int32Array) { src.set(d.subarray(0, e)); dst.set(d.subarray(e, 2 * e)); } else {
      for (let k = 0; k < e; k++) { src[k] = toId(d[k]!); dst[k] = toId(d[e + k]!); }
    }
    return { src, dst, layout: 'columns' };
  }
  if (t.shape[1] === 2) {
    const e = t.shape[0]!;
    const src = new Int32Array(e), dst = new Int32Array(e);
    for (let k = 0; k < e; k++) { src[k] = toId(d[2 * k]!); dst[k] = toId(d[2 * k + 1]!); }
    return { src, dst, layout: 'rows' };
  }
  return undefined;
}

/** Rows start..end-1 of a row-major table, copied in a new order (`order[i]` = old row of new row i). */
export function permuteRows(col: DatasetColumn, order: Int32Array): DatasetColumn {
  const c = col.columns;
  const Ctor = col.data.constructor as new (n: number) => TensorData;
  const out = new Ctor(order.length * c);
  for (let i = 0; i < order.length; i++) {
    const o = order[i]! * c;
    for (let j = 0; j < c; j++) out[i * c + j] = col.data[o + j]!;
  }
  return { ...col, data: out, rows: order.length };
}

/** Escapes a string for use inside a RegExp. */
export function escapeRe(s: string): string {
  return s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}

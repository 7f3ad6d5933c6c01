/**
 * Shared shapes of the pure reader layer: every reader turns the bytes of one file into named
 * tensors over typed arrays. Nothing here touches the file system or an editor API.
 */

/** Element type as written in the file. Reported to the user as-is. */
export type DType =
  | 'bool'
  | 'int8' | 'int16' | 'int32' | 'int64'
  | 'uint8' | 'uint16' | 'uint32' | 'uint64'
  | 'float16' | 'bfloat16' | 'float32' | 'float64'
  | 'bytes' | 'str';

/**
 * In-memory element storage. Readers normalise what the file holds:
 * - bool → Uint8Array (0/1)
 * - int64/uint64 → Int32Array when every value fits in int32, otherwise Float64Array
 *   (exact up to 2^53; larger values are far beyond any node count anyway)
 * - float16/bfloat16 → Float32Array
 * - big-endian data is byte-swapped into native order
 */
export type TensorData =
  | Uint8Array | Int8Array | Int16Array | Uint16Array | Int32Array | Uint32Array
  | Float32Array | Float64Array;

export type Role =
  | 'edge-index' | 'adjacency' | 'features' | 'labels' | 'mask'
  | 'edge-weight' | 'edge-features'
  /** Link-prediction pairs of a split (positive, negative, or labelled) and their 0/1 labels. */
  | 'edge-pairs' | 'edge-labels'
  | 'unknown';

/** Maps a flat element index of a tensor back to where its text sits in the file (1-based). */
export interface TextLocator {
  locate(flatIndex: number): TextSpan | undefined;
  /**
   * What the locator keeps alive to answer (the file's text, line offsets), for the graph store's
   * memory bound. Locators sharing one text return the same `holder`, so it is counted once.
   */
  kept?(): { holder: object; bytes: number };
}

export interface TextSpan {
  line: number;     // 1-based
  column: number;   // 1-based, in characters of the line
  length: number;   // characters
}

export interface DenseTensor {
  kind: 'dense';
  name: string;
  dtype: DType;
  shape: number[];
  /** C (row-major) order, whatever order the file used. */
  data: TensorData;
  /** For 'bytes'/'str' dtypes: the decoded strings, C order. `data` is then empty. */
  strings?: string[];
  /** Present for text formats. */
  locator?: TextLocator;
  /** Role stated by the container (e.g. the Matrix Market banner); otherwise inferred later. */
  declaredRole?: Role;
  /**
   * Set when the values were not kept: a member too large to hold (see ReadLimits.streamAboveBytes)
   * was summarised while it was inflated. `data` is then empty; `shape` and `dtype` are the file's.
   */
  summary?: TensorSummary;
}

/**
 * Figures of a tensor whose values were read in pieces and not kept: what the checks and the
 * tensor tables need. Over finite values, like the tensor tables: NaN and ±Infinity are counted
 * apart. Positions are flat C-order indices.
 */
export interface TensorSummary {
  /** Bytes of element data read. */
  dataBytes: number;
  /** Smallest and largest finite value (null when there is none); sum of the finite values. */
  min: number | null;
  max: number | null;
  sum: number;
  /** NaN and ±Infinity values, of which `nan` are NaN. */
  nonFinite: number;
  nan: number;
  /** The first non-finite values in C order (at most MAX_LOCATIONS): position and value. */
  nonFiniteAt: Array<{ index: number; value: number }>;
  /**
   * Per column (position modulo the product of shape[1:]) for the first `columns.count` columns:
   * min/max (±Infinity when the column has no finite value), sum and count of the finite values,
   * NaN and infinite counts, and for the spread the sums of (v - shift) and (v - shift)² where
   * `shift` is the column's first finite value.
   */
  columns: ColumnSums;
}

export interface ColumnSums {
  count: number;
  min: Float64Array;
  max: Float64Array;
  sum: Float64Array;
  finite: Float64Array;
  nan: Float64Array;
  inf: Float64Array;
  shift: Float64Array;
  shifted: Float64Array;
  shiftedSquares: Float64Array;
}

/**
 * A sparse matrix in coordinate form (Matrix Market, scipy.sparse .npz). Entries are 0-based,
 * already expanded when the file stores one triangle only. Explicitly stored zeros stay here;
 * the graph layer decides what they mean.
 */
export interface SparseTensor {
  kind: 'sparse';
  name: string;
  dtype: DType;
  shape: [number, number];
  row: Int32Array;
  col: Int32Array;
  /** Absent for pattern matrices (every stored entry is 1). */
  values?: Float64Array | Float32Array | Int32Array;
  /** Storage layout the file used (csr, csc, coo, bsr, dia, coordinate, array). */
  layout: string;
  locator?: TextLocator;
  declaredRole?: Role;
}

export type Tensor = DenseTensor | SparseTensor;

// The report vocabulary (formats, severities, problem codes, problems) is shared by every process:
// it lives in common/report.ts.
export type { Format, Severity, ProblemCode, ProblemLocation, Problem } from '../../../../common/report';
import type { Format, Problem } from '../../../../common/report';

export const MAX_LOCATIONS = 200;

/** Facts a container states about the graph it holds (e.g. the Matrix Market size line). */
export interface GraphHints {
  nodes?: number;
  directed?: boolean;
  indexBase?: 0 | 1;
}

export interface ReadResult {
  format: Format;
  tensors: Tensor[];
  /** Problems found while reading that are about the data, not about readability (e.g. a non-integer id). */
  problems: Problem[];
  hints?: GraphHints;
}

/** Limits every reader honours, so a hostile header cannot make us allocate without bound. */
export interface ReadLimits {
  /** Largest total size of decompressed members or streams, bytes. */
  maxDecompressedBytes: number;
  /** Largest JSON/text header a binary format may declare, bytes. */
  maxHeaderBytes: number;
  /**
   * Deflated .npz members that inflate to more than this many bytes, and whose values the checks
   * need only as figures (feature matrices: rows, min/max/sum, non-finite values), are summarised
   * while they are inflated and never held whole. They do not count against maxDecompressedBytes
   * (nothing is allocated for them) but against maxStreamedBytes. Default 128 MiB.
   */
  streamAboveBytes?: number;
  /** Largest total of such summarised members, bytes: a bound on time, not memory. Default 32 GiB. */
  maxStreamedBytes?: number;
}

export const DEFAULT_LIMITS: ReadLimits = {
  maxDecompressedBytes: 4 * 1024 ** 3,
  maxHeaderBytes: 100 * 1024 * 1024,
  streamAboveBytes: 128 * 1024 ** 2,
  maxStreamedBytes: 32 * 1024 ** 3,
};

/**
 * The only error a reader may throw for bad input. It becomes an `unreadable` problem.
 * `offset` is a byte offset, `line` a 1-based line, when they are known.
 */
export class UnreadableError extends Error {
  override readonly name = 'UnreadableError';
  constructor(
    message: string,
    readonly offset?: number,
    readonly line?: number,
  ) {
    super(message);
  }
}

/** Element count of a shape; () has one element. */
export function numel(shape: readonly number[]): number {
  let n = 1;
  for (const d of shape) n *= d;
  return n;
}

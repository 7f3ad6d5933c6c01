/**
 * Summarises the body of a .npy array that arrives in pieces (an .npz member inflated piece by
 * piece) without keeping it: shape and dtype come from the header, and per piece the elements are
 * decoded exactly as the whole-array reader decodes them (decodeElements) and folded into the
 * figures of TensorSummary. Only a partial element is carried from one piece to the next.
 *
 * Equal to the in-memory figures (tensorStats, the per-column table, the non-finite examples) for
 * C-ordered arrays: values are visited in the same order, so even the sums match bit for bit. A
 * Fortran-ordered array arrives column by column: per-column figures still match exactly (each
 * column is visited top to bottom), the non-finite examples are the first ones in C order (kept by
 * a bounded heap), and only the overall sum may differ in its last bits (added in another order).
 */
import { MAX_LOCATIONS, type ColumnSums, type TensorData, type TensorSummary } from './types';
import { decodeElements } from './elements';
import type { NpyLayout } from './npy';

/** Columns with per-column figures; wider arrays are summarised as a whole beyond these. */
export const SUMMARY_COLUMNS = 4096;

export class NpySummariser {
  private readonly itemSize: number;
  private readonly count: number;
  private readonly cols: number;
  private readonly rows: number;
  private readonly fortran: boolean;
  private readonly k: number;
  private readonly c: ColumnSums;
  /** Elements folded in so far, and the (row, column) of the next one. */
  private done = 0;
  private row = 0;
  private col = 0;
  /** Fortran order: index of the current run of `rows` elements (one column of the C view). */
  private run = 0;
  private min = Infinity;
  private max = -Infinity;
  private sum = 0;
  private nonFinite = 0;
  private nan = 0;
  /** Non-finite examples: a max-heap on position once full (Fortran order), else in arrival order. */
  private readonly atIndex: number[] = [];
  private readonly atValue: number[] = [];
  private readonly carry: Uint8Array;
  private carried = 0;
  private dataBytes = 0;

  constructor(private readonly layout: NpyLayout, maxColumns = SUMMARY_COLUMNS) {
    const { shape, descr } = layout;
    this.itemSize = descr.itemSize;
    this.count = layout.count;
    this.rows = shape.length === 0 ? 1 : shape[0]!;
    let cols = 1;
    for (let i = 1; i < shape.length; i++) cols *= shape[i]!;
    this.cols = cols;
    this.fortran = layout.fortran && shape.length > 1;
    this.k = Math.min(cols, maxColumns);
    const k = this.k;
    this.c = {
      count: k,
      min: new Float64Array(k).fill(Infinity), max: new Float64Array(k).fill(-Infinity),
      sum: new Float64Array(k), finite: new Float64Array(k), nan: new Float64Array(k), inf: new Float64Array(k),
      shift: new Float64Array(k), shifted: new Float64Array(k), shiftedSquares: new Float64Array(k),
    };
    this.carry = new Uint8Array(this.itemSize);
  }

  /** Element bytes in file order; bytes beyond the array's last element are ignored. */
  push(bytes: Uint8Array): void {
    let off = 0;
    const size = this.itemSize;
    if (this.carried > 0) {
      const take = Math.min(size - this.carried, bytes.length);
      this.carry.set(bytes.subarray(0, take), this.carried);
      this.carried += take;
      off = take;
      if (this.carried < size) return;
      this.carried = 0;
      this.fold(this.carry, 0, 1);
    }
    const whole = Math.min(Math.floor((bytes.length - off) / size), this.count - this.done);
    if (whole > 0) this.fold(bytes, off, whole);
    off += whole * size;
    if (this.done < this.count && off < bytes.length) {
      this.carry.set(bytes.subarray(off, off + size - 1));
      this.carried = Math.min(bytes.length - off, size - 1);
    }
  }

  /** The figures, once every element has been pushed. */
  finish(): TensorSummary {
    if (this.done !== this.count) throw new Error(`summariser got ${this.done} of ${this.count} elements`);
    const order = this.atIndex.map((_, i) => i).sort((a, b) => this.atIndex[a]! - this.atIndex[b]!);
    const finite = this.min !== Infinity;
    return {
      dataBytes: this.dataBytes,
      min: finite ? this.min : null,
      max: finite ? this.max : null,
      sum: this.sum,
      nonFinite: this.nonFinite,
      nan: this.nan,
      nonFiniteAt: order.map((i) => ({ index: this.atIndex[i]!, value: this.atValue[i]! })),
      columns: this.c,
    };
  }

  private fold(bytes: Uint8Array, offset: number, n: number): void {
    const { dtype, littleEndian } = this.layout.descr;
    const d = decodeElements(bytes, offset, n, dtype, littleEndian);
    this.dataBytes += n * this.itemSize;
    if (this.fortran) this.foldFortran(d, n);
    else this.foldC(d, n);
    this.done += n;
  }

  /**
   * C order: the column advances with every element. Taken a row segment at a time, so the inner
   * loops test neither the row end nor the column limit.
   */
  private foldC(d: TensorData, n: number): void {
    const cols = this.cols, k = this.k;
    const { min: cmin, max: cmax, sum: csum, finite: cfin, nan: cnan, inf: cinf, shift, shifted, shiftedSquares } = this.c;
    let min = this.min, max = this.max, sum = this.sum;
    let c = this.col;
    const base = this.done;
    for (let i = 0; i < n;) {
      const seg = Math.min(n - i, cols - c);
      const withColumns = Math.max(0, Math.min(seg, k - c));
      // Columns c .. c + withColumns - 1 keep their own figures.
      for (let j = i, col = c, end = i + withColumns; j < end; j++, col++) {
        const v = d[j]!;
        if (v - v !== 0) { // NaN or ±Infinity
          this.noteNonFinite(base + j, v);
          if (v !== v) cnan[col]!++; else cinf[col]!++;
          continue;
        }
        if (v < min) min = v;
        if (v > max) max = v;
        sum += v;
        if (v < cmin[col]!) cmin[col] = v;
        if (v > cmax[col]!) cmax[col] = v;
        csum[col]! += v;
        if (cfin[col]!++ === 0) shift[col] = v;
        const dv = v - shift[col]!;
        shifted[col]! += dv;
        shiftedSquares[col]! += dv * dv;
      }
      // The rest of the segment counts only towards the whole-tensor figures.
      for (let j = i + withColumns, end = i + seg; j < end; j++) {
        const v = d[j]!;
        if (v - v !== 0) { this.noteNonFinite(base + j, v); continue; }
        if (v < min) min = v;
        if (v > max) max = v;
        sum += v;
      }
      i += seg;
      c += seg;
      if (c === cols) c = 0;
    }
    this.min = min; this.max = max; this.sum = sum;
    this.col = c;
  }

  /** Fortran order: the row advances with every element, the column once per `rows` elements. */
  private foldFortran(d: TensorData, n: number): void {
    const rows = this.rows, cols = this.cols, k = this.k;
    const { min: cmin, max: cmax, sum: csum, finite: cfin, nan: cnan, inf: cinf, shift, shifted, shiftedSquares } = this.c;
    let min = this.min, max = this.max, sum = this.sum;
    let r = this.row, c = this.col;
    for (let i = 0; i < n; i++) {
      const v = d[i]!;
      if (v - v !== 0) {
        this.noteNonFinite(r * cols + c, v);
        if (c < k) { if (v !== v) cnan[c]!++; else cinf[c]!++; }
      } else {
        if (v < min) min = v;
        if (v > max) max = v;
        sum += v;
        if (c < k) {
          if (v < cmin[c]!) cmin[c] = v;
          if (v > cmax[c]!) cmax[c] = v;
          csum[c]! += v;
          if (cfin[c]!++ === 0) shift[c] = v;
          const dv = v - shift[c]!;
          shifted[c]! += dv;
          shiftedSquares[c]! += dv * dv;
        }
      }
      if (++r === rows) { r = 0; c = this.columnOfRun(++this.run); }
    }
    this.min = min; this.max = max; this.sum = sum;
    this.row = r; this.col = c;
  }

  /**
   * The C-order column (position over axes 1..) of the `run`-th run in Fortran order, where axis 1
   * varies fastest: the Fortran digits of `run` over shape[1..], re-weighed with C strides.
   */
  private columnOfRun(run: number): number {
    const shape = this.layout.shape;
    if (shape.length === 2) return run;
    let rest = run, col = 0, stride = this.cols;
    for (let a = 1; a < shape.length; a++) {
      const s = shape[a]!;
      stride /= s;
      col += (rest % s) * stride;
      rest = Math.floor(rest / s);
    }
    return col;
  }

  private noteNonFinite(index: number, value: number): void {
    this.nonFinite++;
    if (value !== value) this.nan++;
    const at = this.atIndex, val = this.atValue;
    if (at.length < MAX_LOCATIONS) {
      at.push(index); val.push(value);
      if (this.fortran) siftUp(at, val, at.length - 1);
      return;
    }
    // Full. In C order positions only grow, so nothing later can be among the first ones.
    if (!this.fortran || index >= at[0]!) return;
    at[0] = index; val[0] = value;
    siftDown(at, val, 0);
  }
}

// A max-heap on position over two parallel arrays (position, value).

function swap(at: number[], val: number[], i: number, j: number): void {
  const a = at[i]!; at[i] = at[j]!; at[j] = a;
  const v = val[i]!; val[i] = val[j]!; val[j] = v;
}

function siftUp(at: number[], val: number[], i: number): void {
  while (i > 0) {
    const p = (i - 1) >> 1;
    if (at[p]! >= at[i]!) return;
    swap(at, val, i, p);
    i = p;
  }
}

function siftDown(at: number[], val: number[], i: number): void {
  const n = at.length;
  for (;;) {
    const l = 2 * i + 1, r = l + 1;
    let m = i;
    if (l < n && at[l]! > at[m]!) m = l;
    if (r < n && at[r]! > at[m]!) m = r;
    if (m === i) return;
    swap(at, val, i, m);
    i = m;
  }
}

/** The fields of one line, split without allocating, and a token's text for messages. */
import { CR, LF, SPACE, TAB } from './bytes';
import { lineEndFrom } from './line-index';

/**
 * Splits one line into fields without allocating. `delim` 0 means runs of spaces/tabs separate
 * fields; otherwise one delimiter byte does, and blanks around each field are trimmed (so
 * `a, b` gives `a` and `b`, and `a,,b` has an empty middle field). Bounds are byte offsets.
 */
export class FieldSplitter {
  starts = new Float64Array(16);
  ends = new Float64Array(16);
  count = 0;
  /** Offset of the LF ending the line (or the end of the data). */
  lineEnd = 0;
  /** Offset where the next line starts. */
  next = 0;
  /**
   * Fields kept per line: a line with more stops being split there (`count` is then `maxFields`
   * and `cut` is set), so one enormous line costs a scan for its end, not memory per field.
   */
  maxFields = Infinity;
  /** The last line had more than `maxFields` fields. */
  cut = false;

  constructor(readonly delim: number) {}

  /** `i` must point at the first non-blank byte of the line. */
  split(b: Uint8Array, i: number, n: number): void {
    const d = this.delim;
    let f = 0;
    this.cut = false;
    for (;;) {
      const s = i;
      let e: number;
      if (d === 0) {
        while (i < n) {
          const c = b[i]!;
          if (c === SPACE || c === TAB || c === LF || c === CR) break;
          i++;
        }
        e = i;
        while (i < n) {
          const c = b[i]!;
          if (c !== SPACE && c !== TAB && c !== CR) break;
          i++;
        }
      } else {
        while (i < n) {
          const c = b[i]!;
          if (c === d || c === LF) break;
          i++;
        }
        e = i;
        while (e > s) {
          const c = b[e - 1]!;
          if (c !== SPACE && c !== TAB && c !== CR) break;
          e--;
        }
      }
      if (f === this.maxFields) {
        // One field too many: skip to the end of the line.
        this.cut = true;
        i = lineEndFrom(b, i, n);
        break;
      }
      if (f === this.starts.length) this.growFields();
      this.starts[f] = s;
      this.ends[f] = e;
      f++;
      if (i >= n || b[i] === LF) break;
      if (d !== 0) {
        i++; // past the delimiter
        while (i < n) {
          const c = b[i]!;
          if ((c !== SPACE && c !== TAB && c !== CR) || c === d) break;
          i++;
        }
      }
    }
    this.count = f;
    this.lineEnd = i;
    this.next = i < n ? i + 1 : n;
  }

  private growFields(): void {
    const s = new Float64Array(this.starts.length * 2);
    s.set(this.starts);
    this.starts = s;
    const e = new Float64Array(this.ends.length * 2);
    e.set(this.ends);
    this.ends = e;
  }
}

/** Offset of the first byte of the line at `i` that is not a space, tab or CR (may be LF or n). */
export function skipBlanks(b: Uint8Array, i: number, n: number): number {
  while (i < n) {
    const c = b[i]!;
    if (c !== SPACE && c !== TAB && c !== CR) break;
    i++;
  }
  return i;
}

/** Latin-1/UTF-8 text of a short byte range, for messages; long tokens are cut. */
export function tokenText(b: Uint8Array, s: number, e: number, max = 40): string {
  const cut = e - s > max;
  const text = new TextDecoder('utf-8').decode(b.subarray(s, cut ? s + max : e));
  return cut ? text + '…' : text;
}

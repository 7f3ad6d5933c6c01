/**
 * Matrix Market reader (.mtx, .mtx.gz) after NISTIR 5935 (Boisvert, Pozo, Remington 1996):
 *
 *   %%MatrixMarket matrix <coordinate|array> <real|integer|pattern|double|complex> <symmetry>
 *   % comments
 *   M N L          (coordinate)   or   M N   (array)
 *   i j [value]    1-based, one entry per line (coordinate)
 *   value          column-major, one per line (array; symmetric arrays hold the lower triangle)
 *
 * The result is one SparseTensor `adjacency` with 0-based row/col. Symmetric files are expanded
 * (each off-diagonal entry is also stored mirrored, so it counts twice; skew-symmetric mirrors
 * carry the negated value); array files keep only non-zero entries (NaN counts as non-zero).
 * Duplicate coordinates stay as separate entries (SciPy would sum them; the checks layer reports
 * them). A diagonal entry stored in a skew-symmetric coordinate file is kept once, as SciPy's
 * mmread keeps it, and a non-zero one is reported (`skew-symmetric-diagonal`). An integer value
 * beyond int64 makes the file unreadable (SciPy's mmread raises OverflowError). Banner words are
 * case-insensitive, as in the reference readers.
 *
 * Complex and hermitian matrices are refused: a complex adjacency is not graph data, and reading
 * only the real part would silently drop information.
 *
 * Problems: a row/column index that is not an integer → `non-integer-index`; 0 or beyond M/N →
 * `index-out-of-range`; both leave the entry out. Malformed lines and values → `edge-shape`.
 * An entry count that differs from the size line (e.g. a truncated file) is unreadable.
 */
import {
  UnreadableError,
  type ProblemLocation,
  type ReadLimits,
  type ReadResult,
  type SparseTensor,
  type TextLocator,
  type TextSpan,
  type GraphHints,
} from './types';
import { CR, LF, PERCENT, SPACE, TAB } from './text/bytes';
import { bomLength, textBytes } from './text/encoding';
import { ByteLines, lineEndFrom, utf16Length } from './text/line-index';
import { FieldSplitter, skipBlanks, tokenText } from './text/fields';
import {
  INT32_MAX,
  intRefusal,
  numberState,
  parseDecimalBytes,
  parseIntBytes,
  parseNumberBytes,
} from './text/numbers';
import {
  allocFloat64,
  allocInt32,
  allocUint32,
  fit,
  growFloat64,
  growInt32,
  growUint32,
} from './text/growable';
import { ProblemCollector, plural } from './text/problems';

type MtxFormat = 'coordinate' | 'array';
type MtxField = 'real' | 'integer' | 'pattern';
type MtxSymmetry = 'general' | 'symmetric' | 'skew-symmetric';

interface Header {
  format: MtxFormat;
  field: MtxField;
  symmetry: MtxSymmetry;
  rows: number;
  cols: number;
  /** Declared entry count (coordinate) or values expected (array). */
  entries: number;
  /** Offset where the entries start, and the line number before them. */
  pos: number;
  line: number;
}

export function readMtx(bytes: Uint8Array, fileName: string, limits: ReadLimits): ReadResult {
  const b = textBytes(bytes, fileName, limits);
  const first = bomLength(b);
  const h = readHeader(b, first);
  const built = h.format === 'coordinate' ? readCoordinate(b, h) : readArray(b, h);
  const { row, col, values, offsets, count, problems } = built;

  const lines = new ByteLines(b, first);
  const tensor: SparseTensor = {
    kind: 'sparse',
    name: 'adjacency',
    dtype: h.field === 'pattern' ? 'bool' : h.field === 'integer' ? 'int64' : 'float64',
    shape: [h.rows, h.cols],
    row: fit(row, count),
    col: fit(col, count),
    layout: h.format,
    locator: new MtxLocator(b, lines, fit(offsets, count), h.format === 'coordinate'),
    declaredRole: 'adjacency',
  };
  if (values) tensor.values = finishValues(fit(values, count), h.field, problems);
  const hints: GraphHints = { indexBase: 1 };
  if (h.rows === h.cols) hints.nodes = h.rows;
  if (h.symmetry === 'symmetric') hints.directed = false;
  return { format: 'mtx', tensors: [tensor], problems: problems.problems(), hints };
}

// ---------------------------------------------------------------------------------------------
// header

function readHeader(b: Uint8Array, first: number): Header {
  const n = b.length;
  const bannerEnd = lineEndFrom(b, first, n);
  const words = new TextDecoder('latin1')
    .decode(b.subarray(first, Math.min(bannerEnd, first + 512)))
    .trim()
    .toLowerCase()
    .split(/[ \t\r]+/);
  if (words[0] !== '%%matrixmarket') {
    throw new UnreadableError('not a Matrix Market file: line 1 must start with %%MatrixMarket', first, 1);
  }
  const [, object, format, rawField, symmetry] = words;
  if (object !== 'matrix') {
    throw new UnreadableError(`Matrix Market object '${object ?? ''}' is not supported (only 'matrix')`, first, 1);
  }
  if (format !== 'coordinate' && format !== 'array') {
    throw new UnreadableError(`unknown Matrix Market format '${format ?? ''}' (coordinate or array)`, first, 1);
  }
  if (rawField === 'complex' || symmetry === 'hermitian') {
    throw new UnreadableError('complex matrices are not graph data (the banner says complex/hermitian)', first, 1);
  }
  let field: MtxField;
  if (rawField === 'real' || rawField === 'double') field = 'real';
  else if (rawField === 'integer' || rawField === 'pattern') field = rawField;
  else throw new UnreadableError(`unknown Matrix Market field '${rawField ?? ''}'`, first, 1);
  if (symmetry !== 'general' && symmetry !== 'symmetric' && symmetry !== 'skew-symmetric') {
    throw new UnreadableError(`unknown Matrix Market symmetry '${symmetry ?? ''}'`, first, 1);
  }
  if (field === 'pattern' && format === 'array') {
    throw new UnreadableError('a pattern matrix must use the coordinate format', first, 1);
  }
  if (field === 'pattern' && symmetry === 'skew-symmetric') {
    throw new UnreadableError('a pattern matrix cannot be skew-symmetric', first, 1);
  }

  // Comments and blank lines, then the size line.
  let pos = bannerEnd + 1;
  let line = 1;
  for (;;) {
    if (pos >= n) throw new UnreadableError('Matrix Market file has no size line', n, line);
    line++;
    const i = skipBlanks(b, pos, n);
    if (i >= n) throw new UnreadableError('Matrix Market file has no size line', n, line);
    if (b[i] === LF) {
      pos = i + 1;
      continue;
    }
    if (b[i] === PERCENT) {
      pos = lineEndFrom(b, i, n) + 1;
      continue;
    }
    const sp = new FieldSplitter(0);
    sp.split(b, i, n);
    const want = format === 'coordinate' ? 3 : 2;
    const nums: number[] = [];
    for (let k = 0; k < sp.count; k++) nums.push(parseCount(b, sp.starts[k]!, sp.ends[k]!));
    if (sp.count !== want || nums.some((x) => !(x >= 0))) {
      const text = tokenText(b, i, sp.lineEnd, 60).trimEnd();
      throw new UnreadableError(
        `Matrix Market size line must be ${format === 'coordinate' ? "'rows cols entries'" : "'rows cols'"} ` +
          `with non-negative integers, found '${text}'`,
        i,
        line,
      );
    }
    // Whole numbers, but maybe beyond what is read: say which limit.
    const names = ['rows', 'columns', 'entries'];
    for (let k = 0; k < want; k++) {
      const x = nums[k]!;
      if (x === Infinity) {
        throw new UnreadableError(
          `Matrix Market size line: ${tokenText(b, sp.starts[k]!, sp.ends[k]!, 40)} ${names[k]} is above ` +
            `${Number.MAX_SAFE_INTEGER} (2^53 − 1), more than any file can hold`, i, line);
      }
      if (k < 2 && x > INT32_MAX) {
        throw new UnreadableError(
          `Matrix Market size line: ${x} ${names[k]} is above the ${INT32_MAX} (2^31 − 1) rows and columns ` +
            `Hopscope reads (node ids are int32)`, i, line);
      }
    }
    const [rows, cols] = nums as [number, number];
    // Mirroring needs a square matrix (NISTIR 5935); a coordinate file would otherwise mirror
    // entries outside the matrix (SciPy's mmread then fails with "index exceeds matrix dimensions").
    if (symmetry !== 'general' && rows !== cols) {
      throw new UnreadableError(`a ${symmetry} matrix must be square, the size line says ${rows}×${cols}`, i, line);
    }
    let entries: number;
    if (format === 'coordinate') entries = nums[2]!;
    else if (symmetry === 'general') entries = rows * cols;
    else entries = symmetry === 'symmetric' ? (rows * (rows + 1)) / 2 : (rows * (rows - 1)) / 2;
    return { format, field, symmetry, rows, cols, entries, pos: sp.next, line };
  }
}

/**
 * A size-line count: `[+]digits` as an exact number up to 2^53 − 1, Infinity for longer digit
 * strings, NaN for anything else (signs other than '+', fractions, exponents).
 */
function parseCount(b: Uint8Array, s: number, e: number): number {
  let i = s;
  if (i < e && b[i] === 43) i++;
  if (i === e) return NaN;
  let v = 0;
  for (; i < e; i++) {
    const d = b[i]! - 48;
    if (d < 0 || d > 9) return NaN;
    v = v * 10 + d;
  }
  return v > Number.MAX_SAFE_INTEGER ? Infinity : v;
}

const INT64_MAX_DIGITS = '9223372036854775807';
const INT64_MIN_DIGITS = '9223372036854775808';
const TWO_63 = 2 ** 63;

/**
 * Whether an integer-field token whose value rounded to a double is at least 2^63 in magnitude
 * still names an int64 (2^63 − 1 and −2^63 round to ±2^63). Anything not `[+-]digits` is not.
 */
function fitsInt64(b: Uint8Array, s: number, e: number): boolean {
  let i = s;
  const neg = b[i] === 45;
  if (neg || b[i] === 43) i++;
  while (i < e - 1 && b[i] === 48) i++;
  let digits = '';
  for (; i < e; i++) {
    const c = b[i]!;
    if (c < 48 || c > 57) return false;
    digits += String.fromCharCode(c);
  }
  const limit = neg ? INT64_MIN_DIGITS : INT64_MAX_DIGITS;
  return digits.length < limit.length || (digits.length === limit.length && digits <= limit);
}

/** SciPy's mmread refuses integer values beyond int64 (OverflowError); so does this reader. */
function refuseBeyondInt64(b: Uint8Array, s: number, e: number, line: number): never {
  throw new UnreadableError(
    `line ${line}: the value ${tokenText(b, s, e, 40)} does not fit in int64 (the banner says integer; ` +
      `int64 holds -9223372036854775808..9223372036854775807, and SciPy's mmread refuses such a file too). ` +
      'If the values are meant as floats, write the file with field real.',
    s,
    line,
  );
}

// ---------------------------------------------------------------------------------------------
// entries

interface Built {
  row: Int32Array;
  col: Int32Array;
  values: Float64Array | undefined;
  /** Per entry: byte offset of its line (coordinate) or of its value (array). */
  offsets: Uint32Array;
  count: number;
  problems: ProblemCollector;
}

/** Growable entry storage. */
class Entries {
  row: Int32Array;
  col: Int32Array;
  values: Float64Array | undefined;
  offsets: Uint32Array;
  count = 0;

  constructor(
    private cap: number,
    withValues: boolean,
  ) {
    this.row = allocInt32(cap);
    this.col = allocInt32(cap);
    this.values = withValues ? allocFloat64(cap) : undefined;
    this.offsets = allocUint32(cap);
  }

  push(r: number, c: number, v: number, offset: number): void {
    const k = this.count;
    if (k === this.cap) this.grow();
    this.row[k] = r;
    this.col[k] = c;
    if (this.values) this.values[k] = v;
    this.offsets[k] = offset;
    this.count = k + 1;
  }

  private grow(): void {
    const cap = Math.ceil(this.cap * 1.5) + 16;
    this.row = growInt32(this.row, cap);
    this.col = growInt32(this.col, cap);
    if (this.values) this.values = growFloat64(this.values, cap);
    this.offsets = growUint32(this.offsets, cap);
    this.cap = cap;
  }

  built(problems: ProblemCollector): Built {
    return {
      row: this.row, col: this.col, values: this.values, offsets: this.offsets, count: this.count, problems,
    };
  }
}

function readCoordinate(b: Uint8Array, h: Header): Built {
  const n = b.length;
  const L = h.entries;
  const M = h.rows;
  const N = h.cols;
  const sym = h.symmetry !== 'general';
  const skew = h.symmetry === 'skew-symmetric';
  const hasValue = h.field !== 'pattern';
  const intField = h.field === 'integer';
  const want = hasValue ? 3 : 2;
  // Each entry takes at least 4 bytes ("1 1\n"): never trust L beyond what the bytes can hold.
  const room = Math.floor((n - h.pos) / 4) + 1;
  const store = new Entries(Math.min(L, room) * (sym ? 2 : 1) + 16, hasValue);
  const report = new Reporter(b, M, N);
  const sp = new FieldSplitter(0);

  let lastLF = n - 1;
  while (lastLF >= h.pos && b[lastLF] !== LF) lastLF--;

  let pos = h.pos;
  let line = h.line;
  let found = 0;
  while (pos < n) {
    line++;
    const lineStart = pos;
    const i = skipBlanks(b, pos, n);
    if (i >= n) break;
    const c = b[i]!;
    if (c === LF) {
      pos = i + 1;
      continue;
    }
    if (c === PERCENT) {
      pos = lineEndFrom(b, i, n) + 1;
      continue;
    }
    found++;
    let r = 0;
    let q = 0;
    let v = 1;
    // Plain `i j [value]` lines before the last LF: integers parsed while scanning, no bounds
    // checks (every scan stops at the line's LF at the latest).
    if (i <= lastLF) {
      fast: {
        let j = i;
        let x = c;
        let d = x - 48;
        if (d < 0 || d > 9) break fast;
        let ds = j;
        do {
          r = r * 10 + d;
          x = b[++j]!;
          d = x - 48;
        } while (d >= 0 && d <= 9);
        if (j - ds > 10 || r < 1 || r > M || (x !== SPACE && x !== TAB)) break fast;
        do x = b[++j]!; while (x === SPACE || x === TAB);
        d = x - 48;
        if (d < 0 || d > 9) break fast;
        ds = j;
        do {
          q = q * 10 + d;
          x = b[++j]!;
          d = x - 48;
        } while (d >= 0 && d <= 9);
        if (j - ds > 10 || q < 1 || q > N) break fast;
        if (hasValue) {
          if (x !== SPACE && x !== TAB) break fast;
          do x = b[++j]!; while (x === SPACE || x === TAB);
          const s = j;
          while (x !== SPACE && x !== TAB && x !== CR && x !== LF) x = b[++j]!;
          if (j === s) break fast;
          v = parseDecimalBytes(b, s, j);
          if (!numberState.ok) break fast;
          if (intField && (v >= TWO_63 || v <= -TWO_63) && !fitsInt64(b, s, j)) refuseBeyondInt64(b, s, j, line);
        }
        while (x === SPACE || x === TAB || x === CR) x = b[++j]!;
        if (x !== LF) break fast;
        pos = j + 1;
        if (!sym) store.push(r - 1, q - 1, v, i);
        else addEntry(store, report, r - 1, q - 1, v, i, sym, skew, line, lineStart);
        continue;
      }
      r = 0;
      q = 0;
      v = 1;
    }

    // General path: any malformed or unusual line.
    sp.split(b, i, n);
    pos = sp.next;
    const f = sp.count;
    const st = sp.starts;
    const en = sp.ends;
    if (f < want) {
      report.short(line, lineStart, i, sp.lineEnd, want);
      continue;
    }
    r = parseIntBytes(b, st[0]!, en[0]!);
    q = parseIntBytes(b, st[1]!, en[1]!);
    if (r !== r || q !== q) {
      const k = r !== r ? 0 : 1;
      report.nonInteger(line, lineStart, k, st[k]!, en[k]!);
      continue;
    }
    if (r < 1 || r > M || q < 1 || q > N) {
      const k = r < 1 || r > M ? 0 : 1;
      report.outOfRange(line, lineStart, k, st[k]!, en[k]!, k === 0 ? r : q);
      continue;
    }
    if (hasValue) {
      v = parseDecimalBytes(b, st[2]!, en[2]!);
      if (!numberState.ok) report.notNumber(line, lineStart, st[2]!, en[2]!);
      else if (intField && (v >= TWO_63 || v <= -TWO_63) && !fitsInt64(b, st[2]!, en[2]!)) {
        refuseBeyondInt64(b, st[2]!, en[2]!, line);
      }
    }
    if (f > want) report.extra(line, lineStart, st[want]!, trimEnd(b, st[want]!, sp.lineEnd), want);
    addEntry(store, report, r - 1, q - 1, v, i, sym, skew, line, lineStart);
  }
  if (found !== L) {
    throw new UnreadableError(
      `Matrix Market size line declares ${L} ${L === 1 ? 'entry' : 'entries'}, found ${found}` +
        (found < L ? ' (the file is truncated)' : ''),
      n,
      line,
    );
  }
  return store.built(report.problems);
}

function addEntry(
  store: Entries, report: Reporter, r: number, c: number, v: number, offset: number,
  sym: boolean, skew: boolean, line: number, lineStart: number,
): void {
  if (sym && r !== c) {
    if (r < c) report.upper(line, lineStart, offset, skew);
    store.push(r, c, v, offset);
    store.push(c, r, skew ? -v : v, offset);
  } else {
    // A skew-symmetric file should store no diagonal; SciPy's mmread keeps what is stored.
    if (skew && v !== 0) report.skewDiagonal(line, lineStart, offset);
    store.push(r, c, v, offset);
  }
}

function readArray(b: Uint8Array, h: Header): Built {
  const n = b.length;
  const M = h.rows;
  const N = h.cols;
  const expected = h.entries;
  const sym = h.symmetry !== 'general';
  const skew = h.symmetry === 'skew-symmetric';
  const intField = h.field === 'integer';
  const report = new Reporter(b, M, N);
  const store = new Entries(1024, true);
  const sp = new FieldSplitter(0);
  // Position of the next value: column-major; symmetric arrays hold rows c..M-1 of column c,
  // skew-symmetric ones rows c+1..M-1.
  let r = skew ? 1 : 0;
  let c = 0;
  let found = 0;
  let pos = h.pos;
  let line = h.line;
  while (pos < n) {
    line++;
    const lineStart = pos;
    const i = skipBlanks(b, pos, n);
    if (i >= n) break;
    const x = b[i]!;
    if (x === LF) {
      pos = i + 1;
      continue;
    }
    if (x === PERCENT) {
      pos = lineEndFrom(b, i, n) + 1;
      continue;
    }
    sp.split(b, i, n);
    pos = sp.next;
    for (let k = 0; k < sp.count; k++) {
      found++;
      if (found > expected) continue;
      const s = sp.starts[k]!;
      const e = sp.ends[k]!;
      let v = parseNumberBytes(b, s, e);
      if (!numberState.ok) {
        report.notNumber(line, lineStart, s, e);
        v = NaN;
      } else if (intField && (v >= TWO_63 || v <= -TWO_63) && !fitsInt64(b, s, e)) {
        refuseBeyondInt64(b, s, e, line);
      }
      if (v !== 0) {
        store.push(r, c, v, s);
        if (sym && r !== c) store.push(c, r, skew ? -v : v, s);
      }
      if (++r >= M) {
        c++;
        r = sym ? c + (skew ? 1 : 0) : 0;
      }
    }
  }
  if (found !== expected) {
    throw new UnreadableError(
      `Matrix Market array ${M}×${N} (${h.symmetry}) declares ${expected} values, found ${found}` +
        (found < expected ? ' (the file is truncated)' : ''),
      n,
      line,
    );
  }
  return store.built(report.problems);
}

/** Integer matrices become Int32Array when every value fits, as the reader contract asks. */
function finishValues(v: Float64Array, field: MtxField, problems: ProblemCollector): Float64Array | Int32Array {
  if (field !== 'integer') return v;
  let fits = true;
  let nonInteger = 0;
  for (let k = 0; k < v.length; k++) {
    const x = v[k]!;
    if (!Number.isInteger(x)) {
      fits = false;
      if (x === x) nonInteger++;
    } else if (x > INT32_MAX || x < -INT32_MAX - 1) fits = false;
  }
  if (nonInteger > 0) {
    problems.add('intfield', 'edge-shape', 'warning', 'adjacency',
      (cnt) => `the banner says integer, but ${plural(cnt, 'stored value')} ${cnt === 1 ? 'is' : 'are'} not whole numbers`,
      undefined, nonInteger);
  }
  if (!fits) return v;
  return Int32Array.from(v);
}

function trimEnd(b: Uint8Array, s: number, e: number): number {
  while (e > s && (b[e - 1] === SPACE || b[e - 1] === TAB || b[e - 1] === CR)) e--;
  return e;
}

// ---------------------------------------------------------------------------------------------
// problems

class Reporter {
  readonly problems = new ProblemCollector();

  constructor(
    private readonly b: Uint8Array,
    private readonly rows: number,
    private readonly cols: number,
  ) {}

  private loc(line: number, lineStart: number, s: number, e: number, detail: string): ProblemLocation {
    const b = this.b;
    return { line, column: utf16Length(b, lineStart, s) + 1, length: utf16Length(b, s, e), detail };
  }

  short(line: number, lineStart: number, s: number, lineEnd: number, want: number): void {
    const e = trimEnd(this.b, s, lineEnd);
    this.problems.add('short', 'edge-shape', 'error', 'adjacency',
      (cnt, p) => `${plural(cnt, 'entry line')} ${cnt === 1 ? 'has' : 'have'} fewer than the ${want} fields ` +
        `an entry needs (${want === 3 ? 'row, column, value' : 'row, column'}), first at line ${p?.line}; ` +
        `${cnt === 1 ? 'it is' : 'they are'} left out`,
      this.problems.wants('short') ? this.loc(line, lineStart, s, e, `'${tokenText(this.b, s, e)}'`) : undefined);
  }

  nonInteger(line: number, lineStart: number, k: number, s: number, e: number): void {
    this.problems.add('id', 'non-integer-index', 'error', 'adjacency',
      (cnt, p) => `${plural(cnt, 'entry', 'entries')} ${cnt === 1 ? 'has' : 'have'} a row or column index that ` +
        `is not an integer (first at line ${p?.line}, column ${p?.column}: ${p?.detail}); ` +
        `${cnt === 1 ? 'it is' : 'they are'} left out`,
      this.problems.wants('id')
        ? this.loc(line, lineStart, s, e,
          `${k === 0 ? 'row' : 'column'} index '${tokenText(this.b, s, e)}' ${intRefusal(this.b, s, e)}`)
        : undefined);
  }

  outOfRange(line: number, lineStart: number, k: number, s: number, e: number, value: number): void {
    const limit = k === 0 ? this.rows : this.cols;
    const rows = this.rows;
    const cols = this.cols;
    this.problems.add('range', 'index-out-of-range', 'error', 'adjacency',
      (cnt, p) => `${plural(cnt, 'entry', 'entries')} ${cnt === 1 ? 'has' : 'have'} an index outside the ` +
        `${rows}×${cols} matrix (Matrix Market indices are 1-based; first at line ${p?.line}, column ` +
        `${p?.column}: ${p?.detail}); ${cnt === 1 ? 'it is' : 'they are'} left out`,
      this.problems.wants('range')
        ? this.loc(line, lineStart, s, e, `${k === 0 ? 'row' : 'column'} index ${value} is outside 1..${limit}`)
        : undefined);
  }

  notNumber(line: number, lineStart: number, s: number, e: number): void {
    this.problems.add('value', 'edge-shape', 'error', 'adjacency',
      (cnt, p) => `${plural(cnt, 'value')} ${cnt === 1 ? 'is' : 'are'} not a number (first at line ${p?.line}: ` +
        `${p?.detail}); read as NaN`,
      this.problems.wants('value')
        ? this.loc(line, lineStart, s, e, `'${tokenText(this.b, s, e)}' is not a number`)
        : undefined);
  }

  extra(line: number, lineStart: number, s: number, e: number, want: number): void {
    this.problems.add('extra', 'edge-shape', 'warning', 'adjacency',
      (cnt, p) => `${plural(cnt, 'entry line')} ${cnt === 1 ? 'has' : 'have'} more than ${want} fields ` +
        `(first at line ${p?.line}); the extra fields are ignored`,
      this.problems.wants('extra') ? this.loc(line, lineStart, s, e, `extra '${tokenText(this.b, s, e)}'`) : undefined);
  }

  skewDiagonal(line: number, lineStart: number, s: number): void {
    const e = trimEnd(this.b, s, lineEndFrom(this.b, s, this.b.length));
    this.problems.add('skewdiag', 'skew-symmetric-diagonal', 'warning', 'adjacency',
      (cnt, p) => `the banner says skew-symmetric, so the diagonal must be zero, but ` +
        `${plural(cnt, 'non-zero diagonal entry', 'non-zero diagonal entries')} ${cnt === 1 ? 'is' : 'are'} stored ` +
        `(first at line ${p?.line}: ${p?.detail}). ${cnt === 1 ? 'It is' : 'They are'} kept as stored, as SciPy's ` +
        `mmread does (as edges they are self-loops); if the matrix is not skew-symmetric, fix the banner`,
      this.problems.wants('skewdiag') ? this.loc(line, lineStart, s, e, `'${tokenText(this.b, s, e)}'`) : undefined);
  }

  upper(line: number, lineStart: number, s: number, skew: boolean): void {
    const e = trimEnd(this.b, s, lineEndFrom(this.b, s, this.b.length));
    this.problems.add('upper', 'edge-shape', 'warning', 'adjacency',
      (cnt, p) => `a ${skew ? 'skew-symmetric' : 'symmetric'} file stores the lower triangle only, but ` +
        `${plural(cnt, 'entry', 'entries')} ${cnt === 1 ? 'lies' : 'lie'} above the diagonal (first at line ` +
        `${p?.line}); ${cnt === 1 ? 'it is' : 'they are'} mirrored like the others, which may double an edge`,
      this.problems.wants('upper') ? this.loc(line, lineStart, s, e, 'entry above the diagonal') : undefined);
  }
}

// ---------------------------------------------------------------------------------------------
// locating entries

/** Entry index → the stored line (coordinate: the whole `i j value` text) or value (array). */
class MtxLocator implements TextLocator {
  constructor(
    private readonly b: Uint8Array,
    private readonly lines: ByteLines,
    private readonly offsets: Uint32Array,
    private readonly wholeLine: boolean,
  ) {}

  /** The whole buffer under the file's text and the entries' offsets. */
  kept(): { holder: object; bytes: number } {
    return { holder: this.b.buffer, bytes: this.b.buffer.byteLength + this.offsets.byteLength };
  }

  locate(flatIndex: number): TextSpan | undefined {
    if (!Number.isInteger(flatIndex) || flatIndex < 0 || flatIndex >= this.offsets.length) return undefined;
    const b = this.b;
    const s = this.offsets[flatIndex]!;
    let e = s;
    if (this.wholeLine) e = trimEnd(b, s, lineEndFrom(b, s, b.length));
    else while (e < b.length && b[e] !== SPACE && b[e] !== TAB && b[e] !== CR && b[e] !== LF) e++;
    return this.lines.span(s, e);
  }
}

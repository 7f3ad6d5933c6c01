/**
 * Edge-list text reader (.txt .edges .el .csv .tsv, each optionally .gz): one edge per line,
 * `source target [weight [feature …]]`.
 *
 * One pass over the bytes with hand-written integer parsing into growable typed arrays; no
 * per-line strings or objects. The layout (delimiter, header, column count) is sniffed from the
 * first data lines. Every value stays locatable: every 64th edge keeps the byte offset of its
 * line and left-out data lines are remembered, so a locator walks to an edge's line from the mark
 * before it and re-splits that one line when asked for a field's line/column.
 *
 * Problems (values, not exceptions):
 * - a source/target that is not a plain int32 integer (`1.5`, `1e3`, `abc`, `3000000000`) →
 *   `non-integer-index` (error); that line's edge is left out.
 * - a data line with fewer than 2 fields → `edge-shape` (error); nothing is kept from it.
 * - a weight/feature field that is not a number → `edge-shape` (error) naming the column. The
 *   edge itself is kept (its ids are fine) with NaN in that slot, so edge counts match the file;
 *   reporting it here gives the exact token, where a later non-finite check could only say "NaN".
 *   An empty field (what pandas writes for NaN) is read as NaN without a problem.
 * - a line with a different number of fields than the others → `edge-shape` (warning); missing
 *   weight/feature slots are NaN, extra fields are ignored.
 * - a line with far more fields than the others (wideLimit) → `edge-shape` (error), left out; it
 *   is not split beyond that, so one enormous line costs a scan for its end and no memory.
 *
 * A text file is taken for an edge list only when more than half of its first data lines start
 * with two integer ids; otherwise the reader throws NotEdgeListError (an UnreadableError whose
 * message says the rule and the counts), unless the caller says the file is an edge list (a
 * manifest names it).
 * Negative ids are valid integers here; range checks belong to the checks layer.
 */
import {
  UnreadableError,
  type DenseTensor,
  type ProblemLocation,
  type ReadLimits,
  type ReadResult,
  type TextLocator,
  type TextSpan,
} from './types';
import { COMMA, CR, HASH, LF, PERCENT, PIPE, QUOTE, SEMICOLON, SPACE, TAB } from './text/bytes';
import { assertText, BinaryDataError, bomLength, decodeWide, onlyCrLineEnds, textBytes, wideEncoding } from './text/encoding';
import { ByteLines, countLF, lineEndFrom, utf16Length } from './text/line-index';
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

export type Delimiter = 'whitespace' | 'tab' | ',' | ';' | '|';

/**
 * Thrown for text whose first data lines are mostly not `id id …` lines (a README, a package list,
 * a table of metrics). Callers that walk folders skip such files; `reason` says why.
 */
export class NotEdgeListError extends UnreadableError {
  constructor(readonly reason: string) {
    super(`not an edge list: ${reason}`, 0);
  }
}

/** Whether the file's name says it is an edge list (`.el`, `.edges`, also gzipped), not just text (`.txt`, `.csv`, `.tsv`). */
export function namedAsEdgeList(fileName: string): boolean {
  const name = fileName.toLowerCase().replace(/\.gz$/, '');
  return name.endsWith('.el') || name.endsWith('.edges');
}

/**
 * The text checks (assertText) for a file that may be an edge list: binary data under a plain text
 * name (`.txt`, `.csv`, `.tsv`) is some other program's file, not a broken graph, so it is
 * NotEdgeListError (skipped by folder checks, explained when named); under `.el`/`.edges`, or named
 * by a manifest, it stays unreadable.
 */
export function assertEdgeListText(b: Uint8Array, fileName: string, asEdgeList = false): void {
  edgeListText(() => assertText(b), fileName, asEdgeList);
}

function edgeListText<T>(read: () => T, fileName: string, asEdgeList: boolean): T {
  try {
    return read();
  } catch (e) {
    if (!(e instanceof BinaryDataError) || asEdgeList || namedAsEdgeList(fileName)) throw e;
    throw new NotEdgeListError(`it holds binary data, not text (${e.message}); only .el and .edges files are taken for edge lists whatever they hold`);
  }
}

export interface EdgeListOptions {
  /** Read the file as an edge list whatever its lines look like (a manifest names it as one). */
  asEdgeList?: boolean;
}

export interface EdgeListReadResult extends ReadResult {
  /** How fields were separated. */
  delimiter: Delimiter;
  /**
   * Column names, from a header row or from a commented header line right above the data
   * (`numpy.savetxt(..., header=...)` writes `# a,b,c`). Absent when the file names no columns.
   */
  columns?: string[];
  /** Set when the lines do not look like an edge list and it was read as one because asked to. */
  notEdgeList?: string;
}

/** Number of data lines the layout (and whether the text is an edge list at all) is sniffed from. */
export const SNIFF_LINES = 20;
/** Fields split per sampled line; a line with more is far wider than any edge list row. */
const SNIFF_MAX_FIELDS = 1 << 16;
/** Bytes of a sampled line in which delimiters are counted. */
const SNIFF_LINE_BYTES = 1 << 20;

/**
 * Fields beyond which a line is not an edge at all but lines run together (or a matrix saved as
 * text): it is reported and left out without being split further.
 */
export function wideLimit(fieldCount: number): number {
  return Math.max(4 * fieldCount, fieldCount + 62);
}
const DELIMS: ReadonlyArray<[number, Delimiter]> = [
  [TAB, 'tab'],
  [COMMA, ','],
  [SEMICOLON, ';'],
  [PIPE, '|'],
];

interface Layout {
  /** Offset where sniffing stopped. */
  scanned: number;
  delim: number;
  delimiter: Delimiter;
  /** Expected fields per line (≥ 2). */
  fieldCount: number;
  /** Offset of the header row's first byte, or -1. */
  headerAt: number;
  columns: string[] | undefined;
  /** The third field is a Python dict (`networkx.write_edgelist(data=True)`); weight comes from its 'weight' key. */
  dict: boolean;
  /** Every sampled line ends with the delimiter: the empty last field is not a column. */
  trailingEmpty: boolean;
  /** Average bytes per sampled data line, to pre-size the arrays. */
  bytesPerLine: number;
  /** Data lines sampled (header row not counted). */
  dataLines: number;
  /** Why the sampled lines are not an edge list (the rule and the counts), or undefined. */
  notEdgeList: string | undefined;
}

/**
 * Bytes that arrive while the reader works: `bytes` has its final length, but only a prefix is
 * filled so far (the node layer reads the file on another thread). Not for compressed files.
 */
export interface ArrivingBytes {
  /** Blocks until more than `have` bytes from offset 0 are filled (or all are); returns how many are. */
  waitBeyond(have: number): number;
}

/** Bytes of UTF-16/32 text decoded to tell an edge list in the wrong encoding from other text. */
const WIDE_SNIFF_BYTES = 64 * 1024;

/** Bytes a streamed reader waits for before sniffing the layout (the first lines). */
const SNIFF_PREFIX = 4 * 1024 * 1024;

export function readEdgeList(
  bytes: Uint8Array, fileName: string, limits: ReadLimits, arriving?: ArrivingBytes, options: EdgeListOptions = {},
): EdgeListReadResult {
  const asEdgeList = options.asEdgeList === true;
  let avail = bytes.length;
  if (arriving) {
    if (fileName.toLowerCase().endsWith('.gz')) throw new Error('a compressed file cannot be read while it arrives');
    avail = 0;
    while (avail < Math.min(bytes.length, SNIFF_PREFIX)) avail = arriving.waitBeyond(avail);
  }
  // UTF-16/32 text is refused either way: skipped as other text when its lines are not an edge
  // list, else refused with the way to convert it (textBytes).
  if (!options.asEdgeList && !fileName.toLowerCase().endsWith('.gz')) {
    const head = bytes.subarray(0, Math.min(avail, WIDE_SNIFF_BYTES));
    if (wideEncoding(head)) {
      const reason = notEdgeListReason(head, head.length === bytes.length);
      if (reason !== undefined) throw new NotEdgeListError(reason);
    }
  }
  let b: Uint8Array;
  if (arriving && !onlyCrLineEnds(bytes.subarray(0, avail))) {
    edgeListText(() => textBytes(bytes.subarray(0, avail), fileName, limits), fileName, asEdgeList); // the text checks, on the first bytes
    b = bytes;
  } else {
    // Whole (bare-CR text is read from a converted copy, so it waits for every byte first).
    while (arriving && avail < bytes.length) avail = arriving.waitBeyond(avail);
    b = edgeListText(() => textBytes(bytes, fileName, limits), fileName, asEdgeList);
    avail = b.length;
  }
  const n = b.length;
  const first = bomLength(b);
  let layout = sniffLayout(b.subarray(0, avail), first);
  if (layout.scanned >= avail && avail < n) {
    // The first lines run past the prefix (long comments or lines): sniff on the whole file.
    while (avail < n) avail = arriving!.waitBeyond(avail);
    layout = sniffLayout(b, first);
  }
  if (layout.notEdgeList && !options.asEdgeList) throw new NotEdgeListError(layout.notEdgeList);
  if (layout.dataLines === 0 && !options.asEdgeList && !emptyEdgeListLikely(fileName, layout)) {
    throw new NotEdgeListError(`it has no data lines${layout.headerAt >= 0 ? ', only one line of words' : ''} (the rule: a file ` +
      'without data lines is an empty edge list only when named .el or .edges, or when a comma, tab, semicolon or | separates ' +
      'its header). If it is an edge list, name it in hopscope.json to have it read as one.');
  }
  const C = layout.fieldCount;
  const nw = C > 2 ? 1 : 0;
  const na = C > 3 ? C - 3 : 0;
  const delim = layout.delim;
  const headerAt = layout.headerAt;
  const dict = layout.dict;
  const trailingEmpty = layout.trailingEmpty;
  const report = new Reporter(b, layout);

  let cap = Math.min(Math.ceil((n / layout.bytesPerLine) * 1.05) + 16, 1 << 28);
  // Sources and targets share one buffer, [sources | targets], so that edge_index [2, E] is a
  // copyWithin away at the end instead of a fresh 8·E-byte copy.
  let ids = allocInt32(2 * cap);
  // Line offsets are kept sparsely: the first byte of every MARK_EVERY-th edge's line, and the
  // data lines that were left out (rare); a locator walks the lines in between when asked.
  let marks = allocUint32((cap >>> MARK_SHIFT) + 1);
  let dropped = allocUint32(0);
  let drops = 0;
  let w = allocFloat64(nw ? cap : 0);
  // Feature rows have their own capacity: a complete line spends at least 2·C-1 bytes.
  let attrRows = na ? Math.min(cap, Math.floor(n / (2 * C - 1)) + 1) : 0;
  let attr = allocFloat64(attrRows * na);
  let E = 0;
  // Ids beyond int32 (a sparse numbering: user or product numbers) are rare: kept aside as
  // (2·edge + side, value) and merged into a Float64Array edge_index at the end.
  let bigAt = allocInt32(0);
  let bigVal = allocFloat64(0);
  let bigs = 0;

  const sp = new FieldSplitter(delim);
  // A networkx dict needs only its start (field 3); other lines are not split past the wide limit.
  const wide = wideLimit(C);
  sp.maxFields = dict ? 3 : wide;
  // Lines that start at or before the last LF are scanned without bounds checks: every scan
  // stops at that line's LF at the latest. The fast path takes plain `int<sep>int[<sep>num…]`
  // lines with exactly the expected fields; anything else goes through the general path.
  let lastLF = avail - 1;
  while (lastLF >= first && b[lastLF] !== LF) lastLF--;
  const fastOk = !dict;

  // Two plain non-negative columns (the most common file): whole runs of such lines go through
  // a small function that V8 optimises on its own (about 1.4x the general loop's speed).
  const pairsOnly = fastOk && C === 2;

  let pos = first;
  let line = 0;
  while (pos < n) {
    while (pos > lastLF && avail < n) {
      // Wait for the rest of this line (and whatever else has arrived).
      const had = avail;
      avail = arriving!.waitBeyond(avail);
      for (let k = avail - 1; k >= had; k--) if (b[k] === LF) { lastLF = k; break; }
    }
    if (pairsOnly && pos <= lastLF && E < cap) {
      const before = E;
      E = plainPairs(b, pos, lastLF, delim, headerAt, ids, cap, marks, E);
      line += E - before;
      pos = pairsPos;
      if (pos >= n) break;
    }
    line++;
    const lineStart = pos;
    let i = pos;
    let c = 0;
    if (pos <= lastLF) {
      c = b[i]!;
      while (c === SPACE || c === TAB || c === CR) c = b[++i]!;
      if (c === LF) {
        pos = i + 1;
        continue;
      }
    } else {
      i = skipBlanks(b, pos, n);
      if (i >= n) break;
      c = b[i]!;
    }
    if (c === HASH || c === PERCENT || i === headerAt) {
      pos = lineEndFrom(b, i, n) + 1;
      continue;
    }

    // Room for one more edge (both paths below write slot E).
    if (E === cap) {
      ids = growIds(ids, cap);
      cap = ids.length >>> 1;
      marks = growUint32(marks, (cap >>> MARK_SHIFT) + 1);
      if (nw) w = growFloat64(w, cap);
    }
    if (E === attrRows && na) {
      // Complete lines spend at least two bytes per feature value, so E·(C-3) stays below the
      // file size; beyond that most lines lack the columns the first ones have.
      if (E * na > n + 16 * na) {
        throw new UnreadableError(
          `the first lines have ${C} columns, but most lines are much shorter: too many missing values to store`,
        );
      }
      attrRows = Math.min(cap, Math.ceil(attrRows * 1.5) + 16);
      attr = growFloat64(attr, attrRows * na);
    }

    if (fastOk && pos <= lastLF) {
      fast: {
        let j = i;
        let neg = c === 45;
        if (neg) c = b[++j]!;
        let d = c - 48;
        if (d < 0 || d > 9) break fast;
        let ds = j;
        let u = 0;
        do {
          u = u * 10 + d;
          c = b[++j]!;
          d = c - 48;
        } while (d >= 0 && d <= 9);
        if (j - ds > 10 || u > INT32_MAX + (neg ? 1 : 0)) break fast;
        if (neg) u = -u;
        if (delim === 0) {
          if (c !== SPACE && c !== TAB) break fast;
          do c = b[++j]!; while (c === SPACE || c === TAB);
        } else {
          while (c === SPACE) c = b[++j]!;
          if (c !== delim) break fast;
          c = b[++j]!;
          while (c === SPACE) c = b[++j]!;
        }
        neg = c === 45;
        if (neg) c = b[++j]!;
        d = c - 48;
        if (d < 0 || d > 9) break fast;
        ds = j;
        let v = 0;
        do {
          v = v * 10 + d;
          c = b[++j]!;
          d = c - 48;
        } while (d >= 0 && d <= 9);
        if (j - ds > 10 || v > INT32_MAX + (neg ? 1 : 0)) break fast;
        if (neg) v = -v;
        // Weight and feature columns: plain numbers only (anything else takes the general path,
        // which reports it). Slots of edge E may be written before the line is known to be
        // plain: the general path then rewrites them.
        for (let k = 2; k < C; k++) {
          if (delim === 0) {
            if (c !== SPACE && c !== TAB) break fast;
            do c = b[++j]!; while (c === SPACE || c === TAB);
          } else {
            while (c === SPACE) c = b[++j]!;
            if (c !== delim) break fast;
            c = b[++j]!;
            while (c === SPACE) c = b[++j]!;
          }
          const s = j;
          while (c !== delim && c !== SPACE && c !== TAB && c !== CR && c !== LF) c = b[++j]!;
          if (j === s) break fast;
          const x = parseDecimalBytes(b, s, j);
          if (!numberState.ok) break fast;
          if (k === 2) w[E] = x;
          else attr[E * na + k - 3] = x;
        }
        while (c === SPACE || c === TAB || c === CR) c = b[++j]!;
        if (c !== LF) break fast;
        ids[E] = u;
        ids[cap + E] = v;
        if ((E & MARK_MASK) === 0) marks[E >>> MARK_SHIFT] = i;
        E++;
        pos = j + 1;
        continue;
      }
    }

    // General path: split the line into fields.
    sp.split(b, i, n);
    pos = sp.next;
    const f = sp.count;
    const st = sp.starts;
    const en = sp.ends;
    if (f < 2 || (sp.cut && !dict)) {
      if (f < 2) report.short(line, lineStart, i, sp.lineEnd);
      else report.wide(line, lineStart, i, en[f - 1]!, wide);
      if (drops === dropped.length) dropped = growUint32(dropped, drops + 1);
      dropped[drops++] = i;
      continue;
    }
    let u = parseIntBytes(b, st[0]!, en[0]!);
    let v = parseIntBytes(b, st[1]!, en[1]!);
    if (u !== u || v !== v) {
      // Whole numbers written as floats (`1.0`, `1e0`, numpy.savetxt's default
      // `0.000000000000000000e+00`) or beyond int32 are ids too; anything else is left out.
      const x = u !== u ? wholeId(b, st[0]!, en[0]!) : u;
      const y = v !== v ? wholeId(b, st[1]!, en[1]!) : v;
      if (x !== x || y !== y) {
        const k = x !== x ? 0 : 1;
        report.nonInteger(line, lineStart, k, st[k]!, en[k]!);
        if (drops === dropped.length) dropped = growUint32(dropped, drops + 1);
        dropped[drops++] = i;
        continue;
      }
      for (let k = 0; k < 2; k++) {
        if ((k === 0 ? u : v) === (k === 0 ? u : v)) continue; // a plain int32
        if (floatSpelling(b, st[k]!, en[k]!)) report.floatId(line, lineStart, k, st[k]!, en[k]!);
        const z = k === 0 ? x : y;
        if (z > INT32_MAX || z < -INT32_MAX - 1) {
          if (bigs === bigAt.length) { bigAt = growInt32(bigAt, bigs + 1); bigVal = growFloat64(bigVal, bigs + 1); }
          bigAt[bigs] = 2 * E + k;
          bigVal[bigs++] = z;
        }
      }
      u = x > INT32_MAX || x < -INT32_MAX - 1 ? 0 : x;
      v = y > INT32_MAX || y < -INT32_MAX - 1 ? 0 : y;
    }
    ids[E] = u;
    ids[cap + E] = v;
    if ((E & MARK_MASK) === 0) marks[E >>> MARK_SHIFT] = i;
    if (nw) {
      if (dict) {
        w[E] = f > 2 ? dictWeight(b, st[2]!, sp.lineEnd, report, line, lineStart) : NaN;
      } else {
        for (let k = 2; k < C; k++) {
          let x = NaN;
          if (k < f) {
            const s = st[k]!;
            const e = en[k]!;
            if (e > s) {
              x = parseDecimalBytes(b, s, e);
              if (!numberState.ok) report.notNumber(line, lineStart, k, s, e);
            }
          }
          if (k === 2) w[E] = x;
          else attr[E * na + k - 3] = x;
        }
      }
    }
    if (f !== C && !dict && !(trailingEmpty && f === C + 1 && st[C] === en[C])) {
      report.fieldCount(line, lineStart, i, sp.lineEnd, f);
    }
    E++;
  }

  const text = new EdgeText(b, first, delim, dict, headerAt, E, fit(marks, (E + MARK_MASK) >>> MARK_SHIFT), fit(dropped, drops));
  if (E < cap) ids.copyWithin(E, cap, cap + E);
  let edgeIndex: Int32Array | Float64Array = fit(ids, 2 * E);
  if (bigs > 0) {
    // int64 ids that do not all fit in int32: a Float64Array (exact up to 2^53), as every reader gives.
    const wide = allocFloat64(2 * E);
    wide.set(edgeIndex);
    for (let j = 0; j < bigs; j++) {
      const at = bigAt[j]!;
      wide[(at & 1) * E + (at >>> 1)] = bigVal[j]!;
    }
    edgeIndex = wide;
  }
  const tensors: DenseTensor[] = [
    {
      kind: 'dense', name: 'edge_index', dtype: 'int64', shape: [2, E], data: edgeIndex,
      locator: new EdgeLocator(text, 0, E, 0), declaredRole: 'edge-index',
    },
  ];
  if (nw) {
    tensors.push({
      kind: 'dense', name: 'edge_weight', dtype: 'float64', shape: [E], data: fit(w, E),
      locator: new EdgeLocator(text, 1, E, 1), declaredRole: 'edge-weight',
    });
  }
  if (na) {
    tensors.push({
      kind: 'dense', name: 'edge_attr', dtype: 'float64', shape: [E, na], data: fit(attr, E * na),
      locator: new EdgeLocator(text, 2, E, na), declaredRole: 'edge-features',
    });
  }
  const result: EdgeListReadResult = {
    format: 'edgelist', tensors, problems: report.problems.problems(), delimiter: layout.delimiter,
  };
  if (layout.columns) result.columns = layout.columns;
  if (layout.notEdgeList) result.notEdgeList = layout.notEdgeList;
  return result;
}

/** Every 2^MARK_SHIFT-th edge keeps the offset of its line (see EdgeText.edgeStart). */
const MARK_SHIFT = 6;
const MARK_MASK = (1 << MARK_SHIFT) - 1;

/** Where `plainPairs` stopped: the start of the first line it did not take. */
let pairsPos = 0;

/**
 * Reads consecutive lines of the form `u<sep>v` (non-negative ids of at most 9 digits, optional
 * trailing blanks/CR) from `pos`, which must start a line at or before `lastLF`, into slot E
 * onwards; stops at the first other line (left to the general loop), at `lastLF`, or when `cap`
 * slots are full. Returns the new edge count; `pairsPos` is where it stopped.
 */
function plainPairs(b: Uint8Array, pos: number, lastLF: number, delim: number, headerAt: number,
  ids: Int32Array, cap: number, marks: Uint32Array, E: number): number {
  while (pos <= lastLF && E < cap && pos !== headerAt) {
    let j = pos;
    let c = b[j]!;
    let d = c - 48;
    if (d < 0 || d > 9) break;
    let u = 0;
    const s0 = j;
    do { u = u * 10 + d; c = b[++j]!; d = c - 48; } while (d >= 0 && d <= 9);
    if (j - s0 > 9) break;
    if (delim === 0) {
      if (c !== SPACE && c !== TAB) break;
      do c = b[++j]!; while (c === SPACE || c === TAB);
    } else {
      while (c === SPACE) c = b[++j]!;
      if (c !== delim) break;
      c = b[++j]!;
      while (c === SPACE) c = b[++j]!;
    }
    d = c - 48;
    if (d < 0 || d > 9) break;
    let v = 0;
    const s1 = j;
    do { v = v * 10 + d; c = b[++j]!; d = c - 48; } while (d >= 0 && d <= 9);
    if (j - s1 > 9) break;
    while (c === SPACE || c === TAB || c === CR) c = b[++j]!;
    if (c !== LF) break;
    ids[E] = u;
    ids[cap + E] = v;
    if ((E & MARK_MASK) === 0) marks[E >>> MARK_SHIFT] = pos;
    E++;
    pos = j + 1;
  }
  pairsPos = pos;
  return E;
}

/** Turns parse failures into problems; builds locations only while they are still kept. */
class Reporter {
  readonly problems = new ProblemCollector();
  private readonly expected: number;
  private readonly columns: string[] | undefined;

  constructor(private readonly b: Uint8Array, layout: Layout) {
    this.expected = layout.fieldCount;
    this.columns = layout.columns;
  }

  private loc(line: number, lineStart: number, s: number, e: number, detail: string): ProblemLocation {
    const b = this.b;
    return { line, column: utf16Length(b, lineStart, s) + 1, length: utf16Length(b, s, e), detail };
  }

  private colName(k: number): string {
    const name = this.columns?.[k];
    return name !== undefined ? `column ${k + 1} ('${name}')` : `column ${k + 1}`;
  }

  short(line: number, lineStart: number, s: number, lineEnd: number): void {
    const e = trimEnd(this.b, s, lineEnd);
    this.problems.add('short', 'edge-shape', 'error', 'edge_index', shortSummary,
      this.problems.wants('short')
        ? this.loc(line, lineStart, s, e, `'${tokenText(this.b, s, e)}' has fewer than 2 fields`)
        : undefined);
  }

  floatId(line: number, lineStart: number, k: number, s: number, e: number): void {
    this.problems.add('floatid', 'non-integer-index', 'info', 'edge_index', floatIdSummary,
      this.problems.wants('floatid')
        ? this.loc(line, lineStart, s, e, `${k === 0 ? 'source' : 'target'} '${tokenText(this.b, s, e)}' is read as id ${wholeId(this.b, s, e)}`)
        : undefined);
  }

  nonInteger(line: number, lineStart: number, k: number, s: number, e: number): void {
    this.problems.add('id', 'non-integer-index', 'error', 'edge_index', nonIntegerSummary,
      this.problems.wants('id')
        ? this.loc(line, lineStart, s, e,
          `${k === 0 ? 'source' : 'target'} '${tokenText(this.b, s, e)}' ${intRefusal(this.b, s, e)}`)
        : undefined);
  }

  notNumber(line: number, lineStart: number, k: number, s: number, e: number): void {
    const key = `num${k}`;
    const name = this.colName(k);
    this.problems.add(key, 'edge-shape', 'error', k === 2 ? 'edge_weight' : 'edge_attr',
      (cnt, p) => `${plural(cnt, 'value')} in ${name} ${cnt === 1 ? 'is' : 'are'} not a number ` +
        `(first at line ${p?.line}: ${p?.detail}); read as NaN`,
      this.problems.wants(key)
        ? this.loc(line, lineStart, s, e, `'${tokenText(this.b, s, e)}' is not a number`)
        : undefined);
  }

  fieldCount(line: number, lineStart: number, s: number, lineEnd: number, f: number): void {
    const expected = this.expected;
    this.problems.add('fields', 'edge-shape', 'warning', 'edge_index',
      (cnt, p) => `${plural(cnt, 'line')} ${cnt === 1 ? 'has' : 'have'} a different number of fields than ` +
        `the ${expected} expected (first at line ${p?.line}: ${p?.detail}); missing values are read as NaN, ` +
        `extra ones are ignored`,
      this.problems.wants('fields')
        ? this.loc(line, lineStart, s, trimEnd(this.b, s, lineEnd), `${f} fields`)
        : undefined);
  }

  /** [s, e) spans the fields that were split (not the whole line, which may be enormous). */
  wide(line: number, lineStart: number, s: number, e: number, limit: number): void {
    const expected = this.expected;
    this.problems.add('wide', 'edge-shape', 'error', 'edge_index',
      (cnt, p) => `${plural(cnt, 'line')} ${cnt === 1 ? 'has' : 'have'} far more fields than the ${expected} of ` +
        `the other lines (first at line ${p?.line}: ${p?.detail}); ${cnt === 1 ? 'it is' : 'they are'} left out. ` +
        'Such a line is usually many lines run together (lost line breaks) or a matrix saved as text.',
      this.problems.wants('wide') ? this.loc(line, lineStart, s, e, `more than ${limit} fields`) : undefined);
  }

  dictWeight(line: number, lineStart: number, s: number, e: number): void {
    this.problems.add('dictw', 'edge-shape', 'error', 'edge_weight',
      (cnt, p) => `${plural(cnt, 'weight')} ${cnt === 1 ? 'is' : 'are'} not a number (first at line ` +
        `${p?.line}: ${p?.detail}); read as NaN`,
      this.problems.wants('dictw')
        ? this.loc(line, lineStart, s, e, `'${tokenText(this.b, s, e)}' is not a number`)
        : undefined);
  }
}

const shortSummary = (k: number, p: ProblemLocation | undefined): string =>
  `${plural(k, 'line')} of the edge list ${k === 1 ? 'has' : 'have'} fewer than 2 fields (source and target), ` +
  `first at line ${p?.line}; ${k === 1 ? 'it is' : 'they are'} left out`;

const floatIdSummary = (k: number, p: ProblemLocation | undefined): string =>
  `${plural(k, 'node id')} ${k === 1 ? 'is a whole number' : 'are whole numbers'} written as ${k === 1 ? 'a float' : 'floats'} ` +
  `(first at line ${p?.line}, column ${p?.column}: ${p?.detail}); read as the ids they name. numpy.loadtxt reads ` +
  `such a file as float64, which indexing layers refuse: convert with .astype(np.int64), or write ids with ` +
  `numpy.savetxt(..., fmt='%d').`;

/**
 * A node id written other than as a plain int32 (`1.0`, `1e0`, `3000000000`): its value when it is
 * a whole number that a double holds exactly (|x| < 2^53), else NaN.
 */
function wholeId(b: Uint8Array, s: number, e: number): number {
  const x = parseNumberBytes(b, s, e);
  if (!numberState.ok || !Number.isSafeInteger(x)) return NaN;
  return x === 0 ? 0 : x; // -0 → 0
}

/** Whether a number token has a decimal point or an exponent (`1.0`, `1e0`). */
function floatSpelling(b: Uint8Array, s: number, e: number): boolean {
  for (let i = s; i < e; i++) {
    const c = b[i]!;
    if (c === 46 || c === 101 || c === 69) return true;
  }
  return false;
}

const nonIntegerSummary = (k: number, p: ProblemLocation | undefined): string =>
  `${plural(k, 'edge')} ${k === 1 ? 'has' : 'have'} a source or target that is not an integer node id ` +
  `(first at line ${p?.line}, column ${p?.column}: ${p?.detail}); ${k === 1 ? 'it is' : 'they are'} left out. ` +
  `Ids must be written as integers (with numpy.savetxt use fmt='%d').`;

/** Grows the [sources | targets] buffer of capacity `cap` by half, keeping both halves. */
function growIds(ids: Int32Array, cap: number): Int32Array<ArrayBuffer> {
  const next = Math.ceil(cap * 1.5) + 16;
  const out = allocInt32(2 * next);
  out.set(ids.subarray(0, cap));
  out.set(ids.subarray(cap, 2 * cap), next);
  return out;
}

function trimEnd(b: Uint8Array, s: number, e: number): number {
  while (e > s && (b[e - 1] === 32 || b[e - 1] === 9 || b[e - 1] === 13)) e--;
  return e;
}

// ---------------------------------------------------------------------------------------------
// layout sniffing

function sniffLayout(b: Uint8Array, first: number): Layout {
  const n = b.length;
  const lineStarts: number[] = [];
  const lineEnds: number[] = [];
  let commentBefore = -1;
  let pos = first;
  while (pos < n && lineStarts.length < SNIFF_LINES) {
    const i = skipBlanks(b, pos, n);
    const end = lineEndFrom(b, i, n);
    if (i < end) {
      const c = b[i]!;
      if (c === HASH || c === PERCENT) {
        if (lineStarts.length === 0) commentBefore = i;
      } else {
        lineStarts.push(i);
        lineEnds.push(trimEnd(b, i, end));
      }
    }
    pos = end + 1;
  }
  const sampled = lineStarts.length;
  let bytesPerLine = 16;
  if (sampled > 0) bytesPerLine = Math.max(4, (pos - first) / sampled);

  // Delimiter: the one whose count per line the most sampled lines agree on (at least one
  // occurrence, on more than half of the lines), so that one short or odd line does not decide;
  // ties go to more occurrences per line, then to tab, comma, semicolon, pipe. Else runs of
  // whitespace.
  let chosen: [number, Delimiter] | undefined;
  let chosenAgree = 0;
  let chosenCount = 0;
  const perLine = new Map<number, number>();
  for (const cand of DELIMS) {
    perLine.clear();
    for (let k = 0; k < sampled; k++) {
      let cnt = 0;
      // Counting stops at a '{': networkx dict data (`{'weight': 4, 'c': 1}`) has its own commas.
      const end = Math.min(lineEnds[k]!, lineStarts[k]! + SNIFF_LINE_BYTES);
      for (let p = lineStarts[k]!; p < end && b[p] !== 0x7b; p++) if (b[p] === cand[0]) cnt++;
      if (cnt > 0) perLine.set(cnt, (perLine.get(cnt) ?? 0) + 1);
    }
    for (const [cnt, agree] of perLine) {
      if (2 * agree <= sampled) continue;
      if (agree > chosenAgree || (agree === chosenAgree && cnt > chosenCount)) {
        chosen = cand;
        chosenAgree = agree;
        chosenCount = cnt;
      }
    }
  }
  const delim = chosen ? chosen[0] : 0;
  const delimiter: Delimiter = chosen ? chosen[1] : 'whitespace';

  const sp = new FieldSplitter(delim);
  sp.maxFields = SNIFF_MAX_FIELDS;
  // Data lines that start with two integer ids: what makes the text an edge list.
  let idLines = 0;
  let firstOther = -1;
  const counts: number[] = [];
  let headerAt = -1;
  let columns: string[] | undefined;
  let dict = false;
  let dictWeightSeen = false;
  let trailingEmpty = sampled > 0 && delim !== 0;
  for (let k = 0; k < sampled; k++) {
    sp.split(b, lineStarts[k]!, n);
    const f = sp.count;
    if (k === 0 && f >= 2 && !isNumeric(b, sp.starts[0]!, sp.ends[0]!) && !isNumeric(b, sp.starts[1]!, sp.ends[1]!)) {
      headerAt = lineStarts[0]!;
      columns = fieldTexts(b, sp);
      continue;
    }
    if (f >= 2 && isId(b, sp.starts[0]!, sp.ends[0]!) && isId(b, sp.starts[1]!, sp.ends[1]!)) idLines++;
    else if (firstOther < 0) firstOther = lineStarts[k]!;
    if (f > 2 && b[sp.starts[2]!] === 0x7b /* { */) {
      dict = true;
      if (dictWeightBounds(b, sp.starts[2]!, sp.lineEnd) >= 0) dictWeightSeen = true;
    }
    // A line too wide to split is reported by the reader; it does not set the layout.
    if (sp.cut) continue;
    if (!(f >= 2 && sp.starts[f - 1] === sp.ends[f - 1])) trailingEmpty = false;
    counts.push(f);
  }
  if (counts.length === 0) trailingEmpty = false;
  const dataLines = sampled - (headerAt >= 0 ? 1 : 0);
  let notEdgeList: string | undefined;
  // No data lines at all (only comments, or a header row): an empty edge list.
  if (dataLines > 0 && 2 * idLines <= dataLines) {
    const at = firstOther;
    const lineNo = countLF(b, first, at) + 1;
    const excerpt = tokenText(b, at, trimEnd(b, at, lineEndFrom(b, at, n)), 30);
    notEdgeList = `${idLines} of its first ${plural(dataLines, 'data line')} ${dataLines === 1 ? 'starts' : 'start'} ` +
      `with two integer node ids (the rule: more than half of the first data lines, up to ${SNIFF_LINES}, must), ` +
      `e.g. line ${lineNo} is '${excerpt}'. If it is an edge list, name it in hopscope.json to have it read as one.`;
  }

  let fieldCount: number;
  if (dict) {
    fieldCount = dictWeightSeen ? 3 : 2;
    trailingEmpty = false;
    if (columns && columns.length > 3) columns = columns.slice(0, 3);
  } else if (columns) {
    if (trailingEmpty && columns[columns.length - 1] === '') columns.pop();
    // The header names the columns; data lines with more fields still count.
    fieldCount = Math.max(columns.length, mode(counts) - (trailingEmpty ? 1 : 0));
  } else {
    fieldCount = mode(counts);
    if (trailingEmpty) fieldCount--;
  }
  if (fieldCount < 2) fieldCount = 2;

  // A commented header right above the data: `# source,target,weight`.
  if (!columns && commentBefore >= 0 && !dict) {
    let s = commentBefore;
    const end = trimEnd(b, s, lineEndFrom(b, s, n));
    while (s < end && (b[s] === HASH || b[s] === PERCENT)) s++;
    s = skipBlanks(b, s, end);
    if (s < end) {
      sp.split(b, s, end);
      const f = sp.count;
      let names = f === fieldCount || (trailingEmpty && f === fieldCount + 1);
      for (let k = 0; names && k < fieldCount; k++) {
        if (sp.starts[k] === sp.ends[k] || isNumeric(b, sp.starts[k]!, sp.ends[k]!)) names = false;
      }
      if (names) columns = fieldTexts(b, sp).slice(0, fieldCount);
    }
  }
  return {
    delim, delimiter, fieldCount, headerAt, columns, dict, trailingEmpty, bytesPerLine, scanned: pos, dataLines,
    notEdgeList,
  };
}

function isNumeric(b: Uint8Array, s: number, e: number): boolean {
  if (s === e) return false;
  parseNumberBytes(b, s, e);
  return numberState.ok;
}

/** A token that can be a node id: a whole number, however it is written (`7`, `-1`, `7.0`, `7e0`). */
function isId(b: Uint8Array, s: number, e: number): boolean {
  if (s === e) return false;
  const v = parseNumberBytes(b, s, e);
  return numberState.ok && Number.isInteger(v);
}

/**
 * For the first bytes of a file: why it is not an edge list, when its first data lines already
 * say so (the same rule readEdgeList applies); undefined when they say it is one, or when the
 * bytes end before SNIFF_LINES data lines and the file goes on (`whole` false).
 */
/**
 * Whether a text file without data lines reads as an empty edge list rather than as other text.
 * An empty or comment-only `.el`/`.edges` file is an edge list with no edges yet (worth the
 * empty-graph warning); so is a delimited header row alone (`source,target`). A `.txt`, `.csv` or
 * `.tsv` that is empty, only comments, or one line of space-separated words (a note, a title) is
 * not taken for a graph: folder checks skip it instead of warning about an empty graph.
 */
function emptyEdgeListLikely(fileName: string, layout: { headerAt: number; delimiter: Delimiter }): boolean {
  return namedAsEdgeList(fileName) || (layout.headerAt >= 0 && layout.delimiter !== 'whitespace');
}

export function notEdgeListReason(prefix: Uint8Array, whole: boolean): string | undefined {
  // UTF-16/32 text is looked at decoded (it is refused either way, but as what depends on this).
  const wide = wideEncoding(prefix);
  let b = wide ? new TextEncoder().encode(decodeWide(prefix, wide.decode)) : prefix;
  if (!whole) {
    let last = b.length - 1;
    while (last >= 0 && b[last] !== LF) last--;
    b = b.subarray(0, last + 1);
  }
  if (onlyCrLineEnds(b)) return undefined; // read from a converted copy; leave it to the reader
  const layout = sniffLayout(b, bomLength(b));
  if (!whole && layout.dataLines + (layout.headerAt >= 0 ? 1 : 0) < SNIFF_LINES) return undefined;
  return wide && layout.notEdgeList !== undefined ? `it is ${wide.name} text, and ${layout.notEdgeList}` : layout.notEdgeList;
}

function fieldTexts(b: Uint8Array, sp: FieldSplitter): string[] {
  const dec = new TextDecoder('utf-8');
  const out: string[] = [];
  for (let k = 0; k < sp.count; k++) {
    let s = sp.starts[k]!;
    let e = sp.ends[k]!;
    if (e - s >= 2 && b[s] === QUOTE && b[e - 1] === QUOTE) {
      s++;
      e--;
    }
    out.push(dec.decode(b.subarray(s, e)));
  }
  return out;
}

function mode(values: number[]): number {
  if (values.length === 0) return 2;
  const tally = new Map<number, number>();
  let best = values[0]!;
  let bestN = 0;
  for (const v of values) {
    const t = (tally.get(v) ?? 0) + 1;
    tally.set(v, t);
    if (t > bestN) {
      best = v;
      bestN = t;
    }
  }
  return best;
}

// ---------------------------------------------------------------------------------------------
// networkx dict data: `0 1 {'weight': 4}`

const WEIGHT = [119, 101, 105, 103, 104, 116]; // "weight"
/** End of the token found by the last dictWeightBounds call. */
let dictTokenEnd = 0;

/** Start offset of the value of the 'weight' key in the dict text [s, e), or -1. */
function dictWeightBounds(b: Uint8Array, s: number, e: number): number {
  for (let p = s; p + 7 < e; p++) {
    if (b[p] !== 39 && b[p] !== QUOTE) continue;
    let k = 0;
    while (k < 6 && b[p + 1 + k] === WEIGHT[k]) k++;
    if (k < 6 || b[p + 7] !== b[p]) continue;
    let i = p + 8;
    while (i < e && (b[i] === 32 || b[i] === 9)) i++;
    if (i >= e || b[i] !== 58 /* : */) continue;
    i++;
    while (i < e && (b[i] === 32 || b[i] === 9)) i++;
    let j = i;
    while (j < e && b[j] !== 44 && b[j] !== 125 && b[j] !== 32 && b[j] !== 9 && b[j] !== 13) j++;
    dictTokenEnd = j;
    return i;
  }
  return -1;
}

function dictWeight(
  b: Uint8Array, s: number, e: number, report: Reporter, line: number, lineStart: number,
): number {
  const at = dictWeightBounds(b, s, e);
  if (at < 0) return NaN;
  const end = dictTokenEnd;
  const x = parseNumberBytes(b, at, end);
  if (!numberState.ok) {
    report.dictWeight(line, lineStart, at, end);
    return NaN;
  }
  return x;
}

// ---------------------------------------------------------------------------------------------
// locating values

/**
 * What the locators of one file share: the bytes, the line offset of every 2^MARK_SHIFT-th edge,
 * and the data lines the reader left out. An edge's line is found by walking on from the nearest
 * mark (or from the edge located last, so locating edges in order costs one line each), skipping
 * the lines the reader skipped: blank, comment and header lines and the left-out ones.
 */
class EdgeText {
  private readonly lines: ByteLines;
  private readonly sp: FieldSplitter;
  /** The edge located last and the offset of its first field. */
  private lastEdge = -1;
  private lastStart = 0;

  constructor(
    private readonly b: Uint8Array,
    first: number,
    delim: number,
    private readonly dict: boolean,
    /** Offset of the header row's first byte, or -1. */
    private readonly headerAt: number,
    private readonly edges: number,
    /** Offset of the first field of edge k·2^MARK_SHIFT. */
    private readonly marks: Uint32Array,
    /** Offsets of the first fields of data lines that were left out, ascending. */
    private readonly dropped: Uint32Array,
  ) {
    this.lines = new ByteLines(b, first);
    this.sp = new FieldSplitter(delim);
  }

  /** Bytes kept to answer: the whole buffer under the text, the marks and the left-out lines. */
  keptBytes(): number {
    return this.b.buffer.byteLength + this.marks.byteLength + this.dropped.byteLength;
  }

  /** Offset of the first field of edge `edge` (0 ≤ edge < edges). */
  private edgeStart(edge: number): number {
    let k: number;
    let p: number;
    if (this.lastEdge >= 0 && this.lastEdge <= edge && this.lastEdge >>> MARK_SHIFT === edge >>> MARK_SHIFT) {
      k = this.lastEdge;
      p = this.lastStart;
    } else {
      k = edge & ~MARK_MASK;
      p = this.marks[edge >>> MARK_SHIFT]!;
    }
    const b = this.b;
    const n = b.length;
    while (k < edge) {
      // The next line the reader kept an edge from.
      p = lineEndFrom(b, p, n) + 1;
      const i = skipBlanks(b, p, n);
      if (i >= n) break;
      const c = b[i]!;
      if (c === LF || c === HASH || c === PERCENT || i === this.headerAt || this.wasDropped(i)) continue;
      p = i;
      k++;
    }
    this.lastEdge = edge;
    this.lastStart = p;
    return p;
  }

  private wasDropped(i: number): boolean {
    const d = this.dropped;
    let lo = 0;
    let hi = d.length;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (d[mid]! < i) lo = mid + 1;
      else hi = mid;
    }
    return lo < d.length && d[lo] === i;
  }

  fieldSpan(edge: number, field: number): TextSpan | undefined {
    if (edge < 0 || edge >= this.edges) return undefined;
    const b = this.b;
    const start = this.edgeStart(edge);
    const sp = this.sp;
    sp.split(b, start, b.length);
    if (this.dict && field === 2 && sp.count > 2) {
      const at = dictWeightBounds(b, sp.starts[2]!, sp.lineEnd);
      if (at >= 0) return this.lines.span(at, dictTokenEnd);
    } else if (field < sp.count) {
      return this.lines.span(sp.starts[field]!, sp.ends[field]!);
    }
    // The value is missing on this line: point at the whole line.
    return this.lines.span(start, trimEnd(b, start, sp.lineEnd));
  }
}

/** kind 0: edge_index [2, E]; 1: edge_weight [E]; 2: edge_attr [E, width]. */
class EdgeLocator implements TextLocator {
  constructor(
    private readonly text: EdgeText,
    private readonly kind: 0 | 1 | 2,
    private readonly edges: number,
    private readonly width: number,
  ) {}

  kept(): { holder: object; bytes: number } {
    return { holder: this.text, bytes: this.text.keptBytes() };
  }

  locate(flatIndex: number): TextSpan | undefined {
    if (!Number.isInteger(flatIndex) || flatIndex < 0) return undefined;
    const E = this.edges;
    if (this.kind === 0) {
      if (flatIndex >= 2 * E) return undefined;
      return flatIndex < E ? this.text.fieldSpan(flatIndex, 0) : this.text.fieldSpan(flatIndex - E, 1);
    }
    if (this.kind === 1) return flatIndex < E ? this.text.fieldSpan(flatIndex, 2) : undefined;
    const edge = Math.floor(flatIndex / this.width);
    if (edge >= E) return undefined;
    return this.text.fieldSpan(edge, 3 + (flatIndex % this.width));
  }
}

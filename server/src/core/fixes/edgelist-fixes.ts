/**
 * Quick fixes for text edge lists, as text edits the editor applies (and can undo): add the
 * missing reverse edges, remove self-loop lines, remove repeated lines, shift 1-based ids to
 * 0-based. Pure: text in, edits out. Positions are 0-based lines and UTF-16 columns, as in LSP.
 */
import { readEdgeList } from '../formats/edgelist';
import { DEFAULT_LIMITS, type DenseTensor } from '../formats/types';
import { buildSortedPair } from '../graph/structure/csr';
import { asymmetricExamples, duplicateExamples } from '../graph/structure/figures';
import { compactIds, denseNodeLimit } from '../graph/structure/compact';

export interface Edit {
  startLine: number;
  startCharacter: number;
  endLine: number;
  endCharacter: number;
  newText: string;
}

export type FixKind = 'add-reverse-edges' | 'remove-self-loops' | 'remove-duplicates' | 'to-zero-based';

export interface Fix {
  kind: FixKind;
  title: string;
  /** How many edge entries the fix touches. */
  count: number;
  edits: Edit[];
}

/** Above this many edits a fix is sent as one whole-document replacement. */
const MAX_EDITS = 5000;

interface Parsed {
  lines: string[];
  src: Int32Array;
  dst: Int32Array;
  /** 0-based line of each edge entry, and the spans of its two ids. */
  line: Int32Array;
  srcCol: Int32Array; srcLen: Int32Array;
  dstCol: Int32Array; dstLen: Int32Array;
}

function parse(text: string, fileName: string): Parsed | undefined {
  const bytes = new TextEncoder().encode(text);
  let t: DenseTensor | undefined;
  try {
    const r = readEdgeList(bytes, fileName.replace(/\.gz$/i, ''), DEFAULT_LIMITS);
    t = r.tensors.find((x) => x.name === 'edge_index') as DenseTensor | undefined;
  } catch {
    return undefined;
  }
  if (!t || !(t.data instanceof Int32Array) || !t.locator) return undefined;
  const e = t.shape[1]!;
  const p: Parsed = {
    lines: text.split(/\r?\n/), src: t.data.subarray(0, e), dst: t.data.subarray(e, 2 * e),
    line: new Int32Array(e), srcCol: new Int32Array(e), srcLen: new Int32Array(e), dstCol: new Int32Array(e), dstLen: new Int32Array(e),
  };
  for (let k = 0; k < e; k++) {
    const a = t.locator.locate(k), b = t.locator.locate(e + k);
    if (!a || !b) return undefined;
    p.line[k] = a.line - 1;
    p.srcCol[k] = a.column - 1; p.srcLen[k] = a.length;
    p.dstCol[k] = b.column - 1; p.dstLen[k] = b.length;
  }
  return p;
}

/**
 * Every fix that would change something in this edge list. `nodes`, when known (feature rows,
 * manifest), leaves entries with ids at or above it alone: they are out of range, not one-way.
 */
export function edgeListFixes(text: string, fileName: string, kinds?: FixKind[], nodes?: number): Fix[] {
  const p = parse(text, fileName);
  if (!p) return [];
  const want = (k: FixKind) => !kinds || kinds.includes(k);
  const e = p.src.length;
  // Structure over entries with non-negative ids (negative ids are for the out-of-range check).
  let n = 0;
  const keep: number[] = [];
  for (let k = 0; k < e; k++) {
    const ok = p.src[k]! >= 0 && p.dst[k]! >= 0 && (nodes === undefined || (p.src[k]! < nodes && p.dst[k]! < nodes));
    if (ok) { keep.push(k); n = Math.max(n, p.src[k]! + 1, p.dst[k]! + 1); }
  }
  const ks = Int32Array.from(keep);
  let s: Int32Array = Int32Array.from(keep, (k) => p.src[k]!), d: Int32Array = Int32Array.from(keep, (k) => p.dst[k]!);
  if (n > denseNodeLimit(8 * e)) {
    // Sparse ids (up to 2^31 - 1 in a short file): the fixes only compare ids, so renumbering the
    // touched ids in order changes nothing they find, and per-node memory follows the file.
    const c = compactIds(s, d);
    s = c.src; d = c.dst; n = c.ids.length;
  }
  const { fwd } = buildSortedPair(n, s, d);
  const fixes: Fix[] = [];

  if (want('remove-self-loops')) {
    const lines = new Set<number>();
    for (let j = 0; j < s.length; j++) if (s[j] === d[j]) lines.add(p.line[ks[j]!]!);
    if (lines.size) fixes.push({ kind: 'remove-self-loops', title: `Remove ${lines.size} self-loop line${lines.size === 1 ? '' : 's'}`, count: lines.size, edits: deleteLines(p, lines) });
  }
  if (want('remove-duplicates')) {
    const dups = duplicateExamples(fwd, s, d, Number.MAX_SAFE_INTEGER);
    const lines = new Set(dups.map((j) => p.line[ks[j]!]!));
    if (lines.size) fixes.push({ kind: 'remove-duplicates', title: `Remove ${lines.size} repeated edge line${lines.size === 1 ? '' : 's'}`, count: lines.size, edits: deleteLines(p, lines) });
  }
  if (want('add-reverse-edges')) {
    const missing = asymmetricExamples(fwd, s, d, Number.MAX_SAFE_INTEGER);
    // One new line per distinct missing pair, in file order.
    const seen = new Set<string>();
    const added: string[] = [];
    for (const j of missing) {
      const k = ks[j]!;
      const key = `${p.dst[k]},${p.src[k]}`;
      if (seen.has(key)) continue;
      seen.add(key);
      const L = p.lines[p.line[k]!]!;
      const a0 = p.srcCol[k]!, a1 = a0 + p.srcLen[k]!, b0 = p.dstCol[k]!, b1 = b0 + p.dstLen[k]!;
      added.push(L.slice(0, a0) + L.slice(b0, b1) + L.slice(a1, b0) + L.slice(a0, a1) + L.slice(b1));
    }
    if (added.length) {
      const last = p.lines.length - 1;
      const endsWithNewline = p.lines[last] === '';
      const at = endsWithNewline ? last : last;
      const prefix = endsWithNewline ? '' : '\n';
      fixes.push({
        kind: 'add-reverse-edges',
        title: `Add ${added.length} missing reverse edge${added.length === 1 ? '' : 's'}`,
        count: added.length,
        edits: [{ startLine: at, startCharacter: p.lines[at]!.length, endLine: at, endCharacter: p.lines[at]!.length, newText: prefix + added.join('\n') + (endsWithNewline ? '\n' : '') }],
      });
    }
  }
  if (want('to-zero-based')) {
    let min = Infinity;
    for (let k = 0; k < e; k++) min = Math.min(min, p.src[k]!, p.dst[k]!);
    if (e > 0 && min >= 1) {
      const edits: Edit[] = [];
      for (let k = 0; k < e; k++) {
        const ln = p.line[k]!;
        edits.push({ startLine: ln, startCharacter: p.srcCol[k]!, endLine: ln, endCharacter: p.srcCol[k]! + p.srcLen[k]!, newText: String(p.src[k]! - 1) });
        edits.push({ startLine: ln, startCharacter: p.dstCol[k]!, endLine: ln, endCharacter: p.dstCol[k]! + p.dstLen[k]!, newText: String(p.dst[k]! - 1) });
      }
      fixes.push({ kind: 'to-zero-based', title: `Shift all ${e} edges to 0-based ids (subtract 1)`, count: e, edits: compact(p, edits) });
    }
  }
  return fixes;
}

function deleteLines(p: Parsed, lines: Set<number>): Edit[] {
  const sorted = [...lines].sort((a, b) => a - b);
  const edits = sorted.map((ln) => ({ startLine: ln, startCharacter: 0, endLine: ln + 1, endCharacter: 0, newText: '' }));
  return compact(p, edits);
}

/** Applies edits to the text here when there are too many for the editor to take one by one. */
function compact(p: Parsed, edits: Edit[]): Edit[] {
  if (edits.length <= MAX_EDITS) return edits;
  const text = applyEdits(p.lines.join('\n'), edits);
  const last = p.lines.length - 1;
  return [{ startLine: 0, startCharacter: 0, endLine: last, endCharacter: p.lines[last]!.length, newText: text }];
}

/** Applies non-overlapping edits to a text (used for compaction and by tests). */
export function applyEdits(text: string, edits: Edit[]): string {
  const lines = text.split('\n');
  const offsets: number[] = [];
  let o = 0;
  for (const l of lines) { offsets.push(o); o += l.length + 1; }
  const off = (line: number, ch: number) => (line >= lines.length ? text.length : offsets[line]! + ch);
  const sorted = [...edits].sort((a, b) => off(b.startLine, b.startCharacter) - off(a.startLine, a.startCharacter));
  let out = text;
  for (const ed of sorted) out = out.slice(0, off(ed.startLine, ed.startCharacter)) + ed.newText + out.slice(off(ed.endLine, ed.endCharacter));
  return out;
}

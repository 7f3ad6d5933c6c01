/**
 * The edges of a graph, read from its structure tensor: an edge index (2 x E or E x 2, ids checked
 * to be whole numbers) or else an adjacency matrix (dense or sparse, N x N). Problems of the
 * tensor's shape and dtype are reported here; the edges keep a way back to where each one is
 * written.
 */
import {
  MAX_LOCATIONS, type DenseTensor, type ProblemLocation, type SparseTensor,
} from '../../formats/types';
import { isFloatDType } from '../roles';
import type { GraphPart } from '../graph-check-types';
import type { CheckContext, Reporter } from './context';
import { describe, EXAMPLES_IN_MESSAGE, spanOf } from './locations';

/** Where the edges came from, with a way back from an edge id to the file. */
export interface EdgeSource {
  part: GraphPart;
  src: Int32Array;
  dst: Int32Array;
  /** Per edge: bit 1 = source not an integer, 2 = target not an integer, 4/8 = source/target beyond int32. */
  flags: Uint8Array | null;
  nonInteger: number;
  /** Node count the structure itself fixes (adjacency shape). */
  naturalN?: number;
  /** Location of one endpoint (side 0 = source, 1 = target) of edge k, or of the whole edge. */
  locate(k: number, side: 0 | 1 | 'edge'): ProblemLocation;
  /** The raw value of an endpoint as written (for messages). */
  raw(k: number, side: 0 | 1): number;
}

/** The first structure tensor that gives edges: an edge index, else an adjacency matrix. */
export function readEdges(ctx: CheckContext): EdgeSource | undefined {
  let edges: EdgeSource | undefined;
  for (const part of ctx.edgeParts) {
    const e = edgesFromIndex(part, ctx.report);
    if (e) { edges = e; break; }
  }
  if (!edges) {
    for (const part of ctx.adjParts) {
      const e = edgesFromAdjacency(part, ctx.report);
      if (e) { edges = e; break; }
    }
  }
  return edges;
}

function edgesFromIndex(part: GraphPart, report: Reporter): EdgeSource | undefined {
  const t = part.tensor;
  if (t.kind !== 'dense') return undefined;
  if (t.strings) {
    report(part, 'edge-shape', `${t.name} holds text, not node ids.`, 1);
    return undefined;
  }
  const s = t.shape;
  let transposed = false;
  if (s.length === 2 && s[0] === 2) transposed = false;
  else if (s.length === 2 && s[1] === 2) transposed = true;
  else {
    report(part, 'edge-shape',
      `${t.name} has shape [${s.join(', ')}]; an edge index must be 2 x E (row 0 = sources, row 1 = targets) or E x 2.`, 1);
    return undefined;
  }
  const e = transposed ? s[0]! : s[1]!;
  if (transposed) {
    report(part, 'transposed-edge-index',
      `${t.name} is stored E x 2 ([${s.join(', ')}]); message-passing layers expect 2 x E. Transpose it (edge_index.T, then make it contiguous).`, 1);
  }
  const d = t.data;
  let src: Int32Array, dst: Int32Array;
  let flags: Uint8Array | null = null;
  let nonInteger = 0;
  if (d instanceof Int32Array && !transposed) {
    src = d.subarray(0, e); dst = d.subarray(e, 2 * e);
  } else {
    src = new Int32Array(e); dst = new Int32Array(e);
    for (let k = 0; k < e; k++) {
      const a = transposed ? d[2 * k]! : d[k]!;
      const b = transposed ? d[2 * k + 1]! : d[e + k]!;
      let fl = 0;
      if (!Number.isInteger(a)) fl |= 1; else if (a > 2147483647 || a < -2147483648) fl |= 4;
      if (!Number.isInteger(b)) fl |= 2; else if (b > 2147483647 || b < -2147483648) fl |= 8;
      src[k] = fl & 5 ? -1 : a; dst[k] = fl & 10 ? -1 : b;
      if (fl) {
        if (!flags) flags = new Uint8Array(e);
        flags[k] = fl;
        if (fl & 3) nonInteger++;
      }
    }
  }
  const flat = (k: number, side: 0 | 1) => (transposed ? 2 * k + side : side * e + k);
  const source: EdgeSource = {
    part, src, dst, flags, nonInteger,
    raw: (k, side) => d[flat(k, side)]!,
    locate: (k, side) => {
      if (side === 'edge') {
        const a = spanOf(t, flat(k, 0)), b = spanOf(t, flat(k, 1));
        if (a && b && a.line === b.line) {
          return { tensor: t.name, index: flat(k, 0), line: a.line, column: a.column, length: b.column + b.length - a.column };
        }
        return { tensor: t.name, index: flat(k, 0), ...(a ? { line: a.line, column: a.column, length: a.length } : {}),
          detail: transposed ? `${t.name}[${k}, :]` : `${t.name}[:, ${k}]` };
      }
      const i = flat(k, side);
      const sp = spanOf(t, i);
      // In a text file the line says where; name the column's meaning instead of a tensor index.
      if (sp) return { tensor: t.name, index: i, line: sp.line, column: sp.column, length: sp.length, detail: side === 0 ? 'source' : 'target' };
      return { tensor: t.name, index: i, detail: transposed ? `${t.name}[${k}, ${side}]` : `${t.name}[${side}, ${k}]` };
    },
  };
  if (nonInteger > 0) {
    const locs: ProblemLocation[] = [];
    for (let k = 0; k < e && locs.length < MAX_LOCATIONS; k++) {
      const fl = flags![k]!;
      for (const side of [0, 1] as const) {
        if (fl & (side === 0 ? 1 : 2)) {
          const loc = source.locate(k, side);
          loc.detail = `${loc.detail ?? ''} = ${d[flat(k, side)]}`.trim();
          locs.push(loc);
        }
      }
    }
    report(part, 'non-integer-index',
      `${nonInteger} edge entr${nonInteger === 1 ? 'y has' : 'ies have'} ids that are not whole numbers (${locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')}). ` +
      `Node ids must be integers; these entries are left out.`, nonInteger, locs);
  }
  if (isFloatDType(t.dtype)) {
    report(part, 'non-integer-index',
      `${t.name} is stored as ${t.dtype}; indexing layers need an integer tensor (int64). Convert it with .long() / astype(np.int64).`,
      e - nonInteger);
  } else if (t.dtype === 'bool') {
    report(part, 'non-integer-index', `${t.name} is boolean; an edge index holds integer node ids.`, e);
  }
  return source;
}

function edgesFromAdjacency(part: GraphPart, report: Reporter): EdgeSource | undefined {
  const t = part.tensor;
  if (t.kind === 'dense' && t.strings) return undefined;
  const s = t.shape;
  if (s.length !== 2) {
    report(part, 'not-square', `${t.name} has shape [${s.join(', ')}]; an adjacency matrix must be N x N.`, 1);
    return undefined;
  }
  const [rows, cols] = s as [number, number];
  if (rows !== cols) {
    report(part, 'not-square',
      `${t.name} is ${rows} x ${cols}; an adjacency matrix must be square (N x N, entry [i, j] ≠ 0 means an edge i → j).`, 1);
  }
  const n = Math.max(rows, cols);
  if (t.kind === 'sparse') return sparseEdges(part, t, n);
  return denseEdges(part, t, rows, cols, n);
}

function sparseEdges(part: GraphPart, t: SparseTensor, n: number): EdgeSource {
  // Explicitly stored zeros are not edges.
  const vals = t.values;
  let m = t.row.length;
  let keep: Int32Array | null = null;
  if (vals) {
    let zeros = 0;
    for (let k = 0; k < vals.length; k++) if (vals[k] === 0) zeros++;
    if (zeros > 0) {
      keep = new Int32Array(m - zeros);
      let j = 0;
      for (let k = 0; k < m; k++) if (vals[k] !== 0) keep[j++] = k;
      m -= zeros;
    }
  }
  const src = keep ? new Int32Array(m) : t.row;
  const dst = keep ? new Int32Array(m) : t.col;
  if (keep) for (let j = 0; j < m; j++) { src[j] = t.row[keep[j]!]!; dst[j] = t.col[keep[j]!]!; }
  const entry = (k: number) => (keep ? keep[k]! : k);
  return {
    part, src, dst, flags: null, nonInteger: 0, naturalN: n,
    raw: (k, side) => (side === 0 ? src[k]! : dst[k]!),
    locate: (k) => {
      const i = entry(k);
      const sp = t.locator?.locate(i);
      return { tensor: t.name, index: i, ...(sp ? { line: sp.line, column: sp.column, length: sp.length } : {}),
        detail: `${t.name}[${src[k]}, ${dst[k]}]` };
    },
  };
}

function denseEdges(part: GraphPart, t: DenseTensor, rows: number, cols: number, n: number): EdgeSource {
  const d = t.data;
  let m = 0;
  for (let i = 0; i < d.length; i++) if (d[i] !== 0) m++;
  const src = new Int32Array(m), dst = new Int32Array(m);
  let j = 0;
  for (let r = 0; r < rows; r++) {
    const base = r * cols;
    for (let c = 0; c < cols; c++) if (d[base + c] !== 0) { src[j] = r; dst[j] = c; j++; }
  }
  return {
    part, src, dst, flags: null, nonInteger: 0, naturalN: n,
    raw: (k, side) => (side === 0 ? src[k]! : dst[k]!),
    locate: (k) => {
      const i = src[k]! * cols + dst[k]!;
      const sp = t.locator?.locate(i);
      return { tensor: t.name, index: i, ...(sp ? { line: sp.line, column: sp.column, length: sp.length } : {}),
        detail: `${t.name}[${src[k]}, ${dst[k]}]` };
    },
  };
}

/**
 * The text files of the folder layouts of datasets: which names belong to one, and a reader for
 * their plain numeric tables (one row per line, values separated by commas and/or blanks, an empty
 * field or `nan` read as NaN). These files (a graph indicator, a count per graph, labels) are
 * single-column text the edge-list reader would skip; inside a dataset folder they are read by
 * `readColumnsText` instead and become part of the dataset.
 *
 * - graph-kernel benchmark folders: NAME_A.txt with NAME_graph_indicator.txt beside it, and
 *   NAME_{graph_labels,node_labels,edge_labels,node_attributes,edge_attributes,graph_attributes}.txt;
 * - per-dataset CSV folders: edge.csv with num-node-list.csv and num-edge-list.csv beside it (each
 *   optionally .gz), and graph-label, node-feat, edge-feat;
 * - split index files: split/<scheme>/{train,valid,test}.csv(.gz) next to such a folder.
 */
import { UnreadableError, type DenseTensor, type ReadLimits, type ReadResult, type TextSpan } from '../formats/types';
import { textBytes, bomLength } from '../formats/text/encoding';
import { numberState, parseNumberBytes } from '../formats/text/numbers';
import { allocFloat64, growFloat64, allocInt32, growInt32, fit } from '../formats/text/growable';
import { baseOf, dirOf } from '../paths';

export const KERNEL_PARTS = ['A', 'graph_indicator', 'graph_labels', 'node_labels', 'edge_labels', 'node_attributes', 'edge_attributes', 'graph_attributes'] as const;
export type KernelPart = (typeof KERNEL_PARTS)[number];
export const CSV_PARTS = ['edge', 'num-node-list', 'num-edge-list', 'graph-label', 'node-feat', 'edge-feat'] as const;
export type CsvPart = (typeof CSV_PARTS)[number];

const KERNEL_RE = new RegExp(`^(.+)_(${KERNEL_PARTS.join('|')})\\.txt$`);
const CSV_RE = /^(edge|num-node-list|num-edge-list|graph-label|node-feat|edge-feat)\.csv(\.gz)?$/;
const SPLIT_RE = /^(train|valid|val|test)\.csv(\.gz)?$/;

export function kernelPart(path: string): { name: string; part: KernelPart } | undefined {
  const m = KERNEL_RE.exec(baseOf(path));
  return m ? { name: m[1]!, part: m[2] as KernelPart } : undefined;
}

export function csvPart(path: string): CsvPart | undefined {
  const m = CSV_RE.exec(baseOf(path));
  return m ? (m[1] as CsvPart) : undefined;
}

/** The one or two spellings (plain, .gz) of a CSV part in a folder. */
function csvSpellings(dir: string, part: string): string[] {
  return [`${dir}/${part}.csv`, `${dir}/${part}.csv.gz`];
}

/**
 * Whether a text file is part of a dataset folder (and so read by readColumnsText), given a way to
 * ask whether a path exists.
 */
export function isDatasetText(path: string, exists: (p: string) => boolean): boolean {
  const dir = dirOf(path);
  const k = kernelPart(path);
  if (k) return exists(`${dir}/${k.name}_A.txt`) && exists(`${dir}/${k.name}_graph_indicator.txt`);
  if (csvPart(path)) return isCsvFolder(dir, exists);
  if (SPLIT_RE.test(baseOf(path)) && baseOf(dirOf(dir)) === 'split') {
    const root = dirOf(dirOf(dir));
    return isCsvFolder(root, exists) || isCsvFolder(`${root}/raw`, exists);
  }
  return false;
}

function isCsvFolder(dir: string, exists: (p: string) => boolean): boolean {
  const any = (part: string) => csvSpellings(dir, part).some(exists);
  return any('edge') && any('num-node-list') && any('num-edge-list');
}

/** The other files of the dataset folder a file belongs to (to be read with it), from the folder's names. */
export function datasetCompanions(path: string, namesInDir: readonly string[]): string[] {
  const dir = dirOf(path);
  const k = kernelPart(path);
  const names = new Set(namesInDir);
  if (k) {
    if (!names.has(`${k.name}_A.txt`) || !names.has(`${k.name}_graph_indicator.txt`)) return [];
    return KERNEL_PARTS.map((p) => `${k.name}_${p}.txt`).filter((n) => names.has(n)).map((n) => `${dir}/${n}`);
  }
  if (csvPart(path)) {
    const has = (p: string) => names.has(`${p}.csv`) || names.has(`${p}.csv.gz`);
    if (!has('edge') || !has('num-node-list') || !has('num-edge-list')) return [];
    return namesInDir.filter((n) => CSV_RE.test(n)).map((n) => `${dir}/${n}`);
  }
  return [];
}

/** A file whose name says it holds a dataset's split (rides_split.pt, split_idx.pt, splits.npz): read beside a file given alone. */
export function isSplitFileName(name: string): boolean {
  const stem = baseOf(name).toLowerCase().replace(/\.[^.]*(\.gz)?$/, '');
  return /(^|[_-])splits?([_-]|$)/.test(stem);
}

/** Where each row of a table read from text starts. */
class RowLocator {
  constructor(private readonly lines: Int32Array, private readonly columns: number) {}
  locate(flat: number): TextSpan | undefined {
    const row = Math.floor(flat / this.columns);
    const line = this.lines[row];
    return line === undefined ? undefined : { line, column: 1, length: 1 };
  }
  kept() {
    return { holder: this.lines, bytes: this.lines.byteLength };
  }
}

/**
 * Reads a numeric table: every non-blank line one row, all rows with the same number of values.
 * Whole numbers that fit int32 everywhere give an int64-typed Int32Array, otherwise float64.
 * Throws UnreadableError for a value that is not a number or a row of another width.
 */
export function readColumnsText(bytes: Uint8Array, fileName: string, limits: ReadLimits): ReadResult {
  const b = textBytes(bytes, fileName, limits);
  const n = b.length;
  let i = bomLength(b);
  let values = allocFloat64(1024);
  let lines = allocInt32(256);
  let count = 0, rows = 0, columns = -1, line = 0;
  let allInt = true;
  while (i < n) {
    line++;
    let e = i;
    while (e < n && b[e] !== 10) e++;
    let end = e;
    if (end > i && b[end - 1] === 13) end--;
    // Blank line?
    let s = i;
    while (s < end && (b[s] === 32 || b[s] === 9)) s++;
    if (s < end && b[s] !== 35) {
      let width = 0;
      let p = s;
      for (;;) {
        while (p < end && (b[p] === 32 || b[p] === 9)) p++;
        let q = p;
        while (q < end && b[q] !== 44 && b[q] !== 32 && b[q] !== 9) q++;
        let v: number;
        if (q === p) v = NaN;
        else {
          v = parseNumberBytes(b, p, q);
          if (!numberState.ok) {
            let tok = '';
            for (let t = p; t < Math.min(q, p + 30); t++) tok += String.fromCharCode(b[t]!);
            throw new UnreadableError(`line ${line}: '${tok}' is not a number (${baseOf(fileName)} is read as a table of numbers, one row per line)`, p, line);
          }
        }
        if (allInt && !(Number.isInteger(v) && v >= -2147483648 && v <= 2147483647)) allInt = false;
        if (count >= values.length) values = growFloat64(values, count + 1);
        values[count++] = v;
        width++;
        while (q < end && (b[q] === 32 || b[q] === 9)) q++;
        if (q < end && b[q] === 44) { p = q + 1; continue; }
        if (q >= end) break;
        p = q;
      }
      if (columns < 0) columns = width;
      else if (width !== columns) {
        throw new UnreadableError(`line ${line} has ${width} value${width === 1 ? '' : 's'} but the first row has ${columns}; every row of ${baseOf(fileName)} needs the same number`, i, line);
      }
      if (rows >= lines.length) lines = growInt32(lines, rows + 1);
      lines[rows++] = line;
    }
    i = e + 1;
  }
  if (columns < 0) columns = 1;
  const data = fit(values, count);
  const stem = baseOf(fileName).replace(/\.(txt|csv)(\.gz)?$/i, '');
  const tensor: DenseTensor = {
    kind: 'dense', name: stem, dtype: allInt ? 'int64' : 'float64',
    shape: columns === 1 ? [rows] : [rows, columns],
    data: allInt ? Int32Array.from(data) : data,
    locator: new RowLocator(fit(lines, rows), columns),
  };
  return { format: 'edgelist', tensors: [tensor], problems: [] };
}

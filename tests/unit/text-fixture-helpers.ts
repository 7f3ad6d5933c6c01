/**
 * Loads the text-format fixtures and the values the libraries computed for them
 * (written by networkx 2.8 / scipy 1.10 / numpy 1.24, see tests/fixtures/make_text_fixtures.py).
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import type { DenseTensor, ReadResult, SparseTensor, Tensor, TextSpan } from '../../server/src/core/formats/types';

export const TEXT_DIR = fileURLToPath(new URL('../fixtures/text/', import.meta.url));

export function fixture(name: string): Uint8Array {
  return new Uint8Array(readFileSync(TEXT_DIR + name));
}

export const expected: Record<string, any> = JSON.parse(readFileSync(TEXT_DIR + 'expected.json', 'utf8'));

export const utf8 = (s: string): Uint8Array => new TextEncoder().encode(s);

export function tensor(r: ReadResult, name: string): Tensor {
  const t = r.tensors.find((x) => x.name === name);
  if (!t) throw new Error(`no tensor ${name} in [${r.tensors.map((x) => x.name).join(', ')}]`);
  return t;
}

export function dense(r: ReadResult, name: string): DenseTensor {
  const t = tensor(r, name);
  if (t.kind !== 'dense') throw new Error(`${name} is sparse`);
  return t;
}

export function sparse(r: ReadResult, name = 'adjacency'): SparseTensor {
  const t = tensor(r, name);
  if (t.kind !== 'sparse') throw new Error(`${name} is dense`);
  return t;
}

/** [source, target] pairs of a [2, E] edge_index. */
export function pairs(t: DenseTensor): number[][] {
  const E = t.shape[1]!;
  const out: number[][] = [];
  for (let e = 0; e < E; e++) out.push([t.data[e]!, t.data[E + e]!]);
  return out;
}

/** Dense matrix of a sparse tensor, summing duplicates as scipy's toarray() does. */
export function toDense(t: SparseTensor): number[][] {
  const [m, n] = t.shape;
  const a = Array.from({ length: m }, () => new Array<number>(n).fill(0));
  for (let k = 0; k < t.row.length; k++) a[t.row[k]!]![t.col[k]!]! += t.values ? t.values[k]! : 1;
  return a;
}

export const span = (s: TextSpan | undefined): TextSpan | undefined =>
  s && { line: s.line, column: s.column, length: s.length };

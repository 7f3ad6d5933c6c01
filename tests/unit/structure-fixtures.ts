/**
 * Reads the graphs written by tests/fixtures/make_structure_fixtures.py (NetworkX 2.8 / NumPy 1.24)
 * and the values NetworkX computed for them (expected.json). The .npy files are all 2 x E
 * little-endian int64, so a few lines read them here; the node count comes from expected.json,
 * which keeps isolated nodes with the highest ids.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { undirectedFromEdges, type UndirectedGraph } from '../../server/src/core/graph/structure/undirected';

export const STRUCTURE_DIR = path.join(__dirname, '../fixtures/structure');

export interface GraphInfo {
  file: string;
  n: number;
  m: number;
  degrees: number[];
  triangles: number[];
  bridges: [number, number][];
  wlClasses: number[];
  wlPartition: number[];
  wlGraphHash: string;
  names?: string[];
  permutation?: number[];
  relabelledFrom?: string;
  doubled?: [number, number][];
  wlClassesFromClub?: number[];
  wlPartitionFromClub?: number[];
}

export interface Expected {
  generator: Record<string, string>;
  graphs: Record<string, GraphInfo>;
  pairs: { a: string; b: string; wlHashEqual: boolean; isomorphic: boolean }[];
}

export const expected: Expected = JSON.parse(fs.readFileSync(path.join(STRUCTURE_DIR, 'expected.json'), 'utf8'));

/** The header dict and data of a C-order '<i8' .npy file of shape (2, E). */
export function readEdgeIndexNpy(file: string): { src: Int32Array; dst: Int32Array } {
  const buf = fs.readFileSync(file);
  if (buf.readUInt8(0) !== 0x93 || buf.toString('latin1', 1, 6) !== 'NUMPY') throw new Error(`${file}: not .npy`);
  const major = buf.readUInt8(6);
  const hlen = major === 1 ? buf.readUInt16LE(8) : buf.readUInt32LE(8);
  const start = major === 1 ? 10 : 12;
  const header = buf.toString('latin1', start, start + hlen);
  if (!header.includes("'<i8'") || !header.includes("'fortran_order': False")) throw new Error(`${file}: unexpected header ${header}`);
  const shape = /'shape': \((\d+), (\d+)\)/.exec(header);
  if (!shape || shape[1] !== '2') throw new Error(`${file}: not 2 x E`);
  const e = Number(shape[2]);
  const data = buf.subarray(start + hlen);
  const src = new Int32Array(e), dst = new Int32Array(e);
  for (let k = 0; k < e; k++) {
    src[k] = Number(data.readBigInt64LE(8 * k));
    dst[k] = Number(data.readBigInt64LE(8 * (e + k)));
  }
  return { src, dst };
}

export function fixture(name: string): { info: GraphInfo; g: UndirectedGraph; src: Int32Array; dst: Int32Array; file: string } {
  const info = expected.graphs[name];
  if (!info) throw new Error(`no fixture ${name}`);
  const file = path.join(STRUCTURE_DIR, info.file);
  const { src, dst } = readEdgeIndexNpy(file);
  return { info, g: undirectedFromEdges(info.n, src, dst), src, dst, file };
}

/** Undirected view from a list of undirected edges (stored both ways). */
export function fromPairs(n: number, pairs: ReadonlyArray<readonly [number, number]>): UndirectedGraph {
  const src = new Int32Array(2 * pairs.length), dst = new Int32Array(2 * pairs.length);
  pairs.forEach(([u, v], k) => {
    src[2 * k] = u; dst[2 * k] = v;
    src[2 * k + 1] = v; dst[2 * k + 1] = u;
  });
  return undirectedFromEdges(n, src, dst);
}

/** Each node → the smallest node with the same colour (a partition in NetworkX-comparable form). */
export function partitionOf(colours: Int32Array): number[] {
  const first = new Map<number, number>();
  return Array.from(colours, (c, v) => {
    if (!first.has(c)) first.set(c, v);
    return first.get(c)!;
  });
}

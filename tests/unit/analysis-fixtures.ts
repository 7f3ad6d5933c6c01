/**
 * Loads the graphs written by tests/fixtures/make_analysis_fixtures.py (NumPy / NetworkX) and the
 * reference values that script computed, for the field / influence / homophily / smoothing tests.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { readNpy } from '../../server/src/core/formats/npy';
import { DEFAULT_LIMITS, type DenseTensor } from '../../server/src/core/formats/types';
import { buildSortedPair, type Csr } from '../../server/src/core/graph/structure/csr';

export const ANALYSIS_DIR = path.join(__dirname, '../fixtures/analysis');
export const analysisExpected = JSON.parse(fs.readFileSync(path.join(ANALYSIS_DIR, 'expected.json'), 'utf8'));

export function readTensor(file: string): DenseTensor {
  const r = readNpy(new Uint8Array(fs.readFileSync(file)), file, DEFAULT_LIMITS);
  return r.tensors[0] as DenseTensor;
}

export interface FixtureGraph {
  name: string;
  n: number;
  src: Int32Array;
  dst: Int32Array;
  fwd: Csr;
  rev: Csr;
  x?: DenseTensor;
  y?: DenseTensor;
  expected: any;
}

/** A fixture graph by name ("karate", "directed", "sparse"), with the node count NetworkX used. */
export function fixtureGraph(name: string): FixtureGraph {
  const expected = analysisExpected.graphs[name];
  const folder = path.join(ANALYSIS_DIR, expected.folder);
  const ei = readTensor(path.join(folder, 'edge_index.npy'));
  const e = ei.shape[1]!;
  const src = Int32Array.from(ei.data.subarray(0, e));
  const dst = Int32Array.from(ei.data.subarray(e, 2 * e));
  const n = expected.nodes as number;
  const { fwd, rev } = buildSortedPair(n, src, dst);
  const g: FixtureGraph = { name, n, src, dst, fwd, rev, expected };
  if (fs.existsSync(path.join(folder, 'x.npy'))) g.x = readTensor(path.join(folder, 'x.npy'));
  if (fs.existsSync(path.join(folder, 'y.npy'))) g.y = readTensor(path.join(folder, 'y.npy'));
  return g;
}

/** Undirected graph from an edge list, both directions stored (for the small graphs of docs/references.md). */
export function undirected(n: number, edges: Array<[number, number]>): { n: number; fwd: Csr; rev: Csr } {
  const src = new Int32Array(edges.length * 2);
  const dst = new Int32Array(edges.length * 2);
  edges.forEach(([u, v], k) => {
    src[2 * k] = u; dst[2 * k] = v;
    src[2 * k + 1] = v; dst[2 * k + 1] = u;
  });
  return { n, ...buildSortedPair(n, src, dst) };
}

export const path_ = (n: number): Array<[number, number]> => Array.from({ length: n - 1 }, (_, i) => [i, i + 1] as [number, number]);
export const cycle = (n: number): Array<[number, number]> => Array.from({ length: n }, (_, i) => [i, (i + 1) % n] as [number, number]);

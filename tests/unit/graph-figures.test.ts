/**
 * Graph figures checked against values computed outside Hopscope:
 * - tests/fixtures/graphs/expected.json, written by tests/fixtures/make_graph_fixtures.py with
 *   NetworkX 2.8 (number_of_selfloops, isolates, number_weakly_connected_components),
 *   NumPy 1.24 (np.unique for duplicates, np.isin for missing reverses) and SciPy 1.10
 *   (csgraph.connected_components, connection='weak');
 * - published counts for Zachary's karate club (Zachary 1977; docs/references.md §2.1:
 *   34 nodes, 78 edges, 156 directed entries, connected, no self-loops, no isolated nodes).
 */
import { describe, expect, it } from 'vitest';
import { seededRandom } from './random';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { readNpy } from '../../server/src/core/formats/npy';
import { checkGraph } from '../../server/src/core/checks/graph-check';
import { guessRole } from '../../server/src/core/checks/roles';
import { analyseStructure, countComponentsPair } from '../../server/src/core/graph/structure/figures';
import { edgeListComponents } from './random';
import { buildSortedPair, hasEdge, transpose, buildCsr } from '../../server/src/core/graph/structure/csr';
import { DEFAULT_LIMITS, type DenseTensor } from '../../server/src/core/formats/types';
import { int32Figures, tensorStats } from '../../server/src/core/checks/stats';

const dir = path.join(__dirname, '../fixtures/graphs');
const expected = JSON.parse(fs.readFileSync(path.join(dir, 'expected.json'), 'utf8'));

function load(file: string): DenseTensor {
  const r = readNpy(new Uint8Array(fs.readFileSync(path.join(dir, file))), file, DEFAULT_LIMITS);
  return r.tensors[0] as DenseTensor;
}

describe('graph figures match NetworkX/NumPy/SciPy on fixture graphs', () => {
  for (const [name, entry] of Object.entries<any>(expected.graphs)) {
    it(name, () => {
      const t = load(entry.file);
      const check = checkGraph([{ file: entry.file, tensor: t, guess: guessRole(t) }], { nodes: entry.figures.nodes });
      const f = check.figures!;
      expect(f.nodes).toBe(entry.figures.nodes);
      expect(f.edges).toBe(entry.figures.edges);
      expect(f.selfLoops).toBe(entry.figures.selfLoops);
      expect(f.duplicateEdges).toBe(entry.figures.duplicateEdges);
      expect(f.asymmetricPairs).toBe(entry.figures.asymmetricPairs);
      expect(f.directed).toBe(entry.figures.directed);
      expect(f.isolatedNodes).toBe(entry.figures.isolatedNodes);
      expect(f.components).toBe(entry.figures.components);
      expect(f.components).toBe(entry.figures.componentsNetworkx);
    });
  }

  it('karate club: the published counts (Zachary 1977, docs/references.md §2.1)', () => {
    const t = load('karate.npy');
    const check = checkGraph([{ file: 'karate.npy', tensor: t, guess: guessRole(t) }]);
    expect(check.figures).toMatchObject({ nodes: 34, edges: 156, directed: false, selfLoops: 0, isolatedNodes: 0, components: 1 });
    // 78 undirected edges, from NetworkX's karate_club_graph
    expect(expected.graphs.karate.networkx.undirectedEdges).toBe(78);
    // Degrees from the CSR equal NetworkX's degree sequence (docs/references.md §2.1 lists 16 9 10 6 3 ...).
    const s = check.structure!;
    const degrees = Array.from({ length: 34 }, (_, u) => s.fwd.indptr[u + 1]! - s.fwd.indptr[u]!);
    expect(degrees).toEqual(expected.graphs.karate.networkx.degrees);
    expect(degrees.slice(0, 5)).toEqual([16, 9, 10, 6, 3]);
  });

  it('two disjoint triangles have 2 components (networkx.number_connected_components)', () => {
    expect(expected.graphs.two_triangles.networkx.components).toBe(2);
    const t = load('two_triangles.npy');
    expect(checkGraph([{ file: 'x', tensor: t, guess: guessRole(t) }]).figures!.components).toBe(2);
  });
});

describe('CSR building blocks', () => {
  it('sorts rows and transposes in O(N+E) passes', () => {
    const src = Int32Array.from([2, 0, 2, 1, 0, 2]);
    const dst = Int32Array.from([0, 2, 1, 2, 1, 0]);
    const { fwd, rev } = buildSortedPair(3, src, dst);
    expect(Array.from(fwd.indptr)).toEqual([0, 2, 3, 6]);
    expect(Array.from(fwd.indices)).toEqual([1, 2, 2, 0, 0, 1]);
    expect(Array.from(rev.indices)).toEqual([2, 2, 0, 2, 0, 1]);
    expect(hasEdge(fwd, 2, 1)).toBe(true);
    expect(hasEdge(fwd, 1, 0)).toBe(false);
    const t2 = transpose(transpose(buildCsr(3, src, dst)));
    expect(Array.from(t2.indices)).toEqual(Array.from(fwd.indices));
  });

  it('the bucketed build equals two counting-sort transposes (one pass, bucket edges, skewed rows)', () => {
    const rnd = seededRandom(7);
    // 2048 is the largest node count sorted in one counting pass, 2049 the smallest bucketed one;
    // the last case puts most entries in the rows of two nodes (one bucket holds nearly all).
    const cases: [number, boolean][] = [[1, false], [50, false], [2048, false], [2049, false], [70_000, false], [5_000_000, false], [70_000, true]];
    for (const [n, skewed] of cases) {
      const e = 20_000;
      const pick = () => (skewed && rnd(10) < 8 ? rnd(2) : rnd(n));
      const src = Int32Array.from({ length: e }, pick), dst = Int32Array.from({ length: e }, pick);
      const { fwd, rev } = buildSortedPair(n, src, dst);
      const f2 = transpose(transpose(buildCsr(n, src, dst)));
      const r2 = transpose(buildCsr(n, src, dst));
      expect(Array.from(fwd.indices)).toEqual(Array.from(f2.indices));
      expect(Array.from(fwd.indptr)).toEqual(Array.from(f2.indptr));
      expect(Array.from(rev.indices)).toEqual(Array.from(r2.indices));
      expect(Array.from(rev.indptr)).toEqual(Array.from(r2.indptr));
    }
  });

  it('an int32 edge index has its min, max and sum computed once, for the bounds and the tensor table alike', () => {
    const t = load('karate.npy');
    expect(t.data).toBeInstanceOf(Int32Array);
    const d = t.data as Int32Array;
    let min = Infinity, max = -Infinity, sum = 0;
    for (const v of d) { min = Math.min(min, v); max = Math.max(max, v); sum += v; }
    expect(tensorStats(t)).toEqual({ min, max, sum, nonFinite: 0 });
    expect(int32Figures(d)).toBe(int32Figures(d)); // kept per array
    // Published: the karate club's ids run 0..33 (34 nodes, docs/references.md §2.1).
    expect([min, max]).toEqual([0, 33]);
  });

  it('self-loops are counted in the row pass, repeats included, as the count over the edge list is', () => {
    const rnd = seededRandom(5);
    for (let t = 0; t < 20; t++) {
      const n = 1 + rnd(50), e = rnd(300);
      const src = Int32Array.from({ length: e }, () => rnd(n));
      const dst = Int32Array.from(src, (u) => (rnd(4) === 0 ? u : rnd(n)));
      let loops = 0;
      for (let k = 0; k < e; k++) if (src[k] === dst[k]) loops++;
      expect(analyseStructure(n, src, dst).figures.selfLoops).toBe(loops);
    }
  });

  it('counts weakly connected components including isolated nodes', () => {
    const count = (n: number, src: number[], dst: number[]): number => {
      const pair = buildSortedPair(n, Int32Array.from(src), Int32Array.from(dst));
      return countComponentsPair(pair.fwd, pair.rev);
    };
    expect(count(5, [0, 3], [1, 3])).toBe(4);
    expect(count(0, [], [])).toBe(0);
    // Components join through in-edges too (weak connectivity): 2 → 0 and 2 → 1 make one.
    expect(count(3, [2, 2], [0, 1])).toBe(1);
    // Nodes with in-edges only, reached from a node of the large component only through them.
    expect(count(6, [0, 1, 2, 3, 4], [1, 2, 0, 0, 5])).toBe(2);
  });

  it('counts components by sampling the large one exactly as a union-find over every entry does', () => {
    // Shapes where skipping the large component's rows could go wrong: one giant part with small
    // islands, in-only and out-only nodes, self-loops, repeats, several similar-sized parts, a
    // large component that the evenly spaced samples split between two roots at first.
    const rnd = seededRandom(77);
    for (let t = 0; t < 60; t++) {
      const n = 1 + rnd(3000);
      const e = rnd(4 * n);
      const parts = 1 + rnd(t % 3 === 0 ? 40 : 3);
      const src = new Int32Array(e), dst = new Int32Array(e);
      for (let k = 0; k < e; k++) {
        const part = rnd(parts);
        const lo = Math.floor((part * n) / parts), hi = Math.floor(((part + 1) * n) / parts);
        const w = Math.max(1, hi - lo);
        src[k] = Math.min(n - 1, lo + rnd(w));
        dst[k] = k % 11 === 0 ? src[k]! : Math.min(n - 1, lo + rnd(w));
      }
      const pair = buildSortedPair(n, src, dst);
      expect(countComponentsPair(pair.fwd, pair.rev)).toBe(edgeListComponents(n, src, dst));
    }
  });

  it('a self-loop alone leaves a node isolated; the reverse of a self-loop is itself', () => {
    const s = analyseStructure(3, Int32Array.from([0, 1, 2]), Int32Array.from([0, 2, 1]));
    expect(s.figures).toMatchObject({ selfLoops: 1, isolatedNodes: 1, asymmetricPairs: 0, directed: false, components: 2 });
  });
});

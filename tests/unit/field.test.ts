/**
 * Receptive field and coverage curve, checked against values from outside Hopscope:
 * - Zachary karate club field sizes |N_L(v) ∪ {v}|, L = 0..5, for nodes 0, 33, 16, 11 (Zachary 1977,
 *   computed with networkx.karate_club_graph 2.8.8; docs/references.md §2.1);
 * - Petersen graph 1, 4, 10 and the complete binary tree of depth 4 from the root 1, 3, 7, 15, 31
 *   (docs/references.md §4, receptive-field sizes);
 * - per-node hop distances for every fixture graph and sending row from
 *   networkx.single_source_shortest_path_length (tests/fixtures/make_analysis_fixtures.py →
 *   tests/fixtures/analysis/expected.json), on G.reverse() for sending row 0, on G for
 *   sending row 1 and on the undirected simple graph for symmetrise;
 * - coverage-curve medians / 90th percentiles from numpy.percentile (linear) over all nodes, same file.
 */
import { describe, expect, it } from 'vitest';
import * as path from 'node:path';
import {
  FieldWalker, coverageCurve, percentileSorted, receptiveField, sampleNodes, type FieldOptions,
} from '../../server/src/core/graph/propagation/field';
import { AnalysisCancelled } from '../../server/src/core/graph/structure/simple-undirected';
import { buildSortedPair } from '../../server/src/core/graph/structure/csr';
import { cycle, fixtureGraph, readTensor, undirected } from './analysis-fixtures';

const GRAPHS_DIR = path.join(__dirname, '../fixtures/graphs');

function fromEdgeIndexFile(file: string, n: number) {
  const ei = readTensor(path.join(GRAPHS_DIR, file));
  const e = ei.shape[1]!;
  return { n, ...buildSortedPair(n, Int32Array.from(ei.data.subarray(0, e)), Int32Array.from(ei.data.subarray(e, 2 * e))) };
}

const cumulative = (perHop: number[]) => perHop.map((_, k) => perHop.slice(0, k + 1).reduce((a, b) => a + b, 0));

const MODES: Record<string, FieldOptions> = {
  in: { sendingRow: 0 },
  out: { sendingRow: 1 },
  sym: { symmetrise: true },
};

describe('receptive field: karate club (Zachary 1977; docs/references.md §2.1, networkx 2.8.8)', () => {
  // tests/fixtures/graphs/karate.npy: the 156-entry edge index written by make_graph_fixtures.py
  const g = fromEdgeIndexFile('karate.npy', 34);
  const walker = new FieldWalker(g);
  const published: Record<number, number[]> = {
    0: [1, 17, 26, 34, 34, 34],
    33: [1, 18, 24, 33, 34, 34],
    16: [1, 3, 6, 18, 26, 34],
    11: [1, 2, 17, 26, 34, 34],
  };
  for (const [node, sizes] of Object.entries(published)) {
    it(`node ${node}: field sizes ${sizes.join(', ')} for L = 0..5`, () => {
      const f = walker.field(Number(node), 5);
      expect(cumulative(f.perHop)).toEqual(sizes);
      expect(f.total).toBe(sizes[5]);
      expect(f.coverage).toBeCloseTo(sizes[5]! / 34, 15);
      for (let L = 0; L <= 5; L++) expect(walker.field(Number(node), L).total).toBe(sizes[L]);
    });
  }

  it('eccentricities from docs/references.md §2.1: node 0 → 3, node 16 → 5, node 33 → 4', () => {
    for (const [v, ecc] of [[0, 3], [16, 5], [33, 4]] as const) {
      const f = walker.field(v, 8);
      expect(Math.max(...f.hops)).toBe(ecc);
      expect(f.perHop.slice(ecc + 1).every((c) => c === 0)).toBe(true);
      expect(f.perHop[ecc]).toBeGreaterThan(0);
    }
  });

  it('undirected graph: either sending row gives the same field', () => {
    for (const v of [0, 11, 16, 33]) {
      const a = walker.field(v, 3, { sendingRow: 0 });
      const b = walker.field(v, 3, { sendingRow: 1 });
      const c = walker.field(v, 3, { symmetrise: true });
      expect(b.perHop).toEqual(a.perHop);
      expect(c.perHop).toEqual(a.perHop);
    }
  });
});

describe('receptive field: docs/references.md §4 sizes', () => {
  it('Petersen graph (networkx.petersen_graph via tests/fixtures/graphs/petersen.npy): 1, 4, 10', () => {
    const g = fromEdgeIndexFile('petersen.npy', 10);
    for (let v = 0; v < 10; v++) expect(cumulative(receptiveField(g, v, 2).perHop)).toEqual([1, 4, 10]);
  });

  it('complete binary tree of depth 4, from the root: 1, 3, 7, 15, 31', () => {
    const edges: Array<[number, number]> = [];
    for (let i = 0; 2 * i + 2 < 31; i++) edges.push([i, 2 * i + 1], [i, 2 * i + 2]);
    const g = undirected(31, edges);
    expect(cumulative(receptiveField(g, 0, 4).perHop)).toEqual([1, 3, 7, 15, 31]);
  });

  it('the same tree with edges parent → child only: the sending row decides what the root hears', () => {
    const src: number[] = [], dst: number[] = [];
    for (let i = 0; 2 * i + 2 < 31; i++) { src.push(i, i); dst.push(2 * i + 1, 2 * i + 2); }
    const g = { n: 31, ...buildSortedPair(31, Int32Array.from(src), Int32Array.from(dst)) };
    // row 0 sends: the root receives from its in-neighbours, and it has none
    expect(receptiveField(g, 0, 4).perHop).toEqual([1, 0, 0, 0, 0]);
    // row 1 sends: messages run child → parent, so the root hears the whole tree
    expect(receptiveField(g, 0, 4, { sendingRow: 1 }).perHop).toEqual([1, 2, 4, 8, 16]);
    // a leaf (node 30) hears its ancestors when row 0 sends: 14, 6, 2, 0
    const leaf = receptiveField(g, 30, 4);
    expect(leaf.perHop).toEqual([1, 1, 1, 1, 1]);
    expect(Array.from(leaf.nodes)).toEqual([30, 14, 6, 2, 0]);
    expect(receptiveField(g, 30, 4, { symmetrise: true }).total).toBeGreaterThan(5);
  });
});

describe('receptive field: hop distances equal networkx.single_source_shortest_path_length', () => {
  for (const name of ['karate', 'directed', 'sparse']) {
    const g = fixtureGraph(name);
    const walker = new FieldWalker(g);
    for (const [node, modes] of Object.entries<any>(g.expected.distances)) {
      for (const [mode, dist] of Object.entries<number[]>(modes)) {
        it(`${name}, node ${node}, ${mode}`, () => {
          const maxL = g.expected.maxLayers as number;
          const f = walker.field(Number(node), maxL, MODES[mode]);
          const got = new Array<number>(g.n).fill(-1);
          for (let i = 0; i < f.total; i++) got[f.nodes[i]!] = f.hops[i]!;
          expect(got).toEqual(dist);
          expect(f.perHop).toEqual(g.expected.perHop[node][mode]);
          // hopOf reads the same distances back from the walker's buffers
          for (let u = 0; u < g.n; u++) expect(walker.hopOf(u)).toBe(dist[u]);
          // hops come out in search order: non-decreasing
          for (let i = 1; i < f.total; i++) expect(f.hops[i]!).toBeGreaterThanOrEqual(f.hops[i - 1]!);
        });
      }
    }
  }

  it('the directed fixture really has different in / out / symmetrised fields (the test above can fail)', () => {
    const g = fixtureGraph('directed');
    const d = g.expected.perHop['0'];
    expect(d.in).not.toEqual(d.out);
    const walker = new FieldWalker(g);
    expect(walker.field(0, 2, MODES.in).perHop).not.toEqual(walker.field(0, 2, MODES.out).perHop);
  });

  it('a reused walker answers like a fresh one, whatever came before', () => {
    const g = fixtureGraph('sparse');
    const walker = new FieldWalker(g);
    const order = [150, 0, 150, 299, 1, 0, 150];
    for (const v of order) {
      const a = walker.field(v, 6, { symmetrise: true });
      const b = receptiveField(g, v, 6, { symmetrise: true });
      expect(a.perHop).toEqual(b.perHop);
      expect(Array.from(a.nodes)).toEqual(Array.from(b.nodes));
    }
  });

  it('an isolated node (directed fixture, node 52) sees only itself', () => {
    const g = fixtureGraph('directed');
    const f = receptiveField(g, 52, 8, { symmetrise: true });
    expect(f.total).toBe(1);
    expect(f.perHop).toEqual([1, 0, 0, 0, 0, 0, 0, 0, 0]);
    expect(f.coverage).toBeCloseTo(1 / 120, 15);
  });

  it('rejects a node id out of range and negative layers', () => {
    const g = fixtureGraph('karate');
    expect(() => receptiveField(g, 34, 2)).toThrow(RangeError);
    expect(() => receptiveField(g, -1, 2)).toThrow(RangeError);
    expect(() => receptiveField(g, 0, -1)).toThrow(RangeError);
  });
});

describe('coverage curve', () => {
  const cases: Array<[string, string]> = [['karate', 'sym'], ['directed', 'in'], ['directed', 'out'], ['directed', 'sym'], ['sparse', 'sym']];
  for (const [name, mode] of cases) {
    it(`${name} (${mode}), all nodes: median and p90 equal numpy.percentile over networkx ball sizes`, () => {
      const g = fixtureGraph(name);
      const want = g.expected.coverageCurve[mode];
      const c = coverageCurve(g, { ...MODES[mode], sampleSize: 1000 });
      expect(c.allNodes).toBe(true);
      expect(c.sample.length).toBe(g.n);
      expect(c.layers).toEqual([1, 2, 3, 4, 5, 6, 7, 8]);
      for (let i = 0; i < 8; i++) {
        expect(c.median[i]).toBeCloseTo(want.median[i], 12);
        expect(c.p90[i]).toBeCloseTo(want.p90[i], 12);
      }
    });
  }

  it('sparse graph (30 components, networkx.gnp_random_graph): the curve stays below 1', () => {
    const g = fixtureGraph('sparse');
    expect(g.expected.components).toBeGreaterThan(1);
    const c = coverageCurve(g, { symmetrise: true, sampleSize: 1000 });
    expect(Math.max(...c.p90)).toBeLessThan(1);
  });

  it('default sample: 256 of 300 nodes, deterministic per seed, distinct, sorted, in range', () => {
    const g = fixtureGraph('sparse');
    const a = coverageCurve(g, { symmetrise: true });
    const b = coverageCurve(g, { symmetrise: true });
    expect(a.allNodes).toBe(false);
    expect(a.sample.length).toBe(256);
    expect(Array.from(a.sample)).toEqual(Array.from(b.sample));
    expect(a.median).toEqual(b.median);
    for (let i = 1; i < a.sample.length; i++) expect(a.sample[i]!).toBeGreaterThan(a.sample[i - 1]!);
    expect(a.sample[0]!).toBeGreaterThanOrEqual(0);
    expect(a.sample[255]!).toBeLessThan(300);
    const c = coverageCurve(g, { symmetrise: true, seed: 99 });
    expect(Array.from(c.sample)).not.toEqual(Array.from(a.sample));
  });

  it('sampleNodes draws k distinct ids out of a large range with O(k) work, roughly uniformly', () => {
    const s = sampleNodes(10_000_000, 2000, 7);
    expect(s.length).toBe(2000);
    expect(new Set(s).size).toBe(2000);
    // mean of a uniform sample of 0..1e7-1 is about 5e6 (standard error ≈ 6.5e4 for k = 2000)
    const mean = s.reduce((a, b) => a + b, 0) / s.length;
    expect(Math.abs(mean - 5e6)).toBeLessThan(4e5);
    expect(Array.from(sampleNodes(5, 10, 1))).toEqual([0, 1, 2, 3, 4]);
  });

  it('percentileSorted matches numpy.percentile (linear) on hand-checkable data', () => {
    // numpy.percentile([1, 2, 3, 4], 50) = 2.5, (…, 90) = 3.7; [5] → 5 (values recalled from the
    // numpy documentation's definition: index q/100·(n−1), linear between neighbours)
    expect(percentileSorted([1, 2, 3, 4], 50)).toBeCloseTo(2.5, 15);
    expect(percentileSorted([1, 2, 3, 4], 90)).toBeCloseTo(3.7, 15);
    expect(percentileSorted([5], 90)).toBe(5);
  });
});

describe('cancellation', () => {
  it('a set token stops a long search between chunks', () => {
    const g = undirected(70_000, cycle(70_000));
    const token = { isCancellationRequested: true };
    expect(() => new FieldWalker(g).field(0, 40_000, { cancel: token })).toThrow(AnalysisCancelled);
    // a short search finishes before the first look at the token
    expect(new FieldWalker(g).field(0, 3, { cancel: token }).total).toBe(7);
    expect(() => coverageCurve(g, { cancel: token })).toThrow(AnalysisCancelled);
  });
});

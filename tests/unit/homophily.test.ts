/**
 * Homophily and degree histograms, checked against:
 * - docs/references.md §7 worked examples: P6 (A A B B A B) edge 2/5, node 5/12, per node
 *   1, ½, ½, ½, 0, 0; star K_{1,4} 1/2 and 1/2; C6 with alternating labels 0 and 0; karate club with
 *   the `club` attribute 67/78 = 0.858974 and 0.888233 — edge homophily as defined by Zhu et al.
 *   (NeurIPS 2020), node homophily as defined by Pei et al. (ICLR 2020);
 * - the same definitions evaluated with NumPy/NetworkX on the fixture graphs, including unlabelled
 *   (-1) nodes, nodes without edges, self-loops and duplicates (tests/fixtures/make_analysis_fixtures.py
 *   → tests/fixtures/analysis/expected.json);
 * - degree histograms from numpy.bincount (in/out) and networkx.degree_histogram (MultiDiGraph for
 *   in + out, the simple Graph for the undirected degree), same file.
 */
import { describe, expect, it } from 'vitest';
import * as path from 'node:path';
import { degreeHistograms, homophily, labelVector } from '../../server/src/core/graph/propagation/homophily';
import { simpleUndirected } from '../../server/src/core/graph/structure/simple-undirected';
import type { DenseTensor } from '../../server/src/core/formats/types';
import { loadGraph } from '../../server/src/node/graph-input';
import { cycle, fixtureGraph, path_, undirected } from './analysis-fixtures';

const labels = (ys: number[]) => Int32Array.from(ys);
const symOf = (g: { fwd: any; rev: any }) => simpleUndirected(g.fwd, g.rev);
const tensor = (shape: number[], data: number[], dtype: DenseTensor['dtype'] = 'int64'): DenseTensor =>
  ({ kind: 'dense', name: 'y', dtype, shape, data: dtype.startsWith('float') ? Float64Array.from(data) : Int32Array.from(data) });

describe('docs/references.md §7 worked examples (Zhu et al. 2020 edge, Pei et al. 2020 node homophily)', () => {
  it('P6 with labels A A B B A B: edge 2/5, node 5/12, per node 1, ½, ½, ½, 0, 0', () => {
    const h = homophily(symOf(undirected(6, path_(6))), labels([0, 0, 1, 1, 0, 1]));
    expect(h.edge).toBeCloseTo(2 / 5, 15);
    expect(h.node).toBeCloseTo(5 / 12, 15);
    expect(Array.from(h.perNode)).toEqual([1, 0.5, 0.5, 0.5, 0, 0]);
    expect([h.edgeSame, h.edgeCounted, h.nodeCounted, h.classes]).toEqual([2, 5, 6, 2]);
  });

  it('star K_{1,4}, hub 0 labelled 0, leaves 0, 0, 1, 1: edge 1/2, node 1/2; hub ½, leaves 1, 1, 0, 0', () => {
    const h = homophily(symOf(undirected(5, [[0, 1], [0, 2], [0, 3], [0, 4]])), labels([0, 0, 0, 1, 1]));
    expect(h.edge).toBe(0.5);
    expect(h.node).toBe(0.5);
    expect(Array.from(h.perNode)).toEqual([0.5, 1, 1, 0, 0]);
  });

  it('C6 with alternating labels: 0 and 0', () => {
    const h = homophily(symOf(undirected(6, cycle(6))), labels([0, 1, 0, 1, 0, 1]));
    expect(h.edge).toBe(0);
    expect(h.node).toBe(0);
  });

  it('karate club, club labels, loaded with loadGraph from tests/fixtures/graphs/karate_bundle: 0.858974 / 0.888233', () => {
    const g = loadGraph(path.join(__dirname, '../fixtures/graphs/karate_bundle/edge_index.npy'));
    expect(g.labels).toBeDefined();
    const y = labelVector(g.labels!, g.n);
    if (!(y instanceof Int32Array)) throw new Error(y.error);
    const h = homophily(symOf(g), y);
    expect(h.edgeSame).toBe(67);
    expect(h.edgeCounted).toBe(78);
    expect(h.edge).toBeCloseTo(0.858974, 6);
    expect(h.node).toBeCloseTo(0.888233, 6);
  });
});

describe('definitions evaluated with NumPy/NetworkX on the fixture graphs', () => {
  for (const name of ['karate', 'directed']) {
    it(`${name}: edge and node homophily, counts`, () => {
      const g = fixtureGraph(name);
      const want = g.expected.homophily;
      const y = labelVector(g.y!, g.n);
      if (!(y instanceof Int32Array)) throw new Error(y.error);
      const h = homophily(symOf(g), y);
      expect(h.edge).toBeCloseTo(want.edge, 13);
      expect(h.node).toBeCloseTo(want.node, 13);
      expect(h.edgeSame).toBe(want.edgeSame);
      expect(h.edgeCounted).toBe(want.edgeCounted);
      expect(h.nodeCounted).toBe(want.nodeCounted);
    });
  }

  it('directed fixture: unlabelled and edgeless nodes are left out of node homophily (NaN per node)', () => {
    const g = fixtureGraph('directed');
    const y = labelVector(g.y!, g.n) as Int32Array;
    const h = homophily(symOf(g), y);
    const unlabelled = Array.from(y).filter((v) => v < 0).length;
    expect(unlabelled).toBe(9);
    expect(h.labelledNodes).toBe(g.n - unlabelled);
    for (const v of [50, 51, 52, 53, 54]) expect(Number.isNaN(h.perNode[v]!)).toBe(true); // no edges
    for (let v = 0; v < g.n; v++) if (y[v]! < 0) expect(Number.isNaN(h.perNode[v]!)).toBe(true);
    expect(h.nodeCounted).toBeLessThan(h.labelledNodes);
  });

  it('no labelled edge: null, not NaN', () => {
    const h = homophily(symOf(undirected(3, path_(3))), labels([0, -1, 1]));
    expect(h.edge).toBeNull();
    expect(h.node).toBeNull();
    expect(h.edgeCounted).toBe(0);
  });

  for (const name of ['karate', 'directed', 'sparse']) {
    it(`${name}: degree histograms equal numpy.bincount / networkx.degree_histogram`, () => {
      const g = fixtureGraph(name);
      const h = degreeHistograms(g.fwd, g.rev, symOf(g));
      const want = g.expected.degreeHistograms;
      expect(h.in).toEqual(want.in);
      expect(h.out).toEqual(want.out);
      expect(h.total).toEqual(want.total);
      expect(h.undirected).toEqual(want.undirected);
    });
  }
});

describe('labelVector', () => {
  it('reads [N], [N, 1] and one-hot [N, C]; marks negative, fractional and missing entries -1', () => {
    expect(Array.from(labelVector(tensor([4], [2, -1, 0, 5]), 5) as Int32Array)).toEqual([2, -1, 0, 5, -1]);
    expect(Array.from(labelVector(tensor([3, 1], [1, 0, 1]), 3) as Int32Array)).toEqual([1, 0, 1]);
    expect(Array.from(labelVector(tensor([3], [1, 0.5, NaN], 'float64'), 3) as Int32Array)).toEqual([1, -1, -1]);
    expect(Array.from(labelVector(tensor([3, 3], [0, 1, 0, 0, 0, 0, 1, 0, 0], 'float64'), 3) as Int32Array)).toEqual([1, -1, 0]);
  });

  it('refuses shapes that are not labels', () => {
    expect(labelVector(tensor([2, 2], [0.3, 0.7, 1, 0], 'float64'), 2)).toHaveProperty('error');
    expect(labelVector(tensor([2, 2, 1], [0, 1, 1, 0]), 2)).toHaveProperty('error');
  });
});

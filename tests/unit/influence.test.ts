/**
 * Influence rows (row v of Â^L, GCN normalisation of Kipf & Welling, ICLR 2017, eq. 2), checked against:
 * - docs/references.md §4 (values computed there with SymPy): P3, C4, K3, star K_{1,3} and P5 rows,
 *   the row-normalised P5 row at L = 3 (influence distribution in the sense of Xu et al., ICML 2018);
 * - exact SymPy matrix powers of the same small graphs, 20 digits
 *   (tests/fixtures/make_analysis_fixtures.py → tests/fixtures/analysis/expected.json, "small");
 * - dense numpy.linalg.matrix_power rows of D̃^-1/2 (A+I) D̃^-1/2 and D̃^-1 (A+I) on the karate club,
 *   a directed multigraph with loops/duplicates (symmetrised and deduplicated first) and a sparse
 *   random graph (same file, "graphs.*.influence");
 * - the support of the row equals the BFS ball of radius L (docs/references.md §4: (Â^L)_ij ≠ 0 exactly
 *   when dist(i, j) ≤ L), with distances from networkx.single_source_shortest_path_length.
 */
import { describe, expect, it } from 'vitest';
import { InfluencePropagator, influenceRow } from '../../server/src/core/graph/propagation/influence';
import { AnalysisCancelled, simpleUndirected } from '../../server/src/core/graph/structure/simple-undirected';
import { analysisExpected, cycle, fixtureGraph, path_, undirected } from './analysis-fixtures';

const TOL = 1e-12;

function expectRow(got: Float64Array, want: number[], tol = TOL): void {
  expect(got.length).toBe(want.length);
  for (let i = 0; i < want.length; i++) expect(Math.abs(got[i]! - want[i]!)).toBeLessThanOrEqual(tol);
}

const fullRow = (g: Parameters<typeof influenceRow>[0], v: number, L: number, opts = {}) =>
  influenceRow(g, v, L, { fullRow: true, ...opts }).row!;

describe('docs/references.md §4 closed forms (Kipf & Welling 2017 normalisation; SymPy values)', () => {
  const s6 = 1 / Math.sqrt(6);
  it('P3: Â rows, Â² rows, Â³ row 0', () => {
    const g = undirected(3, path_(3));
    expectRow(fullRow(g, 0, 1), [1 / 2, s6, 0]);
    expectRow(fullRow(g, 1, 1), [s6, 1 / 3, s6]);
    expectRow(fullRow(g, 0, 2), [5 / 12, (5 * Math.sqrt(6)) / 36, 1 / 6]);
    expectRow(fullRow(g, 1, 2), [(5 * Math.sqrt(6)) / 36, 4 / 9, (5 * Math.sqrt(6)) / 36]);
    // REFERENCES lists Â³ row 0 = 0.347222, 0.351547, 0.222222 (6 digits)
    expectRow(fullRow(g, 0, 3), [0.347222, 0.351547, 0.222222], 5e-7);
  });

  it('C4: Â = (A+I)/3; Â² diagonal 1/3, off-diagonal 2/9; Â³ 7/27 at distance 0 and 1, 6/27 at distance 2', () => {
    const g = undirected(4, cycle(4));
    expectRow(fullRow(g, 0, 1), [1 / 3, 1 / 3, 0, 1 / 3]);
    expectRow(fullRow(g, 0, 2), [1 / 3, 2 / 9, 2 / 9, 2 / 9]);
    expectRow(fullRow(g, 0, 3), [7 / 27, 7 / 27, 6 / 27, 7 / 27]);
  });

  it('K3: Â = J/3 is idempotent', () => {
    const g = undirected(3, [[0, 1], [1, 2], [0, 2]]);
    for (const L of [1, 2, 3, 4]) expectRow(fullRow(g, 2, L), [1 / 3, 1 / 3, 1 / 3]);
  });

  it('star K_{1,3}, centre 0: Â and Â² rows', () => {
    const g = undirected(4, [[0, 1], [0, 2], [0, 3]]);
    const r2 = Math.SQRT2;
    expectRow(fullRow(g, 0, 1), [1 / 4, r2 / 4, r2 / 4, r2 / 4]);
    expectRow(fullRow(g, 1, 1), [r2 / 4, 1 / 2, 0, 0]);
    expectRow(fullRow(g, 0, 2), [7 / 16, (3 * r2) / 16, (3 * r2) / 16, (3 * r2) / 16]);
    expectRow(fullRow(g, 1, 2), [(3 * r2) / 16, 3 / 8, 1 / 8, 1 / 8]);
  });

  it('P5 rows from node 0, L = 1..3, and the row-normalised L = 3 row (6 digits in REFERENCES)', () => {
    const g = undirected(5, path_(5));
    expectRow(fullRow(g, 0, 1), [0.5, 0.408248, 0, 0, 0], 5e-7);
    expectRow(fullRow(g, 0, 2), [0.416667, 0.340207, 0.136083, 0, 0], 5e-7);
    expectRow(fullRow(g, 0, 3), [0.347222, 0.328867, 0.158763, 0.045361, 0], 5e-7);
    expectRow(fullRow(g, 0, 3, { rowNormalise: true }), [0.394475, 0.373622, 0.180369, 0.051534, 0], 5e-7);
  });
});

describe('exact SymPy matrix powers (expected.json "small"), every row, L = 0..3, to 1e-12', () => {
  for (const [name, entry] of Object.entries<any>(analysisExpected.small)) {
    it(name, () => {
      const g = undirected(entry.n, entry.edges);
      const prop = InfluencePropagator.fromGraph(g);
      for (let L = 0; L <= 3; L++) {
        for (let v = 0; v < entry.n; v++) {
          expectRow(prop.row(v, L, { fullRow: true }).row!, entry.gcnPowers[L][v]);
          expectRow(prop.row(v, L, { fullRow: true, rowNormalise: true }).row!, entry.gcnRowNormalised[L][v]);
          expectRow(prop.row(v, L, { fullRow: true, norm: 'random-walk' }).row!, entry.randomWalkPowers[L][v]);
        }
      }
    });
  }
});

describe('dense NumPy matrix powers on fixture graphs (expected.json "graphs.*.influence")', () => {
  for (const name of ['karate', 'directed', 'sparse']) {
    const g = fixtureGraph(name);
    const prop = InfluencePropagator.fromGraph(g);
    for (const [node, rows] of Object.entries<any>(g.expected.influence)) {
      it(`${name}, node ${node}, L = 0..4, gcn / row-normalised / random walk`, () => {
        const v = Number(node);
        for (let L = 0; L < rows.gcn.length; L++) {
          const gcn = prop.row(v, L, { fullRow: true });
          expectRow(gcn.row!, rows.gcn[L]);
          expectRow(prop.row(v, L, { fullRow: true, rowNormalise: true }).row!, rows.gcnRowNormalised[L]);
          const rw = prop.row(v, L, { fullRow: true, norm: 'random-walk' });
          expectRow(rw.row!, rows.randomWalk[L]);
          // a random-walk row sums to 1 (P is row-stochastic)
          expect(Math.abs(rw.rowSum - 1)).toBeLessThan(1e-12);
        }
      });
    }
  }

  it('support of row v of Â^L = BFS ball of radius L on the symmetrised graph (networkx distances)', () => {
    for (const name of ['karate', 'directed', 'sparse']) {
      const g = fixtureGraph(name);
      const prop = InfluencePropagator.fromGraph(g);
      for (const [node, modes] of Object.entries<any>(g.expected.distances)) {
        const dist: number[] = modes.sym;
        for (let L = 0; L <= 6; L++) {
          const r = prop.row(Number(node), L, { fullRow: true });
          const ball = dist.filter((d) => d >= 0 && d <= L).length;
          expect(r.support).toBe(ball);
          for (let u = 0; u < g.n; u++) expect(r.row![u]! > 0).toBe(dist[u]! >= 0 && dist[u]! <= L);
        }
      }
    }
  });
});

describe('top-K list', () => {
  it('karate, node 0, L = 2: the top 10 are the 10 largest entries of the NumPy row, heaviest first', () => {
    const g = fixtureGraph('karate');
    const want: number[] = g.expected.influence['0'].gcn[2];
    const order = want.map((w, u) => [w, u] as const).sort((a, b) => b[0] - a[0] || a[1] - b[1]);
    const r = influenceRow(g, 0, 2, { top: 10 });
    expect(r.topNodes.length).toBe(10);
    for (let i = 0; i < 10; i++) {
      expect(Math.abs(r.topWeights[i]! - order[i]![0])).toBeLessThan(1e-12);
      // ties in the NumPy row would make the node order ambiguous; assert ids only where weights differ
      if (i + 1 < order.length && Math.abs(order[i]![0] - order[i + 1]![0]) > 1e-9 && (i === 0 || Math.abs(order[i]![0] - order[i - 1]![0]) > 1e-9)) {
        expect(r.topNodes[i]).toBe(order[i]![1]);
      }
    }
  });

  it('default top 50 is capped by the support; ties go to the smaller id', () => {
    const g = undirected(4, cycle(4));
    const r = influenceRow(g, 0, 3);
    expect(r.support).toBe(4);
    expect(Array.from(r.topNodes)).toEqual([0, 1, 3, 2]); // 7/27, 7/27, 7/27, 6/27 (REFERENCES §4)
    const big = fixtureGraph('sparse');
    const rb = influenceRow(big, 150, 8);
    expect(rb.topNodes.length).toBe(Math.min(50, rb.support));
    for (let i = 1; i < rb.topWeights.length; i++) expect(rb.topWeights[i]!).toBeLessThanOrEqual(rb.topWeights[i - 1]!);
  });

  it('top K = the K largest of the full row, for every K (directed fixture, node 7, L = 3)', () => {
    const g = fixtureGraph('directed');
    const prop = InfluencePropagator.fromGraph(g);
    const row = prop.row(7, 3, { fullRow: true }).row!;
    const sorted = Array.from(row).filter((w) => w > 0).sort((a, b) => b - a);
    for (const k of [0, 1, 2, 5, 17, sorted.length, sorted.length + 10]) {
      const r = prop.row(7, 3, { top: k });
      expect(Array.from(r.topWeights)).toEqual(sorted.slice(0, k));
      for (let i = 0; i < r.topNodes.length; i++) expect(row[r.topNodes[i]!]).toBe(r.topWeights[i]);
    }
  });
});

describe('symmetrisation and reuse', () => {
  it('the directed multigraph gives the same rows as its symmetrised simple version', () => {
    const g = fixtureGraph('directed');
    const sym = simpleUndirected(g.fwd, g.rev);
    // rows sorted, no self-loops, no repeats, symmetric
    for (let u = 0; u < g.n; u++) {
      for (let p = sym.indptr[u]!; p < sym.indptr[u + 1]!; p++) {
        const w = sym.indices[p]!;
        expect(w).not.toBe(u);
        if (p > sym.indptr[u]!) expect(w).toBeGreaterThan(sym.indices[p - 1]!);
      }
    }
    expect(sym.indptr[g.n]! / 2).toBe(g.expected.undirectedEdges); // networkx Graph.number_of_edges()
  });

  it('a reused propagator gives the same row as a fresh one after other queries', () => {
    const g = fixtureGraph('karate');
    const prop = InfluencePropagator.fromGraph(g);
    const first = prop.row(33, 3, { fullRow: true }).row!;
    prop.row(0, 5, { norm: 'random-walk' });
    prop.row(11, 1, { rowNormalise: true });
    expect(Array.from(prop.row(33, 3, { fullRow: true }).row!)).toEqual(Array.from(first));
  });

  it('cancellation mid-way throws and leaves the propagator usable', () => {
    const g = undirected(70_000, cycle(70_000));
    const prop = InfluencePropagator.fromGraph(g);
    const token = { isCancellationRequested: false };
    const before = prop.row(0, 5, { fullRow: true }).row!;
    token.isCancellationRequested = true;
    expect(() => prop.row(0, 2000, { cancel: token })).toThrow(AnalysisCancelled);
    expect(Array.from(prop.row(0, 5, { fullRow: true }).row!)).toEqual(Array.from(before));
  });

  it('rejects bad node ids and layer counts', () => {
    const g = undirected(3, path_(3));
    expect(() => influenceRow(g, 3, 1)).toThrow(RangeError);
    expect(() => influenceRow(g, 0, 1.5)).toThrow(RangeError);
  });
});

/**
 * Bridges of the undirected view.
 *
 * Sources: docs/references.md §2.1 (karate: one bridge, (0, 11)) and §2.3 (Florentine families: 5
 * bridges, named; Les Misérables: 18; bull: 2); networkx.bridges (NetworkX 2.8) on every graph in
 * tests/fixtures/structure/expected.json, including a random graph with some bridges stored twice,
 * where networkx.bridges on the MultiGraph does not count the doubled edges.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { expected, fixture, fromPairs } from './structure-fixtures';
import { findBridges } from '../../server/src/core/graph/structure/bridges';
import { AnalysisCancelled, disjointUnion, undirectedFromEdges } from '../../server/src/core/graph/structure/undirected';

const pairsOf = (b: { u: Int32Array; v: Int32Array }) => Array.from(b.u, (u, k) => [u, b.v[k]!]);

describe('bridges: docs/references.md values', () => {
  it('karate: one bridge, (0, 11)', () => {
    expect(pairsOf(findBridges(fixture('karate').g))).toEqual([[0, 11]]);
  });

  it('Florentine families: the 5 named bridges', () => {
    const { g, info } = fixture('florentine');
    const names = info.names!;
    const got = pairsOf(findBridges(g)).map(([u, v]) => [names[u]!, names[v]!].sort().join('–')).sort();
    expect(got).toEqual([
      'Acciaiuoli–Medici', 'Albizzi–Ginori', 'Guadagni–Lamberteschi', 'Medici–Salviati', 'Pazzi–Salviati',
    ]);
  });

  it('Les Misérables: 18 bridges; bull: 2; Petersen: none; barbell: 1', () => {
    expect(findBridges(fixture('les_miserables').g).count).toBe(18);
    expect(findBridges(fixture('bull').g).count).toBe(2);
    expect(findBridges(fixture('petersen').g).count).toBe(0);
    expect(findBridges(fixture('barbell4').g).count).toBe(1);
  });
});

describe('bridges against networkx.bridges (every fixture graph)', () => {
  for (const name of Object.keys(expected.graphs)) {
    it(name, () => {
      const { g, info } = fixture(name);
      expect(pairsOf(findBridges(g))).toEqual(info.bridges);
    });
  }

  it('a doubled edge (stored twice each way) is not a bridge (networkx.bridges on a MultiGraph)', () => {
    const { g, info } = fixture('gnp_doubled');
    expect(info.doubled!.length).toBeGreaterThan(0);
    const got = pairsOf(findBridges(g));
    for (const d of info.doubled!) expect(got).not.toContainEqual(d);
    expect(got).toEqual(info.bridges);
    // Stored once, the same edges are bridges again.
    const once: [number, number][] = [];
    for (let u = 0; u < g.n; u++) {
      for (let p = g.indptr[u]!; p < g.indptr[u + 1]!; p++) if (u < g.indices[p]!) once.push([u, g.indices[p]!]);
    }
    const single = fromPairs(info.n, once);
    const again = pairsOf(findBridges(single));
    for (const d of info.doubled!) expect(again).toContainEqual(d);
  });
});

describe('bridges: structure and scale', () => {
  it('edge direction does not matter: one direction only gives the same bridges', () => {
    const { src, dst, info } = fixture('les_miserables');
    const keep: number[] = [];
    for (let k = 0; k < src.length; k++) if (src[k]! > dst[k]!) keep.push(k);
    const g = undirectedFromEdges(info.n, Int32Array.from(keep, (k) => src[k]!), Int32Array.from(keep, (k) => dst[k]!));
    expect(pairsOf(findBridges(g))).toEqual(info.bridges);
  });

  it('a 300000-node path: every edge, no recursion-depth failure', () => {
    const n = 300_000;
    const src = new Int32Array(n - 1), dst = new Int32Array(n - 1);
    for (let i = 0; i < n - 1; i++) { src[i] = i; dst[i] = i + 1; }
    const b = findBridges(undirectedFromEdges(n, src, dst));
    expect(b.count).toBe(n - 1);
    expect(b.u[12345]).toBe(12345);
    expect(b.v[12345]).toBe(12346);
    // Closing the path into a cycle removes every bridge.
    const cyc = undirectedFromEdges(n, Int32Array.from([...src, n - 1]), Int32Array.from([...dst, 0]));
    expect(findBridges(cyc).count).toBe(0);
  });

  it('cancellation', () => {
    const n = 200_000;
    const src = new Int32Array(n - 1), dst = new Int32Array(n - 1);
    for (let i = 0; i < n - 1; i++) { src[i] = i; dst[i] = i + 1; }
    expect(() => findBridges(undirectedFromEdges(n, src, dst), { cancel: { isCancellationRequested: true } })).toThrow(AnalysisCancelled);
  });

  it('property: every edge of a random tree is a bridge; adding a parallel copy removes it', () => {
    const tree = fc.integer({ min: 2, max: 300 }).chain((n) => fc.tuple(
      fc.constant(n),
      // Node i (i ≥ 1) hangs off a random earlier node: a uniformly relabelled random tree after the shuffle.
      fc.array(fc.double({ min: 0, max: 1, maxExcluded: true, noNaN: true }), { minLength: n - 1, maxLength: n - 1 }),
      fc.shuffledSubarray([...Array(n).keys()], { minLength: n, maxLength: n }),
      fc.nat(),
    ));
    fc.assert(fc.property(tree, ([n, r, perm, pick]) => {
      const edges = r.map((x, i) => {
        const a = perm[i + 1]!, b = perm[Math.floor(x * (i + 1))]!;
        return (a < b ? [a, b] : [b, a]) as [number, number];
      });
      const b = findBridges(fromPairs(n, edges));
      expect(pairsOf(b)).toEqual([...edges].sort((x, y) => x[0] - y[0] || x[1] - y[1]));
      const dup = edges[pick % edges.length]!;
      const b2 = findBridges(fromPairs(n, [...edges, dup]));
      expect(b2.count).toBe(n - 2);
      expect(pairsOf(b2)).not.toContainEqual(dup);
    }), { numRuns: 200 });
  });
});

describe('the undirected view the bridge search reads', () => {
  it('property: rows are the distinct other ends either way, and each multiplicity is max(#(u → x), #(x → u))', () => {
    // Reference: a plain count of every ordered pair (the view's definition in undirected.ts).
    const graph = fc.integer({ min: 1, max: 40 }).chain((n) => fc.tuple(
      fc.constant(n),
      fc.array(fc.tuple(fc.nat({ max: n - 1 }), fc.nat({ max: n - 1 })), { maxLength: 200 }),
    ));
    fc.assert(fc.property(graph, ([n, pairs]) => {
      const g = undirectedFromEdges(n, Int32Array.from(pairs, (p) => p[0]), Int32Array.from(pairs, (p) => p[1]));
      const count = new Map<number, number>();
      for (const [a, b] of pairs) count.set(a * n + b, (count.get(a * n + b) ?? 0) + 1);
      for (let u = 0; u < n; u++) {
        const want: number[] = [], wantMult: number[] = [];
        for (let x = 0; x < n; x++) {
          const m = Math.max(count.get(u * n + x) ?? 0, count.get(x * n + u) ?? 0);
          if (x !== u && m > 0) { want.push(x); wantMult.push(m); }
        }
        const lo = g.indptr[u]!, hi = g.indptr[u + 1]!;
        expect(Array.from(g.indices.subarray(lo, hi))).toEqual(want);
        expect(Array.from(g.mult.subarray(lo, hi))).toEqual(wantMult);
      }
      // Computed once, on the first read.
      expect(g.mult).toBe(g.mult);
      // The disjoint union (1-WL compare) keeps both views' rows, b's after a's (1-WL reads no multiplicities).
      const u = disjointUnion(g, g), m = g.indptr[n]!;
      expect(u.n).toBe(2 * n);
      expect(Array.from(u.indices)).toEqual([...g.indices, ...Array.from(g.indices, (x) => x + n)]);
      expect(u.indptr[2 * n]).toBe(2 * m);
    }), { numRuns: 300 });
  });
});

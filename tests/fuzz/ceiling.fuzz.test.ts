/**
 * Property tests for the accuracy ceiling (core/graph/refinement/ceiling.ts) on random datasets:
 * edges with ids outside their graph, empty graphs, self-loops and repeats, NaN labels and feature
 * rows with NaN must never crash (only CeilingInputError for inputs with nothing to bound), and the
 * figures keep what follows from the definition (Xu et al. 2019; docs/references.md §12):
 * - the ceiling lies between the majority share (one group for all) and 1;
 * - a finer start (features, substructure counts added) refines the stable partition, so the ceiling
 *   never drops and the groups never merge;
 * - node-level, ceiling(L) never drops as L grows (each round refines the colours).
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import type { Dataset } from '../../server/src/core/datasets/model';
import { CeilingInputError, graphCeiling, nodeCeiling, parseAugmentation } from '../../server/src/core/graph/refinement/ceiling';
import { undirectedFromEdges } from '../../server/src/core/graph/structure/undirected';
import { runs } from './fuzz-helpers';

const graphArb = fc.record({
  n: fc.integer({ min: 0, max: 7 }),
  edges: fc.array(fc.tuple(fc.integer({ min: -2, max: 9 }), fc.integer({ min: -2, max: 9 })), { maxLength: 14 }),
  label: fc.oneof(fc.integer({ min: 0, max: 2 }), fc.constant(NaN)),
});

function datasetOf(graphs: Array<{ n: number; edges: Array<[number, number]>; label: number }>, featureSeed: number): Dataset {
  const G = graphs.length;
  const nodeOffsets = new Float64Array(G + 1), edgeOffsets = new Float64Array(G + 1);
  const src: number[] = [], dst: number[] = [];
  graphs.forEach((g, i) => {
    for (const [a, b] of g.edges) { src.push(a); dst.push(b); }
    nodeOffsets[i + 1] = nodeOffsets[i]! + g.n;
    edgeOffsets[i + 1] = src.length;
  });
  const N = nodeOffsets[G]!;
  const x = new Float32Array(N);
  for (let v = 0; v < N; v++) x[v] = (v * 7 + featureSeed) % 5 === 0 ? NaN : (v * 13 + featureSeed) % 3;
  return {
    structureFile: 'f', files: [], layout: 'batch', graphs: G, nodeOffsets, edgeOffsets,
    src: Int32Array.from(src), dst: Int32Array.from(dst),
    nodeFeatures: { file: 'f', tensor: 'x', rows: N, columns: 1, data: x },
    graphLabels: { file: 'f', tensor: 'y', rows: G, columns: 1, data: Float64Array.from(graphs.map((g) => g.label)) },
  };
}

function majorityShare(labels: number[]): number {
  const counts = new Map<number, number>();
  for (const y of labels) if (y === y) counts.set(y, (counts.get(y) ?? 0) + 1);
  const total = [...counts.values()].reduce((a, b) => a + b, 0);
  return total ? Math.max(...counts.values()) / total : 0;
}

describe('ceiling properties', () => {
  it('graph-level: never crashes; bounded by the majority share and 1; finer starts never lower it', () => {
    fc.assert(fc.property(fc.array(graphArb, { minLength: 1, maxLength: 12 }), fc.integer({ min: 0, max: 100 }), (graphs, seed) => {
      const ds = datasetOf(graphs as Array<{ n: number; edges: Array<[number, number]>; label: number }>, seed);
      let base;
      try {
        base = graphCeiling(ds, { with: ['triangles', 'cycles:5'].map(parseAugmentation) });
      } catch (e) {
        if (e instanceof CeilingInputError) return;
        throw e;
      }
      const labelled = graphs.filter((g) => g.label === g.label).length;
      expect(base.labelled).toBe(labelled);
      if (!labelled) { expect(base.ceiling).toBeNull(); return; }
      expect(base.ceiling!).toBeGreaterThanOrEqual(majorityShare(graphs.map((g) => g.label)) - 1e-12);
      expect(base.ceiling!).toBeLessThanOrEqual(1);
      for (const w of base.with!) {
        expect(w.ceiling!).toBeGreaterThanOrEqual(base.ceiling! - 1e-12);
        expect(w.groupCount).toBeGreaterThanOrEqual(base.groupCount);
      }
      const featured = graphCeiling(ds, { features: true });
      expect(featured.ceiling!).toBeGreaterThanOrEqual(base.ceiling! - 1e-12);
      expect(featured.groupCount).toBeGreaterThanOrEqual(base.groupCount);
      // Every graph is in exactly one listed-or-not group: sizes add up when all are listed.
      const all = graphCeiling(ds, { groupLimit: 1e9 });
      expect(all.groups.reduce((a, g) => a + g.size, 0)).toBe(graphs.length);
    }), { numRuns: runs(150) });
  });

  it('node-level: ceiling(L) never drops as L grows, and counts never lower it', () => {
    fc.assert(fc.property(
      fc.integer({ min: 1, max: 14 }),
      fc.array(fc.tuple(fc.nat(13), fc.nat(13)), { maxLength: 30 }),
      fc.array(fc.integer({ min: -1, max: 2 }), { minLength: 14, maxLength: 14 }),
      (n, edges, labels) => {
        const e = edges.filter(([a, b]) => a < n && b < n);
        const g = undirectedFromEdges(n, Int32Array.from(e.map((x) => x[0])), Int32Array.from(e.map((x) => x[1])));
        const cls = Int32Array.from(labels.slice(0, n));
        if (!cls.some((c) => c >= 0)) { expect(() => nodeCeiling(g, { cls, classCount: 3 })).toThrow(CeilingInputError); return; }
        const r = nodeCeiling(g, { cls, classCount: 3, layers: 5 }, { with: [parseAugmentation('cycles:4')] });
        for (let L = 1; L < r.perLayer.length; L++) expect(r.perLayer[L]!.ceiling).toBeGreaterThanOrEqual(r.perLayer[L - 1]!.ceiling - 1e-12);
        r.with![0]!.perLayer!.forEach((l, L) => expect(l.ceiling).toBeGreaterThanOrEqual(r.perLayer[L]!.ceiling - 1e-12));
      },
    ), { numRuns: runs(150) });
  });
});

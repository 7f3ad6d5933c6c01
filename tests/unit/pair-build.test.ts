// The two-thread graph builder (node/pair-build.ts) must return exactly what the one-thread core
// builder returns, and count the same components; when its helper cannot start it must fall back.
// It runs the bundled helper from dist/ (`npm test` builds first). Ground truth for the figures
// themselves is in graph-figures.test.ts (NetworkX/SciPy); this file compares two builders.
import * as path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { pairPlan, runPairStep, sequentialPair, setPairBuilder, sortedCsr, buildSortedPair } from '../../server/src/core/graph/structure/csr';
import { countComponentsPair, rowFigures } from '../../server/src/core/graph/structure/figures';
import { edgeListComponents } from './random';
import { PARALLEL_MIN_EDGES, parallelPair, useParallelPairBuilder } from '../../server/src/node/pair-build';
import { sharedInt32 } from '../../server/src/node/helper-thread';
import { seededRandom } from './random';

const HELPER = path.join(__dirname, '../../dist/helper.js');

function randomGraph(n: number, e: number, seed: number, share: boolean): { src: Int32Array; dst: Int32Array } {
  const rnd = seededRandom(seed);
  const src = share ? sharedInt32(e) : new Int32Array(e), dst = share ? sharedInt32(e) : new Int32Array(e);
  // Clustered ids (many components) plus a few hubs (long rows that take the typed-array sort).
  for (let k = 0; k < e; k++) {
    const block = rnd(n >> 6) << 6;
    src[k] = k % 97 === 0 ? rnd(4) : block + rnd(64);
    dst[k] = Math.min(n - 1, block + rnd(64));
  }
  return { src, dst };
}

function same(a: Int32Array, b: Int32Array): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

afterAll(() => setPairBuilder(null));

describe('two-thread CSR build', () => {
  it('equals the one-thread build and its component count (shared and ordinary inputs)', () => {
    useParallelPairBuilder(HELPER);
    for (const share of [true, false]) {
      const n = 300_000, e = PARALLEL_MIN_EDGES + 12_345;
      const { src, dst } = randomGraph(n, e, share ? 11 : 12, share);
      const par = buildSortedPair(n, src, dst, { components: true, rowFigures: true });
      const seq = sequentialPair(n, src, dst);
      // The row figures, shared between the threads by node ranges, add up to one pass over all rows.
      const rows = rowFigures(seq.fwd, seq.rev, 0, n);
      expect(rows.duplicates).toBeGreaterThan(0);
      expect(rows.asymmetric).toBeGreaterThan(0);
      expect(par.rowFigures ? par.rowFigures() : rows).toEqual(rows);
      if (share) expect(par.rowFigures).toBeTypeOf('function');
      expect(same(par.fwd.indptr, seq.fwd.indptr) && same(par.fwd.indices, seq.fwd.indices)).toBe(true);
      expect(same(par.rev.indptr, seq.rev.indptr) && same(par.rev.indices, seq.rev.indices)).toBe(true);
      // Inputs in shared memory are built with the helper, in shared memory; others on this thread
      // (a copy for the helper would cost more than it saves).
      if (share) {
        expect(par.rev.indices.buffer).toBeInstanceOf(SharedArrayBuffer);
        expect(par.components).toBeTypeOf('function');
      } else {
        expect(par.rev.indices.buffer).not.toBeInstanceOf(SharedArrayBuffer);
      }
      const comps = edgeListComponents(n, src, dst);
      expect(comps).toBeGreaterThan(100);
      expect(countComponentsPair(seq.fwd, seq.rev)).toBe(comps);
      expect(par.components ? par.components() : comps).toBe(comps);
    }
  });

  it('equals the one-thread build above 4M nodes too (the first scatter by buckets, shared between threads)', () => {
    useParallelPairBuilder(HELPER);
    const n = (1 << 22) + 1000, e = PARALLEL_MIN_EDGES + 777;
    const { src, dst } = randomGraph(n, e, 31, true);
    const par = buildSortedPair(n, src, dst, { components: true });
    const f = sortedCsr(n, src, dst), r = sortedCsr(n, dst, src);
    expect(same(par.fwd.indptr, f.indptr) && same(par.fwd.indices, f.indices)).toBe(true);
    expect(same(par.rev.indptr, r.indptr) && same(par.rev.indices, r.indices)).toBe(true);
    expect(par.components!()).toBe(edgeListComponents(n, src, dst));
  });

  it('the one-thread pair (three counting scatters) equals a bucketed sort of each direction', () => {
    // sortedCsr sorts each direction on its own (bucketed counting sort, then every row sorted);
    // the pair builder scatters three times instead. Same rows, same order, on hubs, repeats and
    // empty rows alike.
    for (const [n, e, seed] of [[1, 0, 1], [7, 50, 2], [5000, 40_000, 4], [300_000, 200_000, 5], [(1 << 22) + 5, 100_000, 6]] as const) {
      const { src, dst } = n < 64 ? { src: Int32Array.from({ length: e }, (_, k) => (k * 5) % n), dst: Int32Array.from({ length: e }, (_, k) => (k * 3 + 1) % n) }
        : randomGraph(n, e, seed, false);
      const seq = sequentialPair(n, src, dst);
      const f = sortedCsr(n, src, dst), r = sortedCsr(n, dst, src);
      expect(same(seq.fwd.indptr, f.indptr) && same(seq.fwd.indices, f.indices)).toBe(true);
      expect(same(seq.rev.indptr, r.indptr) && same(seq.rev.indices, r.indices)).toBe(true);
      // Cut into parts (as two threads run it), in any order within a step: the same arrays.
      for (const parts of [2, 3]) {
        const plan = pairPlan(n, src, dst, parts);
        runPairStep(plan, 0, 1);
        runPairStep(plan, 0, 0);
        for (let s = 1; s < 4; s++) for (let p = parts - 1; p >= 0; p--) runPairStep(plan, s, p);
        expect(same(plan.fwdIndptr, f.indptr) && same(plan.fwdIndices, f.indices)).toBe(true);
        expect(same(plan.revIndptr, r.indptr) && same(plan.revIndices, r.indices)).toBe(true);
      }
    }
  });

  it('builds on this thread when the helper bundle is missing', () => {
    useParallelPairBuilder(path.join(__dirname, 'no-such-helper.js'));
    const n = 5000, e = PARALLEL_MIN_EDGES;
    const { src, dst } = randomGraph(n, e, 3, false);
    const par = parallelPair(n, src, dst, { components: true });
    const seq = sequentialPair(n, src, dst);
    expect(par.rev.indices.buffer).not.toBeInstanceOf(SharedArrayBuffer);
    expect(same(par.rev.indices, seq.rev.indices) && same(par.fwd.indices, seq.fwd.indices)).toBe(true);
    expect(par.components).toBeUndefined();
  });
});

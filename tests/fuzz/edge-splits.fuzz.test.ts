/**
 * Property tests for the link-prediction split reading and checks: random pair tensors (any shape,
 * any values: negative, fractional, NaN, huge, beyond the node count), random label vectors and
 * random message graphs only ever give problems and counts, never an exception; and the leak count
 * always equals a plain count of val/test positives found among the message edges.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { checkGraph } from '../../server/src/core/checks/graph-check';
import { guessRole } from '../../server/src/core/checks/roles';
import type { DenseTensor } from '../../server/src/core/formats/types';
import { runs } from './fuzz-helpers';
import { sortedKeys } from '../../server/src/core/splits/edge-splits';

const NAMES = ['train_pos', 'train_neg', 'val_pos_edge_index', 'val_neg_edge_index', 'test_pos', 'test_neg',
  'valid.edge', 'valid.edge_neg', 'test.edge', 'test.edge_neg', 'val.edge_label_index', 'val.edge_label',
  'test.edge_label_index', 'test.edge_label'];

const value = fc.oneof(
  { weight: 6, arbitrary: fc.integer({ min: 0, max: 12 }) },
  { weight: 1, arbitrary: fc.integer({ min: -3, max: 1e9 }) },
  { weight: 1, arbitrary: fc.constantFrom(NaN, Infinity, -Infinity, 0.5, 2 ** 53, -0) },
);

const tensor = fc.record({
  name: fc.constantFrom(...NAMES),
  shape: fc.oneof(
    fc.tuple(fc.constant(2), fc.integer({ min: 0, max: 12 })).map((s) => [...s]),
    fc.tuple(fc.integer({ min: 0, max: 12 }), fc.constant(2)).map((s) => [...s]),
    fc.array(fc.integer({ min: 0, max: 5 }), { minLength: 0, maxLength: 3 }),
  ),
  float: fc.boolean(),
}).chain(({ name, shape, float }) => {
  const size = shape.reduce((a, b) => a * b, 1);
  return fc.array(value, { minLength: size, maxLength: size }).map((vals): DenseTensor => ({
    kind: 'dense', name, dtype: float ? 'float64' : 'int64', shape,
    data: float ? Float64Array.from(vals) : Float64Array.from(vals.map((v) => (Number.isFinite(v) ? Math.trunc(v) : 0))),
  }));
});

const message = fc.array(fc.tuple(fc.integer({ min: 0, max: 12 }), fc.integer({ min: 0, max: 12 })), { maxLength: 30 })
  .map((pairs): DenseTensor => ({
    kind: 'dense', name: 'edge_index', dtype: 'int64', shape: [2, pairs.length],
    data: Int32Array.from([...pairs.map((p) => p[0]), ...pairs.map((p) => p[1])]),
  }));

describe('edge splits: random pair tensors give problems, never a crash', () => {
  it('any pair tensors, labels, node counts and directedness', () => {
    fc.assert(fc.property(message, fc.array(tensor, { maxLength: 6 }), fc.option(fc.integer({ min: 0, max: 20 }), { nil: undefined }),
      fc.option(fc.boolean(), { nil: undefined }), (m, ts, nodes, directed) => {
        const seen = new Set<string>();
        const unique = ts.filter((t) => !seen.has(t.name) && seen.add(t.name));
        const parts = [m, ...unique].map((t) => ({ file: 'f.npz', tensor: t, guess: guessRole(t, 'f.npz') }));
        const c = checkGraph(parts, { ...(nodes !== undefined ? { nodes } : {}), ...(directed !== undefined ? { directed } : {}) });
        for (const p of c.problems) expect(p.problem.count).toBeGreaterThanOrEqual(0);
        if (c.edgeSplits) expect(c.edgeSplits.messageEdges).toBe(m.shape[1]);
      }), { numRuns: runs(300) });
  });

  it('the leak count equals a plain count over the message edges (directed, ids in range)', () => {
    const pairs = fc.array(fc.tuple(fc.integer({ min: 0, max: 9 }), fc.integer({ min: 0, max: 9 })), { maxLength: 20 });
    fc.assert(fc.property(pairs, pairs, (msg, pos) => {
      const edges = new Set(msg.map(([a, b]) => `${a},${b}`));
      const want = pos.filter(([a, b]) => edges.has(`${a},${b}`)).length;
      const t = (name: string, ps: Array<[number, number]>): DenseTensor => ({
        kind: 'dense', name, dtype: 'int64', shape: [2, ps.length], data: Int32Array.from([...ps.map((p) => p[0]), ...ps.map((p) => p[1])]),
      });
      const c = checkGraph([t('edge_index', msg), t('test_pos', pos)].map((x) => ({ file: 'f', tensor: x, guess: guessRole(x, 'f') })),
        { directed: true, nodes: 10 });
      const got = c.problems.filter((p) => p.problem.code === 'leaked-positive-pairs').reduce((a, p) => a + p.problem.count, 0);
      expect(got).toBe(msg.length ? want : 0);
    }), { numRuns: runs(200) });
  });
});

describe('sorted pair keys', () => {
  it('the radix sort gives the typed-array sort (keys up to 2^53, duplicates, above and below its cut-over size)', () => {
    const key = fc.oneof(fc.integer({ min: 0, max: 50 }), fc.integer({ min: 0, max: 2 ** 31 }), fc.maxSafeNat());
    fc.assert(fc.property(fc.array(key, { minLength: 0, maxLength: 6000 }), (ks) => {
      const a = Float64Array.from(ks);
      expect(Array.from(sortedKeys(a))).toEqual(Array.from(a.slice().sort()));
    }), { numRuns: runs(60) });
  });
});

/**
 * Property tests for typed graphs (server/src/core/typed): random typed containers (random types,
 * relations with ids inside and outside each type's range, node tensors of any length, names that
 * are typed or only look it) only ever give problems and figures, never an exception; and the
 * counts equal plain counts from the definitions: per relation the row-0 entries outside the source
 * type's count and the row-1 entries outside the target type's count, duplicate pairs among the
 * in-range entries, self-loops of same-type relations, and the types-forgotten graph's edge count.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { checkSet, type LoadedFile } from '../../server/src/core/checks/check-set';
import { parseTypedName } from '../../server/src/core/typed/recognise';
import type { DenseTensor, Tensor } from '../../server/src/core/formats/types';
import { runs } from './fuzz-helpers';

const TYPES = ['rider', 'dock', 'zone'];

const relation = fc.record({
  source: fc.constantFrom(...TYPES),
  name: fc.constantFrom('rides', 'near', 'in'),
  target: fc.constantFrom(...TYPES),
  pairs: fc.array(fc.tuple(fc.integer({ min: -2, max: 9 }), fc.integer({ min: -2, max: 9 })), { maxLength: 25 }),
});

const ei = (name: string, pairs: Array<[number, number]>): DenseTensor => ({
  kind: 'dense', name, dtype: 'int64', shape: [2, pairs.length], data: Int32Array.from([...pairs.map((p) => p[0]), ...pairs.map((p) => p[1])]),
});

describe('typed graphs: random containers', () => {
  it('counts equal plain counts over the definitions; never a crash', () => {
    fc.assert(fc.property(
      fc.array(relation, { minLength: 1, maxLength: 4 }),
      fc.record({ rider: fc.integer({ min: 0, max: 8 }), dock: fc.integer({ min: 0, max: 8 }), zone: fc.integer({ min: 0, max: 8 }) }),
      fc.array(fc.constantFrom(...TYPES), { maxLength: 3 }),
      (rels, countsByType, withFeatures) => {
        const counts: Record<string, number> = countsByType;
        const seen = new Set<string>();
        const unique = rels.filter((r) => { const k = `${r.source}__${r.name}__${r.target}`; return !seen.has(k) && seen.add(k); });
        const tensors: Tensor[] = unique.map((r) => ei(`${r.source}__${r.name}__${r.target}`, r.pairs));
        const declared = new Set<string>();
        for (const t of TYPES) {
          if (withFeatures.includes(t)) tensors.push({ kind: 'dense', name: `${t}__x`, dtype: 'float32', shape: [counts[t]!, 2], data: new Float32Array(counts[t]! * 2) });
          else if (unique.some((r) => r.source === t || r.target === t)) {
            tensors.push({ kind: 'dense', name: `${t}__num_nodes`, dtype: 'int64', shape: [], data: Int32Array.of(counts[t]!) });
            declared.add(t);
          }
        }
        const file: LoadedFile = { path: 'g.npz', format: 'npz', result: { format: 'npz', tensors, problems: [] } };
        const r = checkSet([file], []);
        const f = r.files[0]!;
        expect(f.typed).toBeDefined();
        let kept = 0;
        for (const rel of unique) {
          const key = `${rel.source}__${rel.name}__${rel.target}`;
          const ns = counts[rel.source]!, nd = counts[rel.target]!;
          const row0 = rel.pairs.filter(([a]) => a < 0 || a >= ns).length;
          const row1 = rel.pairs.filter(([, b]) => b < 0 || b >= nd).length;
          const oor = f.problems.filter((p) => p.code === 'index-out-of-range' && p.relation === key);
          expect(oor.filter((p) => /row 0/.test(p.message)).reduce((a, p) => a + p.count, 0)).toBe(row0);
          expect(oor.filter((p) => /row 1/.test(p.message)).reduce((a, p) => a + p.count, 0)).toBe(row1);
          const inRange = rel.pairs.filter(([a, b]) => a >= 0 && a < ns && b >= 0 && b < nd);
          kept += inRange.length;
          const dup = inRange.length - new Set(inRange.map(([a, b]) => `${a},${b}`)).size;
          expect(f.problems.filter((p) => p.code === 'duplicate-edges' && p.relation === key).reduce((a, p) => a + p.count, 0)).toBe(dup);
          const loops = rel.source === rel.target ? inRange.filter(([a, b]) => a === b).length : 0;
          expect(f.problems.filter((p) => p.code === 'self-loops' && p.relation === key).reduce((a, p) => a + p.count, 0)).toBe(loops);
        }
        const typesSeen = Object.keys(f.typed!.nodeTypes);
        for (const t of typesSeen) expect(f.typed!.nodeTypes[t]).toBe(counts[t]!);
        expect(f.graph!.edges).toBe(kept);
        expect(f.graph!.nodes).toBe(typesSeen.reduce((a, t) => a + counts[t]!, 0));
        for (const p of f.problems) expect(p.count).toBeGreaterThanOrEqual(0);
      }), { numRuns: runs(300) });
  });

  it('any names: parsing never throws, and a file without a typed relation is never typed', () => {
    const seg = fc.oneof(fc.constantFrom('a', 'dock', 'x', 'edge', 'node', '_mapping', 'a,b,c', 'a,b', '', '__', 'edge_index'), fc.string({ maxLength: 6 }));
    const name = fc.array(seg, { minLength: 1, maxLength: 4 }).chain((segs) => fc.constantFrom('.', '__', '/').map((j) => segs.join(j)));
    fc.assert(fc.property(fc.array(name, { maxLength: 6 }), (names) => {
      for (const n of names) parseTypedName(n);
      // Plain 1-D float tensors: never a relation's edge index, so never typed.
      const tensors: Tensor[] = [...new Set(names)].map((n) => ({ kind: 'dense', name: n, dtype: 'float32', shape: [3], data: new Float32Array(3) }));
      const r = checkSet([{ path: 'g.npz', format: 'npz', result: { format: 'npz', tensors, problems: [] } }], []);
      expect(r.files[0]!.typed).toBeUndefined();
    }), { numRuns: runs(300) });
  });
});

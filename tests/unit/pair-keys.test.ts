/**
 * The sorted-pair-key helpers behind the link-prediction checks: the galloping membership walk and
 * the radix sort give exactly what a plain search gives (count and first positions), duplicates,
 * keys beyond 2^32 and sets far larger or smaller than the queries included. Reference: a plain
 * JavaScript Set lookup in the keys' own order (common practice, no outside library needed).
 */
import { describe, expect, it } from 'vitest';
import { memberPositions, sortedKeys } from '../../server/src/core/splits/edge-splits';
import { seededRandom } from '../../server/src/core/random';

function plain(keys: Float64Array, set: Float64Array, keep: number) {
  const s = new Set(set);
  let count = 0;
  const first: number[] = [];
  keys.forEach((k, i) => { if (s.has(k)) { count++; if (first.length < keep) first.push(i); } });
  return { count, first };
}

describe('sorted pair keys', () => {
  const rnd = seededRandom(20261203);
  const cases: Array<[number, number, number]> = [[10, 100, 50], [300, 5000, 1000], [5000, 300, 800], [20000, 200000, 30000], [4000, 4000, 1e12]];
  for (const [nq, ns, range] of cases) {
    it(`${nq} queries against ${ns} keys in 0..${range}`, () => {
      const draw = (m: number) => Float64Array.from({ length: m }, () => Math.floor(rnd() * range));
      const set = sortedKeys(draw(ns));
      for (let i = 1; i < set.length; i++) expect(set[i - 1]! <= set[i]!).toBe(true);
      const keys = draw(nq);
      for (const keep of [0, 3, 20]) expect(memberPositions(keys, set, keep)).toEqual(plain(keys, set, keep));
    });
  }
  it('an empty set or no keys', () => {
    expect(memberPositions(new Float64Array(1000), new Float64Array(0), 5)).toEqual({ count: 0, first: [] });
    expect(memberPositions(new Float64Array(0), Float64Array.of(1, 2), 5)).toEqual({ count: 0, first: [] });
  });
});

/**
 * Seeded whole numbers for test data: rnd(m) is a whole number in [0, m), deterministic per seed.
 * The core's one generator (server/src/core/random.ts); and a reference component count.
 */
export { seededIntegers as seededRandom } from '../../server/src/core/random';

/**
 * Weakly connected components of src[k] → dst[k] by a plain union-find over every entry, the
 * reference the faster counts are compared with (isolated nodes count as components). Values
 * against NetworkX and SciPy are in graph-figures.test.ts.
 */
export function edgeListComponents(n: number, src: ArrayLike<number>, dst: ArrayLike<number>): number {
  const parent = Int32Array.from({ length: n }, (_, i) => i);
  const find = (x: number): number => { while (parent[x] !== x) x = parent[x] = parent[parent[x]!]!; return x; };
  let count = n;
  for (let k = 0; k < src.length; k++) {
    const a = find(src[k]!), b = find(dst[k]!);
    if (a !== b) { parent[Math.max(a, b)] = Math.min(a, b); count--; }
  }
  return count;
}

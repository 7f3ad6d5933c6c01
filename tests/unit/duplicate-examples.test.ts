// duplicateExamples (core/graph/structure/figures.ts) against the definition it implements: an
// entry is a repeat when an earlier entry of the file has the same (u, v) — what NumPy's
// np.unique(u * N + v, return_index=True) leaves out (the first occurrence is kept). The reference
// here is a plain Set walk in file order. Repeats early, only past the first 65,536 entries
// (the look-up-all stretch ends there), and none at all.
import { describe, expect, it } from 'vitest';
import { sequentialPair } from '../../server/src/core/graph/structure/csr';
import { duplicateExamples } from '../../server/src/core/graph/structure/figures';
import { seededRandom } from './random';

function reference(n: number, src: Int32Array, dst: Int32Array, limit: number): number[] {
  const met = new Set<number>();
  const out: number[] = [];
  for (let k = 0; k < src.length && out.length < limit; k++) {
    const key = src[k]! * n + dst[k]!;
    if (met.has(key)) out.push(k);
    else met.add(key);
  }
  return out;
}

describe('duplicateExamples', () => {
  it('finds the first repeats in file order wherever they sit', () => {
    const rnd = seededRandom(21);
    for (const [n, e, repeatFrom] of [[50, 400, 0], [200_000, 150_000, 0], [200_000, 150_000, 100_000], [200_000, 150_000, Infinity]] as const) {
      const src = new Int32Array(e), dst = new Int32Array(e);
      // Distinct pairs (u = k mod n, v from k) unless a repeat of an earlier entry is drawn.
      for (let k = 0; k < e; k++) {
        if (k >= repeatFrom && k > 0 && rnd(10) === 0) { const j = rnd(k); src[k] = src[j]!; dst[k] = dst[j]!; }
        else { src[k] = k % n; dst[k] = Math.floor(k / n) + (k % 7); }
      }
      const { fwd } = sequentialPair(n, src, dst);
      for (const limit of [3, 1000, Number.MAX_SAFE_INTEGER]) {
        const want = reference(n, src, dst, limit);
        expect(duplicateExamples(fwd, src, dst, limit)).toEqual(want);
        if (repeatFrom === Infinity) expect(want).toEqual([]);
        else expect(want.length).toBeGreaterThan(0);
      }
    }
  });
});

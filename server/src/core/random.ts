/**
 * The one seeded pseudo-random generator of the core (node sampling, Lanczos start vectors) and of
 * the tests' generated data: mulberry32, a 32-bit state advanced by a Weyl step (+0x6d2b79f5) and
 * scrambled by two multiply-xorshift rounds. Small, fast, and the same sequence for the same seed
 * on every platform (only 32-bit integer arithmetic). Not for anything that needs secrecy.
 */

/** Uniform numbers in [0, 1) with 32 random bits each; the same sequence for the same seed. */
export function seededRandom(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Whole numbers in [0, m) from `seededRandom(seed)`: next(m). */
export function seededIntegers(seed: number): (m: number) => number {
  const rand = seededRandom(seed);
  return (m: number) => Math.floor(rand() * m);
}

/** Fills `x` with uniform numbers in [-1, 1) drawn from `rand`. */
export function fillSymmetric(rand: () => number, x: Float64Array): void {
  for (let i = 0; i < x.length; i++) x[i] = 2 * rand() - 1;
}

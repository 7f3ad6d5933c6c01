/** A small seeded generator for test data: rnd(m) is a whole number in [0, m). Deterministic per seed. */
export function seededRandom(seed: number): (m: number) => number {
  let s = seed >>> 0;
  return (m: number) => {
    s = (Math.imul(s, 1103515245) + 12345) >>> 0;
    return Math.floor((s / 2 ** 32) * m);
  };
}

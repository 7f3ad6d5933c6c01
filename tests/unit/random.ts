/**
 * Seeded whole numbers for test data: rnd(m) is a whole number in [0, m), deterministic per seed.
 * The core's one generator (server/src/core/random.ts).
 */
export { seededIntegers as seededRandom } from '../../server/src/core/random';

/**
 * Property tests for the pair view (server/src/core/graph/propagation/pair-field.ts) on random small
 * directed multigraphs (self-loops, duplicates, isolated nodes), every sending row, symmetrised or
 * not, with and without self-loops. Each figure is compared with a plain set computation written
 * here from the definitions (the NetworkX reference values are in tests/unit/pair-field.test.ts):
 * per-hop counts from breadth-first distances, the no-self-loop fields as exact-L walk frontiers,
 * union and overlap from the two distance maps, the stored edge from the edge list, and the
 * distance as a breadth-first search over the undirected edges that do not join u and v.
 * Also: a walker reused across many queries gives what a fresh one gives.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { buildSortedPair } from '../../server/src/core/graph/structure/csr';
import { PairFieldWalker, pairField } from '../../server/src/core/graph/propagation/pair-field';
import { runs } from './fuzz-helpers';

interface Case { n: number; edges: Array<[number, number]>; u: number; v: number; L: number; row: 0 | 1; sym: boolean; selfLoops: boolean }

const graphCase = fc.integer({ min: 2, max: 14 }).chain((n) => fc.record({
  n: fc.constant(n),
  edges: fc.array(fc.tuple(fc.integer({ min: 0, max: n - 1 }), fc.integer({ min: 0, max: n - 1 })), { maxLength: 40 }),
  u: fc.integer({ min: 0, max: n - 1 }),
  v: fc.integer({ min: 0, max: n - 1 }),
  L: fc.integer({ min: 0, max: 5 }),
  row: fc.constantFrom(0 as const, 1 as const),
  sym: fc.boolean(),
  selfLoops: fc.boolean(),
})).filter((c) => c.u !== c.v);

/** Senders of x's messages, as the definition reads (sending row, symmetrise). */
function senders(c: Case, x: number): number[] {
  const out: number[] = [];
  for (const [a, b] of c.edges) {
    const fromRow0 = c.row === 0;
    if ((fromRow0 || c.sym) && b === x) out.push(a);
    if ((!fromRow0 || c.sym) && a === x) out.push(b);
  }
  return out;
}

function naiveMembers(c: Case, x: number): Map<number, number> {
  const dist = new Map<number, number>([[x, 0]]);
  let frontier = [x];
  for (let k = 1; k <= c.L; k++) {
    const next: number[] = [];
    for (const y of frontier) for (const w of senders(c, y)) if (!dist.has(w)) { dist.set(w, k); next.push(w); }
    frontier = next;
  }
  if (c.selfLoops) return dist;
  let walk = new Set([x]);
  for (let k = 0; k < c.L; k++) walk = new Set([...walk].flatMap((y) => senders(c, y)));
  return new Map([...dist].filter(([w]) => walk.has(w)));
}

function naiveDistance(c: Case): number | null {
  const dist = new Map<number, number>([[c.u, 0]]);
  const queue = [c.u];
  while (queue.length) {
    const x = queue.shift()!;
    for (const [a, b] of c.edges) {
      if ((a === c.u && b === c.v) || (a === c.v && b === c.u)) continue;
      const w = a === x ? b : b === x ? a : -1;
      if (w >= 0 && !dist.has(w)) { dist.set(w, dist.get(x)! + 1); queue.push(w); }
    }
  }
  return dist.get(c.v) ?? null;
}

function graphOf(c: Case) {
  const src = Int32Array.from(c.edges.map((e) => e[0]));
  const dst = Int32Array.from(c.edges.map((e) => e[1]));
  return { n: c.n, ...buildSortedPair(c.n, src, dst) };
}

describe('pair field against the definitions', () => {
  it('per-hop counts, union, overlap, stored edge and distance', () => {
    fc.assert(fc.property(graphCase, (c) => {
      const p = pairField(graphOf(c), c.u, c.v, c.L, { sendingRow: c.row, symmetrise: c.sym, selfLoops: c.selfLoops });
      const du = naiveMembers(c, c.u), dv = naiveMembers(c, c.v);
      const zeros = () => new Array<number>(c.L + 1).fill(0);
      const want = { u: zeros(), v: zeros(), union: zeros(), overlap: zeros() };
      for (const k of du.values()) want.u[k]!++;
      for (const k of dv.values()) want.v[k]!++;
      for (const w of new Set([...du.keys(), ...dv.keys()])) want.union[Math.min(du.get(w) ?? Infinity, dv.get(w) ?? Infinity)]!++;
      for (const w of du.keys()) if (dv.has(w)) want.overlap[Math.max(du.get(w)!, dv.get(w)!)]!++;
      expect(p.perHop).toEqual(want);
      expect(p.storedEdge).toEqual({ uToV: c.edges.some(([a, b]) => a === c.u && b === c.v), vToU: c.edges.some(([a, b]) => a === c.v && b === c.u) });
      expect(p.distanceWithoutPairEdge).toBe(naiveDistance(c));
      expect([...p.ids].sort((a, b) => a - b)).toEqual([...new Set([...du.keys(), ...dv.keys()])].sort((a, b) => a - b));
    }), { numRuns: runs(400) });
  });

  it('a reused walker answers like a fresh one', () => {
    fc.assert(fc.property(graphCase, fc.array(fc.tuple(fc.nat(), fc.nat(), fc.integer({ min: 0, max: 4 }), fc.boolean()), { minLength: 1, maxLength: 8 }), (c, queries) => {
      const g = graphOf(c);
      const walker = new PairFieldWalker(g);
      for (const [a, b, L, selfLoops] of queries) {
        const u = a % c.n, v = b % c.n;
        if (u === v) continue;
        const opts = { sendingRow: c.row, symmetrise: c.sym, selfLoops };
        const again = walker.field(u, v, L, opts), fresh = pairField(g, u, v, L, opts);
        expect(again.perHop).toEqual(fresh.perHop);
        expect(again.distanceWithoutPairEdge).toBe(fresh.distanceWithoutPairEdge);
        expect(Array.from(again.ids)).toEqual(Array.from(fresh.ids));
      }
    }), { numRuns: runs(200) });
  });
});

/**
 * 1-WL colour refinement, graph comparison and the exact isomorphism test.
 *
 * Sources:
 *  - docs/references.md §5 (classes per round of classic graphs; non-isomorphic pairs 1-WL cannot tell
 *    apart: the 2-regular pairs, decalin vs bicyclopentyl from Sato's 2020 survey, K3,3 vs prism,
 *    Petersen vs pentagonal prism, 4x4 rook's graph vs Shrikhande) and §2.1/§2.3 (karate 27
 *    classes, Frucht and Petersen one class).
 *  - NetworkX 2.8 via tests/fixtures/make_structure_fixtures.py: weisfeiler_lehman_subgraph_hashes
 *    (classes per round and final partition; it starts from degrees, so its iteration i is our
 *    round i + 1), weisfeiler_lehman_graph_hash and is_isomorphic for every pair.
 */
import { describe, expect, it } from 'vitest';
import { seededRandom } from './random';
import fc from 'fast-check';
import { fixture, expected, fromPairs, partitionOf } from './structure-fixtures';
import {
  colourGroups, compareGraphs, compareWl, isomorphic, refineWl, rowColours, sharedColourCount,
} from '../../server/src/core/graph/refinement/wl';
import { AnalysisCancelled, undirectedFromEdges, type UndirectedGraph } from '../../server/src/core/graph/structure/undirected';
import { readEdgeIndexNpy, STRUCTURE_DIR } from './structure-fixtures';
import * as fs from 'node:fs';
import * as path from 'node:path';

describe('1-WL classes per round: docs/references.md §5 table', () => {
  // [V] values in docs/references.md §5 (and §2.1 for karate, §2.3 for Petersen/Frucht).
  const table: [string, number[]][] = [
    ['karate', [1, 11, 27]],
    ['les_miserables', [1, 18, 52]],
    ['davis', [1, 10, 30]],
    ['florentine', [1, 5, 14, 15]],
    ['kite', [1, 6, 7]],
    ['path5', [1, 2, 3]],
    ['path6', [1, 2, 3]],
    ['binary_tree3', [1, 3, 4]],
    ['bull', [1, 3]],
    ['star4', [1, 2]],
    ['petersen', [1]],
    ['frucht', [1]],
  ];
  for (const [name, classes] of table) {
    it(`${name}: ${classes.join(', ')}`, () => {
      const r = refineWl(fixture(name).g);
      expect(r.classesPerRound).toEqual(classes);
      expect(r.stableAfter).toBe(classes.length - 1);
    });
  }

  it('karate: 27 final classes (docs/references.md §2.1: equal to its 27 automorphism orbits)', () => {
    const r = refineWl(fixture('karate').g);
    expect(new Set(r.colours).size).toBe(27);
  });
});

describe('1-WL against NetworkX weisfeiler_lehman_subgraph_hashes (every fixture graph)', () => {
  for (const name of Object.keys(expected.graphs)) {
    it(name, () => {
      const { g, info } = fixture(name);
      const r = refineWl(g);
      expect(r.classesPerRound).toEqual(info.wlClasses);
      // Same partition of the nodes, not only the same number of classes.
      expect(partitionOf(r.colours)).toEqual(info.wlPartition);
    });
  }

  it('karate from the club attribute (one-hot rows): NetworkX with node_attr="club"', () => {
    const { g, info } = fixture('karate');
    const { src } = readEdgeIndexNpy(path.join(STRUCTURE_DIR, 'karate.npy'));
    expect(src.length).toBe(156);
    // karate_club_onehot.npy: float32 34 x 2; read its data after the 128-byte header (NumPy 1.24 layout, docs/references.md §1.1).
    const buf = fs.readFileSync(path.join(STRUCTURE_DIR, 'karate_club_onehot.npy'));
    expect(buf.readUInt16LE(8)).toBe(118);
    const rows = new Float32Array(buf.buffer.slice(buf.byteOffset + 128, buf.byteOffset + buf.length));
    expect(rows.length).toBe(68);
    const start = rowColours(rows, 34, 2);
    expect(start.classes).toBe(2);
    const r = refineWl(g, { initial: start.colours });
    expect(r.classesPerRound).toEqual(info.wlClassesFromClub);
    expect(partitionOf(r.colours)).toEqual(info.wlPartitionFromClub);
  });
});

describe('refinement details', () => {
  it('maxRounds stops early; a stable partition is still confirmed at the cap', () => {
    const { g } = fixture('karate');
    expect(refineWl(g, { maxRounds: 1 })).toMatchObject({ classesPerRound: [1, 11], stableAfter: null });
    expect(refineWl(g, { maxRounds: 2 })).toMatchObject({ classesPerRound: [1, 11, 27], stableAfter: 2 });
    expect(refineWl(g, { maxRounds: 0 })).toMatchObject({ classesPerRound: [1], stableAfter: null });
    expect(refineWl(fixture('petersen').g, { maxRounds: 0 })).toMatchObject({ classesPerRound: [1], stableAfter: 0 });
  });

  it('colours do not depend on node numbering (karate vs its relabelled copy from NetworkX)', () => {
    const a = fixture('karate'), b = fixture('karate_relabelled');
    const perm = b.info.permutation!;
    const ca = refineWl(a.g).colours, cb = refineWl(b.g).colours;
    for (let v = 0; v < 34; v++) expect(cb[perm[v]!]).toBe(ca[v]);
  });

  it('canonical colours on a graph with tens of thousands of classes (the radix-ordered path)', () => {
    // Invariance under relabelling is what the canonical order is for; above 4,096 classes the
    // order comes from radix passes plus tie-breaking instead of one comparison sort.
    const rnd = seededRandom(21);
    const n = 30_000;
    const pairs: [number, number][] = [];
    for (let k = 0; k < 2 * n; k++) pairs.push([rnd(n), rnd(n)]);
    const perm = Array.from({ length: n }, (_, i) => i);
    for (let i = n - 1; i > 0; i--) { const j = rnd(i + 1); [perm[i], perm[j]] = [perm[j]!, perm[i]!]; }
    const a = refineWl(fromPairs(n, pairs));
    const b = refineWl(fromPairs(n, pairs.map(([u, v]) => [perm[u]!, perm[v]!] as [number, number])));
    expect(a.classesPerRound.at(-1)).toBeGreaterThan(4096);
    expect(b.classesPerRound).toEqual(a.classesPerRound);
    for (let v = 0; v < n; v++) if (b.colours[perm[v]!] !== a.colours[v]) throw new Error(`node ${v}: ${b.colours[perm[v]!]} vs ${a.colours[v]}`);
  });

  it('edge direction, duplicates and self-loops do not matter (undirected view)', () => {
    const { src, dst, info } = fixture('florentine');
    // Keep one direction only, then add a self-loop and a duplicate.
    const keep: number[] = [];
    for (let k = 0; k < src.length; k++) if (src[k]! < dst[k]!) keep.push(k);
    const s = Int32Array.from([...keep.map((k) => src[k]!), 3, src[0]!]);
    const d = Int32Array.from([...keep.map((k) => dst[k]!), 3, dst[0]!]);
    const r = refineWl(undirectedFromEdges(info.n, s, d));
    expect(r.classesPerRound).toEqual([1, 5, 14, 15]);
  });

  it('rowColours: equal rows share a colour, compared exactly; order set by contents', () => {
    const rows = Float64Array.from([1, 2, 0, 5, 1, 2, -0, 5, NaN, 1, NaN, 1, 1, 2.0000000001, 0, 0]);
    const { colours, classes } = rowColours(rows, 8, 2);
    expect(classes).toBe(5);
    expect(colours[0]).toBe(colours[2]);      // [1,2] twice
    expect(colours[1]).toBe(colours[3]);      // [0,5] and [-0,5]
    expect(colours[4]).toBe(colours[5]);      // NaN rows
    expect(colours[6]).not.toBe(colours[0]);  // 2.0000000001 ≠ 2
    // Reversing the rows permutes the colours the same way.
    const rev = new Float64Array(16);
    for (let v = 0; v < 8; v++) { rev[2 * (7 - v)] = rows[2 * v]!; rev[2 * (7 - v) + 1] = rows[2 * v + 1]!; }
    const back = rowColours(rev, 8, 2).colours;
    for (let v = 0; v < 8; v++) expect(back[7 - v]).toBe(colours[v]);
  });

  it('groups of look-alike nodes: largest first, matching the NetworkX partition', () => {
    const { g, info } = fixture('karate');
    const r = refineWl(g);
    const groups = colourGroups(r.colours);
    const fromNx = new Map<number, number[]>();
    info.wlPartition.forEach((rep, v) => fromNx.set(rep, [...(fromNx.get(rep) ?? []), v]));
    const nxGroups = [...fromNx.values()].filter((x) => x.length >= 2)
      .sort((x, y) => y.length - x.length || x[0]! - y[0]!);
    expect(groups.map((x) => x.nodes)).toEqual(nxGroups);
    expect(sharedColourCount(r.colours)).toBe(nxGroups.reduce((s, x) => s + x.length, 0));
    expect(groups[0]!.size).toBeGreaterThanOrEqual(groups[groups.length - 1]!.size);
    expect(colourGroups(r.colours, { limit: 2, maxMembers: 1 }).map((x) => x.nodes.length)).toEqual([1, 1]);
  });

  it('empty graph and cancellation', () => {
    expect(refineWl(fromPairs(0, []))).toMatchObject({ classesPerRound: [0], stableAfter: 0 });
    expect(refineWl(fromPairs(3, []))).toMatchObject({ classesPerRound: [1], stableAfter: 0 });
    expect(() => refineWl(fixture('karate').g, { cancel: { isCancellationRequested: true } })).toThrow(AnalysisCancelled);
  });
});

describe('comparing graphs', () => {
  // docs/references.md §5, pairs table: non-isomorphic, and 1-WL cannot tell them apart.
  const pairs: [string, string, number[]][] = [
    ['two_k3', 'cycle6', [1]],
    ['c3_c4', 'cycle7', [1]],
    ['decalin', 'bicyclopentyl', [1, 2, 3]],
    ['k33', 'prism3', [1]],
    ['petersen', 'prism5', [1]],
    ['rook4', 'shrikhande', [1]],
  ];
  for (const [a, b, joint] of pairs) {
    it(`${a} vs ${b}: indistinguishable by 1-WL, not isomorphic`, () => {
      const ga = fixture(a).g, gb = fixture(b).g;
      const r = compareGraphs(ga, gb);
      expect(r.distinguishable).toBe(false);
      expect(r.complete).toBe(true);
      expect(r.jointClassesPerRound).toEqual(joint);
      expect(r.roundsUsed).toBe(joint.length - 1);
      expect(r.isomorphic).toBe(false);
    });
  }

  it('karate vs a relabelled copy (edges shuffled too): isomorphic', () => {
    const r = compareGraphs(fixture('karate').g, fixture('karate_relabelled').g);
    expect(r).toMatchObject({ distinguishable: false, isomorphic: true, roundsUsed: 2 });
  });

  it('every pair agrees with NetworkX (weisfeiler_lehman_graph_hash equality, is_isomorphic)', () => {
    expect(expected.pairs.length).toBeGreaterThanOrEqual(12);
    for (const p of expected.pairs) {
      const r = compareGraphs(fixture(p.a).g, fixture(p.b).g);
      expect({ pair: `${p.a}/${p.b}`, d: r.distinguishable, iso: r.isomorphic })
        .toEqual({ pair: `${p.a}/${p.b}`, d: !p.wlHashEqual, iso: p.isomorphic });
    }
  });

  it('distinguishable graphs: the round where the histograms first differ', () => {
    // Different node counts differ at round 0.
    expect(compareWl(fixture('petersen').g, fixture('frucht').g)).toMatchObject({ distinguishable: true, roundsUsed: 0 });
    // P5 vs a star K1,4 (both 5 nodes, 4 edges): degree histograms differ at round 1.
    expect(compareWl(fixture('path5').g, fixture('star4').g)).toMatchObject({ distinguishable: true, roundsUsed: 1 });
    // A 6-cycle with a chord 0-3 vs with a chord 0-2: the same degrees, different neighbour degrees at round 2.
    const c6 = [[0, 1], [1, 2], [2, 3], [3, 4], [4, 5], [5, 0]] as const;
    const r = compareGraphs(fromPairs(6, [...c6, [0, 3]]), fromPairs(6, [...c6, [0, 2]]));
    expect(r).toMatchObject({ distinguishable: true, roundsUsed: 2, isomorphic: false });
    // --rounds caps the comparison.
    expect(compareWl(fixture('decalin').g, fixture('bicyclopentyl').g, { maxRounds: 1 }))
      .toMatchObject({ distinguishable: false, complete: false, roundsUsed: 1 });
  });

  it('isomorphism: null beyond maxNodes or budget; false on edge-count mismatch at any size', () => {
    const a = fixture('regular4_c').g, b = fixture('regular4_c_relabelled').g;
    expect(isomorphic(a, b)).toBe(true);
    expect(isomorphic(a, b, { maxNodes: 59 })).toBeNull();
    expect(isomorphic(fixture('rook4').g, fixture('shrikhande').g, { budget: 1 })).toBeNull();
    const big = fromPairs(3000, []), bigger = fromPairs(3000, [[0, 1]]);
    expect(isomorphic(big, bigger)).toBe(false);
    expect(isomorphic(big, fromPairs(3000, []))).toBeNull();
    expect(isomorphic(fromPairs(0, []), fromPairs(0, []))).toBe(true);
  });
});

// ------------------------------------------------------------------------------------------------
// Properties

const graphArb = fc.integer({ min: 1, max: 24 }).chain((n) =>
  fc.tuple(
    fc.constant(n),
    fc.array(fc.tuple(fc.nat(n - 1), fc.nat(n - 1)), { maxLength: 3 * n }),
    fc.shuffledSubarray([...Array(n).keys()], { minLength: n, maxLength: n }),
  ));

function relabel(n: number, edges: [number, number][], perm: number[]): UndirectedGraph {
  return fromPairs(n, edges.map(([u, v]) => [perm[u]!, perm[v]!] as [number, number]).reverse());
}

/** Brute force over all n! bijections (n ≤ 6): the definition of isomorphism, nothing more. */
function bruteIsomorphic(a: UndirectedGraph, b: UndirectedGraph): boolean {
  const n = a.n;
  if (n !== b.n || a.indices.length !== b.indices.length) return false;
  const adjB = new Set<number>();
  for (let u = 0; u < n; u++) for (let p = b.indptr[u]!; p < b.indptr[u + 1]!; p++) adjB.add(u * n + b.indices[p]!);
  const perm = [...Array(n).keys()];
  const used = new Array<boolean>(n).fill(false);
  const map: number[] = [];
  const tryAll = (i: number): boolean => {
    if (i === n) {
      for (let u = 0; u < n; u++) for (let p = a.indptr[u]!; p < a.indptr[u + 1]!; p++) if (!adjB.has(map[u]! * n + map[a.indices[p]!]!)) return false;
      return true;
    }
    for (const c of perm) {
      if (used[c]) continue;
      used[c] = true; map[i] = c;
      if (tryAll(i + 1)) return true;
      used[c] = false;
    }
    return false;
  };
  return tryAll(0);
}

describe('properties (fast-check)', () => {
  it('a random graph and a random relabelling: never 1-WL-distinguishable, always isomorphic', () => {
    fc.assert(fc.property(graphArb, ([n, edges, perm]) => {
      const a = fromPairs(n, edges), b = relabel(n, edges, perm);
      const r = compareGraphs(a, b);
      expect(r.distinguishable).toBe(false);
      expect(r.isomorphic).toBe(true);
      // Colours are canonical: node v of a and node perm[v] of b get the same colour.
      const ca = refineWl(a).colours, cb = refineWl(b).colours;
      for (let v = 0; v < n; v++) expect(cb[perm[v]!]).toBe(ca[v]);
    }), { numRuns: 200 });
  });

  it('the isomorphism test agrees with brute force on small random pairs', () => {
    const small = fc.integer({ min: 1, max: 6 }).chain((n) => fc.tuple(
      fc.constant(n),
      fc.array(fc.tuple(fc.nat(n - 1), fc.nat(n - 1)), { maxLength: 2 * n }),
      fc.array(fc.tuple(fc.nat(n - 1), fc.nat(n - 1)), { maxLength: 2 * n }),
    ));
    fc.assert(fc.property(small, ([n, e1, e2]) => {
      const a = fromPairs(n, e1), b = fromPairs(n, e2);
      expect(isomorphic(a, b)).toBe(bruteIsomorphic(a, b));
      // 1-WL-distinguishable graphs are never isomorphic.
      if (compareWl(a, b).distinguishable) expect(bruteIsomorphic(a, b)).toBe(false);
    }), { numRuns: 400 });
  });
});

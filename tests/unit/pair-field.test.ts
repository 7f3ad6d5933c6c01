/**
 * The pair view of the receptive field (server/src/core/graph/propagation/pair-field.ts) and
 * `hopscope field --pair`. Reference values: tests/fixtures/make_pair_fixtures.py →
 * tests/fixtures/pair/expected.json, all computed by NetworkX 2.8 —
 * per-hop counts from networkx.single_source_shortest_path_length with cutoff L (on G.reverse()
 * for sending row 0, on G for row 1, on the undirected simple graph when symmetrised), union and
 * overlap from those distance dicts, the no-self-loop frontiers from networkx successors, the stored
 * edge from DiGraph.has_edge, and the distance from networkx.shortest_path_length on a copy of the
 * undirected graph with the pair's edge removed. Graphs: Zachary's karate club
 * (networkx.karate_club_graph) and the random directed multigraph of make_analysis_fixtures.py.
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { main } from '../../server/src/cli';
import { fixtureGraph, ANALYSIS_DIR, undirected, path_ } from './analysis-fixtures';
import { PairFieldWalker, pairField } from '../../server/src/core/graph/propagation/pair-field';
import { AnalysisCancelled } from '../../server/src/core/cancel';
import { GraphStore } from '../../server/src/node/graph-store';

const expected = JSON.parse(fs.readFileSync(path.join(__dirname, '../fixtures/pair/expected.json'), 'utf8'));
const GRAPHS = path.join(__dirname, '../fixtures/graphs');
const KARATE = path.join(ANALYSIS_DIR, 'karate/edge_index.npy');
const DIRECTED = path.join(ANALYSIS_DIR, 'directed/edge_index.npy');

type Mode = 'row0' | 'row1' | 'sym';
const modeOptions = (m: Mode) => (m === 'sym' ? { symmetrise: true } : { sendingRow: (m === 'row0' ? 0 : 1) as 0 | 1 });
const sum = (a: number[]) => a.reduce((x, y) => x + y, 0);

function run(argv: string[]): { code: number; out: string; err: string } {
  let out = '', err = '';
  const code = main(argv, { out: (s) => { out += s; }, err: (s) => { err += s; }, color: false });
  return { code, out, err };
}

describe('PairFieldWalker against NetworkX', () => {
  for (const name of ['karate', 'directed'] as const) {
    it(`${name}: per-hop counts of each end, union and overlap, every sending row, with and without self-loops`, () => {
      const g = fixtureGraph(name);
      const walker = new PairFieldWalker(g);
      let checked = 0;
      for (const pair of expected[name].pairs) {
        for (const [L, modes] of Object.entries<any>(pair.perHop)) {
          for (const mode of ['row0', 'row1', 'sym'] as Mode[]) {
            for (const selfLoops of [true, false]) {
              const want = modes[mode][selfLoops ? 'selfLoops' : 'noSelfLoops'];
              const p = walker.field(pair.u, pair.v, Number(L), { ...modeOptions(mode), selfLoops });
              expect(p.perHop, `${name} ${pair.u},${pair.v} L=${L} ${mode} selfLoops=${selfLoops}`).toEqual(want);
              expect(p.total).toEqual({ u: sum(want.u), v: sum(want.v), union: sum(want.union), overlap: sum(want.overlap) });
              // The drawn union: every member once, the two ends first, distances consistent with the counts.
              expect(p.ids.length).toBe(p.total.union);
              expect(new Set(p.ids).size).toBe(p.ids.length);
              let both = 0;
              for (let i = 0; i < p.ids.length; i++) if (p.hopsU[i]! >= 0 && p.hopsV[i]! >= 0) both++;
              expect(both).toBe(p.total.overlap);
              checked++;
            }
          }
        }
      }
      expect(checked).toBeGreaterThan(40);
    });

    it(`${name}: stored pair edge and distance without it`, () => {
      const g = fixtureGraph(name);
      for (const pair of expected[name].pairs) {
        const p = pairField(g, pair.u, pair.v, 1);
        expect(p.storedEdge).toEqual(pair.storedEdge);
        expect(p.distanceWithoutPairEdge).toBe(pair.distanceWithoutPairEdge);
      }
    });
  }

  it('karate 0,1 (an edge, both directions stored): carried both ways; the union at L=1 starts with both ends', () => {
    const p = pairField(fixtureGraph('karate'), 0, 1, 1, { symmetrise: true });
    expect(p.carries).toEqual({ uToV: true, vToU: true });
    expect(Array.from(p.ids.subarray(0, 2))).toEqual([0, 1]);
    expect(p.hopsU[1]).toBe(1); // node 1 sits in node 0's field at hop 1: the edge is visible
  });

  it('directed 119 → 3 (one-way): carried 119 → 3 with sending row 0, 3 → 119 with row 1', () => {
    const g = fixtureGraph('directed');
    expect(pairField(g, 119, 3, 1, { sendingRow: 0 }).carries).toEqual({ uToV: true, vToU: false });
    expect(pairField(g, 119, 3, 1, { sendingRow: 1 }).carries).toEqual({ uToV: false, vToU: true });
    expect(pairField(g, 3, 119, 1, { sendingRow: 0 }).carries).toEqual({ uToV: false, vToU: true });
  });

  it('refuses bad ids and stops when cancelled', () => {
    const g = fixtureGraph('karate');
    expect(() => pairField(g, 0, 34, 1)).toThrow(RangeError);
    expect(() => pairField(g, -1, 3, 1)).toThrow(RangeError);
    expect(() => pairField(g, 0, 3, -1)).toThrow(RangeError);
    // The path graph P_n: the ends are n - 1 hops apart (by definition); the distance search looks at
    // the token between chunks of 65536 edge scans, and the walker stays usable after a cancel.
    const n = 200_000;
    const w = new PairFieldWalker(undirected(n, path_(n)));
    expect(() => w.field(0, n - 1, 1, { cancel: { isCancellationRequested: true } })).toThrow(AnalysisCancelled);
    const p = w.field(0, n - 1, 1);
    expect(p.distanceWithoutPairEdge).toBe(n - 1);
    expect(p.perHop).toEqual({ u: [1, 1], v: [1, 1], union: [2, 2], overlap: [0, 0] });
    expect(w.field(1, 2, 1).distanceWithoutPairEdge).toBeNull(); // the path's edge 1-2 is a bridge
  });
});

describe('hopscope field --pair', () => {
  it('--json: the documented keys and the NetworkX counts (karate 0,33, 2 layers, symmetrised)', () => {
    const r = run(['field', KARATE, '--pair', '0,33', '--layers', '2', '--symmetrise', '--json']);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(Object.keys(j)).toEqual(['pair', 'layers', 'sendingRow', 'symmetrised', 'perHop', 'total', 'coverage', 'pairEdge', 'distanceWithoutPairEdge']);
    const want = expected.karate.pairs[1];
    expect(j.pair).toEqual([0, 33]);
    expect(j.perHop).toEqual(want.perHop['2'].sym.selfLoops);
    expect(j.total.union).toBe(sum(want.perHop['2'].sym.selfLoops.union));
    expect(j.coverage).toBe(j.total.union / 34);
    expect(j.pairEdge).toEqual({ uToV: false, vToU: false, vHearsU: false, uHearsV: false });
    expect(j.distanceWithoutPairEdge).toBe(want.distanceWithoutPairEdge);
  });

  it('--sending-row on the directed graph: NetworkX counts of G.reverse() and G; the one-way edge 119 → 3', () => {
    const want = expected.directed.pairs[0];
    for (const row of [0, 1]) {
      const r = run(['field', DIRECTED, '--pair', '119,3', '--layers', '4', '--sending-row', String(row), '--json']);
      expect(r.code).toBe(0);
      const j = JSON.parse(r.out);
      expect(j.perHop).toEqual(want.perHop['4'][`row${row}`].selfLoops);
      expect(j.pairEdge).toEqual({ uToV: true, vToU: false, vHearsU: row === 0, uHearsV: row === 1 });
      expect(j.distanceWithoutPairEdge).toBe(4);
    }
    const iso = JSON.parse(run(['field', DIRECTED, '--pair', '52,0', '--layers', '1', '--json']).out);
    expect(iso.distanceWithoutPairEdge).toBeNull();
  });

  it('text: a per-hop table, the leak sentence and the distance', () => {
    const leak = run(['field', KARATE, '--pair', '16,5', '--layers', '2']);
    expect(leak.code).toBe(0);
    expect(leak.out).toMatch(/hop\s+node 16\s+node 5\s+union\s+in both/);
    const want = expected.karate.pairs[2].perHop['2'].row0.selfLoops;
    expect(leak.out).toContain(`    1   ${String(want.u[1]).padStart(9)}   ${String(want.v[1]).padStart(9)}   ${String(want.union[1]).padStart(9)}   ${String(want.overlap[1]).padStart(7)}`);
    expect(leak.out).toMatch(/Pair edge in the message graph: 16 → 5 \(row 0 = 16, row 1 = 5\) and 5 → 16/);
    expect(leak.out).toMatch(/Distance without the pair's edge: 2 hops/);
    const clean = run(['field', DIRECTED, '--pair', '52,0', '--layers', '1']);
    expect(clean.out).toMatch(/No edge between node 52 and node 0/);
    expect(clean.out).toMatch(/unreachable/);
  });

  it('1-based karate.mtx (scipy.io.mmwrite): ids stay 1-based in and out', () => {
    const j = JSON.parse(run(['field', path.join(GRAPHS, 'karate.mtx'), '--pair', '1,34', '--layers', '2', '--symmetrise', '--json']).out);
    expect(j.pair).toEqual([1, 34]);
    expect(j.perHop).toEqual(expected.karate.pairs[1].perHop['2'].sym.selfLoops);
    const out = run(['field', path.join(GRAPHS, 'karate.mtx'), '--pair', '0,5', '--layers', '2']);
    expect(out.code).toBe(2);
    expect(out.err).toMatch(/--pair: node 0 is out of range: .* \(ids 1\.\.34\)/);
  });

  it.each([
    [['--pair', '0,33', '--node', '0', '--layers', '2'], /give either --node or --pair, not both/],
    [['--pair', '0;33', '--layers', '2'], /--pair must be two node ids joined by a comma/],
    [['--pair', '0,33,2', '--layers', '2'], /--pair must be two node ids joined by a comma/],
    [['--pair', '0,-3', '--layers', '2'], /--pair takes node ids \(0 or more\), got "-3"/],
    [['--pair', '0,x', '--layers', '2'], /--pair must be a non-negative whole number, got "x"/],
    [['--pair', '4,4', '--layers', '2'], /--pair needs two different nodes, got 4 twice/],
    [['--pair', '0,33'], /--layers is required/],
    [['--pair', '0,33', '--layers', '2', '--top', '3'], /--top applies to --node only/],
    [['--pair', '0,33', '--layers', '2', '--curve'], /--curve applies to --node only/],
    [['--pair', '0,34', '--layers', '2'], /--pair: node 34 is out of range/],
  ])('usage error %#: exit 2 with our message', (args, message) => {
    const r = run(['field', KARATE, ...(args as string[])]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(message as RegExp);
    expect(r.out).toBe('');
  });
});

describe('the worker table entry pairField (GraphStore → AnalysisService)', () => {
  it('karate 16,5 (an edge): NetworkX counts, the stored edge, the drawing with the pair edge as (0, 1)', () => {
    const store = new GraphStore({});
    const r = store.pairField({ path: KARATE, u: 16, v: 5, layers: 2, symmetrise: true });
    if ('error' in r) throw new Error(r.error);
    const want = expected.karate.pairs[2];
    expect(r.perHop).toEqual(want.perHop['2'].sym.selfLoops);
    expect(r.pairEdge).toEqual({ uToV: true, vToU: true, vHearsU: true, uHearsV: true });
    expect(r.distanceWithoutPairEdge).toBe(want.distanceWithoutPairEdge);
    expect(r.ids.slice(0, 2)).toEqual([16, 5]);
    expect(r.ids.length).toBe(r.total.union);
    expect(r.sampled).toBe(false);
    // The pair's own edge is among the drawn edges, between positions 0 and 1, both ways.
    const k = r.edges.findIndex((a, i) => i % 2 === 0 && a === 0 && r.edges[i + 1] === 1);
    expect(k).toBeGreaterThanOrEqual(0);
    expect(r.edgeDirs[k / 2]).toBe(3);
    // Without self-loops: the NetworkX frontier counts.
    const nl = store.pairField({ path: KARATE, u: 16, v: 5, layers: 2, symmetrise: true, selfLoops: false });
    if ('error' in nl) throw new Error(nl.error);
    expect(nl.perHop).toEqual(want.perHop['2'].sym.noSelfLoops);
  });

  it('the drawing cap keeps the nearest members; bad ends are sentences, not exceptions', () => {
    const store = new GraphStore({});
    const r = store.pairField({ path: KARATE, u: 0, v: 33, layers: 3, symmetrise: true, maxNodes: 10 });
    if ('error' in r) throw new Error(r.error);
    expect(r.ids.length).toBe(10);
    expect(r.sampled).toBe(true);
    const near = r.ids.map((_, i) => Math.min(...[r.hopsU[i]!, r.hopsV[i]!].filter((h) => h >= 0)));
    expect(near.slice(2)).toEqual([...near.slice(2)].sort((a, b) => a - b));
    expect(store.pairField({ path: KARATE, u: 0, v: 34, layers: 1 })).toEqual({ error: 'Node 34 is not in edge_index.npy: its ids run from 0 to 33.' });
    expect(store.pairField({ path: KARATE, u: 3, v: 3, layers: 1 })).toEqual({ error: 'A pair needs two different nodes; both ends are 3.' });
  });
});

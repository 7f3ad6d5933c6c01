/**
 * The receptive-field panel's payloads (server/src/core/graph/field-view.ts, structure-view.ts,
 * server/src/node/analysis-service.ts), checked against values from outside Hopscope:
 * - karate club field sizes 1, 17, 26 (node 0), 1, 18, 24, 33 (node 33), 1, 3, 6, 18 (node 16):
 *   Zachary 1977 via networkx.karate_club_graph 2.8.8, docs/references.md §2.1;
 * - hop distances and the drawn edges against a plain breadth-first search written here over the
 *   raw edge list of the same file;
 * - influence rows of Â^L and coverage-curve percentiles computed by NumPy / NetworkX
 *   (tests/fixtures/analysis/expected.json, written by make_analysis_fixtures.py);
 * - Dirichlet energies of the karate degree vector (docs/references.md §8, same expected.json);
 * - 1-WL: karate 1, 11, 27 classes and the NetworkX partition (docs/references.md §5,
 *   tests/fixtures/structure/expected.json);
 * - curvature of karate edges (0,1), (0,31), (32,33), (0,11) and the single bridge (0,11)
 *   (docs/references.md §6, networkx.bridges);
 * - no self-loops: walks of exactly L steps on small paths, worked by hand below.
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { AnalysisService } from '../../server/src/node/analysis-service';
import { FieldAnalyzer, hash32, plainPropagationRow } from '../../server/src/core/graph/field-view';
import { StructureAnalyzer } from '../../server/src/core/graph/structure-view';
import { edgeCurvature } from '../../server/src/core/graph/curvature/curvature';
import { buildSortedPair } from '../../server/src/core/graph/structure/csr';
import { simpleUndirected } from '../../server/src/core/graph/structure/simple-undirected';
import type { FieldViewPayload } from '../../common/protocol';
import { analysisExpected, ANALYSIS_DIR, fixtureGraph, path_, readTensor, undirected } from './analysis-fixtures';
import { expected as structureExpected, fixture as structureFixture } from './structure-fixtures';

const KARATE = path.join(__dirname, '../fixtures/graphs/karate.npy');
const KARATE_WITH_X = path.join(ANALYSIS_DIR, 'karate/edge_index.npy');
const SPARSE = path.join(ANALYSIS_DIR, 'sparse/edge_index.npy');

/** The raw edge list of a 2 x E .npy edge index. */
function edgeList(file: string): { src: number[]; dst: number[] } {
  const t = readTensor(file);
  const e = t.shape[1]!;
  return { src: Array.from(t.data.subarray(0, e)), dst: Array.from(t.data.subarray(e, 2 * e)) };
}

/** Plain BFS over "v hears from u when the file has u → v" (row 0 sends), or both ways. */
function plainBfs(file: string, v: number, layers: number, both = false): Map<number, number> {
  const { src, dst } = edgeList(file);
  const dist = new Map<number, number>([[v, 0]]);
  let frontier = [v];
  for (let k = 1; k <= layers; k++) {
    const next: number[] = [];
    for (let i = 0; i < src.length; i++) {
      const pairs: Array<[number, number]> = [[src[i]!, dst[i]!]];
      if (both) pairs.push([dst[i]!, src[i]!]);
      for (const [s, d] of pairs) {
        if (frontier.includes(d) && !dist.has(s)) { dist.set(s, k); next.push(s); }
      }
    }
    frontier = next;
  }
  return dist;
}

function field(svc: AnalysisService, file: string, node: number, layers: number, extra: Record<string, unknown> = {}): FieldViewPayload {
  const r = svc.field(file, { node, layers, ...extra });
  if ('error' in r) throw new Error(r.error);
  return r;
}

const pairKey = (a: number, b: number) => (a < b ? `${a}-${b}` : `${b}-${a}`);

describe('field payload: karate club', () => {
  const svc = new AnalysisService();

  it('node 0, L = 2: per-hop counts 1, 16, 9 (sizes 1, 17, 26)', () => {
    const f = field(svc, KARATE, 0, 2);
    expect(f.perHop).toEqual([1, 16, 9]);
    expect(f.total).toBe(26);
    expect(f.coverage).toBeCloseTo(26 / 34, 12);
    expect(f.graphNodes).toBe(34);
    expect(f.shown).toBe(26);
    expect(f.sampled).toBe(false);
    expect(f.ids[0]).toBe(0);
    expect(f.centreInField).toBe(true);
  });

  it('other nodes and depths match docs/references.md §2.1', () => {
    const cum = (xs: number[]) => xs.map((_, k) => xs.slice(0, k + 1).reduce((a, b) => a + b, 0));
    expect(cum(field(svc, KARATE, 33, 3).perHop)).toEqual([1, 18, 24, 33]);
    expect(cum(field(svc, KARATE, 16, 3).perHop)).toEqual([1, 3, 6, 18]);
    expect(cum(field(svc, KARATE, 11, 5).perHop)).toEqual([1, 2, 17, 26, 34, 34]);
  });

  it('drawn nodes and hops equal a plain BFS; drawn edges are exactly the induced subgraph', () => {
    for (const [v, L] of [[0, 2], [16, 3], [33, 1], [5, 4]] as const) {
      const f = field(svc, KARATE, v, L);
      const dist = plainBfs(KARATE, v, L);
      expect(new Map(f.ids.map((u, i) => [u, f.hops[i]!]))).toEqual(dist);
      // Centre first, then by hop, then id.
      const order = [...f.ids.keys()].slice(1).sort((a, b) => f.hops[a]! - f.hops[b]! || f.ids[a]! - f.ids[b]!);
      expect(order).toEqual([...f.ids.keys()].slice(1));
      const { src, dst } = edgeList(KARATE);
      const drawn = new Set(f.ids);
      const induced = new Set<string>();
      src.forEach((s, i) => { if (s !== dst[i] && drawn.has(s) && drawn.has(dst[i]!)) induced.add(pairKey(s, dst[i]!)); });
      const got = new Set<string>();
      for (let e = 0; e < f.edges.length; e += 2) {
        expect(f.edges[e]!).toBeLessThan(f.edges[e + 1]!);
        got.add(pairKey(f.ids[f.edges[e]!]!, f.ids[f.edges[e + 1]!]!));
      }
      expect(f.edges.length / 2).toBe(got.size); // each pair once
      expect(got).toEqual(induced);
      // karate is stored in both directions: every drawn edge carries messages both ways
      expect(new Set(f.edgeDirs)).toEqual(new Set(got.size ? [3] : []));
    }
  });

  it('the cap draws a deterministic sample and says how many of how many', () => {
    const a = field(svc, KARATE, 0, 2, { maxNodes: 10 });
    // Water-filling of 9 places over hops of 16 and 9 nodes: 4 each, the leftover place to hop 1.
    expect(a.shownPerHop).toEqual([1, 5, 4]);
    expect(a.shown).toBe(10);
    expect(a.total).toBe(26);
    expect(a.sampled).toBe(true);
    expect(a.perHop).toEqual([1, 16, 9]);
    // The same answer from a fresh service (no shared state) and after other queries.
    const other = new AnalysisService();
    field(other, KARATE, 33, 4, { maxNodes: 12 });
    const b = field(other, KARATE, 0, 2, { maxNodes: 10 });
    expect(b.ids).toEqual(a.ids);
    expect(b.edges).toEqual(a.edges);
    // Every drawn node is in the field, at its BFS distance.
    const dist = plainBfs(KARATE, 0, 2);
    a.ids.forEach((u, i) => expect(dist.get(u)).toBe(a.hops[i]));
    // Hop-2 nodes joined to a drawn hop-1 node come first.
    const { src, dst } = edgeList(KARATE);
    const hop1 = new Set(a.ids.filter((_, i) => a.hops[i] === 1));
    const attached = new Set<number>();
    src.forEach((s, i) => { if (hop1.has(s) && dist.get(dst[i]!) === 2) attached.add(dst[i]!); });
    const hop2 = a.ids.filter((_, i) => a.hops[i] === 2);
    if (attached.size >= hop2.length) for (const u of hop2) expect(attached.has(u)).toBe(true);
  });

  it('caps the drawn edges, keeping those nearest the centre', () => {
    const g = fixtureGraph('karate');
    const full = new FieldAnalyzer(g).view(0, 2);
    expect(full.edgesTotal).toBe(full.edgeDirs.length);
    const capped = new FieldAnalyzer(g).view(0, 2, { maxEdges: 20 });
    expect(capped.edgeDirs.length).toBe(20);
    expect(capped.edgesTotal).toBe(full.edgesTotal);
    // Kept: the centre's 16 edges (hops 0-1), then the first 4 edges between hop-1 nodes.
    const pairs = Array.from({ length: full.edgeDirs.length }, (_, e) => [full.edgeEnds[2 * e]!, full.edgeEnds[2 * e + 1]!] as const);
    const h = (i: number) => full.hops[i]!;
    const want = pairs.slice().sort((x, y) => h(x[1]) - h(y[1]) || h(x[0]) - h(y[0]) || x[0] - y[0] || x[1] - y[1]).slice(0, 20)
      .sort((x, y) => x[0] - y[0] || x[1] - y[1]);
    const got = Array.from({ length: 20 }, (_, e) => [capped.edgeEnds[2 * e]!, capped.edgeEnds[2 * e + 1]!] as const);
    expect(got).toEqual(want);
    expect(got.filter(([a]) => a === 0).length).toBe(16);
    expect(got.every(([a, b]) => h(a) <= 1 && h(b) <= 1)).toBe(true);
  });

  it('water-filling on a larger field: small near hops in full, far hops share the rest', () => {
    // tests/fixtures/analysis/sparse: node 0 has per-hop counts 1, 4, 8, 17, 41, 58, 59, 45, 23 (networkx).
    const f = field(new AnalysisService(), SPARSE, 0, 8, { maxNodes: 100 });
    expect(f.perHop).toEqual(analysisExpected.graphs.sparse.perHop['0'].in);
    // 99 places: threshold 14 gives 4 + 8 + 6·14 = 96; the 3 leftover places go to hops 3, 4, 5.
    expect(f.shownPerHop).toEqual([1, 4, 8, 15, 15, 15, 14, 14, 14]);
    expect(f.ids.length).toBe(100);
    expect(new Set(f.ids).size).toBe(100);
  });

  it('influence weights are row 0 of Â^L (NumPy)', () => {
    const svc2 = new AnalysisService();
    for (const L of [1, 2, 3]) {
      const f = field(svc2, KARATE_WITH_X, 0, L);
      const row: number[] = analysisExpected.graphs.karate.influence['0'].gcn[L];
      f.ids.forEach((u, i) => expect(f.weights[i]).toBeCloseTo(row[u]!, 12));
      // Nodes outside the field carry no weight, so the drawn weights hold the whole row.
      expect(f.weights.reduce((a, b) => a + b, 0)).toBeCloseTo(row.reduce((a, b) => a + b, 0), 12);
    }
  });

  it('coverage curve equals the numpy.percentile figures over all 34 nodes', () => {
    const f = field(svc, KARATE, 0, 2);
    const exp = analysisExpected.graphs.karate.coverageCurve.sym;
    expect(f.coverageCurve.layers).toEqual([1, 2, 3, 4, 5, 6, 7, 8]);
    expect(f.coverageCurve.allNodes).toBe(true);
    expect(f.coverageCurve.sampled).toBe(34);
    f.coverageCurve.median.forEach((x, i) => expect(x).toBeCloseTo(exp.median[i], 12));
    f.coverageCurve.p90.forEach((x, i) => expect(x).toBeCloseTo(exp.p90[i], 12));
  });

  it('the sending row follows the request on a directed graph (networkx hop counts)', () => {
    const file = path.join(ANALYSIS_DIR, 'directed/edge_index.npy');
    const exp = analysisExpected.graphs.directed.perHop['0'];
    const s = new AnalysisService();
    expect(field(s, file, 0, 8, { sendingRow: 0 }).perHop).toEqual(exp.in);
    expect(field(s, file, 0, 8, { sendingRow: 1 }).perHop).toEqual(exp.out);
    expect(field(s, file, 0, 8, { symmetrise: true }).perHop).toEqual(exp.sym);
    const d = field(s, file, 0, 2, { sendingRow: 0 });
    // One-way edges keep their message direction: a stored u → w has ids[a] = u sending when bit 1.
    const { src, dst } = edgeList(file);
    const stored = new Set(src.map((u, i) => `${u}>${dst[i]}`));
    for (let e = 0; e < d.edgeDirs.length; e++) {
      const a = d.ids[d.edges[2 * e]!]!, b = d.ids[d.edges[2 * e + 1]!]!;
      expect(d.edgeDirs[e]).toBe((stored.has(`${a}>${b}`) ? 1 : 0) | (stored.has(`${b}>${a}`) ? 2 : 0));
    }
  });

  it('explains bad input instead of failing', () => {
    expect(svc.field(KARATE, { node: 34, layers: 2 })).toEqual({ error: 'Node 34 is not in karate.npy: its ids run from 0 to 33.' });
    expect('error' in svc.field(KARATE, { node: 0, layers: 65 })).toBe(true);
    expect('error' in svc.field(path.join(ANALYSIS_DIR, 'karate/x.npy'), { node: 0, layers: 1 })).toBe(true);
  });

  it('reloads a graph whose file changed on disk', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-panel-'));
    try {
      const file = path.join(dir, 'edge_index.npy');
      fs.copyFileSync(KARATE, file);
      const s = new AnalysisService();
      expect(field(s, file, 0, 1).graphNodes).toBe(34);
      fs.copyFileSync(path.join(__dirname, '../fixtures/graphs/petersen.npy'), file);
      fs.utimesSync(file, new Date(), new Date(Date.now() + 5000));
      const f = field(s, file, 0, 2);
      // Petersen: 10 nodes, field sizes 1, 4, 10 (docs/references.md §4).
      expect(f.graphNodes).toBe(10);
      expect(f.perHop).toEqual([1, 3, 6]);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe('field payload without self-loops: walks of exactly L steps', () => {
  it('on a path only every other ring is reached (hand-worked on P5)', () => {
    const g = undirected(5, path_(5));
    const a = new FieldAnalyzer(g);
    // From node 0: two steps reach 0 (0-1-0) and 2 (0-1-2); three steps reach 1 and 3.
    const two = a.view(0, 2, { selfLoops: false });
    expect([...two.ids]).toEqual([0, 2]);
    expect(two.perHop).toEqual([1, 0, 1]);
    expect(two.centreInField).toBe(true);
    const three = a.view(0, 3, { selfLoops: false });
    expect([...three.ids]).toEqual([0, 1, 3]);
    expect(three.perHop).toEqual([0, 1, 0, 1]);
    expect(three.centreInField).toBe(false);
    expect(three.shown).toBe(2);
    expect(three.total).toBe(2);
    // With self-loops the same depth sees the ball 0..3.
    expect([...a.view(0, 3).ids]).toEqual([0, 1, 2, 3]);
  });

  it('matches boolean powers of the adjacency matrix on karate', () => {
    const kg = fixtureGraph('karate');
    const a = new FieldAnalyzer(kg);
    const n = kg.n;
    const adj = Array.from({ length: n }, () => new Set<number>());
    kg.src.forEach((s, i) => adj[kg.dst[i]!]!.add(s));
    for (const L of [1, 2, 3, 4]) {
      let reach = new Set([0]);
      for (let k = 0; k < L; k++) {
        const next = new Set<number>();
        for (const u of reach) for (const w of adj[u]!) next.add(w);
        reach = next;
      }
      const f = a.view(0, L, { selfLoops: false });
      const members = new Set([...f.ids].filter((_, i) => i > 0 || f.centreInField));
      expect(members).toEqual(reach);
      expect(f.total).toBe(reach.size);
    }
  });

  it('influence without self-loops is a row of (D^-1/2 A D^-1/2)^L (P3 by hand)', () => {
    // P3, degrees 1, 2, 1: D^-1/2 A D^-1/2 has 1/√2 on both edges; its square has row 0 = (1/2, 0, 1/2).
    const g = undirected(3, path_(3));
    const sym = simpleUndirected(g.fwd, g.rev);
    const r1 = plainPropagationRow(sym, 0, 1);
    expect(r1[1]).toBeCloseTo(Math.SQRT1_2, 15);
    expect(r1[0]).toBe(0);
    const r2 = plainPropagationRow(sym, 0, 2);
    expect([...r2].map((x) => +x.toFixed(12))).toEqual([0.5, 0, 0.5]);
    const f = new FieldAnalyzer(g).view(0, 2, { selfLoops: false });
    expect([...f.ids]).toEqual([0, 2]);
    expect([...f.weights].map((x) => +x.toFixed(12))).toEqual([0.5, 0.5]);
  });

  it('the coverage curve follows the same rule', () => {
    // P5 without self-loops, walks of exactly L steps from nodes 0..4 reach
    // L = 1: 1, 2, 2, 2, 1 nodes; L = 2: {0,2}, {1,3}, {0,2,4}, {1,3}, {2,4}; L = 3: {1,3}, {0,2,4}, {1,3}, {0,2,4}, {1,3}.
    // Medians 2/5 each time; 90th percentiles (linear, numpy's default) 2/5, 2.6/5, 3/5.
    const c = new FieldAnalyzer(undirected(5, path_(5))).coverage({ selfLoops: false, maxLayers: 3 });
    expect(c.median.map((x) => +x.toFixed(12))).toEqual([0.4, 0.4, 0.4]);
    expect(c.p90.map((x) => +x.toFixed(12))).toEqual([0.4, 0.52, 0.6]);
    expect(c.allNodes).toBe(true);
  });
});

describe('smoothing payload', () => {
  it('Cai–Wang energy of the karate degree vector (docs/references.md §8)', () => {
    const s = new AnalysisService().smoothing(KARATE_WITH_X, 8);
    if (!s || 'error' in s) throw new Error('no smoothing curve');
    const exp: number[] = analysisExpected.graphs.karate.energy.caiWang;
    expect(s.caiWang.length).toBe(9);
    s.caiWang.forEach((x, k) => expect(x).toBeCloseTo(exp[k]!, 9));
    expect(s.caiWang[0]).toBeCloseTo(235.752349, 6);
    expect(s.colsUsed).toBe(s.cols);
    expect(s.featureTensor).toBe('x');
  });

  it('is null for a graph without features', () => {
    expect(new AnalysisService().smoothing(KARATE, 8)).toBeNull();
  });
});

describe('WL classes payload', () => {
  it('karate: 1, 11, 27 classes and the NetworkX partition among the drawn nodes', () => {
    const svc = new AnalysisService();
    const f = field(svc, KARATE, 0, 2);
    const r = svc.wlClasses(KARATE, f.ids);
    if ('error' in r) throw new Error(r.error);
    expect(r.classesPerRound).toEqual([1, 11, 27]);
    expect(r.stableAfter).toBe(2);
    // wlPartition: smallest node of each node's class (networkx WL hashes, structure/expected.json).
    const part: number[] = structureExpected.graphs.karate!.wlPartition;
    const groupsOfDrawn = new Map<number, number[]>();
    for (const u of f.ids) groupsOfDrawn.set(part[u]!, [...(groupsOfDrawn.get(part[u]!) ?? []), u]);
    const expectedGroups = [...groupsOfDrawn.values()].filter((g) => g.length > 1).map((g) => g.sort((a, b) => a - b));
    expect(r.groups.map((g) => g.nodes).sort((a, b) => a[0]! - b[0]!)).toEqual(expectedGroups.sort((a, b) => a[0]! - b[0]!));
    // Same colour exactly when same class.
    f.ids.forEach((u, i) => f.ids.forEach((w, j) => expect(r.colours[i] === r.colours[j]).toBe(part[u] === part[w])));
    // Class sizes over the whole graph.
    f.ids.forEach((u, i) => expect(r.classSizes[i]).toBe(part.filter((p) => p === part[u]).length));
    expect(r.sharedInGraph).toBe(part.filter((p) => part.filter((q) => q === p).length > 1).length);
  });
});

describe('bottlenecks payload', () => {
  it('karate edges: Forman, balanced Forman and the bridge (docs/references.md §6)', () => {
    const svc = new AnalysisService();
    const r = svc.bottlenecks(KARATE, [0, 1, 31, 0, 32, 33, 0, 11, 0, 9]);
    if ('error' in r) throw new Error(r.error);
    expect(r.forman.slice(0, 4)).toEqual([-21, -18, -25, -13]);
    expect(r.formanTriangles.slice(0, 4)).toEqual([0, -18, 5, -13]);
    expect(r.balancedForman[0]).toBeCloseTo(1 / 8, 12);
    expect(r.balancedForman[1]).toBeCloseTo(-67 / 48, 12);
    expect(r.balancedForman[2]).toBeCloseTo(25 / 68, 12);
    expect(r.balancedForman[3]).toBe(0);
    expect(r.triangles.slice(0, 4)).toEqual([7, 0, 10, 0]);
    expect(r.bridge).toEqual([false, false, false, true, false]);
    // (0, 9) is not an edge of karate.
    expect(r.forman[4]).toBeNull();
    expect(r.bridgesInGraph).toBe(1);
    expect(r.undirectedEdges).toBe(78);
  });

  it('curvature on the neighbourhood piece equals curvature on the whole graph', () => {
    for (const name of ['karate', 'gnp_1', 'gnp_2', 'les_miserables']) {
      const { g, src, dst, info } = structureFixture(name);
      const whole = edgeCurvature(g);
      const byPair = new Map<string, number>();
      for (let e = 0; e < whole.m; e++) byPair.set(pairKey(whole.u[e]!, whole.v[e]!), e);
      const graph = { n: info.n, ...buildSortedPair(info.n, src, dst) };
      const fa = new FieldAnalyzer(graph);
      const st = new StructureAnalyzer(graph);
      for (const v of [0, Math.floor(info.n / 2)]) {
        const f = fa.view(v, 1);
        const pairs: number[] = [];
        for (let e = 0; e < f.edgeEnds.length; e++) pairs.push(f.ids[f.edgeEnds[e]!]!);
        const c = st.curvatureFor(pairs);
        expect(c.pieceNodes).toBeLessThanOrEqual(info.n);
        for (let k = 0; k < pairs.length / 2; k++) {
          const e = byPair.get(pairKey(pairs[2 * k]!, pairs[2 * k + 1]!))!;
          expect(c.present[k]).toBe(1);
          expect(c.forman[k]).toBe(whole.forman[e]);
          expect(c.triangles[k]).toBe(whole.triangles[e]);
          expect(c.balancedForman[k]).toBeCloseTo(whole.balancedForman[e]!, 12);
          const isBridge = info.bridges.some(([a, b]) => pairKey(a, b) === pairKey(pairs[2 * k]!, pairs[2 * k + 1]!));
          expect(c.bridge[k]).toBe(isBridge ? 1 : 0);
        }
      }
    }
  });
});

describe('sampling hash', () => {
  it('is a fixed function of (id, seed)', () => {
    expect(hash32(0, 1)).toBe(hash32(0, 1));
    expect(hash32(0, 1)).not.toBe(hash32(1, 1));
    expect(hash32(5, 1)).not.toBe(hash32(5, 2));
    const xs = Array.from({ length: 1000 }, (_, i) => hash32(i, 1));
    expect(new Set(xs).size).toBe(1000);
  });
});

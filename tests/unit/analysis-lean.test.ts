/**
 * The analysis commands' lean reading (only the bounds pass; each CSR direction built on first use)
 * against the checked reading (`--check`, every check of `hopscope check` first), and `field --node`
 * lists. Reference values:
 * - per-hop counts of karate nodes 0, 11, 16, 33 from networkx.single_source_shortest_path_length
 *   and influence rows from numpy.linalg.matrix_power of the GCN matrix
 *   (tests/fixtures/make_analysis_fixtures.py → tests/fixtures/analysis/expected.json);
 * - 1-WL classes per round, bridges and degrees from NetworkX 2.8
 *   (tests/fixtures/make_structure_fixtures.py → tests/fixtures/structure/expected.json);
 * - the typed graph of tests/fixtures/typed (make_typed_fixtures.py, PyTorch/NumPy files).
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { main } from '../../server/src/cli';
import { loadGraph } from '../../server/src/node/graph-input';
import { sortedCsr, transpose } from '../../server/src/core/graph/structure/csr';
import { encodeNpyInt64 } from '../../server/src/core/formats/npy-write';
import { refineWl } from '../../server/src/core/graph/refinement/wl';
import { undirectedView } from '../../server/src/core/graph/structure/undirected';
import { ANALYSIS_DIR, analysisExpected } from './analysis-fixtures';
import { expected as structureExpected, STRUCTURE_DIR } from './structure-fixtures';

const GRAPHS = path.join(__dirname, '../fixtures/graphs');
const KARATE = path.join(GRAPHS, 'karate.npy');
const DIRECTED = path.join(ANALYSIS_DIR, 'directed/edge_index.npy');
const TYPED = path.join(__dirname, '../fixtures/typed/clean.npz');

function run(argv: string[]): { code: number; out: string; err: string } {
  let out = '', err = '';
  const code = main(argv, { out: (s) => { out += s; }, err: (s) => { err += s; }, color: false });
  return { code, out, err };
}

function runJson(argv: string[]): any {
  const r = run([...argv, '--json']);
  expect(r.err).toBe('');
  expect(r.code).toBe(0);
  return JSON.parse(r.out);
}

describe('hopscope field --node with a list', () => {
  const nodes = ['0', '11', '16', '33'];

  it('--json prints { fields: [...] }: one single-node object per node, in the order given; NetworkX hop counts, NumPy influence', () => {
    const j = runJson(['field', KARATE, '--node', nodes.join(','), '--layers', '3']);
    expect(Object.keys(j)).toEqual(['fields']);
    expect(j.fields.length).toBe(4);
    nodes.forEach((v, i) => {
      const one = runJson(['field', KARATE, '--node', v, '--layers', '3']);
      expect(j.fields[i]).toEqual(one);
      expect(j.fields[i].node).toBe(Number(v));
      // networkx.single_source_shortest_path_length on the karate club, 3 hops
      expect(j.fields[i].perHop).toEqual(analysisExpected.graphs.karate.perHop[v].in.slice(0, 4));
      // numpy.linalg.matrix_power of the GCN matrix, row v
      const row = analysisExpected.graphs.karate.influence[v]?.gcn?.[3] as number[] | undefined;
      if (row) for (const x of j.fields[i].influence) expect(Math.abs(x.weight - row[x.node]!)).toBeLessThan(1e-12);
    });
  });

  it('one node keeps the single-node output exactly; a list in a different order gives the same objects reordered', () => {
    const one = run(['field', KARATE, '--node', '16', '--layers', '2', '--json']);
    expect(JSON.parse(one.out)).not.toHaveProperty('fields');
    const ab = runJson(['field', KARATE, '--node', '33,16', '--layers', '2']).fields;
    const ba = runJson(['field', KARATE, '--node', '16,33', '--layers', '2']).fields;
    expect(ab).toEqual([ba[1], ba[0]]);
    expect(ba[0]).toEqual(JSON.parse(one.out));
  });

  it('the table view prints each node as alone, separated by a blank line; --curve is computed once and shown for each', () => {
    const both = run(['field', DIRECTED, '--node', '0,3', '--layers', '2', '--curve']);
    const a = run(['field', DIRECTED, '--node', '0', '--layers', '2', '--curve']);
    const b = run(['field', DIRECTED, '--node', '3', '--layers', '2', '--curve']);
    expect(both.code).toBe(0);
    expect(both.out).toBe(`${a.out}\n${b.out}`);
  });

  it('typed graph: a list of TYPE:ID gives the typed objects; a mix with a plain id is allowed', () => {
    const j = runJson(['field', TYPED, '--node', 'paper:3,author:0', '--layers', '2']);
    expect(j.fields.map((f: any) => f.node)).toEqual(['paper:3', 'author:0']);
    expect(j.fields[0]).toEqual(runJson(['field', TYPED, '--node', 'paper:3', '--layers', '2']));
    expect(j.fields[1]).toEqual(runJson(['field', TYPED, '--node', 'author:0', '--layers', '2']));
    const mixed = runJson(['field', TYPED, '--node', 'paper:3,0', '--layers', '1']);
    expect(mixed.fields[1]).toEqual(runJson(['field', TYPED, '--node', '0', '--layers', '1']));
  });

  it('refuses a bad list before answering any node: empty entry, negative id, id out of range, unknown type', () => {
    for (const bad of ['0,,3', '0,', '0,-1', '0,x']) {
      const r = run(['field', KARATE, '--node', bad, '--layers', '1']);
      expect(r.code).toBe(2);
      expect(r.out).toBe('');
    }
    const far = run(['field', KARATE, '--node', '0,34', '--layers', '1', '--json']);
    expect(far.code).toBe(2);
    expect(far.out).toBe('');
    expect(far.err).toContain('--node 34 is out of range');
    const typed = run(['field', TYPED, '--node', 'paper:3,venue:1', '--layers', '1']);
    expect(typed.code).toBe(2);
    expect(typed.err).toContain('venue');
  });
});

describe('--check on and off give the same analysis results', () => {
  const cases: Array<[string, string[]]> = [
    ['field list', ['field', KARATE, '--node', '0,5,33', '--layers', '3', '--top', '10']],
    ['field pair', ['field', DIRECTED, '--pair', '0,3', '--layers', '2']],
    ['field symmetrised curve', ['field', DIRECTED, '--node', '1', '--layers', '2', '--symmetrise', '--curve']],
    ['wl', ['wl', path.join(STRUCTURE_DIR, 'les_miserables.npy')]],
    ['wl rounds', ['wl', path.join(STRUCTURE_DIR, 'karate.npy'), '--rounds', '2']],
    ['bottlenecks', ['bottlenecks', path.join(STRUCTURE_DIR, 'florentine.npy'), '--top', '5']],
    ['spectrum', ['spectrum', path.join(STRUCTURE_DIR, 'petersen.npy'), '--k', '4']],
    ['compare', ['compare', path.join(STRUCTURE_DIR, 'regular3_a.npy'), path.join(STRUCTURE_DIR, 'regular3_a_relabelled.npy')]],
    ['typed field', ['field', TYPED, '--node', 'paper:3', '--layers', '2']],
  ];
  for (const [name, argv] of cases) {
    it(name, () => {
      const lean = run([...argv, '--json']);
      const checked = run([...argv, '--json', '--check']);
      expect(lean.code).toBe(0);
      expect(checked.code).toBe(0);
      expect(lean.out).toBe(checked.out);
      expect(lean.out.length).toBeGreaterThan(10);
    });
  }

  it('NetworkX figures hold on the lean path: WL classes per round, bridges (structure fixtures)', () => {
    for (const name of ['karate', 'florentine', 'les_miserables', 'petersen', 'shrikhande', 'tree_mixed', 'two_k3']) {
      const want = structureExpected.graphs[name]!;
      const wl = runJson(['wl', path.join(STRUCTURE_DIR, `${name}.npy`)]);
      expect(wl.classesPerRound).toEqual(want.wlClasses);
      const br = runJson(['bottlenecks', path.join(STRUCTURE_DIR, `${name}.npy`)]);
      expect(br.bridges).toEqual(want.bridges);
    }
  });
});

describe('lean reading vs checked reading of one graph', () => {
  const files = [
    KARATE, DIRECTED, path.join(ANALYSIS_DIR, 'sparse/edge_index.npy'),
    ...['florentine', 'gnp_doubled', 'tree_mixed', 'les_miserables'].map((x) => path.join(STRUCTURE_DIR, `${x}.npy`)),
    path.join(GRAPHS, 'karate.mtx'),
  ];
  for (const file of files) {
    it(`${path.relative(path.join(__dirname, '..'), file)}: same nodes, edges, both CSR directions, index base`, () => {
      const full = loadGraph(file, {});
      const lean = loadGraph(file, { lean: true });
      expect(lean.n).toBe(full.n);
      expect(lean.figures.indexBase).toBe(full.figures.indexBase);
      expect(lean.figures.nodes).toBe(full.figures.nodes);
      expect(lean.figures.edges).toBe(full.figures.edges);
      expect(Array.from(lean.src)).toEqual(Array.from(full.src));
      expect(Array.from(lean.dst)).toEqual(Array.from(full.dst));
      // rev read first: the lean reading builds both directions at its first read
      expect(Array.from(lean.rev.indptr)).toEqual(Array.from(full.rev.indptr));
      expect(Array.from(lean.rev.indices)).toEqual(Array.from(full.rev.indices));
      expect(Array.from(lean.fwd.indptr)).toEqual(Array.from(full.fwd.indptr));
      expect(Array.from(lean.fwd.indices)).toEqual(Array.from(full.fwd.indices));
      // NaN marks what the lean reading does not compute
      expect(Number.isNaN(lean.figures.components)).toBe(true);
      expect(Number.isNaN(full.figures.components)).toBe(false);
    });
  }

  it('a graph with ids out of range: both readings keep the same in-range edges and report the same bounds error', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-lean-'));
    try {
      const file = path.join(dir, 'edge_index.npy');
      // 4 declared nodes; entries 9 and -1 name no node
      fs.writeFileSync(file, encodeNpyInt64([2, 6], [0, 1, 2, 9, 3, 0, 1, 2, 3, 0, -1, 3]));
      const full = loadGraph(file, { nodes: 4 });
      const lean = loadGraph(file, { nodes: 4, lean: true });
      expect(Array.from(lean.src)).toEqual(Array.from(full.src));
      expect(Array.from(lean.dst)).toEqual(Array.from(full.dst));
      expect(lean.src.length).toBe(4);
      const codes = (g: typeof lean) => g.problems.filter((p) => p.code === 'index-out-of-range').map((p) => p.count);
      expect(codes(lean)).toEqual([2]);
      expect(codes(full)).toEqual(codes(lean));
      const r = run(['wl', file, '--num-nodes', '4', '--json']);
      expect(r.code).toBe(0);
      expect(r.err).toContain('1 error');
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it('the transpose of a sorted CSR is the sorted CSR of the reversed edges (repeats and self-loops kept)', () => {
    // 5 nodes, 1→2 twice, a self-loop on 3, node 4 isolated; rows worked out by hand
    const src = Int32Array.from([1, 1, 3, 0, 2, 1, 0]);
    const dst = Int32Array.from([2, 2, 3, 1, 0, 0, 2]);
    const rev = sortedCsr(5, dst, src);
    expect(Array.from(rev.indptr)).toEqual([0, 2, 3, 6, 7, 7]);
    expect(Array.from(rev.indices)).toEqual([1, 2, 0, 0, 1, 1, 3]);
    const t = transpose(sortedCsr(5, src, dst));
    expect(Array.from(t.indptr)).toEqual(Array.from(rev.indptr));
    expect(Array.from(t.indices)).toEqual(Array.from(rev.indices));
  });
});

describe('1-WL as the wl command runs it (first round from the degrees, last round a split test, ids not canonical)', () => {
  const names = ['karate', 'les_miserables', 'petersen', 'frucht', 'tree_mixed', 'two_k3', 'davis', 'gnp_3'];
  for (const name of names) {
    it(`${name}: NetworkX classes per round; the same partition as the canonical refinement; stableAfter at every --rounds`, () => {
      const g0 = loadGraph(path.join(STRUCTURE_DIR, `${name}.npy`), { lean: true });
      const g = undirectedView(g0.fwd, g0.rev);
      const want = structureExpected.graphs[name]!.wlClasses as number[];
      const canon = refineWl(g);
      const fast = refineWl(g, { canonical: false });
      expect(canon.classesPerRound).toEqual(want); // networkx.weisfeiler_lehman_subgraph_hashes
      expect(fast.classesPerRound).toEqual(want);
      expect(fast.stableAfter).toBe(canon.stableAfter);
      // the same partition: colour ids related one-to-one
      const map = new Map<number, number>();
      for (let v = 0; v < g.n; v++) {
        const a = canon.colours[v]!, b = fast.colours[v]!;
        if (!map.has(a)) map.set(a, b);
        expect(map.get(a)).toBe(b);
      }
      expect(new Set(map.values()).size).toBe(map.size);
      // --rounds R: stable exactly when R reaches the stable round (the last round is only tested)
      const stable = canon.stableAfter!;
      for (let r = 0; r <= stable + 1; r++) {
        const cut = refineWl(g, { maxRounds: r, canonical: false });
        expect(cut.classesPerRound).toEqual(want.slice(0, Math.min(r, stable) + 1));
        expect(cut.stableAfter).toBe(r >= stable ? stable : null);
      }
    });
  }
});

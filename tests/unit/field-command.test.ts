/**
 * `hopscope field` through the CLI entry point main(), output captured. Reference values:
 * - karate club field sizes 1, 17, 26, 34 for node 0 (Zachary 1977; docs/references.md §2.1,
 *   networkx.karate_club_graph 2.8.8);
 * - influence weights: rows of numpy.linalg.matrix_power of the dense GCN matrix
 *   D̃^-1/2 (A+I) D̃^-1/2 (Kipf & Welling 2017) and of D̃^-1 (A+I)
 *   (tests/fixtures/make_analysis_fixtures.py → tests/fixtures/analysis/expected.json);
 * - per-hop counts for each sending row from networkx.single_source_shortest_path_length (same file);
 * - coverage curve from numpy.percentile over all 34 karate nodes (same file);
 * - the 1-based karate.mtx written by scipy.io.mmwrite (tests/fixtures/make_graph_fixtures.py).
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { main } from '../../server/src/cli';
import { ANALYSIS_DIR, analysisExpected } from './analysis-fixtures';

const GRAPHS = path.join(__dirname, '../fixtures/graphs');
const KARATE = path.join(GRAPHS, 'karate.npy');
const DIRECTED = path.join(ANALYSIS_DIR, 'directed/edge_index.npy');

function run(argv: string[], color = false): { code: number; out: string; err: string } {
  let out = '', err = '';
  const code = main(argv, { out: (s) => { out += s; }, err: (s) => { err += s; }, color });
  return { code, out, err };
}

function runJson(argv: string[]): any {
  const r = run([...argv, '--json']);
  expect(r.err).toBe('');
  expect(r.code).toBe(0);
  return JSON.parse(r.out);
}

/** The NumPy row as (node, weight) pairs, heaviest first, ties by id. */
function ranked(row: number[]): Array<[number, number]> {
  return row.map((w, u) => [u, w] as [number, number]).filter(([, w]) => w > 0).sort((a, b) => b[1] - a[1] || a[0] - b[0]);
}

describe('hopscope field --json', () => {
  it('karate, node 0, 3 layers: exactly the documented keys; docs/references.md §2.1 sizes; NumPy influence row', () => {
    const j = runJson(['field', KARATE, '--node', '0', '--layers', '3']);
    expect(Object.keys(j)).toEqual(['node', 'layers', 'perHop', 'total', 'coverage', 'influence']);
    expect(j.node).toBe(0);
    expect(j.layers).toBe(3);
    expect(j.perHop).toEqual([1, 16, 9, 8]); // cumulative 1, 17, 26, 34
    expect(j.total).toBe(34);
    expect(j.coverage).toBe(1);
    const want = ranked(analysisExpected.graphs.karate.influence['0'].gcn[3]);
    expect(j.influence.length).toBe(34); // top 50, capped by the 34 nodes within 3 hops
    for (let i = 0; i < want.length; i++) {
      expect(Object.keys(j.influence[i])).toEqual(['node', 'weight']);
      expect(Math.abs(j.influence[i].weight - want[i]![1])).toBeLessThan(1e-12);
      // the weight belongs to the node it is listed with
      expect(Math.abs(j.influence[i].weight - analysisExpected.graphs.karate.influence['0'].gcn[3][j.influence[i].node])).toBeLessThan(1e-12);
    }
  });

  it('--top and --random-walk: the D̃^-1 (A+I) row of NumPy, 5 heaviest', () => {
    const j = runJson(['field', KARATE, '--node', '33', '--layers', '2', '--top', '5', '--random-walk']);
    const row: number[] = analysisExpected.graphs.karate.influence['33'].randomWalk[2];
    expect(j.influence.length).toBe(5);
    const want = ranked(row).slice(0, 5);
    j.influence.forEach((e: any, i: number) => {
      expect(Math.abs(e.weight - want[i]![1])).toBeLessThan(1e-12);
      expect(Math.abs(e.weight - row[e.node]!)).toBeLessThan(1e-12);
    });
  });

  it('directed multigraph: --sending-row and --symmetrise give the networkx counts for G.reverse(), G and the undirected graph', () => {
    const e = analysisExpected.graphs.directed.perHop['0'];
    const L = 8;
    expect(runJson(['field', DIRECTED, '--node', '0', '--layers', String(L)]).perHop).toEqual(e.in);
    expect(runJson(['field', DIRECTED, '--node', '0', '--layers', String(L), '--sending-row', '0']).perHop).toEqual(e.in);
    expect(runJson(['field', DIRECTED, '--node', '0', '--layers', String(L), '--sending-row=1']).perHop).toEqual(e.out);
    expect(runJson(['field', DIRECTED, '--node', '0', '--layers', String(L), '--symmetrise']).perHop).toEqual(e.sym);
    expect(e.in).not.toEqual(e.out);
  });

  it('the old --flow flag still works as an undocumented alias of --sending-row', () => {
    const e = analysisExpected.graphs.directed.perHop['0'];
    expect(runJson(['field', DIRECTED, '--node', '0', '--layers', '8', '--flow', 'source-to-target']).perHop).toEqual(e.in);
    expect(runJson(['field', DIRECTED, '--node', '0', '--layers', '8', '--flow=target-to-source']).perHop).toEqual(e.out);
    expect(run(['field', '--help']).out).not.toMatch(/--flow|source-to-target/);
    const both = run(['field', DIRECTED, '--node', '0', '--layers', '8', '--flow', 'source-to-target', '--sending-row', '0']);
    expect(both.code).toBe(2);
    expect(both.err).toMatch(/--flow is the old name of --sending-row/);
  });

  it('a manifest\'s "sendingRow" decides when the command line does not', () => {
    const e = analysisExpected.graphs.directed.perHop['0'];
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-row-'));
    try {
      fs.copyFileSync(DIRECTED, path.join(dir, 'edge_index.npy'));
      fs.writeFileSync(path.join(dir, 'hopscope.json'), JSON.stringify({ sendingRow: 1 }));
      const file = path.join(dir, 'edge_index.npy');
      expect(runJson(['field', file, '--node', '0', '--layers', '8']).perHop).toEqual(e.out);
      expect(runJson(['field', file, '--node', '0', '--layers', '8', '--sending-row', '0']).perHop).toEqual(e.in);
      const table = run(['field', file, '--node', '0', '--layers', '1']);
      expect(table.out).toMatch(/messages from row 1 to row 0\)/);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it('1-based karate.mtx (scipy.io.mmwrite): --node 1 is the first node, and ids come back 1-based', () => {
    const j = runJson(['field', path.join(GRAPHS, 'karate.mtx'), '--node', '1', '--layers', '2']);
    expect(j.node).toBe(1);
    expect(j.perHop).toEqual([1, 16, 9]);
    const row: number[] = analysisExpected.graphs.karate.influence['0'].gcn[2];
    for (const { node, weight } of j.influence) expect(Math.abs(weight - row[node - 1]!)).toBeLessThan(1e-12);
    expect(j.influence[0].node).toBe(1);
    expect(run(['field', path.join(GRAPHS, 'karate.mtx'), '--node', '0', '--layers', '2']).code).toBe(2);
  });

  it('--curve adds coverageCurve: numpy.percentile over all 34 nodes', () => {
    const j = runJson(['field', KARATE, '--node', '0', '--layers', '1', '--curve']);
    expect(Object.keys(j)).toEqual(['node', 'layers', 'perHop', 'total', 'coverage', 'influence', 'coverageCurve']);
    const want = analysisExpected.graphs.karate.coverageCurve.sym;
    expect(j.coverageCurve.sampled).toBe(34);
    for (let i = 0; i < 8; i++) {
      expect(j.coverageCurve.median[i]).toBeCloseTo(want.median[i], 12);
      expect(j.coverageCurve.p90[i]).toBeCloseTo(want.p90[i], 12);
    }
  });

  it('0 layers: the node alone, influence 1 on itself', () => {
    const j = runJson(['field', KARATE, '--node', '5', '--layers', '0']);
    expect(j.perHop).toEqual([1]);
    expect(j.total).toBe(1);
    expect(j.influence).toEqual([{ node: 5, weight: 1 }]);
  });
});

describe('hopscope field, table view', () => {
  it('prints the per-hop table, the reach sentence and the influence list without colour codes', () => {
    const r = run(['field', KARATE, '--node', '16', '--layers', '3']);
    expect(r.code).toBe(0);
    expect(r.err).toBe('');
    expect(r.out).not.toContain('\x1b[');
    // node 16: 1, 3, 6, 18 within 0..3 hops (docs/references.md §2.1)
    const rows = r.out.split('\n').filter((l) => /^\s+\d+\s+\d+\s+\d+\s+[\d.]+%/.test(l));
    expect(rows.map((l) => l.trim().split(/\s+/).slice(0, 3).map(Number))).toEqual([[0, 1, 1], [1, 2, 3], [2, 3, 6], [3, 12, 18]]);
    expect(r.out).toContain('18 of 34 nodes (52.9%)');
    expect(r.out).toMatch(/Strongest influence on node 16/);
  });

  it('colours only when asked', () => {
    expect(run(['field', KARATE, '--node', '0', '--layers', '1'], true).out).toContain('\x1b[');
  });

  it('--help prints the usage and exits 0; the overview lists the command', () => {
    const r = run(['field', '--help']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^Usage: hopscope field FILE --node V --layers L/);
    expect(run(['--help']).out).toMatch(/\n {2}field FILE/);
  });
});

describe('hopscope field errors exit 2 with a clear message', () => {
  const cases: Array<[string[], RegExp]> = [
    [[KARATE, '--node', '34', '--layers', '2'], /--node 34 is out of range: .*34 nodes \(ids 0\.\.33\)/],
    [[KARATE, '--node', 'abc', '--layers', '2'], /--node must be a non-negative whole number, got "abc"/],
    [[KARATE, '--node', '-1', '--layers', '2'], /--node must be a node id/],
    [[KARATE, '--node', '1.5', '--layers', '2'], /--node must be a non-negative whole number/],
    [[KARATE, '--node', '0', '--layers', 'two'], /--layers must be a non-negative whole number/],
    [[KARATE, '--node', '0', '--layers', '65'], /--layers must be at most 64/],
    [[KARATE, '--node', '0', '--layers', '2', '--top', 'x'], /--top must be/],
    [[KARATE, '--node', '0', '--layers', '2', '--sending-row', '2'], /--sending-row must be 0 or 1, got "2"/],
    [[KARATE, '--node', '0', '--layers', '2', '--sending-row', 'row0'], /--sending-row must be 0 or 1, got "row0"/],
    [[KARATE, '--layers', '2'], /--node is required/],
    [[KARATE, '--node', '0'], /--layers is required/],
    [['--node', '0', '--layers', '2'], /no FILE given/],
    [[KARATE, KARATE, '--node', '0', '--layers', '2'], /one FILE at a time/],
    [[KARATE, '--node', '0', '--layers', '2', '--wat'], /unknown option --wat/],
    [[KARATE, '--node'], /--node needs a value/],
    [[path.join(GRAPHS, 'no-such-file.npy'), '--node', '0', '--layers', '1'], /no-such-file\.npy: no such file/],
  ];
  for (const [argv, message] of cases) {
    it(argv.slice(1).join(' ') || argv.join(' '), () => {
      const r = run(['field', ...argv]);
      expect(r.code).toBe(2);
      expect(r.out).toBe('');
      expect(r.err).toMatch(message);
    });
  }

  it('an unreadable file: the reader\'s message, exit 2', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-field-'));
    const bad = path.join(dir, 'edge_index.npy');
    fs.writeFileSync(bad, 'this is not a numpy file');
    try {
      const r = run(['field', bad, '--node', '0', '--layers', '1']);
      expect(r.code).toBe(2);
      expect(r.err).toMatch(/^hopscope field: .*edge_index\.npy.*NUMPY|^hopscope field: .*not a \.npy file/);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});

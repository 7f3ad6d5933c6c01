/**
 * Datasets of many graphs (core/datasets): each layout read into the Dataset model and checked per
 * graph. Source of every expected value: tests/fixtures/datasets/expected.json, written by
 * tests/fixtures/make_dataset_fixtures.py — files saved by the real PyTorch 1.13 (torch.save of the
 * (data, slices) and (data_dict, slices, data_class) tuples, with a stand-in class at the
 * graph-learning library's data-class import path), NumPy (numpy.savez / numpy.save) and the
 * script's text writer, from NetworkX graphs; per-graph figures counted with NetworkX on each graph
 * and isomorphic groups decided by networkx.is_isomorphic (node features compared).
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { checkPaths } from '../../server/src/node/load';
import { loadDatasets, inRange } from '../../server/src/node/dataset-load';
import { isomorphic, isomorphismClasses, refinedColours, simpleGraphs } from '../../server/src/core/datasets/isomorphism';
import { checkDataset } from '../../server/src/core/datasets/check';
import { offsetsFault } from '../../server/src/core/datasets/read-common';
import type { Dataset } from '../../server/src/core/datasets/model';
import type { FileReport, Problem } from '../../common/report';
import * as os from 'node:os';
import * as zlib from 'node:zlib';
import { encodeNpyInt64 } from '../../server/src/core/formats/npy-write';

const dir = path.join(__dirname, '../fixtures/datasets');
const expected = JSON.parse(fs.readFileSync(path.join(dir, 'expected.json'), 'utf8'));

interface PerGraph { nodes: number; edges: number; outOfRange: number; selfLoops: number; duplicates: number; isolated: number }

function report(rel: string): FileReport {
  const r = checkPaths([path.join(dir, rel)]);
  const f = r.files.find((x) => path.resolve(x.path) === path.resolve(dir, rel));
  expect(f, rel).toBeDefined();
  return f!;
}

async function dataset(rel: string): Promise<Dataset> {
  const list = await loadDatasets([path.join(dir, rel)]);
  expect(list, rel).toHaveLength(1);
  return list[0]!.dataset;
}

/** Nodes and edge entries per graph from the dataset's offsets. */
function perGraph(ds: Dataset) {
  const nodes: number[] = [], edges: number[] = [];
  for (let g = 0; g < ds.graphs; g++) {
    nodes.push(ds.nodeOffsets[g + 1]! - ds.nodeOffsets[g]!);
    edges.push(ds.edgeOffsets[g + 1]! - ds.edgeOffsets[g]!);
  }
  return { nodes, edges };
}

function expectShape(ds: Dataset, want: { graphs: number; perGraph: PerGraph[] }) {
  expect(ds.graphs).toBe(want.graphs);
  const pg = perGraph(ds);
  expect(pg.nodes).toEqual(want.perGraph.map((p) => p.nodes));
  expect(pg.edges).toEqual(want.perGraph.map((p) => p.edges));
}

const codes = (f: FileReport) => f.problems.map((p) => p.code).sort();
const problemOf = (f: FileReport, code: string): Problem => {
  const p = f.problems.find((q) => q.code === code);
  expect(p, `${code} in ${f.path}: ${f.problems.map((q) => q.code).join(', ')}`).toBeDefined();
  return p!;
};

describe('(data, slices) tuples saved by PyTorch', () => {
  it('three cycles of 5, 7 and 4 nodes: a dataset of three graphs, no false alarms', async () => {
    for (const rel of ['pt_three/three_cycles.pt', 'pt_three_dict/three_cycles_dict.pt']) {
      const f = report(rel);
      expect(f.problems, rel).toEqual([]);
      expect(f.graph).toBeNull();
      const want = expected[rel];
      expect(f.dataset).toMatchObject({ graphs: 3, nodes: { min: 4, max: 7, total: 16 }, edges: { total: 32 }, graphLabels: { classes: ['0', '1'], counts: [2, 1] }, splits: null });
      const ds = await dataset(rel);
      expectShape(ds, want);
      expect(ds.layout).toBe('slices');
      expect(ds.nodeFeatures?.rows).toBe(16);
      expect(Array.from(ds.graphLabels!.data)).toEqual(want.labels);
    }
  });

  it('rides: per-graph faults, conflicting isomorphic groups and a leaked split, as NetworkX counts them', async () => {
    const rel = 'pt_rides/rides.pt';
    const want = expected[rel];
    const f = report(rel);
    expect(f.graph).toBeNull();
    expect(f.dataset!.splits).toEqual(want.splits);
    expect(codes(f)).toEqual(Object.keys(want.codes).sort());
    for (const [code, w] of Object.entries(want.codes) as Array<[string, { count: number; graphs: number[] }]>) {
      const p = problemOf(f, code);
      expect(p.graph, code).toBe(w.graphs[0]);
      if (code === 'isomorphic-label-conflict') {
        expect(p.count, code).toBe(w.count); // groups
        expect(p.graphs, code).toBe(w.graphs.length); // graphs in them
      } else {
        expect(p.count, code).toBe(w.count);
        expect(p.graphs, code).toBe(w.graphs.length);
      }
      for (const l of p.locations ?? []) expect(w.graphs, `${code} location`).toContain(l.graph);
      expect(p.message).toMatch(/graphs? \d+/);
    }
    const ds = await dataset(rel);
    expectShape(ds, want);
    expect(isomorphismClasses(ds).classes).toEqual(want.isomorphicClasses);
    // The analyses' dataset drops the one out-of-range entry, and only it.
    const clean = inRange(ds);
    expect(clean.src.length).toBe(ds.src.length - want.codes['index-out-of-range'].count);
    expect(clean.edgeOffsets[4]! - clean.edgeOffsets[3]!).toBe(want.perGraph[3].edges - 1);
  });

  it('edge slices ending past the edge index: bad-graph-offsets, no one-graph false alarms', () => {
    const rel = 'pt_broken/broken.pt';
    const f = report(rel);
    expect(codes(f)).toEqual(['bad-graph-offsets']);
    const p = problemOf(f, 'bad-graph-offsets');
    expect(p.severity).toBe('error');
    expect(p.message).toContain(`the last offset is ${expected[rel].lastOffset} but the tensor it cuts has ${expected[rel].edgeEntries}`);
    expect(f.dataset).toBeUndefined();
  });
});

describe('batch and ptr vectors with global ids', () => {
  it('an edge joining two graphs is cross-graph-edges in graph 0, the rest per graph as NetworkX counts', async () => {
    const rel = 'batch/batch.npz';
    const f = report(rel);
    expect(codes(f)).toEqual(['cross-graph-edges']);
    expect(problemOf(f, 'cross-graph-edges')).toMatchObject({ count: 1, graph: 0, graphs: 1, severity: 'error' });
    const ds = await dataset(rel);
    expect(ds.layout).toBe('batch');
    // Per-graph entries without the cross edge (it stays in its sender's graph until inRange drops it).
    const clean = perGraph(inRange(ds));
    expect(clean.nodes).toEqual(expected[rel].perGraph.map((p: PerGraph) => p.nodes));
    expect(clean.edges).toEqual(expected[rel].perGraph.map((p: PerGraph) => p.edges));
  });

  it('an unsorted batch vector: a warning, and the graphs checked as if regrouped', async () => {
    const rel = 'batch_unsorted/batch.npz';
    const f = report(rel);
    expect(codes(f)).toEqual(['unsorted-batch']);
    expect(problemOf(f, 'unsorted-batch').severity).toBe('warning');
    expectShape(await dataset(rel), expected[rel]);
  });

  it('ptr beside edge_index.npy and x.npy in one folder', async () => {
    const rel = 'ptr/edge_index.npy';
    const f = report(rel);
    expect(f.problems).toEqual([]);
    const ds = await dataset('ptr');
    expect(ds.layout).toBe('ptr');
    expectShape(ds, expected[rel]);
  });
});

describe('folder layouts', () => {
  it('graph-kernel text folder: the single-column files are part of the dataset, not skipped or checked as edge lists', async () => {
    const rel = 'kernel/LARK/LARK_A.txt';
    const r = checkPaths([path.join(dir, 'kernel/LARK')]);
    expect(r.skipped).toEqual([]);
    for (const f of r.files) expect(f.problems, f.path).toEqual([]);
    const ds = await dataset('kernel/LARK');
    expect(ds.layout).toBe('graph-kernel-text');
    expectShape(ds, expected[rel]);
    expect(Array.from(ds.graphLabels!.data)).toEqual(expected[rel].labels);
    expect(ds.nodeLabels?.rows).toBe(ds.nodeOffsets[ds.graphs]);
    expect(ds.nodeFeatures?.columns).toBe(2);
    // Given alone, NAME_A.txt reads its companions too.
    const alone = report(rel);
    expect(alone.dataset?.graphs).toBe(expected[rel].graphs);
  });

  it('graph labels with a line too many: graph-labels-mismatch on the labels file', () => {
    const r = checkPaths([path.join(dir, 'kernel_bad/LARK')]);
    const labels = r.files.find((f) => f.path.endsWith('LARK_graph_labels.txt'))!;
    const p = problemOf(labels, 'graph-labels-mismatch');
    expect(p.message).toContain(`has ${expected['kernel_bad/LARK/LARK_A.txt'].labelRows} graph labels but the dataset has ${expected['kernel_bad/LARK/LARK_A.txt'].graphs} graphs`);
  });

  it('per-dataset CSV folder (gzipped) with a split folder: a validation graph isomorphic to a training one', async () => {
    const rel = 'csv/raw/edge.csv.gz';
    const want = expected[rel];
    const r = checkPaths([path.join(dir, 'csv')]);
    expect(r.skipped).toEqual([]);
    const f = r.files.find((x) => x.path.endsWith('edge.csv.gz'))!;
    expect(f.dataset!.splits).toEqual(want.splits);
    const leak = problemOf(f, 'isomorphic-across-splits');
    expect(leak.count).toBe(want.leakedGraphs.length);
    expect(leak.graph).toBe(want.leakedGraphs[0]);
    const ds = await dataset('csv');
    expect(ds.layout).toBe('count-csv');
    expectShape(ds, want);
    expect(isomorphismClasses(ds).classes).toEqual(want.isomorphicClasses);
  });
});

describe('a dataset declared in hopscope.json', () => {
  // The manifest keys are our own (schemas/hopscope.schema.json); the files are the ptr fixture's
  // (written by NumPy) under names that say nothing, so only the manifest makes them a dataset.
  it('"nodeOffsets" with global edge ids, graph splits, and a missing file reported on the manifest', async () => {
    const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-ds-manifest-'));
    try {
      fs.copyFileSync(path.join(dir, 'ptr/edge_index.npy'), path.join(tmp, 'links.npy'));
      fs.copyFileSync(path.join(dir, 'ptr/ptr.npy'), path.join(tmp, 'cuts.npy'));
      fs.copyFileSync(path.join(dir, 'ptr/x.npy'), path.join(tmp, 'x.npy'));
      fs.writeFileSync(path.join(tmp, 'tr.npy'), encodeNpyInt64([3], [0, 1, 2]));
      fs.writeFileSync(path.join(tmp, 'te.npy'), encodeNpyInt64([2], [3, 4]));
      fs.writeFileSync(path.join(tmp, 'hopscope.json'), JSON.stringify({ graphs: [{ name: 'docks', edges: 'links.npy', nodeOffsets: 'cuts.npy', features: 'x.npy', splits: { train: 'tr.npy', test: 'te.npy' } }] }));
      const ds = (await loadDatasets([tmp]))[0]!.dataset;
      expect(ds.layout).toBe('manifest');
      expectShape(ds, expected['ptr/edge_index.npy']);
      expect(Array.from(ds.splits!.test!)).toEqual([3, 4]);
      const r = checkPaths([tmp]);
      expect(r.manifestProblems).toEqual([]);
      expect(r.files.find((f) => f.path.endsWith('links.npy'))!.dataset).toMatchObject({ graphs: 5, splits: { train: 3, val: 0, test: 2 } });
      fs.writeFileSync(path.join(tmp, 'hopscope.json'), JSON.stringify({ graphs: [{ edges: 'links.npy', nodeOffsets: 'gone.npy' }] }));
      expect(checkPaths([tmp]).manifestProblems[0]!.problem.message).toMatch(/gone\.npy \(nodeOffsets\) was not found/);
      fs.writeFileSync(path.join(tmp, 'hopscope.json'), JSON.stringify({ graphs: [{ edges: 'links.npy', nodeCounts: 'cuts.npy' }] }));
      expect(checkPaths([tmp]).manifestProblems[0]!.problem.message).toMatch(/nodeCounts needs "edgeCounts"/);
    } finally {
      fs.rmSync(tmp, { recursive: true, force: true });
    }
  });

  // The CSV fixture's tables (written from NetworkX graphs by make_dataset_fixtures.py, local ids)
  // saved as .npy under names that say nothing: "nodeCounts" + "edgeCounts" give the same graphs
  // as the folder, per NetworkX's counts in expected.json; counts that do not add up are refused.
  it('"nodeCounts" + "edgeCounts" with local edge ids read as the CSV folder reads its count files', () => {
    const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-ds-counts-'));
    const table = (name: string): number[][] => zlib.gunzipSync(fs.readFileSync(path.join(dir, 'csv/raw', name))).toString('utf8')
      .trim().split('\n').map((l) => l.split(',').map(Number));
    try {
      const edges = table('edge.csv.gz');
      const nodes = table('num-node-list.csv.gz').map((r) => r[0]!);
      const entries = table('num-edge-list.csv.gz').map((r) => r[0]!);
      fs.writeFileSync(path.join(tmp, 'links.npy'), encodeNpyInt64([edges.length, 2], edges.flat()));
      fs.writeFileSync(path.join(tmp, 'n.npy'), encodeNpyInt64([nodes.length], nodes));
      fs.writeFileSync(path.join(tmp, 'e.npy'), encodeNpyInt64([entries.length], entries));
      fs.writeFileSync(path.join(tmp, 'hopscope.json'), JSON.stringify({ graphs: [{ edges: 'links.npy', nodeCounts: 'n.npy', edgeCounts: 'e.npy' }] }));
      const r = checkPaths([tmp]);
      const ds = r.datasets!.find((d) => d.dataset)!.dataset!;
      expect(ds.layout).toBe('manifest');
      expectShape(ds, expected['csv/raw/edge.csv.gz']);
      fs.writeFileSync(path.join(tmp, 'e.npy'), encodeNpyInt64([entries.length], entries.map((c, g) => (g === 0 ? c + 1 : c))));
      const bad = checkPaths([tmp]).files.find((f) => f.path.endsWith('e.npy'))!;
      expect(problemOf(bad, 'bad-graph-offsets').message).toMatch(/add up to \d+ but links has \d+ edges/);
    } finally {
      fs.rmSync(tmp, { recursive: true, force: true });
    }
  });
});

/** A dataset of the given graphs (local edge lists), with optional one-column node colours. */
function build(graphs: Array<{ nodes: number; edges: number[][] }>, colours?: number[][][]): Dataset {
  const G = graphs.length;
  const nodeOffsets = new Float64Array(G + 1), edgeOffsets = new Float64Array(G + 1);
  const src: number[] = [], dst: number[] = [], col: number[] = [];
  graphs.forEach((g, i) => {
    nodeOffsets[i + 1] = nodeOffsets[i]! + g.nodes;
    for (const [u, v] of g.edges) { src.push(u!); dst.push(v!); }
    edgeOffsets[i + 1] = src.length;
    if (colours) for (const c of colours[i]!) col.push(c[0]!);
  });
  return {
    structureFile: 'mem', files: ['mem'], layout: 'manifest', graphs: G, nodeOffsets, edgeOffsets,
    src: Int32Array.from(src), dst: Int32Array.from(dst),
    ...(colours ? { nodeFeatures: { file: 'mem', tensor: 'x', rows: col.length, columns: 1, data: Float64Array.from(col) } } : {}),
  };
}

describe('exact isomorphism test against networkx.is_isomorphic', () => {
  type Pair = { name: string; nodes: number[]; a: number[][]; b: number[][]; isomorphic: boolean };
  it.each(expected.isomorphismPairs as Pair[])('$name', (p) => {
    const ds = build([{ nodes: p.nodes[0]!, edges: p.a }, { nodes: p.nodes[1]!, edges: p.b }]);
    const sg = simpleGraphs(ds);
    const { a } = refinedColours(ds, sg, 3);
    expect(isomorphic(ds, sg, a, 0, 1, 1_000_000)).toBe(p.isomorphic);
    // Without any refinement (every node one colour) the search alone must agree too.
    expect(isomorphic(ds, sg, new Uint32Array(a.length), 0, 1, 10_000_000)).toBe(p.isomorphic);
  });

  it('classes of 60 random small graphs, with and without node colours', () => {
    const r = expected.isomorphismRandom;
    const graphs = r.graphs.map((g: { nodes: number; edges: number[][] }) => ({ nodes: g.nodes, edges: g.edges }));
    expect(isomorphismClasses(build(graphs, r.graphs.map((g: { colours: number[][] }) => g.colours))).classes).toEqual(r.classes);
    expect(isomorphismClasses(build(graphs)).classes).toEqual(r.classesWithoutColours);
  });

  it('a pair the step budget cannot decide is reported as undecided, not as a verdict', () => {
    const p = expected.isomorphismPairs.find((q: { name: string }) => q.name.startsWith('Petersen / permuted'));
    const ds = build([{ nodes: 10, edges: p.a }, { nodes: 10, edges: p.b }]);
    const sg = simpleGraphs(ds);
    expect(isomorphic(ds, sg, new Uint32Array(20), 0, 1, 3)).toBeUndefined();
  });
});

describe('offsets and per-graph ids (definitions)', () => {
  it('offsets must start at 0, never decrease, be whole and end at the length', () => {
    expect(offsetsFault([0, 2, 5], 5)).toBeUndefined();
    expect(offsetsFault([1, 2, 5], 5)).toMatch(/first offset is 1/);
    expect(offsetsFault([0, 3, 2, 5], 5)).toMatch(/offset 2 is 2, below offset 1/);
    expect(offsetsFault([0, 2.5, 5], 5)).toMatch(/not a whole number/);
    expect(offsetsFault([0, 2, 4], 5)).toMatch(/last offset is 4/);
  });

  it('an id inside the batch but at its own graph\'s node count is out of range', () => {
    // Graph 0 has 3 nodes; its edge 0 → 3 names node 3, which exists only as graph 1's node 0.
    const ds = build([{ nodes: 3, edges: [[0, 1], [1, 0], [0, 3]] }, { nodes: 2, edges: [[0, 1], [1, 0]] }]);
    const ps = checkDataset(ds).map((p) => p.problem);
    const p = ps.find((q) => q.code === 'index-out-of-range')!;
    expect(p).toMatchObject({ count: 1, graph: 0, graphs: 1 });
    expect(p.message).toMatch(/graph 0 \(3 nodes\): edge 2 uses id 3/);
  });
});

describe('ids that look 1-based in every graph', () => {
  it('are out of range, and the message says they look 1-based (definition: local ids run 0..n-1)', () => {
    const ds = build([{ nodes: 3, edges: [[1, 2], [2, 1], [2, 3], [3, 2]] }, { nodes: 2, edges: [[1, 2], [2, 1]] }]);
    const p = checkDataset(ds).map((q) => q.problem).find((q) => q.code === 'index-out-of-range')!;
    expect(p).toMatchObject({ count: 4, graph: 0, graphs: 2 });
    expect(p.message).toMatch(/look 1-based/);
    const zeroBased = build([{ nodes: 3, edges: [[0, 1], [1, 3]] }]);
    expect(checkDataset(zeroBased).map((q) => q.problem).find((q) => q.code === 'index-out-of-range')!.message).not.toMatch(/1-based/);
  });
});

describe('per-graph columns (definitions: one feature row per node of every graph, one row per edge entry)', () => {
  it('NaN features are attributed to their graph; rows that do not add up are reported on the column', () => {
    const ds = build([{ nodes: 2, edges: [[0, 1], [1, 0]] }, { nodes: 3, edges: [[0, 1], [1, 0], [1, 2], [2, 1]] }]);
    ds.nodeFeatures = { file: 'x.npy', tensor: 'x', rows: 5, columns: 2, data: Float64Array.from([0, 0, 1, 1, 2, NaN, 3, 3, Infinity, 4]) };
    let ps = checkDataset(ds).map((p) => p.problem);
    const nf = ps.find((p) => p.code === 'non-finite-features')!;
    expect(nf).toMatchObject({ count: 2, graph: 1, graphs: 1 });
    expect(nf.locations!.map((l) => l.detail)).toEqual(['graph 1: node 0, column 1: NaN', 'graph 1: node 2, column 0: Infinity']);
    ds.nodeFeatures = { file: 'x.npy', tensor: 'x', rows: 4, columns: 1, data: Float64Array.from([0, 1, 2, 3]) };
    ds.edgeFeatures = { file: 'e.npy', tensor: 'e', rows: 5, columns: 1, data: Float64Array.from([0, 1, 2, 3, 4]) };
    ds.graphLabels = { file: 'y.npy', tensor: 'y', rows: 3, columns: 1, data: Int32Array.from([0, 1, 0]) };
    ps = checkDataset(ds).map((p) => p.problem);
    expect(ps.map((p) => p.code).sort()).toEqual(['edge-features-rows-mismatch', 'feature-rows-mismatch', 'graph-labels-mismatch']);
  });
});

describe('an editor re-check focused on one file of a dataset', () => {
  it('checks the whole dataset and reports its files; a focus elsewhere leaves it unchecked but claimed', () => {
    const folder = path.join(dir, 'kernel_bad/LARK');
    const labels = path.join(folder, 'LARK_graph_labels.txt');
    const r = checkPaths([folder], {}, { focus: [labels] });
    const f = r.files.find((x) => path.resolve(x.path) === labels)!;
    expect(f.problems.map((p) => p.code)).toEqual(['graph-labels-mismatch']);
    expect(r.files.some((x) => x.path.endsWith('LARK_A.txt') && x.dataset?.graphs === 8)).toBe(true);
    const other = checkPaths([path.join(dir, 'kernel_bad'), path.join(dir, 'ptr')], {}, { focus: [path.join(dir, 'ptr/x.npy')] });
    expect(other.files.some((x) => x.path.includes('kernel_bad'))).toBe(false);
    expect(other.datasets!.find((d) => d.files.some((p) => p.includes('kernel_bad')))!.checked).toBe(false);
  });
});

describe('regular look-alikes: the circular skip-link graphs', () => {
  // tests/fixtures/ceiling/csl.pt (make_ceiling_fixtures.py, torch.save of (data, slices)): 15
  // relabelled copies of each of the 10 circular skip-link graphs of Murphy et al. 2019 (41 nodes,
  // 4-regular, skips 2, 3, 4, 5, 6, 9, 11, 12, 13, 16), labelled by skip. The copies of one skip are
  // isomorphic by construction; graphs of different skips are not (the set's published design,
  // docs/references.md §12). 1-WL sees one class; the exact test must find the ten.
  it('fall into ten isomorphism classes of 15, one label each, every pair decided', async () => {
    const list = await loadDatasets([path.join(__dirname, '../fixtures/ceiling/csl.pt')]);
    const ds = list[0]!.dataset;
    const r = isomorphismClasses(ds);
    expect(r.undecided).toEqual([]);
    expect(r.classes.map((c) => c.length)).toEqual(new Array(10).fill(15));
    for (const c of r.classes) expect(new Set(c.map((g) => ds.graphLabels!.data[g])).size).toBe(1);
    expect(list[0]!.problems.map((p) => p.code)).not.toContain('isomorphic-label-conflict');
  });
});

describe('many relabelled copies of one regular graph', () => {
  // Definition: the circulant graph joining u to u + s (mod 25) is the 25-cycle for every s coprime
  // to 25 (s = 1, 2, 3 here), so all 3,000 graphs are isomorphic; labels alternate, so they form one
  // conflicting group. Stored forms repeat every third graph (matched by the identity).
  it('form one class, every graph decided', () => {
    const G = 3000, n = 25;
    const graphs = Array.from({ length: G }, (_, g) => ({ nodes: n, edges: Array.from({ length: n }, (_, u) => [[u, (u + 1 + (g % 3)) % n], [(u + 1 + (g % 3)) % n, u]]).flat() }));
    const ds = build(graphs);
    const r = isomorphismClasses(ds);
    expect(r.undecidedCount).toBe(0);
    expect(r.classes).toEqual([Array.from({ length: G }, (_, g) => g)]);
    ds.graphLabels = { file: 'y', tensor: 'y', rows: G, columns: 1, data: Int32Array.from({ length: G }, (_, g) => g % 2) };
    const p = checkDataset(ds).map((q) => q.problem).find((q) => q.code === 'isomorphic-label-conflict')!;
    expect(p).toMatchObject({ count: 1, graphs: G, graph: 0 });
  });
});

describe('a search cut short', () => {
  it('says so in an info instead of staying silent', () => {
    const p = expected.isomorphismPairs.find((q: { name: string }) => q.name.startsWith('Petersen / permuted'));
    const ds = build([{ nodes: 10, edges: p.a }, { nodes: 10, edges: p.b }]);
    ds.graphLabels = { file: 'y', tensor: 'y', rows: 2, columns: 1, data: Int32Array.from([0, 1]) };
    const ps = checkDataset(ds, { isoStepsPerPair: 1 }).map((q) => q.problem);
    expect(ps).toHaveLength(1);
    expect(ps[0]).toMatchObject({ code: 'isomorphic-label-conflict', severity: 'info', count: 1 });
    expect(ps[0]!.message).toMatch(/search is incomplete: 1 graph could not be compared/);
  });
});

describe('node masks beside a dataset are not graph splits', () => {
  it('a boolean mask with one entry per node, or node ids, is left alone; a split file naming missing graphs is bad-graph-offsets', async () => {
    const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-ds-masks-'));
    try {
      for (const n of ['edge_index.npy', 'x.npy', 'ptr.npy']) fs.copyFileSync(path.join(dir, 'ptr', n), path.join(tmp, n));
      const nodes = 19; // the ptr fixture's nodes (expected.json perGraph sums)
      expect(expected['ptr/edge_index.npy'].perGraph.reduce((s: number, p: PerGraph) => s + p.nodes, 0)).toBe(nodes);
      fs.writeFileSync(path.join(tmp, 'train_idx.npy'), encodeNpyInt64([3], [0, 7, 18]));
      let r = checkPaths([tmp]);
      expect(r.files.flatMap((f) => f.problems)).toEqual([]);
      expect(r.files.find((f) => f.dataset)!.dataset!.splits).toBeNull();
      fs.rmSync(path.join(tmp, 'train_idx.npy'));
      fs.mkdirSync(path.join(tmp, 'split/by_day'), { recursive: true });
      fs.writeFileSync(path.join(tmp, 'split/by_day/test.npy'), encodeNpyInt64([2], [1, 9]));
      r = checkPaths([tmp]);
      const bad = r.files.flatMap((f) => f.problems).find((p) => p.code === 'bad-graph-offsets');
      expect(bad?.message).toMatch(/names graphs outside the dataset's 5/);
    } finally {
      fs.rmSync(tmp, { recursive: true, force: true });
    }
  });
});

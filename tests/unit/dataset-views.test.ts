/**
 * The editor's views of a dataset of many graphs (server/src/node/dataset-views.ts) through the
 * graph store, as the worker answers them: the viewer's table of graphs and the panel's field of
 * one graph taken alone. Data: tests/fixtures/ceiling/csl.npz, the circular skip-link graphs
 * (Murphy et al. 2019) written by NumPy from NetworkX circulant graphs
 * (tests/fixtures/make_ceiling_fixtures.py): 150 graphs of 41 nodes, each 4-regular, stored both
 * ways (164 edge entries), with a batch vector and ten classes of 15 graphs (np.unique of y).
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { GraphStore } from '../../server/src/node/graph-store';
import { graphKey, parseGraphKey } from '../../server/src/node/graph-key';
import { datasetsFor, problemsPerGraph } from '../../server/src/node/dataset-views';
import { ceilingAnswer } from '../../server/src/node/ceiling-input';
import { unpackColumn } from '../../common/columns';
import type { DatasetTable, FieldViewPayload } from '../../common/protocol';

const CSL = path.join(__dirname, '../fixtures/ceiling/csl.npz');

describe('dataset views', () => {
  it('table of graphs of the CSL dataset: 150 rows of 41 nodes and 164 edge entries, ten classes of 15', () => {
    const store = new GraphStore();
    const t = store.datasetTable({ path: CSL }) as DatasetTable;
    expect(t).not.toBeNull();
    expect(t.graphs).toBe(150);
    expect(Array.from(unpackColumn(t.nodes))).toEqual(new Array(150).fill(41));
    expect(Array.from(unpackColumn(t.edges))).toEqual(new Array(150).fill(164));
    expect(t.label?.kind).toBe('class');
    if (t.label?.kind !== 'class') return;
    expect(t.label.classes).toEqual(['0', '1', '2', '3', '4', '5', '6', '7', '8', '9']);
    const codes = Array.from(unpackColumn(t.label.codes));
    for (let c = 0; c < 10; c++) expect(codes.filter((x) => x === c).length).toBe(15);
    expect(t.split).toBeNull();
    expect(Array.from(unpackColumn(t.problems)).every((x) => x === 0)).toBe(true);
  });

  it('the datasets of a file are read once while its files are unchanged, and the ceiling takes them as found', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-dsmemo-'));
    const copy = path.join(dir, 'csl.npz');
    fs.copyFileSync(CSL, copy);
    const first = datasetsFor(copy, {}, {});
    expect(first).toHaveLength(1);
    expect(datasetsFor(copy, {}, {})).toBe(first); // the memo: not checked again
    const later = new Date(Date.now() + 5000);
    fs.utimesSync(copy, later, later);
    const again = datasetsFor(copy, {}, {});
    expect(again).not.toBe(first); // the file changed on disk: read again
    expect(again[0]!.dataset.graphs).toBe(150);
    // The ceiling answers from the datasets it is given: the 150 CSL graphs are all 4-regular, so
    // 1-WL tells none apart; with ten classes the ceiling is 0.1, with one label for all it is 1.
    const asFound = ceilingAnswer(copy, {}, {}, {}, again);
    expect(asFound).toMatchObject({ task: 'graph', ceiling: 0.1 });
    const labels = again[0]!.dataset.graphLabels!;
    const alike = { ...again[0]!, dataset: { ...again[0]!.dataset, graphLabels: { ...labels, data: new Int32Array(labels.data.length) } } };
    expect(ceilingAnswer(copy, {}, {}, {}, [alike])).toMatchObject({ task: 'graph', ceiling: 1 });
    fs.rmSync(dir, { recursive: true, force: true });
  });

  it('the panel walks one graph of the dataset alone, by its local ids', () => {
    const store = new GraphStore();
    const r = store.fieldView({ path: graphKey(CSL, 7), node: 0, layers: 1 }) as FieldViewPayload;
    expect('error' in r).toBe(false);
    // One CSL graph: 41 nodes, 4-regular, so a node hears itself and its four neighbours after one layer.
    expect(r.graphNodes).toBe(41);
    expect(r.perHop).toEqual([1, 4]);
    expect(r.graph).toEqual({ index: 7, of: 150 });
    expect(Math.max(...r.ids)).toBeLessThan(41);
    // The file without a graph: its first graph.
    const first = store.fieldView({ path: CSL, node: 40, layers: 1 }) as FieldViewPayload;
    expect(first.graph).toEqual({ index: 0, of: 150 });
    // A graph beyond the dataset, and a node beyond the graph: sentences, not crashes.
    expect(store.fieldView({ path: graphKey(CSL, 150), node: 0, layers: 1 })).toEqual({ error: 'csl.npz holds 150 graphs (0 to 149); there is no graph 150.' });
    expect((store.fieldView({ path: graphKey(CSL, 3), node: 41, layers: 1 }) as { error: string }).error).toMatch(/Node 41 is not in csl\.npz: its ids run from 0 to 40/);
  });

  it('a file that is no dataset has no table; a key names its file and graph', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-dsv-'));
    const el = path.join(dir, 'lanes.edges');
    fs.writeFileSync(el, '0 1\n1 2\n');
    const store = new GraphStore();
    expect(store.datasetTable({ path: el })).toBeNull();
    expect((store.fieldView({ path: graphKey(el, 2), node: 0, layers: 1 }) as { error: string }).error).toMatch(/not a dataset of many graphs/);
    expect(parseGraphKey(graphKey('/a/b c.pt', 12))).toEqual({ file: '/a/b c.pt', graph: 12 });
    expect(parseGraphKey('/a/b.pt')).toEqual({ file: '/a/b.pt' });
    fs.rmSync(dir, { recursive: true, force: true });
  });

  it('counts each problem once per graph it lists', () => {
    const per = problemsPerGraph([
      { code: 'index-out-of-range', severity: 'error', message: '', count: 3, graph: 1, graphs: 2, locations: [{ graph: 1 }, { graph: 1 }, { graph: 4 }] },
      { code: 'empty-graphs', severity: 'warning', message: '', count: 1, graph: 4, graphs: 1 },
      { code: 'self-loops', severity: 'info', message: '', count: 1 },
      { code: 'duplicate-edges', severity: 'warning', message: '', count: 1, graph: 99 },
    ], 5);
    expect(Array.from(per)).toEqual([0, 1, 0, 0, 2]);
  });
});

describe('graph lines of a text dataset', () => {
  it('each listed place of a graph problem learns the lines of its graph\'s edges', () => {
    // The graph-kernel benchmark text layout (docs/references.md §11): NAME_A.txt one edge per line,
    // 1-based global ids; NAME_graph_indicator.txt the graph of each node. Graph 1 = nodes 1-3 (lines
    // 1-4 of A), graph 2 = nodes 4-6 (lines 5-8); line 3 joins node 3 (graph 1) to node 4 (graph 2).
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-lines-'));
    fs.writeFileSync(path.join(dir, 'TOY_A.txt'), '1, 2\n2, 1\n3, 4\n2, 3\n4, 5\n5, 4\n5, 6\n6, 5\n');
    fs.writeFileSync(path.join(dir, 'TOY_graph_indicator.txt'), '1\n1\n1\n2\n2\n2\n');
    fs.writeFileSync(path.join(dir, 'TOY_graph_labels.txt'), '0\n1\n');
    const store = new GraphStore();
    const out = store.check({ paths: [dir] });
    const a = out.files.find((f) => f.path.endsWith('TOY_A.txt'))!;
    const cross = a.problems.find((p) => p.code === 'cross-graph-edges');
    expect(cross, JSON.stringify(a.problems.map((p) => p.code))).toBeDefined();
    const loc = cross!.locations!.find((l) => l.line === 3)!;
    expect(loc.graph).toBe(0);
    expect(loc.graphLines).toEqual({ first: 1, last: 4 });
    fs.rmSync(dir, { recursive: true, force: true });
  });
});

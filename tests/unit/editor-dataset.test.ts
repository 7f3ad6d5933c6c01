/**
 * The editor side of datasets and typed graphs, without an editor: packed table columns
 * (common/columns.ts), the table of graphs' sort order (webview/src/viewer-graphs.ts), the hover's
 * dataset / typed / ceiling lines (server/src/lsp/hover-text.ts) and dataset diagnostics
 * (server/src/lsp/diagnostics.ts: which graph, related places per graph, the graph's slice).
 */
import { describe, expect, it } from 'vitest';
import { packColumn, unpackColumn } from '../../common/columns';
import { sortOrder, type GraphRows } from '../../webview/src/viewer-graphs';
import { ceilingMarkdown, datasetMarkdown, fileSummaryMarkdown, typedMarkdown } from '../../server/src/lsp/hover-text';
import { toDiagnostic, withGraph } from '../../server/src/lsp/diagnostics';
import type { FileReport, Problem } from '../../common/report';

describe('packed columns', () => {
  // Expected base64 written by NumPy 1.24 (Debian python3-numpy):
  // base64.b64encode(np.array([0, 1, -1, 2**31 - 1, -2**31], dtype='<i4').tobytes())
  // base64.b64encode(np.array([0.5, nan, -2.0, 1e300], dtype='<f8').tobytes())
  it('are the little-endian bytes NumPy writes for <i4 and <f8', () => {
    const i = packColumn(new Int32Array([0, 1, -1, 2 ** 31 - 1, -(2 ** 31)]));
    expect(i).toEqual({ dtype: 'int32', length: 5, base64: 'AAAAAAEAAAD/////////fwAAAIA=' });
    const f = packColumn(new Float64Array([0.5, NaN, -2, 1e300]));
    expect(f).toEqual({ dtype: 'float64', length: 4, base64: 'AAAAAAAA4D8AAAAAAAD4fwAAAAAAAADAnHUAiDzkN34=' });
    expect(Array.from(unpackColumn(i))).toEqual([0, 1, -1, 2 ** 31 - 1, -(2 ** 31)]);
    const back = unpackColumn(f);
    expect(back).toBeInstanceOf(Float64Array);
    expect(Array.from(back)).toEqual([0.5, NaN, -2, 1e300]);
  });

  it('round-trip a large column and a view into a larger buffer; refuse a wrong length', () => {
    const big = new Int32Array(100_003);
    for (let k = 0; k < big.length; k++) big[k] = (k * 2654435761) | 0;
    expect(Array.from(unpackColumn(packColumn(big)))).toEqual(Array.from(big));
    const view = new Int32Array(big.buffer, 8, 3);
    expect(Array.from(unpackColumn(packColumn(view)))).toEqual([big[2], big[3], big[4]]);
    expect(() => unpackColumn({ ...packColumn(view), length: 4 })).toThrow(/12 bytes for 4 int32/);
  });
});

describe('table of graphs: sort order', () => {
  const rows = (nodes: number[], extra: Partial<GraphRows> = {}): GraphRows => ({
    graphs: nodes.length, nodes: Int32Array.from(nodes), edges: Int32Array.from(nodes.map((n) => 2 * n)),
    problems: new Int32Array(nodes.length), problemCodes: [], ...extra,
  });
  // Reference: Array.prototype.sort on plain arrays (ECMAScript: stable since ES2019), ties by index.
  const reference = (keys: number[], desc: boolean) => keys.map((_, i) => i).sort((a, b) => (desc ? keys[b]! - keys[a]! : keys[a]! - keys[b]!) || a - b);

  it('orders by an integer column either way, ties by index, negative keys included', () => {
    const keys: number[] = [];
    let s = 7;
    for (let i = 0; i < 5000; i++) { s = (s * 48271) % 2147483647; keys.push((s % 201) - 100); }
    const r = rows(keys);
    expect(Array.from(sortOrder(r, 'nodes', false))).toEqual(reference(keys, false));
    expect(Array.from(sortOrder(r, 'nodes', true))).toEqual(reference(keys, true));
    expect(Array.from(sortOrder(r, 'edges', true))).toEqual(reference(keys.map((k) => 2 * k), true));
    expect(Array.from(sortOrder(r, 'index', true)).slice(0, 3)).toEqual([4999, 4998, 4997]);
  });

  it('keys at the int32 limits with 2^20 rows stay exact', () => {
    const n = 1 << 20;
    const nodes = new Int32Array(n);
    for (let i = 0; i < n; i++) nodes[i] = i % 2 ? 2 ** 31 - 1 : -(2 ** 31);
    const order = sortOrder({ graphs: n, nodes, edges: nodes, problems: nodes, problemCodes: [] }, 'nodes', true);
    expect(order[0]).toBe(1);
    expect(order[n / 2 - 1]).toBe(n - 1);
    expect(order[n / 2]).toBe(0);
    expect(order[n - 1]).toBe(n - 2);
  });

  it('numeric targets put missing values last in both directions', () => {
    const r = rows([1, 1, 1, 1], { values: Float64Array.from([2, NaN, -1, 2]) });
    expect(Array.from(sortOrder(r, 'label', false))).toEqual([2, 0, 3, 1]);
    expect(Array.from(sortOrder(r, 'label', true))).toEqual([0, 3, 2, 1]);
  });
});

describe('hover: datasets, typed graphs, the ceiling', () => {
  const dataset = {
    graphs: 1200, nodes: { min: 4, max: 38, mean: 17.25, total: 20700 }, edges: { min: 6, max: 80, mean: 36.5, total: 43800 },
    graphLabels: { classes: ['0', '1'], counts: [700, 500] }, splits: { train: 960, val: 120, test: 120 },
  };

  it('summarises a dataset: graphs, nodes and edges per graph, classes, splits', () => {
    const md = datasetMarkdown(dataset).join('\n');
    expect(md).toContain('**Dataset of 1,200 graphs** · nodes per graph 4–38 (mean 17.3) · edge entries per graph 6–80 (mean 36.5)');
    expect(md).toContain('Graph labels: 2 classes (0: 700, 1: 500)');
    expect(md).toContain('Splits: train 960 · val 120 · test 120');
    expect(datasetMarkdown({ ...dataset, graphLabels: null, splits: null }).join('\n')).toContain('No graph labels.');
  });

  it('lists a typed graph\'s types and relations, names escaped', () => {
    const md = typedMarkdown({ nodeTypes: { dock: 48, '*rider*': 120 }, relations: [{ source: '*rider*', name: 'rides_to', target: 'dock', edges: 300 }] }).join('\n');
    expect(md).toContain('**Typed graph**: dock (48), \\*rider\\* (120)');
    expect(md).toContain('| \\*rider\\* | rides\\_to | dock | 300 |');
  });

  it('states the ceiling: graph-level, node-level by layers, computing, numeric targets', () => {
    expect(ceilingMarkdown({ task: 'graph', graphs: 10, labelled: 10, labelKind: 'classes', start: 'uniform', groups: [], groupCount: 1, conflictingGroups: 1, ceiling: 0.1, rounds: 2 }).join('\n'))
      .toMatch(/^\*\*Accuracy ceiling 10\.0%\*\*: .*10 labelled graphs .*1 group of 1-WL-equivalent graphs carry different labels/);
    expect(ceilingMarkdown({
      task: 'node', nodes: 34, labelled: 34, start: 'uniform', stableAfter: 3,
      perLayer: [{ layers: 0, ceiling: 0.5294, conflictingNodes: 34, classes: 1 }, { layers: 1, ceiling: 1, conflictingNodes: 0, classes: 12 }],
    })[0]).toBe('**Accuracy ceiling by layers** (34 labelled nodes): L=0: 52.9% · L=1: 100%');
    expect(ceilingMarkdown({ computing: true })[0]).toMatch(/computing…/);
    expect(ceilingMarkdown({ error: 'no labels' })).toEqual([]);
    expect(ceilingMarkdown({ task: 'graph', graphs: 3, labelled: 3, labelKind: 'targets', start: 'uniform', groups: [], groupCount: 2, conflictingGroups: 1, ceiling: null, rounds: 1, errorFloor: { mse: 0.125, mae: 0.25 } })[0])
      .toBe('Numeric targets: 1 group of graphs 1-WL cannot tell apart hold different targets (lowest reachable mean squared error 0.125).');
  });

  it('puts them into the file hover', () => {
    const report: FileReport = { path: '/w/rides.pt', format: 'pt', tensors: [], graph: null, problems: [], dataset };
    const md = fileSummaryMarkdown('rides.pt', report, { ceiling: { computing: true } });
    expect(md.indexOf('**Dataset of 1,200 graphs**')).toBeGreaterThan(0);
    expect(md).toContain('computing…');
  });
});

describe('diagnostics of dataset problems', () => {
  const base: Problem = { code: 'index-out-of-range', severity: 'error', message: 'edge ids beyond their graph\'s node count', count: 7 };

  it('say which graph unless the message does', () => {
    expect(withGraph(base)).toBe(base.message);
    expect(withGraph({ ...base, graph: 17, graphs: 1 })).toBe(`${base.message} (graph 17)`);
    expect(withGraph({ ...base, graph: 17, graphs: 5 })).toBe(`${base.message} (graph 17 and 4 more graphs)`);
    expect(withGraph({ ...base, message: 'in graph 17: id 9 ≥ 5 nodes', graph: 17, graphs: 2 })).toBe('in graph 17: id 9 ≥ 5 nodes');
    // "graph 170" does not name graph 17.
    expect(withGraph({ ...base, message: 'first in graph 170', graph: 17 })).toBe('first in graph 170 (graph 17)');
  });

  it('relate every listed place to its graph, and point at the graph\'s lines when known', () => {
    const p: Problem = {
      ...base, graph: 2, graphs: 2, line: 9, column: 3,
      locations: [
        { line: 9, column: 3, length: 1, graph: 2, detail: 'edge 8: 1 → 7', graphLines: { first: 7, last: 12 } },
        { line: 10, column: 1, length: 1, graph: 2, detail: 'edge 9: 7 → 1', graphLines: { first: 7, last: 12 } },
        { line: 20, column: 3, length: 2, graph: 4, detail: 'edge 19: 0 → 11' },
      ],
    };
    const d = toDiagnostic(p, '/w/A.txt', 'file:///README.md#problem-', true);
    expect(d.message).toBe(`${base.message} (graph 2 and 1 more graph)`);
    expect(d.range).toEqual({ start: { line: 8, character: 2 }, end: { line: 8, character: 3 } });
    expect(d.data).toEqual({ count: 7, graph: 2, graphs: 2 });
    expect(d.relatedInformation!.map((r) => [r.message, r.location.range.start.line, r.location.range.end.line])).toEqual([
      ['graph 2: edge 8: 1 → 7', 8, 8],
      ['graph 2: its lines 7–12', 6, 12],
      ['graph 2: edge 9: 7 → 1', 9, 9],
      ['graph 4: edge 19: 0 → 11', 19, 19],
    ]);
    // A client without related information gets the message only.
    expect(toDiagnostic(p, '/w/A.txt', '', false).relatedInformation).toBeUndefined();
  });
});

describe('hover: which files ask for the ceiling', () => {
  it('labelled graphs and labelled datasets of a bounded size; not typed graphs or unlabelled ones', async () => {
    const { wantsCeiling, HOVER_CEILING_MAX_EDGES } = await import('../../server/src/lsp/ceiling-hover');
    const labels = { name: 'y', dtype: 'int64', shape: [34], role: 'labels', min: 0, max: 1, sum: 17, nonFinite: 0 };
    const graph = { nodes: 34, edges: 156, directed: false, selfLoops: 0, duplicateEdges: 0, asymmetricPairs: 0, isolatedNodes: 0, components: 1, indexBase: 0 as const };
    const base: FileReport = { path: '/w/k.npz', format: 'npz', tensors: [labels], graph, problems: [] };
    expect(wantsCeiling(base)).toBe(true);
    expect(wantsCeiling({ ...base, tensors: [] })).toBe(false);
    expect(wantsCeiling({ ...base, graph: { ...graph, edges: HOVER_CEILING_MAX_EDGES.graph + 1 } })).toBe(false);
    expect(wantsCeiling({ ...base, typed: { nodeTypes: { a: 3 }, relations: [] } })).toBe(false);
    const spread = { min: 1, max: 1, mean: 1, total: 10 };
    const ds = { graphs: 10, nodes: spread, edges: spread, graphLabels: { classes: ['0'], counts: [10] }, splits: null };
    expect(wantsCeiling({ ...base, graph: null, tensors: [], dataset: ds })).toBe(true);
    expect(wantsCeiling({ ...base, graph: null, tensors: [], dataset: { ...ds, graphLabels: null } })).toBe(false);
    expect(wantsCeiling({ ...base, graph: null, tensors: [], dataset: { ...ds, edges: { ...spread, total: HOVER_CEILING_MAX_EDGES.dataset + 1 } } })).toBe(false);
  });
});

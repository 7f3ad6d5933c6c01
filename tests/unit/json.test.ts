import { describe, expect, it } from 'vitest';
import { firstSyntaxError, readJson } from '../../server/src/core/formats/json';
import { DEFAULT_LIMITS, UnreadableError, type ReadResult } from '../../server/src/core/formats/types';
import { dense, expected, fixture, pairs, span, utf8 } from './text-fixture-helpers';
import { expectUnreadable } from './binary-helpers';

const read = (bytes: Uint8Array): ReadResult => readJson(bytes, 'g.json', DEFAULT_LIMITS);
const readText = (text: string): ReadResult => read(utf8(text));

const unreadable = (fn: () => unknown): UnreadableError => expectUnreadable(fn);

// Fixtures written by Python's json module (with networkx 2.8 / numpy 1.24 data), see
// make_text_fixtures.py; positions in expected.json were found by Python in the written text.
describe('JSON written by Python', () => {
  it('reads an array of pairs as edge_index [2, E] (karate_pairs.json, json.dumps)', () => {
    const exp = expected['karate_pairs.json'];
    const r = read(fixture('karate_pairs.json'));
    expect(r.format).toBe('json');
    const ei = dense(r, 'edge_index');
    expect(ei.shape).toEqual([2, 78]); // docs/references.md §2.1: 78 edges
    expect(ei.dtype).toBe('int64');
    expect(ei.data).toBeInstanceOf(Int32Array);
    expect(ei.declaredRole).toBe('edge-index');
    expect(pairs(ei)).toEqual(exp.edges);
    // Flat index E + 3 is the target of pair 3.
    expect(span(ei.locator!.locate(78 + 3))).toEqual(exp.target3);
    expect(span(ei.locator!.locate(0))).toEqual({ line: 1, column: 3, length: 1 });
    expect(ei.locator!.locate(156)).toBeUndefined();
  });

  it('reads an object of named arrays with nested masks (karate_graph.json, json.dumps indent=2)', () => {
    const exp = expected['karate_graph.json'];
    const r = read(fixture('karate_graph.json'));
    expect(r.tensors.map((t) => t.name)).toEqual(
      ['edge_index', 'x', 'y', 'masks.train', 'masks.val', 'masks.test', 'ones'],
    ); // `names` holds strings and is skipped; `num_nodes` is a scalar
    expect(r.hints?.nodes).toBe(34);
    const ei = dense(r, 'edge_index');
    expect(ei.shape).toEqual([2, 156]);
    expect(ei.declaredRole).toBeUndefined();
    expect([Array.from(ei.data.subarray(0, 156)), Array.from(ei.data.subarray(156))]).toEqual(exp.edge_index);
    const x = dense(r, 'x');
    expect(x.dtype).toBe('float64');
    expect(x.shape).toEqual([34, 3]);
    expect(Array.from(x.data)).toEqual(exp.x.flat());
    expect(span(x.locator!.locate(2 * 3 + 1))).toEqual(exp.x21);
    const y = dense(r, 'y');
    expect(y.dtype).toBe('int64');
    expect(Array.from(y.data)).toEqual(exp.y);
    const train = dense(r, 'masks.train');
    expect(train.dtype).toBe('bool');
    expect(train.data).toBeInstanceOf(Uint8Array);
    expect(Array.from(train.data)).toEqual(exp.train.map((b: boolean) => (b ? 1 : 0)));
    // json.dumps writes 1.0 for a float: the text says float, so the dtype is float64.
    expect(dense(r, 'ones').dtype).toBe('float64');
  });

  it("refuses Python's NaN token with its line and column", () => {
    const exp = expected['python_nan.json'];
    const e = unreadable(() => read(fixture('python_nan.json')));
    expect(e.message).toContain(`line ${exp.line}, column ${exp.column}`);
    expect(e.message).toContain('allow_nan');
    expect(e.line).toBe(1);
  });

  it('refuses ragged arrays naming the key', () => {
    expect(unreadable(() => read(fixture('ragged.json'))).message).toContain(`'${expected['ragged.json'].key}'`);
  });
});

describe('dtypes and shapes', () => {
  it('infers bool, int64 and float64, with null as NaN', () => {
    const r = readText('{"b": [true, false], "i": [1, -2], "f": [1, 2.5], "n": [1, null], "e": [1e3]}');
    expect(dense(r, 'b').dtype).toBe('bool');
    expect(dense(r, 'i').dtype).toBe('int64');
    expect(dense(r, 'f').dtype).toBe('float64');
    const n = dense(r, 'n');
    expect(n.dtype).toBe('float64');
    expect(Number.isNaN(n.data[1])).toBe(true);
    expect(dense(r, 'e').dtype).toBe('float64');
  });

  it('stores int64 values beyond int32 in a Float64Array', () => {
    const t = dense(readText('{"ids": [1, 3000000000]}'), 'ids');
    expect(t.dtype).toBe('int64');
    expect(t.data).toBeInstanceOf(Float64Array);
  });

  it('names nested arrays by their key path', () => {
    const r = readText('{"data": {"graph": {"edge_index": [[0], [1]]}, "split": {"train": [0, 1]}}}');
    expect(r.tensors.map((t) => t.name)).toEqual(['data.graph.edge_index', 'data.split.train']);
    expect(dense(r, 'data.graph.edge_index').shape).toEqual([2, 1]);
    expect(span(dense(r, 'data.split.train').locator!.locate(1))).toEqual({ line: 1, column: 71, length: 1 });
  });

  it('skips arrays of strings and of objects', () => {
    const r = readText('{"a": ["x"], "b": [{"c": 1}], "d": [[1, "y"]], "e": [1]}');
    expect(r.tensors.map((t) => t.name)).toEqual(['e']);
  });

  it('takes a top-level [2, E] array as it stands and other arrays as `data`', () => {
    const r = readText('[[0, 1, 2], [1, 2, 0]]');
    expect(dense(r, 'edge_index').shape).toEqual([2, 3]);
    expect(Array.from(dense(r, 'edge_index').data)).toEqual([0, 1, 2, 1, 2, 0]);
    expect(dense(readText('[1, 2, 3]'), 'data').shape).toEqual([3]);
    expect(dense(readText('[]'), 'edge_index').shape).toEqual([2, 0]);
  });

  it('reads empty arrays and scalars without tensors', () => {
    expect(dense(readText('{"x": []}'), 'x').shape).toEqual([0]);
    expect(dense(readText('{"x": [[], []]}'), 'x').shape).toEqual([2, 0]);
    expect(readText('42').tensors).toEqual([]);
  });

  it('refuses ragged arrays of any depth', () => {
    expect(unreadable(() => readText('{"m": {"x": [[1, 2], [3, 4, 5]]}}')).message).toContain("'m.x'");
    unreadable(() => readText('{"x": [[1], 2]}'));
    unreadable(() => readText('{"x": [1, [2]]}'));
  });
});

describe('syntax errors', () => {
  // Offsets below follow the RFC 8259 grammar, worked out by hand.
  const cases: Array<[string, number, number]> = [
    ['{"a": }', 1, 7],
    ['[1, 2', 1, 6],
    ['{"a": [1, 2,]}', 1, 13],
    ['\n\n  [1, 2 3]', 3, 9],
    ['{"a" 1}', 1, 6],
    ['[01]', 1, 3],
    ['[1] [2]', 1, 5],
    ['["a\\x"]', 1, 5],
  ];
  for (const [text, line, column] of cases) {
    it(`locates the error in ${JSON.stringify(text)}`, () => {
      const e = unreadable(() => readText(text));
      expect(e.message).toContain(`line ${line}, column ${column}`);
      expect(e.line).toBe(line);
    });
  }

  it('agrees with JSON.parse on what is valid', () => {
    for (const t of ['{}', '[]', '0', '-0.5e+3', '"\\u00e9"', 'true', ' null ', '{"a": [1, {"b": false}]}']) {
      expect(() => JSON.parse(t)).not.toThrow();
      expect(firstSyntaxError(t)).toBeUndefined();
    }
  });

  it('refuses empty input, invalid UTF-8 and binary data', () => {
    expect(unreadable(() => readText('')).message).toContain('end of input');
    expect(unreadable(() => read(new Uint8Array([0x5b, 0xff, 0x5d]))).message).toContain('UTF-8');
    expect(unreadable(() => read(new Uint8Array([0x5b, 0, 0x5d]))).message).toContain('not a text file');
  });

  it('skips a UTF-8 byte order mark', () => {
    const r = read(new Uint8Array([0xef, 0xbb, 0xbf, ...utf8('{"y": [1]}')]));
    expect(span(dense(r, 'y').locator!.locate(0))).toEqual({ line: 1, column: 8, length: 1 });
  });
});

describe('hostile shapes', () => {
  it('finds the ragged row before allocating for a shape the first rows promise', () => {
    const rows = ['[' + new Array(5000).fill('1').join(',') + ']', ...new Array(3000).fill('[]')];
    const e = unreadable(() => readText(`{"x": [${rows.join(',')}]}`));
    expect(e.message).toContain("'x' is ragged");
  });

  it('refuses arrays nested deeper than 32 levels', () => {
    unreadable(() => readText('{"x": ' + '['.repeat(40) + ']'.repeat(40) + '}'));
    unreadable(() => readText('['.repeat(100000) + ']'.repeat(100000)));
  });

  it('reads deeply nested objects without tensors below depth 64', () => {
    const r = readText('{"a": '.repeat(100) + '[1]' + '}'.repeat(100));
    expect(r.tensors).toEqual([]);
  });
});

// Node-link JSON written by NetworkX 2.8's json_graph.node_link_data (make_text_fixtures.py);
// node counts, edge counts, self-loops and components in expected.json are NetworkX's own.
describe('node-link JSON (NetworkX node_link_data)', () => {
  it('reads an undirected graph as both directions with its link weights (karate_nodelink.json)', () => {
    const exp = expected['karate_nodelink.json'];
    const r = read(fixture('karate_nodelink.json'));
    expect(exp.directed).toBe(false);
    expect(r.hints).toEqual({ nodes: exp.nodes, directed: false });
    const ei = dense(r, 'edge_index');
    expect(ei.declaredRole).toBe('edge-index');
    expect(ei.shape).toEqual([2, 2 * exp.edges - exp.selfLoops]); // 156 = 2 · 78 (docs/references.md §2.1)
    const got = pairs(ei);
    const want = (exp.links as number[][]).flatMap(([u, v]) => (u === v ? [[u, v]] : [[u, v], [v, u]]));
    expect(got).toEqual(want);
    const w = dense(r, 'edge_weight');
    expect(Array.from(w.data)).toEqual((exp.weights as number[]).flatMap((x) => [x, x]));
    // `club` holds strings: not a tensor.
    expect(r.tensors.map((t) => t.name)).toEqual(['edge_index', 'edge_weight']);
    // The target of link 3 (stored), and its reverse entry pointing back at the same token.
    const s = ei.locator!.locate(156 + 6)!;
    const text = new TextDecoder().decode(fixture('karate_nodelink.json'));
    const at = text.split('\n')[s.line - 1]!.slice(s.column - 1, s.column - 1 + s.length);
    expect(Number(at)).toBe(exp.links[3][1]);
    expect(ei.locator!.locate(7)).toEqual(s); // entry 7 = reverse of link 3: its source is link 3's target
  });

  it('maps string ids to node order, reads per-node tensors and reports a link to a missing node (docks_nodelink.json)', () => {
    const exp = expected['docks_nodelink.json'];
    const r = read(fixture('docks_nodelink.json'));
    expect(r.hints).toEqual({ nodes: exp.nodes, directed: true });
    const ei = dense(r, 'edge_index');
    expect(pairs(ei)).toEqual((exp.links as string[][]).map(([a, b]) => [exp.index[a!], exp.index[b!]]));
    expect(Array.from(dense(r, 'edge_weight').data)).toEqual(exp.weights);
    const x = dense(r, 'x');
    expect(x.shape).toEqual([exp.nodes, 2]);
    expect(x.dtype).toBe('float64');
    expect(Array.from(x.data)).toEqual(exp.x.flat());
    expect(dense(r, 'y').dtype).toBe('int64');
    expect(Array.from(dense(r, 'y').data)).toEqual(exp.y);
    expect(dense(r, 'train_mask').dtype).toBe('bool');
    expect(Array.from(dense(r, 'train_mask').data)).toEqual(exp.train_mask.map((b: boolean) => (b ? 1 : 0)));
    expect(r.problems).toHaveLength(1);
    const p = r.problems[0]!;
    expect(p.code).toBe('index-out-of-range');
    expect(p.message).toContain('"dock-z"');
    expect({ line: p.line, column: p.column, length: p.locations![0]!.length }).toEqual(exp.missing);
  });

  it('the "edges" key of newer NetworkX, numeric and string ids kept apart, and a non-node-link object left alone', () => {
    const r = readText('{"directed": true, "nodes": [{"id": 1}, {"id": "1"}], "edges": [{"source": 1, "target": "1"}]}');
    expect(pairs(dense(r, 'edge_index'))).toEqual([[0, 1]]);
    const plain = readText('{"nodes": [1, 2], "links": [[0, 1]]}');
    expect(plain.tensors.map((t) => t.name)).toEqual(['nodes', 'links']);
  });
});

// Fixtures written by json.dumps of networkx 2.8's json_graph.adjacency_data / cytoscape_data
// (make_text_fixtures.py); the expected entries, weights and positions were computed there.
describe('adjacency and Cytoscape JSON (NetworkX adjacency_data, cytoscape_data)', () => {
  it('reads adjacency_data of the karate club: every row as listed, both directions already there', () => {
    const exp = expected['karate_adjacency.json'];
    const r = read(fixture('karate_adjacency.json'));
    expect(r.problems).toEqual([]);
    expect(r.hints).toEqual({ nodes: exp.nodes, directed: false });
    const ei = dense(r, 'edge_index');
    expect(ei.declaredRole).toBe('edge-index');
    expect(ei.shape).toEqual([2, 2 * exp.edges]); // NetworkX: 34 nodes, 78 edges → 156 entries
    expect(pairs(ei)).toEqual(exp.entries);
    expect(Array.from(dense(r, 'edge_weight').data)).toEqual(exp.weights);
    // Entry 5 (row 0, position 5) is located at its "id" value in the text.
    const s = ei.locator!.locate(ei.shape[1]! + 5)!;
    const text = new TextDecoder().decode(fixture('karate_adjacency.json'));
    expect(Number(text.split('\n')[s.line - 1]!.slice(s.column - 1, s.column - 1 + s.length))).toBe(exp.entries[5][1]);
  });

  it('reads cytoscape_data of the karate club: each undirected edge once, read as both directions', () => {
    const exp = expected['karate_cytoscape.json'];
    const r = read(fixture('karate_cytoscape.json'));
    expect(r.problems).toEqual([]);
    expect(r.hints).toEqual({ nodes: exp.nodes, directed: false });
    const ei = dense(r, 'edge_index');
    expect(ei.shape).toEqual([2, 2 * exp.edges]);
    expect(pairs(ei)).toEqual(exp.entries);
    expect(Array.from(dense(r, 'edge_weight').data)).toEqual(exp.weights);
    // Cytoscape's own node keys (id, value, name) are not tensors; `club` holds strings.
    expect(r.tensors.map((t) => t.name)).toEqual(['edge_index', 'edge_weight']);
  });

  it('a directed Cytoscape graph: string ids in node order, per-node tensors, an edge to a missing node located', () => {
    const exp = expected['docks_cytoscape.json'];
    const r = read(fixture('docks_cytoscape.json'));
    expect(r.hints).toEqual({ nodes: exp.nodes, directed: true });
    expect(pairs(dense(r, 'edge_index'))).toEqual((exp.links as string[][]).map(([a, b]) => [exp.index[a!], exp.index[b!]]));
    expect(Array.from(dense(r, 'x').data)).toEqual(exp.x.flat());
    expect(Array.from(dense(r, 'y').data)).toEqual(exp.y);
    expect(r.problems.map((p) => p.code)).toEqual(['index-out-of-range']);
    const p = r.problems[0]!;
    expect(p.message).toContain('elements.edges[5].data.target "dock-q"');
    expect({ line: p.line, column: p.column, length: p.locations![0]!.length }).toEqual(exp.missing);
  });

  it('JSON with graph keys in a layout that is not read gets a no-graph-tensors info; other JSON gets nothing', () => {
    const r = readText('{"nodes": [{"dock": "A"}, {"dock": "B"}], "routes": [{"from": "A", "to": "B"}]}');
    expect(r.tensors).toEqual([]);
    expect(r.problems.map((p) => [p.code, p.severity])).toEqual([['no-graph-tensors', 'info']]);
    expect(r.problems[0]!.message).toMatch(/^JSON without graph tensors/);
    expect(r.problems[0]!.message).toContain('"nodes"');
    // package.json / tsconfig.json-like files: no graph keys, nothing said.
    expect(readText('{"name": "x", "version": "1.0.0", "files": ["dist"], "scripts": {"build": "tsc"}}').problems).toEqual([]);
    expect(readText('{"compilerOptions": {"strict": true, "lib": ["es2022"]}}').problems).toEqual([]);
  });
});

/**
 * Problem rules on real files. Expected counts come from NumPy 1.24 / NetworkX 2.8 in
 * tests/fixtures/make_graph_fixtures.py (expected.json): np.isfinite for non-finite features,
 * np.logical_and for split overlap, (ei < 0) | (ei >= n) for out-of-range entries, np.unique for
 * duplicates. Where a rule encodes common practice rather than a published value (2 x E layout,
 * 0-based ids, -1 for unlabelled nodes) the test says so.
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { checkPaths } from '../../server/src/node/load';
import { checkGraph } from '../../server/src/core/checks/graph-check';
import { guessRole } from '../../server/src/core/checks/roles';
import { MIN_DENSE_NODES, denseNodeLimit } from '../../server/src/core/graph/structure/compact';
import type { DenseTensor, Problem } from '../../server/src/core/formats/types';
import type { FileReport } from '../../server/src/core/checks/check-set';

const dir = path.join(__dirname, '../fixtures/graphs');
const expected = JSON.parse(fs.readFileSync(path.join(dir, 'expected.json'), 'utf8'));

const byName = (files: FileReport[], base: string) => {
  const f = files.find((x) => path.basename(x.path) === base);
  if (!f) throw new Error(`no report for ${base}: ${files.map((x) => x.path).join(', ')}`);
  return f;
};
const problem = (f: FileReport, code: string): Problem | undefined => f.problems.find((p) => p.code === code);

describe('sibling bundle with planted problems (counts from NumPy)', () => {
  const b = expected.broken_bundle;
  const r = checkPaths([path.join(dir, 'broken_bundle')]);

  it('edge index: out-of-range, duplicates, self-loops, missing reverses', () => {
    const e = byName(r.files, 'edge_index.npy');
    expect(problem(e, 'index-out-of-range')?.count).toBe(b.outOfRangeEntries);
    expect(problem(e, 'duplicate-edges')?.count).toBe(b.figures.duplicateEdges);
    expect(problem(e, 'self-loops')?.count).toBe(b.figures.selfLoops);
    expect(problem(e, 'asymmetric-adjacency')?.count).toBe(b.figures.asymmetricPairs);
    expect(e.graph).toMatchObject({
      nodes: b.nodes, edges: b.figures.edges, selfLoops: b.figures.selfLoops,
      duplicateEdges: b.figures.duplicateEdges, asymmetricPairs: b.figures.asymmetricPairs,
      isolatedNodes: b.figures.isolatedNodes, components: b.figures.components,
    });
    // Examples name the tensor and position of a binary file.
    const oor = problem(e, 'index-out-of-range')!;
    expect(oor.locations![0]!.tensor).toBe('edge_index');
    expect(oor.message).toMatch(/edge_index\[1, 10\] = 63/);
  });

  it('features: NaN and Inf counted like np.isfinite', () => {
    const p = problem(byName(r.files, 'x.npy'), 'non-finite-features')!;
    expect(p.count).toBe(b.nonFiniteFeatures);
    expect(p.message).toContain(`${b.nanFeatures} NaN`);
    expect(p.message).toMatch(/x\[3, 1\] = NaN/);
  });

  it('labels: the -1 entries are flagged as label-range (common practice: -1 = unlabelled)', () => {
    const p = problem(byName(r.files, 'y.npy'), 'label-range')!;
    expect(p.count).toBe(b.negativeLabels);
    expect(p.message).toMatch(/-1/);
  });

  it('masks: overlap counted like np.logical_and(train, test).sum(); a short mask is reported on itself', () => {
    const p = problem(byName(r.files, 'test_mask.npy'), 'mask-overlap')!;
    expect(p.count).toBe(b.maskOverlap);
    expect(p.severity).toBe('error');
    const v = problem(byName(r.files, 'val_mask.npy'), 'mask-length-mismatch')!;
    expect(v.message).toContain(`${b.valMaskLength} entries`);
    expect(problem(byName(r.files, 'train_mask.npy'), 'mask-overlap')).toBeUndefined();
  });

  it('edge weights: one row too many is reported on the weight file', () => {
    const p = problem(byName(r.files, 'edge_weight.npy'), 'edge-features-rows-mismatch')!;
    expect(p.message).toContain(`${b.edgeWeightRows}`);
    expect(p.message).toContain(`${b.entries} edge entries`);
  });
});

describe('the same karate graph in every container gives the same figures (NetworkX: 34 nodes, 78 edges)', () => {
  const want = { nodes: 34, edges: 156, directed: false, selfLoops: 0, duplicateEdges: 0, asymmetricPairs: 0, isolatedNodes: 0, components: 1 };
  it('sibling files edge_index.npy + x.npy + y.npy + masks', () => {
    const r = checkPaths([path.join(dir, 'karate_bundle')]);
    const e = byName(r.files, 'edge_index.npy');
    expect(e.graph).toMatchObject(want);
    expect(r.files.flatMap((f) => f.problems).filter((p) => p.severity !== 'info')).toEqual([]);
    expect(byName(r.files, 'y.npy').tensors[0]!.role).toBe('labels');
    expect(byName(r.files, 'train_mask.npy').tensors[0]!.role).toBe('mask');
    // Karate split sizes written by NumPy: 20/7/7, disjoint
    expect(expected.graphs.karate.splitSizes).toEqual([20, 7, 7]);
  });
  it('checking edge_index.npy alone still reads x.npy beside it for N', () => {
    const r = checkPaths([path.join(dir, 'karate_bundle', 'edge_index.npy')], { nodes: undefined });
    expect(r.files).toHaveLength(1);
    expect(r.files[0]!.graph).toMatchObject(want);
  });
  it('one .npz container (numpy.savez)', () => {
    const r = checkPaths([path.join(dir, 'karate_container.npz')]);
    expect(r.files[0]!.graph).toMatchObject(want);
    expect(r.files[0]!.tensors.map((t) => [t.name, t.role])).toEqual(expect.arrayContaining([
      ['edge_index', 'edge-index'], ['x', 'features'], ['y', 'labels'], ['train_mask', 'mask'],
    ]));
  });
  it('a scipy.sparse.save_npz adjacency', () => {
    const r = checkPaths([path.join(dir, 'karate_adjacency.npz')]);
    expect(r.files[0]!.format).toBe('sparse-npz');
    expect(r.files[0]!.graph).toMatchObject(want);
  });
});

describe('declarations through hopscope.json', () => {
  const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-manifest-'));
  const write = (name: string, text: string | Uint8Array) => fs.writeFileSync(path.join(tmp, name), text);
  write('one_way.edges', '0 1\n1 0\n1 2\n2 1\n2 3\n3 3\n');

  it('an undirected declaration turns missing reverses into errors; forbidden self-loops into warnings', () => {
    write('hopscope.json', JSON.stringify({ directed: false, selfLoops: 'forbidden' }));
    const f = checkPaths([tmp]).files[0]!;
    expect(problem(f, 'asymmetric-adjacency')).toMatchObject({ severity: 'error', count: 1, line: 5 });
    expect(problem(f, 'self-loops')).toMatchObject({ severity: 'warning', count: 1, line: 6 });
  });
  it('a directed declaration silences asymmetry; severity overrides apply', () => {
    write('hopscope.json', JSON.stringify({ directed: true, severity: { 'self-loops': 'off', 'isolated-nodes': 'error' } }));
    const f = checkPaths([tmp]).files[0]!;
    expect(problem(f, 'asymmetric-adjacency')).toBeUndefined();
    expect(problem(f, 'self-loops')).toBeUndefined();
  });
  it('a manifest graph joins files with any names, and a broken manifest is reported', () => {
    write('feats.npy', Buffer.from(npyF32([2, 2], [1, 2, 3, 4])));
    write('hopscope.json', JSON.stringify({ graphs: [{ edges: 'one_way.edges', features: 'feats.npy' }] }));
    const r = checkPaths([tmp]);
    const e = byName(r.files, 'one_way.edges');
    expect(e.graph!.nodes).toBe(2);
    expect(problem(e, 'index-out-of-range')!.count).toBe(4);
    write('hopscope.json', '{ "graphs": [ { "features": "feats.npy" } ] }');
    expect(checkPaths([tmp]).manifestProblems[0]!.problem.message).toMatch(/needs "edges" or "adjacency"/);
  });
  // The manifest format is our own (schemas/hopscope.schema.json); "flow" is its 0.1.0 name of
  // "sendingRow", read for one more release.
  it('"sendingRow" as a default or per graph; the old "flow" key is still read, with a renamed-key info', () => {
    write('hopscope.json', JSON.stringify({ sendingRow: 1 }));
    let r = checkPaths([tmp]);
    expect(r.graphs.map((g) => g.check.options.sendingRow)).toEqual([1]);
    expect(r.manifestProblems).toEqual([]);

    write('hopscope.json', JSON.stringify({ flow: 'target-to-source', graphs: [{ edges: 'one_way.edges', flow: 'source-to-target' }] }));
    r = checkPaths([tmp]);
    expect(r.graphs.find((g) => g.name === 'graph 1')!.check.options.sendingRow).toBe(0);
    const notes = r.manifestProblems.map((m) => m.problem);
    expect(notes.map((p) => `${p.code}:${p.severity}`)).toEqual(['renamed-key:info', 'renamed-key:info']);
    expect(notes[0]!.message).toBe('flow is the old name of "sendingRow": write "sendingRow": 1 instead of "flow": "target-to-source". The old key is still read in this release.');
    expect(notes[1]!.message).toMatch(/^graphs\[0\]\.flow is the old name of "sendingRow": write "sendingRow": 0 instead/);

    write('hopscope.json', JSON.stringify({ flow: 'target-to-source', severity: { 'renamed-key': 'off' } }));
    r = checkPaths([tmp]);
    expect(r.manifestProblems).toEqual([]);
    expect(r.graphs.map((g) => g.check.options.sendingRow)).toEqual([1]);

    const refused = (manifest: object) => {
      write('hopscope.json', JSON.stringify(manifest));
      const p = checkPaths([tmp]).manifestProblems[0]!.problem;
      expect(p).toMatchObject({ code: 'unreadable', severity: 'error' });
      return p.message;
    };
    expect(refused({ flow: 'target-to-source', sendingRow: 1 })).toMatch(/flow is the old name of sendingRow: keep only "sendingRow"/);
    expect(refused({ sendingRow: 'row 1' })).toMatch(/sendingRow must be 0 \(row 0 of the edge index sends\) or 1/);
    expect(refused({ graphs: [{ edges: 'one_way.edges', sendingRow: 2 }] })).toMatch(/graphs\[0\]\.sendingRow must be 0/);
    expect(refused({ flow: 'sideways' })).toMatch(/flow must be "source-to-target" or "target-to-source"; better, write "sendingRow"/);
    fs.rmSync(path.join(tmp, 'hopscope.json'));
  });
});

describe('shape and index conventions (common practice: PyTorch Geometric-style 2 x E, 0-based ids)', () => {
  const t = (name: string, shape: number[], data: number[], dtype: DenseTensor['dtype'] = 'int64'): DenseTensor =>
    ({ kind: 'dense', name, dtype, shape, data: dtype.startsWith('float') ? Float64Array.from(data) : Int32Array.from(data) });
  const run = (...ts: DenseTensor[]) => checkGraph(ts.map((x) => ({ file: x.name, tensor: x, guess: guessRole(x) })));
  const codes = (c: ReturnType<typeof run>) => c.problems.map((p) => p.problem.code);

  it('E x 2 is read but flagged', () => {
    const c = run(t('edge_index', [3, 2], [0, 1, 1, 2, 2, 0]));
    expect(codes(c)).toContain('transposed-edge-index');
    expect(c.figures!.edges).toBe(3);
  });
  it('neither 2 x E nor E x 2', () => {
    expect(codes(run(t('edge_index', [3, 3], [0, 1, 2, 1, 2, 0, 2, 0, 1])))).toEqual(['edge-shape']);
  });
  it('float ids with fractions are non-integer; a float dtype is flagged too', () => {
    const c = run(t('edge_index', [2, 2], [0, 1.5, 1, 0], 'float32'));
    const p = c.problems.filter((x) => x.problem.code === 'non-integer-index');
    expect(p.map((x) => x.problem.count)).toEqual([1, 1]);
  });
  it('1-based ids: no 0 and max = node count', () => {
    const c = run(t('edge_index', [2, 3], [1, 2, 3, 2, 3, 1]), t('x', [3, 1], [0, 0, 0], 'float32'));
    expect(codes(c)).toEqual(expect.arrayContaining(['one-based-index', 'index-out-of-range']));
  });
  it('node count: feature rows first, then the declaration (the check contract); a disagreement is reported on the features', () => {
    const e = t('edge_index', [2, 2], [0, 1, 1, 0]);
    const x = t('x', [3, 1], [0, 0, 0], 'float32');
    const c = checkGraph([e, x].map((z) => ({ file: z.name, tensor: z, guess: guessRole(z) })), { nodes: 4 });
    expect(c.figures!.nodes).toBe(3);
    const p = c.problems.find((q) => q.problem.code === 'feature-rows-mismatch')!;
    expect(p.file).toBe('x');
    expect(p.problem.message).toMatch(/3 rows but the declared node count is 4/);
    expect(checkGraph([{ file: 'e', tensor: e, guess: guessRole(e) }], { nodes: 4 }).figures!.nodes).toBe(4);
  });
  it('a declared index base of 1 shifts ids', () => {
    const e = t('edge_index', [2, 3], [1, 2, 3, 2, 3, 1]);
    const c = checkGraph([{ file: 'e', tensor: e, guess: guessRole(e) }], { indexBase: 1 });
    expect(c.figures).toMatchObject({ nodes: 3, edges: 3, indexBase: 1, components: 1 });
    // A one-way 3-cycle: only the info that no edge has its reverse.
    expect(c.problems.map((q) => [q.problem.code, q.problem.severity])).toEqual([['asymmetric-adjacency', 'info']]);
  });
  it('adjacency must be square; A[i, j] != 0 is the edge i -> j', () => {
    const c = run(t('adj', [2, 3], [0, 1, 0, 0, 0, 1]));
    expect(codes(c)).toContain('not-square');
    const sq = run(t('adj', [3, 3], [0, 1, 0, 0, 0, 1, 0, 0, 0], 'float64'));
    expect(sq.figures).toMatchObject({ nodes: 3, edges: 2, directed: true, components: 1 });
  });
  it('an edge index with no entries is an empty graph', () => {
    expect(codes(run(t('edge_index', [2, 0], [])))).toContain('empty-graph');
  });
  it('labels that skip class 0 look 1-based (cross-entropy expects 0..C-1)', () => {
    const c = run(t('edge_index', [2, 2], [0, 1, 1, 0]), t('y', [2], [1, 2]));
    const p = c.problems.find((x) => x.problem.code === 'label-range')!;
    expect(p.problem.message).toMatch(/1-based/);
  });
});

function npyF32(shape: number[], values: number[]): Uint8Array {
  let header = `{'descr': '<f4', 'fortran_order': False, 'shape': (${shape.join(', ')}${shape.length === 1 ? ',' : ''}), }`;
  header = header.padEnd(128 - 10 - 1, ' ') + '\n';
  const out = new Uint8Array(10 + header.length + values.length * 4);
  out.set([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0, header.length & 255, header.length >> 8]);
  for (let i = 0; i < header.length; i++) out[10 + i] = header.charCodeAt(i);
  new Float32Array(out.buffer, 10 + header.length).set(values);
  return out;
}

describe('node-link JSON through the checks (figures from NetworkX 2.8, tests/fixtures/text/expected.json)', () => {
  const textDir = path.join(__dirname, '../fixtures/text');
  const exp = JSON.parse(fs.readFileSync(path.join(textDir, 'expected.json'), 'utf8'));

  it('karate_nodelink.json: 34 nodes, 78 undirected edges as 156 entries, one component, nothing to report', () => {
    const f = checkPaths([path.join(textDir, 'karate_nodelink.json')]).files[0]!;
    const e = exp['karate_nodelink.json'];
    expect(f.graph).toMatchObject({ nodes: e.nodes, edges: 2 * e.edges, directed: false, asymmetricPairs: 0, components: e.components });
    expect(f.problems).toEqual([]);
  });

  it('docks_nodelink.json: the missing node, the self-loop and the weak components', () => {
    const f = checkPaths([path.join(textDir, 'docks_nodelink.json')]).files[0]!;
    const e = exp['docks_nodelink.json'];
    expect(f.graph).toMatchObject({ nodes: e.nodes, edges: e.edges, selfLoops: e.selfLoops, components: e.weakComponents });
    expect(f.problems.map((p) => p.code).sort()).toEqual(['index-out-of-range', 'isolated-nodes', 'self-loops']);
    expect(f.tensors.map((t) => `${t.name}:${t.role}`)).toEqual(['edge_index:edge-index', 'edge_weight:edge-weight', 'x:features', 'y:labels', 'train_mask:mask']);
  });
});

// Zachary's karate club (W. W. Zachary, 1977), as NetworkX 2.8 holds it and writes it with
// nx.write_edgelist(nx.karate_club_graph(), …, data=False): 34 nodes, 78 undirected edges, each
// written once, so no line has its reverse (tests/fixtures/text/expected.json, karate.edges).
describe('edge lists that store each undirected edge once (NetworkX write_edgelist of the karate club)', () => {
  const textDir = path.join(__dirname, '../fixtures/text');
  const exp = JSON.parse(fs.readFileSync(path.join(textDir, 'expected.json'), 'utf8'))['karate.edges'];
  const file = path.join(textDir, 'karate.edges');

  it('gets an asymmetric-adjacency info that names both readings', () => {
    expect([exp.nodes, exp.undirectedEdges, exp.count, exp.reversedInFile]).toEqual([34, 78, 78, 0]);
    const f = checkPaths([file]).files[0]!;
    expect(f.graph).toMatchObject({ nodes: exp.nodes, edges: exp.count, asymmetricPairs: exp.count, directed: true });
    expect(f.problems.map((p) => [p.code, p.severity])).toEqual([['asymmetric-adjacency', 'info']]);
    const p = problem(f, 'asymmetric-adjacency')!;
    expect(p.count).toBe(exp.undirectedEdges);
    expect(p.line).toBe(1); // the first line, "0 1", has no "1 0"
    expect(p.message).toMatch(/add the reverse edges/);
    expect(p.message).toMatch(/"directed": true in hopscope\.json/);
  });

  it('stays silent when the graph is declared directed (flag, manifest or editor default)', () => {
    expect(checkPaths([file], { directed: true }).files[0]!.problems).toEqual([]);
    expect(checkPaths([file], { defaults: { directed: true } }).files[0]!.problems).toEqual([]);
    const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-oneway-'));
    fs.copyFileSync(file, path.join(tmp, 'karate.edges'));
    fs.writeFileSync(path.join(tmp, 'hopscope.json'), JSON.stringify({ directed: true }));
    expect(checkPaths([tmp]).files[0]!.problems).toEqual([]);
    // Declared undirected: every one-way edge is an error, as before.
    expect(problem(checkPaths([file], { directed: false }).files[0]!, 'asymmetric-adjacency')).toMatchObject({ severity: 'error', count: 78 });
  });

  it('keeps today\'s behaviour when some pairs have their reverse: mostly one-way stays silent', () => {
    // 78 one-way lines plus the reverse of the first: 1 of 79 distinct pairs reciprocated.
    const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-oneway-'));
    const text = fs.readFileSync(file, 'utf8');
    const [u, v] = (exp.edges as number[][])[0]!;
    fs.writeFileSync(path.join(tmp, 'g.edges'), `${text}${v} ${u}\n`);
    expect(problem(checkPaths([tmp]).files[0]!, 'asymmetric-adjacency')).toBeUndefined();
  });
});

describe('sparse ids and node counts far beyond the edges (tests/fixtures/make_sparse_fixtures.py)', () => {
  // Files written by numpy.savetxt/numpy.save/json.dump/torch.save/networkx.write_edgelist/
  // scipy.io.mmwrite; figures from networkx.read_edgelist / a NetworkX DiGraph of the loaded array
  // (its nodes are the distinct ids) and, for the .mtx files, from scipy.io.mmread and
  // scipy.sparse.csgraph (see the script's docstring).
  const sdir = path.join(__dirname, '../fixtures/sparse');
  const sexp = JSON.parse(fs.readFileSync(path.join(sdir, 'expected.json'), 'utf8'));
  const figureKeys = ['nodes', 'edges', 'selfLoops', 'components', 'isolatedNodes', 'directed'] as const;
  const figuresOf = (e: Record<string, unknown>) => Object.fromEntries(figureKeys.map((k) => [k, e[k]]));
  const checkOne = (name: string, options = {}) => {
    const r = checkPaths([path.join(sdir, name)], options);
    const g = r.graphs.find((x) => x.check.structureFile && path.basename(x.check.structureFile) === name)!;
    return { f: byName(r.files, name), g: g.check };
  };

  const SPARSE = ['billion.txt', 'int32max.txt', 'billion_edge_index.npy', 'billion.json', 'billion.pt',
    'beyond_int32.txt', 'beyond_int32_edge_index.npy', 'members.edges', 'members_edge_index.npy'];
  for (const name of SPARSE) {
    it(`${name}: the figures NetworkX gives, checked on the distinct ids with a sparse-ids info`, () => {
      const e = sexp[name];
      const { f, g } = checkOne(name);
      expect(f.graph).toMatchObject(figuresOf(e));
      expect(f.problems.filter((p) => p.severity === 'error')).toEqual([]);
      const p = problem(f, 'sparse-ids')!;
      expect(p.severity).toBe('info');
      expect(p.message).toContain(`${e.distinctIds} distinct ids up to ${e.largestId}`);
      expect(p.count).toBe(e.largestId + 1 - e.distinctIds);
      // Per-node arrays cover the distinct ids only; the original ids are kept beside them.
      const s = g.structure!;
      expect(s.fwd.n).toBe(e.distinctIds);
      expect(s.fwd.indptr.length).toBe(e.distinctIds + 1);
      expect(s.ids!.length).toBe(e.distinctIds);
      expect(s.ids![s.ids!.length - 1]).toBe(e.largestId);
    });
  }

  it('beyond_int32 ids read as ids in every container (numpy.save values), not "0..-1 (0 nodes)"', () => {
    const e = sexp['beyond_int32_edge_index.npy'];
    const { f } = checkOne('beyond_int32_edge_index.npy');
    expect(f.tensors[0]).toMatchObject({ dtype: 'int64', min: 0, max: Math.max(...e.values) });
    expect(problem(f, 'index-out-of-range')).toBeUndefined();
    // A declared count below the ids: only the ids beyond it are out of range, with a true range.
    const d = checkOne('beyond_int32_edge_index.npy', { nodes: 10 });
    const oor = problem(d.f, 'index-out-of-range')!;
    const beyond = (e.values as number[]).filter((v) => v >= 10).length; // every entry is one edge end
    expect(oor.count).toBe(4); // all 4 edges have an end beyond 9 (values from numpy.save above)
    expect(oor.message).toContain('Node ids must lie in 0..9 (10 nodes from the declared node count)');
    expect(oor.locations!.map((l) => l.detail)).not.toContain('beyond_int32_edge_index[0, 0] = 0');
    expect(oor.locations!.length).toBe(beyond);
  });

  it('a node count declared far beyond the ids (--num-nodes 1e10): counted, not allocated', () => {
    // Arithmetic on NetworkX's figures: every untouched id is one isolated node and one component.
    const e = sexp['members.edges'];
    const N = 10_000_000_000; // above the largest membership number (8962049388)
    const { f, g } = checkOne('members.edges', { nodes: N });
    expect(f.graph).toMatchObject({
      nodes: N, edges: e.edges, selfLoops: e.selfLoops, directed: e.directed,
      components: e.components + (N - e.distinctIds), isolatedNodes: e.isolatedNodes + (N - e.distinctIds),
    });
    expect(problem(f, 'sparse-ids')).toBeUndefined();
    expect(problem(f, 'index-out-of-range')).toBeUndefined();
    expect(problem(f, 'isolated-nodes')!.count).toBe(N - e.distinctIds);
    expect(g.structure!.fwd.n).toBe(e.distinctIds);
  });

  for (const name of ['billion.mtx', 'declared_3m.mtx']) {
    it(`${name}: the size line stays the node count; figures equal SciPy's`, () => {
      const e = sexp[name];
      const { f, g } = checkOne(name);
      expect(e.shape).toEqual([e.nodes, e.nodes]);
      expect(f.graph).toMatchObject(figuresOf(e));
      expect(problem(f, 'sparse-ids')).toBeUndefined();
      expect(problem(f, 'isolated-nodes')!.count).toBe(e.isolatedNodes);
      expect(g.structure!.fwd.n).toBeLessThan(10);
    });
  }

  it('isolated examples of a declared count name untouched ids in order (1-based as Matrix Market writes them)', () => {
    // declared_3m.mtx touches rows/columns 0, 1, 2, 1500000, 2999999 (0-based, make_sparse_fixtures.py).
    expect(problem(checkOne('declared_3m.mtx').f, 'isolated-nodes')!.message).toContain('e.g. nodes 4, 5, 6, 7, 8');
    expect(problem(checkOne('billion.mtx').f, 'isolated-nodes')!.message).toContain('e.g. nodes 3, 4, 5, 6, 7');
  });

  it('small gaps keep the contract (largest id + 1): ids 0..6 with 3 unused are 7 nodes, 3 isolated', () => {
    const t: DenseTensor = { kind: 'dense', name: 'edge_index', dtype: 'int64', shape: [2, 2], data: Int32Array.from([0, 5, 1, 6]) };
    const c = checkGraph([{ file: 'e', tensor: t, guess: guessRole(t) }]);
    expect(c.figures).toMatchObject({ nodes: 7, isolatedNodes: 3, components: 5 });
    expect(c.structure!.ids).toBeUndefined();
    expect(c.problems.map((p) => p.problem.code)).not.toContain('sparse-ids');
  });

  it('the per-node limit follows the data held and the file-size setting (maxFileSizeMB)', () => {
    expect(denseNodeLimit(0)).toBe(MIN_DENSE_NODES);
    expect(denseNodeLimit(100 * 2 ** 20)).toBe(50 * 2 ** 20);
    expect(denseNodeLimit(100 * 2 ** 20, 16 * 2 ** 20)).toBe(8 * 2 ** 20);
    // A matching built here: k → 2,000,000 - k for k < 600,000 (1,200,000 distinct ids). Its 4.8 MB
    // of data allow per-node arrays for 2,000,001 nodes, unless the largest file allowed is small.
    const E = 600_000;
    const data = new Int32Array(2 * E);
    for (let k = 0; k < E; k++) { data[k] = k; data[E + k] = 2_000_000 - k; }
    const t: DenseTensor = { kind: 'dense', name: 'edge_index', dtype: 'int64', shape: [2, E], data };
    const part = [{ file: 'e', tensor: t, guess: guessRole(t) }];
    const dense = checkGraph(part);
    expect(dense.structure!.ids).toBeUndefined();
    expect(dense.figures).toMatchObject({ nodes: 2_000_001, isolatedNodes: 2_000_001 - 2 * E });
    const capped = checkGraph(part, {}, { maxFileBytes: 2 * 2 ** 20 });
    expect(capped.structure!.ids!.length).toBe(2 * E);
    expect(capped.figures).toMatchObject({ nodes: 2 * E, isolatedNodes: 0, components: E, edges: E });
    expect(capped.problems.map((p) => p.problem.code)).toContain('sparse-ids');
  });

  it('labels beside sparse ids keep the largest id + 1 as the node count (they index rows by id)', () => {
    const t: DenseTensor = { kind: 'dense', name: 'edge_index', dtype: 'int64', shape: [2, 2], data: Int32Array.from([0, 9_000_000, 9_000_000, 0]) };
    const y: DenseTensor = { kind: 'dense', name: 'y', dtype: 'int64', shape: [3], data: Int32Array.from([0, 1, 0]) };
    const c = checkGraph([t, y].map((x) => ({ file: x.name, tensor: x, guess: guessRole(x) })));
    expect(c.figures).toMatchObject({ nodes: 9_000_001, isolatedNodes: 8_999_999, components: 9_000_000 });
    expect(c.problems.map((p) => p.problem.code)).toContain('label-length-mismatch');
    expect(c.structure!.fwd.n).toBe(2);
  });
});

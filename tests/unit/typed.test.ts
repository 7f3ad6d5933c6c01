/**
 * Typed graphs (server/src/core/typed) against tests/fixtures/typed/: a NetworkX bipartite graph
 * (networkx.algorithms.bipartite.random_graph, node attribute "bipartite" → types author / paper)
 * plus a directed G(n, p) over the papers, written by the real NumPy (numpy.savez, numpy.save) and
 * PyTorch (torch.save of a dict, a nested dict, and a stand-in typed-data object saved whole). Every
 * expected figure in expected.json was computed by tests/fixtures/make_typed_fixtures.py with
 * NetworkX: per-relation entries, duplicates and self-loops (MultiDiGraph against DiGraph), per-type
 * isolated nodes and the types-forgotten graph's figures, the cross-type out-of-range count, and the
 * per-type per-hop field counts (single_source_shortest_path_length on the reversed graph).
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { checkPaths } from '../../server/src/node/load';
import { loadGraph } from '../../server/src/node/graph-input';
import { main } from '../../server/src/cli';
import { parseManifest } from '../../server/src/core/checks/manifest';
import { checkSet } from '../../server/src/core/checks/check-set';
import type { Tensor } from '../../server/src/core/formats/types';
import { parseTypedName } from '../../server/src/core/typed/recognise';
import { FieldWalker } from '../../server/src/core/graph/propagation/field';
import { perHopByType } from '../../server/src/core/typed/field';
import { AnalysisService } from '../../server/src/node/analysis-service';
import { describeFixedCopy, writeFixedCopy } from '../../server/src/node/fixed-copy';
import type { FileReport, Problem, ProblemCode } from '../../common/report';

const dir = path.join(__dirname, '../fixtures/typed');
const expected = JSON.parse(fs.readFileSync(path.join(dir, 'expected.json'), 'utf8'));

interface RelationExpect { source: string; name: string; target: string; edges: number; duplicates: number; selfLoops: number; sources: number; targets: number }
interface FieldExpect { node: string; layers: number; perHop: number[]; perHopByType: Record<string, number[]> }
interface Expect {
  nodeTypes: Record<string, number>;
  relations: RelationExpect[];
  isolatedPerType: Record<string, number>;
  graph: Record<string, number>;
  fields: FieldExpect[];
  nodeCountFrom?: Record<string, string>;
}

const key = (r: { source: string; name: string; target: string }) => `${r.source}__${r.name}__${r.target}`;
const problems = (files: FileReport[], code: ProblemCode): Problem[] => files.flatMap((f) => f.problems).filter((p) => p.code === code);

function checkOne(name: string): { report: FileReport; files: FileReport[] } {
  const target = path.join(dir, name);
  const isDir = fs.statSync(target).isDirectory();
  const r = checkPaths([target]);
  const report = r.files.find((f) => f.typed)!;
  expect(report, `${name} is read as a typed graph`).toBeDefined();
  if (!isDir) expect(path.resolve(report.path)).toBe(path.resolve(target));
  return { report, files: r.files };
}

describe('typed graphs written by NumPy and PyTorch (NetworkX figures)', () => {
  for (const name of ['clean.npz', 'clean.safetensors', 'clean.json', 'dict.pt', 'nested.pt', 'object.pt', 'siblings', 'dirty.npz']) {
    it(`${name}: types, relations and the types-forgotten figures equal NetworkX's`, () => {
      const e = expected[name] as Expect;
      const { report, files } = checkOne(name);
      const t = report.typed!;
      expect(t.nodeTypes).toEqual(e.nodeTypes);
      if (e.nodeCountFrom) expect(t.nodeCountFrom).toEqual(e.nodeCountFrom);
      const got = new Map(t.relations.map((r) => [key(r), r]));
      expect(new Set(got.keys())).toEqual(new Set(e.relations.map(key)));
      for (const r of e.relations) {
        expect(got.get(key(r))!.edges, key(r)).toBe(r.edges);
        // Nodes of each side the relation touches (NetworkX degrees on the relation's own graph).
        expect(got.get(key(r))!.sources, `${key(r)} sources`).toBe(r.sources);
        expect(got.get(key(r))!.targets, `${key(r)} targets`).toBe(r.targets);
      }
      // The graph figures with types forgotten (ids shifted by each type's offset).
      const g = report.graph!;
      for (const k of ['nodes', 'edges', 'selfLoops', 'duplicateEdges', 'asymmetricPairs', 'isolatedNodes', 'components']) {
        expect((g as unknown as Record<string, number>)[k], k).toBe(e.graph[k]);
      }
      // Per relation: duplicates and self-loops (self-loops only in the same-type relation).
      for (const r of e.relations) {
        const dup = problems(files, 'duplicate-edges').filter((p) => p.relation === key(r)).reduce((a, p) => a + p.count, 0);
        const loops = problems(files, 'self-loops').filter((p) => p.relation === key(r)).reduce((a, p) => a + p.count, 0);
        expect(dup, `${key(r)} duplicates`).toBe(r.duplicates);
        expect(loops, `${key(r)} self-loops`).toBe(r.selfLoops);
      }
      // Per type: isolated nodes.
      for (const [type, n] of Object.entries(e.isolatedPerType)) {
        const p = problems(files, 'isolated-nodes').find((x) => x.nodeType === type);
        expect(p?.count ?? 0, `${type} isolated`).toBe(n);
      }
      // Every relation has its reverse and every type sends and receives: no typed code.
      expect(problems(files, 'one-way-relation')).toEqual([]);
      expect(problems(files, 'type-never-receives')).toEqual([]);
      expect(problems(files, 'type-never-sends')).toEqual([]);
      expect(problems(files, 'index-out-of-range')).toEqual([]);
      expect(problems(files, 'feature-rows-mismatch')).toEqual([]);
      expect(problems(files, 'label-length-mismatch')).toEqual([]);
      expect(problems(files, 'mask-length-mismatch')).toEqual([]);
    });
  }

  it('crosstype.npz: author ids used as paper ids in row 1 are caught, with the exact count, where a check over all nodes passes them', () => {
    const e = expected['crosstype.npz'] as Expect & { outOfRange: { row0: number; row1: number; row1ValidAuthorIds: number }; outOfRangeAgainstTotal: number };
    const { report, files } = checkOne('crosstype.npz');
    expect(report.typed!.nodeTypes).toEqual(e.nodeTypes);
    expect(report.typed!.nodeCountFrom).toEqual(e.nodeCountFrom);
    const oor = problems(files, 'index-out-of-range');
    expect(oor).toHaveLength(1);
    expect(oor[0]!.relation).toBe('author__writes__paper');
    expect(oor[0]!.count).toBe(e.outOfRange.row1);
    expect(e.outOfRange.row1).toBeGreaterThan(0);
    expect(e.outOfRange.row0).toBe(0);
    expect(oor[0]!.message).toMatch(/row 1/);
    expect(oor[0]!.message).toContain(`${e.outOfRange.row1ValidAuthorIds === e.outOfRange.row1 ? 'All of them are' : `${e.outOfRange.row1ValidAuthorIds} of them are`} valid author ids`);
    // Every location points into row 1 of the relation's tensor.
    for (const l of oor[0]!.locations!) expect(l.detail).toMatch(/^author__writes__paper\[1, \d+\] = \d+$/);
    // NumPy says no id is at or above the total node count: a homogeneous bound would pass them all.
    expect(e.outOfRangeAgainstTotal).toBe(0);
    // The figures leave the bad entries out.
    expect(report.graph!.edges).toBe(e.graph.edges);
    expect(report.graph!.components).toBe(e.graph.components);
    // No relation back from paper to author; author has labels and never receives (a warning).
    const oneWay = problems(files, 'one-way-relation');
    expect(oneWay.map((p) => [p.relation, p.severity])).toEqual([['author__writes__paper', 'info']]);
    expect(problems(files, 'type-never-receives').map((p) => [p.nodeType, p.severity])).toEqual([['author', 'warning']]);
    expect(problems(files, 'type-never-sends').map((p) => [p.nodeType, p.severity])).toEqual([['paper', 'info']]);
  });

  it('homogeneous.npz: a plain graph with look-alike names is not typed', () => {
    const r = checkPaths([path.join(dir, 'homogeneous.npz')]);
    const f = r.files[0]!;
    expect(f.typed).toBeUndefined();
    expect(f.graph!.nodes).toBe(expected['homogeneous.npz'].nodes);
    expect(f.graph!.edges).toBe(expected['homogeneous.npz'].edges);
    expect(f.problems.some((p) => p.relation !== undefined || p.nodeType !== undefined)).toBe(false);
  });

  for (const name of ['clean.npz', 'siblings/paper__x.npy', 'object.pt']) {
    it(`${name}: per-type per-hop field counts equal NetworkX BFS`, () => {
      const e = expected[name.startsWith('siblings') ? 'siblings' : name] as Expect;
      const g = loadGraph(path.join(dir, name));
      expect(g.types).toBeDefined();
      for (const f of e.fields) {
        const [type, id] = f.node.split(':') as [string, string];
        const t = g.types!.names.indexOf(type);
        const v = g.types!.offsets[t]! + Number(id);
        const field = new FieldWalker(g).field(v, f.layers, { sendingRow: 0 });
        expect(field.perHop).toEqual(f.perHop);
        const by = perHopByType(g.types!, field.nodes, field.hops, f.layers);
        for (const [ti, name2] of g.types!.names.entries()) expect(by.map((row) => row[ti]), `${f.node} ${name2}`).toEqual(f.perHopByType[name2]);
      }
    });
  }
});

describe('hopscope check on a typed graph', () => {
  const run = (args: string[]) => {
    let out = '', err = '';
    const code = main(args, { out: (s) => { out += s; }, err: (s) => { err += s; }, color: false });
    return { code, out, err };
  };

  it('--json: files[].typed, problems with relation / nodeType, graph with types forgotten (crosstype.npz, NumPy-counted)', () => {
    const e = expected['crosstype.npz'];
    const r = run(['check', path.join(dir, 'crosstype.npz'), '--json']);
    expect(r.code).toBe(1);
    const f = JSON.parse(r.out).files[0];
    expect(f.typed.nodeTypes).toEqual(e.nodeTypes);
    const w = e.relations[0];
    expect(f.typed.relations).toEqual([{ source: 'author', name: 'writes', target: 'paper', edges: w.edges, sources: w.sources, targets: w.targets }]);
    expect(f.typed.offsets).toEqual({ author: 0, paper: e.nodeTypes.author });
    expect(f.graph.nodes).toBe(e.graph.nodes);
    const oor = f.problems.find((p: Problem) => p.code === 'index-out-of-range');
    expect(oor.relation).toBe('author__writes__paper');
    expect(oor.count).toBe(e.outOfRange.row1);
    expect(f.problems.find((p: Problem) => p.code === 'type-never-receives').nodeType).toBe('author');
  });

  it('text: lists the node types with where each count comes from, and the relations', () => {
    const e = expected['clean.npz'] as Expect;
    const r = run(['check', path.join(dir, 'clean.npz')]);
    expect(r.out).toContain(`node types: author ${e.nodeTypes.author} (declared), paper ${e.nodeTypes.paper} (feature rows)`);
    expect(r.out).toContain(`relation author —writes→ paper: ${e.relations[0]!.edges} edge entries`);
    expect(r.out).toContain(`graph (types forgotten): ${e.graph.nodes} nodes`);
  });
});

describe('hopscope field --node TYPE:ID', () => {
  const run = (args: string[]) => {
    let out = '', err = '';
    const code = main(args, { out: (s) => { out += s; }, err: (s) => { err += s; }, color: false });
    return { code, out, err };
  };

  it('prints the per-hop counts per type as JSON (values from NetworkX BFS)', () => {
    const f = (expected['clean.npz'] as Expect).fields[0]!;
    const r = run(['field', path.join(dir, 'clean.npz'), '--node', f.node, '--layers', String(f.layers), '--json']);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.node).toBe(f.node);
    expect(j.perHop).toEqual(f.perHop);
    expect(j.perHopByType).toEqual(f.perHopByType);
    expect(j.totalByType.author + j.totalByType.paper).toBe(j.total);
    for (const x of j.influence) expect(['author', 'paper']).toContain(x.nodeType);
  });

  it('text output has a column per type; unknown types and ids out of range exit 2 with a sentence', () => {
    const f = (expected['clean.npz'] as Expect).fields[0]!;
    const r = run(['field', path.join(dir, 'clean.npz'), '--node', f.node, '--layers', String(f.layers)]);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/hop\s+all\s+author\s+paper/);
    expect(r.out).toContain(`  1   ${String(f.perHop[1]).padStart(7)}`);
    const bad = run(['field', path.join(dir, 'clean.npz'), '--node', 'venue:1', '--layers', '2']);
    expect(bad.code).toBe(2);
    expect(bad.err).toContain('node type "venue" is not in the graph (types: author, paper)');
    const far = run(['field', path.join(dir, 'clean.npz'), '--node', `paper:${expected['clean.npz'].nodeTypes.paper}`, '--layers', '2']);
    expect(far.code).toBe(2);
    expect(far.err).toContain('out of range');
    const plain = run(['field', path.join(dir, 'homogeneous.npz'), '--node', 'paper:1', '--layers', '2']);
    expect(plain.code).toBe(2);
    expect(plain.err).toContain('not a typed graph');
  });

  it('--pair TYPE:ID,TYPE:ID is the pair of the types-forgotten graph at the types\' offsets', () => {
    const off = expected['clean.npz'].nodeTypes.author; // papers follow the authors
    const typed = run(['field', path.join(dir, 'clean.npz'), '--pair', 'paper:3,author:8', '--layers', '2', '--json']);
    const plain = run(['field', path.join(dir, 'clean.npz'), '--pair', `${off + 3},8`, '--layers', '2', '--json']);
    expect(typed.code).toBe(0);
    const t = JSON.parse(typed.out), q = JSON.parse(plain.out);
    expect(t.pairTyped).toEqual([{ nodeType: 'paper', id: 3 }, { nodeType: 'author', id: 8 }]);
    delete t.pairTyped;
    expect(t).toEqual(q);
    expect(run(['field', path.join(dir, 'clean.npz'), '--pair', 'paper:3,author:99', '--layers', '2']).code).toBe(2);
  });

  it('the panel payload carries the node types: drawn nodes typed, per-hop counts per type', () => {
    const f = (expected['clean.npz'] as Expect).fields[0]!;
    const [type, id] = f.node.split(':') as [string, string];
    const svc = new AnalysisService();
    const p = svc.field(path.join(dir, 'clean.npz'), { node: Number(id), nodeType: type, layers: f.layers });
    if ('error' in p) throw new Error(p.error);
    const nt = p.nodeTypes!;
    expect(nt.names).toEqual(['author', 'paper']);
    expect(nt.centre).toEqual({ type, id: Number(id) });
    expect(nt.perHop.map((row) => row[0])).toEqual(f.perHopByType.author);
    expect(nt.perHop.map((row) => row[1])).toEqual(f.perHopByType.paper);
    expect(nt.typeOf).toHaveLength(p.ids.length);
    p.ids.forEach((u, i) => {
      const t = nt.typeOf[i]!;
      expect(u).toBeGreaterThanOrEqual(nt.offsets[t]!);
      expect(u).toBeLessThan(nt.offsets[t + 1]!);
      expect(nt.localIds[i]).toBe(u - nt.offsets[t]!);
    });
    // Labels per drawn node from its own type: paper__y (NumPy-written) for papers, none for authors.
    const y = expected['clean.npz'].paperLabels as number[];
    p.ids.forEach((_, i) => expect(p.labels![i]).toBe(nt.typeOf[i] === 1 ? y[nt.localIds[i]!] : null));
    // Without self-loops the members are the walk frontier: the per-type rows still sum to perHop.
    const q = svc.field(path.join(dir, 'clean.npz'), { node: Number(id), nodeType: type, layers: f.layers, selfLoops: false });
    if ('error' in q) throw new Error(q.error);
    q.perHop.forEach((n, k) => expect(q.nodeTypes!.perHop[k]!.reduce((a, b) => a + b, 0)).toBe(n));
  });
});

describe('corrected copies', () => {
  it('are not written for a typed graph (its relations count ids in their own types)', () => {
    const file = path.join(dir, 'crosstype.npz');
    const report = checkPaths([file]).files[0];
    const r = describeFixedCopy(file, report);
    expect(r.changes).toHaveLength(1);
    expect(r.changes[0]).toContain('not written for typed graphs');
    const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-typed-'));
    try {
      expect(() => writeFixedCopy(file, path.join(tmp, 'copy.npz'), report)).toThrow(/typed graphs/);
      expect(fs.existsSync(path.join(tmp, 'copy.npz'))).toBe(false);
    } finally {
      fs.rmSync(tmp, { recursive: true, force: true });
    }
  });
});

describe('recognising typed names', () => {
  // The naming conventions are our reading of how typed relation keys are flattened to names
  // (SRC__REL__DST); a 3-tuple key of a saved dict reads as "SRC,REL,DST" (core/formats/pt.ts).
  it('reads the three layouts and refuses homogeneous names', () => {
    expect(parseTypedName('author__writes__paper')).toMatchObject({ kind: 'relation', source: 'author', name: 'writes', target: 'paper', key: null, form: 'names' });
    expect(parseTypedName('author__writes__paper__edge_attr')).toMatchObject({ kind: 'relation', key: 'edge_attr' });
    expect(parseTypedName('edge.author__writes__paper.edge_index')).toMatchObject({ kind: 'relation', form: 'nested', prefix: '' });
    expect(parseTypedName('author,writes,paper.edge_index')).toMatchObject({ kind: 'relation', form: 'object' });
    expect(parseTypedName('_edge_store_dict.author,writes,paper._mapping.edge_index')).toMatchObject({ kind: 'relation', form: 'object' });
    expect(parseTypedName('paper__x')).toMatchObject({ kind: 'node', type: 'paper', key: 'x', form: 'names' });
    expect(parseTypedName('node.paper.train_mask')).toMatchObject({ kind: 'node', type: 'paper', key: 'train_mask', form: 'nested' });
    for (const plain of ['edge_index', 'x', 'train_pos_edge_index', '__x', 'a___b__c', 'author__writes__']) {
      const p = parseTypedName(plain);
      expect(p === null || p.kind === 'node', plain).toBe(true);
    }
  });

  it('a homogeneous dict with nested names is not typed without a relation', () => {
    const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-typed-'));
    try {
      // JSON written here: a plain graph whose keys split like types (masks.train style) but no relation.
      fs.writeFileSync(path.join(tmp, 'g.json'), JSON.stringify({ edge_index: [[0, 1, 2], [1, 2, 0]], paper__x: [[1], [2], [3]] }));
      const r = checkPaths([path.join(tmp, 'g.json')]);
      expect(r.files[0]!.typed).toBeUndefined();
      expect(r.files[0]!.graph!.nodes).toBe(3);
    } finally {
      fs.rmSync(tmp, { recursive: true, force: true });
    }
  });
});

describe('a typed graph without edges', () => {
  it('is an empty graph (warning), each type\'s nodes isolated', () => {
    // Tensors built here: two relations with no entries, three nodes of type a (features).
    const tensors: Tensor[] = [
      { kind: 'dense', name: 'a__r__b', dtype: 'int64', shape: [2, 0], data: new Int32Array(0) },
      { kind: 'dense', name: 'b__s__a', dtype: 'int64', shape: [2, 0], data: new Int32Array(0) },
      { kind: 'dense', name: 'a__x', dtype: 'float32', shape: [3, 1], data: new Float32Array(3) },
    ];
    const r = checkSet([{ path: 'g.npz', format: 'npz', result: { format: 'npz', tensors, problems: [] } }], []);
    const f = r.files[0]!;
    expect(f.typed!.nodeTypes).toEqual({ a: 3, b: 0 });
    expect(f.problems.map((p) => p.code).sort()).toEqual(['empty-graph', 'isolated-nodes']);
    expect(f.problems.find((p) => p.code === 'isolated-nodes')!.count).toBe(3);
  });
});

describe('the manifest form (nodeTypes / relations)', () => {
  it('declares a typed graph over plain file names; counts, missing files and bad keys are reported', () => {
    const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-typed-'));
    try {
      // The sibling fixtures copied under names that say nothing; the manifest says what they are.
      const s = path.join(dir, 'siblings');
      fs.copyFileSync(path.join(s, 'author__writes__paper.npy'), path.join(tmp, 'w.npy'));
      fs.copyFileSync(path.join(s, 'paper__written_by__author.npy'), path.join(tmp, 'rw.npy'));
      fs.copyFileSync(path.join(s, 'paper__cites__paper.npy'), path.join(tmp, 'c.npy'));
      fs.copyFileSync(path.join(s, 'paper__x.npy'), path.join(tmp, 'px.npy'));
      const e = expected['clean.npz'] as Expect;
      const manifest = {
        graphs: [{
          name: 'library',
          nodeTypes: { author: { nodes: e.nodeTypes.author }, paper: { features: 'px.npy' } },
          relations: [
            { source: 'author', name: 'writes', target: 'paper', edges: 'w.npy' },
            { source: 'paper', name: 'written_by', target: 'author', edges: 'rw.npy' },
            { source: 'paper', name: 'cites', target: 'paper', edges: 'c.npy' },
          ],
        }],
      };
      fs.writeFileSync(path.join(tmp, 'hopscope.json'), JSON.stringify(manifest));
      const r = checkPaths([tmp]);
      const f = r.files.find((x) => x.typed)!;
      expect(path.basename(f.path)).toBe('w.npy');
      expect(f.typed!.nodeTypes).toEqual(e.nodeTypes);
      expect(f.typed!.nodeCountFrom).toEqual({ author: 'declared', paper: 'features' });
      expect(f.graph!.edges).toBe(e.graph.edges);
      expect(f.graph!.components).toBe(e.graph.components);
      expect(r.manifestProblems).toEqual([]);

      // A smaller declared author count: row 0 of writes and row 1 of written_by go out of range.
      manifest.graphs[0]!.nodeTypes.author.nodes = 5;
      fs.writeFileSync(path.join(tmp, 'hopscope.json'), JSON.stringify(manifest));
      const r2 = checkPaths([tmp]);
      const oor = problems(r2.files, 'index-out-of-range');
      expect(oor.map((p) => p.relation).sort()).toEqual(['author__writes__paper', 'paper__written_by__author']);
      expect(oor.find((p) => p.relation === 'author__writes__paper')!.message).toContain('row 0');
      expect(oor.find((p) => p.relation === 'paper__written_by__author')!.message).toContain('row 1');
      // Both rows hold the same author ids (one relation is the other reversed): equal counts.
      expect(oor[0]!.count).toBe(oor[1]!.count);
    } finally {
      fs.rmSync(tmp, { recursive: true, force: true });
    }
  });

  it('parses and refuses', () => {
    const m = parseManifest(JSON.stringify({ graphs: [{ name: 'g', nodeTypes: { a: { nodes: 3 } }, relations: [{ source: 'a', name: 'r', target: 'a', edges: 'e.npy' }] }] }));
    expect(m.graphs[0]!.typed!.relations[0]!.edges.file).toBe('e.npy');
    expect(() => parseManifest(JSON.stringify({ graphs: [{ nodeTypes: { a: {} }, relations: [{ source: 'a', name: 'r', target: 'b', edges: 'e.npy' }] }] })))
      .toThrow(/"b" is not one of the node types/);
    expect(() => parseManifest(JSON.stringify({ graphs: [{ nodeTypes: { a: {} }, relations: [], edges: 'x.npy' }] }))).toThrow(/relations/);
    expect(() => parseManifest(JSON.stringify({ graphs: [{ nodeTypes: { a: { colour: 1 } }, relations: [{ source: 'a', name: 'r', target: 'a', edges: 'e' }] }] })))
      .toThrow(/unknown key "colour"/);
  });
});

/**
 * Link-prediction splits (server/src/core/splits, checks/rules/edge-splits.ts) against splits of
 * Zachary's karate club written by the real NumPy (numpy.savez) and PyTorch (torch.save): every
 * count in tests/fixtures/splits/expected.json was computed by tests/fixtures/make_split_fixtures.py
 * with NumPy set operations (np.isin over pairs encoded u * n + v).
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as path from 'node:path';
import * as os from 'node:os';
import { parseManifest } from '../../server/src/core/checks/manifest';
import { checkPaths } from '../../server/src/node/load';
import { main } from '../../server/src/cli';
import { checkGraph } from '../../server/src/core/checks/graph-check';
import { guessRole } from '../../server/src/core/checks/roles';
import { pairRoleOf, splitOfFile } from '../../server/src/core/splits/edge-splits';
import type { DenseTensor } from '../../server/src/core/formats/types';
import type { FileReport, ProblemCode } from '../../common/report';

const dir = path.join(__dirname, '../fixtures/splits');
const expected = JSON.parse(fs.readFileSync(path.join(dir, 'expected.json'), 'utf8'));

interface Expect {
  edgeSplits: unknown;
  leaked: Record<string, number>;
  negativeEdges: Record<string, number>;
  inTwoSplits: Record<string, number>;
  selfPairs: Record<string, number>;
  coldStart: Record<string, number>;
}

const total = (r: Record<string, number>) => Object.values(r).reduce((a, b) => a + b, 0);
const sumCode = (f: FileReport[], code: ProblemCode) =>
  f.flatMap((x) => x.problems).filter((p) => p.code === code).reduce((a, p) => a + p.count, 0);

describe('edge splits of the karate club (NumPy / PyTorch fixtures)', () => {
  const files = ['leak.npz', 'clean.npz', 'leak_dict.pt', 'nested.pt', 'perfile/train_data.pt', 'perfile/val_data.pt', 'perfile/test_data.pt',
    'objects_dict.pt'];
  for (const name of files) {
    it(`${name}: counts equal NumPy's np.isin counts`, () => {
      const e = expected[name] as Expect;
      // The per-split files are each checked as their own graph (each holds its own message edges).
      const r = checkPaths([path.join(dir, name)]);
      const f = r.files.find((x) => x.path.endsWith(name))!;
      expect(f.edgeSplits).toEqual(e.edgeSplits);
      expect(sumCode(r.files, 'leaked-positive-pairs')).toBe(total(e.leaked));
      expect(sumCode(r.files, 'negative-pairs-are-edges')).toBe(total(e.negativeEdges));
      expect(sumCode(r.files, 'pairs-in-two-splits')).toBe(total(e.inTwoSplits));
      expect(sumCode(r.files, 'self-pairs')).toBe(total(e.selfPairs));
      expect(sumCode(r.files, 'cold-start-pairs')).toBe(total(e.coldStart));
      expect(sumCode(r.files, 'index-out-of-range')).toBe(0);
      expect(sumCode(r.files, 'pair-labels-mismatch')).toBe(0);
      // The structure is the message-passing edge index, never a pair tensor.
      expect(f.graph!.edges).toBe(e.edgeSplits && (e.edgeSplits as { messageEdges: number }).messageEdges);
      expect(f.graph!.nodes).toBe(expected.graph.nodes);
    });
  }

  it('the per-split files checked together as a folder: each with its own message edges, as when checked alone', () => {
    const r = checkPaths([path.join(dir, 'perfile')]);
    for (const sp of ['train', 'val', 'test']) {
      const f = r.files.find((x) => x.path.endsWith(`${sp}_data.pt`))!;
      expect(f.edgeSplits).toEqual(expected[`perfile/${sp}_data.pt`].edgeSplits);
    }
  });

  it('the leaky split reports every val/test positive, per split, with positions', () => {
    const r = checkPaths([path.join(dir, 'leak.npz')]);
    const leaks = r.files[0]!.problems.filter((p) => p.code === 'leaked-positive-pairs');
    expect(leaks.map((p) => [p.tensor, p.count])).toEqual([
      ['val_pos_edge_index', expected['leak.npz'].leaked['val.pos']],
      ['test_pos_edge_index', expected['leak.npz'].leaked['test.pos']],
    ]);
    expect(leaks[0]!.severity).toBe('error');
    expect(leaks[0]!.locations![0]!.tensor).toBe('val_pos_edge_index');
    expect(leaks[0]!.message).toMatch(/validation positive pairs/);
  });
});

const dense = (name: string, shape: number[], data: number[]): DenseTensor =>
  ({ kind: 'dense', name, dtype: 'int64', shape, data: Int32Array.from(data) });
const run = (ts: Array<[string, DenseTensor]>, opts = {}) =>
  checkGraph(ts.map(([file, t]) => ({ file, tensor: t, guess: guessRole(t, file) })), opts);
const codes = (c: ReturnType<typeof run>) => c.problems.filter((p) => p.problem.code !== 'isolated-nodes').map((p) => `${p.problem.code}:${p.problem.count}:${p.problem.severity}`);

describe('edge-split checks on small hand-made splits', () => {
  // A directed path 0→1→2→3 (nodes 0..4; node 4 has no message edge, so isolated-nodes is left out below), declared directed.
  const message = dense('edge_index', [2, 3], [0, 1, 2, 1, 2, 3]);

  it('names: split pairs are recognised, other tensors keep their roles', () => {
    expect(pairRoleOf('val_pos_edge_index', 'a.npz')).toMatchObject({ split: 'val', kind: 'pos' });
    expect(pairRoleOf('valid.edge_neg', 'a.pt')).toMatchObject({ split: 'val', kind: 'neg' });
    expect(pairRoleOf('edge_label_index', 'x/test_data.pt')).toMatchObject({ split: 'test', kind: 'pairs' });
    expect(pairRoleOf('edge_label_index', 'x/graph.pt')).toBeUndefined();
    expect(pairRoleOf('edge_index', 'x/test_data.pt')).toBeUndefined();
    expect(pairRoleOf('train_mask', 'x.npz')).toBeUndefined();
    expect(splitOfFile('/a/valid.npz')).toBe('val');
    expect(guessRole(dense('test_neg', [2, 3], [0, 0, 0, 1, 1, 1])).role).toBe('edge-pairs');
    expect(guessRole(dense('edge_index', [2, 3], [0, 0, 0, 1, 1, 1])).role).toBe('edge-index');
  });

  it('leak, negative that is an edge, pair in two splits, self-pairs, cold start, out of range', () => {
    const c = run([
      ['s', message],
      ['s', dense('train_pos', [2, 2], [0, 1, 1, 2])],
      ['s', dense('val_pos', [2, 2], [2, 3, 3, 4])], // 2→3 leaked; 3→4 cold-start (4 has no edge)
      ['s', dense('test_pos', [2, 2], [0, 2, 1, 2])], // 0→1 is a train positive and a message edge; 2→2 self
      ['s', dense('test_neg', [2, 3], [1, 3, 9, 2, 0, 0])], // 1→2 is an edge; 9 is out of range
    ], { directed: true, nodes: 5 });
    expect(codes(c).sort()).toEqual([
      'cold-start-pairs:1:info',
      'index-out-of-range:1:error',
      'leaked-positive-pairs:1:error', // val 2→3
      'leaked-positive-pairs:1:error', // test 0→1
      'negative-pairs-are-edges:1:error',
      'pairs-in-two-splits:1:error',
      'self-pairs:1:warning',
    ].sort());
    expect(c.edgeSplits).toEqual({ messageEdges: 3, train: { pos: 2, neg: null }, val: { pos: 2, neg: null }, test: { pos: 2, neg: 3 } });
    expect(c.figures!.edges).toBe(3);
  });

  it('directed graphs see the reverse pair as another pair; undirected ones as the same', () => {
    const rev = dense('test_pos', [2, 1], [1, 0]);
    expect(codes(run([['s', message], ['s', rev]], { directed: true, nodes: 5 }))).not.toContain('leaked-positive-pairs:1:error');
    expect(codes(run([['s', message], ['s', rev]], { directed: false, nodes: 5 }))).toContain('leaked-positive-pairs:1:error');
  });

  it('labels: length and values', () => {
    const pairs = dense('val.edge_label_index', [2, 2], [0, 2, 3, 3]);
    const short = { ...dense('val.edge_label', [1], [1]) };
    expect(codes(run([['s', message], ['s', pairs], ['s', short]], { directed: true, nodes: 5 }))).toContain('pair-labels-mismatch:1:error');
    const odd = dense('val.edge_label', [2], [1, 2]);
    const c = run([['s', message], ['s', pairs], ['s', odd]], { directed: true, nodes: 5 });
    expect(codes(c)).toContain('pair-labels-mismatch:1:error');
    expect(c.edgeSplits!.val).toEqual({ pos: 1, neg: 0 });
  });

  it('a train negative that is an edge is a warning', () => {
    expect(codes(run([['s', message], ['s', dense('train_neg', [2, 1], [0, 1])]], { directed: true, nodes: 5 })))
      .toEqual(['negative-pairs-are-edges:1:warning']);
  });

  it('without pair tensors nothing changes: no edgeSplits', () => {
    const c = run([['s', message]], { directed: true, nodes: 5 });
    expect(c.edgeSplits).toBeUndefined();
  });
});

describe('hopscope check with edge splits', () => {
  const run = (...argv: string[]) => {
    let out = '';
    const code = main(argv, { out: (s) => (out += s), err: () => {}, color: false });
    return { code, out };
  };

  it('--json gives files[].edgeSplits on the file holding the message edges (NumPy fixture counts)', () => {
    const r = run('check', path.join(dir, 'leak.npz'), '--json');
    const j = JSON.parse(r.out);
    expect(j.files[0].edgeSplits).toEqual(expected['leak.npz'].edgeSplits);
    expect(r.code).toBe(1); // leaked positives are errors
  });

  it('the text output has a line with the split counts; files without splits have none', () => {
    const r = run('check', path.join(dir, 'clean.npz'));
    const e = expected['clean.npz'].edgeSplits;
    expect(r.out).toContain(`link splits: ${e.messageEdges} message edge entries; pairs train ${e.train.pos} +, val ${e.val.pos} + ${e.val.neg} −, test ${e.test.pos} + ${e.test.neg} −`);
    const plain = run('check', path.join(__dirname, '../fixtures/graphs/karate.npy'), '--json');
    expect(JSON.parse(plain.out).files[0].edgeSplits).toBeUndefined();
    expect(run('check', path.join(__dirname, '../fixtures/graphs/karate.npy')).out).not.toContain('link splits');
  });
});

describe('hopscope.json "edgeSplits" (our manifest form)', () => {
  const copy = (names: string[]) => {
    const d = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-splits-'));
    for (const n of names) { fs.mkdirSync(path.dirname(path.join(d, n)), { recursive: true }); fs.copyFileSync(path.join(dir, n), path.join(d, n)); }
    return d;
  };

  it('pos/neg refs into leak.npz give the same counts as reading it by names (np.isin counts)', () => {
    const d = copy(['leak.npz']);
    // Renamed tensors would not be recognised by name: the manifest names them.
    fs.writeFileSync(path.join(d, 'hopscope.json'), JSON.stringify({
      graphs: [{
        name: 'rides', edgeSplits: {
          message: 'leak.npz#edge_index',
          train: { pos: 'leak.npz#train_pos_edge_index' },
          val: { pos: 'leak.npz#val_pos_edge_index', neg: 'leak.npz#val_neg_edge_index' },
          test: { pos: 'leak.npz#test_pos_edge_index', neg: 'leak.npz#test_neg_edge_index' },
        },
      }],
    }));
    const r = checkPaths([d]);
    const e = expected['leak.npz'] as Expect;
    const f = r.files.find((x) => x.path.endsWith('leak.npz'))!;
    expect(r.manifestProblems).toEqual([]);
    expect(f.edgeSplits).toEqual(e.edgeSplits);
    expect(sumCode(r.files, 'leaked-positive-pairs')).toBe(total(e.leaked));
    expect(sumCode(r.files, 'negative-pairs-are-edges')).toBe(total(e.negativeEdges));
  });

  it('pairs + labels refs (the per-split PyTorch file) give its np.isin counts', () => {
    const d = copy(['perfile/test_data.pt']);
    fs.renameSync(path.join(d, 'perfile/test_data.pt'), path.join(d, 'perfile/held_out.pt')); // no split in the file name
    fs.writeFileSync(path.join(d, 'hopscope.json'), JSON.stringify({
      graphs: [{
        edges: 'perfile/held_out.pt#edge_index',
        edgeSplits: { test: { pairs: 'perfile/held_out.pt#edge_label_index', labels: 'perfile/held_out.pt#edge_label' } },
      }],
    }));
    const r = checkPaths([d]);
    const e = expected['perfile/test_data.pt'] as Expect;
    expect(r.manifestProblems).toEqual([]);
    expect(r.files.find((x) => x.path.endsWith('held_out.pt'))!.edgeSplits).toEqual(e.edgeSplits);
    expect(sumCode(r.files, 'cold-start-pairs')).toBe(total(e.coldStart));
  });

  it('refuses unknown keys and labels without pairs', () => {
    expect(() => parseManifest(JSON.stringify({ graphs: [{ edgeSplits: { message: 'a.npy', val: { positives: 'b.npy' } } }] }))).toThrow(/unknown key "positives"/);
    expect(() => parseManifest(JSON.stringify({ graphs: [{ edgeSplits: { message: 'a.npy', val: { labels: 'b.npy' } } }] }))).toThrow(/needs "pairs"/);
    expect(() => parseManifest(JSON.stringify({ graphs: [{ edges: 'a.npy', edgeSplits: { message: 'a.npy' } }] }))).toThrow(/keep one/);
    expect(parseManifest(JSON.stringify({ graphs: [{ edgeSplits: { message: 'a.npy', test: { pos: 'b.npy#p' } } }] })).graphs[0]!.parts
      .map((p) => [p.role, p.tensor ?? null])).toEqual([['edge-index', null], ['edge-pairs', 'p']]);
  });
});

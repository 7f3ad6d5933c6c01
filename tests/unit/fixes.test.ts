/**
 * Quick fixes and corrected copies. The fixed text / file is re-read and its figures compared with
 * a plain set-based recount written here (independent of the CSR code), and with the problem list.
 * The written .npy must match NumPy's own layout for int64 (docs/references.md §1.1: 64-byte aligned
 * header, '<i8', C order) — checked by the project's reader, which is tested against NumPy files.
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { applyEdits, edgeListFixes } from '../../server/src/core/fixes/edgelist-fixes';
import { checkPaths } from '../../server/src/node/load';
import { describeFixedCopy, suggestedTarget, writeFixedCopy } from '../../server/src/node/fixed-copy';
import { encodeNpyInt64 } from '../../server/src/core/formats/npy-write';
import { readNpy } from '../../server/src/core/formats/npy';
import { readNpz } from '../../server/src/core/formats/npz';
import { DEFAULT_LIMITS, type DenseTensor } from '../../server/src/core/formats/types';
import { globMatcher } from '../../server/src/node/glob';
import { integerAt, pathLiteralAt } from '../../server/src/lsp/hover-text';

const pairs = (text: string) => text.split('\n').filter((l) => /^\s*\d/.test(l)).map((l) => l.split(/[\s,]+/).slice(0, 2).map(Number) as [number, number]);

describe('edge-list quick fixes', () => {
  const text = '# a b\n0 1\n1 0\n1 2\n2 2\n2 3\n3 2\n1 2\n';
  it('add missing reverse edges: every pair then has its reverse (set recount)', () => {
    const [fix] = edgeListFixes(text, 'g.edges', ['add-reverse-edges']);
    expect(fix!.count).toBe(1);
    const out = applyEdits(text, fix!.edits);
    const set = new Set(pairs(out).map(([a, b]) => `${a},${b}`));
    for (const [a, b] of pairs(out)) expect(set.has(`${b},${a}`)).toBe(true);
    expect(out.endsWith('2 1\n')).toBe(true);
  });
  it('remove self-loop lines and repeated lines; the rest stays byte for byte', () => {
    const fixes = edgeListFixes(text, 'g.edges', ['remove-self-loops', 'remove-duplicates']);
    let out = text;
    for (const f of fixes) out = applyEdits(out, f.edits);
    // Applying both fixes one after the other: recompute the second on the new text.
    const loops = edgeListFixes(text, 'g.edges', ['remove-self-loops'])[0]!;
    const step1 = applyEdits(text, loops.edits);
    const dups = edgeListFixes(step1, 'g.edges', ['remove-duplicates'])[0]!;
    const step2 = applyEdits(step1, dups.edits);
    expect(step2).toBe('# a b\n0 1\n1 0\n1 2\n2 3\n3 2\n');
    const r = pairs(step2);
    expect(new Set(r.map(String)).size).toBe(r.length);
    expect(r.every(([a, b]) => a !== b)).toBe(true);
  });
  it('sparse ids (the karate list renumbered u → 10^7·u + 7): the same fix, per-node memory over the 34 ids', () => {
    // tests/fixtures/text/karate.edges: Zachary (1977) as NetworkX 2.8 writes it, each edge once;
    // renumbered here so that the largest id (330000007) is far above the 34 distinct ids.
    const exp = JSON.parse(fs.readFileSync(path.join(root(), 'tests/fixtures/text/expected.json'), 'utf8'))['karate.edges'];
    const big = (u: number) => 10_000_000 * u + 7;
    const text = (exp.edges as number[][]).map(([u, v]) => `${big(u!)} ${big(v!)}`).join('\n') + '\n';
    const [fix] = edgeListFixes(text, 'members.edges', ['add-reverse-edges']);
    expect(fix!.count).toBe(exp.undirectedEdges);
    const out = new Set(pairs(applyEdits(text, fix!.edits)).map(String));
    const want = new Set((exp.edges as number[][]).flatMap(([u, v]) => [`${big(u!)},${big(v!)}`, `${big(v!)},${big(u!)}`]));
    expect(out).toEqual(want);
    const dup = text + `${big(0)} ${big(1)}\n`;
    const [d] = edgeListFixes(dup, 'members.edges', ['remove-duplicates']);
    expect(applyEdits(dup, d!.edits)).toBe(text);
  });
  it('shift 1-based ids to 0-based keeps delimiters and other columns', () => {
    const one = 'src,dst,w\n1,2,0.5\n2,3,1.5\n';
    const [fix] = edgeListFixes(one, 'g.csv', ['to-zero-based']);
    expect(applyEdits(one, fix!.edits)).toBe('src,dst,w\n0,1,0.5\n1,2,1.5\n');
  });
  it('a list with each undirected edge once (karate club, NetworkX write_edgelist data=False): the info is offered the fix', () => {
    // tests/fixtures/text/karate.edges: Zachary (1977), 34 nodes, 78 edges as NetworkX 2.8 writes them.
    const file = path.join(root(), 'tests/fixtures/text/karate.edges');
    const exp = JSON.parse(fs.readFileSync(path.join(root(), 'tests/fixtures/text/expected.json'), 'utf8'))['karate.edges'];
    const info = checkPaths([file]).files[0]!.problems.find((p) => p.code === 'asymmetric-adjacency')!;
    expect(info.severity).toBe('info');
    const karate = fs.readFileSync(file, 'utf8');
    const [fix] = edgeListFixes(karate, file, ['add-reverse-edges']);
    expect(fix!.title).toBe(`Add ${exp.undirectedEdges} missing reverse edges`);
    const out = applyEdits(karate, fix!.edits);
    const got = pairs(out);
    expect(got).toHaveLength(2 * exp.undirectedEdges);
    const set = new Set(got.map(([a, b]) => `${a},${b}`));
    for (const [a, b] of exp.edges as number[][]) expect(set.has(`${a},${b}`) && set.has(`${b},${a}`)).toBe(true);
    // Re-checked, the list is undirected with no problem left.
    const tmp = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-fix-')), 'karate.edges');
    fs.writeFileSync(tmp, out);
    const again = checkPaths([tmp]).files[0]!;
    expect(again.graph).toMatchObject({ nodes: exp.nodes, edges: 2 * exp.undirectedEdges, directed: false });
    expect(again.problems).toEqual([]);
  });
  it('nothing to fix gives no fixes', () => {
    expect(edgeListFixes('0 1\n1 0\n', 'g.edges')).toEqual([]);
  });
});

describe('corrected copies of binary files (never over the original)', () => {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-fix-'));
  it('an E x 2 .npy with a repeat and a one-way edge becomes a clean 2 x E copy', () => {
    const src = path.join(root(), 'demo/depots/edge_index.npy');
    const file = path.join(dir, 'edge_index.npy');
    fs.copyFileSync(src, file);
    const before = fs.readFileSync(file);
    const report = checkPaths([file]).files[0]!;
    const plan = describeFixedCopy(file, report);
    expect(plan.changes.join('\n')).toMatch(/2 x E/);
    expect(plan.suggestedTarget).toBe(path.join(dir, 'edge_index.fixed.npy'));
    const done = writeFixedCopy(file, undefined, report);
    expect(fs.readFileSync(file).equals(before)).toBe(true);
    const t = readNpy(new Uint8Array(fs.readFileSync(done.written!)), done.written!, DEFAULT_LIMITS).tensors[0] as DenseTensor;
    expect(t.shape[0]).toBe(2);
    expect(t.dtype).toBe('int64');
    expect(t.shape[1]).toBe(26); // the depot ring: 12 + 1 chords, both directions (scripts/make-demo.mjs)
    // A second copy does not overwrite the first.
    expect(suggestedTarget(file)).toBe(path.join(dir, 'edge_index.fixed-1.npy'));
    expect(() => writeFixedCopy(file, done.written, report)).toThrow();
  });
  it('a copy of a graph with sparse ids keeps its ids (members_edge_index.npy, numpy.save)', () => {
    // tests/fixtures/sparse/members_edge_index.npy (make_sparse_fixtures.py): ids up to 8962049388,
    // checked on its 37 distinct ids; the copy must hold the ids the file holds, not 0..36.
    const file = path.join(dir, 'members_edge_index.npy');
    fs.copyFileSync(path.join(root(), 'tests/fixtures/sparse/members_edge_index.npy'), file);
    const original = readNpy(new Uint8Array(fs.readFileSync(file)), file, DEFAULT_LIMITS).tensors[0] as DenseTensor;
    const report = checkPaths([file]).files[0]!;
    expect(report.problems.map((p) => p.code)).toContain('sparse-ids');
    const done = writeFixedCopy(file, undefined, report);
    const t = readNpy(new Uint8Array(fs.readFileSync(done.written!)), done.written!, DEFAULT_LIMITS).tensors[0] as DenseTensor;
    expect(t.shape).toEqual(original.shape);
    expect(Array.from(t.data)).toEqual(Array.from(original.data));
  });
  it('a copy of a list where no edge has its reverse does not guess that it is undirected', () => {
    // The karate club edges as NetworkX writes them (each once), stored as a 2 x E int64 .npy.
    const karate = fs.readFileSync(path.join(root(), 'tests/fixtures/text/karate.edges'), 'utf8');
    const e = pairs(karate);
    const file = path.join(dir, 'one_way.npy');
    fs.writeFileSync(file, encodeNpyInt64([2, e.length], [...e.map((p) => p[0]), ...e.map((p) => p[1])]));
    const plan = describeFixedCopy(file, checkPaths([file]).files[0]!);
    expect(plan.changes.join('\n')).not.toMatch(/add \d+ missing reverse/);
    expect(plan.changes.join('\n')).toMatch(/no edge has its reverse, so none are added/);
    // Declared undirected, the copy adds all 78.
    fs.writeFileSync(path.join(dir, 'hopscope.json'), JSON.stringify({ directed: false }));
    expect(describeFixedCopy(file, checkPaths([file]).files[0]!).changes).toContain(`add ${e.length} missing reverse edges`);
    fs.rmSync(path.join(dir, 'hopscope.json'));
  });
  it('an .npz copy keeps every other member as it was', () => {
    const file = path.join(dir, 'g.npz');
    fs.copyFileSync(path.join(root(), 'tests/fixtures/graphs/karate_container.npz'), file);
    const report = checkPaths([file], { directed: false }).files[0]!;
    expect(describeFixedCopy(file, report).changes).toEqual(['nothing to change']);
    const copy = writeFixedCopy(file, path.join(dir, 'g.copy.npz'), report);
    const r = readNpz(new Uint8Array(fs.readFileSync(copy.written!)), copy.written!, DEFAULT_LIMITS);
    expect(r.tensors.map((t) => t.name).sort()).toEqual(['edge_index', 'test_mask', 'train_mask', 'val_mask', 'x', 'y']);
    expect((r.tensors.find((t) => t.name === 'x') as DenseTensor).shape).toEqual([34, 34]);
  });
});

describe('glob and hover helpers', () => {
  it('files.exclude-style globs', () => {
    const m = globMatcher(['**/raw', '*.tmp.npy', 'out/{a,b}.npz']);
    expect(m('data/raw/x.npy')).toBe(true);
    expect(m('a/b/c.tmp.npy')).toBe(true);
    expect(m('out/a.npz')).toBe(true);
    expect(m('out/c.npz')).toBe(false);
    expect(m('data/x.npy')).toBe(false);
  });
  it('finds path strings and node ids under the cursor', () => {
    const line = `x = np.load("lanes/dock_features.npy")  # 'notes.txt'`;
    expect(pathLiteralAt(line, 20)?.text).toBe('lanes/dock_features.npy');
    expect(pathLiteralAt(line, 2)).toBeUndefined();
    expect(pathLiteralAt('hopscope check data/edges.csv --json', 20)?.text).toBe('data/edges.csv');
    expect(integerAt('12,345,0.5', 4)?.text).toBe('345');
    expect(integerAt('12,345,0.5', 8)).toBeUndefined();
  });
});

function root(): string {
  return path.join(__dirname, '../..');
}

/**
 * `LoadOptions.focus` (what an editor's re-check of changed files uses): every input is read so
 * files group as in a check of them all, but only the graphs holding a focus file are checked and
 * reported. The reference is the same check without a focus: a focused report must equal it,
 * problem for problem, for every file it covers. Files: the broken bundle of
 * tests/fixtures/graphs (written by make_graph_fixtures.py with NumPy) and small edge lists.
 */
import { afterAll, describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { checkPaths } from '../../server/src/node/load';

const bundle = path.join(__dirname, '../fixtures/graphs/broken_bundle');
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-focus-'));
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

const byPath = (files: Array<{ path: string }>) => new Map(files.map((f) => [path.resolve(f.path), f]));

describe('checkPaths with a focus', () => {
  it('checks and reports only the graph of the focus file among a folder of edge lists', () => {
    fs.writeFileSync(path.join(tmp, 'a.edges'), '0 1\n1 0\n0 1\n'); // a duplicate line
    fs.writeFileSync(path.join(tmp, 'b.edges'), '0 1\n1 0\n1 1\n'); // a self-loop
    fs.writeFileSync(path.join(tmp, 'c.edges'), '0 1\n1 0\n');
    const all = ['a.edges', 'b.edges', 'c.edges'].map((f) => path.join(tmp, f));
    const full = checkPaths(all);
    const focused = checkPaths(all, {}, { focus: [path.join(tmp, 'b.edges')] });
    expect(focused.files.map((f) => path.basename(f.path))).toEqual(['b.edges']);
    expect(focused.graphs).toHaveLength(1);
    expect(focused.files[0]).toEqual(byPath(full.files).get(path.join(tmp, 'b.edges')));
    expect(focused.files[0]!.problems.map((p) => p.code)).toEqual(['self-loops']);
  });

  it('a focus on one loose file of a bundle checks and reports the whole bundle, as without a focus', () => {
    const files = fs.readdirSync(bundle).map((f) => path.join(bundle, f));
    const full = byPath(checkPaths([bundle]).files);
    const focused = checkPaths(files, {}, { focus: [path.join(bundle, 'x.npy')] });
    // x.npy joins the folder's one edge index: every file of that graph is reported again.
    expect(focused.graphs).toHaveLength(1);
    expect(new Set(focused.files.map((f) => path.resolve(f.path)))).toEqual(new Set(focused.graphs[0]!.files.map((f) => path.resolve(f))));
    expect(focused.files.length).toBeGreaterThan(2);
    for (const f of focused.files) expect(f).toEqual(full.get(path.resolve(f.path)));
  });

  it('an empty focus checks nothing', () => {
    const files = fs.readdirSync(bundle).map((f) => path.join(bundle, f));
    const r = checkPaths(files, {}, { focus: [] });
    expect(r.files).toEqual([]);
    expect(r.graphs).toEqual([]);
  });
});

/**
 * `hopscope ceiling` through the CLI entry point (main(argv, io)), on the files written by
 * tests/fixtures/make_ceiling_fixtures.py: csl.pt is torch.save of (data, slices) by the real
 * PyTorch 1.13 (stand-in data class at the graph-learning library's import path), the .npz files by
 * NumPy; the expected figures are NetworkX WL-hash groupings and the script's own Python
 * refinement (see the script's docstring). The circular skip-link ceiling of 10% is the published
 * value for message-passing baselines (Murphy et al. 2019; Dwivedi et al. 2020; docs/references.md).
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { describe, expect, it } from 'vitest';
import { main } from '../../server/src/cli';
import { GraphStore } from '../../server/src/node/graph-store';
import { AnalysisCancelled } from '../../server/src/core/cancel';

const DIR = path.join(__dirname, '..', 'fixtures', 'ceiling');
const expected = JSON.parse(fs.readFileSync(path.join(DIR, 'expected.json'), 'utf8'));
const f = (name: string) => path.join(DIR, name);

function run(...argv: string[]): { code: number; out: string; err: string } {
  let out = '', err = '';
  const code = main(['ceiling', ...argv], { out: (s) => { out += s; }, err: (s) => { err += s; }, color: false });
  return { code, out, err };
}

describe('hopscope ceiling', () => {
  it('a saved (data, slices) dataset of circular skip-link graphs: 10%, and what counts add', () => {
    const r = run(f('csl.pt'), '--with', 'triangles', '--with', 'cycles:4,cycles:6', '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.task).toBe('graph');
    expect(j.graphs).toBe(150);
    expect(j.ceiling).toBe(0.1);
    expect(j.conflictingGroups).toBe(1);
    expect(Object.keys(j.groups[0])).toEqual(['size', 'labels', 'graphs']);
    expect(j.groups[0].graphs).toHaveLength(20);
    expect(j.with.map((w: { with: string }) => w.with)).toEqual(['triangles', 'cycles:4', 'cycles:6']);
    for (const w of j.with) expect(w.ceiling, w.with).toBe(expected.csl[w.with].ceiling);
  });

  it('text: the ceilings side by side, what the number means and what raises it, the mixed groups', () => {
    const r = run(f('triangles_hexagon.npz'), '--with', 'triangles');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/structure alone\s+50\.0%/);
    expect(r.out).toMatch(/\+ triangles\s+100\.0%/);
    expect(r.out).toMatch(/No message-passing model whose only inputs are the structure/);
    expect(r.out).toMatch(/hopscope spectrum --out/);
    expect(r.out).toMatch(/Look-alike groups with mixed labels/);
    expect(r.out).toMatch(/\n\s+2\s+0: 1\s+1: 1\s+0 1\n/);
  });

  it('node features of a dataset (NumPy batch vector + node label column), against NetworkX hashes', () => {
    const j = JSON.parse(run(f('random.npz'), '--features', '--json').out);
    expect(j.start).toBe('features');
    expect(j.ceiling).toBe(expected.random.features.ceiling);
    expect(j.groupCount).toBe(expected.random.features.groupCount);
    const u = JSON.parse(run(f('random.npz'), '--json').out);
    expect(u.ceiling).toBe(expected.random.uniform.ceiling);
  });

  it('numeric targets: the error floor from the NetworkX groups, and what lowers it', () => {
    const j = JSON.parse(run(f('regression.npz'), '--json').out);
    expect(j.labelKind).toBe('targets');
    expect(j.ceiling).toBeNull();
    expect(j.errorFloor.mse).toBeCloseTo(expected.random.targets.mse, 9);
    expect(j.errorFloor.mae).toBeCloseTo(expected.random.targets.mae, 9);
    expect(j.groups[0].spread).toBeCloseTo(expected.random.targets.largestSpread, 9);
    const t = run(f('regression.npz')).out;
    expect(t).toMatch(/numbers rather than classes/);
    expect(t).toMatch(/What lowers the floor/);
    expect(t).toMatch(/Look-alike groups with the widest spread of targets/);
  });

  it("one graph with node classes: the karate club's ceiling per layer count", () => {
    const r = run(f('karate.npz'), '--with', 'triangles', '--layers', '4', '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.task).toBe('node');
    expect(j.perLayer).toEqual(expected.karate.uniform);
    expect(j.with[0].perLayer).toEqual(expected.karate.triangles);
    const t = run(f('karate.npz'), '--layers', '3');
    expect(t.out).toMatch(/structure alone\s+50\.0%\s+64\.7%\s+100\.0%/);
    expect(t.out).toMatch(/stop changing after round 2/);
  });

  it('refuses what it cannot bound, with exit code 2', () => {
    const none = run(path.join(__dirname, '..', 'fixtures', 'structure', 'bull.npy'));
    expect(none.code).toBe(2);
    expect(none.err).toMatch(/no node labels found/);
    const bad = run(f('karate.npz'), '--with', 'cycles:12');
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/cycle lengths go from 3 up to 8/);
    expect(run(f('karate.npz'), '--with').code).toBe(2);
    expect(run(f('karate.npz'), '--layers', 'x').code).toBe(2);
    expect(run().code).toBe(2);
  });
});

describe('the worker\'s ceiling request (graph-store.ts)', () => {
  it('answers the same figures as the command line, and a sentence for a file without labels', () => {
    const store = new GraphStore();
    const g = store.ceiling({ path: f('csl.pt'), with: ['triangles'] }, { isCancellationRequested: false });
    expect('error' in g).toBe(false);
    if ('error' in g || g.task !== 'graph') throw new Error('graph-level answer expected');
    expect(g.ceiling).toBe(0.1);
    expect(g.with![0]!.ceiling).toBe(expected.csl.triangles.ceiling);
    const n = store.ceiling({ path: f('karate.npz'), layers: 2 }, { isCancellationRequested: false });
    if ('error' in n || n.task !== 'node') throw new Error('node-level answer expected');
    expect(n.perLayer).toEqual(expected.karate.uniform.slice(0, 3));
    const none = store.ceiling({ path: path.join(__dirname, '..', 'fixtures', 'structure', 'bull.npy') }, { isCancellationRequested: false });
    expect(none).toEqual({ error: expect.stringMatching(/^bull\.npy: no node labels found/) });
    const bad = store.ceiling({ path: f('karate.npz'), with: ['cycles:2'] }, { isCancellationRequested: false });
    expect(bad).toEqual({ error: expect.stringMatching(/cycle lengths go from 3 up to 8/) });
  });

  it('a cancelled request stops with AnalysisCancelled', () => {
    const store = new GraphStore();
    expect(() => store.ceiling({ path: f('csl.pt') }, { isCancellationRequested: true })).toThrow(AnalysisCancelled);
  });
});

/**
 * `hopscope wl`, `compare` and `bottlenecks` through the CLI entry point (main(argv, io)).
 *
 * Expected numbers: docs/references.md §5 (karate 1, 11, 27; the pairs table), §2.1 (karate bridge
 * (0, 11)), §6 (karate (0,31) = −67/48, the most negative balanced Forman curvature), and
 * NetworkX 2.8 values in tests/fixtures/structure/expected.json (bridges, WL from the club
 * attribute, is_isomorphic).
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { main } from '../../server/src/cli';
import { expected, readEdgeIndexNpy, STRUCTURE_DIR } from './structure-fixtures';

function run(...argv: string[]): { code: number; out: string; err: string } {
  let out = '', err = '';
  const code = main(argv, { out: (s) => { out += s; }, err: (s) => { err += s; }, color: false });
  return { code, out, err };
}
const f = (name: string) => path.join(STRUCTURE_DIR, `${name}.npy`);
const json = (r: { code: number; out: string; err: string }) => {
  expect(r.err).toBe('');
  expect(r.code).toBe(0);
  return JSON.parse(r.out);
};

/** A C-order '<i8' .npy of a 2 x E array (NumPy 1.24 layout: 128-byte header, docs/references.md §1.1). */
function writeEdgeIndex(file: string, src: ArrayLike<number>, dst: ArrayLike<number>): void {
  const e = src.length;
  let header = `{'descr': '<i8', 'fortran_order': False, 'shape': (2, ${e}), }`;
  header = header.padEnd(117, ' ') + '\n';
  const buf = Buffer.alloc(10 + header.length + 16 * e);
  buf.write('\x93NUMPY', 0, 'latin1');
  buf.writeUInt8(1, 6); buf.writeUInt8(0, 7);
  buf.writeUInt16LE(header.length, 8);
  buf.write(header, 10, 'latin1');
  for (let k = 0; k < e; k++) {
    buf.writeBigInt64LE(BigInt(src[k]!), 128 + 8 * k);
    buf.writeBigInt64LE(BigInt(dst[k]!), 128 + 8 * (e + k));
  }
  fs.writeFileSync(file, buf);
}

describe('hopscope wl', () => {
  it('karate --json: 1, 11, 27, stable after round 2, look-alike groups', () => {
    const r = json(run('wl', f('karate'), '--json'));
    expect(r.classesPerRound).toEqual([1, 11, 27]);
    expect(r.stableAfter).toBe(2);
    expect(r.start).toBe('uniform');
    expect(r.nodes).toBe(34);
    expect(r.edges).toBe(78);
    // Groups: the NetworkX partition's classes of two or more nodes, largest first.
    const sizes = new Map<number, number>();
    for (const rep of expected.graphs.karate!.wlPartition) sizes.set(rep, (sizes.get(rep) ?? 0) + 1);
    const nxSizes = [...sizes.values()].filter((s) => s > 1).sort((a, b) => b - a);
    expect(r.groups.map((g: { size: number }) => g.size)).toEqual(nxSizes.slice(0, 10));
    expect(r.indistinguishableNodes).toBe(nxSizes.reduce((s, x) => s + x, 0));
    for (const g of r.groups) expect(g.nodes.length).toBe(g.size);
  });

  it('--rounds 1 stops before the colouring is stable (stableAfter null)', () => {
    const r = json(run('wl', f('florentine'), '--rounds', '1', '--json'));
    expect(r).toMatchObject({ classesPerRound: [1, 5], stableAfter: null });
    expect(json(run('wl', f('florentine'), '--rounds=3', '--json'))).toMatchObject({ classesPerRound: [1, 5, 14, 15], stableAfter: 3 });
  });

  it('--features starts from the feature rows (NetworkX WL with node_attr="club")', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-wl-'));
    try {
      fs.copyFileSync(f('karate'), path.join(dir, 'edge_index.npy'));
      fs.copyFileSync(path.join(STRUCTURE_DIR, 'karate_club_onehot.npy'), path.join(dir, 'x.npy'));
      const r = json(run('wl', path.join(dir, 'edge_index.npy'), '--features', '--json'));
      expect(r.start).toBe('features');
      expect(r.classesPerRound).toEqual(expected.graphs.karate!.wlClassesFromClub);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it('text output: rounds table, stable round and groups', () => {
    const r = run('wl', f('karate'));
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/round\s+classes/);
    expect(r.out).toMatch(/Stable after round 2: 27 classes of 34 nodes/);
    expect(r.out).toMatch(/share their colour with another node/);
    const p = run('wl', f('petersen'));
    expect(p.out).toMatch(/Stable after round 0: 1 class of 10 nodes/);
  });

  it('usage errors and unreadable input exit 2 with a message', () => {
    for (const argv of [['wl'], ['wl', f('karate'), '--rounds', 'x'], ['wl', f('karate'), '--bogus'],
      ['wl', f('karate'), f('bull')], ['wl', f('karate'), '--features'], ['wl', f('karate'), '--rounds']]) {
      const r = run(...argv);
      expect(r.code, argv.join(' ')).toBe(2);
      expect(r.err).toMatch(/^hopscope wl: /);
      expect(r.out).toBe('');
    }
    const missing = run('wl', path.join(STRUCTURE_DIR, 'no-such-graph.npy'));
    expect(missing.code).toBe(2);
    expect(missing.err).toMatch(/no such file/);
    const h = run('wl', '--help');
    expect(h.code).toBe(0);
    expect(h.out).toMatch(/^Usage: hopscope wl FILE/);
  });
});

describe('hopscope compare', () => {
  // docs/references.md §5 pairs table.
  for (const [a, b, rounds] of [['two_k3', 'cycle6', 0], ['c3_c4', 'cycle7', 0], ['decalin', 'bicyclopentyl', 2],
    ['k33', 'prism3', 0], ['petersen', 'prism5', 0], ['rook4', 'shrikhande', 0]] as const) {
    it(`${a} vs ${b}: not distinguishable, not isomorphic`, () => {
      const r = json(run('compare', f(a), f(b), '--json'));
      expect(r).toMatchObject({ wlDistinguishable: false, roundsUsed: rounds, isomorphic: false });
    });
  }

  it('karate vs a relabelled copy: isomorphic; karate vs Florentine: distinguishable at round 0', () => {
    expect(json(run('compare', f('karate'), f('karate_relabelled'), '--json')))
      .toMatchObject({ wlDistinguishable: false, roundsUsed: 2, isomorphic: true, nodes: [34, 34], edges: [78, 78] });
    expect(json(run('compare', f('karate'), f('florentine'), '--json')))
      .toMatchObject({ wlDistinguishable: true, roundsUsed: 0, isomorphic: false });
  });

  it('--max-nodes below the size gives isomorphic null', () => {
    expect(json(run('compare', f('karate'), f('karate_relabelled'), '--max-nodes', '10', '--json')))
      .toMatchObject({ wlDistinguishable: false, isomorphic: null });
  });

  it('text output says what the result means', () => {
    const r = run('compare', f('rook4'), f('shrikhande'));
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/1-WL\s+cannot tell them apart/);
    expect(r.out).toMatch(/Isomorphic\s+no/);
    expect(r.out).toMatch(/maps to the same/);
    const s = run('compare', f('path5'), f('star4'));
    expect(s.out).toMatch(/tells them apart at round 1/);
  });

  it('usage errors and unreadable input exit 2', () => {
    for (const argv of [['compare'], ['compare', f('karate')], ['compare', f('karate'), f('bull'), f('bull')],
      ['compare', f('karate'), f('bull'), '--rounds', '-1']]) {
      const r = run(...argv);
      expect(r.code, argv.join(' ')).toBe(2);
      expect(r.err).toMatch(/^hopscope compare: /);
    }
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-cmp-'));
    try {
      const bad = path.join(dir, 'broken.npy');
      fs.writeFileSync(bad, Buffer.from('\x93NUMPY not really a header', 'latin1'));
      const r = run('compare', f('karate'), bad);
      expect(r.code).toBe(2);
      expect(r.err).toMatch(/^hopscope compare: /);
      expect(r.out).toBe('');
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe('hopscope bottlenecks', () => {
  it('karate --json: bridges [[0, 11]], (0, 31) first at −67/48', () => {
    const r = json(run('bottlenecks', f('karate'), '--top', '3', '--json'));
    expect(r.bridges).toEqual([[0, 11]]);
    expect(r.bridgeCount).toBe(1);
    expect(r.edges).toHaveLength(3);
    expect(r.edges[0]).toMatchObject({ u: 0, v: 31, formanCurvature: -18, triangles: 0, bridge: false });
    expect(r.edges[0].balancedFormanCurvature).toBeCloseTo(-67 / 48, 12);
    expect(r.edges.map((e: { u: number; v: number }) => [e.u, e.v])).toEqual([[0, 31], [13, 33], [2, 27]]);
    expect(r.summary).toMatchObject({ edges: 78, formanMin: -25, formanMax: -2 });
    expect(r.summary.formanMean).toBeCloseTo(-900 / 78, 10);
    expect(r.summary.balancedFormanMean).toBeCloseTo(-0.221054, 6);
  });

  it('bridges list matches networkx.bridges (Florentine, Les Misérables)', () => {
    for (const name of ['florentine', 'les_miserables']) {
      const r = json(run('bottlenecks', f(name), '--json'));
      expect(r.bridges).toEqual(expected.graphs[name]!.bridges);
      expect(r.edges).toHaveLength(20);
    }
  });

  it('barbell: the bridge is the most negative edge and is marked', () => {
    const r = json(run('bottlenecks', f('barbell4'), '--json', '--top', '1'));
    expect(r.edges[0]).toMatchObject({ u: 3, v: 4, formanCurvature: -4, balancedFormanCurvature: -1, bridge: true });
    const t = run('bottlenecks', f('barbell4'));
    expect(t.out).toMatch(/1 bridge \(removing one cuts the graph\): 3–4/);
    expect(t.out).toMatch(/3–4\s+-1\.0000\s+-4\s+0\s+bridge/);
  });

  it('--index-base 1: ids are reported as written in the file', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-bn-'));
    try {
      const { src, dst } = readEdgeIndexNpy(f('karate'));
      const file = path.join(dir, 'karate1.npy');
      writeEdgeIndex(file, Array.from(src, (x) => x + 1), Array.from(dst, (x) => x + 1));
      const r = run('bottlenecks', file, '--index-base', '1', '--top', '1', '--json');
      expect(r.code).toBe(0);
      const out = JSON.parse(r.out);
      expect(out.bridges).toEqual([[1, 12]]);
      expect(out.edges[0]).toMatchObject({ u: 1, v: 32 });
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it('usage errors exit 2', () => {
    for (const argv of [['bottlenecks'], ['bottlenecks', f('karate'), '--top', 'many'], ['bottlenecks', f('karate'), '--json=1'],
      ['bottlenecks', f('karate'), '--index-base', '2']]) {
      const r = run(...argv);
      expect(r.code, argv.join(' ')).toBe(2);
      expect(r.err).toMatch(/^hopscope bottlenecks: /);
    }
  });
});

it('the overview lists the three commands', () => {
  const r = run('--help');
  expect(r.code).toBe(0);
  for (const name of ['wl FILE', 'compare FILE_A FILE_B', 'bottlenecks FILE']) expect(r.out).toContain(name);
});

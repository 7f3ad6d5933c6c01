// Files large enough to take the large-file paths of the built CLI (dist/cli.js as a fresh
// process): a .npy edge index above 32 MB is streamed into int32, a text edge list above 32 MB is
// parsed while the helper thread reads it, and 3M edge entries are sorted on two threads. The graph
// is a ring built here with a few planted faults, so every expected figure follows from the
// construction (an internal consistency test; the figures themselves are held to NetworkX/SciPy in
// graph-figures.test.ts and by `npm run bench`).
import { spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodeNpyInt64 } from '../../server/src/core/formats/npy-write';

const CLI = path.join(__dirname, '../../dist/cli.js');
const N = 1_500_000;
let tmp = '';

/** Ring u ↔ u+1 (both directions), then a self-loop on node 7, a repeat of 0 → 1, and 5 → N. */
function ringEdges(): { src: number[]; dst: number[] } {
  const src: number[] = [], dst: number[] = [];
  for (let u = 0; u < N; u++) {
    const v = (u + 1) % N;
    src.push(u, v); dst.push(v, u);
  }
  src.push(7, 0, 5); dst.push(7, 1, N);
  return { src, dst };
}

function check(file: string) {
  const r = spawnSync(process.execPath, [CLI, 'check', file, '--json', '--num-nodes', String(N)], { encoding: 'utf8', maxBuffer: 1 << 26 });
  expect(r.status).toBe(1); // the planted out-of-range id is an error
  return JSON.parse(r.stdout).files[0];
}

function expectRing(f: { graph: Record<string, unknown>; problems: { code: string; line?: number }[] }) {
  expect(f.graph).toMatchObject({
    nodes: N, edges: 2 * N + 2, directed: false, selfLoops: 1, duplicateEdges: 1,
    asymmetricPairs: 0, isolatedNodes: 0, components: 1,
  });
  expect(f.problems.map((p) => p.code).sort()).toEqual(['duplicate-edges', 'index-out-of-range', 'self-loops']);
}

beforeAll(() => {
  if (!fs.existsSync(CLI)) throw new Error('dist/cli.js missing: run npm run build (npm test does)');
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-large-'));
});
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

describe('large files through the built CLI', () => {
  it('a 48 MB .npy edge index (streamed into int32, two-thread build)', () => {
    const { src, dst } = ringEdges();
    const p = path.join(tmp, 'edge_index.npy');
    fs.writeFileSync(p, encodeNpyInt64([2, src.length], [...src, ...dst]));
    expect(fs.statSync(p).size).toBeGreaterThan(32 * 1024 ** 2);
    expectRing(check(p));
  }, 60_000);

  it('a text edge list above 32 MB (read on the helper thread while parsed): the bad id keeps its line', () => {
    const { src, dst } = ringEdges();
    const lines = ['# ring of docks, planted faults at the end'];
    for (let k = 0; k < src.length; k++) lines.push(`${src[k]}\t${dst[k]}`);
    const p = path.join(tmp, 'ring.edges');
    fs.writeFileSync(p, lines.join('\n') + '\n');
    expect(fs.statSync(p).size).toBeGreaterThan(32 * 1024 ** 2);
    const f = check(p);
    expectRing(f);
    const oor = f.problems.find((x: { code: string }) => x.code === 'index-out-of-range');
    expect(oor.line).toBe(lines.length); // the last line: "5\t1500000"
    expect(oor.column).toBe(3);
  }, 60_000);
});

describe('tiny files that name huge ids or node counts, through the built CLI (issue 8)', () => {
  // tests/fixtures/make_sparse_fixtures.py: written by numpy.savetxt, numpy.save, json.dump,
  // torch.save and scipy.io.mmwrite; figures from NetworkX / SciPy (expected.json). Before, each
  // allocated per-node arrays for up to 7·10^9 nodes (11 GB and a hang for `0 1000000000`). The
  // bound checked here is peak memory (process.resourceUsage().maxRSS of the child), not time.
  const sdir = path.join(__dirname, '../fixtures/sparse');
  const sexp = JSON.parse(fs.readFileSync(path.join(sdir, 'expected.json'), 'utf8'));
  const MAX_RSS_KIB = 200 * 1024;

  /** Runs the CLI on a copy of the fixture alone in a folder; returns exit code, output and peak RSS (KiB). */
  function cli(name: string, ...argv: string[]) {
    const dir = fs.mkdtempSync(path.join(tmp, 'alone-'));
    fs.copyFileSync(path.join(sdir, name), path.join(dir, name));
    const preload = path.join(tmp, 'rss.cjs');
    if (!fs.existsSync(preload)) {
      fs.writeFileSync(preload, "process.on('exit', () => process.stderr.write(`\\nmaxRSS ${process.resourceUsage().maxRSS}\\n`));\n");
    }
    const r = spawnSync(process.execPath, ['-r', preload, CLI, ...argv.map((a) => (a === '@' ? path.join(dir, name) : a))],
      { encoding: 'utf8', timeout: 60_000 });
    const rss = Number(/maxRSS (\d+)/.exec(r.stderr)?.[1]);
    return { status: r.status, stdout: r.stdout, stderr: r.stderr, rss };
  }

  for (const name of ['billion.txt', 'int32max.txt', 'beyond_int32.txt', 'billion_edge_index.npy', 'billion.json',
    'billion.pt', 'billion.mtx', 'declared_3m.mtx', 'members.edges']) {
    it(`check ${name}: the library's figures, peak RSS under 200 MiB`, () => {
      const e = sexp[name];
      const r = cli(name, 'check', '@', '--json');
      expect(r.status, r.stderr).toBe(0);
      expect(JSON.parse(r.stdout).files[0].graph).toMatchObject({
        nodes: e.nodes, edges: e.edges, components: e.components, isolatedNodes: e.isolatedNodes, selfLoops: e.selfLoops,
      });
      expect(r.rss).toBeGreaterThan(0);
      expect(r.rss).toBeLessThan(MAX_RSS_KIB);
    }, 60_000);
  }

  it('the analyses on them answer with a message, within the same memory', () => {
    for (const name of ['billion.txt', 'billion.mtx']) {
      for (const argv of [['field', '@', '--node', '0', '--layers', '3'], ['wl', '@'], ['bottlenecks', '@'], ['spectrum', '@', '--k', '2']]) {
        const r = cli(name, ...argv);
        expect(r.status, `${argv[0]} ${name}: ${r.stderr}`).toBe(2);
        expect(r.stderr).toMatch(/sparse|touch only/);
        expect(r.rss).toBeLessThan(MAX_RSS_KIB);
      }
    }
  }, 120_000);
});

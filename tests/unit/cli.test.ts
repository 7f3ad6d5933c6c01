/**
 * The `hopscope check` contract (issue text): JSON shape, exit codes, --fail-on, flags, colour only
 * on a TTY. Figures are compared with NetworkX-computed values from tests/fixtures/graphs/expected.json.
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as path from 'node:path';
import * as os from 'node:os';
import { spawn, spawnSync } from 'node:child_process';
import { main } from '../../server/src/cli';
import { ALL_CODES, CODES } from '../../common/problem-codes';
import { checkPaths } from '../../server/src/node/load';

const root = path.join(__dirname, '../..');
const fixtures = path.join(root, 'tests/fixtures/graphs');
const expected = JSON.parse(fs.readFileSync(path.join(fixtures, 'expected.json'), 'utf8'));

function run(...argv: string[]) {
  let out = '', err = '';
  const code = main(argv, { out: (s) => (out += s), err: (s) => (err += s), color: false });
  return { code, out, err };
}

describe('hopscope check', () => {
  it('--json follows the contract', () => {
    const r = run('check', path.join(fixtures, 'karate.npy'), '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.version).toBe(1);
    expect(j.files).toHaveLength(1);
    const f = j.files[0];
    expect(f.format).toBe('npy');
    // karate: 156 entries, ids 0..33, sum of both rows = 2 * sum of degrees * ... computed from the data
    expect(f.tensors[0]).toMatchObject({ name: 'karate', dtype: 'int64', shape: [2, 156], role: 'edge-index', min: 0, max: 33, nonFinite: 0 });
    const want = expected.graphs.karate.figures; // NetworkX / NumPy / SciPy
    expect(f.graph).toEqual({
      nodes: want.nodes, edges: want.edges, directed: want.directed, selfLoops: want.selfLoops,
      duplicateEdges: want.duplicateEdges, asymmetricPairs: want.asymmetricPairs,
      isolatedNodes: want.isolatedNodes, components: want.components, indexBase: 0,
    });
    expect(j.summary).toEqual({ files: 1, errors: 0, warnings: 0, infos: 0 });
  });

  it('exit 1 on errors, --fail-on moves the threshold', () => {
    const bundle = path.join(fixtures, 'broken_bundle');
    expect(run('check', bundle).code).toBe(1);
    expect(run('check', bundle, '--fail-on', 'never').code).toBe(0);
    const rand = path.join(fixtures, 'random_1.npy'); // warnings (duplicates) and infos only
    expect(run('check', rand, '--directed').code).toBe(0);
    expect(run('check', rand, '--directed', '--fail-on', 'warning').code).toBe(1);
  });

  it('exit 2 on usage errors, missing files and unreadable files', () => {
    expect(run('check').code).toBe(2);
    expect(run('check', 'x.npy', '--index-base', '7').code).toBe(2);
    expect(run('check', 'x.npy', '--bogus').code).toBe(2);
    expect(run('check', path.join(fixtures, 'nope.npy')).code).toBe(2);
    expect(run('frobnicate').code).toBe(2);
    const demo = run('check', path.join(root, 'demo/archive/snapshot_2024.npz'), '--json');
    expect(demo.code).toBe(2);
    expect(JSON.parse(demo.out).files[0].problems[0].code).toBe('unreadable');
  });

  it('--undirected, --num-nodes and --index-base are applied', () => {
    const rand = path.join(fixtures, 'random_1.npy');
    const j = JSON.parse(run('check', rand, '--undirected', '--num-nodes', '60', '--json').out);
    const codes = j.files[0].problems.map((p: { code: string; severity: string }) => `${p.code}:${p.severity}`);
    expect(codes).toContain('asymmetric-adjacency:error');
    expect(j.files[0].graph.nodes).toBe(60);
    expect(j.files[0].graph.isolatedNodes).toBe(expected.graphs.random_1.figures.isolatedNodes + 10);
    const one = JSON.parse(run('check', path.join(root, 'demo/weekend/riders.edges'), '--index-base', '1', '--json').out);
    expect(one.files[0].graph.indexBase).toBe(1);
    expect(one.files[0].problems.map((p: { code: string }) => p.code)).not.toContain('one-based-index');
  });

  it('text output is readable and colourless unless asked', () => {
    const r = run('check', path.join(fixtures, 'broken_bundle'));
    expect(r.out).toMatch(/index-out-of-range/);
    expect(r.out).toMatch(/\d+ files?, \d+ errors?, \d+ warnings?, \d+ info/);
    expect(r.out).not.toMatch(/\x1b\[/);
    let colored = '';
    main(['check', path.join(fixtures, 'broken_bundle')], { out: (s) => (colored += s), err: () => {}, color: true });
    expect(colored).toMatch(/\x1b\[31m/);
  });

  it('the built CLI runs as a fresh process (dist/cli.js, bin entry of package.json)', () => {
    const pkg = JSON.parse(fs.readFileSync(path.join(root, 'package.json'), 'utf8'));
    expect(pkg.bin.hopscope).toBe('dist/cli.js');
    const cli = path.join(root, pkg.bin.hopscope);
    if (!fs.existsSync(cli)) throw new Error('dist/cli.js missing: run npm run build (npm test does)');
    const r = spawnSync(process.execPath, [cli, 'check', path.join(fixtures, 'karate.npy'), '--json'], { encoding: 'utf8' });
    expect(r.status).toBe(0);
    expect(JSON.parse(r.stdout).files[0].graph.edges).toBe(156);
    expect(fs.readFileSync(cli, 'utf8').startsWith('#!/usr/bin/env node')).toBe(true);
  });
});

// tests/fixtures/graphs/karate_bundle: edge_index.npy and x.npy written by NumPy 1.24
// (make_graph_fixtures.py); x has one row per node of the karate club (34, NetworkX).
describe('a sibling that disagrees with the command line', () => {
  const bundle = path.join(fixtures, 'karate_bundle');
  const edgeIndex = path.join(bundle, 'edge_index.npy');
  const rows = expected.graphs.karate.figures.nodes;

  it('--num-nodes 40 with a 34-row x.npy beside the asked file: an info on the asked file, exit 1', () => {
    const r = run('check', edgeIndex, '--num-nodes', '40', '--json');
    expect(r.code).toBe(1);
    const j = JSON.parse(r.out);
    expect(j.files).toHaveLength(1);
    const f = j.files[0];
    expect(f.graph.nodes).toBe(rows);
    const info = f.problems.find((p: { code: string }) => p.code === 'feature-rows-mismatch');
    expect(info.severity).toBe('info');
    expect(info.message).toContain('x.npy');
    expect(info.message).toContain(`checked with ${rows} nodes, the rows of x in x.npy, not the 40 given on the command line`);
    // The sibling's own error is listed apart and counts toward --fail-on.
    expect(j.related).toHaveLength(1);
    expect(path.basename(j.related[0].path)).toBe('x.npy');
    expect(j.related[0].problem).toMatchObject({ code: 'feature-rows-mismatch', severity: 'error' });
    expect(j.summary.related).toEqual({ errors: 1, warnings: 0 });
    expect(run('check', edgeIndex, '--num-nodes', '40', '--fail-on', 'never').code).toBe(0);
    const text = run('check', edgeIndex, '--num-nodes', '40');
    expect(text.out).toMatch(/x\.npy {2}\(read beside .*edge_index\.npy, not asked for\)/);
    expect(text.out).toMatch(/1 error in files read beside them/);
  });

  it('without the flag, or with the flag that agrees, nothing is relayed', () => {
    for (const extra of [[], ['--num-nodes', String(rows)]]) {
      const r = run('check', edgeIndex, ...extra, '--json');
      expect(r.code).toBe(0);
      const j = JSON.parse(r.out);
      expect(j.related).toBeUndefined();
      expect(j.files[0].problems).toEqual([]);
    }
    // The folder asked as a whole: the error is on x.npy itself, not relayed.
    const all = JSON.parse(run('check', bundle, '--num-nodes', '40', '--json').out);
    expect(all.related).toBeUndefined();
    expect(all.files.find((f: { path: string }) => path.basename(f.path) === 'x.npy').problems[0].code).toBe('feature-rows-mismatch');
  });
});

describe('paths that are not regular files', () => {
  // A named pipe blocks whoever opens it for reading until a writer comes. The checks run in a
  // child process with a time limit (or, in this process, with a writer that comes after 3 s), so
  // a regression fails instead of hanging the run.
  const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-fifo-'));
  const fifo = path.join(tmp, 'f.npy');
  const made = spawnSync('mkfifo', [fifo]).status === 0;
  const cli = path.join(root, 'dist/cli.js');

  it.runIf(made)('hopscope check on a named pipe is unreadable (exit 2) and does not hang', () => {
    if (!fs.existsSync(cli)) throw new Error('dist/cli.js missing: run npm run build (npm test does)');
    const r = spawnSync(process.execPath, [cli, 'check', fifo, '--json'], { encoding: 'utf8', timeout: 20_000 });
    expect(r.signal).toBeNull(); // not killed by the time limit
    expect(r.status).toBe(2);
    const p = JSON.parse(r.stdout).files[0].problems[0];
    expect(p).toMatchObject({ code: 'unreadable', severity: 'error' });
    expect(p.message).toMatch(/named pipe \(FIFO\), not a regular file/);
    // A pipe named like a sibling (x.npy) or a manifest beside an asked file is not opened either.
    fs.writeFileSync(path.join(tmp, 'edge_index.npy'), fs.readFileSync(path.join(fixtures, 'karate_bundle', 'edge_index.npy')));
    spawnSync('mkfifo', [path.join(tmp, 'x.npy')]);
    const s = spawnSync(process.execPath, [cli, 'check', path.join(tmp, 'edge_index.npy'), '--json'], { encoding: 'utf8', timeout: 20_000 });
    expect(s.signal).toBeNull();
    expect(s.status).toBe(0);
    expect(JSON.parse(s.stdout).files[0].graph.nodes).toBe(expected.graphs.karate.figures.nodes);
  });

  it.runIf(made)('the node layer (language server checks and hovers) refuses it too', async () => {
    const { GraphStore } = await import('../../server/src/node/graph-store');
    // Guard: should the read block, this writer opens the pipe after 3 s and lets it end.
    const guard = spawn('timeout', ['8', 'sh', '-c', 'sleep 3; : > "$1"', 'sh', fifo], { stdio: 'ignore' });
    try {
      const t0 = Date.now();
      const out = new GraphStore().check({ paths: [fifo] });
      expect(Date.now() - t0).toBeLessThan(2_500);
      expect(out.files[0]!.problems[0]).toMatchObject({ code: 'unreadable' });
      expect(out.files[0]!.problems[0]!.message).toMatch(/named pipe/);
    } finally {
      if (guard.pid) process.kill(guard.pid);
    }
  });
});

describe('JSON without graph tensors', () => {
  it('a JSON file named on the command line gets an info; a folder scan of package.json/tsconfig.json gets none', () => {
    const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-json-'));
    fs.copyFileSync(path.join(root, 'tsconfig.json'), path.join(tmp, 'tsconfig.json'));
    fs.writeFileSync(path.join(tmp, 'package.json'), JSON.stringify({ name: 'x', version: '1.0.0', files: ['dist'] }));
    const named = JSON.parse(run('check', path.join(tmp, 'tsconfig.json'), '--json').out);
    expect(named.files[0].problems.map((p: { code: string; severity: string }) => `${p.code}:${p.severity}`)).toEqual(['no-graph-tensors:info']);
    expect(named.files[0].problems[0].message).toMatch(/^JSON without graph tensors/);
    const folder = JSON.parse(run('check', tmp, '--json').out);
    expect(folder.files.flatMap((f: { problems: unknown[] }) => f.problems)).toEqual([]);
  });
});

describe('demo workspace and README stay in step with the codes', () => {
  it('hopscope check demo/ shows every problem code', () => {
    const r = checkPaths([path.join(root, 'demo')]);
    const seen = new Set([...r.files.flatMap((f) => f.problems.map((p) => p.code)), ...r.manifestProblems.map((m) => m.problem.code)]);
    expect([...seen].sort()).toEqual([...ALL_CODES].sort());
  });

  it('the README problem table lists every code with its default severity', () => {
    const readme = fs.readFileSync(path.join(root, 'README.md'), 'utf8');
    for (const code of ALL_CODES) {
      const row = readme.split('\n').find((l) => l.includes(`id="problem-${code}"`));
      expect(row, code).toBeDefined();
      expect(row!.split('|')[2]!.trim()).toBe(CODES[code].severity);
    }
  });

  it('the manifest schema lists every problem code', () => {
    const schema = JSON.parse(fs.readFileSync(path.join(root, 'schemas/hopscope.schema.json'), 'utf8'));
    expect([...schema.definitions.severity.propertyNames.enum].sort()).toEqual([...ALL_CODES].sort());
  });

  it('core code imports no editor or file-system API', () => {
    const walk = (d: string): string[] => fs.readdirSync(d, { withFileTypes: true })
      .flatMap((e) => (e.isDirectory() ? walk(path.join(d, e.name)) : [path.join(d, e.name)]));
    for (const f of walk(path.join(root, 'server/src/core'))) {
      const src = fs.readFileSync(f, 'utf8');
      expect(src, f).not.toMatch(/from ['"](vscode|vscode-languageserver[^'"]*|node:fs|fs)['"]/);
    }
  });
});

describe('text files that are not edge lists (issue 8, report item 2)', () => {
  // README.txt, requirements.txt and metrics.csv (numpy.savetxt) from tests/fixtures/textfiles;
  // graph.npy is karate.npy as NumPy wrote it (tests/fixtures/graphs, 156 entries).
  const textfiles = path.join(root, 'tests/fixtures/textfiles');
  const NOT_EDGE_LISTS = ['README.txt', 'metrics.csv', 'requirements.txt'];
  const folder = (): string => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-texts-'));
    fs.copyFileSync(path.join(fixtures, 'karate.npy'), path.join(dir, 'graph.npy'));
    for (const f of NOT_EDGE_LISTS) fs.copyFileSync(path.join(textfiles, f), path.join(dir, f));
    return dir;
  };

  it('a folder check skips them, lists them as skipped with the rule, and exits 0', () => {
    const dir = folder();
    try {
      const t = run('check', dir);
      expect(t.code).toBe(0);
      expect(t.out).toContain('graph.npy');
      for (const f of NOT_EDGE_LISTS) expect(t.out).toContain(`${f}  (skipped: not an edge list)`);
      expect(t.out).toMatch(/more than half of the first data lines/);
      expect(t.out).toMatch(/1 file, 0 errors, 0 warnings, 0 info, 3 skipped\n$/);
      const j = JSON.parse(run('check', dir, '--json').out);
      expect(j.files.map((f: { path: string }) => path.basename(f.path))).toEqual(['graph.npy']);
      expect(j.files[0].graph.edges).toBe(expected.graphs.karate.figures.edges);
      expect(j.skipped.map((s: { path: string }) => path.basename(s.path))).toEqual(NOT_EDGE_LISTS);
      expect(j.skipped[0].reason).toMatch(/^0 of its first \d+ data lines start with two integer node ids/);
      expect(j.summary.errors).toBe(0);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it('a file named on the command line gets one unreadable problem; a manifest entry is read as an edge list', () => {
    const dir = folder();
    try {
      const r = run('check', path.join(dir, 'metrics.csv'), '--json');
      expect(r.code).toBe(2);
      const j = JSON.parse(r.out);
      expect(j.skipped).toEqual([]);
      expect(j.files[0].problems.map((p: { code: string }) => p.code)).toEqual(['unreadable']);
      expect(j.files[0].problems[0].message).toMatch(/^Cannot read metrics\.csv: not an edge list: 0 of its first 19 data lines/);
      // Named in hopscope.json, it is read as the edge list the manifest says it is.
      fs.writeFileSync(path.join(dir, 'hopscope.json'), JSON.stringify({ graphs: [{ name: 'metrics', edges: 'metrics.csv' }] }));
      const m = JSON.parse(run('check', dir, '--json').out);
      const metrics = m.files.find((f: { path: string }) => f.path.endsWith('metrics.csv'));
      expect(metrics.format).toBe('edgelist');
      expect(metrics.problems.map((p: { code: string }) => p.code)).toContain('non-integer-index');
      expect(m.skipped.map((s: { path: string }) => path.basename(s.path))).toEqual(['README.txt', 'requirements.txt']);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it("CSV with one short line reads its edges and reports the line (printf '0,1\\n1,2\\n0\\n2,0\\n' > a.csv)", () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-csv-'));
    try {
      const a = path.join(dir, 'a.csv');
      fs.writeFileSync(a, '0,1\n1,2\n0\n2,0\n');
      const r = run('check', a, '--json');
      expect(r.code).toBe(1);
      const f = JSON.parse(r.out).files[0];
      expect(f.graph.edges).toBe(3);
      const codes = f.problems.map((p: { code: string; line?: number }) => `${p.code}@${p.line ?? ''}`);
      expect(codes).toContain('edge-shape@3');
      expect(codes.filter((c: string) => c.startsWith('edge-shape'))).toHaveLength(1);
      expect(codes).not.toContain('empty-graph@');
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe('files naming huge ids (issue 8: a 26-byte file took 11 GB)', () => {
  // tests/fixtures/make_sparse_fixtures.py: numpy.savetxt / scipy.io.mmwrite files, figures from
  // NetworkX and SciPy (expected.json).
  const sdir = path.join(root, 'tests/fixtures/sparse');
  const sexp = JSON.parse(fs.readFileSync(path.join(sdir, 'expected.json'), 'utf8'));

  it('check reads the 26-byte edge list as NetworkX does: 2 nodes, 1 component, a sparse-ids info, exit 0', () => {
    const e = sexp['billion.txt'];
    expect(e.bytes).toBe(26);
    const r = run('check', path.join(sdir, 'billion.txt'), '--json');
    expect(r.code).toBe(0);
    const f = JSON.parse(r.out).files[0];
    expect(f.graph).toMatchObject({ nodes: e.nodes, edges: e.edges, components: e.components, isolatedNodes: e.isolatedNodes });
    expect(f.problems.map((p: { code: string; severity: string }) => `${p.code}:${p.severity}`)).toEqual(['sparse-ids:info']);
    const text = run('check', path.join(sdir, 'billion.txt')).out;
    expect(text).toMatch(/sparse-ids .*2 distinct ids up to 1000000000; checked on the distinct ids/);
  });

  it('the analyses refuse such graphs with a message (exit 2) instead of allocating per node', () => {
    for (const argv of [['field', '--node', '0', '--layers', '2'], ['wl'], ['bottlenecks'], ['spectrum', '--k', '1']]) {
      const sparse = run(argv[0]!, ...argv.slice(1), path.join(sdir, 'billion.txt'));
      expect(sparse.code, argv.join(' ')).toBe(2);
      expect(sparse.err).toMatch(/node ids are sparse \(2 distinct ids up to 1000000000\).*Renumber the ids to 0\.\.1/);
      const declared = run(argv[0]!, ...argv.slice(1), path.join(sdir, 'billion.mtx'));
      expect(declared.code, argv.join(' ')).toBe(2);
      expect(declared.err).toMatch(/has 1000000000 nodes .* but its edges touch only 2/);
    }
    const both = run('compare', path.join(sdir, 'billion.txt'), path.join(fixtures, 'karate.npy'));
    expect(both.code).toBe(2);
    expect(both.err).toMatch(/node ids are sparse/);
  });
});

describe('hovers and the viewer on graphs checked on their distinct ids (node layer)', () => {
  const sdir = path.join(root, 'tests/fixtures/sparse');
  const sexp = JSON.parse(fs.readFileSync(path.join(sdir, 'expected.json'), 'utf8'));

  it('node info maps ids as written; the degree histogram counts every node', async () => {
    const { GraphStore } = await import('../../server/src/node/graph-store');
    const s = new GraphStore();
    // billion.txt (numpy.savetxt): 0 → 10^9 and back.
    const txt = path.join(sdir, 'billion.txt');
    s.check({ paths: [txt] });
    expect(s.nodeInfo({ path: txt, node: 1_000_000_000 })).toMatchObject({ nodes: 2, outDegree: 1, inDegree: 1, outNeighbours: [0], inNeighbours: [0] });
    expect(s.nodeInfo({ path: txt, node: 5 })).toBeNull(); // not one of the 2 distinct ids
    // billion.mtx (scipy.io.mmwrite): 10^9 declared nodes, entries (1, 2) and (2, 1), 1-based.
    const mtx = path.join(sdir, 'billion.mtx');
    s.check({ paths: [mtx] });
    expect(s.nodeInfo({ path: mtx, node: 2 })).toMatchObject({ nodes: 1_000_000_000, outDegree: 1, inDegree: 1, outNeighbours: [1] });
    expect(s.nodeInfo({ path: mtx, node: 999_999_999 })).toMatchObject({ outDegree: 0, inDegree: 0, outNeighbours: [] });
    expect(s.nodeInfo({ path: mtx, node: 1_000_000_001 })).toBeNull();
    const stats = s.tensorStats({ path: mtx, tensor: 'adjacency' });
    const e = sexp['billion.mtx'];
    expect(stats!.degreeHistogram).toEqual([{ degree: 0, count: e.isolatedNodes }, { degree: 2, count: e.nodes - e.isolatedNodes }]);
  });
});

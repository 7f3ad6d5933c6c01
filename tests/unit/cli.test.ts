/**
 * The `hopscope check` contract (issue text): JSON shape, exit codes, --fail-on, flags, colour only
 * on a TTY. Figures are compared with NetworkX-computed values from tests/fixtures/graphs/expected.json.
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { spawnSync } from 'node:child_process';
import { main } from '../../server/src/cli';
import { ALL_CODES, CODES } from '../../server/src/core/checks/codes';
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

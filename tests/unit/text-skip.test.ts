/**
 * No false alarms from text files that are not graphs (issue: "a file Hopscope does not understand
 * is skipped or explained, never reported as a broken graph"). Two cases beyond the sampled-lines
 * rule: a .txt/.csv/.tsv holding binary data (here: bytes NumPy wrote, the karate .npy fixture
 * renamed), and a .txt with no data lines (empty, comments only, or one line of words). Both are
 * skipped by folder checks and explained when named; .el/.edges files and delimited header rows
 * keep reading as (empty) edge lists, so the demo's empty archive still warns.
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { main } from '../../server/src/cli';

const root = path.join(__dirname, '../..');
const karateNpy = path.join(root, 'tests/fixtures/graphs/karate.npy'); // written by numpy.save

function run(...argv: string[]) {
  let out = '';
  const code = main(argv, { out: (s) => (out += s), err: (s) => (out += s), color: false });
  return { code, out };
}

function folder(files: Record<string, string | Uint8Array>): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-skip-'));
  for (const [name, body] of Object.entries(files)) fs.writeFileSync(path.join(dir, name), body);
  return dir;
}

describe('text files that are not graphs', () => {
  const npyBytes = fs.readFileSync(karateNpy);
  const files = {
    'graph.npy': npyBytes,
    'weights_dump.txt': npyBytes,            // binary data under a text name
    'table.csv': Uint8Array.from([0, 0, 0, 7, 1, 2, 3]),
    'empty.txt': '',
    'notes.txt': 'Larkhaven dock notes for the spring season\n',
    'comments.tsv': '# nothing yet\n# the export runs on Mondays\n',
  };

  it('a folder check skips them with the reason and exits 0', () => {
    const dir = folder(files);
    const r = run('check', dir, '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.files.map((f: { path: string }) => path.basename(f.path))).toEqual(['graph.npy']);
    const skipped = Object.fromEntries(j.skipped.map((s: { path: string; reason: string }) => [path.basename(s.path), s.reason]));
    expect(Object.keys(skipped).sort()).toEqual(['comments.tsv', 'empty.txt', 'notes.txt', 'table.csv', 'weights_dump.txt']);
    expect(skipped['weights_dump.txt']).toMatch(/binary data, not text \(not a text file \(NUL byte at offset \d+\)\)/);
    expect(skipped['notes.txt']).toMatch(/no data lines, only one line of words/);
    expect(skipped['empty.txt']).toMatch(/no data lines/);
    expect(j.summary).toMatchObject({ errors: 0, warnings: 0 });
  });

  it('a file named on the command line gets one unreadable problem that says why', () => {
    const dir = folder(files);
    for (const name of ['weights_dump.txt', 'notes.txt']) {
      const r = run('check', path.join(dir, name), '--json');
      expect(r.code).toBe(2);
      const f = JSON.parse(r.out).files[0];
      expect(f.problems).toHaveLength(1);
      expect(f.problems[0]).toMatchObject({ code: 'unreadable', severity: 'error' });
      expect(f.problems[0].message).toMatch(/not an edge list/);
    }
  });

  it('.el/.edges files and a delimited header row stay empty edge lists (empty-graph warning)', () => {
    const dir = folder({ 'closed.el': '', 'retired.edges': '# docks retired in 2019\n', 'lanes.csv': 'source,target\n', 'notes.txt': 'spring notes\n' });
    const j = JSON.parse(run('check', dir, '--json').out);
    expect(j.files.map((f: { path: string }) => path.basename(f.path)).sort()).toEqual(['closed.el', 'lanes.csv', 'retired.edges']);
    for (const f of j.files) expect(f.problems.map((p: { code: string }) => p.code)).toEqual(['empty-graph']);
    expect(j.skipped.map((s: { path: string }) => path.basename(s.path))).toEqual(['notes.txt']);
  });

  it('a manifest entry is read as an edge list whatever it holds', () => {
    const dir = folder({ 'notes.txt': 'spring notes\n', 'hopscope.json': JSON.stringify({ graphs: [{ name: 'spring', edges: 'notes.txt' }] }) });
    const j = JSON.parse(run('check', dir, '--json').out);
    expect(j.skipped).toEqual([]);
    const notes = j.files.find((f: { path: string }) => f.path.endsWith('notes.txt'));
    expect(notes.format).toBe('edgelist');
    expect(notes.problems.map((p: { code: string }) => p.code)).toContain('empty-graph');
  });
});

/**
 * The graph store (server/src/node/graph-store.ts): one read per unchanged file for every kind of
 * request, invalidation by size + mtime, the size limit and the exclude globs on every path, the
 * byte bound (raw text kept by locators included) and forget().
 *
 * Values from outside Hopscope: karate.edges is Zachary's karate club as written by NetworkX 2.8.8
 * (`nx.write_edgelist(nx.karate_club_graph(), …, data=False)`, tests/fixtures/make_text_fixtures.py):
 * 78 edges, each once (u < v), node 0 with 16 neighbours and 9 nodes two hops away
 * (`nx.single_source_shortest_path_length(G, 0, cutoff=2)`: 1 + 16 + 9 = 26 nodes, the field sizes
 * docs/references.md §2.1 lists). Nodes 0 and 33 are not adjacent in that graph.
 */
import { afterAll, beforeEach, describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { GraphStore, loadedBytes } from '../../server/src/node/graph-store';
import { loadFile } from '../../server/src/node/load';
import type { FieldViewPayload } from '../../common/protocol';

const KARATE = path.join(__dirname, '../fixtures/text/karate.edges');
const textExpected = JSON.parse(fs.readFileSync(path.join(__dirname, '../fixtures/text/expected.json'), 'utf8'));
const tmpRoot = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-store-'));
afterAll(() => fs.rmSync(tmpRoot, { recursive: true, force: true }));

let dir: string;
let n = 0;
beforeEach(() => {
  dir = path.join(tmpRoot, `case${n++}`);
  fs.mkdirSync(dir);
});

/** A store whose reads are counted per absolute path. */
function countingStore(opts: { limitBytes?: number } = {}): { store: GraphStore; reads: (p: string) => number } {
  const counts = new Map<string, number>();
  const store = new GraphStore({ ...opts, onRead: (p) => counts.set(p, (counts.get(p) ?? 0) + 1) });
  return { store, reads: (p) => counts.get(path.resolve(p)) ?? 0 };
}

function karateCopy(name = 'rides.edges'): string {
  const f = path.join(dir, name);
  fs.copyFileSync(KARATE, f);
  return f;
}

/** A ring of `nodes` nodes as a whitespace edge list (our own generated data, for sizes only). */
function ring(file: string, nodes: number): void {
  const lines: string[] = [];
  for (let i = 0; i < nodes; i++) lines.push(`${i} ${(i + 1) % nodes}`);
  fs.writeFileSync(file, lines.join('\n') + '\n');
}

const field = (r: unknown): FieldViewPayload => {
  if (r && typeof r === 'object' && 'error' in r) throw new Error(String((r as { error: string }).error));
  return r as FieldViewPayload;
};

describe('one read per unchanged file', () => {
  it('check, node hover, tensor page, tensor stats, the panel and a corrected-copy plan read the file once', () => {
    expect(textExpected['karate.edges'].count).toBe(78);
    const f = karateCopy();
    const { store, reads } = countingStore();
    const out = store.check({ paths: [f] });
    expect(out.files.map((x) => x.path)).toEqual([f]);
    expect(out.structures.map((s) => s.file)).toEqual([f]);
    // NetworkX: node 0 has 16 neighbours, each edge stored once with u < v.
    expect(store.nodeInfo({ path: f, node: 0 })).toMatchObject({ nodes: 34, outDegree: 16, inDegree: 0 });
    expect(store.tensorPage({ path: f, tensor: 'edge_index', rowStart: 0, rowCount: 2 })?.totalCols).toBe(78);
    expect(store.tensorStats({ path: f, tensor: 'edge_index' })?.degreeHistogram?.length).toBeGreaterThan(0);
    const v = field(store.fieldView({ path: f, node: 0, layers: 2, symmetrise: true }));
    expect(v.perHop).toEqual([1, 16, 9]);
    expect(store.wlClasses({ path: f, nodes: [0, 33] })).toMatchObject({ graphNodes: 34 });
    expect(store.fixedCopyPlan({ path: f }).changes.length).toBeGreaterThan(0);
    expect(reads(f)).toBe(1);
  });

  it('a change on disk (new size and mtime) is read again, by hovers and by the panel', () => {
    const f = karateCopy();
    const { store, reads } = countingStore();
    store.check({ paths: [f] });
    expect(field(store.fieldView({ path: f, node: 0, layers: 1, symmetrise: true })).perHop).toEqual([1, 16]);
    expect(reads(f)).toBe(1);
    // Add the edge 0 – 33 (not in Zachary's graph) and move the mtime on.
    fs.appendFileSync(f, '0 33\n');
    const later = new Date(Date.now() + 5_000);
    fs.utimesSync(f, later, later);
    expect(field(store.fieldView({ path: f, node: 0, layers: 1, symmetrise: true })).perHop).toEqual([1, 17]);
    expect(reads(f)).toBe(2);
    store.check({ paths: [f] });
    expect(store.nodeInfo({ path: f, node: 0 })).toMatchObject({ outDegree: 17 });
    expect(reads(f)).toBe(2);
    expect(store.tensorPage({ path: f, tensor: 'edge_index', rowStart: 0, rowCount: 1 })?.totalCols).toBe(79);
    expect(reads(f)).toBe(2);
  });

  it('a refusal is kept like a read: an unreadable file is not read again while unchanged', () => {
    const f = path.join(dir, 'edge_index.npy');
    fs.writeFileSync(f, Buffer.from('\x93NUMPY\x01\x00 not a header'));
    const { store, reads } = countingStore();
    expect(store.check({ paths: [f] }).files[0]!.problems[0]).toMatchObject({ code: 'unreadable' });
    expect(store.check({ paths: [f] }).files[0]!.problems[0]).toMatchObject({ code: 'unreadable' });
    expect(reads(f)).toBe(1);
  });
});

describe('settings on every path', () => {
  it('maxFileSizeMB: the panel, the viewer and corrected copies give the size message and read nothing', () => {
    const f = path.join(dir, 'lanes.edges');
    ring(f, 120_000); // about 1.4 MiB
    expect(fs.statSync(f).size).toBeGreaterThan(1024 ** 2);
    const { store, reads } = countingStore();
    store.configure({ options: {}, maxFileBytes: 1024 ** 2 });
    const r = store.fieldView({ path: f, node: 0, layers: 1 });
    expect(r).toHaveProperty('error');
    expect((r as { error: string }).error).toMatch(/the file is 1\.\d MiB, above the 1 MiB limit for checking/);
    expect(store.wlClasses({ path: f, nodes: [0] })).toHaveProperty('error');
    expect(store.check({ paths: [f] }).files[0]!.problems[0]!.message).toMatch(/above the 1 MiB limit/);
    expect(store.tensorPage({ path: f, tensor: 'edge_index', rowStart: 0, rowCount: 5 })).toBeNull();
    expect(store.fixedCopyPlan({ path: f }).changes[0]).toMatch(/above the 1 MiB limit/);
    expect(reads(f)).toBe(0);
    // Raising the limit lets it through.
    store.configure({ options: {}, maxFileBytes: 4 * 1024 ** 2 });
    expect(field(store.fieldView({ path: f, node: 0, layers: 1 })).total).toBe(2);
    expect(reads(f)).toBe(1);
  });

  it('exclude globs: not walked, not read as a sibling, not analysed', () => {
    fs.mkdirSync(path.join(dir, 'drafts'));
    const kept = karateCopy('docks.edges');
    const draft = path.join(dir, 'drafts', 'docks.edges');
    fs.copyFileSync(KARATE, draft);
    const { store, reads } = countingStore();
    store.configure({ options: {}, roots: [dir], exclude: ['drafts/**'] });
    expect(store.walk({ paths: [dir] }).files).toEqual([kept]);
    expect(store.check({ paths: [draft] }).files).toEqual([]);
    const r = store.fieldView({ path: draft, node: 0, layers: 1 });
    expect((r as { error: string }).error).toMatch(/files\.exclude or hopscope\.exclude/);
    expect(reads(draft)).toBe(0);
    expect(field(store.fieldView({ path: kept, node: 0, layers: 1, symmetrise: true })).total).toBe(17);
  });
});

describe('memory', () => {
  it('a read text file counts the raw text its locators keep, beside its tensors', () => {
    const f = karateCopy();
    const loaded = loadFile(f);
    const tensorBytes = loaded.result!.tensors.reduce((s, t) => s + (t.kind === 'dense' ? t.data.byteLength : 0), 0);
    const size = fs.statSync(f).size;
    expect(loaded.result!.tensors[0]!.locator?.kept?.().bytes).toBeGreaterThanOrEqual(size);
    expect(loadedBytes(loaded, size)).toBeGreaterThanOrEqual(tensorBytes + size);
  });

  it('the byte bound drops the least recently used file (raw bytes included); a dropped file is read again', () => {
    // (Not a.edges: `a` names an adjacency matrix, so it would be read beside b as its sibling.)
    const a = path.join(dir, 'north.edges'), b = path.join(dir, 'south.edges');
    ring(a, 50_000);
    ring(b, 50_000);
    // Tensors and structure of one ring are about 1.4 MB; with its 0.6 MB of text about 2 MB.
    const probe = countingStore();
    probe.store.check({ paths: [a] });
    const one = probe.store.usage().bytes;
    const size = fs.statSync(a).size;
    expect(one).toBeGreaterThan(size + 50_000 * 2 * 4);
    // Room for one file and a half: the second check drops the first.
    const { store, reads } = countingStore({ limitBytes: Math.floor(one * 1.5) });
    store.check({ paths: [a] });
    store.check({ paths: [b] });
    expect(store.usage().bytes).toBeLessThanOrEqual(Math.floor(one * 1.5));
    expect(store.usage().files).toBe(1);
    expect(store.nodeInfo({ path: a, node: 7 })).toMatchObject({ outDegree: 1, outNeighbours: [8] });
    expect(reads(a)).toBe(2);
    expect(reads(b)).toBe(1);
  });

  it('forget(path) drops the read file, report, structure and panel graph of that path', () => {
    const f = karateCopy();
    const other = karateCopy('other.edges');
    const { store, reads } = countingStore();
    store.check({ paths: [f, other] });
    field(store.fieldView({ path: f, node: 0, layers: 2 }));
    const before = store.usage();
    expect(before).toMatchObject({ files: 2, reports: 2, structures: 2, analysisGraphs: 1 });
    store.forget({ path: f });
    const after = store.usage();
    expect(after).toMatchObject({ files: 1, reports: 1, structures: 1, analysisGraphs: 0, analysisBytes: 0 });
    expect(after.bytes).toBeLessThan(before.bytes);
    expect(store.report({ path: f })).toBeNull();
    store.forget({ path: other });
    expect(store.usage()).toMatchObject({ bytes: 0, files: 0, reports: 0, structures: 0 });
    // Asked again, it is read again.
    expect(store.nodeInfo({ path: f, node: 0 })).toMatchObject({ outDegree: 16 });
    expect(reads(f)).toBe(2);
  });
});

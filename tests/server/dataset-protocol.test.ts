/**
 * The editor's dataset and typed-graph requests over stdio (dist/server.js): the viewer's table of
 * graphs, the panel's field of one graph of a dataset, the ceiling request, and path hovers with
 * the dataset summary, the typed summary and the accuracy ceiling (waited for briefly, "computing"
 * meanwhile).
 *
 * Workspace: copies of fixtures written by NumPy from NetworkX graphs —
 *  - tests/fixtures/ceiling/csl.npz: 150 circular skip-link graphs of 41 nodes, 4-regular, ten
 *    classes of 15, all 1-WL-equivalent (Murphy et al. 2019): ceiling 10% (expected.json csl.uniform);
 *  - tests/fixtures/ceiling/karate.npz: Zachary's karate club with its two factions; per-layer
 *    ceilings from the fixture script's own refinement (expected.json karate.uniform);
 *  - tests/fixtures/typed/clean.npz: authors and papers (expected.json nodeTypes, relations).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import type { MessageConnection } from 'vscode-jsonrpc/node';
import { DidOpenTextDocumentNotification, HoverRequest, type Hover } from 'vscode-languageserver-protocol';
import { URI } from 'vscode-uri';
import { CeilingRequest, DatasetTableRequest, FieldViewRequest } from '../../common/protocol';
import { unpackColumn } from '../../common/columns';
import { ROOT as root, startServer, stopServer, type ServerSession } from './lsp-client';

const fixtures = path.join(root, 'tests/fixtures');
const ceilingExpected = JSON.parse(fs.readFileSync(path.join(fixtures, 'ceiling/expected.json'), 'utf8')) as {
  csl: { uniform: { ceiling: number } }; karate: { uniform: Array<{ layers: number; ceiling: number }> };
};
const typedExpected = JSON.parse(fs.readFileSync(path.join(fixtures, 'typed/expected.json'), 'utf8')) as Record<string, { nodeTypes: Record<string, number> }>;

let ws: string;
let session: ServerSession | undefined;
let conn: MessageConnection;
const uri = (rel: string) => URI.file(path.join(ws, rel)).toString();
const CODE = [
  'import numpy as np',
  'graphs = np.load("patterns/csl.npz")',
  'club = np.load("club/karate.npz")',
  'papers = np.load("papers/clean.npz")',
  '',
].join('\n');

async function hover(line: number, word: string): Promise<string> {
  const character = CODE.split('\n')[line]!.indexOf(word) + 2;
  const h: Hover | null = await conn.sendRequest(HoverRequest.type, { textDocument: { uri: uri('train.py') }, position: { line, character } });
  return (h?.contents as { value: string } | undefined)?.value ?? '';
}

async function until<T>(get: () => Promise<T>, ok: (x: T) => boolean, ms = 60_000): Promise<T> {
  const end = Date.now() + ms;
  for (;;) {
    const x = await get();
    if (ok(x) || Date.now() > end) return x;
    await new Promise((r) => setTimeout(r, 250));
  }
}

beforeAll(async () => {
  ws = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-dataset-lsp-'));
  for (const [dir, src] of [['patterns', 'ceiling/csl.npz'], ['club', 'ceiling/karate.npz'], ['papers', 'typed/clean.npz']] as const) {
    fs.mkdirSync(path.join(ws, dir));
    fs.copyFileSync(path.join(fixtures, src), path.join(ws, dir, path.basename(src)));
  }
  fs.writeFileSync(path.join(ws, 'train.py'), CODE);
  session = await startServer(ws, 'datasets');
  conn = session.conn;
  await conn.sendNotification(DidOpenTextDocumentNotification.type, { textDocument: { uri: uri('train.py'), languageId: 'python', version: 1, text: CODE } });
}, 90_000);

afterAll(() => stopServer(session, ws));

describe('datasets and typed graphs over stdio', () => {
  it('hopscope/datasetTable: one packed row per graph', async () => {
    const t = (await conn.sendRequest(DatasetTableRequest.type, { uri: uri('patterns/csl.npz') }))!;
    expect(t.graphs).toBe(150);
    expect(t.layout).toBe('batch');
    expect(new Set(unpackColumn(t.nodes))).toEqual(new Set([41]));
    expect(new Set(unpackColumn(t.edges))).toEqual(new Set([164]));
    expect(t.label?.kind === 'class' && t.label.classes.length).toBe(10);
    expect(await conn.sendRequest(DatasetTableRequest.type, { uri: uri('club/karate.npz') })).toBeNull();
  }, 60_000);

  it('hopscope/field with a graph: that graph alone, by its local ids', async () => {
    const v = await conn.sendRequest(FieldViewRequest.type, { uri: uri('patterns/csl.npz'), node: 40, layers: 1, graph: 149 });
    expect(v.graphNodes).toBe(41);
    expect(v.perHop).toEqual([1, 4]);
    expect(v.graph).toEqual({ index: 149, of: 150 });
    await expect(conn.sendRequest(FieldViewRequest.type, { uri: uri('patterns/csl.npz'), node: 0, layers: 1, graph: -1 })).rejects.toThrow(/graph must be a whole number/);
  }, 60_000);

  it('hopscope/ceiling: the karate club per layer count', async () => {
    const c = (await conn.sendRequest(CeilingRequest.type, { uri: uri('club/karate.npz'), layers: 2 }))!;
    expect(c.task).toBe('node');
    if (c.task !== 'node') return;
    expect(c.perLayer.map((l) => l.layers)).toEqual([0, 1, 2]);
    c.perLayer.forEach((l, i) => expect(l.ceiling).toBeCloseTo(ceilingExpected.karate.uniform[i]!.ceiling, 12));
    await expect(conn.sendRequest(CeilingRequest.type, { uri: uri('papers/clean.npz') })).rejects.toThrow(/clean\.npz/);
  }, 60_000);

  it('hover on a dataset path: the summary at once, the ceiling when it is known', async () => {
    const first = await until(() => hover(1, 'csl.npz'), (h) => h.includes('Dataset of'));
    expect(first).toContain('**Dataset of 150 graphs** · nodes per graph 41–41 (mean 41.0) · edge entries per graph 164–164 (mean 164.0)');
    expect(first).toMatch(/Graph labels: 10 classes \(0: 15, 1: 15,/);
    const later = await until(() => hover(1, 'csl.npz'), (h) => h.includes('**Accuracy ceiling'));
    const pct = `${(100 * ceilingExpected.csl.uniform.ceiling).toFixed(1)}%`;
    expect(later).toContain(`**Accuracy ceiling ${pct}**`);
  }, 90_000);

  it('hover on a graph with node labels: the ceiling by layers', async () => {
    const h = await until(() => hover(2, 'karate.npz'), (x) => x.includes('Accuracy ceiling by layers'));
    const u = ceilingExpected.karate.uniform;
    const pct = (x: number) => `${(100 * x).toFixed(x >= 0.9995 || x === 0 ? 0 : 1)}%`;
    expect(h).toContain(`(34 labelled nodes): L=0: ${pct(u[0]!.ceiling)} · L=1: ${pct(u[1]!.ceiling)} · L=2: ${pct(u[2]!.ceiling)}`);
  }, 60_000);

  it('hover on a typed graph path: its types and relations', async () => {
    const h = await until(() => hover(3, 'clean.npz'), (x) => x.includes('Typed graph'));
    const types = Object.entries(typedExpected['clean.npz']!.nodeTypes).map(([k, v]) => `${k} (${v})`).join(', ');
    expect(h).toContain(`**Typed graph**: ${types}`);
    expect(h).toMatch(/\| author \| writes \| paper \| 29 \|/);
    expect(h).not.toContain('Accuracy ceiling');
  }, 60_000);
});

/**
 * Protocol tests: the built language server (dist/server.js) spawned over stdio, spoken to in
 * LSP/JSON-RPC like an editor would. Uses a copy of the demo workspace so nothing in the repo
 * changes. Expected line numbers are those listed in demo/README.md.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { spawnSync } from 'node:child_process';
import type { MessageConnection } from 'vscode-jsonrpc/node';
import {
  CodeActionRequest, DidChangeWatchedFilesNotification, DidOpenTextDocumentNotification, FileChangeType, HoverRequest,
  PublishDiagnosticsNotification, type CodeAction, type Diagnostic, type Hover,
} from 'vscode-languageserver-protocol';
import { URI } from 'vscode-uri';
import { FileSummaryRequest, StatusNotification, TensorPageRequest, TensorStatsRequest } from '../../common/protocol';

import { ROOT as root, startServer, stopServer, type ServerSession } from './lsp-client';

let ws: string;
let session: ServerSession | undefined;
let conn: MessageConnection;
const diagnostics = new Map<string, Diagnostic[]>();
const waiters: Array<() => void> = [];
const statuses: Array<{ filesChecked: number; busy: boolean; errors: number }> = [];

function waitFor(pred: () => boolean, ms = 30_000): Promise<void> {
  return new Promise((resolve, reject) => {
    const t = setTimeout(() => reject(new Error('timed out waiting')), ms);
    const check = () => { if (pred()) { clearTimeout(t); resolve(); return true; } return false; };
    if (!check()) waiters.push(() => { check(); });
  });
}
const uri = (rel: string) => URI.file(path.join(ws, rel)).toString();
/** The Markdown of a hover (the server always answers with one MarkupContent). */
const hoverText = (h: Hover | null) => ({ contents: { value: (h?.contents as { value: string } | undefined)?.value ?? '' } });
const diags = (rel: string) => diagnostics.get(uri(rel)) ?? [];

beforeAll(async () => {
  ws = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-lsp-'));
  fs.cpSync(path.join(root, 'demo'), ws, { recursive: true });
  // Text beside the graphs that is not an edge list (tests/fixtures/textfiles: hand-written README,
  // numpy.savetxt metrics table): never a diagnostic.
  for (const f of ['README.txt', 'metrics.csv']) fs.copyFileSync(path.join(root, 'tests/fixtures/textfiles', f), path.join(ws, 'lanes', f));
  session = await startServer(ws, 'demo', (c) => {
    c.onNotification(PublishDiagnosticsNotification.type, (p) => {
      diagnostics.set(p.uri, p.diagnostics);
      waiters.forEach((w) => w());
    });
    c.onNotification(StatusNotification.type, (s) => { statuses.push(s); waiters.forEach((w) => w()); });
  }, { textDocument: { publishDiagnostics: { relatedInformation: true } } });
  conn = session.conn;
  await waitFor(() => statuses.some((s) => !s.busy && s.filesChecked >= 17), 60_000);
}, 90_000);

afterAll(() => stopServer(session, ws));

describe('language server over stdio', () => {
  it('checks the whole workspace at start-up, binary files included', () => {
    expect(diags('archive/snapshot_2024.npz').map((d) => d.code)).toEqual(['unreadable']);
    expect(diags('lanes/splits.npz').map((d) => d.code).sort()).toEqual(['mask-length-mismatch', 'mask-overlap']);
    // Binary files: a file-level diagnostic at the start.
    expect(diags('depots/x.npy')[0]!.range.start).toEqual({ line: 0, character: 0 });
  });

  it('a link-prediction split: the leaked test edge and the other split problems are diagnostics on the pair tensors\' file', () => {
    // demo/rides/rides.npz (scripts/make-demo.mjs): the test ride 10 – 11 left in edge_index, etc.
    const d = diags('rides/rides.npz');
    const leak = d.find((x) => x.code === 'leaked-positive-pairs')!;
    expect(leak.severity).toBe(1);
    expect(leak.message).toMatch(/10 – 11/);
    expect(leak.codeDescription!.href).toMatch(/#problem-leaked-positive-pairs$/);
    expect(d.map((x) => x.code).sort()).toEqual(['cold-start-pairs', 'isolated-nodes', 'leaked-positive-pairs',
      'negative-pairs-are-edges', 'pairs-in-two-splits', 'self-pairs']);
    expect(diags('rides/monthly/val_data.npz').map((x) => x.code)).toEqual(['pair-labels-mismatch']);
  });

  it('a typed graph: the cross-type id, the one-way relation and the per-type codes are diagnostics on its file', async () => {
    // demo/citywide/citywide.npz (scripts/make-demo-typed.mjs): rider 21 written as a dock id, no
    // relation back from district to dock, labelled depots that no relation touches.
    const d = diags('citywide/citywide.npz');
    expect(d.map((x) => x.code).sort()).toEqual(['index-out-of-range', 'isolated-nodes', 'one-way-relation', 'type-never-receives',
      'type-never-sends', 'type-never-sends']);
    const oor = d.find((x) => x.code === 'index-out-of-range')!;
    expect(oor.severity).toBe(1);
    expect(oor.message).toMatch(/rider__rides_from__dock: 1 entry of row 1 .* = 21/);
    expect(oor.message).toMatch(/valid rider id/);
    expect(d.find((x) => x.code === 'type-never-receives')!.severity).toBe(2); // depot carries labels
    expect(d.find((x) => x.code === 'one-way-relation')!.codeDescription!.href).toMatch(/#problem-one-way-relation$/);
    const summary = await conn.sendRequest(FileSummaryRequest.type, { uri: uri('citywide/citywide.npz'), wait: true });
    expect(summary.report!.typed!.nodeTypes).toEqual({ rider: 30, dock: 12, district: 4, depot: 3 });
    expect(summary.report!.typed!.relations.map((r) => `${r.source}__${r.name}__${r.target}`)).toEqual([
      'rider__rides_from__dock', 'dock__serves__rider', 'dock__near__dock', 'dock__located_in__district']);
  });

  it('text diagnostics carry code, link and the exact range of the bad value', () => {
    const d = diags('lanes/lanes.csv');
    const oor = d.find((x) => x.code === 'index-out-of-range')!;
    // line 32 is "5,48,61": the 48 sits at columns 3-4 (1-based), i.e. characters 2..4
    expect(oor.range).toEqual({ start: { line: 31, character: 2 }, end: { line: 31, character: 4 } });
    expect(oor.severity).toBe(1);
    expect(oor.codeDescription!.href).toMatch(/#problem-index-out-of-range$/);
    const asym = d.find((x) => x.code === 'asymmetric-adjacency')!;
    expect(asym.range.start.line).toBe(10);
    expect(asym.severity).toBe(1); // declared undirected in demo/hopscope.json
    expect(d.map((x) => x.code)).toEqual(expect.arrayContaining(['non-integer-index', 'edge-shape', 'self-loops', 'duplicate-edges']));
  });

  it('hover on a path string in a Python file shows shapes and roles', async () => {
    const file = path.join(ws, 'train_docks.py');
    const text = fs.readFileSync(file, 'utf8');
    await conn.sendNotification(DidOpenTextDocumentNotification.type, { textDocument: { uri: uri('train_docks.py'), languageId: 'python', version: 1, text } });
    const lines = text.split('\n');
    const line = lines.findIndex((l) => l.includes('lanes/dock_features.npy'));
    const character = lines[line]!.indexOf('dock_features') + 3;
    const h = hoverText(await conn.sendRequest(HoverRequest.type, { textDocument: { uri: uri('train_docks.py') }, position: { line, character } }));
    expect(h.contents.value).toContain('[48, 6]');
    expect(h.contents.value).toContain('features');
    expect(h.contents.value).toMatch(/non-finite-features/);
  });

  it('a PyTorch checkpoint is checked and hovered like any other file', async () => {
    // demo/checkpoints/dock_graph.pt: written by the real torch.save (scripts/make_demo_pt.py),
    // with two training docks planted in the test mask.
    expect(diags('checkpoints/dock_graph.pt').map((d) => d.code)).toEqual(['mask-overlap']);
    const text = fs.readFileSync(path.join(ws, 'train_docks.py'), 'utf8');
    const lines = text.split('\n');
    const line = lines.findIndex((l) => l.includes('checkpoints/dock_graph.pt'));
    const character = lines[line]!.indexOf('dock_graph') + 2;
    const h = hoverText(await conn.sendRequest(HoverRequest.type, { textDocument: { uri: uri('train_docks.py') }, position: { line, character } }));
    expect(h.contents.value).toMatch(/— pt/);
    expect(h.contents.value).toContain('| edge\\_index | int64 | [2, 112] | edge-index |');
  });

  it('hover on a node id in an edge list shows its degree and neighbours', async () => {
    const text = fs.readFileSync(path.join(ws, 'lanes/lanes.csv'), 'utf8');
    await conn.sendNotification(DidOpenTextDocumentNotification.type, { textDocument: { uri: uri('lanes/lanes.csv'), languageId: 'csv', version: 1, text } });
    const h = hoverText(await conn.sendRequest(HoverRequest.type, { textDocument: { uri: uri('lanes/lanes.csv') }, position: { line: 2, character: 0 } }));
    // line 3 is "0,25,92": node 0. Its out-neighbours, read here with a plain split of the lines:
    const out = [...new Set(text.split('\n').filter((l) => /^0,\d+,/.test(l)).map((l) => Number(l.split(',')[1])))].sort((a, b) => a - b);
    expect(out.length).toBeGreaterThan(1);
    expect(h.contents.value).toMatch(/\*\*node 0\*\*/);
    expect(h.contents.value).toContain(`out-degree ${out.length} → ${out.join(', ')}`);
  });

  it('quick fixes on the edge list are workspace edits', async () => {
    const d = diags('lanes/lanes.csv').filter((x) => x.code === 'self-loops' || x.code === 'asymmetric-adjacency');
    const actions = await conn.sendRequest(CodeActionRequest.type, {
      textDocument: { uri: uri('lanes/lanes.csv') }, range: d[0]!.range, context: { diagnostics: d },
    }) as CodeAction[];
    const titles = actions.map((a) => a.title);
    expect(titles).toEqual(expect.arrayContaining(['Remove 1 self-loop line', 'Add 1 missing reverse edge']));
    const add = actions.find((a) => a.title.startsWith('Add'))!;
    expect(add.edit!.changes![uri('lanes/lanes.csv')]![0]!.newText).toBe('1,37,137\n');
  });

  it('a list with each lane written once gets an info, and the same quick fix adds the reverse lines', async () => {
    // demo/archive/lanes_2018.el (scripts/make-demo.mjs): 25 lanes, none written both ways.
    const d = diags('archive/lanes_2018.el').filter((x) => x.code === 'asymmetric-adjacency');
    expect(d).toHaveLength(1);
    expect(d[0]!.severity).toBe(3); // Information
    const text = fs.readFileSync(path.join(ws, 'archive/lanes_2018.el'), 'utf8');
    await conn.sendNotification(DidOpenTextDocumentNotification.type, { textDocument: { uri: uri('archive/lanes_2018.el'), languageId: 'plaintext', version: 1, text } });
    const actions = await conn.sendRequest(CodeActionRequest.type, {
      textDocument: { uri: uri('archive/lanes_2018.el') }, range: d[0]!.range, context: { diagnostics: d },
    }) as CodeAction[];
    expect(actions.map((a) => a.title)).toEqual(['Add 25 missing reverse edges']);
    const added = actions[0]!.edit!.changes![uri('archive/lanes_2018.el')]![0]!.newText.trim().split('\n');
    expect(added).toHaveLength(25);
    expect(added[0]).toBe('1 0'); // the reverse of the first lane, "0 1"
  });

  it('a named pipe is never opened: the summary says unsupported, a hover on its path shows nothing', async () => {
    // Opening a FIFO for reading blocks until a writer comes; the test's time limit turns a
    // regression into a failure, and stopping the server ends it.
    const fifo = path.join(ws, 'archive', 'pipe.npy');
    if (spawnSync('mkfifo', [fifo]).status !== 0) return; // no mkfifo here
    const s = await conn.sendRequest(FileSummaryRequest.type, { uri: URI.file(fifo).toString() });
    expect(s.status).toBe('unsupported');
    const text = 'x = np.load("archive/pipe.npy")\n';
    await conn.sendNotification(DidOpenTextDocumentNotification.type, { textDocument: { uri: uri('pipe_user.py'), languageId: 'python', version: 1, text } });
    const h = await conn.sendRequest(HoverRequest.type, { textDocument: { uri: uri('pipe_user.py') }, position: { line: 0, character: 20 } });
    expect(h).toBeNull();
  }, 15_000);

  it('custom requests: summary, tensor page, statistics', async () => {
    const s = await conn.sendRequest(FileSummaryRequest.type, { uri: uri('lanes/dock_features.npy') });
    expect(s.status).toBe('ok');
    expect(s.report!.tensors[0]!.shape).toEqual([48, 6]);
    const page = (await conn.sendRequest(TensorPageRequest.type, { uri: uri('lanes/dock_features.npy'), tensor: 'dock_features', rowStart: 7, rowCount: 2 }))!;
    expect(page.totalRows).toBe(48);
    expect(page.rows[0]![1]).toBe('NaN'); // dock 7's elevation (planted in scripts/make-demo.mjs)
    const stats = (await conn.sendRequest(TensorStatsRequest.type, { uri: uri('lanes/dock_features.npy'), tensor: 'dock_features' }))!;
    expect(stats.columns[1]!.nan).toBe(1);
    expect(stats.columns[2]!.inf).toBe(1);
  });

  it('publishes nothing for text that is not an edge list, and clears an edge list that becomes prose', async () => {
    expect(diagnostics.has(uri('lanes/README.txt'))).toBe(false);
    expect(diagnostics.has(uri('lanes/metrics.csv'))).toBe(false);
    const s = await conn.sendRequest(FileSummaryRequest.type, { uri: uri('lanes/metrics.csv') });
    expect(s.status).toBe('unsupported');
    // An edge list with problems (closed_docks.el warns: empty graph) rewritten as notes.
    await waitFor(() => diags('archive/closed_docks.el').length > 0);
    fs.writeFileSync(path.join(ws, 'archive/closed_docks.el'), 'Docks closed in 2024:\nthe north square dock\nthe harbour dock\n');
    await conn.sendNotification(DidChangeWatchedFilesNotification.type, { changes: [{ uri: uri('archive/closed_docks.el'), type: FileChangeType.Changed }] });
    await waitFor(() => diags('archive/closed_docks.el').length === 0);
    expect(diagnostics.has(uri('lanes/README.txt'))).toBe(false);
  });

  it('re-checks a file changed on disk', async () => {
    const file = path.join(ws, 'weekend/riders.edges');
    fs.writeFileSync(file, '0 1\n1 0\n');
    await conn.sendNotification(DidChangeWatchedFilesNotification.type, { changes: [{ uri: uri('weekend/riders.edges'), type: FileChangeType.Changed }] });
    await waitFor(() => diags('weekend/riders.edges').length === 0);
  });
});

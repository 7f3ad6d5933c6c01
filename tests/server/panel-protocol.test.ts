/**
 * The receptive-field panel's requests over stdio: the built language server (dist/server.js)
 * spawned like tests/server/protocol.test.ts does, on a workspace holding a copy of the karate
 * fixture folder (edge_index.npy with x.npy = the degree vector and y.npy = the club labels).
 * Expected values: field sizes 1, 17, 26 (docs/references.md §2.1); influence rows of Â^L and Dirichlet
 * energies computed by NumPy (tests/fixtures/analysis/expected.json); 1-WL 1, 11, 27 classes
 * (docs/references.md §5); karate curvature and the bridge (0, 11) (docs/references.md §6).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { ResponseError, type MessageConnection } from 'vscode-jsonrpc/node';
import { DidOpenTextDocumentNotification, HoverRequest } from 'vscode-languageserver-protocol';
import { URI } from 'vscode-uri';
import { BottlenecksRequest, FieldViewRequest, SmoothingRequest, WlClassesRequest } from '../../common/protocol';

import { ROOT as root, startServer, stopServer, type ServerSession } from './lsp-client';

const expected = JSON.parse(fs.readFileSync(path.join(root, 'tests/fixtures/analysis/expected.json'), 'utf8'));
let ws: string;
let session: ServerSession | undefined;
let conn: MessageConnection;
const uri = (rel: string) => URI.file(path.join(ws, rel)).toString();

beforeAll(async () => {
  ws = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-panel-lsp-'));
  fs.cpSync(path.join(root, 'tests/fixtures/analysis/karate'), path.join(ws, 'karate'), { recursive: true });
  fs.writeFileSync(path.join(ws, 'train.py'), 'import numpy as np\nedges = np.load("karate/edge_index.npy")\nx = np.load("karate/x.npy")\n');
  session = await startServer(ws, 'karate');
  conn = session.conn;
}, 90_000);

afterAll(() => stopServer(session, ws));

describe('panel requests over stdio', () => {
  it('hopscope/field: node 0, two layers', async () => {
    const f = await conn.sendRequest(FieldViewRequest.type, { uri: uri('karate/edge_index.npy'), node: 0, layers: 2 });
    expect(f.perHop).toEqual([1, 16, 9]);
    expect(f.total).toBe(26);
    expect(f.graphNodes).toBe(34);
    expect(f.ids.length).toBe(26);
    expect(f.hasFeatures).toBe(true);
    expect(f.sendingRow).toBe(0);
    const row: number[] = expected.graphs.karate.influence['0'].gcn[2];
    f.ids.forEach((u, i) => expect(f.weights[i]).toBeCloseTo(row[u]!, 12));
    // y.npy holds each node's club (make_analysis_fixtures.py: 0 = "Mr. Hi", 1 = "Officer", from networkx)
    expect(f.labels![0]).toBe(0);
    expect(f.labels![f.ids.indexOf(33)]).toBe(1);
    expect(f.coverageCurve.median.length).toBe(8);
  });

  it('hopscope/field: the drawing cap and the message direction toggles', async () => {
    const capped = await conn.sendRequest(FieldViewRequest.type, { uri: uri('karate/edge_index.npy'), node: 0, layers: 2, maxNodes: 10 });
    expect(capped.ids.length).toBe(10);
    expect(capped.shown).toBe(10);
    expect(capped.sampled).toBe(true);
    // Below the 10-node floor the server keeps 10.
    const floor = await conn.sendRequest(FieldViewRequest.type, { uri: uri('karate/edge_index.npy'), node: 0, layers: 2, maxNodes: 3 });
    expect(floor.ids.length).toBe(10);
    const sym = await conn.sendRequest(FieldViewRequest.type, { uri: uri('karate/edge_index.npy'), node: 0, layers: 3, symmetrise: true, selfLoops: false });
    expect(sym.symmetrised).toBe(true);
    expect(sym.selfLoops).toBe(false);
    expect(new Set(sym.edgeDirs)).toEqual(new Set([3]));
  });

  it('hopscope/field: an unknown node is a RequestFailed error with a readable message', async () => {
    const e = await conn.sendRequest(FieldViewRequest.type, { uri: uri('karate/edge_index.npy'), node: 99, layers: 2 }).then(() => null, (x: unknown) => x);
    expect(e).toBeInstanceOf(ResponseError);
    expect((e as ResponseError<unknown>).code).toBe(-32803);
    expect((e as ResponseError<unknown>).message).toBe('Node 99 is not in edge_index.npy: its ids run from 0 to 33.');
  });

  it('hopscope/wlClasses, hopscope/bottlenecks, hopscope/smoothing', async () => {
    const f = await conn.sendRequest(FieldViewRequest.type, { uri: uri('karate/edge_index.npy'), node: 0, layers: 1 });
    const wl = await conn.sendRequest(WlClassesRequest.type, { uri: uri('karate/edge_index.npy'), nodes: f.ids });
    expect(wl.classesPerRound).toEqual([1, 11, 27]);
    expect(wl.colours.length).toBe(f.ids.length);
    const pairs: number[] = [];
    for (const i of f.edges) pairs.push(f.ids[i]!);
    const b = await conn.sendRequest(BottlenecksRequest.type, { uri: uri('karate/edge_index.npy'), edges: pairs });
    const at = (u: number, v: number) => {
      for (let k = 0; k < pairs.length; k += 2) if ((pairs[k] === u && pairs[k + 1] === v) || (pairs[k] === v && pairs[k + 1] === u)) return k / 2;
      throw new Error(`edge ${u}-${v} not drawn`);
    };
    expect(b.balancedForman[at(0, 31)]).toBeCloseTo(-67 / 48, 12);
    expect(b.forman[at(0, 1)]).toBe(-21);
    expect(b.bridge[at(0, 11)]).toBe(true);
    expect(b.bridge.filter(Boolean).length).toBe(1);
    const s = await conn.sendRequest(SmoothingRequest.type, { uri: uri('karate/edge_index.npy'), steps: 8 });
    const energy: number[] = expected.graphs.karate.energy.caiWang;
    s!.caiWang.forEach((x, k) => expect(x).toBeCloseTo(energy[k]!, 9));
  });

  it('the hover on a graph file offers the panel', async () => {
    const text = fs.readFileSync(path.join(ws, 'train.py'), 'utf8');
    await conn.sendNotification(DidOpenTextDocumentNotification.type, { textDocument: { uri: uri('train.py'), languageId: 'python', version: 1, text } });
    const hover = (character: number, line: number) => conn.sendRequest(HoverRequest.type, { textDocument: { uri: uri('train.py') }, position: { line, character } }).then((h) => ({ contents: { value: (h?.contents as { value: string } | undefined)?.value ?? '' } }));
    const edges = await hover(20, 1);
    const link = /\[Open the receptive-field panel\]\(command:hopscope\.openFieldPanel\?([^)]+)\)/.exec(edges.contents.value);
    expect(link).not.toBeNull();
    expect(JSON.parse(decodeURIComponent(link![1]!))).toEqual([uri('karate/edge_index.npy')]);
    // x.npy holds no edges: no panel link there.
    const x = await hover(16, 2);
    expect(x.contents.value).toContain('features');
    expect(x.contents.value).not.toContain('openFieldPanel');
  });
});

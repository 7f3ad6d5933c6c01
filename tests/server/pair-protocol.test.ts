/**
 * hopscope/pairField over stdio: the built language server (dist/server.js) on a workspace holding
 * a copy of the karate fixture folder (tests/fixtures/analysis/karate). Expected values from
 * NetworkX 2.8 (tests/fixtures/make_pair_fixtures.py → tests/fixtures/pair/expected.json:
 * single_source_shortest_path_length with cutoff, shortest_path_length without the pair's edge).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { ResponseError, type MessageConnection } from 'vscode-jsonrpc/node';
import { URI } from 'vscode-uri';
import { PairFieldRequest } from '../../common/protocol';
import { ROOT as root, startServer, stopServer, type ServerSession } from './lsp-client';

const expected = JSON.parse(fs.readFileSync(path.join(root, 'tests/fixtures/pair/expected.json'), 'utf8'));
let ws: string;
let session: ServerSession | undefined;
let conn: MessageConnection;
const uri = (rel: string) => URI.file(path.join(ws, rel)).toString();

beforeAll(async () => {
  ws = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-pair-lsp-'));
  fs.cpSync(path.join(root, 'tests/fixtures/analysis/karate'), path.join(ws, 'karate'), { recursive: true });
  session = await startServer(ws, 'karate');
  conn = session.conn;
}, 90_000);

afterAll(() => stopServer(session, ws));

describe('hopscope/pairField over stdio', () => {
  it('karate 0,1 (an edge): NetworkX counts, the pair edge stored both ways, distance 2 without it', async () => {
    const r = await conn.sendRequest(PairFieldRequest.type, { uri: uri('karate/edge_index.npy'), u: 0, v: 1, layers: 2 });
    const want = expected.karate.pairs[0];
    expect(r.perHop).toEqual(want.perHop['2'].row0.selfLoops);
    expect(r.pairEdge).toEqual({ uToV: true, vToU: true, vHearsU: true, uHearsV: true });
    expect(r.distanceWithoutPairEdge).toBe(want.distanceWithoutPairEdge);
    expect(r.ids.slice(0, 2)).toEqual([0, 1]);
    expect(r.graphNodes).toBe(34);
  });

  it('karate 11,25 (no edge), no self-loops: NetworkX frontier counts; equal ends are a RequestFailed sentence', async () => {
    const r = await conn.sendRequest(PairFieldRequest.type, { uri: uri('karate/edge_index.npy'), u: 11, v: 25, layers: 3, selfLoops: false });
    const want = expected.karate.pairs[3];
    expect(r.perHop).toEqual(want.perHop['3'].row0.noSelfLoops);
    expect(r.pairEdge.uToV || r.pairEdge.vToU).toBe(false);
    expect(r.distanceWithoutPairEdge).toBe(3);
    const e = await conn.sendRequest(PairFieldRequest.type, { uri: uri('karate/edge_index.npy'), u: 4, v: 4, layers: 1 }).then(() => null, (x: unknown) => x);
    expect(e).toBeInstanceOf(ResponseError);
    expect((e as ResponseError<unknown>).message).toBe('A pair needs two different nodes; both ends are 4.');
  });
});

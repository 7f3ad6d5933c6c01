/**
 * Cancellation from the editor reaches the graph worker: the built language server over stdio,
 * a workspace holding one large generated edge list (400,000 lines, written here by a seeded
 * generator) whose re-check keeps the worker busy for a while. A panel request cancelled with
 * `$/cancelRequest` while it waits behind that check is dropped (RequestCancelled, -32800), a
 * panel request superseded by a newer one of the same kind for the same file likewise, and the
 * worker answers the next request as usual. (How fast a running analysis stops is the worker's
 * own test; this one checks that the editor's token gets there.)
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { CancellationTokenSource, ResponseError, type MessageConnection } from 'vscode-jsonrpc/node';
import { DidChangeWatchedFilesNotification, FileChangeType, LSPErrorCodes } from 'vscode-languageserver-protocol';
import { URI } from 'vscode-uri';
import { FieldViewRequest, SmoothingRequest, StatusNotification, WlClassesRequest, type StatusParams } from '../../common/protocol';
import { seededRandom } from '../../server/src/core/random';

import { startServer, stopServer, type ServerSession } from './lsp-client';

let ws: string;
let session: ServerSession | undefined;
let conn: MessageConnection;
const statuses: StatusParams[] = [];
const big = () => path.join(ws, 'city', 'rides.edges');
const bigUri = () => URI.file(big()).toString();

function writeBig(seed: number): void {
  const rand = seededRandom(seed);
  const n = 100_000;
  const lines: string[] = [];
  for (let i = 0; i < 400_000; i++) lines.push(`${Math.floor(rand() * n)} ${Math.floor(rand() * n)}`);
  fs.writeFileSync(big(), lines.join('\n') + '\n');
}

const until = async (pred: () => boolean, ms = 60_000) => {
  const end = Date.now() + ms;
  while (!pred()) {
    if (Date.now() > end) throw new Error('timed out waiting');
    await new Promise((r) => setTimeout(r, 10));
  }
};
const idle = () => statuses.length > 0 && !statuses[statuses.length - 1]!.busy;
const errorOf = (p: Promise<unknown>) => p.then(() => null, (e: unknown) => e as ResponseError<unknown>);

/** Rewrites the large file and reports it changed; resolves once the worker is busy re-checking it. */
async function busyWorker(seed: number): Promise<void> {
  writeBig(seed);
  const seen = statuses.length;
  await conn.sendNotification(DidChangeWatchedFilesNotification.type, { changes: [{ uri: bigUri(), type: FileChangeType.Changed }] });
  await until(() => statuses.slice(seen).some((s) => s.busy));
  // The quiet period for file events (250 ms), then the walk; the check itself takes far longer.
  await new Promise((r) => setTimeout(r, 450));
}

beforeAll(async () => {
  ws = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-cancel-'));
  fs.mkdirSync(path.join(ws, 'city'));
  writeBig(7);
  session = await startServer(ws, 'cancel', (c) => { c.onNotification(StatusNotification.type, (s) => { statuses.push(s); }); });
  conn = session.conn;
  await until(() => idle() && statuses[statuses.length - 1]!.filesChecked >= 1);
}, 120_000);

afterAll(() => stopServer(session, ws));

describe('cancellation over stdio', () => {
  it('a request cancelled while it waits is dropped, and the next request is answered', async () => {
    await busyWorker(8);
    const source = new CancellationTokenSource();
    const cancelled = errorOf(conn.sendRequest(SmoothingRequest.type, { uri: bigUri(), steps: 8 }, source.token));
    await new Promise((r) => setTimeout(r, 20));
    source.cancel();
    const e = await cancelled;
    expect(e).toBeInstanceOf(ResponseError);
    expect(e!.code).toBe(LSPErrorCodes.RequestCancelled);
    const f = await conn.sendRequest(FieldViewRequest.type, { uri: bigUri(), node: 0, layers: 1 });
    expect(f.graphNodes).toBeGreaterThan(0);
  }, 60_000);

  it('a newer request of the same kind for the same file supersedes the one still waiting', async () => {
    await busyWorker(9);
    const older = errorOf(conn.sendRequest(WlClassesRequest.type, { uri: bigUri(), nodes: [0, 1, 2] }));
    await new Promise((r) => setTimeout(r, 20));
    const newer = conn.sendRequest(WlClassesRequest.type, { uri: bigUri(), nodes: [3, 4, 5] });
    const e = await older;
    expect(e).toBeInstanceOf(ResponseError);
    expect(e!.code).toBe(LSPErrorCodes.RequestCancelled);
    expect((await newer).colours).toHaveLength(3);
  }, 60_000);
});

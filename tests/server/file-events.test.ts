/**
 * File events over stdio: the built language server (dist/server.js) on a workspace of small
 * generated edge lists, told about changes the way VS Code's watcher tells them — a renamed
 * folder as the folder alone, a file replaced by a folder of the same name as one path. Checks
 * that every change ends with the diagnostics a fresh check gives, that each event publishes once
 * per file whose problems changed and nothing for the others, and that graph files reached through
 * a symbolic link are checked (and a link back to a parent folder does not loop).
 *
 * Expected problems: a repeated line is a duplicate-edges warning and a line "u u" a self-loops
 * info (the README's problem table; `hopscope check` prints the same for these files).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import type { MessageConnection } from 'vscode-jsonrpc/node';
import {
  DidChangeWatchedFilesNotification, DidOpenTextDocumentNotification, FileChangeType, HoverRequest,
  PublishDiagnosticsNotification, type Diagnostic, type FileEvent,
} from 'vscode-languageserver-protocol';
import { URI } from 'vscode-uri';
import { FileSummaryRequest, StatusNotification, type StatusParams } from '../../common/protocol';

import { startServer, stopServer, type ServerSession } from './lsp-client';

let ws: string;
let outside: string;
let session: ServerSession | undefined;
let conn: MessageConnection;
/** Every publish, in order. */
const publishes: Array<{ uri: string; codes: string[] }> = [];
const current = new Map<string, Diagnostic[]>();
const statuses: StatusParams[] = [];
const waiters: Array<() => void> = [];

const DUPLICATE = '0 1\n1 0\n0 1\n'; // duplicate-edges (line 3)
const SELF_LOOP = '0 1\n1 0\n1 1\n'; // self-loops (line 3)
const CLEAN = '0 1\n1 0\n';

function waitFor(pred: () => boolean, ms = 20_000): Promise<void> {
  return new Promise((resolve, reject) => {
    const t = setTimeout(() => reject(new Error('timed out waiting')), ms);
    const check = () => { if (pred()) { clearTimeout(t); resolve(); return true; } return false; };
    if (!check()) waiters.push(() => { check(); });
  });
}
const file = (rel: string) => path.join(ws, rel);
const uri = (rel: string) => URI.file(file(rel)).toString();
const codes = (rel: string) => (current.get(uri(rel)) ?? []).map((d) => String(d.code));
const write = (rel: string, text: string) => { fs.mkdirSync(path.dirname(file(rel)), { recursive: true }); fs.writeFileSync(file(rel), text); };

/** Sends one watcher event and waits until the server has handled it (a busy status, then an idle one). */
async function event(changes: Array<[string, FileChangeType]>): Promise<Array<{ uri: string; codes: string[] }>> {
  const from = publishes.length;
  const seen = statuses.length;
  const ev: FileEvent[] = changes.map(([rel, type]) => ({ uri: uri(rel), type }));
  await conn.sendNotification(DidChangeWatchedFilesNotification.type, { changes: ev });
  await waitFor(() => statuses.slice(seen).some((s) => s.busy));
  await waitFor(() => { const after = statuses.slice(seen); const busyAt = after.findIndex((s) => s.busy); return busyAt >= 0 && after.slice(busyAt + 1).some((s) => !s.busy); });
  return publishes.slice(from);
}

beforeAll(async () => {
  ws = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-events-'));
  outside = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-events-outside-'));
  // flat/: 30 edge lists, every third with a duplicate line (each a graph of its own).
  for (let i = 0; i < 30; i++) write(`flat/g${String(i).padStart(2, '0')}.edges`, i % 3 === 0 ? DUPLICATE : CLEAN);
  // runs/r1/: a folder that will be renamed.
  for (let i = 0; i < 5; i++) write(`runs/r1/part${i}.edges`, SELF_LOOP);
  // swap/x.edges: a file that becomes a folder of the same name, and back.
  write('swap/x.edges', DUPLICATE);
  // linked/: a link to a file outside the workspace, and a link back to the workspace root.
  fs.writeFileSync(path.join(outside, 'target.edges'), DUPLICATE);
  fs.mkdirSync(file('linked'));
  fs.symlinkSync(path.join(outside, 'target.edges'), file('linked/l.edges'));
  fs.symlinkSync(ws, file('linked/loop'), 'dir');
  fs.writeFileSync(file('train.py'), 'import numpy as np\na = np.loadtxt("linked/l.edges")\nb = np.loadtxt("late/new.edges")\n');
  session = await startServer(ws, 'events', (c) => {
    c.onNotification(PublishDiagnosticsNotification.type, (p) => {
      publishes.push({ uri: p.uri, codes: p.diagnostics.map((d) => String(d.code)) });
      current.set(p.uri, p.diagnostics);
      waiters.forEach((w) => w());
    });
    c.onNotification(StatusNotification.type, (s) => { statuses.push(s); waiters.forEach((w) => w()); });
  });
  conn = session.conn;
  await waitFor(() => statuses.some((s) => !s.busy && s.filesChecked >= 37), 60_000);
}, 90_000);

afterAll(async () => {
  await stopServer(session, ws);
  fs.rmSync(outside, { recursive: true, force: true });
});

describe('file events over stdio', () => {
  it('publishes once per file with problems at start-up, nothing for clean files', () => {
    const perUri = new Map<string, number>();
    for (const p of publishes) perUri.set(p.uri, (perUri.get(p.uri) ?? 0) + 1);
    expect(codes('flat/g00.edges')).toEqual(['duplicate-edges']);
    expect(perUri.get(uri('flat/g00.edges'))).toBe(1);
    expect(perUri.has(uri('flat/g01.edges'))).toBe(false);
    expect([...perUri.values()].every((n) => n === 1)).toBe(true);
    // 10 flat files, 5 runs, swap/x.edges and the linked file have problems.
    expect(perUri.size).toBe(17);
  });

  it('checks a graph file reached through a symbolic link, and walks a link back to a parent folder once', async () => {
    expect(codes('linked/l.edges')).toEqual(['duplicate-edges']);
    // The loop link adds no second copy of the workspace's files.
    expect(publishes.some((p) => p.uri.includes('/loop/'))).toBe(false);
    const text = fs.readFileSync(file('train.py'), 'utf8');
    await conn.sendNotification(DidOpenTextDocumentNotification.type, { textDocument: { uri: uri('train.py'), languageId: 'python', version: 1, text } });
    const h = await conn.sendRequest(HoverRequest.type, { textDocument: { uri: uri('train.py') }, position: { line: 1, character: 30 } });
    expect((h?.contents as { value: string }).value).toContain('duplicate-edges');
  });

  it('a changed file publishes once, for that file only', async () => {
    write('flat/g03.edges', CLEAN);
    const sent = await event([['flat/g03.edges', FileChangeType.Changed]]);
    expect(sent).toEqual([{ uri: uri('flat/g03.edges'), codes: [] }]);
    write('flat/g04.edges', SELF_LOOP);
    const again = await event([['flat/g04.edges', FileChangeType.Changed]]);
    expect(again).toEqual([{ uri: uri('flat/g04.edges'), codes: ['self-loops'] }]);
    // A change that leaves the problems as they were publishes nothing.
    write('flat/g04.edges', SELF_LOOP + '\n');
    expect(await event([['flat/g04.edges', FileChangeType.Changed]])).toEqual([]);
    expect(codes('flat/g04.edges')).toEqual(['self-loops']);
  });

  it('a deleted file loses its diagnostics', async () => {
    fs.rmSync(file('flat/g06.edges'));
    const sent = await event([['flat/g06.edges', FileChangeType.Deleted]]);
    expect(sent).toEqual([{ uri: uri('flat/g06.edges'), codes: [] }]);
    const s = await conn.sendRequest(FileSummaryRequest.type, { uri: uri('flat/g06.edges') });
    expect(s.status).toBe('missing');
  });

  it('a folder renamed (reported as the folder alone) moves its diagnostics', async () => {
    fs.renameSync(file('runs/r1'), file('runs/r2'));
    const sent = await event([['runs/r1', FileChangeType.Deleted], ['runs/r2', FileChangeType.Created]]);
    for (let i = 0; i < 5; i++) {
      expect(codes(`runs/r1/part${i}.edges`)).toEqual([]);
      expect(codes(`runs/r2/part${i}.edges`)).toEqual(['self-loops']);
    }
    // One publish per path: five cleared, five new.
    expect(sent).toHaveLength(10);
    expect(new Set(sent.map((p) => p.uri)).size).toBe(10);
  });

  it('a file replaced by a folder of the same name, and the folder replaced by a file again', async () => {
    fs.rmSync(file('swap/x.edges'));
    write('swap/x.edges/inner.edges', SELF_LOOP);
    const sent = await event([['swap/x.edges', FileChangeType.Changed]]);
    expect(codes('swap/x.edges')).toEqual([]);
    expect(codes('swap/x.edges/inner.edges')).toEqual(['self-loops']);
    expect(sent).toHaveLength(2);

    fs.rmSync(file('swap/x.edges'), { recursive: true });
    write('swap/x.edges', DUPLICATE);
    await event([['swap/x.edges', FileChangeType.Changed]]);
    expect(codes('swap/x.edges/inner.edges')).toEqual([]);
    expect(codes('swap/x.edges')).toEqual(['duplicate-edges']);
  });

  it('a link created later is checked', async () => {
    fs.writeFileSync(path.join(outside, 'second.edges'), SELF_LOOP);
    fs.symlinkSync(path.join(outside, 'second.edges'), file('linked/m.edges'));
    const sent = await event([['linked/m.edges', FileChangeType.Created]]);
    expect(sent).toEqual([{ uri: uri('linked/m.edges'), codes: ['self-loops'] }]);
  });

  it('a path hover on a file not checked yet says "checking…" at once and queues one check', async () => {
    // Written without an event: only the hover learns of it.
    write('late/new.edges', DUPLICATE);
    const hover = () => conn.sendRequest(HoverRequest.type, { textDocument: { uri: uri('train.py') }, position: { line: 2, character: 30 } })
      .then((h) => (h?.contents as { value: string } | undefined)?.value ?? '');
    const answers = await Promise.all([hover(), hover()]);
    // The server may reach the second request's file lookup before the first's, and a 12-byte file's
    // check can end before the other one gets there: so whichever came first says "checking…" (the
    // check is queued with no await before that answer), and the other says that or has the report.
    // That only one check runs is counted below and in tests/unit/lsp-workspace.test.ts.
    expect(answers.some((a) => a.includes('checking…'))).toBe(true);
    for (const a of answers) expect(a).toMatch(/checking…|duplicate-edges/);
    await waitFor(() => current.has(uri('late/new.edges')));
    await waitFor(() => statuses.length > 0 && !statuses[statuses.length - 1]!.busy);
    expect(await hover()).toContain('duplicate-edges');
    expect(publishes.filter((p) => p.uri === uri('late/new.edges'))).toHaveLength(1);
  });
});

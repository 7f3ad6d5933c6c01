/**
 * The editor side of the protocol tests: spawns the built language server (dist/server.js) over
 * stdio on a workspace folder and answers the requests an editor answers (configuration,
 * capability registration, progress), so each test file only adds its own listeners.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { createMessageConnection, StreamMessageReader, StreamMessageWriter, type MessageConnection } from 'vscode-jsonrpc/node';
import {
  ConfigurationRequest, InitializedNotification, InitializeRequest, PublishDiagnosticsNotification, RegistrationRequest,
  ShutdownRequest, WorkDoneProgressCreateRequest,
} from 'vscode-languageserver-protocol';
import { URI } from 'vscode-uri';
import { StatusNotification } from '../../common/protocol';

export const ROOT = path.join(__dirname, '../..');

export interface ServerSession {
  child: ChildProcess;
  conn: MessageConnection;
}

/**
 * Starts the server on `workspace` and completes initialize/initialized. `listen` registers the
 * test's notification handlers before the connection starts; `capabilities` are merged into the
 * client capabilities the editor announces.
 */
export async function startServer(workspace: string, name: string, listen: (conn: MessageConnection) => void = () => {},
  capabilities: Record<string, unknown> = {}): Promise<ServerSession> {
  const server = path.join(ROOT, 'dist/server.js');
  if (!fs.existsSync(server)) throw new Error('dist/server.js missing: run npm run build (npm test does)');
  const child = spawn(process.execPath, [server, '--stdio'], { stdio: ['pipe', 'pipe', 'inherit'] });
  child.stdin!.on('error', () => { /* the server may exit before the last write */ });
  const conn = createMessageConnection(new StreamMessageReader(child.stdout!), new StreamMessageWriter(child.stdin!));
  conn.onNotification(PublishDiagnosticsNotification.type, () => {});
  conn.onNotification(StatusNotification.type, () => {});
  listen(conn);
  conn.onRequest(ConfigurationRequest.type, () => [null, null]);
  conn.onRequest(RegistrationRequest.type, () => undefined);
  conn.onRequest(WorkDoneProgressCreateRequest.type, () => undefined);
  conn.listen();
  await conn.sendRequest(InitializeRequest.type, {
    processId: process.pid, rootUri: URI.file(workspace).toString(), workspaceFolders: [{ uri: URI.file(workspace).toString(), name }],
    capabilities: { workspace: { configuration: true }, window: { workDoneProgress: true }, ...capabilities },
  });
  await conn.sendNotification(InitializedNotification.type, {});
  return { child, conn };
}

/** Shuts the server down (politely, then by signal) and removes the workspace folder. */
export async function stopServer(s: ServerSession | undefined, workspace: string | undefined): Promise<void> {
  if (s) {
    try { await s.conn.sendRequest(ShutdownRequest.type); } catch { /* already gone */ }
    s.child.kill();
    s.conn.dispose();
  }
  if (workspace) fs.rmSync(workspace, { recursive: true, force: true });
}

/**
 * Extension host glue: starts the Hopscope language server and tells it which files to watch.
 * Everything else (checks, figures) happens in the server.
 */
import * as vscode from 'vscode';
import { LanguageClient, TransportKind, type LanguageClientOptions, type ServerOptions } from 'vscode-languageclient/node';

const GRAPH_GLOB = '**/*.{npy,npz,safetensors,mtx,edges,el,csv,tsv,txt,json,gz}';
let client: LanguageClient | undefined;

export async function activate(context: vscode.ExtensionContext): Promise<void> {
  const serverModule = vscode.Uri.joinPath(context.extensionUri, 'dist', 'server.js').fsPath;
  const serverOptions: ServerOptions = {
    run: { module: serverModule, transport: TransportKind.ipc },
    debug: { module: serverModule, transport: TransportKind.ipc, options: { execArgv: ['--nolazy', '--inspect=6029'] } },
  };
  const output = vscode.window.createOutputChannel('Hopscope', { log: true });
  const clientOptions: LanguageClientOptions = {
    documentSelector: [
      { scheme: 'file', pattern: '**/*.{csv,tsv,txt,edges,el,mtx,json}' },
    ],
    synchronize: { fileEvents: vscode.workspace.createFileSystemWatcher(GRAPH_GLOB) },
    outputChannel: output,
  };
  client = new LanguageClient('hopscope', 'Hopscope', serverOptions, clientOptions);
  try {
    await client.start();
  } catch (e) {
    void vscode.window.showErrorMessage(`Hopscope could not start its language server: ${(e as Error).message}`);
    throw e;
  }
  context.subscriptions.push(client, output);
}

export async function deactivate(): Promise<void> {
  await client?.stop();
}

/**
 * The tensor viewer: a read-only custom editor for binary graph files. The webview only draws;
 * every figure comes from the language server through the requests in common/protocol.ts.
 */
import * as vscode from 'vscode';
import type { LanguageClient } from 'vscode-languageclient/node';
import { CeilingRequest, DatasetTableRequest, FileSummaryRequest, TensorPageRequest, TensorStatsRequest } from '../../common/protocol';
import type { ViewerMessage, ViewerRequest } from '../../common/viewer-messages';
import { makeNonce, webviewPage } from './webview-page';

export const VIEW_TYPE = 'hopscope.tensorViewer';

export class TensorViewerProvider implements vscode.CustomReadonlyEditorProvider {
  constructor(
    private readonly extensionUri: vscode.Uri,
    private readonly client: () => LanguageClient | undefined,
    private readonly writeFixedCopy: (uri: vscode.Uri) => Thenable<unknown>,
  ) {}

  openCustomDocument(uri: vscode.Uri): vscode.CustomDocument {
    return { uri, dispose: () => {} };
  }

  async resolveCustomEditor(document: vscode.CustomDocument, panel: vscode.WebviewPanel): Promise<void> {
    const webview = panel.webview;
    webview.options = {
      enableScripts: true,
      enableForms: false,
      localResourceRoots: [vscode.Uri.joinPath(this.extensionUri, 'dist', 'webview'), vscode.Uri.joinPath(this.extensionUri, 'media')],
    };
    webview.html = viewerHtml(webview, this.extensionUri);
    const send = (m: ViewerMessage) => void webview.postMessage(m);
    const fileName = document.uri.path.split('/').pop() ?? '';

    const sendSummary = async () => {
      const c = this.client();
      if (!c) { send({ type: 'error', message: 'The Hopscope language server is not running.' }); return; }
      try {
        const summary = await c.sendRequest(FileSummaryRequest.type, { uri: document.uri.toString(), wait: true });
        send({ type: 'summary', summary, fileName });
      } catch (e) {
        send({ type: 'error', message: `Could not read ${fileName}: ${(e as Error).message}` });
      }
    };

    const subs: vscode.Disposable[] = [];
    subs.push(webview.onDidReceiveMessage(async (m: ViewerRequest) => {
      const c = this.client();
      try {
        switch (m.type) {
          case 'ready':
            await sendSummary();
            break;
          case 'page': {
            const page = await c?.sendRequest(TensorPageRequest.type, { uri: document.uri.toString(), tensor: m.tensor, rowStart: m.rowStart, rowCount: m.rowCount });
            if (page) send({ type: 'page', page });
            break;
          }
          case 'stats': {
            const stats = await c?.sendRequest(TensorStatsRequest.type, { uri: document.uri.toString(), tensor: m.tensor });
            if (stats) send({ type: 'stats', stats });
            break;
          }
          case 'openProblemTable': {
            const readme = vscode.Uri.joinPath(this.extensionUri, 'README.md');
            await vscode.commands.executeCommand('markdown.showPreview', readme);
            break;
          }
          case 'writeFixedCopy':
            await this.writeFixedCopy(document.uri);
            break;
          case 'reopenAsText':
            await vscode.commands.executeCommand('vscode.openWith', document.uri, 'default');
            break;
          case 'openFieldPanel':
            await vscode.commands.executeCommand('hopscope.openFieldPanel', document.uri);
            break;
          case 'datasetTable': {
            // Packed columns (one base64 string each) go to the page as they came; it unpacks them.
            if (!c) { send({ type: 'datasetTable', table: null, note: 'The Hopscope language server is not running.' }); break; }
            try {
              const table = await c.sendRequest(DatasetTableRequest.type, { uri: document.uri.toString() });
              send({ type: 'datasetTable', table });
            } catch (e) {
              send({ type: 'datasetTable', table: null, note: `The table of graphs could not be read: ${(e as Error).message}` });
            }
            break;
          }
          case 'ceiling': {
            if (!c) { send({ type: 'ceiling', data: null }); break; }
            try {
              send({ type: 'ceiling', data: await c.sendRequest(CeilingRequest.type, { uri: document.uri.toString() }) });
            } catch (e) {
              send({ type: 'ceiling', data: null, note: (e as Error).message });
            }
            break;
          }
          case 'openGraph':
            // Centre node 0 of the chosen graph; the panel's node box moves it.
            await vscode.commands.executeCommand('hopscope.openFieldPanel', document.uri, 0, m.graph);
            break;
        }
      } catch (e) {
        send({ type: 'error', message: (e as Error).message });
      }
    }));

    // Follow the file: re-read on change, close on delete.
    const folder = vscode.Uri.joinPath(document.uri, '..');
    const watcher = vscode.workspace.createFileSystemWatcher(new vscode.RelativePattern(folder, fileName));
    let timer: NodeJS.Timeout | undefined;
    subs.push(watcher, watcher.onDidChange(() => {
      clearTimeout(timer);
      timer = setTimeout(() => { send({ type: 'changed' }); void sendSummary(); }, 400);
    }), watcher.onDidDelete(() => panel.dispose()));
    panel.onDidDispose(() => { clearTimeout(timer); subs.forEach((d) => d.dispose()); });
  }
}

function viewerHtml(webview: vscode.Webview, extensionUri: vscode.Uri): string {
  return webviewPage({
    cspSource: webview.cspSource,
    nonce: makeNonce(),
    script: webview.asWebviewUri(vscode.Uri.joinPath(extensionUri, 'dist', 'webview', 'viewer.js')).toString(),
    style: webview.asWebviewUri(vscode.Uri.joinPath(extensionUri, 'media', 'viewer.css')).toString(),
    title: 'Tensor viewer',
  });
}

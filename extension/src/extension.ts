/**
 * Extension host glue: starts the language server, the tensor viewer, commands and the status bar
 * item. All checking happens in the server; this file wires VS Code to it.
 */
import * as vscode from 'vscode';
import { LanguageClient, TransportKind, type LanguageClientOptions, type ServerOptions } from 'vscode-languageclient/node';
import { TensorViewerProvider, VIEW_TYPE } from './viewer';
import { OPEN_FIELD_PANEL, registerPanel } from './panel';
import { registerInspect } from './debug/inspect';
import {
  FixedCopyRequest, RecheckRequest, StatusNotification,
} from '../../common/protocol';
import { envWithHugePages } from '../../common/huge-pages';
import { readServerSettings, type ServerSettings } from '../../common/settings';

const GRAPH_GLOB = '**/*.{npy,npz,safetensors,pt,pth,mtx,edges,el,csv,tsv,txt,json,gz}';
/** Documents the server looks at: text graph files (diagnostics, fixes) and code (path hovers). */
const DOCUMENTS: LanguageClientOptions['documentSelector'] = [
  { scheme: 'file', pattern: '**/*.{csv,tsv,txt,edges,el,mtx,json}' },
  ...['python', 'javascript', 'typescript', 'javascriptreact', 'typescriptreact', 'json', 'jsonc', 'yaml', 'toml', 'shellscript', 'markdown']
    .map((language) => ({ language })),
  { notebook: '*', language: 'python' },
];

let client: LanguageClient | undefined;

export async function activate(context: vscode.ExtensionContext): Promise<void> {
  const output = vscode.window.createOutputChannel('Hopscope', { log: true });
  context.subscriptions.push(output);

  // The viewer first, so binary files open even while the server starts.
  const writeFixedCopy = (uri: vscode.Uri) => fixedCopy(uri, output);
  context.subscriptions.push(vscode.window.registerCustomEditorProvider(
    VIEW_TYPE, new TensorViewerProvider(context.extensionUri, () => client, writeFixedCopy),
    { supportsMultipleEditorsPerDocument: true, webviewOptions: { retainContextWhenHidden: false } },
  ));

  registerPanel(context, () => client);

  const status = vscode.window.createStatusBarItem('hopscope.status', vscode.StatusBarAlignment.Left, 10);
  status.name = 'Hopscope';
  status.command = 'workbench.actions.view.problems';
  status.text = '$(sync~spin) Hopscope';
  status.tooltip = 'Hopscope is starting';
  status.show();
  context.subscriptions.push(status);

  context.subscriptions.push(
    vscode.commands.registerCommand('hopscope.openViewer', async (arg?: vscode.Uri | string) => {
      const uri = typeof arg === 'string' ? vscode.Uri.parse(arg) : arg ?? (await pickGraphFile());
      if (uri) await vscode.commands.executeCommand('vscode.openWith', uri, VIEW_TYPE);
    }),
    vscode.commands.registerCommand('hopscope.recheckWorkspace', async () => {
      await client?.sendRequest(RecheckRequest.type);
    }),
    vscode.commands.registerCommand('hopscope.writeFixedCopy', async (arg?: vscode.Uri) => {
      const uri = arg ?? activeGraphUri();
      if (!uri) { void vscode.window.showInformationMessage('Open or select a .npy, .npz or .safetensors file first.'); return; }
      await writeFixedCopy(uri);
    }),
    vscode.commands.registerCommand('hopscope.showOutput', () => output.show()),
  );
  registerInspect(context, () => client);

  const serverModule = vscode.Uri.joinPath(context.extensionUri, 'dist', 'server.js').fsPath;
  const serverOptions: ServerOptions = {
    // Huge pages for the server's malloc where it runs on node (common/huge-pages.ts).
    run: { module: serverModule, transport: TransportKind.ipc, options: { env: envWithHugePages(process.env) } },
    debug: { module: serverModule, transport: TransportKind.ipc, options: { execArgv: ['--nolazy', '--inspect=6029'] } },
  };
  const clientOptions: LanguageClientOptions = {
    documentSelector: DOCUMENTS,
    synchronize: {
      fileEvents: [
        vscode.workspace.createFileSystemWatcher(GRAPH_GLOB),
        // A renamed or deleted folder is reported as the folder alone, whatever its name: the
        // server walks it (or forgets what was below it). Changes inside are the first watcher's.
        vscode.workspace.createFileSystemWatcher('**/*', false, true, false),
      ],
    },
    outputChannel: output,
    initializationOptions: readSettings(),
    markdown: { isTrusted: { enabledCommands: ['hopscope.openViewer', OPEN_FIELD_PANEL] } },
  };
  client = new LanguageClient('hopscope', 'Hopscope', serverOptions, clientOptions);
  context.subscriptions.push(client.onNotification(StatusNotification.type, (s) => {
    const icon = s.busy ? '$(sync~spin)' : s.errors ? '$(error)' : s.warnings ? '$(warning)' : '$(check)';
    status.text = `${icon} Hopscope ${s.errors}/${s.warnings}`;
    status.tooltip = `Hopscope: ${s.filesChecked} graph file${s.filesChecked === 1 ? '' : 's'} checked — ${s.errors} errors, ${s.warnings} warnings, ${s.infos} info${s.busy ? ' (checking…)' : ''}. Click for the Problems panel.`;
    status.backgroundColor = s.errors ? new vscode.ThemeColor('statusBarItem.errorBackground') : undefined;
  }));
  try {
    await client.start();
  } catch (e) {
    // VS Code shows nothing when activation fails: say it, and keep the log at hand.
    output.error(`language server failed to start: ${(e as Error).message}`);
    void vscode.window.showErrorMessage(`Hopscope could not start its language server: ${(e as Error).message}`, 'Show Output')
      .then((pick) => { if (pick) output.show(); });
    throw e;
  }
  context.subscriptions.push(client);
}

export async function deactivate(): Promise<void> {
  await client?.stop();
}

/** The settings the language server uses, read and checked against the one table (common/settings.ts). */
function readSettings(): ServerSettings {
  const c = vscode.workspace.getConfiguration('hopscope');
  return readServerSettings((key) => c.get(key));
}

function activeGraphUri(): vscode.Uri | undefined {
  const tab = vscode.window.tabGroups.activeTabGroup.activeTab?.input;
  if (tab instanceof vscode.TabInputCustom || tab instanceof vscode.TabInputText) return tab.uri;
  return undefined;
}

async function pickGraphFile(): Promise<vscode.Uri | undefined> {
  const files = await vscode.workspace.findFiles('**/*.{npy,npz,safetensors,pt,pth}', '**/node_modules/**', 500);
  if (!files.length) { void vscode.window.showInformationMessage('No .npy, .npz, .safetensors or .pt files in this workspace.'); return undefined; }
  const pick = await vscode.window.showQuickPick(files.map((f) => ({ label: vscode.workspace.asRelativePath(f), uri: f })), { placeHolder: 'Graph file to view' });
  return pick?.uri;
}

/** Shows what a corrected copy would change, then writes it under a new name (never over the original). */
async function fixedCopy(uri: vscode.Uri, output: vscode.LogOutputChannel): Promise<void> {
  if (!client) return;
  const plan = await client.sendRequest(FixedCopyRequest.type, { uri: uri.toString() });
  const target = vscode.Uri.file(plan.suggestedTarget);
  const detail = plan.changes.map((c) => `• ${c}`).join('\n');
  const go = await vscode.window.showInformationMessage(
    `Write a corrected copy as ${vscode.workspace.asRelativePath(target)}?`, { modal: true, detail: `${detail}\n\nThe original file is not changed.` }, 'Write Copy');
  if (go !== 'Write Copy') return;
  try {
    const done = await client.sendRequest(FixedCopyRequest.type, { uri: uri.toString(), write: true, target: target.fsPath });
    output.info(`wrote ${done.written}: ${done.changes.join('; ')}`);
    const open = await vscode.window.showInformationMessage(`Wrote ${vscode.workspace.asRelativePath(target)}.`, 'Open');
    if (open) await vscode.commands.executeCommand('vscode.openWith', target, VIEW_TYPE);
  } catch (e) {
    void vscode.window.showErrorMessage(`Hopscope could not write the copy: ${(e as Error).message}`);
  }
}

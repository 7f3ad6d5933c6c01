/**
 * The receptive-field panel: a webview (webview/src/panel.ts) that shows what an L-layer
 * message-passing model lets one node of a graph file hear. This side opens and restores panels,
 * relays the webview's questions to the language server (protocol.ts: hopscope/field, wlClasses,
 * bottlenecks, smoothing) and saves exported drawings where the user says. A newer question of the
 * same kind (the slider moved again) cancels the one still being answered, and closing the panel
 * cancels all of its questions: the server stops that work instead of finishing it for no one.
 *
 * Opened by the `hopscope.openFieldPanel` command (palette, explorer menu, the tensor viewer's
 * button, hover links); one panel per graph file. Panels come back after a reload through the
 * serializer, with the state the webview saved.
 */
import * as vscode from 'vscode';
import type { LanguageClient } from 'vscode-languageclient/node';
import {
  BottlenecksRequest, CeilingRequest, FieldViewRequest, FileSummaryRequest, PairFieldRequest, SmoothingRequest, WlClassesRequest,
} from '../../common/protocol';
import { PANEL_VIEW_TYPE, type PanelMessage, type PanelRequest, type PanelState } from '../../common/panel-messages';
import { makeNonce, panelHtml } from './panel-html';
import { readSetting } from '../../common/settings';

export const OPEN_FIELD_PANEL = 'hopscope.openFieldPanel';
const GRAPH_FILES = '**/*.{npy,npz,safetensors,pt,pth,mtx,mtx.gz,edges,el,csv,tsv,txt,json}';
const BINARY_FIRST = /\.(npy|npz|safetensors|pt|pth)$/i;

type ClientGetter = () => LanguageClient | undefined;

export function registerPanel(context: vscode.ExtensionContext, getClient: ClientGetter): void {
  const hosts = new Map<string, FieldPanelHost>();
  // One panel per graph file, and per graph of a dataset of many graphs.
  const keyOf = (uri: vscode.Uri, graph: number | undefined) => (graph === undefined ? uri.toString() : `${uri.toString()}#graph=${graph}`);
  const open = (panel: vscode.WebviewPanel, uri: vscode.Uri, node: number | undefined, graph: number | undefined) => {
    const host = new FieldPanelHost(panel, uri, node, graph, context.extensionUri, getClient);
    const key = keyOf(uri, graph);
    hosts.set(key, host);
    panel.onDidDispose(() => { if (hosts.get(key) === host) hosts.delete(key); });
  };

  context.subscriptions.push(
    vscode.commands.registerCommand(OPEN_FIELD_PANEL, async (arg?: vscode.Uri | string, nodeArg?: number, graphArg?: number) => {
      const uri = typeof arg === 'string' ? vscode.Uri.parse(arg) : arg instanceof vscode.Uri ? arg : await pickGraphFile();
      if (!uri) return;
      // graphArg: a graph of a dataset of many graphs (the viewer's table of graphs), 0-based.
      const graph = typeof graphArg === 'number' && Number.isInteger(graphArg) && graphArg >= 0 ? graphArg : undefined;
      const existing = hosts.get(keyOf(uri, graph));
      const node = typeof nodeArg === 'number' ? nodeArg : await askNode(uri, getClient());
      if (node === undefined) return;
      if (existing) { existing.show(node); return; }
      const panel = vscode.window.createWebviewPanel(PANEL_VIEW_TYPE, panelTitle(uri, undefined, graph), vscode.ViewColumn.Beside, webviewOptions(context.extensionUri));
      open(panel, uri, node, graph);
    }),
    vscode.window.registerWebviewPanelSerializer(PANEL_VIEW_TYPE, {
      async deserializeWebviewPanel(panel: vscode.WebviewPanel, state: PanelState | undefined) {
        if (!state?.uri) { panel.dispose(); return; }
        // Reset the options so the restored page gets this install's resource roots.
        panel.webview.options = webviewOptions(context.extensionUri);
        open(panel, vscode.Uri.parse(state.uri), undefined, state.graph);
      },
    }),
  );
}

function webviewOptions(extensionUri: vscode.Uri): vscode.WebviewPanelOptions & vscode.WebviewOptions {
  return {
    enableScripts: true,
    enableForms: false,
    localResourceRoots: [vscode.Uri.joinPath(extensionUri, 'dist', 'webview'), vscode.Uri.joinPath(extensionUri, 'media')],
  };
}

function panelTitle(uri: vscode.Uri, node?: number, graph?: number): string {
  const name = (uri.path.split('/').pop() ?? '') + (graph !== undefined ? ` graph ${graph}` : '');
  return node === undefined ? `Receptive field · ${name}` : `Node ${node} · ${name}`;
}

async function pickGraphFile(): Promise<vscode.Uri | undefined> {
  const files = await vscode.workspace.findFiles(GRAPH_FILES, '**/{node_modules,.git}/**', 2000);
  if (!files.length) { void vscode.window.showInformationMessage('No graph files (.npy, .npz, .safetensors, .pt, .mtx, edge lists) in this workspace.'); return undefined; }
  const items = files
    .map((f) => ({ label: vscode.workspace.asRelativePath(f), uri: f }))
    .sort((a, b) => Number(BINARY_FIRST.test(b.label)) - Number(BINARY_FIRST.test(a.label)) || a.label.localeCompare(b.label));
  const pick = await vscode.window.showQuickPick(items, { placeHolder: 'Graph file (its edge index or adjacency) for the receptive-field panel', matchOnDescription: true });
  return pick?.uri;
}

/** Asks for the centre node; the prompt names the id range when the server already knows the file. */
async function askNode(uri: vscode.Uri, client: LanguageClient | undefined): Promise<number | undefined> {
  let range: { lo: number; hi: number } | undefined;
  try {
    const s = await client?.sendRequest(FileSummaryRequest.type, { uri: uri.toString(), wait: false });
    const g = s?.report?.graph;
    if (g && g.nodes > 0) range = { lo: g.indexBase, hi: g.nodes - 1 + g.indexBase };
  } catch {
    /* no range in the prompt */
  }
  const text = await vscode.window.showInputBox({
    title: `Receptive field in ${vscode.workspace.asRelativePath(uri)}`,
    prompt: range ? `Centre node id (${range.lo}–${range.hi})` : 'Centre node id',
    value: String(range?.lo ?? 0),
    validateInput: (v) => {
      if (!/^\s*\d+\s*$/.test(v)) return 'A node id is a whole number, 0 or more.';
      const x = Number(v);
      if (range && (x < range.lo || x > range.hi)) return `This graph's ids run from ${range.lo} to ${range.hi}.`;
      return undefined;
    },
  });
  return text === undefined ? undefined : Number(text.trim());
}

/** Which in-flight questions a new one makes stale: wl and bottlenecks answers belong to one field. */
const SUPERSEDES: Record<'field' | 'wl' | 'bottlenecks' | 'smoothing' | 'ceiling', ReadonlyArray<'field' | 'wl' | 'bottlenecks' | 'smoothing' | 'ceiling'>> = {
  field: ['field', 'wl', 'bottlenecks'],
  wl: ['wl'],
  bottlenecks: ['bottlenecks'],
  smoothing: ['smoothing'],
  ceiling: ['ceiling'],
};
type Question = keyof typeof SUPERSEDES;

class FieldPanelHost {
  private readonly subs: vscode.Disposable[] = [];
  private pendingNode: number | undefined;
  /** Questions sent to the server and not answered yet, by kind. */
  private readonly inFlight = new Map<Question, vscode.CancellationTokenSource>();
  private disposed = false;

  constructor(
    private readonly panel: vscode.WebviewPanel,
    private readonly uri: vscode.Uri,
    node: number | undefined,
    /** A graph of a dataset of many graphs (0-based), or undefined for a graph file. */
    private readonly graph: number | undefined,
    extensionUri: vscode.Uri,
    private readonly client: ClientGetter,
  ) {
    this.pendingNode = node;
    const webview = panel.webview;
    webview.options = webviewOptions(extensionUri);
    const res = (...p: string[]) => webview.asWebviewUri(vscode.Uri.joinPath(extensionUri, ...p)).toString();
    webview.html = panelHtml({
      cspSource: webview.cspSource, nonce: makeNonce(),
      script: res('dist', 'webview', 'panel.js'), worker: res('dist', 'webview', 'panel-layout.js'), style: res('media', 'panel.css'),
    });
    panel.title = panelTitle(uri, node, graph);
    this.subs.push(webview.onDidReceiveMessage((m: PanelRequest) => { void this.handle(m); }));

    // The graph may span sibling files (x.npy next to edge_index.npy): follow the whole folder.
    const watcher = vscode.workspace.createFileSystemWatcher(new vscode.RelativePattern(vscode.Uri.joinPath(uri, '..'), '*'));
    let timer: NodeJS.Timeout | undefined;
    const changed = () => { clearTimeout(timer); timer = setTimeout(() => this.post({ type: 'changed' }), 500); };
    this.subs.push(watcher, watcher.onDidChange(changed), watcher.onDidCreate(changed), watcher.onDidDelete(changed));
    panel.onDidDispose(() => {
      this.disposed = true;
      clearTimeout(timer);
      this.subs.forEach((d) => d.dispose());
      for (const s of this.inFlight.values()) { s.cancel(); s.dispose(); }
      this.inFlight.clear();
    });
  }

  /** A token for a new question of `kind`; the questions it makes stale are cancelled. */
  private begin(kind: Question): vscode.CancellationTokenSource {
    for (const k of SUPERSEDES[kind]) {
      const old = this.inFlight.get(k);
      if (old) { old.cancel(); old.dispose(); this.inFlight.delete(k); }
    }
    const source = new vscode.CancellationTokenSource();
    this.inFlight.set(kind, source);
    return source;
  }

  private end(kind: Question, source: vscode.CancellationTokenSource): void {
    if (this.inFlight.get(kind) === source) { this.inFlight.delete(kind); source.dispose(); }
  }

  /** Brings the panel forward, centred on `node`. */
  show(node: number): void {
    if (this.panel.visible) {
      this.post({ type: 'init', file: this.fileInfo(), node, maxNodes: maxDrawn(this.uri) });
    } else {
      // A hidden panel's page is reloaded on reveal and asks with 'ready'.
      this.pendingNode = node;
    }
    this.panel.reveal();
  }

  private fileInfo() {
    return { uri: this.uri.toString(), name: this.uri.path.split('/').pop() ?? '', ...(this.graph !== undefined ? { graph: this.graph } : {}) };
  }

  private post(m: PanelMessage): void {
    void this.panel.webview.postMessage(m);
  }

  private async handle(m: PanelRequest): Promise<void> {
    const client = this.client();
    const uri = this.uri.toString();
    /** Every question about a graph of a dataset names that graph. */
    const g = this.graph !== undefined ? { graph: this.graph } : {};
    const seq = 'seq' in m ? m.seq : undefined;
    try {
      switch (m.type) {
        case 'ready':
          this.post({ type: 'init', file: this.fileInfo(), ...(this.pendingNode !== undefined ? { node: this.pendingNode } : {}), maxNodes: maxDrawn(this.uri) });
          this.pendingNode = undefined;
          return;
        case 'exportSvg':
          await this.save(new TextEncoder().encode(m.text), m.name, { 'SVG image': ['svg'] });
          return;
        case 'exportPng':
          await this.save(asBytes(m.bytes), m.name, { 'PNG image': ['png'] });
          return;
      }
      if (!client) { this.post({ type: 'error', ...(seq !== undefined ? { seq } : {}), message: 'The Hopscope language server is not running (see Hopscope: Show Log).' }); return; }
    } catch (e) {
      this.post({ type: 'error', ...(seq !== undefined ? { seq } : {}), message: (e as Error).message });
      return;
    }
    const source = this.begin(m.type);
    const token = source.token;
    try {
      switch (m.type) {
        case 'field': {
          const { pair, ...query } = m.query;
          if (pair !== undefined) {
            // Pair mode: what the model sees of (node, pair), drawn as the union of both fields.
            const { node, ...options } = query;
            const data = await client.sendRequest(PairFieldRequest.type, { uri, ...options, ...g, u: node, v: pair, maxNodes: maxDrawn(this.uri) }, token);
            if (token.isCancellationRequested) return;
            this.panel.title = `Pair ${data.u}, ${data.v} · ${this.uri.path.split('/').pop() ?? ''}`;
            this.post({ type: 'pair', seq: m.seq, data });
            break;
          }
          const view = await client.sendRequest(FieldViewRequest.type, { uri, ...query, ...g, maxNodes: maxDrawn(this.uri) }, token);
          if (token.isCancellationRequested) return;
          this.panel.title = panelTitle(this.uri, view.node, this.graph);
          this.post({ type: 'field', seq: m.seq, view });
          break;
        }
        case 'wl': {
          const data = await client.sendRequest(WlClassesRequest.type, { uri, nodes: m.nodes, ...g }, token);
          if (!token.isCancellationRequested) this.post({ type: 'wl', seq: m.seq, data });
          break;
        }
        case 'bottlenecks': {
          const data = await client.sendRequest(BottlenecksRequest.type, { uri, edges: m.edges, ...g }, token);
          if (!token.isCancellationRequested) this.post({ type: 'bottlenecks', seq: m.seq, data });
          break;
        }
        case 'smoothing': {
          try {
            const data = await client.sendRequest(SmoothingRequest.type, { uri, steps: 8, ...g }, token);
            if (!token.isCancellationRequested) this.post({ type: 'smoothing', data });
          } catch (e) {
            if (!token.isCancellationRequested) this.post({ type: 'smoothing', data: null, note: (e as Error).message });
          }
          break;
        }
        case 'ceiling': {
          // Node labels of one graph: the ceiling by layer count (not asked for a graph of a dataset).
          if (this.graph !== undefined) { this.post({ type: 'ceiling', data: null }); break; }
          try {
            const data = await client.sendRequest(CeilingRequest.type, { uri, layers: m.layers }, token);
            if (!token.isCancellationRequested) this.post({ type: 'ceiling', data });
          } catch {
            // No node labels (the common case) or no ceiling to give: the chart stays hidden.
            if (!token.isCancellationRequested) this.post({ type: 'ceiling', data: null });
          }
          break;
        }
      }
    } catch (e) {
      // A cancelled question was replaced by a newer one (or the panel closed): nothing to show.
      if (!token.isCancellationRequested && !this.disposed) this.post({ type: 'error', ...(seq !== undefined ? { seq } : {}), message: (e as Error).message });
    } finally {
      this.end(m.type, source);
    }
  }

  /** Asks where to save (the dialog itself confirms replacing a file) and writes there. */
  private async save(bytes: Uint8Array, name: string, filters: Record<string, string[]>): Promise<void> {
    const target = await vscode.window.showSaveDialog({
      defaultUri: vscode.Uri.joinPath(this.uri, '..', name.replace(/[\\/]/g, '_')),
      filters, saveLabel: 'Save', title: 'Save the receptive-field drawing',
    });
    if (!target) return;
    await vscode.workspace.fs.writeFile(target, bytes);
    this.post({ type: 'exported', path: vscode.workspace.asRelativePath(target) });
  }
}

function maxDrawn(uri: vscode.Uri): number {
  return readSetting('panel.maxDrawnNodes', vscode.workspace.getConfiguration('hopscope', uri).get('panel.maxDrawnNodes'));
}

/** Bytes posted by the webview arrive as a Uint8Array, or as a plain array / object of numbers from older hosts. */
function asBytes(b: unknown): Uint8Array {
  if (b instanceof Uint8Array) return b;
  if (b instanceof ArrayBuffer) return new Uint8Array(b);
  if (Array.isArray(b)) return Uint8Array.from(b as number[]);
  if (b && typeof b === 'object') return Uint8Array.from(Object.values(b as Record<string, number>));
  throw new Error('no image bytes received');
}

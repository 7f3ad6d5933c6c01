/**
 * Hopscope language server: the only place LSP types appear. It speaks LSP and nothing else:
 * reading, checking, the workspace walk and the analyses happen in the graph worker
 * (node/worker.ts, through the typed table of node/worker-methods.ts); workspace.ts decides what
 * to check when. This file answers hovers, code actions and the custom requests of
 * common/protocol.ts (each handled by its RequestType object), and passes every request's
 * cancellation token on to the worker.
 */
import {
  CodeActionKind, createConnection, DidChangeConfigurationNotification, LSPErrorCodes,
  ProposedFeatures, ResponseError, TextDocuments, TextDocumentSyncKind,
  type CancellationToken, type CodeAction, type Connection, type Diagnostic, type Hover,
  type InitializeParams, type TextEdit, type WorkspaceFolder,
} from 'vscode-languageserver/node';
import { TextDocument } from 'vscode-languageserver-textdocument';
import { URI } from 'vscode-uri';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { isSupportedFile, MANIFEST_NAME, readerFor } from '../core/formats';
import type { Problem, ProblemCode } from '../core/formats/types';
import type { CheckSetOptions } from '../core/checks/check-set';
import { edgeListFixes, type FixKind } from '../core/fixes/edgelist-fixes';
import { WorkerService } from '../node/worker-client';
import { WorkerCancelled, type CallOptions } from '../node/worker-methods';
import { nodeInfoOf } from '../node/shared-structure';
import {
  DEFAULT_SETTINGS, FileSummaryRequest, FixedCopyRequest, NodeInfoRequest, RecheckRequest, StatusNotification,
  TensorPageRequest, TensorStatsRequest, type FileSummary, type NodeInfo, type ServerSettings, type StatusParams,
} from '../../../common/protocol';
import { registerAnalysisRequests } from './analysis';
import { inSection, readServerSettings } from '../../../common/settings';
import { DiagnosticsPublisher, toDiagnostic } from './diagnostics';
import { GraphWorkspace } from './workspace';
import {
  codeExplanationMarkdown, fileSummaryMarkdown, integerAt, nodeInfoMarkdown, pathLiteralAt,
} from './hover-text';
import { CeilingHovers } from './ceiling-hover';

/** Where each problem code is explained: the problem table of the README shipped with the extension. */
export const DOCS_URL = `${URI.file(path.join(__dirname, '..', 'README.md')).toString()}#problem-`;
const EDGE_LIST_FIX_FOR: Partial<Record<ProblemCode, FixKind>> = {
  'asymmetric-adjacency': 'add-reverse-edges',
  'self-loops': 'remove-self-loops',
  'duplicate-edges': 'remove-duplicates',
  'one-based-index': 'to-zero-based',
};

/** A worker call cancelled by the client's token (or superseded) answers the LSP way. */
async function cancellable<T>(work: Promise<T>): Promise<T> {
  try {
    return await work;
  } catch (e) {
    if (e instanceof WorkerCancelled) throw new ResponseError(LSPErrorCodes.RequestCancelled, e.message);
    throw e;
  }
}

export function startServer(connection: Connection, workerScript: string): void {
  const documents = new TextDocuments(TextDocument);
  const worker = new WorkerService(workerScript, (s) => connection.console.warn(s));
  const service = worker.api;
  let folders: WorkspaceFolder[] = [];
  let settings: ServerSettings = { ...DEFAULT_SETTINGS };
  let filesExclude: string[] = [];
  let relatedInfo = false;
  let configurable = false;
  let progressSupported = false;
  let folderEvents = false;

  const publisher = new DiagnosticsPublisher(connection);
  /** The accuracy ceiling in path hovers, waited for briefly (ceiling-hover.ts). */
  const ceilings = new CeilingHovers(service);
  const workspace = new GraphWorkspace(service, {
    publish: (file, problems) => publisher.publish(file, problems.map((p) => toDiagnostic(p, file, DOCS_URL, relatedInfo))),
    status: () => sendStatus(),
    log: (s) => connection.console.warn(s),
  });
  const roots = () => folders.map((f) => URI.parse(f.uri).fsPath);
  /** Calls made for a request: its token, ahead of the queued workspace checks. */
  const forRequest = (token: CancellationToken | undefined, extra: CallOptions = {}): CallOptions => ({ priority: 'high', ...(token ? { token } : {}), ...extra });

  connection.onInitialize((params: InitializeParams) => {
    folders = params.workspaceFolders ?? (params.rootUri ? [{ uri: params.rootUri, name: 'root' }] : []);
    const caps = params.capabilities;
    relatedInfo = caps.textDocument?.publishDiagnostics?.relatedInformation === true;
    configurable = caps.workspace?.configuration === true;
    progressSupported = caps.window?.workDoneProgress === true;
    folderEvents = caps.workspace?.workspaceFolders === true;
    if (params.initializationOptions) settings = readServerSettings(inSection(params.initializationOptions));
    return {
      capabilities: {
        textDocumentSync: { openClose: true, change: TextDocumentSyncKind.Incremental, save: { includeText: false } },
        hoverProvider: true,
        codeActionProvider: { codeActionKinds: [CodeActionKind.QuickFix] },
        ...(caps.workspace?.workspaceFolders ? { workspace: { workspaceFolders: { supported: true, changeNotifications: true } } } : {}),
      },
      serverInfo: { name: 'hopscope', version: '0.1.0' },
    };
  });

  connection.onInitialized(async () => {
    if (configurable) {
      void connection.client.register(DidChangeConfigurationNotification.type, { section: ['hopscope', 'files'] });
    }
    if (folderEvents) {
      connection.workspace.onDidChangeWorkspaceFolders((e) => {
        folders = folders.filter((f) => !e.removed.some((r) => r.uri === f.uri)).concat(e.added);
        void loadSettings().then(() => scanWorkspace());
      });
    }
    await loadSettings();
    void scanWorkspace();
  });

  connection.onDidChangeConfiguration(async () => {
    await loadSettings();
    void scanWorkspace();
  });

  async function loadSettings(): Promise<void> {
    if (configurable) {
      const [h, files] = await connection.workspace.getConfiguration([{ section: 'hopscope' }, { section: 'files' }]) as [unknown, { exclude?: Record<string, boolean> } | null];
      settings = readServerSettings(inSection(h));
      filesExclude = Object.entries(files?.exclude ?? {}).filter(([, on]) => on).map(([g]) => g);
    }
    const opts: CheckSetOptions = { severity: settings.severity ?? {} };
    if (settings.defaultDirectedness !== 'auto') opts.defaults = { directed: settings.defaultDirectedness === 'directed' };
    opts.defaults = { ...(opts.defaults ?? {}), sendingRow: settings.sendingRow };
    workspace.setRoots(roots());
    // The worker applies the size limit and the exclusions to every path it walks, reads or analyses.
    await service.configure({
      options: opts, maxFileBytes: Math.max(1, settings.maxFileSizeMB) * 1024 ** 2,
      roots: roots(), exclude: [...filesExclude, ...(settings.exclude ?? [])],
    });
  }

  // ---- the workspace check and status ----------------------------------------------------------

  async function scanWorkspace(): Promise<void> {
    const progress = progressSupported ? await connection.window.createWorkDoneProgress() : undefined;
    progress?.begin('Hopscope: checking graph files', 0, 'finding files…', true);
    try {
      await workspace.scan(progress ? {
        token: progress.token,
        report: (done, total, folder) => progress.report(total ? Math.round((done / total) * 100) : 100, `${folder} (${done}/${total} files)`),
      } : undefined);
    } catch (e) {
      connection.console.error(`workspace check failed: ${(e as Error).message}`);
    } finally {
      progress?.done();
    }
  }

  let statusTimer: NodeJS.Timeout | undefined;
  /** The status bar figures, sent at most every 50 ms (always the latest state). */
  function sendStatus(): void {
    if (statusTimer) return;
    statusTimer = setTimeout(() => {
      statusTimer = undefined;
      const s: StatusParams = { filesChecked: workspace.reports.size, errors: 0, warnings: 0, infos: 0, busy: workspace.busy };
      for (const r of workspace.reports.values()) for (const p of r.problems) count(s, p);
      for (const ps of workspace.manifestProblemLists()) for (const p of ps) count(s, p);
      void connection.sendNotification(StatusNotification.type, s);
    }, 50);
  }
  const count = (s: StatusParams, p: Problem) => { if (p.severity === 'error') s.errors++; else if (p.severity === 'warning') s.warnings++; else s.infos++; };

  // Saved documents and the editor's file watcher: paths of files or folders, created, changed or
  // deleted. The workspace walks them in the worker and re-checks what they can affect.
  documents.onDidSave((e) => {
    const file = URI.parse(e.document.uri).fsPath;
    if (isSupportedFile(file) || path.basename(file) === MANIFEST_NAME) workspace.fileEvents([file]);
  });
  connection.onDidChangeWatchedFiles((e) => workspace.fileEvents(e.changes.map((c) => URI.parse(c.uri).fsPath)));

  // ---- hovers ----------------------------------------------------------------------------------

  /** A node's degree and neighbours: from the shared structure views, else (rarely) from the worker. */
  async function nodeInfo(file: string, node: number, maxNeighbours: number | undefined, token?: CancellationToken): Promise<NodeInfo | null> {
    const view = workspace.views.get(file);
    if (view) return nodeInfoOf(view, node, maxNeighbours);
    // Checked, but its view is not here (the bound on views dropped it): ask the worker.
    if (workspace.reports.get(file)?.graph) return cancellable(service.nodeInfo({ path: file, node, ...(maxNeighbours !== undefined ? { maxNeighbours } : {}) }, forRequest(token)));
    return null;
  }

  connection.onHover(async (params, token): Promise<Hover | null> => {
    const doc = documents.get(params.textDocument.uri);
    if (!doc) return null;
    const docPath = URI.parse(doc.uri).fsPath;
    const lineText = doc.getText({ start: { line: params.position.line, character: 0 }, end: { line: params.position.line + 1, character: 0 } }).replace(/\r?\n$/, '');
    const ch = params.position.character;

    // In an edge list: a node id under the cursor, and explanations of problems here.
    const reader = readerFor(docPath);
    if (reader?.format === 'edgelist') {
      const parts: string[] = [];
      const report = workspace.reports.get(docPath);
      for (const p of report?.problems ?? []) {
        for (const l of p.locations ?? []) {
          if (l.line === params.position.line + 1 && l.column !== undefined && ch >= l.column - 1 && ch <= l.column - 1 + (l.length ?? 1)) {
            parts.push(codeExplanationMarkdown(p.code, DOCS_URL + p.code) + (l.detail ? ` — ${l.detail}` : ''));
            break;
          }
        }
      }
      const tok = integerAt(lineText, ch);
      if (tok && !/^\s*[#%]/.test(lineText)) {
        if (!report && !workspace.notGraph.has(docPath)) {
          // Not checked yet: say so now, and make sure one check of it is queued.
          void workspace.ensureChecked(docPath);
          parts.unshift(`**node ${tok.text}** — checking ${path.basename(docPath)}…`);
        } else {
          const info = await nodeInfo(docPath, Number(tok.text), undefined, token).catch(() => null);
          if (info) parts.unshift(nodeInfoMarkdown(info));
        }
      }
      if (!parts.length) return null;
      return { contents: { kind: 'markdown', value: [...new Set(parts)].join('\n\n---\n\n') } };
    }

    // Anywhere else: a string that names a graph file.
    const lit = pathLiteralAt(lineText, ch);
    if (!lit) return null;
    const target = await resolveTarget(lit.text, docPath);
    if (!target) return null;
    const summary = await summarise(target, false);
    if (summary.status === 'unsupported' || summary.status === 'missing') return null;
    const range = { start: { line: params.position.line, character: lit.start }, end: { line: params.position.line, character: lit.end } };
    if (summary.status === 'checking' || !summary.report) {
      return { contents: { kind: 'markdown', value: `**${path.basename(target)}** — checking…` }, range };
    }
    const open = `command:hopscope.openViewer?${encodeURIComponent(JSON.stringify([URI.file(target).toString()]))}`;
    const field = `command:hopscope.openFieldPanel?${encodeURIComponent(JSON.stringify([URI.file(target).toString()]))}`;
    const ceiling = await ceilings.get(target, summary.report);
    if (token.isCancellationRequested) return null;
    return {
      contents: { kind: 'markdown', value: fileSummaryMarkdown(path.basename(target), summary.report, { ...(summary.size !== undefined ? { size: summary.size } : {}), ...(summary.graphFiles ? { graphFiles: summary.graphFiles } : {}), viewerCommand: open, fieldCommand: field, ...(ceiling ? { ceiling } : {}) }) },
      range,
    };
  });

  /** The file a path string names: beside the document, else in a workspace folder (a stat, never a read). */
  async function resolveTarget(text: string, fromDoc: string): Promise<string | undefined> {
    const candidates = path.isAbsolute(text)
      ? [text]
      : [path.resolve(path.dirname(fromDoc), text), ...roots().map((r) => path.resolve(r, text))];
    for (const c of candidates) {
      // Any path that exists: summarise() says what a pipe or a folder of that name is.
      try { await fs.promises.stat(c); return c; } catch { /* next */ }
    }
    return undefined;
  }

  /**
   * What is known about a file. Not checked yet: with `wait`, after the one check queued for it
   * (a check already queued or running counts); without, at once with status 'checking'.
   */
  async function summarise(abs: string, wait: boolean): Promise<FileSummary> {
    const uri = URI.file(abs).toString();
    if (!isSupportedFile(abs)) return { uri, status: 'unsupported' };
    let st: fs.Stats;
    try { st = await fs.promises.stat(abs); } catch { return { uri, status: 'missing' }; }
    // A named pipe or a device is never read (opening a pipe blocks until a writer comes).
    if (!st.isFile()) return { uri, status: 'unsupported' };
    const size = st.size;
    let report = workspace.reports.get(abs);
    if (!report && workspace.notGraph.has(abs)) return { uri, status: 'unsupported' };
    if (!report) {
      const checked = workspace.ensureChecked(abs);
      if (!wait) return { uri, status: 'checking', size };
      await checked;
      report = workspace.reports.get(abs);
      if (!report && workspace.notGraph.has(abs)) return { uri, status: 'unsupported' };
    }
    const graphFiles = workspace.graphFiles(abs);
    return report ? { uri, status: 'ok', report, size, ...(graphFiles ? { graphFiles } : {}) } : { uri, status: 'checking', size };
  }

  // ---- code actions ----------------------------------------------------------------------------

  connection.onCodeAction((params): CodeAction[] => {
    const doc = documents.get(params.textDocument.uri);
    if (!doc) return [];
    const file = URI.parse(doc.uri).fsPath;
    if (readerFor(file)?.format !== 'edgelist' || file.toLowerCase().endsWith('.gz')) return [];
    const wanted = new Map<FixKind, Diagnostic>();
    for (const d of params.context.diagnostics) {
      if (d.source !== 'hopscope') continue;
      const kind = EDGE_LIST_FIX_FOR[d.code as ProblemCode];
      if (kind && !wanted.has(kind)) wanted.set(kind, d);
    }
    if (!wanted.size) return [];
    const report = workspace.reports.get(file);
    // With sparse ids the node count is the number of distinct ids, not a bound on them.
    const sparse = report?.problems.some((p) => p.code === 'sparse-ids');
    const nodes = report?.graph && report.graph.indexBase === 0 && !sparse ? report.graph.nodes : undefined;
    const fixes = edgeListFixes(doc.getText(), file, [...wanted.keys()], wanted.has('to-zero-based') ? undefined : nodes);
    return fixes.map((f) => ({
      title: f.title,
      kind: CodeActionKind.QuickFix,
      diagnostics: [wanted.get(f.kind)!],
      isPreferred: f.kind !== 'to-zero-based',
      edit: { changes: { [doc.uri]: f.edits.map((e): TextEdit => ({ range: { start: { line: e.startLine, character: e.startCharacter }, end: { line: e.endLine, character: e.endCharacter } }, newText: e.newText })) } },
    }));
  });

  // ---- custom requests (common/protocol.ts), each by its type object -----------------------------

  const fsPath = (uri: string) => URI.parse(uri).fsPath;
  connection.onRequest(FileSummaryRequest.type, (p) => summarise(fsPath(p.uri), p.wait !== false));
  connection.onRequest(TensorPageRequest.type, (p, token) => cancellable(service.tensorPage(
    { path: fsPath(p.uri), tensor: p.tensor, rowStart: p.rowStart, rowCount: p.rowCount, ...(p.maxCols !== undefined ? { maxCols: p.maxCols } : {}) }, forRequest(token))));
  connection.onRequest(TensorStatsRequest.type, (p, token) => cancellable(service.tensorStats(
    { path: fsPath(p.uri), tensor: p.tensor, ...(p.maxCols !== undefined ? { maxCols: p.maxCols } : {}) }, forRequest(token))));
  connection.onRequest(NodeInfoRequest.type, async (p, token) => {
    const file = fsPath(p.uri);
    if (!workspace.views.get(file) && !workspace.reports.has(file)) await workspace.ensureChecked(file);
    return nodeInfo(file, p.node, p.maxNeighbours, token);
  });
  connection.onRequest(FixedCopyRequest.type, (p) => {
    const file = fsPath(p.uri);
    return p.write
      ? service.writeFixedCopy({ path: file, ...(p.target !== undefined ? { target: p.target } : {}) }, { priority: 'high' })
      : service.fixedCopyPlan({ path: file }, { priority: 'high' });
  });
  connection.onRequest(RecheckRequest.type, async () => { await scanWorkspace(); return null; });
  registerAnalysisRequests(connection, service);

  connection.onShutdown(async () => {
    workspace.dispose();
    await worker.dispose();
  });

  documents.listen(connection);
  connection.listen();
}

if (typeof require !== 'undefined' && typeof module !== 'undefined' && require.main === module) {
  startServer(createConnection(ProposedFeatures.all), path.join(__dirname, 'worker.js'));
}

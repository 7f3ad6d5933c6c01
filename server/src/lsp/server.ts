/**
 * Hopscope language server: the only place LSP types appear. Reading and checking happen in a
 * worker thread (node/worker.ts); this file scans the workspace, keeps diagnostics up to date,
 * answers hovers, code actions and the custom requests of protocol.ts.
 */
import {
  CodeActionKind, createConnection, DiagnosticSeverity, DidChangeConfigurationNotification,
  ProposedFeatures, TextDocuments, TextDocumentSyncKind,
  type CodeAction, type Connection, type Diagnostic, type DiagnosticRelatedInformation, type Hover,
  type InitializeParams, type TextEdit, type WorkspaceFolder,
} from 'vscode-languageserver/node';
import { TextDocument } from 'vscode-languageserver-textdocument';
import { URI } from 'vscode-uri';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { isSupportedFile, MANIFEST_NAME, readerFor } from '../core/formats';
import type { Problem, ProblemCode } from '../core/formats/types';
import type { CheckSetOptions, FileReport } from '../core/checks/check-set';
import { edgeListFixes, type FixKind } from '../core/fixes/edgelist-fixes';
import { collect } from '../node/load';
import { globMatcher } from '../node/glob';
import { WorkerService } from '../node/worker-client';
import type { CheckOutcome } from '../node/service';
import {
  DEFAULT_SETTINGS, FileSummaryRequest, FixedCopyRequest, NodeInfoRequest, RecheckRequest, StatusNotification,
  TensorPageRequest, TensorStatsRequest, type FileSummary, type ServerSettings, type StatusParams,
} from '../../../common/protocol';
import { writeFixedCopy, describeFixedCopy } from '../node/fixed-copy';
import { registerAnalysisRequests } from './analysis';
import {
  codeExplanationMarkdown, fileSummaryMarkdown, integerAt, nodeInfoMarkdown, pathLiteralAt,
} from './hover-text';

/** Where each problem code is explained: the problem table of the README shipped with the extension. */
export const DOCS_URL = `${URI.file(path.join(__dirname, '..', 'README.md')).toString()}#problem-`;
const EDGE_LIST_FIX_FOR: Partial<Record<ProblemCode, FixKind>> = {
  'asymmetric-adjacency': 'add-reverse-edges',
  'self-loops': 'remove-self-loops',
  'duplicate-edges': 'remove-duplicates',
  'one-based-index': 'to-zero-based',
};
/** Files at most this large are checked on demand for a hover; larger ones answer "checking…". */
const HOVER_WAIT_BYTES = 64 * 1024 ** 2;

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
  /** Last published problems per file (absolute path), for status counts and hovers. */
  const published = new Map<string, FileReport>();
  const manifestPublished = new Map<string, Problem[]>();
  /** Text files found to be something else than edge lists (README.txt, metrics.csv): never published. */
  const notGraphFiles = new Set<string>();
  /** Graph membership from the last checks: file → files of its graph. */
  const graphOf = new Map<string, string[]>();
  const pending = new Map<string, NodeJS.Timeout>();
  let scanning = false;
  let scanToken = 0;

  connection.onInitialize((params: InitializeParams) => {
    folders = params.workspaceFolders ?? (params.rootUri ? [{ uri: params.rootUri, name: 'root' }] : []);
    const caps = params.capabilities;
    relatedInfo = caps.textDocument?.publishDiagnostics?.relatedInformation === true;
    configurable = caps.workspace?.configuration === true;
    progressSupported = caps.window?.workDoneProgress === true;
    folderEvents = caps.workspace?.workspaceFolders === true;
    const init = params.initializationOptions as Partial<ServerSettings> | undefined;
    if (init) settings = { ...settings, ...init };
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
        void scanWorkspace();
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
      const [h, files] = await connection.workspace.getConfiguration([{ section: 'hopscope' }, { section: 'files' }]) as [Partial<ServerSettings> | null, { exclude?: Record<string, boolean> } | null];
      settings = { ...DEFAULT_SETTINGS, ...(h ?? {}) };
      filesExclude = Object.entries(files?.exclude ?? {}).filter(([, on]) => on).map(([g]) => g);
    }
    excludeMatch = globMatcher([...filesExclude, ...(settings.exclude ?? [])]);
    const opts: CheckSetOptions = { severity: settings.severity ?? {} };
    if (settings.defaultDirectedness !== 'auto') opts.defaults = { directed: settings.defaultDirectedness === 'directed' };
    opts.defaults = { ...(opts.defaults ?? {}), flow: settings.flow };
    await service.configure(opts, { maxFileBytes: Math.max(1, settings.maxFileSizeMB) * 1024 ** 2 });
  }

  // Rebuilt only when the settings change: `excluded` runs for every entry of a workspace walk.
  let excludeMatch = globMatcher([]);
  function excluded(abs: string): boolean {
    const match = excludeMatch;
    for (const f of folders) {
      const root = URI.parse(f.uri).fsPath;
      const rel = path.relative(root, abs);
      if (!rel.startsWith('..') && !path.isAbsolute(rel)) return match(rel);
    }
    return false;
  }

  // ---- checking and publishing ----------------------------------------------------------------

  async function scanWorkspace(): Promise<void> {
    const token = ++scanToken;
    scanning = true;
    sendStatus();
    const roots = folders.map((f) => URI.parse(f.uri).fsPath);
    const progress = progressSupported ? await connection.window.createWorkDoneProgress() : undefined;
    let cancelled = false;
    progress?.token.onCancellationRequested(() => { cancelled = true; });
    try {
      progress?.begin('Hopscope: checking graph files', 0, 'finding files…', true);
      const found = collect(roots, { exclude: excluded });
      // Batches by folder: a folder's files are checked together (sibling bundles).
      const byDir = new Map<string, string[]>();
      for (const f of found.files) {
        const d = path.dirname(path.resolve(f));
        if (!byDir.has(d)) byDir.set(d, []);
        byDir.get(d)!.push(path.resolve(f));
      }
      const stale = new Set(published.keys());
      let done = 0;
      const total = found.files.length;
      for (const [dir, files] of byDir) {
        if (cancelled || token !== scanToken) break;
        progress?.report(total ? Math.round((done / total) * 100) : 100, `${path.basename(dir)} (${done}/${total} files)`);
        const outcome = await service.check(files);
        for (const f of outcome.files) stale.delete(f.path);
        publishOutcome(outcome);
        done += files.length;
      }
      // Manifests with problems of their own (or none: clear them).
      for (const m of found.manifests) {
        const outcome = await service.check([path.resolve(m)]);
        publishOutcome(outcome, [path.resolve(m)]);
      }
      if (!cancelled && token === scanToken) {
        for (const gone of stale) { published.delete(gone); void connection.sendDiagnostics({ uri: URI.file(gone).toString(), diagnostics: [] }); }
      }
    } catch (e) {
      connection.console.error(`workspace check failed: ${(e as Error).message}`);
    } finally {
      progress?.done();
      if (token === scanToken) { scanning = false; sendStatus(); }
    }
  }

  function publishOutcome(outcome: CheckOutcome, manifests: string[] = []): void {
    for (const s of outcome.skipped) {
      notGraphFiles.add(s);
      // It may have had problems while it looked like an edge list: clear them.
      if (published.delete(s)) void connection.sendDiagnostics({ uri: URI.file(s).toString(), diagnostics: [] });
    }
    for (const f of outcome.files) {
      notGraphFiles.delete(f.path);
      published.set(f.path, f);
      void connection.sendDiagnostics({ uri: URI.file(f.path).toString(), diagnostics: f.problems.map((p) => toDiagnostic(p, f.path)) });
    }
    const byManifest = new Map<string, Problem[]>(manifests.map((m) => [m, []]));
    for (const m of outcome.manifestProblems) {
      if (!byManifest.has(m.path)) byManifest.set(m.path, []);
      byManifest.get(m.path)!.push(m.problem);
    }
    for (const [m, problems] of byManifest) {
      manifestPublished.set(m, problems);
      void connection.sendDiagnostics({ uri: URI.file(m).toString(), diagnostics: problems.map((p) => toDiagnostic(p, m)) });
    }
    for (const g of outcome.graphs) for (const f of g.files) graphOf.set(f, g.files);
    sendStatus();
  }

  function sendStatus(): void {
    const s: StatusParams = { filesChecked: published.size, errors: 0, warnings: 0, infos: 0, busy: scanning || pending.size > 0 };
    for (const r of [...published.values()]) for (const p of r.problems) count(s, p);
    for (const ps of manifestPublished.values()) for (const p of ps) count(s, p);
    void connection.sendNotification(StatusNotification.method, s);
  }
  const count = (s: StatusParams, p: Problem) => { if (p.severity === 'error') s.errors++; else if (p.severity === 'warning') s.warnings++; else s.infos++; };

  /** Re-checks a changed file with its folder and its graph, after a short quiet period. */
  function schedule(abs: string): void {
    const old = pending.get(abs);
    if (old) clearTimeout(old);
    pending.set(abs, setTimeout(() => { pending.delete(abs); void recheck(abs); }, 250));
    sendStatus();
  }

  async function recheck(abs: string): Promise<void> {
    try {
      if (path.basename(abs) === MANIFEST_NAME) {
        // A manifest change re-checks everything below its folder.
        const found = collect([path.dirname(abs)], { exclude: excluded });
        publishOutcome(await service.check([...found.files.map((f) => path.resolve(f)), abs]), [abs]);
        return;
      }
      const dir = path.dirname(abs);
      const siblings = collect([dir], { exclude: excluded }).files.map((f) => path.resolve(f)).filter((f) => path.dirname(f) === dir);
      const files = new Set([...siblings, ...(graphOf.get(abs) ?? [])]);
      if (!fs.existsSync(abs)) {
        files.delete(abs);
        published.delete(abs);
        void connection.sendDiagnostics({ uri: URI.file(abs).toString(), diagnostics: [] });
      }
      if (files.size) publishOutcome(await service.check([...files]));
    } catch (e) {
      connection.console.error(`check of ${abs} failed: ${(e as Error).message}`);
    } finally {
      sendStatus();
    }
  }

  const relevant = (abs: string) => (isSupportedFile(abs) || path.basename(abs) === MANIFEST_NAME) && !excluded(abs);

  documents.onDidSave((e) => { const f = URI.parse(e.document.uri).fsPath; if (relevant(f)) schedule(f); });
  connection.onDidChangeWatchedFiles((e) => {
    for (const c of e.changes) {
      const f = URI.parse(c.uri).fsPath;
      if (relevant(f)) schedule(f);
    }
  });

  function toDiagnostic(p: Problem, file: string): Diagnostic {
    const line = Math.max(0, (p.line ?? 1) - 1);
    const col = Math.max(0, (p.column ?? 1) - 1);
    const len = p.line !== undefined ? Math.max(1, p.locations?.[0]?.length ?? 1) : 0;
    const d: Diagnostic = {
      range: { start: { line, character: col }, end: { line, character: col + len } },
      severity: p.severity === 'error' ? DiagnosticSeverity.Error : p.severity === 'warning' ? DiagnosticSeverity.Warning : DiagnosticSeverity.Information,
      code: p.code,
      codeDescription: { href: DOCS_URL + p.code },
      source: 'hopscope',
      message: p.message,
      data: { count: p.count },
    };
    if (relatedInfo && p.locations && p.locations.length > 1 && p.line !== undefined) {
      const related: DiagnosticRelatedInformation[] = [];
      for (const l of p.locations.slice(1, 50)) {
        if (l.line === undefined) continue;
        const c0 = (l.column ?? 1) - 1;
        related.push({
          location: { uri: URI.file(file).toString(), range: { start: { line: l.line - 1, character: c0 }, end: { line: l.line - 1, character: c0 + (l.length ?? 1) } } },
          message: l.detail ?? `also here`,
        });
      }
      if (related.length) d.relatedInformation = related;
    }
    return d;
  }

  // ---- hovers ----------------------------------------------------------------------------------

  connection.onHover(async (params): Promise<Hover | null> => {
    const doc = documents.get(params.textDocument.uri);
    if (!doc) return null;
    const docPath = URI.parse(doc.uri).fsPath;
    const lineText = doc.getText({ start: { line: params.position.line, character: 0 }, end: { line: params.position.line + 1, character: 0 } }).replace(/\r?\n$/, '');
    const ch = params.position.character;

    // In an edge list: a node id under the cursor, and explanations of problems here.
    const reader = readerFor(docPath);
    if (reader?.format === 'edgelist') {
      const parts: string[] = [];
      const report = published.get(docPath);
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
        const info = await service.nodeInfo(docPath, Number(tok.text));
        if (info) parts.unshift(nodeInfoMarkdown(info));
      }
      if (!parts.length) return null;
      return { contents: { kind: 'markdown', value: [...new Set(parts)].join('\n\n---\n\n') } };
    }

    // Anywhere else: a string that names a graph file.
    const lit = pathLiteralAt(lineText, ch);
    if (!lit) return null;
    const target = resolveTarget(lit.text, docPath);
    if (!target) return null;
    const summary = await summarise(target, true);
    const range = { start: { line: params.position.line, character: lit.start }, end: { line: params.position.line, character: lit.end } };
    if (summary.status === 'checking' || !summary.report) {
      return { contents: { kind: 'markdown', value: `**${path.basename(target)}** — checking…` }, range };
    }
    const open = `command:hopscope.openViewer?${encodeURIComponent(JSON.stringify([URI.file(target).toString()]))}`;
    const field = `command:hopscope.openFieldPanel?${encodeURIComponent(JSON.stringify([URI.file(target).toString()]))}`;
    return {
      contents: { kind: 'markdown', value: fileSummaryMarkdown(path.basename(target), summary.report, { ...(summary.size !== undefined ? { size: summary.size } : {}), ...(summary.graphFiles ? { graphFiles: summary.graphFiles } : {}), viewerCommand: open, fieldCommand: field }) },
      range,
    };
  });

  function resolveTarget(text: string, fromDoc: string): string | undefined {
    const candidates = path.isAbsolute(text)
      ? [text]
      : [path.resolve(path.dirname(fromDoc), text), ...folders.map((f) => path.resolve(URI.parse(f.uri).fsPath, text))];
    return candidates.find((c) => { try { return fs.statSync(c).isFile(); } catch { return false; } });
  }

  async function summarise(abs: string, wait: boolean): Promise<FileSummary> {
    const uri = URI.file(abs).toString();
    if (!isSupportedFile(abs) || (notGraphFiles.has(abs) && !published.has(abs))) return { uri, status: 'unsupported' };
    let size: number;
    let st: fs.Stats;
    try { st = fs.statSync(abs); } catch { return { uri, status: 'missing' }; }
    // A named pipe or a device is never read (opening a pipe blocks until a writer comes).
    if (!st.isFile()) return { uri, status: 'unsupported' };
    size = st.size;
    let report = published.get(abs);
    if (!report) {
      if (!wait || size > HOVER_WAIT_BYTES) {
        schedule(abs);
        return { uri, status: 'checking', size };
      }
      await recheck(abs);
      report = published.get(abs);
    }
    return report ? { uri, status: 'ok', report, size, ...(graphOf.get(abs) ? { graphFiles: graphOf.get(abs)! } : {}) } : { uri, status: 'checking', size };
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
    const report = published.get(file);
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

  // ---- custom requests -------------------------------------------------------------------------

  connection.onRequest(FileSummaryRequest.method, async (p: FileSummaryRequest.Params) => summarise(URI.parse(p.uri).fsPath, p.wait !== false));
  connection.onRequest(TensorPageRequest.method, async (p: TensorPageRequest.Params) =>
    (await service.tensorPage(URI.parse(p.uri).fsPath, p.tensor, p.rowStart, p.rowCount, p.maxCols)) ?? null);
  connection.onRequest(TensorStatsRequest.method, async (p: TensorStatsRequest.Params) =>
    (await service.tensorStats(URI.parse(p.uri).fsPath, p.tensor, p.maxCols)) ?? null);
  connection.onRequest(NodeInfoRequest.method, async (p: NodeInfoRequest.Params) =>
    (await service.nodeInfo(URI.parse(p.uri).fsPath, p.node, p.maxNeighbours)) ?? null);
  connection.onRequest(FixedCopyRequest.method, async (p: FixedCopyRequest.Params) => {
    const file = URI.parse(p.uri).fsPath;
    const report = published.get(file) ?? (await summarise(file, true)).report;
    if (p.write) return writeFixedCopy(file, p.target, report);
    return describeFixedCopy(file, report);
  });
  connection.onRequest(RecheckRequest.method, async () => { await scanWorkspace(); return null; });
  registerAnalysisRequests(connection, service);

  connection.onShutdown(async () => { await worker.dispose(); });

  documents.listen(connection);
  connection.listen();
}

if (typeof require !== 'undefined' && typeof module !== 'undefined' && require.main === module) {
  startServer(createConnection(ProposedFeatures.all), path.join(__dirname, 'worker.js'));
}

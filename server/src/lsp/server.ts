/**
 * Language server wiring: turns check results into LSP diagnostics. The only file that speaks LSP;
 * all checking is in server/src/core and server/src/node.
 */
import {
  createConnection, DiagnosticSeverity, ProposedFeatures, TextDocumentSyncKind,
  type Diagnostic, type DiagnosticRelatedInformation,
} from 'vscode-languageserver/node';
import { URI } from 'vscode-uri';
import * as path from 'node:path';
import { checkPaths } from '../node/load';
import { isSupportedFile, MANIFEST_NAME } from '../core/formats';
import type { Problem } from '../core/formats/types';

export const README_URL = 'https://github.com/hopscope/hopscope#problem-';

const connection = createConnection(ProposedFeatures.all);
const pending = new Map<string, NodeJS.Timeout>();
let relatedInfo = false;

connection.onInitialize((params) => {
  relatedInfo = params.capabilities.textDocument?.publishDiagnostics?.relatedInformation === true;
  return {
    capabilities: {
      textDocumentSync: { openClose: true, change: TextDocumentSyncKind.None, save: { includeText: false } },
    },
    serverInfo: { name: 'hopscope' },
  };
});

function schedule(file: string): void {
  const old = pending.get(file);
  if (old) clearTimeout(old);
  pending.set(file, setTimeout(() => { pending.delete(file); publish(file); }, 200));
}

function publish(file: string): void {
  const base = path.basename(file);
  // A manifest change re-checks every graph file in its folder.
  const targets = base === MANIFEST_NAME ? [path.dirname(file)] : [file];
  const result = checkPaths(targets);
  for (const f of result.files) {
    const abs = path.resolve(f.path);
    void connection.sendDiagnostics({ uri: URI.file(abs).toString(), diagnostics: f.problems.map((p) => toDiagnostic(p, abs)) });
  }
  for (const m of result.manifestProblems) {
    void connection.sendDiagnostics({ uri: URI.file(path.resolve(m.path)).toString(), diagnostics: [toDiagnostic(m.problem, path.resolve(m.path))] });
  }
}

function toDiagnostic(p: Problem, file: string): Diagnostic {
  const line = (p.line ?? 1) - 1;
  const col = (p.column ?? 1) - 1;
  const len = p.locations?.[0]?.length ?? (p.line !== undefined ? 1 : 0);
  const d: Diagnostic = {
    range: { start: { line, character: col }, end: { line, character: col + len } },
    severity: p.severity === 'error' ? DiagnosticSeverity.Error : p.severity === 'warning' ? DiagnosticSeverity.Warning : DiagnosticSeverity.Information,
    code: p.code,
    codeDescription: { href: README_URL + p.code },
    source: 'hopscope',
    message: p.message,
  };
  if (relatedInfo && p.locations && p.locations.length > 1) {
    const related: DiagnosticRelatedInformation[] = [];
    for (const l of p.locations.slice(1, 20)) {
      if (l.line === undefined) continue;
      related.push({
        location: { uri: URI.file(file).toString(), range: { start: { line: l.line - 1, character: (l.column ?? 1) - 1 }, end: { line: l.line - 1, character: (l.column ?? 1) - 1 + (l.length ?? 1) } } },
        message: l.detail ?? p.code,
      });
    }
    if (related.length) d.relatedInformation = related;
  }
  return d;
}

connection.onDidOpenTextDocument((e) => {
  const file = URI.parse(e.textDocument.uri).fsPath;
  if (isSupportedFile(file) || path.basename(file) === MANIFEST_NAME) schedule(file);
});
connection.onDidSaveTextDocument((e) => {
  const file = URI.parse(e.textDocument.uri).fsPath;
  if (isSupportedFile(file) || path.basename(file) === MANIFEST_NAME) schedule(file);
});
connection.onDidChangeWatchedFiles((e) => {
  for (const c of e.changes) {
    const file = URI.parse(c.uri).fsPath;
    if (c.type === 3) { void connection.sendDiagnostics({ uri: c.uri, diagnostics: [] }); continue; }
    if (isSupportedFile(file) || path.basename(file) === MANIFEST_NAME) schedule(file);
  }
});

connection.listen();

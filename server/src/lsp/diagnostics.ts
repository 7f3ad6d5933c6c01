/**
 * Problems → LSP diagnostics, and the publisher that sends a file's diagnostics only when they
 * differ from what the editor already shows: a re-check that finds the same problems sends
 * nothing, so one file event gives at most one publish per file whose problems changed.
 */
import { DiagnosticSeverity, type Connection, type Diagnostic, type DiagnosticRelatedInformation } from 'vscode-languageserver/node';
import { URI } from 'vscode-uri';
import type { Problem } from '../core/formats/types';

export function toDiagnostic(p: Problem, file: string, docsUrl: string, relatedInfo: boolean): Diagnostic {
  const line = Math.max(0, (p.line ?? 1) - 1);
  const col = Math.max(0, (p.column ?? 1) - 1);
  const len = p.line !== undefined ? Math.max(1, p.locations?.[0]?.length ?? 1) : 0;
  const d: Diagnostic = {
    range: { start: { line, character: col }, end: { line, character: col + len } },
    severity: p.severity === 'error' ? DiagnosticSeverity.Error : p.severity === 'warning' ? DiagnosticSeverity.Warning : DiagnosticSeverity.Information,
    code: p.code,
    codeDescription: { href: docsUrl + p.code },
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

/** Sends `textDocument/publishDiagnostics` for a file only when its diagnostics changed. */
export class DiagnosticsPublisher {
  /** What the editor shows per file (absolute path): the JSON of the last diagnostics sent. */
  private readonly shown = new Map<string, string>();
  /** Publishes sent since start (figures for tests and the soak run's log). */
  sent = 0;

  constructor(private readonly connection: Connection) {}

  /** Shows `diagnostics` for `file` unless the editor already shows exactly these. */
  publish(file: string, diagnostics: Diagnostic[]): void {
    const key = diagnostics.length ? JSON.stringify(diagnostics) : '';
    if ((this.shown.get(file) ?? '') === key) {
      if (!key) this.shown.delete(file);
      return;
    }
    if (key) this.shown.set(file, key);
    else this.shown.delete(file);
    this.sent++;
    void this.connection.sendDiagnostics({ uri: URI.file(file).toString(), diagnostics });
  }

  /** Removes whatever the editor shows for `file` (a deleted file, or text found not to be a graph). */
  clear(file: string): void {
    this.publish(file, []);
  }

  /** Files that currently show diagnostics. */
  files(): IterableIterator<string> {
    return this.shown.keys();
  }
}

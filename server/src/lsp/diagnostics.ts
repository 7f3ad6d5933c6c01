/**
 * Problems → LSP diagnostics, and the publisher that sends a file's diagnostics only when they
 * differ from what the editor already shows: a re-check that finds the same problems sends
 * nothing, so one file event gives at most one publish per file whose problems changed.
 */
import { DiagnosticSeverity, type Connection, type Diagnostic, type DiagnosticRelatedInformation } from 'vscode-languageserver/node';
import { URI } from 'vscode-uri';
import type { Problem } from '../core/formats/types';

/**
 * A dataset problem's message with the graph it is in, unless the message already names it:
 * "… (graph 17)" or "… (graph 17 and 4 more graphs)".
 */
export function withGraph(p: Problem): string {
  if (p.graph === undefined) return p.message;
  if (new RegExp(`\\bgraphs? ${p.graph}\\b`).test(p.message)) return p.message;
  const more = (p.graphs ?? 1) - 1;
  return `${p.message} (graph ${p.graph}${more > 0 ? ` and ${more} more graph${more === 1 ? '' : 's'}` : ''})`;
}

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
    message: withGraph(p),
    data: { count: p.count, ...(p.graph !== undefined ? { graph: p.graph, graphs: p.graphs ?? 1 } : {}) },
  };
  // Dataset problems: every listed place in a graph, the first one included (the diagnostic's own
  // range is only the first), each saying which graph; where a place gives its graph's slice of
  // lines, that slice is pointed at too.
  const inGraphs = p.locations?.some((l) => l.graph !== undefined) ?? false;
  if (relatedInfo && p.locations && (p.locations.length > 1 || inGraphs) && p.line !== undefined) {
    const related: DiagnosticRelatedInformation[] = [];
    const uri = URI.file(file).toString();
    const slices = new Set<number>();
    for (const l of p.locations.slice(inGraphs ? 0 : 1, 50)) {
      if (l.line === undefined) continue;
      const c0 = (l.column ?? 1) - 1;
      const where = l.graph !== undefined ? `graph ${l.graph}: ` : '';
      related.push({
        location: { uri, range: { start: { line: l.line - 1, character: c0 }, end: { line: l.line - 1, character: c0 + (l.length ?? 1) } } },
        message: where + (l.detail ?? `also here`),
      });
      if (l.graph !== undefined && l.graphLines && !slices.has(l.graph)) {
        slices.add(l.graph);
        related.push({
          location: { uri, range: { start: { line: l.graphLines.first - 1, character: 0 }, end: { line: l.graphLines.last, character: 0 } } },
          message: `graph ${l.graph}: its lines ${l.graphLines.first}–${l.graphLines.last}`,
        });
      }
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

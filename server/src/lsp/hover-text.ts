/**
 * Hover texts: finding a file path under the cursor in code, and the Markdown shown for a graph
 * file or a node id. No LSP types: plain strings in, plain strings out (unit-tested directly).
 */
import type { FileReport } from '../core/checks/check-set';
import { isSupportedFile } from '../core/formats';
import { CODES } from '../../../common/problem-codes';
import type { ProblemCode } from '../core/formats/types';
import type { NodeInfo } from '../../../common/protocol';
import type { DatasetSummary, TypedSummary } from '../../../common/report';
import type { CeilingResult } from '../../../common/ceiling';

export interface Literal {
  text: string;
  start: number;
  end: number;
}

const QUOTES = new Set(['"', "'", '`']);

/**
 * The string literal (or, failing that, the bare path-like token) at `character` of `line`, when
 * it names a supported graph file. Handles Python/JS/TS/JSON/YAML/TOML/shell strings, Markdown
 * links and inline code.
 */
export function pathLiteralAt(line: string, character: number): Literal | undefined {
  // Quoted: find the quote pair that encloses the cursor.
  for (let open = Math.min(character, line.length - 1); open >= 0; open--) {
    const q = line[open]!;
    if (!QUOTES.has(q)) continue;
    const close = line.indexOf(q, open + 1);
    if (close < 0 || close < character) continue;
    const text = line.slice(open + 1, close);
    if (isSupportedFile(text)) return { text, start: open + 1, end: close };
    break;
  }
  // Bare token (shell arguments, YAML values, Markdown links): run of path characters.
  const isPathChar = (c: string) => /[A-Za-z0-9_.\-/\\~+@%]/.test(c);
  let s = character, e = character;
  while (s > 0 && isPathChar(line[s - 1]!)) s--;
  while (e < line.length && isPathChar(line[e]!)) e++;
  const text = line.slice(s, e);
  if (text && isSupportedFile(text)) return { text, start: s, end: e };
  return undefined;
}

/** The integer token at `character`, with its span, if any. */
export function integerAt(line: string, character: number): Literal | undefined {
  let s = character, e = character;
  const digit = (c: string | undefined) => c !== undefined && c >= '0' && c <= '9';
  while (s > 0 && digit(line[s - 1])) s--;
  while (e < line.length && digit(line[e])) e++;
  if (s > 0 && line[s - 1] === '-') s--;
  if (e === s || (line[s] === '-' && e === s + 1)) return undefined;
  // Part of a decimal number or a word: not a node id.
  if ((s > 0 && /[.\w]/.test(line[s - 1]!)) || (e < line.length && /[.\w]/.test(line[e]!))) return undefined;
  return { text: line.slice(s, e), start: s, end: e };
}

export function escapeMarkdown(s: string): string {
  return s.replace(/[\\`*_{}[\]()#+\-.!|<>]/g, '\\$&');
}


/** What the hover says of the accuracy ceiling: the worker's answer, still computing, or why there is none. */
export type CeilingHover = CeilingResult | { computing: true } | { error: string };

const pct = (x: number) => `${(100 * x).toFixed(x >= 0.9995 || x === 0 ? 0 : 1)}%`;
const num = (x: number) => x.toLocaleString('en-US');
const spread = (s: DatasetSummary['nodes']) => `${num(s.min)}–${num(s.max)} (mean ${s.mean.toFixed(1)})`;

/** A dataset of many graphs in a few lines: graphs, nodes and edges per graph, label classes, splits. */
export function datasetMarkdown(d: DatasetSummary): string[] {
  const lines = [`**Dataset of ${num(d.graphs)} graph${d.graphs === 1 ? '' : 's'}** · nodes per graph ${spread(d.nodes)} · edge entries per graph ${spread(d.edges)}`, ''];
  if (d.graphLabels) {
    const shown = d.graphLabels.classes.slice(0, 10).map((c, i) => `${escapeMarkdown(c)}: ${num(d.graphLabels!.counts[i] ?? 0)}`);
    const more = d.graphLabels.classes.length > 10 ? `, … ${d.graphLabels.classes.length - 10} more` : '';
    lines.push(`Graph labels: ${d.graphLabels.classes.length} class${d.graphLabels.classes.length === 1 ? '' : 'es'} (${shown.join(', ')}${more})`, '');
  } else lines.push('No graph labels.', '');
  if (d.splits) lines.push(`Splits: train ${num(d.splits.train)} · val ${num(d.splits.val)} · test ${num(d.splits.test)}`, '');
  return lines;
}

/** A typed graph: node types with counts, relations with their edge entries. */
export function typedMarkdown(t: TypedSummary): string[] {
  const types = Object.entries(t.nodeTypes);
  const lines = [`**Typed graph**: ${types.map(([k, v]) => `${escapeMarkdown(k)} (${num(v)})`).join(', ')}`, ''];
  if (t.relations.length) {
    lines.push('| source | relation | target | edge entries |', '|---|---|---|---:|');
    for (const r of t.relations.slice(0, 12)) lines.push(`| ${escapeMarkdown(r.source)} | ${escapeMarkdown(r.name)} | ${escapeMarkdown(r.target)} | ${num(r.edges)} |`);
    if (t.relations.length > 12) lines.push(`| … ${t.relations.length - 12} more | | | |`);
    lines.push('');
  }
  return lines;
}

/** The accuracy ceiling in one or two lines (what the number means, briefly). */
export function ceilingMarkdown(c: CeilingHover): string[] {
  if ('computing' in c) return ['Accuracy ceiling of message passing: computing… (hover again in a moment)', ''];
  if ('error' in c) return [];
  if (c.task === 'graph') {
    if (c.ceiling === null) {
      return [`Numeric targets: ${num(c.conflictingGroups)} group${c.conflictingGroups === 1 ? '' : 's'} of graphs 1-WL cannot tell apart hold different targets` +
        (c.errorFloor ? ` (lowest reachable mean squared error ${c.errorFloor.mse.toPrecision(3)})` : '') + '.', ''];
    }
    return [`**Accuracy ceiling ${pct(c.ceiling)}**: no message-passing model without extra node features can classify more of these ${num(c.labelled)} labelled graphs correctly ` +
      `(${num(c.conflictingGroups)} group${c.conflictingGroups === 1 ? '' : 's'} of 1-WL-equivalent graphs carry different labels).`, ''];
  }
  if (!c.perLayer.length) return [];
  const steps = c.perLayer.map((l) => `L=${l.layers}: ${pct(l.ceiling)}`).join(' · ');
  return [`**Accuracy ceiling by layers** (${num(c.labelled)} labelled nodes): ${steps}`, ''];
}

/** Markdown summary of a checked file, for hovers on its path. */
export function fileSummaryMarkdown(name: string, report: FileReport, opts: { size?: number; graphFiles?: string[]; viewerCommand?: string; fieldCommand?: string; ceiling?: CeilingHover } = {}): string {
  const lines: string[] = [];
  const size = opts.size !== undefined ? ` · ${formatBytes(opts.size)}` : '';
  lines.push(`**${escapeMarkdown(name)}** — ${report.format}${size}`, '');
  if (report.tensors.length) {
    lines.push('| tensor | dtype | shape | role |', '|---|---|---|---|');
    for (const t of report.tensors.slice(0, 12)) {
      lines.push(`| ${escapeMarkdown(t.name)} | ${t.dtype} | [${t.shape.join(', ')}] | ${t.role} |`);
    }
    if (report.tensors.length > 12) lines.push(`| … ${report.tensors.length - 12} more | | | |`);
    lines.push('');
  }
  if (report.dataset) lines.push(...datasetMarkdown(report.dataset));
  if (report.typed) lines.push(...typedMarkdown(report.typed));
  if (opts.ceiling) lines.push(...ceilingMarkdown(opts.ceiling));
  const g = report.graph;
  if (g) {
    lines.push(`${g.nodes} nodes · ${g.edges} edge entries · ${g.directed ? 'directed' : 'undirected'} · ` +
      `${g.selfLoops} self-loop${g.selfLoops === 1 ? '' : 's'} · ${g.components} component${g.components === 1 ? '' : 's'}`);
    lines.push('');
  }
  const counts = { error: 0, warning: 0, info: 0 };
  for (const p of report.problems) counts[p.severity]++;
  if (report.problems.length === 0) lines.push('No problems found.');
  else {
    lines.push(`Problems: ${counts.error} error${counts.error === 1 ? '' : 's'}, ${counts.warning} warning${counts.warning === 1 ? '' : 's'}, ${counts.info} info — ` +
      [...new Set(report.problems.map((p) => `\`${p.code}\``))].join(', '));
  }
  if (opts.graphFiles && opts.graphFiles.length > 1) {
    lines.push('', `Checked together with: ${opts.graphFiles.filter((f) => !f.endsWith(name)).map((f) => escapeMarkdown(baseName(f))).join(', ')}`);
  }
  const links: string[] = [];
  if (opts.viewerCommand) links.push(`[Open in the tensor viewer](${opts.viewerCommand})`);
  if (opts.fieldCommand && hasStructure(report)) links.push(`[Open the receptive-field panel](${opts.fieldCommand})`);
  if (links.length) lines.push('', links.join(' · '));
  return lines.join('\n');
}

/** Whether the file holds the edges of a graph (the receptive-field panel needs them). */
export function hasStructure(report: FileReport): boolean {
  return report.tensors.some((t) => t.role === 'edge-index' || t.role === 'adjacency');
}

export function nodeInfoMarkdown(info: NodeInfo): string {
  const list = (xs: number[], deg: number) => (xs.length ? xs.join(', ') + (deg > xs.length ? `, … (${deg - xs.length} more)` : '') : 'none');
  return [
    `**node ${info.node}** of ${info.nodes}`,
    '',
    `out-degree ${info.outDegree} → ${list(info.outNeighbours, info.outDegree)}`,
    '',
    `in-degree ${info.inDegree} ← ${list(info.inNeighbours, info.inDegree)}`,
  ].join('\n');
}

export function codeExplanationMarkdown(code: ProblemCode, href: string): string {
  return `\`${code}\`: ${CODES[code].summary} [More](${href})`;
}

export function formatBytes(n: number): string {
  if (n < 1024) return `${n} B`;
  if (n < 1024 ** 2) return `${(n / 1024).toFixed(1)} KiB`;
  if (n < 1024 ** 3) return `${(n / 1024 ** 2).toFixed(1)} MiB`;
  return `${(n / 1024 ** 3).toFixed(2)} GiB`;
}

function baseName(p: string): string {
  return p.slice(Math.max(p.lastIndexOf('/'), p.lastIndexOf('\\')) + 1);
}

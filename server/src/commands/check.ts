/**
 * `hopscope check PATH...`: problems in graph files and folders, as a table or one JSON report.
 * Every check lives in server/src/core and server/src/node, shared with the language server; this
 * file holds the options, the output and the exit codes.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import type { CliIo, Command } from './types';
import { UsageError } from './types';
import { GRAPH_OPTIONS, graphOptions, guarded, oneOf, parseCommandLine } from './args';
import { styler } from './style';
import { checkPaths, loadManifest, type RelatedProblem, type SkippedFile } from '../node/load';
import type { CheckSetOptions, FileReport } from '../core/checks/check-set';
import type { Problem, Severity } from '../core/formats/types';
import type { DatasetSummary } from '../../../common/report';
import { severityAtLeast } from '../../../common/problem-codes';
import { phaseTotals } from '../core/timing';
import type { TypedSummary } from '../../../common/report';

const USAGE = `Usage: hopscope check PATH... [options]

Checks graph tensor files (.npy .npz .pt .pth .safetensors .mtx .json, edge lists .txt .edges .el
.csv .tsv and their .gz) and folders of them, recursively.

Options:
  --json                      print one JSON report instead of tables
  --manifest FILE             use this hopscope.json (in addition to any found beside the files)
  --undirected | --directed   declare every graph undirected or directed
  --num-nodes N               declare the node count
  --index-base 0|1            declare that node ids start at 0 or at 1
  --fail-on error|warning|never
                              exit 1 when a problem at or above this severity is found (default: error)
  -h, --help                  show this help
  -v, --version               show the version

Exit codes: 0 = checked, nothing at or above --fail-on; 1 = problems at or above --fail-on;
2 = usage error, or a file could not be read at all.`;

const OPTIONS = {
  ...GRAPH_OPTIONS,
  json: { type: 'boolean' },
  manifest: { type: 'string' },
  directed: { type: 'boolean' },
  undirected: { type: 'boolean' },
  'fail-on': { type: 'string' },
} as const;

const FAIL_ON = ['error', 'warning', 'never'] as const;

interface CheckArgs {
  paths: string[];
  json: boolean;
  manifest?: string;
  options: CheckSetOptions;
  failOn: Severity | 'never';
}

function parseCheckArgs(argv: string[]): CheckArgs {
  const { values: v, positionals } = parseCommandLine(argv, OPTIONS);
  if (v.directed && v.undirected) throw new UsageError('--directed and --undirected exclude each other');
  const options = graphOptions(v);
  if (v.directed) options.directed = true;
  if (v.undirected) options.directed = false;
  if (positionals.length === 0) throw new UsageError('no PATH given');
  return {
    paths: positionals, json: v.json === true, options,
    failOn: v['fail-on'] === undefined ? 'error' : oneOf('--fail-on', v['fail-on'], FAIL_ON),
    ...(v.manifest !== undefined ? { manifest: v.manifest } : {}),
  };
}

function run(argv: string[], io: CliIo): number {
  return guarded('check', USAGE, io, () => check(parseCheckArgs(argv), io));
}

function check(args: CheckArgs, io: CliIo): number {
  const inputs = [...args.paths];
  if (args.manifest) {
    const m = loadManifest(args.manifest);
    if (m.error) { io.err(`hopscope check: ${m.error}\n`); return 2; }
    inputs.push(args.manifest);
  }
  const t0 = performance.now();
  const result = checkPaths(inputs, args.options, { explainNamedJson: true, refuseNamedText: true });
  const total = performance.now() - t0;

  for (const m of result.missing) io.err(`hopscope check: ${m}: no such file or folder\n`);
  for (const u of result.unsupported) io.err(`hopscope check: ${u}: not a supported graph file (see hopscope --help)\n`);

  const files = result.files;
  const all = [...files.flatMap((f) => f.problems), ...result.manifestProblems.map((m) => m.problem)];
  const summary: Summary = {
    files: files.length,
    errors: all.filter((p) => p.severity === 'error').length,
    warnings: all.filter((p) => p.severity === 'warning').length,
    infos: all.filter((p) => p.severity === 'info').length,
  };
  // Siblings read beside the asked files that disagree with them: their problems count too.
  const related = result.related.map((r) => r.problem);
  if (related.length) {
    summary.related = {
      errors: related.filter((p) => p.severity === 'error').length,
      warnings: related.filter((p) => p.severity === 'warning').length,
    };
  }

  if (args.json) {
    const report = {
      version: 1,
      files: [
        ...files.map(jsonFile),
        ...result.manifestProblems.map((m) => ({ path: m.path, format: 'json', tensors: [], graph: null, problems: [jsonProblem(m.problem)] })),
      ],
      ...(result.related.length ? { related: result.related.map((r) => ({ path: r.path, for: r.for, problem: jsonProblem(r.problem) })) } : {}),
      // Text files left out because they are not edge lists, with the rule that decided.
      skipped: result.skipped,
      summary,
    };
    io.out(JSON.stringify(report, null, 2) + '\n');
  } else {
    io.out(withSkipped(renderText(files, result.manifestProblems, result.related, summary, io), result.skipped, io));
  }

  if (process.env.HOPSCOPE_TIMINGS) {
    const ph = phaseTotals();
    const bytes = files.reduce((s, f) => s + fileSize(f.path), 0);
    const build = ph.build ?? 0;
    io.err(`HOPSCOPE_TIMINGS ${JSON.stringify({
      read: round(ph.read ?? 0), build: round(build), checks: round((ph.checks ?? 0) - build),
      ...(ph.splits !== undefined ? { splits: round(ph.splits) } : {}),
      ...(ph.datasets !== undefined ? { datasets: round(ph.datasets) } : {}),
      total: round(total), bytes, peakRssMiB: round(process.resourceUsage().maxRSS / 1024),
    })}\n`);
  }

  const unreadable = files.some((f) => f.problems.some((p) => p.code === 'unreadable' && p.severity === 'error'));
  if (result.missing.length || result.unsupported.length || unreadable) return 2;
  if (files.length === 0 && result.manifestProblems.length === 0) {
    const n = result.skipped.length;
    io.err(`hopscope check: no supported graph files found${n ? ` (${n} text file${n === 1 ? '' : 's'} skipped: not edge lists)` : ''}\n`);
    return 2;
  }
  const failOn = args.failOn;
  if (failOn !== 'never' && [...all, ...related].some((p) => severityAtLeast(p.severity, failOn))) return 1;
  return 0;
}

function jsonFile(f: FileReport) {
  return {
    path: f.path, format: f.format, tensors: f.tensors, graph: f.graph,
    ...(f.edgeSplits ? { edgeSplits: f.edgeSplits } : {}), ...(f.typed ? { typed: f.typed } : {}),
    ...(f.dataset ? { dataset: f.dataset } : {}), problems: f.problems.map(jsonProblem),
  };
}

function jsonProblem(p: Problem) {
  const out: Record<string, unknown> = { code: p.code, severity: p.severity, message: p.message };
  if (p.tensor !== undefined) out.tensor = p.tensor;
  if (p.relation !== undefined) out.relation = p.relation;
  if (p.nodeType !== undefined) out.nodeType = p.nodeType;
  out.count = p.count;
  if (p.graph !== undefined) { out.graph = p.graph; out.graphs = p.graphs ?? 1; }
  if (p.line !== undefined) { out.line = p.line; out.column = p.column ?? 1; }
  if (p.locations?.length) out.locations = p.locations.slice(0, 20);
  return out;
}

// ---------------------------------------------------------------------------------------------
// Text output

interface Summary {
  files: number;
  errors: number;
  warnings: number;
  infos: number;
  /** Problems of siblings read beside the asked files (not asked for themselves). */
  related?: { errors: number; warnings: number };
}

function renderText(files: FileReport[], manifestProblems: Array<{ path: string; problem: Problem }>,
  related: RelatedProblem[], summary: Summary, io: CliIo): string {
  const c = styler(io);
  const sevLabel = (s: Severity) => (s === 'error' ? c('red', 'error  ') : s === 'warning' ? c('yellow', 'warning') : c('blue', 'info   '));
  const lines: string[] = [];
  const codeWidth = Math.max(10, ...files.flatMap((f) => f.problems.map((p) => p.code.length)));
  const problemLine = (p: Problem) => {
    const where = p.line !== undefined ? `${p.line}:${p.column ?? 1}` : p.tensor ?? '';
    return `  ${sevLabel(p.severity)}  ${p.code.padEnd(codeWidth)}  ${c('dim', where.padEnd(10))} ${p.message}`;
  };
  for (const f of files) {
    lines.push(c('bold', f.path) + c('dim', `  (${f.format})`));
    for (const t of f.tensors) {
      const range = t.min !== null ? `  ${fmt(t.min)}..${fmt(t.max!)}` : '';
      const nf = t.nonFinite ? c('red', `  ${t.nonFinite} non-finite`) : '';
      lines.push(c('dim', `  ${t.name.padEnd(14)} ${t.dtype.padEnd(8)} [${t.shape.join(', ')}]  ${t.role}${range}`) + nf);
    }
    if (f.graph) {
      const g = f.graph;
      lines.push(`  graph${f.typed ? ' (types forgotten)' : ''}: ${g.nodes} nodes, ${g.edges} edge entries, ${g.directed ? 'directed' : 'undirected'}, ` +
        `${g.components} component${g.components === 1 ? '' : 's'}, ${g.selfLoops} self-loops, ` +
        `${g.duplicateEdges} duplicates, ${g.isolatedNodes} isolated` + (g.indexBase === 1 ? ', 1-based ids' : ''));
    }
    if (f.typed) lines.push(...typedLines(f.typed));
    if (f.dataset) lines.push(...datasetLines(f.dataset));
    if (f.edgeSplits) {
      const s = f.edgeSplits;
      const side = (n: number | null, what: string) => (n === null ? '' : `${n} ${what}`);
      const split = (name: string, x: { pos: number | null; neg: number | null } | null) =>
        x ? `${name} ${[side(x.pos, '+'), side(x.neg, '−')].filter((t) => t).join(' ') || '(unread)'}` : '';
      lines.push(`  link splits: ${s.messageEdges} message edge entries; pairs ` +
        ([split('train', s.train), split('val', s.val), split('test', s.test)].filter((t) => t).join(', ') || 'none'));
    }
    if (f.problems.length === 0) lines.push(c('green', '  no problems'));
    for (const p of f.problems) lines.push(problemLine(p));
    lines.push('');
  }
  for (const m of manifestProblems) {
    lines.push(c('bold', m.path) + c('dim', '  (manifest)'));
    lines.push(problemLine(m.problem));
    lines.push('');
  }
  for (const r of related) {
    lines.push(c('bold', r.path) + c('dim', `  (read beside ${r.for}, not asked for)`));
    lines.push(problemLine(r.problem));
    lines.push('');
  }
  const parts = [
    `${summary.files} file${summary.files === 1 ? '' : 's'}`,
    summary.errors ? c('red', `${summary.errors} error${summary.errors === 1 ? '' : 's'}`) : '0 errors',
    summary.warnings ? c('yellow', `${summary.warnings} warning${summary.warnings === 1 ? '' : 's'}`) : '0 warnings',
    `${summary.infos} info`,
  ];
  if (summary.related) {
    const { errors, warnings } = summary.related;
    const what = [errors ? `${errors} error${errors === 1 ? '' : 's'}` : '', warnings ? `${warnings} warning${warnings === 1 ? '' : 's'}` : '']
      .filter(Boolean).join(' and ');
    if (what) parts.push(`and ${what} in files read beside them`);
  }
  lines.push(parts.join(', '));
  return lines.join('\n') + '\n';
}

/**
 * The text report with the skipped text files listed before its summary line, which gains
 * "N skipped".
 */
function withSkipped(report: string, skipped: SkippedFile[], io: CliIo): string {
  if (skipped.length === 0) return report;
  const c = styler(io);
  const lines = report.replace(/\n$/, '').split('\n');
  const summary = lines.pop()!;
  for (const s of skipped) {
    lines.push(`${s.path}${c('dim', '  (skipped: not an edge list)')}`);
    lines.push(c('dim', `  ${s.reason}`));
    lines.push('');
  }
  lines.push(`${summary}, ${skipped.length} skipped`);
  return lines.join('\n') + '\n';
}

/** The node types and relations of a typed graph (core/typed), for the text report. */
function typedLines(t: TypedSummary): string[] {
  const from = { declared: 'declared', features: 'feature rows', labels: 'labels/masks', ids: 'largest id + 1' } as const;
  const types = Object.entries(t.nodeTypes).map(([name, n]) => `${name} ${n}${t.nodeCountFrom?.[name] ? ` (${from[t.nodeCountFrom[name]!]})` : ''}`);
  return [
    `  node types: ${types.join(', ')}`,
    ...t.relations.map((r) => `  relation ${r.source} —${r.name}→ ${r.target}: ${r.edges} edge entries`),
  ];
}

/** The dataset summary: graphs, nodes and edges per graph, labels, splits. */
function datasetLines(d: DatasetSummary): string[] {
  const spread = (s: DatasetSummary['nodes']) => `${s.min}–${s.max} per graph (mean ${fmt(s.mean)}), ${s.total} in all`;
  const lines = [
    `  dataset: ${d.graphs} graph${d.graphs === 1 ? '' : 's'}; nodes ${spread(d.nodes)}; edge entries ${spread(d.edges)}`,
  ];
  if (d.graphLabels) {
    const shown = d.graphLabels.classes.slice(0, 10).map((c, i) => `${c}: ${d.graphLabels!.counts[i]}`).join(', ');
    lines.push(`  graph labels: ${d.graphLabels.classes.length} class${d.graphLabels.classes.length === 1 ? '' : 'es'} (${shown}${d.graphLabels.classes.length > 10 ? ', …' : ''})`);
  }
  if (d.splits) lines.push(`  splits (graphs): train ${d.splits.train}, val ${d.splits.val}, test ${d.splits.test}`);
  return lines;
}

function fmt(x: number): string {
  return Number.isInteger(x) ? String(x) : x.toPrecision(4);
}

function round(x: number): number {
  return Math.round(x * 10) / 10;
}

function fileSize(p: string): number {
  try {
    return fs.statSync(path.resolve(p)).size;
  } catch {
    return 0;
  }
}

export const checkCommand: Command = {
  name: 'check',
  summary: 'check PATH...            problems in graph files and folders (hopscope check --help)',
  usage: USAGE,
  run,
};

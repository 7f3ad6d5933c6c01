/**
 * The `hopscope` command line. Argument parsing, output and exit codes only: every check lives in
 * server/src/core and server/src/node, shared with the language server.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { checkPaths, loadManifest, type RelatedProblem, type SkippedFile } from './node/load';
import { useParallelPairBuilder } from './node/pair-build';
import type { CheckSetOptions, FileReport } from './core/checks/check-set';
import type { Problem, Severity } from './core/formats/types';
import { severityAtLeast } from '../../common/problem-codes';
import { phaseTotals } from './core/timing';
import { COMMANDS } from './commands';
import type { CliIo } from './commands/types';

const VERSION = '0.1.0';

const CHECK_USAGE = `Usage: hopscope check PATH... [options]

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

function overview(): string {
  const lines = [
    `hopscope ${VERSION}: checks graph tensor files and shows what a message-passing model sees.`,
    '',
    'Commands:',
    '  check PATH...            problems in graph files and folders (hopscope check --help)',
    ...COMMANDS.map((c) => `  ${c.summary}`),
    '',
    'Run hopscope COMMAND --help for the options of one command.',
  ];
  return lines.join('\n');
}

class UsageError extends Error {}

interface CheckArgs {
  paths: string[];
  json: boolean;
  manifest?: string;
  options: CheckSetOptions;
  failOn: Severity | 'never';
}

function parseCheckArgs(argv: string[]): CheckArgs {
  const a: CheckArgs = { paths: [], json: false, options: {}, failOn: 'error' };
  const value = (i: number, flag: string): string => {
    const v = argv[i + 1];
    if (v === undefined || v.startsWith('--')) throw new UsageError(`${flag} needs a value`);
    return v;
  };
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i]!;
    const [flag, inline] = arg.startsWith('--') && arg.includes('=') ? [arg.slice(0, arg.indexOf('=')), arg.slice(arg.indexOf('=') + 1)] : [arg, undefined];
    const take = () => (inline !== undefined ? inline : value(i++, flag));
    switch (flag) {
      case '--json': a.json = true; break;
      case '--directed': a.options.directed = true; break;
      case '--undirected': a.options.directed = false; break;
      case '--manifest': a.manifest = take(); break;
      case '--num-nodes': {
        const v = take();
        if (!/^\d+$/.test(v)) throw new UsageError(`--num-nodes must be a non-negative integer, got "${v}"`);
        a.options.nodes = Number(v);
        break;
      }
      case '--index-base': {
        const v = take();
        if (v !== '0' && v !== '1') throw new UsageError(`--index-base must be 0 or 1, got "${v}"`);
        a.options.indexBase = v === '1' ? 1 : 0;
        break;
      }
      case '--fail-on': {
        const v = take();
        if (v !== 'error' && v !== 'warning' && v !== 'never' && v !== 'info') throw new UsageError(`--fail-on must be error, warning or never, got "${v}"`);
        a.failOn = v;
        break;
      }
      default:
        if (arg.startsWith('-') && arg !== '-') throw new UsageError(`unknown option ${arg}`);
        a.paths.push(arg);
    }
  }
  if (a.paths.length === 0) throw new UsageError('no PATH given');
  return a;
}

export type { CliIo };

/** Runs the CLI; returns the exit code. */
export function main(argv: string[], io: CliIo): number {
  const [cmd, ...rest] = argv;
  if (cmd === undefined || cmd === '-h' || cmd === '--help' || cmd === 'help') {
    (cmd === undefined ? io.err : io.out)(overview() + '\n');
    return cmd === undefined ? 2 : 0;
  }
  if (cmd === '-v' || cmd === '--version') { io.out(`hopscope ${VERSION}\n`); return 0; }
  const command = COMMANDS.find((c) => c.name === cmd);
  if (command) {
    if (rest.includes('-h') || rest.includes('--help')) { io.out(command.usage + '\n'); return 0; }
    return command.run(rest, io);
  }
  if (cmd !== 'check') {
    io.err(`hopscope: unknown command "${cmd}"\n\n${overview()}\n`);
    return 2;
  }
  if (rest.includes('-h') || rest.includes('--help')) { io.out(CHECK_USAGE + '\n'); return 0; }
  let args: CheckArgs;
  try {
    args = parseCheckArgs(rest);
  } catch (e) {
    if (e instanceof UsageError) { io.err(`hopscope check: ${e.message}\n\n${CHECK_USAGE}\n`); return 2; }
    throw e;
  }
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
    io.out(withSkipped(renderText(files, result.manifestProblems, result.related, summary, io.color), result.skipped, io.color));
  }

  if (process.env.HOPSCOPE_TIMINGS) {
    const ph = phaseTotals();
    const bytes = files.reduce((s, f) => s + fileSize(f.path), 0);
    const build = ph.build ?? 0;
    io.err(`HOPSCOPE_TIMINGS ${JSON.stringify({
      read: round(ph.read ?? 0), build: round(build), checks: round((ph.checks ?? 0) - build),
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
  if (args.failOn !== 'never' && [...all, ...related].some((p) => severityAtLeast(p.severity, args.failOn as Severity))) return 1;
  return 0;
}

function jsonFile(f: FileReport) {
  return { path: f.path, format: f.format, tensors: f.tensors, graph: f.graph, problems: f.problems.map(jsonProblem) };
}

function jsonProblem(p: Problem) {
  const out: Record<string, unknown> = { code: p.code, severity: p.severity, message: p.message };
  if (p.tensor !== undefined) out.tensor = p.tensor;
  out.count = p.count;
  if (p.line !== undefined) { out.line = p.line; out.column = p.column ?? 1; }
  if (p.locations?.length) out.locations = p.locations.slice(0, 20);
  return out;
}

// ---------------------------------------------------------------------------------------------
// Text output

const STYLE = { red: 31, yellow: 33, blue: 34, dim: 2, bold: 1, green: 32 } as const;

interface Summary {
  files: number;
  errors: number;
  warnings: number;
  infos: number;
  /** Problems of siblings read beside the asked files (not asked for themselves). */
  related?: { errors: number; warnings: number };
}

function renderText(files: FileReport[], manifestProblems: Array<{ path: string; problem: Problem }>,
  related: RelatedProblem[], summary: Summary, color: boolean): string {
  const c = (style: keyof typeof STYLE, s: string) => (color ? `\x1b[${STYLE[style]}m${s}\x1b[0m` : s);
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
      lines.push(`  graph: ${g.nodes} nodes, ${g.edges} edge entries, ${g.directed ? 'directed' : 'undirected'}, ` +
        `${g.components} component${g.components === 1 ? '' : 's'}, ${g.selfLoops} self-loops, ` +
        `${g.duplicateEdges} duplicates, ${g.isolatedNodes} isolated` + (g.indexBase === 1 ? ', 1-based ids' : ''));
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
function withSkipped(report: string, skipped: SkippedFile[], color: boolean): string {
  if (skipped.length === 0) return report;
  const dim = (s: string) => (color ? `\x1b[2m${s}\x1b[0m` : s);
  const lines = report.replace(/\n$/, '').split('\n');
  const summary = lines.pop()!;
  for (const s of skipped) {
    lines.push(`${s.path}${dim('  (skipped: not an edge list)')}`);
    lines.push(dim(`  ${s.reason}`));
    lines.push('');
  }
  lines.push(`${summary}, ${skipped.length} skipped`);
  return lines.join('\n') + '\n';
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

if (typeof require !== 'undefined' && typeof module !== 'undefined' && require.main === module) {
  const color = Boolean(process.stdout.isTTY) && !process.env.NO_COLOR;
  useParallelPairBuilder();
  const code = main(process.argv.slice(2), {
    out: (s) => process.stdout.write(s),
    err: (s) => process.stderr.write(s),
    color,
  });
  process.exitCode = code;
}

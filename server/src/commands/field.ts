/**
 * `hopscope field FILE --node V --layers L`: what an L-layer message-passing model lets node V
 * see — nodes per hop distance, total and coverage — and which nodes weigh most in V's output
 * (row V of Â^L with the GCN normalisation).
 */
import type { CliIo, Command } from './types';
import { UsageError } from './types';
import { GRAPH_OPTIONS, graphOptions, guarded, oneOf, optionalWhole, parseCommandLine, wholeNumber } from './args';
import { styler } from './style';
import { loadGraph } from '../node/graph-input';
import type { CheckSetOptions } from '../core/checks/check-set';
import { FieldWalker, coverageCurve, type SendingRow } from '../core/graph/propagation/field';
import { sendingRowOfLegacyFlow } from '../core/checks/manifest';
import { influenceRow } from '../core/graph/propagation/influence';

const MAX_LAYERS = 64;
const DEFAULT_TOP = 50;
const DEFAULT_TOP_TABLE = 10;

const USAGE = `Usage: hopscope field FILE --node V --layers L [options]

Shows what node V sees after L message-passing layers: how many nodes sit at each hop distance,
how much of the graph that is, and which nodes weigh most in V's output under GCN propagation
(row V of Â^L, Â = D̃^-1/2 (A + I) D̃^-1/2 on the symmetrised graph, duplicates and self-loops
merged; Kipf & Welling 2017).

Options:
  --node V                    node id as written in the file (ids of a 1-based file stay 1-based)
  --layers L                  number of layers, 0..${MAX_LAYERS}
  --sending-row 0|1           which row of an edge index sends messages (0: row 0 / the first
                              column of an edge list sends, so V hears from the nodes with edges
                              into V; 1: row 1 sends). Default: the manifest's "sendingRow", else 0
  --symmetrise                messages travel both ways along every edge
  --top K                     influence entries to list (default ${DEFAULT_TOP}; ${DEFAULT_TOP_TABLE} in the table view)
  --random-walk               influence with D̃^-1 (A + I) instead of the GCN normalisation
  --curve                     add the coverage curve: median and 90th-percentile coverage for
                              L = 1..8 over a fixed sample of up to 256 nodes
  --num-nodes N               declare the node count
  --index-base 0|1            declare that node ids start at 0 or at 1
  --json                      print JSON: { node, layers, perHop, total, coverage, influence }
  -h, --help                  show this help

The influence weights ignore edge direction (the GCN normalisation needs a symmetric matrix);
the hop counts follow --sending-row.

Exit codes: 0 = done; 2 = usage error, node out of range, or the file could not be read.`;

interface FieldArgs {
  file: string;
  node: number;
  layers: number;
  sendingRow?: SendingRow;
  symmetrise: boolean;
  top?: number;
  randomWalk: boolean;
  curve: boolean;
  json: boolean;
  options: CheckSetOptions;
}

const OPTIONS = {
  ...GRAPH_OPTIONS,
  node: { type: 'string' },
  layers: { type: 'string' },
  top: { type: 'string' },
  'sending-row': { type: 'string' },
  /** The old name of --sending-row (0.1.0), with its old values; not in the usage. */
  flow: { type: 'string' },
  symmetrise: { type: 'boolean' },
  symmetrize: { type: 'boolean' },
  'random-walk': { type: 'boolean' },
  curve: { type: 'boolean' },
  json: { type: 'boolean' },
} as const;

function parseFieldArgs(argv: string[]): FieldArgs {
  const { values: v, positionals: files } = parseCommandLine(argv, OPTIONS);
  if (files.length === 0) throw new UsageError('no FILE given');
  if (files.length > 1) throw new UsageError(`one FILE at a time, got ${files.length}: ${files.join(' ')}`);
  if (v.node === undefined) throw new UsageError('--node is required');
  if (/^-\d/.test(v.node)) throw new UsageError(`--node must be a node id (0 or more), got "${v.node}"`);
  const node = wholeNumber('--node', v.node);
  const layers = optionalWhole('--layers', v.layers, 0, MAX_LAYERS);
  if (layers === undefined) throw new UsageError('--layers is required');
  const top = optionalWhole('--top', v.top);
  const sendingRow = sendingRowOption(v['sending-row'], v.flow);
  return {
    file: files[0]!, node, layers, options: graphOptions(v),
    symmetrise: v.symmetrise === true || v.symmetrize === true, randomWalk: v['random-walk'] === true, curve: v.curve === true, json: v.json === true,
    ...(sendingRow !== undefined ? { sendingRow } : {}), ...(top !== undefined ? { top } : {}),
  };
}

function sendingRowOption(value: string | undefined, legacy: string | undefined): SendingRow | undefined {
  if (value !== undefined && legacy !== undefined) throw new UsageError('--flow is the old name of --sending-row: give only --sending-row');
  if (value !== undefined) return oneOf('--sending-row', value, ['0', '1'] as const) === '1' ? 1 : 0;
  if (legacy === undefined) return undefined;
  const row = sendingRowOfLegacyFlow(legacy);
  if (row === undefined) throw new UsageError(`--flow is the old name of --sending-row, which takes 0 or 1; got "${legacy}"`);
  return row;
}

function run(argv: string[], io: CliIo): number {
  return guarded('field', USAGE, io, () => fieldReport(argv, io));
}

function fieldReport(argv: string[], io: CliIo): number {
  const args = parseFieldArgs(argv);
  const g = loadGraph(args.file, args.options);
  const base = g.figures.indexBase;
  const v = args.node - base;
  if (g.n === 0) { io.err(`hopscope field: ${args.file} has no nodes\n`); return 2; }
  if (v < 0 || v >= g.n) {
    io.err(`hopscope field: --node ${args.node} is out of range: ${args.file} has ${g.n} node${g.n === 1 ? '' : 's'} (ids ${base}..${g.n - 1 + base})\n`);
    return 2;
  }
  const errors = g.problems.filter((p) => p.severity === 'error').length;
  if (errors) {
    io.err(`hopscope field: note: ${args.file} has ${errors} error${errors === 1 ? '' : 's'} (see hopscope check); the analysis uses the edges that are in range\n`);
  }

  const sendingRow: SendingRow = args.sendingRow ?? g.options.sendingRow ?? 0;
  const field = new FieldWalker(g).field(v, args.layers, { sendingRow, symmetrise: args.symmetrise });
  const top = args.top ?? (args.json ? DEFAULT_TOP : DEFAULT_TOP_TABLE);
  const infl = influenceRow(g, v, args.layers, { top, norm: args.randomWalk ? 'random-walk' : 'gcn' });
  const influence = Array.from(infl.topNodes, (u, i) => ({ node: u + base, weight: infl.topWeights[i]! }));
  const curve = args.curve ? coverageCurve(g, { sendingRow, symmetrise: args.symmetrise }) : undefined;

  if (args.json) {
    const out: Record<string, unknown> = {
      node: args.node, layers: args.layers, perHop: field.perHop, total: field.total, coverage: field.coverage, influence,
    };
    if (curve) out.coverageCurve = { layers: curve.layers, median: curve.median, p90: curve.p90, sampled: curve.sample.length };
    io.out(JSON.stringify(out, null, 2) + '\n');
    return 0;
  }

  const c = styler(io);
  const pct = (x: number) => `${(100 * x).toFixed(1)}%`;
  const lines: string[] = [];
  const how = args.symmetrise ? 'both ways along every edge' : `from row ${sendingRow} to row ${1 - sendingRow}`;
  lines.push(c('bold', `Node ${args.node}, ${args.layers} layer${args.layers === 1 ? '' : 's'}`) +
    c('dim', `  (${args.file}: ${g.n} nodes, messages ${how})`));
  lines.push('');
  lines.push(c('dim', '  hop   new nodes   within reach   share of graph'));
  const maxCount = Math.max(1, ...field.perHop);
  let within = 0;
  field.perHop.forEach((count, k) => {
    within += count;
    const bar = '█'.repeat(Math.round((20 * count) / maxCount));
    lines.push(`  ${String(k).padStart(3)}   ${String(count).padStart(9)}   ${String(within).padStart(12)}   ${pct(within / g.n).padStart(14)}  ${c('cyan', bar)}`);
  });
  lines.push('');
  const full = field.total === g.n;
  lines.push(`  ${field.total} of ${g.n} nodes (${pct(field.coverage)}) can pass a message to node ${args.node} within ${args.layers} layer${args.layers === 1 ? '' : 's'}` +
    (full ? c('yellow', ' — the whole graph') : '') + '.');
  if (field.perHop.length > 1 && field.perHop[field.perHop.length - 1] === 0 && !full) {
    lines.push(c('dim', `  The field stops growing before layer ${args.layers}: no further nodes can reach it.`));
  }
  lines.push('');
  const normName = args.randomWalk ? 'random-walk D̃^-1 (A + I)' : 'GCN D̃^-1/2 (A + I) D̃^-1/2';
  lines.push(c('bold', `Strongest influence on node ${args.node}`) + c('dim', `  (row ${args.node} of Â^${args.layers}, ${normName}; ${influence.length} of ${infl.support} nodes)`));
  lines.push(c('dim', '      node   weight       share'));
  for (const { node, weight } of influence) {
    lines.push(`  ${String(node).padStart(8)}   ${weight.toFixed(6)}   ${pct(weight / infl.rowSum).padStart(6)}`);
  }
  if (curve) {
    lines.push('');
    lines.push(c('bold', 'Coverage by depth') + c('dim', `  (${curve.allNodes ? 'all' : curve.sample.length} nodes${curve.allNodes ? '' : ', fixed sample'})`));
    lines.push(c('dim', '  layers   median    90th pct'));
    curve.layers.forEach((L, i) => lines.push(`  ${String(L).padStart(6)}   ${pct(curve.median[i]!).padStart(6)}   ${pct(curve.p90[i]!).padStart(9)}`));
  }
  io.out(lines.join('\n') + '\n');
  return 0;
}

export const fieldCommand: Command = {
  name: 'field',
  summary: 'field FILE --node V --layers L  receptive field and influence of a node',
  usage: USAGE,
  run,
};

/**
 * `hopscope field FILE --node V --layers L`: what an L-layer message-passing model lets node V
 * see — nodes per hop distance, total and coverage — and which nodes weigh most in V's output
 * (row V of Â^L with the GCN normalisation).
 * `hopscope field FILE --pair U,V --layers L`: the same for a node pair as link prediction sees it
 * (core/graph/propagation/pair-field.ts): both fields, their union and overlap per hop, the pair's
 * own edge in the message-passing graph, and the distance between the ends without that edge.
 */
import type { CliIo, Command } from './types';
import { UsageError } from './types';
import { ANALYSIS_OPTIONS, analysisOptions, guarded, oneOf, optionalWhole, parseCommandLine, wholeNumber } from './args';
import { styler } from './style';
import { loadGraph } from '../node/graph-input';
import type { CheckSetOptions } from '../core/checks/check-set';
import { FieldWalker, coverageCurve, type SendingRow } from '../core/graph/propagation/field';
import { sendingRowOfLegacyFlow } from '../core/checks/manifest';
import { InfluencePropagator } from '../core/graph/propagation/influence';
import { PairFieldWalker, type PairField } from '../core/graph/propagation/pair-field';
import type { LoadedGraph } from '../node/graph-input';
import { perHopByType, typedNodeId, typeOfId } from '../core/typed/field';
import { printTimings } from './undirected-input';

const MAX_LAYERS = 64;
const DEFAULT_TOP = 50;
const DEFAULT_TOP_TABLE = 10;

const USAGE = `Usage: hopscope field FILE --node V --layers L [options]
       hopscope field FILE --pair U,V --layers L [--sending-row 0|1] [--symmetrise] [--json]

Shows what node V sees after L message-passing layers: how many nodes sit at each hop distance,
how much of the graph that is, and which nodes weigh most in V's output under GCN propagation
(row V of Â^L, Â = D̃^-1/2 (A + I) D̃^-1/2 on the symmetrised graph, duplicates and self-loops
merged; Kipf & Welling 2017).

Options:
  --node V                    node id as written in the file (ids of a 1-based file stay 1-based);
                              in a typed graph --node TYPE:ID (e.g. paper:3) counts the field per
                              hop and per node type. A list (--node 0,17,42 or paper:3,author:0)
                              answers every node from one reading of the graph
  --pair U,V                  instead of --node (TYPE:ID,TYPE:ID in a typed graph): what the
                              model sees of the pair U, V (link prediction): each end's field,
                              their union and overlap per hop,
                              whether the pair's own edge is in the message-passing graph, and
                              the distance between U and V with that edge removed
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
  --check                     run every check of hopscope check on the graph first (duplicates,
                              symmetry, components, ...; the error note then counts them all).
                              Without it only ids out of range and mismatched lengths are looked
                              for: the results are the same
  --json                      print JSON: { node, layers, perHop, total, coverage, influence }
                              (with several nodes: { "fields": [ one such object per node ] });
                              with --pair: { pair, layers, sendingRow, symmetrised, perHop, total,
                              coverage, pairEdge, distanceWithoutPairEdge } (see the README)
  -h, --help                  show this help

The influence weights ignore edge direction (the GCN normalisation needs a symmetric matrix);
the hop counts follow --sending-row.

Exit codes: 0 = done; 2 = usage error, node out of range, or the file could not be read.`;

/** One entry of `--node`: an id as written in the file, or `TYPE:ID` (the id within its type). */
interface NodeArg {
  id: number;
  nodeType?: string;
}

interface FieldArgs {
  file: string;
  /** The first end of --pair (and the first --node). */
  node: number;
  /** The --node entries, in the order given (empty with --pair). */
  nodes: NodeArg[];
  /** `--pair TYPE:ID,TYPE:ID` in a typed graph: both ends' types (node and other are then ids within them). */
  pairTypes?: [string, string];
  /** Typed pair ends as written (`paper:3`), for the output; set once mapped into the types-forgotten graph. */
  pairNames?: [string, string];
  /** The second end of --pair (pair mode when set). */
  other?: number;
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
  ...ANALYSIS_OPTIONS,
  node: { type: 'string' },
  pair: { type: 'string' },
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
  if (v.node !== undefined && v.pair !== undefined) throw new UsageError('give either --node or --pair, not both');
  if (v.node === undefined && v.pair === undefined) throw new UsageError('--node is required (or --pair U,V for a node pair)');
  let node: number, other: number | undefined;
  let nodes: NodeArg[] = [];
  let pairTypes: [string, string] | undefined;
  if (v.pair !== undefined) {
    const typedEnds = /^\s*([^,\s:]+):(\d+)\s*,\s*([^,\s:]+):(\d+)\s*$/.exec(v.pair);
    if (typedEnds) {
      pairTypes = [typedEnds[1]!, typedEnds[3]!];
      [node, other] = [Number(typedEnds[2]), Number(typedEnds[4])];
      if (pairTypes[0] === pairTypes[1] && node === other) throw new UsageError(`--pair needs two different nodes, got ${pairTypes[0]}:${node} twice`);
    } else {
      [node, other] = pairOption(v.pair);
    }
    for (const [flag, given] of [['--top', v.top], ['--random-walk', v['random-walk']], ['--curve', v.curve]] as const) {
      if (given !== undefined) throw new UsageError(`${flag} applies to --node only, not to --pair`);
    }
  } else {
    nodes = nodeList(v.node!);
    node = nodes[0]!.id;
  }
  const layers = optionalWhole('--layers', v.layers, 0, MAX_LAYERS);
  if (layers === undefined) throw new UsageError('--layers is required');
  const top = optionalWhole('--top', v.top);
  const sendingRow = sendingRowOption(v['sending-row'], v.flow);
  return {
    file: files[0]!, node, nodes, layers, options: analysisOptions(v), ...(other !== undefined ? { other } : {}), ...(pairTypes ? { pairTypes } : {}),
    symmetrise: v.symmetrise === true || v.symmetrize === true, randomWalk: v['random-walk'] === true, curve: v.curve === true, json: v.json === true,
    ...(sendingRow !== undefined ? { sendingRow } : {}), ...(top !== undefined ? { top } : {}),
  };
}

/** `--node V` or `--node V,W,…`: ids as written in the file, or TYPE:ID entries (a type name may not hold a comma). */
function nodeList(value: string): NodeArg[] {
  const parts = value.split(',');
  const items = parts.length > 1 ? parts.map((x) => x.trim()) : parts;
  if (items.length > 1 && items.some((x) => x === '')) {
    throw new UsageError(`--node takes node ids joined by commas, like --node 0,17,42; got "${value}"`);
  }
  return items.map((item) => {
    const typed = /^(.+):([^:]*)$/.exec(item);
    if (typed) {
      if (/^-\d/.test(typed[2]!)) throw new UsageError(`--node TYPE:ID takes an id of 0 or more, got "${item}"`);
      return { id: wholeNumber('--node', typed[2]!), nodeType: typed[1]! };
    }
    if (/^-\d/.test(item)) throw new UsageError(`--node must be a node id (0 or more), got "${item}"`);
    return { id: wholeNumber('--node', item) };
  });
}

/** `--pair U,V`: two different node ids as written in the file. */
function pairOption(value: string): [number, number] {
  const m = /^\s*([^,\s]+)\s*,\s*([^,\s]+)\s*$/.exec(value);
  if (!m) throw new UsageError(`--pair must be two node ids joined by a comma, like --pair 4,17; got "${value}"`);
  const ends = [m[1]!, m[2]!].map((x) => {
    if (/^-\d/.test(x)) throw new UsageError(`--pair takes node ids (0 or more), got "${x}"`);
    return wholeNumber('--pair', x);
  }) as [number, number];
  if (ends[0] === ends[1]) throw new UsageError(`--pair needs two different nodes, got ${ends[0]} twice`);
  return ends;
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
  const started = performance.now();
  const args = parseFieldArgs(argv);
  const g = loadGraph(args.file, args.options);
  if (args.pairTypes !== undefined) {
    // `--pair TYPE:ID,TYPE:ID`: both ends mapped into the types-forgotten graph (its ids are 0-based).
    const names = [`${args.pairTypes[0]}:${args.node}`, `${args.pairTypes[1]}:${args.other}`] as [string, string];
    if (!g.types) { io.err(`hopscope field: --pair ${names.join(',')} names node types, but ${args.file} is not a typed graph (give plain ids)\n`); return 2; }
    const ends = [typedNodeId(g.types, args.pairTypes[0], args.node), typedNodeId(g.types, args.pairTypes[1], args.other!)];
    for (const u of ends) if (typeof u !== 'number') { io.err(`hopscope field: --pair: ${u.error}\n`); return 2; }
    const sendingRow: SendingRow = args.sendingRow ?? g.options.sendingRow ?? 0;
    return pairReport({ ...args, node: ends[0] as number, other: ends[1] as number, pairNames: names }, g, sendingRow, io);
  }
  const base = g.figures.indexBase;
  if (args.other !== undefined) {
    if (g.n === 0) { io.err(`hopscope field: ${args.file} has no nodes\n`); return 2; }
    for (const id of [args.node, args.other]) if (!inRange(id, g, args.file, '--pair: node', io)) return 2;
    errorNote(g, args.file, io);
    return pairReport(args, g, args.sendingRow ?? g.options.sendingRow ?? 0, io);
  }

  // `--node`: each entry checked and mapped to a node of the (types-forgotten) graph before any is answered.
  const centres: number[] = [];
  for (const item of args.nodes) {
    if (item.nodeType !== undefined) {
      // `--node TYPE:ID`: the id within its type, mapped into the types-forgotten graph.
      if (!g.types) { io.err(`hopscope field: --node ${item.nodeType}:${item.id} names a node type, but ${args.file} is not a typed graph (give a plain id)\n`); return 2; }
      const u = typedNodeId(g.types, item.nodeType, item.id);
      if (typeof u !== 'number') { io.err(`hopscope field: --node ${u.error}\n`); return 2; }
      centres.push(u);
    } else {
      if (g.n === 0) { io.err(`hopscope field: ${args.file} has no nodes\n`); return 2; }
      if (!inRange(item.id, g, args.file, '--node', io)) return 2;
      centres.push(item.id - base);
    }
  }
  errorNote(g, args.file, io);

  const sendingRow: SendingRow = args.sendingRow ?? g.options.sendingRow ?? 0;
  const shared: FieldRun = {
    args, g, sendingRow, walker: new FieldWalker(g),
    // Built once for every node of the list (the symmetrised graph of the GCN propagation).
    propagator: lazily(() => InfluencePropagator.fromGraph(g)),
    top: args.top ?? (args.json ? DEFAULT_TOP : DEFAULT_TOP_TABLE),
    curve: lazily(() => coverageCurve(g, { sendingRow, symmetrise: args.symmetrise })),
    c: styler(io),
  };
  const answers = args.nodes.map((item, i) => item.nodeType !== undefined
    ? typedField(shared, item.nodeType, item.id, centres[i]!)
    : plainField(shared, item.id, centres[i]!));
  if (args.json) {
    const out = answers.length === 1 ? answers[0]!.json : { fields: answers.map((a) => a.json) };
    io.out(JSON.stringify(out, null, 2) + '\n');
  } else {
    io.out(answers.map((a) => a.lines.join('\n') + '\n').join('\n'));
  }
  printTimings(io, started, args.options);
  return 0;
}

/** What every node of one `--node` list shares: the graph, the walker, the propagator, the curve. */
interface FieldRun {
  args: FieldArgs;
  g: LoadedGraph;
  sendingRow: SendingRow;
  walker: FieldWalker;
  propagator: () => InfluencePropagator;
  top: number;
  curve: () => ReturnType<typeof coverageCurve>;
  c: ReturnType<typeof styler>;
}

/** One node's answer: its JSON object and its lines of the table view. */
interface FieldAnswer {
  json: Record<string, unknown>;
  lines: string[];
}

function lazily<T>(make: () => T): () => T {
  let value: T | undefined;
  let made = false;
  return () => {
    if (!made) { value = make(); made = true; }
    return value as T;
  };
}

function inRange(id: number, g: LoadedGraph, file: string, flag: string, io: CliIo): boolean {
  const base = g.figures.indexBase;
  if (id - base >= 0 && id - base < g.n) return true;
  io.err(`hopscope field: ${flag} ${id} is out of range: ${file} has ${g.n} node${g.n === 1 ? '' : 's'} (ids ${base}..${g.n - 1 + base})\n`);
  return false;
}

function errorNote(g: LoadedGraph, file: string, io: CliIo): void {
  const errors = g.problems.filter((p) => p.severity === 'error').length;
  if (errors) {
    io.err(`hopscope field: note: ${file} has ${errors} error${errors === 1 ? '' : 's'} (see hopscope check); the analysis uses the edges that are in range\n`);
  }
}

/** `--node V`: node `node` as written in the file, `v` its 0-based id. */
function plainField(run: FieldRun, node: number, v: number): FieldAnswer {
  const { args, g, sendingRow, c } = run;
  const base = g.figures.indexBase;
  const field = run.walker.field(v, args.layers, { sendingRow, symmetrise: args.symmetrise });
  const infl = run.propagator().row(v, args.layers, { top: run.top, norm: args.randomWalk ? 'random-walk' : 'gcn' });
  const influence = Array.from(infl.topNodes, (u, i) => ({ node: u + base, weight: infl.topWeights[i]! }));
  const curve = args.curve ? run.curve() : undefined;

  if (args.json) {
    const out: Record<string, unknown> = {
      node, layers: args.layers, perHop: field.perHop, total: field.total, coverage: field.coverage, influence,
    };
    if (curve) out.coverageCurve = { layers: curve.layers, median: curve.median, p90: curve.p90, sampled: curve.sample.length };
    return { json: out, lines: [] };
  }

  const pct = (x: number) => `${(100 * x).toFixed(1)}%`;
  const lines: string[] = [];
  const how = args.symmetrise ? 'both ways along every edge' : `from row ${sendingRow} to row ${1 - sendingRow}`;
  lines.push(c('bold', `Node ${node}, ${args.layers} layer${args.layers === 1 ? '' : 's'}`) +
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
  lines.push(`  ${field.total} of ${g.n} nodes (${pct(field.coverage)}) can pass a message to node ${node} within ${args.layers} layer${args.layers === 1 ? '' : 's'}` +
    (full ? c('yellow', ' — the whole graph') : '') + '.');
  if (field.perHop.length > 1 && field.perHop[field.perHop.length - 1] === 0 && !full) {
    lines.push(c('dim', `  The field stops growing before layer ${args.layers}: no further nodes can reach it.`));
  }
  lines.push('');
  const normName = args.randomWalk ? 'random-walk D̃^-1 (A + I)' : 'GCN D̃^-1/2 (A + I) D̃^-1/2';
  lines.push(c('bold', `Strongest influence on node ${node}`) + c('dim', `  (row ${node} of Â^${args.layers}, ${normName}; ${influence.length} of ${infl.support} nodes)`));
  lines.push(c('dim', '      node   weight       share'));
  for (const { node: u, weight } of influence) {
    lines.push(`  ${String(u).padStart(8)}   ${weight.toFixed(6)}   ${pct(weight / infl.rowSum).padStart(6)}`);
  }
  if (curve) {
    lines.push('');
    lines.push(c('bold', 'Coverage by depth') + c('dim', `  (${curve.allNodes ? 'all' : curve.sample.length} nodes${curve.allNodes ? '' : ', fixed sample'})`));
    lines.push(c('dim', '  layers   median    90th pct'));
    curve.layers.forEach((L, i) => lines.push(`  ${String(L).padStart(6)}   ${pct(curve.median[i]!).padStart(6)}   ${pct(curve.p90[i]!).padStart(9)}`));
  }
  return { json: {}, lines };
}

/**
 * `--node TYPE:ID` in a typed graph: the field per hop and per type, and the strongest influences
 * named by type and id (the types-forgotten graph's GCN propagation).
 */
function typedField(run: FieldRun, nodeType: string, id: number, v: number): FieldAnswer {
  const { args, g, sendingRow, c } = run;
  const space = g.types!;
  const field = run.walker.field(v, args.layers, { sendingRow, symmetrise: args.symmetrise });
  const byType = perHopByType(space, field.nodes, field.hops, args.layers);
  const infl = run.propagator().row(v, args.layers, { top: run.top, norm: args.randomWalk ? 'random-walk' : 'gcn' });
  const named = (u: number) => { const t = typeOfId(space.offsets, u); return { nodeType: space.names[t]!, id: u - space.offsets[t]! }; };
  const influence = Array.from(infl.topNodes, (u, i) => ({ ...named(u), weight: infl.topWeights[i]! }));
  const centre = `${nodeType}:${id}`;
  if (args.json) {
    const perHopByTypeJson = Object.fromEntries(space.names.map((t, ti) => [t, byType.map((row) => row[ti]!)]));
    const totalByType = Object.fromEntries(space.names.map((t, ti) => [t, byType.reduce((a, row) => a + row[ti]!, 0)]));
    const out = {
      node: centre, nodeType, id, layers: args.layers, sendingRow, symmetrised: args.symmetrise,
      perHop: field.perHop, perHopByType: perHopByTypeJson, total: field.total, totalByType, coverage: field.coverage,
      nodeTypes: Object.fromEntries(space.names.map((t, ti) => [t, space.counts[ti]!])), influence,
    };
    return { json: out, lines: [] };
  }
  const how = args.symmetrise ? 'both ways along every edge' : `from row ${sendingRow} to row ${1 - sendingRow} of each relation`;
  const w = Math.max(7, ...space.names.map((t) => t.length));
  const lines: string[] = [];
  lines.push(c('bold', `Node ${centre}, ${args.layers} layer${args.layers === 1 ? '' : 's'}`) +
    c('dim', `  (${args.file}: ${space.names.map((t, ti) => `${space.counts[ti]} ${t}`).join(', ')}; messages ${how})`));
  lines.push('');
  lines.push(c('dim', `  hop   ${'all'.padStart(7)}   ${space.names.map((t) => t.padStart(w)).join('   ')}`));
  field.perHop.forEach((count, k) => {
    lines.push(`  ${String(k).padStart(3)}   ${String(count).padStart(7)}   ${byType[k]!.map((x) => String(x).padStart(w)).join('   ')}`);
  });
  const totals = space.names.map((_, ti) => byType.reduce((a, row) => a + row[ti]!, 0));
  lines.push(c('dim', `  all   ${String(field.total).padStart(7)}   ${totals.map((x) => String(x).padStart(w)).join('   ')}`));
  lines.push('');
  lines.push(`  Within ${args.layers} layer${args.layers === 1 ? '' : 's'}, node ${centre} hears from ` +
    space.names.map((t, ti) => `${totals[ti]} of ${space.counts[ti]} ${t} nodes`).join(', ') + ' (itself included).');
  const silent = space.names.filter((_, ti) => totals[ti] === 0);
  if (silent.length) lines.push(c('yellow', `  No ${silent.join(' or ')} node reaches it: those types add nothing to its output at this depth.`));
  lines.push('');
  lines.push(c('bold', `Strongest influence on node ${centre}`) + c('dim', `  (${influence.length} of ${infl.support} nodes, types forgotten)`));
  for (const x of influence) lines.push(`  ${`${x.nodeType}:${x.id}`.padStart(w + 8)}   ${x.weight.toFixed(6)}`);
  return { json: {}, lines };
}

export const fieldCommand: Command = {
  name: 'field',
  summary: 'field FILE --node V --layers L  receptive field and influence of a node (or --pair U,V)',
  usage: USAGE,
  run,
};

/** The JSON of `--pair` (its shape is in the README's field section); ids as written in the file. */
export function pairJson(p: PairField, base: number): Record<string, unknown> {
  return {
    pair: [p.u + base, p.v + base],
    layers: p.layers,
    sendingRow: p.sendingRow,
    symmetrised: p.symmetrised,
    perHop: p.perHop,
    total: p.total,
    coverage: p.n ? p.total.union / p.n : 0,
    pairEdge: { uToV: p.storedEdge.uToV, vToU: p.storedEdge.vToU, vHearsU: p.carries.uToV, uHearsV: p.carries.vToU },
    distanceWithoutPairEdge: p.distanceWithoutPairEdge,
  };
}

function pairReport(args: FieldArgs, g: LoadedGraph, sendingRow: SendingRow, io: CliIo): number {
  const base = g.figures.indexBase;
  const p = new PairFieldWalker(g).field(args.node - base, args.other! - base, args.layers, { sendingRow, symmetrise: args.symmetrise });
  // In a typed graph the ends are named TYPE:ID (the JSON keeps the types-forgotten ids in "pair").
  const U = args.pairNames?.[0] ?? args.node, V = args.pairNames?.[1] ?? args.other!;
  if (args.json) {
    const out = pairJson(p, base);
    if (args.pairNames) out.pairTyped = args.pairNames.map((x) => ({ nodeType: x.slice(0, x.lastIndexOf(':')), id: Number(x.slice(x.lastIndexOf(':') + 1)) }));
    io.out(JSON.stringify(out, null, 2) + '\n');
    return 0;
  }
  const c = styler(io);
  const pct = (x: number) => `${(100 * x).toFixed(1)}%`;
  const plural = (k: number, word: string) => `${k} ${word}${k === 1 ? '' : 's'}`;
  const how = args.symmetrise ? 'both ways along every edge' : `from row ${sendingRow} to row ${1 - sendingRow}`;
  const lines: string[] = [];
  lines.push(c('bold', `Pair ${U}, ${V}, ${plural(args.layers, 'layer')}`) + c('dim', `  (${args.file}: ${g.n} nodes, messages ${how})`));
  lines.push('');
  const colU = `node ${U}`, colV = `node ${V}`;
  const w = Math.max(9, colU.length, colV.length);
  lines.push(c('dim', `  hop   ${colU.padStart(w)}   ${colV.padStart(w)}       union   in both`));
  for (let k = 0; k <= p.layers; k++) {
    lines.push(`  ${String(k).padStart(3)}   ${String(p.perHop.u[k]).padStart(w)}   ${String(p.perHop.v[k]).padStart(w)}   ${String(p.perHop.union[k]).padStart(9)}   ${String(p.perHop.overlap[k]).padStart(7)}`);
  }
  lines.push(c('dim', `  all   ${String(p.total.u).padStart(w)}   ${String(p.total.v).padStart(w)}   ${String(p.total.union).padStart(9)}   ${String(p.total.overlap).padStart(7)}`));
  lines.push('');
  lines.push(`  ${p.total.union} of ${g.n} nodes (${pct(p.n ? p.total.union / p.n : 0)}) can pass a message to node ${U} or node ${V} within ${plural(args.layers, 'layer')}; ${p.total.overlap} reach both.`);
  lines.push(c('dim', '  (a node counts in the union at its distance to the nearer end, in "in both" at its distance to the farther end)'));
  lines.push('');
  const stored: string[] = [];
  if (p.storedEdge.uToV) stored.push(`${U} → ${V} (row 0 = ${U}, row 1 = ${V})`);
  if (p.storedEdge.vToU) stored.push(`${V} → ${U} (row 0 = ${V}, row 1 = ${U})`);
  if (stored.length) {
    const heard: string[] = [];
    if (p.carries.uToV) heard.push(`node ${V} hears from node ${U}`);
    if (p.carries.vToU) heard.push(`node ${U} hears from node ${V}`);
    lines.push(c('yellow', `  Pair edge in the message graph: ${stored.join(' and ')}; ${heard.join(' and ')} in one layer.`) +
      ' A model asked to predict this pair sees the edge itself: if it is a validation or test positive, remove it (and its reverse) from the message-passing edges.');
  } else {
    lines.push(`  No edge between node ${U} and node ${V} in the message-passing graph.`);
  }
  const d = p.distanceWithoutPairEdge;
  lines.push(d === null
    ? `  Distance without the pair's edge: unreachable — no path joins node ${U} and node ${V} once their own edge is removed (edge direction ignored).`
    : `  Distance without the pair's edge: ${plural(d, 'hop')} between node ${U} and node ${V} (edge direction ignored).`);
  io.out(lines.join('\n') + '\n');
  return 0;
}

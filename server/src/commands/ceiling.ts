/**
 * `hopscope ceiling FILE`: the best accuracy any message-passing model whose only inputs are the
 * structure (and the given features) can reach — graph-level for a dataset of many graphs,
 * per layer count for one graph with node classes — and how much substructure counts raise it.
 * The computation is core/graph/refinement/ceiling.ts; the worker's `ceiling` method answers the
 * editor with the same function (node/ceiling-input.ts).
 */
import type { CliIo, Command } from './types';
import { UsageError } from './types';
import { ANALYSIS_OPTIONS, CHECK_USAGE, analysisOptions, guarded, optionalWhole, parseCommandLine } from './args';
import { plural, styler } from './style';
import {
  CeilingInputError, DEFAULT_COUNT_BUDGET_MS, DEFAULT_LAYERS, parseAugmentation, type Augmentation,
} from '../core/graph/refinement/ceiling';
import { computeCeiling } from '../node/ceiling-input';
import { phaseTotals } from '../core/timing';
import type { CeilingGroup, GraphCeilingResult, NodeCeilingLayer, NodeCeilingResult } from '../../../common/ceiling';

const GROUPS_SHOWN = 10;
const GRAPHS_SHOWN = 12;
const MAX_LAYERS = 64;

const USAGE = `Usage: hopscope ceiling FILE [options]

The accuracy ceiling of message passing. A message-passing network (GCN, GIN, GraphSAGE, ...) whose
only inputs are the structure and the given node features cannot tell apart graphs (or nodes) that
1-WL colour refinement cannot tell apart, so it gives them the same answer: when such look-alikes
carry different labels, at most the most common label of each look-alike group can be right. The
ceiling is that best case. It is an upper bound for every such model, not a prediction of what one
will reach.

- A dataset of many graphs with one class per graph: refinement runs over all graphs together;
  ceiling = sum over look-alike groups of the largest label count / labelled graphs.
- One graph with node classes: for L = 0..--layers, nodes of one colour after L rounds get the
  same output from any L-layer model; ceiling(L) = sum over colours of the largest label count /
  labelled nodes (label -1 means unlabelled).
- Numeric targets (fractions, more than 1,000 distinct values, or several target columns): no
  accuracy; the look-alike groups with the widest spread of targets and the smallest error any
  such model can reach (each group predicting its mean / median).

The refinement runs on the undirected view: edge directions are ignored, self-loops dropped and
repeated edges merged.

Options:
  --layers L            node-level: largest layer count shown (default ${DEFAULT_LAYERS})
  --features            start from each node's exact feature row (and, in a dataset, its node
                        label) instead of one colour for all nodes
  --with A              also compute the ceiling with per-node substructure counts added to the
                        start colours; A is triangles or cycles:K (simple cycles of each length
                        3..K through the node, 3 <= K <= 8). Give --with several times, or
                        A,B,... to compare several
  --budget S            seconds each substructure count may take (default ${DEFAULT_COUNT_BUDGET_MS / 1000}); a graph too dense
                        to count within it is named and that augmentation left out
  --groups G            list G look-alike groups (default ${GROUPS_SHOWN}; JSON lists up to 100)
  --num-nodes N         declare the node count (one graph)
  --index-base 0|1      declare that node ids start at 0 or at 1 (one graph)
${CHECK_USAGE}; in a dataset the isomorphism checks
                        (look-alikes with different labels, leaked splits) run only with it
  --json                print JSON: { task, graphs, groups, conflictingGroups, ceiling, rounds,
                        with } for a dataset, { task, perLayer, with } for one graph

Exit codes: 0 = done; 2 = usage error, the file could not be read, or it has no labels to bound.`;

const OPTIONS = {
  ...ANALYSIS_OPTIONS,
  layers: { type: 'string' },
  features: { type: 'boolean' },
  budget: { type: 'string' },
  groups: { type: 'string' },
  json: { type: 'boolean' },
} as const;

/** Takes every `--with X` / `--with=X` out of argv (before a `--`): the one option given several times. */
function takeAugmentations(argv: string[]): { rest: string[]; values: string[] } {
  const rest: string[] = [], values: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i]!;
    if (a === '--') { rest.push(...argv.slice(i)); break; }
    if (a === '--with') {
      const v = argv[i + 1];
      if (v === undefined || v.startsWith('-')) throw new UsageError('--with needs a value: triangles or cycles:K');
      values.push(v);
      i++;
    } else if (a.startsWith('--with=')) values.push(a.slice('--with='.length));
    else rest.push(a);
  }
  return { rest, values };
}

const WRAP_AT = 100;

/** Explanatory sentences (two spaces, then a capital) wrapped at WRAP_AT characters, indented like the first line. */
function wrapSentence(line: string): string[] {
  if (line.length <= WRAP_AT || !/^ {2}[A-Z]/.test(line)) return [line];
  const out: string[] = [];
  let cur = '';
  for (const word of line.slice(2).split(' ')) {
    if (cur && cur.length + 1 + word.length > WRAP_AT - 2) { out.push(`  ${cur}`); cur = word; }
    else cur = cur ? `${cur} ${word}` : word;
  }
  if (cur) out.push(`  ${cur}`);
  return out;
}

const pct = (x: number | null): string => (x === null ? '—' : `${(100 * x).toFixed(1)}%`);

function run(argv: string[], io: CliIo): number {
  const started = performance.now();
  return guarded('ceiling', USAGE, io, () => {
    const taken = takeAugmentations(argv);
    const { values: v, positionals: files } = parseCommandLine(taken.rest, OPTIONS);
    if (files.length !== 1) throw new UsageError(files.length ? `one FILE at a time, got ${files.length}` : 'no FILE given');
    const augs: Augmentation[] = [];
    const seen = new Set<string>();
    for (const w of taken.values.flatMap((x) => x.split(','))) {
      let a: Augmentation;
      try { a = parseAugmentation(w); } catch (e) { throw new UsageError(`--with: ${(e as Error).message}`); }
      const key = a.kind === 'triangles' ? a.kind : `cycles:${a.upTo}`;
      if (!seen.has(key)) { seen.add(key); augs.push(a); }
    }
    const layers = optionalWhole('--layers', v.layers, 0, MAX_LAYERS);
    const budget = optionalWhole('--budget', v.budget, 1, 3600);
    const groupsShown = optionalWhole('--groups', v.groups) ?? GROUPS_SHOWN;
    const file = files[0]!;
    let outcome;
    try {
      outcome = computeCeiling(file, {
        ...(layers !== undefined ? { layers } : {}),
        features: !!v.features,
        with: augs,
        ...(budget !== undefined ? { budgetMs: budget * 1000 } : {}),
        ...(v.json ? {} : { groupLimit: Math.max(groupsShown, 1) }),
      }, analysisOptions(v));
    } catch (e) {
      if (e instanceof CeilingInputError) { io.err(`hopscope ceiling: ${file}: ${e.message}\n`); return 2; }
      throw e;
    }
    const { result, notes } = outcome;
    for (const n of notes) io.err(`hopscope ceiling: note: ${n}\n`);
    if (process.env.HOPSCOPE_TIMINGS) {
      const ph = phaseTotals();
      const ms = (x: number | undefined) => Math.round(x ?? 0);
      io.err(`HOPSCOPE_TIMINGS ${JSON.stringify({ read: ms(ph.read), datasets: ms(ph.datasets), ceiling: ms(ph.ceiling), total: ms(performance.now() - started) })}\n`);
    }
    if (v.json) {
      io.out(JSON.stringify({ file, ...result }, null, 2) + '\n');
      return 0;
    }
    const text = result.task === 'graph' ? graphText(file, result, groupsShown, io) : nodeText(file, result, io);
    io.out(text.flatMap(wrapSentence).join('\n') + '\n');
    return 0;
  });
}

function whatRaisesIt(features: boolean, lead = 'What raises it'): string[] {
  return [
    `  ${lead}: inputs that differ between look-alikes — ${features ? 'more informative node features' : 'node features (--features uses them)'}, ` +
      'substructure counts (--with triangles, --with cycles:K: the rows above), or positional features such as the ' +
      'Laplacian eigenvectors `hopscope spectrum --out` writes.',
  ];
}

function graphText(file: string, r: GraphCeilingResult, groupsShown: number, io: CliIo): string[] {
  const c = styler(io);
  const lines: string[] = [];
  lines.push(c('bold', 'Accuracy ceiling of message passing') +
    c('dim', `  (${file}: ${plural(r.graphs, 'graph')}, ${r.labelled} labelled${r.labelKind === 'targets' ? ', numeric targets' : ''}; start: ${r.start === 'features' ? 'feature rows and node labels' : 'one colour'})`));
  lines.push('');
  const rows: Array<{ name: string; ceiling: number | null; groups: number; conflicting: number; rounds: number; floor?: { mse: number; mae: number }; skipped?: string }> = [
    { name: 'structure alone', ceiling: r.ceiling, groups: r.groupCount, conflicting: r.conflictingGroups, rounds: r.rounds, ...(r.errorFloor ? { floor: r.errorFloor } : {}) },
    ...(r.with ?? []).map((w) => ({ name: `+ ${w.with}`, ceiling: w.ceiling, groups: w.groupCount, conflicting: w.conflictingGroups, rounds: w.rounds, ...(w.errorFloor ? { floor: w.errorFloor } : {}), ...(w.skipped ? { skipped: w.skipped } : {}) })),
  ];
  const width = Math.max(...rows.map((x) => x.name.length));
  if (r.labelKind === 'classes') {
    lines.push(c('dim', `  ${'start colours'.padEnd(width)}   ceiling   look-alike groups   with mixed labels   rounds`));
    for (const x of rows) {
      if (x.skipped) { lines.push(`  ${x.name.padEnd(width)}   ${c('yellow', 'left out: ' + x.skipped)}`); continue; }
      const val = pct(x.ceiling).padStart(7);
      lines.push(`  ${x.name.padEnd(width)}   ${x.ceiling !== null && x.ceiling < 1 ? c('yellow', val) : c('green', val)}   ${String(x.groups).padStart(17)}   ${String(x.conflicting).padStart(17)}   ${String(x.rounds).padStart(6)}`);
    }
    lines.push('');
    if (r.ceiling === 1) {
      lines.push('  Every look-alike group carries one label: 1-WL refinement separates all graphs with different labels, so what a' +
        ' message-passing model can see' + (r.start === 'features' ? ' (structure and features)' : ' of the structure') + ' places no cap on the accuracy.');
    } else {
      lines.push(`  No message-passing model whose only inputs are the structure${r.start === 'features' ? ' and these node features' : ''} can ` +
        `classify more than ${pct(r.ceiling)} of these ${plural(r.labelled, 'graph')} correctly: the graphs of a look-alike group get one ` +
        'answer, and at best it is the group\'s most common label. This bounds every such model; it does not predict what one will reach.');
      lines.push(...whatRaisesIt(r.start === 'features'));
    }
  } else {
    lines.push(c('dim', `  ${'start colours'.padEnd(width)}   error floor (MSE)   (MAE)   look-alike groups   with spread   rounds`));
    for (const x of rows) {
      if (x.skipped) { lines.push(`  ${x.name.padEnd(width)}   ${c('yellow', 'left out: ' + x.skipped)}`); continue; }
      lines.push(`  ${x.name.padEnd(width)}   ${fmt(x.floor?.mse).padStart(17)}   ${fmt(x.floor?.mae).padStart(5)}   ${String(x.groups).padStart(17)}   ${String(x.conflicting).padStart(11)}   ${String(x.rounds).padStart(6)}`);
    }
    lines.push('');
    lines.push('  The targets are numbers rather than classes, so there is no accuracy to bound. A message-passing model whose only inputs are ' +
      'the structure' + (r.start === 'features' ? ' and these node features' : '') + ' gives each look-alike group one output; the error floor is ' +
      'what it leaves at best (each group predicting its mean for MSE, its median for MAE).');
    lines.push(...whatRaisesIt(r.start === 'features', 'What lowers the floor'));
  }
  const listed = r.groups.filter((g) => (r.labelKind === 'classes' ? Object.keys(g.labels ?? {}).length > 1 : (g.spread ?? 0) > 0)).slice(0, groupsShown);
  if (listed.length) {
    lines.push('');
    lines.push(c('bold', r.labelKind === 'classes' ? 'Look-alike groups with mixed labels' : 'Look-alike groups with the widest spread of targets') +
      c('dim', `  (${listed.length} of ${r.conflictingGroups} shown; graph indices from 0)`));
    lines.push(c('dim', `    size   ${r.labelKind === 'classes' ? 'labels (label: graphs)' : 'targets (min … max)  '}   graphs`));
    for (const g of listed) lines.push(`  ${String(g.size).padStart(6)}   ${groupLabels(g).padEnd(22)}   ${groupGraphs(g, c)}`);
  }
  return lines;
}

function fmt(x: number | undefined): string {
  if (x === undefined) return '—';
  return Math.abs(x) >= 1e4 || (x !== 0 && Math.abs(x) < 1e-3) ? x.toExponential(3) : x.toFixed(4);
}

function groupLabels(g: CeilingGroup): string {
  if (g.labels) {
    const entries = Object.entries(g.labels).sort((a, b) => b[1] - a[1]);
    const shown = entries.slice(0, 6).map(([k, n]) => `${k}: ${n}`).join('  ');
    return entries.length > 6 ? `${shown}  … +${entries.length - 6}` : shown;
  }
  const min = g.min ?? [], max = g.max ?? [];
  return min.length === 1 ? `${fmt(min[0])} … ${fmt(max[0])}` : `spread ${fmt(g.spread)} over ${min.length} targets`;
}

function groupGraphs(g: CeilingGroup, c: (s: 'dim', t: string) => string): string {
  const shown = g.graphs.slice(0, GRAPHS_SHOWN).join(' ');
  return g.size > GRAPHS_SHOWN ? `${shown}${c('dim', ` … +${g.size - GRAPHS_SHOWN}`)}` : shown;
}

function nodeText(file: string, r: NodeCeilingResult, io: CliIo): string[] {
  const c = styler(io);
  const lines: string[] = [];
  lines.push(c('bold', 'Accuracy ceiling of message passing, by layers') +
    c('dim', `  (${file}: ${plural(r.nodes, 'node')}, ${r.labelled} with a class; start: ${r.start === 'features' ? 'feature rows' : 'one colour'})`));
  lines.push('');
  const rows: Array<{ name: string; perLayer: NodeCeilingLayer[] | null; skipped?: string }> = [
    { name: 'structure alone', perLayer: r.perLayer },
    ...(r.with ?? []).map((w) => ({ name: `+ ${w.with}`, perLayer: w.perLayer, ...(w.skipped ? { skipped: w.skipped } : {}) })),
  ];
  const width = Math.max('layers'.length, ...rows.map((x) => x.name.length));
  lines.push(c('dim', `  ${'layers'.padEnd(width)}  ${r.perLayer.map((l) => String(l.layers).padStart(8)).join('')}`));
  for (const x of rows) {
    if (!x.perLayer) { lines.push(`  ${x.name.padEnd(width)}  ${c('yellow', 'left out: ' + (x.skipped ?? ''))}`); continue; }
    lines.push(`  ${x.name.padEnd(width)}  ${x.perLayer.map((l) => pct(l.ceiling).padStart(8)).join('')}`);
  }
  const last = r.perLayer[r.perLayer.length - 1]!;
  lines.push('');
  lines.push(`  A model with L message-passing layers whose only inputs are the structure${r.start === 'features' ? ' and these node features' : ''} ` +
    'gives nodes with the same colour after L rounds the same output, so it classifies at most the share above correctly. ' +
    'This bounds every such model; it does not predict what one will reach.');
  if (r.stableAfter !== null) lines.push(`  The colours stop changing after round ${r.stableAfter}: more layers do not raise the ceiling of the structure alone.`);
  if (last.conflictingNodes > 0) {
    lines.push(`  After ${plural(last.layers, 'layer')}, ${plural(last.conflictingNodes, 'labelled node')} share their colour with a node of another class.`);
    lines.push(...whatRaisesIt(r.start === 'features'));
  }
  return lines;
}

export const ceilingCommand: Command = {
  name: 'ceiling',
  summary: 'ceiling FILE [--with triangles]  best accuracy message passing can reach (1-WL look-alikes)',
  usage: USAGE,
  run,
};

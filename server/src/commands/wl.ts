/**
 * `hopscope wl FILE`: 1-WL colour refinement — how many node classes a message-passing network
 * can separate after each layer, when that stops growing, and which nodes it can never tell apart.
 */
import type { CliIo, Command } from './types';
import { UsageError } from './types';
import { ANALYSIS_OPTIONS, CHECK_USAGE, analysisOptions, guarded, optionalWhole, parseCommandLine } from './args';
import { plural, styler } from './style';
import { loadUndirected, printTimings } from './undirected-input';
import { colourGroups, refineWl, rowColours, sharedColourCount } from '../core/graph/refinement/wl';
import { undirectedEdgeCount } from '../core/graph/structure/undirected';

const DEFAULT_GROUPS = 10;
const MEMBERS_SHOWN_JSON = 100;
const MEMBERS_SHOWN_TABLE = 12;

const USAGE = `Usage: hopscope wl FILE [options]

1-WL colour refinement: every node starts with one colour (or the colour of its feature row) and
each round recolours it by its own colour plus the multiset of its neighbours' colours. A
message-passing network (GCN, GIN, GraphSAGE, ...) with R layers separates at most the classes of
round R, and nodes that keep the same colour at the end get the same output from any such
network that sees only the graph.

The refinement runs on the undirected view: edge directions are ignored, self-loops dropped and
repeated edges merged.

Options:
  --rounds R            stop after R rounds (default: until no class splits any more)
  --features            start from the node feature rows (equal rows = same colour) instead of
                        one colour for all nodes
  --groups G            list the G largest groups of nodes that keep one colour (default ${DEFAULT_GROUPS})
  --num-nodes N         declare the node count
  --index-base 0|1      declare that node ids start at 0 or at 1 (ids are reported as in the file)
${CHECK_USAGE}
  --json                print JSON: { classesPerRound, stableAfter, groups, ... }
  -h, --help            show this help

JSON: classesPerRound[r] is the number of colour classes after round r (round 0 is the start:
1 class unless --features); stableAfter is the round from which nothing splits, or null when
--rounds stopped the refinement first; groups lists { size, nodes } for the largest groups of
nodes sharing their colour after the last round listed (at most ${MEMBERS_SHOWN_JSON} ids each).

Exit codes: 0 = done; 2 = usage error or the file could not be read.`;

const OPTIONS = {
  ...ANALYSIS_OPTIONS,
  rounds: { type: 'string' },
  groups: { type: 'string' },
  features: { type: 'boolean' },
  json: { type: 'boolean' },
} as const;

function run(argv: string[], io: CliIo): number {
  const started = performance.now();
  return guarded('wl', USAGE, io, () => {
    const { values: v, positionals: files } = parseCommandLine(argv, OPTIONS);
    if (files.length !== 1) throw new UsageError(files.length ? `one FILE at a time, got ${files.length}` : 'no FILE given');
    const maxRounds = optionalWhole('--rounds', v.rounds);
    const groupLimit = optionalWhole('--groups', v.groups) ?? DEFAULT_GROUPS;
    const file = files[0]!;
    const options = analysisOptions(v);
    const { loaded, g, base } = loadUndirected(file, options, 'wl', io);

    let initial: Int32Array | undefined;
    if (v.features) {
      const x = loaded.features;
      if (!x) throw new UsageError(`--features: no node feature matrix found beside ${file} (see hopscope check)`);
      if (x.summary) throw new UsageError(`--features: ${x.name} is too large to keep in memory (it was only summarised while it was read)`);
      const rows = x.shape[0] ?? 0;
      const width = x.shape.length <= 1 ? 1 : x.shape.slice(1).reduce((a, b) => a * b, 1);
      if (rows !== g.n) throw new UsageError(`--features: ${x.name} has ${rows} rows but the graph has ${g.n} nodes`);
      initial = rowColours(x.data, rows, width).colours;
    }
    // Only class sizes and members are printed: the colour ids need not be canonical.
    const wl = refineWl(g, { ...(maxRounds !== undefined ? { maxRounds } : {}), ...(initial ? { initial } : {}), canonical: false });
    const shared = sharedColourCount(wl.colours);
    const groups = colourGroups(wl.colours, { limit: groupLimit, maxMembers: MEMBERS_SHOWN_JSON });
    const last = wl.classesPerRound.length - 1;

    if (v.json) {
      const out = {
        file, nodes: g.n, edges: undirectedEdgeCount(g),
        start: initial ? 'features' : 'uniform',
        classesPerRound: wl.classesPerRound,
        stableAfter: wl.stableAfter,
        indistinguishableNodes: shared,
        groups: groups.map((gr) => ({ size: gr.size, nodes: gr.nodes.map((v) => v + base) })),
      };
      io.out(JSON.stringify(out, null, 2) + '\n');
      printTimings(io, started, options);
      return 0;
    }

    const c = styler(io);
    const lines: string[] = [];
    lines.push(c('bold', `1-WL colour refinement`) +
      c('dim', `  (${file}: ${plural(g.n, 'node')}, ${plural(undirectedEdgeCount(g), 'edge')} in the undirected view; start: ${initial ? 'feature rows' : 'one colour'})`));
    lines.push('');
    lines.push(c('dim', '  round   classes   new'));
    const maxK = Math.max(1, ...wl.classesPerRound);
    wl.classesPerRound.forEach((k, r) => {
      const added = r === 0 ? '' : `+${k - wl.classesPerRound[r - 1]!}`;
      const bar = '█'.repeat(Math.max(k > 0 ? 1 : 0, Math.round((24 * k) / maxK)));
      lines.push(`  ${String(r).padStart(5)}   ${String(k).padStart(7)}   ${added.padStart(3)}  ${c('cyan', bar)}`);
    });
    lines.push('');
    if (wl.stableAfter !== null) {
      lines.push(`  Stable after round ${wl.stableAfter}: ${plural(wl.classesPerRound[last]!, 'class', 'classes')} of ${plural(g.n, 'node')}. ` +
        `Layers beyond ${wl.stableAfter} separate no further nodes.`);
    } else {
      lines.push(c('yellow', `  Still splitting after round ${last} (--rounds ${maxRounds}): ${plural(wl.classesPerRound[last]!, 'class', 'classes')} so far.`));
    }
    if (shared === 0) {
      lines.push(`  Every node ends with a colour of its own: the graph alone is enough to tell all nodes apart.`);
    } else {
      const who = wl.stableAfter !== null ? 'a message-passing network' : `a message-passing network with ${plural(last, 'layer')}`;
      lines.push(`  ${plural(shared, 'node')} share their colour with another node: ${who} that sees only ` +
        `the graph${initial ? ' and these features' : ''} gives all nodes of a group the same output.`);
      lines.push('');
      lines.push(c('bold', `Largest look-alike groups`) + c('dim', `  (${groups.length} shown)`));
      lines.push(c('dim', '    size   nodes'));
      for (const gr of groups) {
        const shown = gr.nodes.slice(0, MEMBERS_SHOWN_TABLE).map((v) => v + base).join(' ');
        const more = gr.size > MEMBERS_SHOWN_TABLE ? c('dim', ` … +${gr.size - MEMBERS_SHOWN_TABLE}`) : '';
        lines.push(`  ${String(gr.size).padStart(6)}   ${shown}${more}`);
      }
    }
    io.out(lines.join('\n') + '\n');
    return 0;
  });
}

export const wlCommand: Command = {
  name: 'wl',
  summary: 'wl FILE [--rounds R]     1-WL colour classes per round and look-alike nodes',
  usage: USAGE,
  run,
};

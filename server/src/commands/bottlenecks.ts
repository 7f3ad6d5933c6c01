/**
 * `hopscope bottlenecks FILE`: where messages have to squeeze through — bridges and the most
 * negatively curved edges (Forman and balanced Forman curvature).
 */
import type { CliIo, Command } from './types';
import { UsageError } from './types';
import { ANALYSIS_OPTIONS, CHECK_USAGE, analysisOptions, guarded, optionalWhole, parseCommandLine } from './args';
import { plural, styler } from './style';
import { loadUndirected } from './undirected-input';
import { findBridges } from '../core/graph/structure/bridges';
import { lowestBalancedForman } from '../core/graph/curvature/curvature';

const DEFAULT_TOP = 20;

const USAGE = `Usage: hopscope bottlenecks FILE [options]

Finds the edges where a message-passing network has to squeeze information from many nodes
through few connections (over-squashing):
  - bridges: edges whose removal cuts the graph in two;
  - edge curvature, most negative first: Forman curvature 4 − d_u − d_v, and balanced Forman
    curvature (Topping et al., ICLR 2022), which also credits triangles and 4-cycles around the
    edge. Balanced Forman curvature near its floor of −2 marks a bottleneck; edges
    inside dense clusters are positive.

The analysis runs on the undirected view: edge directions are ignored, self-loops dropped and
repeated edges merged (an edge stored twice in each direction is never a bridge).

Options:
  --top T               list the T most negatively curved edges (default ${DEFAULT_TOP})
  --num-nodes N         declare the node count
  --index-base 0|1      declare that node ids start at 0 or at 1 (ids are reported as in the file)
${CHECK_USAGE}
  --json                print JSON (see below)
  -h, --help            show this help

JSON: { "bridges": [[u, v], ...], "bridgeCount", "edges": [{ "u", "v", "formanCurvature",
"balancedFormanCurvature", "triangles", "bridge" }], "summary" }. "bridges" lists every bridge
as a [u, v] pair (u < v); "edges" holds the T edges of lowest balanced Forman curvature, most
negative first; "summary" gives the edge count and the minimum, maximum and mean curvatures.
Above 200,000 edges balanced Forman curvature is computed only on the edges that can rank among
the T listed (a lower bound from degrees and triangles rules the others out), so the list and the
minimum stay exact while "balancedFormanMax"/"balancedFormanMean" are null;
"balancedFormanComputed" says on how many edges it was computed.

Exit codes: 0 = done; 2 = usage error or the file could not be read.`;

const OPTIONS = {
  ...ANALYSIS_OPTIONS,
  top: { type: 'string' },
  json: { type: 'boolean' },
} as const;

function run(argv: string[], io: CliIo): number {
  return guarded('bottlenecks', USAGE, io, () => {
    const { values: v, positionals: files } = parseCommandLine(argv, OPTIONS);
    if (files.length !== 1) throw new UsageError(files.length ? `one FILE at a time, got ${files.length}` : 'no FILE given');
    const top = optionalWhole('--top', v.top) ?? DEFAULT_TOP;
    const file = files[0]!;
    const { g, base } = loadUndirected(file, analysisOptions(v), 'bottlenecks', io);
    const br = findBridges(g);
    const { curvature: curv, order, computed } = lowestBalancedForman(g, top);
    const complete = computed === curv.m;
    const bridgeKeys = new Set<number>();
    for (let k = 0; k < br.count; k++) bridgeKeys.add(br.u[k]! * g.n + br.v[k]!);
    const isBridge = (e: number) => bridgeKeys.has(curv.u[e]! * g.n + curv.v[e]!);

    let fMin = Infinity, fMax = -Infinity, fSum = 0, bMin = Infinity, bMax = -Infinity, bSum = 0;
    for (let e = 0; e < curv.m; e++) {
      const f = curv.forman[e]!, b = curv.balancedForman[e]!;
      if (f < fMin) fMin = f;
      if (f > fMax) fMax = f;
      fSum += f;
      if (b !== b) continue; // not computed (large graphs: only what the top list needs)
      if (b < bMin) bMin = b;
      if (b > bMax) bMax = b;
      bSum += b;
    }
    // On large graphs balanced Forman curvature is computed only as far as the top list needs it
    // (exact for those edges); its minimum is then still exact, its maximum and mean unknown.
    const summary = curv.m === 0 ? { edges: 0 } : {
      edges: curv.m,
      formanMin: fMin, formanMax: fMax, formanMean: fSum / curv.m,
      balancedFormanMin: order.length ? curv.balancedForman[order[0]!]! : bMin,
      balancedFormanMax: complete ? bMax : null, balancedFormanMean: complete ? bSum / curv.m : null,
      balancedFormanComputed: computed,
    };
    const shown = Array.from(order);

    if (v.json) {
      const out = {
        bridges: Array.from(br.u, (u, k) => [u + base, br.v[k]! + base]),
        bridgeCount: br.count,
        edges: shown.map((e) => ({
          u: curv.u[e]! + base, v: curv.v[e]! + base,
          formanCurvature: curv.forman[e]!, balancedFormanCurvature: curv.balancedForman[e]!,
          triangles: curv.triangles[e]!, bridge: isBridge(e),
        })),
        summary,
      };
      io.out(JSON.stringify(out, null, 2) + '\n');
      return 0;
    }

    const c = styler(io);
    const lines: string[] = [];
    lines.push(c('bold', 'Bottlenecks') + c('dim', `  (${file}: ${plural(g.n, 'node')}, ${plural(curv.m, 'edge')} in the undirected view)`));
    lines.push('');
    if (br.count === 0) {
      lines.push('  No bridges: every edge lies on a cycle.');
    } else {
      const listed = Array.from(br.u.subarray(0, Math.min(br.count, Math.max(top, 1))), (u, k) => `${u + base}–${br.v[k]! + base}`);
      lines.push(`  ${plural(br.count, 'bridge')} (removing one cuts the graph): ${listed.join(', ')}` +
        (br.count > listed.length ? c('dim', ` … +${br.count - listed.length}`) : ''));
    }
    if (curv.m > 0) {
      lines.push('');
      lines.push(c('bold', `Most negatively curved edges`) + c('dim', `  (${shown.length} of ${curv.m}, by balanced Forman curvature)`));
      const w = Math.max(4, ...shown.map((e) => `${curv.u[e]! + base}–${curv.v[e]! + base}`.length));
      lines.push(c('dim', `  ${'edge'.padEnd(w)}   balanced   Forman   triangles`));
      for (const e of shown) {
        const b = curv.balancedForman[e]!;
        const label = `${curv.u[e]! + base}–${curv.v[e]! + base}`.padEnd(w);
        const bs = b.toFixed(4).padStart(8);
        const mark = isBridge(e) ? c('yellow', '  bridge') : '';
        lines.push(`  ${label}   ${b < 0 ? c('red', bs) : bs}   ${String(curv.forman[e]).padStart(6)}   ${String(curv.triangles[e]).padStart(9)}${mark}`);
      }
      const s = summary as { balancedFormanMean: number | null; formanMean: number; balancedFormanMin: number; balancedFormanMax: number | null };
      lines.push('');
      const bf = complete
        ? `balanced Forman: min ${s.balancedFormanMin.toFixed(4)}, max ${s.balancedFormanMax!.toFixed(4)}, mean ${s.balancedFormanMean!.toFixed(4)}`
        : `balanced Forman: min ${s.balancedFormanMin.toFixed(4)} (computed on the ${plural(computed, 'edge')} that could rank in the list)`;
      lines.push(c('dim', `  ${bf}; Forman: min ${fMin}, max ${fMax}, mean ${s.formanMean.toFixed(3)}`));
    }
    io.out(lines.join('\n') + '\n');
    return 0;
  });
}

export const bottlenecksCommand: Command = {
  name: 'bottlenecks',
  summary: 'bottlenecks FILE [--top T]  bridges and most negatively curved edges (over-squashing)',
  usage: USAGE,
  run,
};

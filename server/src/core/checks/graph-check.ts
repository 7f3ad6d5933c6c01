/**
 * Checks one graph: the tensors that form it (from one container or sibling files) with their
 * roles, plus what the user declared. Returns the graph figures and problems, each problem
 * attributed to the file that is wrong.
 *
 * checkGraph runs the rules in rules/ in a fixed order, building what they share as it goes
 * (rules/context.ts): the edges (edge-source), the node count (node-count), the per-node tensors
 * (features, labels, masks), the index base (index-base), the ids in range (id-range), then on the
 * built graph: sparse ids, self-loops, duplicates, symmetry (edge-pairs), isolated nodes and an
 * empty graph (isolated), the per-edge tensors (edge-tensors), and link-prediction pairs against
 * the message-passing edges (edge-splits).
 */
import type { Structure } from '../graph/structure/figures';
import { analyseStructure } from '../graph/structure/figures';
import { buildSortedPair, type Csr } from '../graph/structure/csr';
import type { CheckLimits, FileProblem, GraphOptions, GraphPart } from './graph-check-types';
import { checkContext, reporterInto, type EdgeContext, type GraphContext } from './rules/context';
import { partsWithValues } from './rules/summarised';
import { readEdges } from './rules/edge-source';
import { countNodes } from './rules/node-count';
import { checkFeatures } from './rules/features';
import { checkLabels } from './rules/labels';
import { checkMasks } from './rules/masks';
import { readIndexBase } from './rules/index-base';
import { keepInRange } from './rules/id-range';
import { checkSparseIds } from './rules/sparse-ids';
import { checkDuplicates, checkSelfLoops, checkSymmetry } from './rules/edge-pairs';
import { checkEmpty, checkIsolated } from './rules/isolated';
import { checkEdgeTensors } from './rules/edge-tensors';
import { timed } from '../timing';
import { checkEdgeSplits, type SplitSide } from './rules/edge-splits';
import type { EdgeSplitCounts } from '../../../../common/report';

export type {
  CheckLimits, FileProblem, GraphOptions, GraphPart, SelfLoopPolicy, SendingRow,
} from './graph-check-types';
export { describe } from './rules/locations';
export type { GraphFigures } from '../../../../common/report';
import type { GraphFigures } from '../../../../common/report';

export interface GraphCheck {
  structureFile: string | null;
  structureTensor: string | null;
  figures: GraphFigures | null;
  problems: FileProblem[];
  /**
   * The CSR graph and the in-range edge list, for analyses that follow. When `ids` is present the
   * graph was too large for per-node arrays (sparse ids, or a declared node count far beyond what
   * the edges touch; see rules/id-range.ts) and was checked on the ids its edges touch: CSR node c
   * is the 0-based id ids[c], src/dst hold compact nodes, and `structure.figures` counts the
   * touched ids only (the GraphCheck figures count the whole graph).
   */
  structure?: Structure & { src: Int32Array; dst: Int32Array; ids?: Float64Array };
  /** Link-prediction splits over this graph's message-passing edges (absent without pair tensors). */
  edgeSplits?: EdgeSplitCounts;
  /** The split sides as checked, for the checks across per-split files (check-set.ts). */
  splitSides?: SplitSide[];
  /** The parts and options the graph was checked with. */
  parts: GraphPart[];
  options: GraphOptions;
}

export function checkGraph(parts: GraphPart[], opts: GraphOptions = {}, limits: CheckLimits = {}): GraphCheck {
  const problems: FileProblem[] = [];
  const report = reporterInto(problems);
  parts = partsWithValues(parts, report);
  const ctx = checkContext(parts, opts, limits, report);

  const edges = readEdges(ctx);
  const counted = countNodes(ctx, edges);
  checkFeatures(ctx, counted);
  checkLabels(ctx, counted);
  checkMasks(ctx, counted);

  if (!edges) {
    const first = ctx.edgeParts[0] ?? ctx.adjParts[0];
    return { structureFile: first?.file ?? null, structureTensor: first?.tensor.name ?? null, figures: null, problems, parts, options: opts };
  }

  const { base, count } = readIndexBase(ctx, edges, counted);
  const kept = keepInRange(ctx, edges, count, base);
  if (limits.lean) {
    const built = kept.nodeIds ? kept.nodeIds.length : count.n;
    return leanCheck(edges.part, kept, built, kept.sparseIds ? built : count.n, base.indexBase, problems, parts, opts);
  }
  const ec: EdgeContext = { ...ctx, edges, count, base, kept };

  const structure = analyseStructure(kept.nodeIds ? kept.nodeIds.length : count.n, kept.src, kept.dst);
  const f = structure.figures;
  // The whole graph's figures: with sparse ids its nodes are the distinct ids; with a node count
  // far beyond the touched ids, each untouched id is one isolated node and one component.
  const touched = f.nodes;
  const nodes = kept.sparseIds ? touched : count.n;
  const untouched = nodes - touched;
  const g: GraphContext = {
    ...ec, structure, nodes, touched, isolatedNodes: f.isolatedNodes + untouched, components: f.components + untouched,
  };
  checkSparseIds(g);
  checkSelfLoops(g);
  checkDuplicates(g);
  checkSymmetry(g);
  checkIsolated(g);
  checkEmpty(g);
  checkEdgeTensors(ec);
  const splitSides: SplitSide[] = [];
  const edgeSplits = timed('splits', () => checkEdgeSplits(g, splitSides));

  const sp = edges.part;
  const figures: GraphFigures = {
    nodes, edges: f.edges, directed: f.directed, selfLoops: f.selfLoops,
    duplicateEdges: f.duplicateEdges, asymmetricPairs: f.asymmetricPairs,
    isolatedNodes: g.isolatedNodes, components: g.components, indexBase: base.indexBase,
  };
  return {
    structureFile: sp.file, structureTensor: sp.tensor.name, figures, problems,
    structure: { ...structure, src: kept.src, dst: kept.dst, ...(kept.nodeIds ? { ids: kept.nodeIds } : {}) }, parts, options: opts,
    ...(edgeSplits ? { edgeSplits } : {}),
    ...(splitSides.length ? { splitSides } : {}),
  };
}

/**
 * `limits.lean` (the analysis commands without --check): what the bounds pass knows, and the graph
 * built only when an analysis first reads `structure.fwd` or `structure.rev` (both directions at
 * once, by the same pair builder as analyseStructure: the same arrays). The figures no lean check computes
 * (self-loops, duplicates, asymmetric pairs, isolated nodes, components, directed) are NaN.
 */
function leanCheck(part: GraphPart, kept: { src: Int32Array; dst: Int32Array; nodeIds: Float64Array | undefined },
  built: number, nodes: number, indexBase: 0 | 1, problems: FileProblem[], parts: GraphPart[], opts: GraphOptions): GraphCheck {
  const { src, dst } = kept;
  let fwd: Csr | undefined, rev: Csr | undefined, both: { fwd: Csr; rev: Csr } | undefined;
  const pair = () => (both ??= timed('build', () => buildSortedPair(built, src, dst)));
  const unknown = Number.NaN;
  const structure = {
    src, dst, ...(kept.nodeIds ? { ids: kept.nodeIds } : {}),
    // Every analysis asks for both directions (the undirected view and the GCN propagation merge
    // them): the first read builds the pair with the host's pair builder, as analyseStructure does.
    get fwd(): Csr { return (fwd ??= pair().fwd); },
    get rev(): Csr { return (rev ??= pair().rev); },
    figures: {
      nodes: built, edges: src.length, directed: false, selfLoops: unknown, duplicateEdges: unknown, asymmetricPairs: unknown,
      distinctNonLoopPairs: unknown, isolatedNodes: unknown, components: unknown,
    },
  };
  const figures: GraphFigures = {
    nodes, edges: src.length, directed: false, selfLoops: unknown, duplicateEdges: unknown, asymmetricPairs: unknown,
    isolatedNodes: unknown, components: unknown, indexBase,
  };
  return { structureFile: part.file, structureTensor: part.tensor.name, figures, problems, structure, parts, options: opts };
}

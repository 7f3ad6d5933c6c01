/**
 * What the rules of a graph check share. checkGraph (../graph-check.ts) builds the context in
 * stages, each adding what the next rules need:
 * - CheckContext: the parts by role, what the user declared, and `report`, the one way a rule
 *   records a problem (attributed to the file of the part that is wrong);
 * - EdgeContext: the edges read from the structure tensor, the node count, the index base and the
 *   in-range edges the graph is built from;
 * - GraphContext: the built graph and the whole graph's node figures.
 * Each rule is a function of one of these that reports what it finds; the order in which
 * checkGraph runs them is the order of the problems.
 */
import { MAX_LOCATIONS, type Problem, type ProblemCode, type ProblemLocation, type Severity } from '../../formats/types';
import { CODES } from '../../../../../common/problem-codes';
import type { Structure } from '../../graph/structure/figures';
import type { CheckLimits, FileProblem, GraphOptions, GraphPart } from '../graph-check-types';
import type { EdgeSource } from './edge-source';
import type { NodeCount } from './node-count';
import type { IndexBase } from './index-base';
import type { GraphEdges } from './id-range';

export type Reporter = (part: GraphPart, code: ProblemCode, message: string, count: number,
  locations?: ProblemLocation[], severity?: Severity) => void;

/** A reporter that appends to `problems` (severity from the code table unless given). */
export function reporterInto(problems: FileProblem[]): Reporter {
  return (part, code, message, count, locations = [], severity = CODES[code].severity) => {
    const p: Problem = { code, severity, message, tensor: part.tensor.name, count };
    const first = locations.find((l) => l.line !== undefined);
    if (first) { p.line = first.line!; p.column = first.column ?? 1; }
    if (locations.length) p.locations = locations.slice(0, MAX_LOCATIONS);
    problems.push({ file: part.file, problem: p });
  };
}

export interface CheckContext {
  /** The parts whose values can be checked (see rules/summarised.ts). */
  parts: GraphPart[];
  opts: GraphOptions;
  limits: CheckLimits;
  report: Reporter;
  edgeParts: GraphPart[];
  adjParts: GraphPart[];
  features: GraphPart | undefined;
  labels: GraphPart | undefined;
  masks: GraphPart[];
  edgeWeights: GraphPart[];
  edgeFeatures: GraphPart[];
}

export function checkContext(parts: GraphPart[], opts: GraphOptions, limits: CheckLimits, report: Reporter): CheckContext {
  const byRole = (role: string) => parts.filter((p) => p.guess.role === role);
  return {
    parts, opts, limits, report,
    edgeParts: byRole('edge-index'),
    adjParts: byRole('adjacency'),
    features: byRole('features')[0],
    labels: byRole('labels')[0],
    masks: byRole('mask'),
    edgeWeights: byRole('edge-weight'),
    edgeFeatures: byRole('edge-features'),
  };
}

/** A graph with edges: where they came from and what the graph is built from. */
export interface EdgeContext extends CheckContext {
  edges: EdgeSource;
  count: NodeCount;
  base: IndexBase;
  kept: GraphEdges;
}

/** The built graph and the whole graph's node figures. */
export interface GraphContext extends EdgeContext {
  structure: Structure;
  /** Nodes of the whole graph: the distinct ids when ids are sparse, else the node count. */
  nodes: number;
  /** Nodes the edges touch (the built graph's nodes). */
  touched: number;
  isolatedNodes: number;
  components: number;
}

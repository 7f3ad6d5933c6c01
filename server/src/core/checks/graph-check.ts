/**
 * Checks one graph: the tensors that form it (from one container or sibling files) with their
 * roles, plus what the user declared. Returns the graph figures and problems, each problem
 * attributed to the file that is wrong.
 */
import {
  MAX_LOCATIONS,
  type DenseTensor, type Problem, type ProblemCode, type ProblemLocation, type Severity,
  type SparseTensor, type Tensor, type TextSpan,
} from '../formats/types';
import { CODES } from '../../../../common/problem-codes';
import { isFloatDType, isIntegerDType, type RoleGuess, type Split } from './roles';
import {
  analyseStructure, asymmetricExamples, duplicateExamples, isolatedExamples,
  type Structure,
} from '../graph/structure/figures';
import { compactIds, denseNodeLimit, isolatedIdExamples } from '../graph/structure/compact';

export type SelfLoopPolicy = 'allowed' | 'forbidden';
export type Flow = 'source-to-target' | 'target-to-source';

/** What the user declared about a graph (manifest, CLI flags, editor settings). */
export interface GraphOptions {
  directed?: boolean;
  nodes?: number;
  indexBase?: 0 | 1;
  selfLoops?: SelfLoopPolicy;
  flow?: Flow;
}

export interface GraphPart {
  file: string;
  tensor: Tensor;
  guess: RoleGuess;
  /** Facts the part's own file states (e.g. the Matrix Market size line). */
  hints?: { nodes?: number; indexBase?: 0 | 1; directed?: boolean };
}

export type { GraphFigures } from '../../../../common/report';
import type { GraphFigures } from '../../../../common/report';

export interface FileProblem {
  file: string;
  problem: Problem;
}

export interface GraphCheck {
  structureFile: string | null;
  structureTensor: string | null;
  figures: GraphFigures | null;
  problems: FileProblem[];
  /**
   * The CSR graph and the in-range edge list, for analyses that follow. When `ids` is present the
   * graph was too large for per-node arrays (sparse ids, or a declared node count far beyond what
   * the edges touch; see checkGraph) and was checked on the ids its edges touch: CSR node c is the
   * 0-based id ids[c], src/dst hold compact nodes, and `structure.figures` counts the touched ids
   * only (the GraphCheck figures count the whole graph).
   */
  structure?: Structure & { src: Int32Array; dst: Int32Array; ids?: Float64Array };
  /** The parts and options the graph was checked with. */
  parts: GraphPart[];
  options: GraphOptions;
}

/** Where the edges came from, with a way back from an edge id to the file. */
interface EdgeSource {
  part: GraphPart;
  src: Int32Array;
  dst: Int32Array;
  /** Per edge: bit 1 = source not an integer, 2 = target not an integer, 4/8 = source/target beyond int32. */
  flags: Uint8Array | null;
  nonInteger: number;
  /** Node count the structure itself fixes (adjacency shape). */
  naturalN?: number;
  /** Location of one endpoint (side 0 = source, 1 = target) of edge k, or of the whole edge. */
  locate(k: number, side: 0 | 1 | 'edge'): ProblemLocation;
  /** The raw value of an endpoint as written (for messages). */
  raw(k: number, side: 0 | 1): number;
}

const EXAMPLES_IN_MESSAGE = 3;

/** Bounds on memory a check may use (see denseNodeLimit). */
export interface CheckLimits {
  /** The largest file that is read at all (hopscope.maxFileSizeMB, or the CLI's limit). */
  maxFileBytes?: number;
}

export function checkGraph(parts: GraphPart[], opts: GraphOptions = {}, limits: CheckLimits = {}): GraphCheck {
  const problems: FileProblem[] = [];
  const report = (part: GraphPart, code: ProblemCode, message: string, count: number,
    locations: ProblemLocation[] = [], severity: Severity = CODES[code].severity) => {
    const p: Problem = { code, severity, message, tensor: part.tensor.name, count };
    const first = locations.find((l) => l.line !== undefined);
    if (first) { p.line = first.line!; p.column = first.column ?? 1; }
    if (locations.length) p.locations = locations.slice(0, MAX_LOCATIONS);
    problems.push({ file: part.file, problem: p });
  };

  // A tensor summarised while it was read (a very large .npz member) has figures, not values: it
  // can be features or an unused tensor, but not a part whose values the checks walk.
  parts = parts.filter((p) => {
    const t = p.tensor;
    if (t.kind !== 'dense' || !t.summary || SUMMARY_SUFFICES.has(p.guess.role)) return true;
    report(p, 'unreadable',
      `${t.name} holds ${(t.summary.dataBytes / 1024 ** 2).toFixed(0)} MiB of values, too many to keep, so it was only ` +
      `summarised while it was read; as the ${p.guess.role} its values are needed. Save the archive uncompressed ` +
      '(np.savez) or the array as its own .npy file.', 1);
    return false;
  });

  const byRole = (role: string) => parts.filter((p) => p.guess.role === role);
  const edgeParts = byRole('edge-index');
  const adjParts = byRole('adjacency');
  const features = byRole('features')[0];
  const labels = byRole('labels')[0];
  const masks = byRole('mask');
  const edgeWeights = byRole('edge-weight');
  const edgeFeatures = byRole('edge-features');

  // ---- 1. edges -----------------------------------------------------------------------------
  let edges: EdgeSource | undefined;
  for (const part of edgeParts) {
    const e = edgesFromIndex(part, report);
    if (e) { edges = e; break; }
  }
  if (!edges) {
    for (const part of adjParts) {
      const e = edgesFromAdjacency(part, report);
      if (e) { edges = e; break; }
    }
  }

  // ---- 2. node count ------------------------------------------------------------------------
  const featureRows = features && features.tensor.shape.length >= 1 ? features.tensor.shape[0]! : undefined;
  const labelLen = labels && labels.tensor.shape.length >= 1 ? labels.tensor.shape[0]! : undefined;
  const boolMasks = masks.filter((m) => !m.guess.indexList && m.tensor.shape.length === 1);
  const otherLens = [labelLen, ...boolMasks.map((m) => m.tensor.shape[0]!)].filter((x): x is number => x !== undefined);
  const agreed = otherLens.length > 0 && otherLens.every((x) => x === otherLens[0]) ? otherLens[0] : undefined;

  let maxId = -1, minId = Infinity;
  if (edges && !edges.flags) {
    const a = int32Range(edges.src), b = int32Range(edges.dst);
    minId = Math.min(a[0], b[0]); maxId = Math.max(maxId, a[1], b[1]);
  } else if (edges) {
    const { src, dst, flags } = edges;
    for (let k = 0; k < src.length; k++) {
      const fl = flags ? flags[k]! : 0;
      if (fl & 3) continue; // not a whole number: left out
      // Ids beyond int32 are ids like any other (a sparse numbering): their value is in the tensor.
      const a = fl & 4 ? edges.raw(k, 0) : src[k]!, b = fl & 8 ? edges.raw(k, 1) : dst[k]!;
      if (a > maxId) maxId = a;
      if (b > maxId) maxId = b;
      if (a < minId) minId = a;
      if (b < minId) minId = b;
    }
  }
  const hinted = edges?.part.hints?.nodes;
  const declaredN = opts.nodes ?? hinted ?? edges?.naturalN;
  let n: number;
  let nSource: string;
  let blameFeatures = false;
  const declaredSource = opts.nodes !== undefined ? 'the declared node count' : edges?.naturalN !== undefined ? 'the adjacency shape' : 'the size stated in the file';
  // The contract: feature rows, else the declared count, else the largest id + 1.
  if (featureRows !== undefined) {
    if (declaredN === undefined && agreed !== undefined && agreed !== featureRows && maxId < agreed) {
      // Labels, masks and edge ids agree on another count: the feature matrix is the odd one out.
      n = agreed; nSource = 'the labels and masks'; blameFeatures = true;
    } else {
      n = featureRows; nSource = `the rows of ${features!.tensor.name}`;
    }
  } else if (declaredN !== undefined) {
    n = declaredN;
    nSource = declaredSource;
  } else if (agreed !== undefined && agreed > maxId) {
    n = agreed; nSource = 'the length of the labels/masks';
  } else {
    n = maxId + 1; nSource = 'the largest id + 1';
  }
  const nodeCountFromIds = declaredN === undefined && featureRows === undefined && nSource === 'the largest id + 1';
  // Per-node arrays are bounded by what the files hold: above `denseLimit` nodes the graph is
  // checked on the ids its edges touch (step 5). With no per-node tensor to say otherwise, ids far
  // beyond that are a sparse numbering (user or product numbers): the graph's nodes are its
  // distinct ids, as NetworkX reads such a file.
  const denseLimit = denseNodeLimit(graphDataBytes(parts), limits.maxFileBytes);
  const idsLookSparse = nodeCountFromIds && otherLens.length === 0 && n > denseLimit;
  // Without edges, a declaration or features there is no node count to hold per-node tensors to.
  const nKnown = edges !== undefined || declaredN !== undefined || featureRows !== undefined;

  // ---- 3. per-node tensors ------------------------------------------------------------------
  if (features && featureRows !== undefined) {
    // Either the other per-node tensors and the ids outvote the feature rows, or a declaration
    // (manifest, --num-nodes, the adjacency shape) disagrees with them.
    const expected = blameFeatures ? n : declaredN;
    if (expected !== undefined && expected !== featureRows) {
      const why = blameFeatures
        ? `the labels/masks and the edge ids all describe ${expected} nodes`
        : `${declaredSource} is ${expected}`;
      report(features, 'feature-rows-mismatch',
        `${features.tensor.name} has ${featureRows} rows but ${why}. Every node needs exactly one feature row; ` +
        `${featureRows < expected ? `${expected - featureRows} row(s) are missing` : `${featureRows - expected} row(s) too many`}.`, Math.abs(featureRows - expected));
    }
  }
  if (features) checkNonFinite(features, report, 'feature');
  if (labels) checkLabels(labels, nKnown ? n : -1, report);
  for (const m of masks) checkMask(m, nKnown ? n : -1, report);
  checkMaskOverlap(masks, report);

  if (!edges) {
    if (edgeParts.length === 0 && adjParts.length === 0) {
      return { structureFile: null, structureTensor: null, figures: null, problems, parts, options: opts };
    }
    return { structureFile: (edgeParts[0] ?? adjParts[0])!.file, structureTensor: (edgeParts[0] ?? adjParts[0])!.tensor.name, figures: null, problems, parts, options: opts };
  }

  const sp = edges.part;
  const isIndex = sp.guess.role === 'edge-index';
  const e = edges.src.length;

  // ---- 4. index base ------------------------------------------------------------------------
  let indexBase: 0 | 1 = sp.hints?.indexBase ?? 0;
  let src = edges.src, dst = edges.dst;
  if (isIndex && opts.indexBase === 1) {
    indexBase = 1;
    src = shift(src); dst = shift(dst);
    if (nodeCountFromIds) n = Math.max(0, maxId);
    maxId -= 1; minId -= 1;
  } else if (isIndex && opts.indexBase === undefined && e > 0 && minId === 1 && !idsLookSparse &&
    (nodeCountFromIds || maxId === n)) {
    const zeroNote = nodeCountFromIds
      ? `no id is 0, so node 0 would be an isolated phantom node`
      : `no id is 0 and the largest id equals the node count ${n} (${nSource})`;
    report(sp, 'one-based-index',
      `${sp.tensor.name}: ids run from 1 to ${maxId}: ${zeroNote}. If the ids are 1-based, subtract 1 ` +
      `(or declare indexBase 1 in hopscope.json / pass --index-base 1).`, 1, [edges.locate(firstWith(edges, 1), 'edge')]);
  }

  // ---- 5. bounds ----------------------------------------------------------------------------
  let outOfRange = 0;
  const oorExamples: number[] = [];
  const flags = edges.flags;
  const shiftBy = isIndex && opts.indexBase === 1 ? 1 : 0;
  /** Endpoint of edge k as a 0-based id (ids beyond int32 come from the tensor itself). */
  const idOf = (k: number, side: 0 | 1): number =>
    flags && flags[k]! & (side === 0 ? 4 : 8) ? edges!.raw(k, side) - shiftBy : (side === 0 ? src : dst)[k]!;
  const wide = n > denseLimit;
  const sparseIds = wide && idsLookSparse;
  // Every id flagged or in range is known from the range alone: the common case skips the pass.
  const allInRange = !flags && (e === 0 || (minId >= 0 && maxId < n));
  for (let k = 0; k < e && !allInRange; k++) {
    const f = flags ? flags[k]! : 0;
    if ((f & 3) !== 0) continue; // non-integer: reported separately, left out
    const a = f & 4 ? idOf(k, 0) : src[k]!, b = f & 8 ? idOf(k, 1) : dst[k]!;
    if (a < 0 || a >= n || b < 0 || b >= n) {
      outOfRange++;
      if (oorExamples.length < MAX_LOCATIONS) oorExamples.push(k);
    }
  }
  if (outOfRange > 0) {
    const locs: ProblemLocation[] = [];
    for (const k of oorExamples) {
      for (const side of [0, 1] as const) {
        const v = idOf(k, side);
        const bad = v < 0 || v >= n;
        if (bad && locs.length < MAX_LOCATIONS) {
          const loc = edges.locate(k, side);
          loc.detail = loc.detail ? `${loc.detail} = ${edges.raw(k, side)}` : `id ${edges.raw(k, side)}`;
          locs.push(loc);
        }
      }
    }
    const ex = locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ');
    const hint = sparseIds ? 'Node ids must be 0 or more.' : blameFeatures || featureRows === undefined || featureRows === n
      ? `Node ids must lie in ${indexBase}..${n - 1 + indexBase} (${n} nodes from ${nSource}).`
      : `Node ids must lie in ${indexBase}..${n - 1 + indexBase}.`;
    report(sp, 'index-out-of-range',
      `${outOfRange} edge entr${outOfRange === 1 ? 'y refers' : 'ies refer'} to nodes that do not exist: ${ex}. ${hint} ` +
      `Those entries are left out of the graph figures; gather/scatter on them fails or reads another node's row.`,
      outOfRange, locs);
  }

  // Keep the in-range, integer edges.
  let keep: Int32Array | null = null;
  let gSrc = src, gDst = dst;
  /** Set when the graph is checked on the ids its edges touch: compact node c is id nodeIds[c]. */
  let nodeIds: Float64Array | undefined;
  if (wide) {
    // Too many nodes for per-node arrays: keep the in-range edges as ids, then renumber the
    // touched ids 0..N-1 (in order). Untouched ids are counted, never stored.
    const m = e - outOfRange - edges.nonInteger;
    const fs = new Float64Array(m), fd = new Float64Array(m);
    if (m < e) keep = new Int32Array(m);
    let j = 0;
    for (let k = 0; k < e; k++) {
      const fl = flags ? flags[k]! : 0;
      if (fl & 3) continue;
      const a = fl & 4 ? idOf(k, 0) : src[k]!, b = fl & 8 ? idOf(k, 1) : dst[k]!;
      if (a < 0 || a >= n || b < 0 || b >= n) continue;
      if (keep) keep[j] = k;
      fs[j] = a; fd[j] = b; j++;
    }
    const c = compactIds(fs, fd);
    gSrc = c.src; gDst = c.dst; nodeIds = c.ids;
  } else if (outOfRange > 0 || edges.nonInteger > 0) {
    const m = e - outOfRange - edges.nonInteger;
    keep = new Int32Array(m); gSrc = new Int32Array(m); gDst = new Int32Array(m);
    let j = 0;
    for (let k = 0; k < e; k++) {
      const f = flags ? flags[k]! : 0;
      const a = src[k]!, b = dst[k]!;
      if (f !== 0 || a < 0 || a >= n || b < 0 || b >= n) continue;
      keep[j] = k; gSrc[j] = a; gDst[j] = b; j++;
    }
  }
  const orig = (j: number) => (keep ? keep[j]! : j);

  // ---- 6. structure -------------------------------------------------------------------------
  const structure = analyseStructure(nodeIds ? nodeIds.length : n, gSrc, gDst);
  const f = structure.figures;
  // The whole graph's figures: with sparse ids its nodes are the distinct ids; with a node count
  // far beyond the touched ids, each untouched id is one isolated node and one component.
  const touched = structure.figures.nodes;
  const nodes = sparseIds ? touched : n;
  const untouched = nodes - touched;
  const isolatedNodes = f.isolatedNodes + untouched;
  const components = f.components + untouched;
  if (sparseIds) {
    let at = 0;
    for (let k = 0; k < e; k++) if (idOf(k, 0) === maxId || idOf(k, 1) === maxId) { at = k; break; }
    report(sp, 'sparse-ids',
      `${sp.tensor.name}: ids are sparse: ${touched} distinct id${touched === 1 ? '' : 's'} up to ${maxId + indexBase}; ` +
      `checked on the distinct ids (${touched} node${touched === 1 ? '' : 's'}). A model that takes the largest id + 1 as the ` +
      `node count would hold ${n} nodes, ${n - touched} of them without edges: renumber the ids to ${indexBase}..${touched - 1 + indexBase} ` +
      `(e.g. np.unique(edge_index, return_inverse=True)) and keep the original ids beside them.`,
      n - touched, [edges.locate(at, 'edge')]);
  }
  const edgeLocs = (ids: number[], what: (k: number) => string) => ids.map((j) => {
    const k = orig(j);
    const loc = edges!.locate(k, 'edge');
    loc.detail = loc.detail ? `${what(k)} at ${loc.detail}` : what(k);
    return loc;
  });
  const arrow = (k: number) => `${edges!.raw(k, 0)} → ${edges!.raw(k, 1)}`;

  if (f.selfLoops > 0) {
    const ids: number[] = [];
    for (let j = 0; j < gSrc.length && ids.length < MAX_LOCATIONS; j++) if (gSrc[j] === gDst[j]) ids.push(j);
    const locs = edgeLocs(ids, (k) => `self-loop ${arrow(k)}`);
    const forbidden = opts.selfLoops === 'forbidden';
    report(sp, 'self-loops',
      `${f.selfLoops} self-loop${f.selfLoops === 1 ? '' : 's'} (${locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')}). ` +
      (forbidden
        ? 'This graph declares self-loops forbidden: remove them.'
        : 'Layers that add self-loops themselves (GCN normalisation) will count these twice; remove them or skip that step.'),
      f.selfLoops, locs, forbidden ? 'warning' : CODES['self-loops'].severity);
  }
  if (f.duplicateEdges > 0) {
    const ids = duplicateExamples(structure.fwd, gSrc, gDst, MAX_LOCATIONS);
    const locs = edgeLocs(ids, (k) => `repeat of ${arrow(k)}`);
    report(sp, 'duplicate-edges',
      `${f.duplicateEdges} duplicate edge entr${f.duplicateEdges === 1 ? 'y' : 'ies'} (${locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')}). ` +
      'Sum aggregation counts such a neighbour several times and degrees are inflated; coalesce the edges (or keep one entry per pair).',
      f.duplicateEdges, locs);
  }
  if (f.asymmetricPairs > 0 && opts.directed !== true) {
    const reciprocity = f.distinctNonLoopPairs > 0 ? 1 - f.asymmetricPairs / f.distinctNonLoopPairs : 0;
    const declaredUndirected = opts.directed === false;
    if (declaredUndirected || reciprocity >= 0.5) {
      const ids = asymmetricExamples(structure.fwd, gSrc, gDst, MAX_LOCATIONS);
      const locs = edgeLocs(ids, (k) => `${arrow(k)} has no ${edges!.raw(k, 1)} → ${edges!.raw(k, 0)}`);
      const why = declaredUndirected
        ? 'The graph is declared undirected'
        : `${Math.round(reciprocity * 100)}% of the other pairs have their reverse, so the graph looks undirected`;
      report(sp, 'asymmetric-adjacency',
        `${f.asymmetricPairs} edge${f.asymmetricPairs === 1 ? '' : 's'} without a reverse edge (${locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')}). ` +
        `${why}: messages will flow one way only along these. Add the missing reverse edges, or declare the graph directed.`,
        f.asymmetricPairs, locs, declaredUndirected ? 'error' : CODES['asymmetric-adjacency'].severity);
    } else if (opts.directed === undefined && f.asymmetricPairs === f.distinctNonLoopPairs) {
      // Not one pair has its reverse: either a directed graph, or an undirected one stored with
      // each edge once (the usual layout of published edge-list files). Say both readings.
      const ids = asymmetricExamples(structure.fwd, gSrc, gDst, EXAMPLES_IN_MESSAGE);
      const locs = edgeLocs(ids, (k) => `${arrow(k)} has no ${edges!.raw(k, 1)} → ${edges!.raw(k, 0)}`);
      report(sp, 'asymmetric-adjacency',
        `None of the ${f.asymmetricPairs} edge${f.asymmetricPairs === 1 ? '' : 's'} has its reverse (${locs.map(describe).join('; ')}). ` +
        'An undirected graph stored with each edge once looks like this, and a message-passing layer then sends ' +
        'messages one way only. If the graph is undirected, add the reverse edges (a quick fix does it for text edge lists); ' +
        'if it is directed, declare it: "directed": true in hopscope.json (or --directed).',
        f.asymmetricPairs, locs, 'info');
    }
  }
  if (isolatedNodes > 0 && nodes > 0) {
    // 0-based ids of the first isolated nodes (compact nodes mapped back to their ids).
    const ids = !nodeIds ? isolatedExamples(structure.fwd, structure.rev, MAX_LOCATIONS)
      : sparseIds ? isolatedExamples(structure.fwd, structure.rev, MAX_LOCATIONS).map((c) => nodeIds![c]!)
        : isolatedIdExamples(n, nodeIds, (c) => isolatedNode(structure, c), MAX_LOCATIONS);
    const locs: ProblemLocation[] = ids.map((u) => ({ tensor: sp.tensor.name, detail: `node ${u + indexBase}` }));
    report(sp, 'isolated-nodes',
      `${isolatedNodes} of ${nodes} nodes have no edges (e.g. node${ids.length > 1 ? 's' : ''} ${ids.slice(0, 5).map((u) => u + indexBase).join(', ')}). ` +
      'A message-passing layer gives them only their own features (and a self-loop, if added).',
      isolatedNodes, locs);
  }
  if (nodes === 0 || e === 0) {
    report(sp, 'empty-graph', nodes === 0 ? `${sp.tensor.name} describes a graph with no nodes.` : `${sp.tensor.name} has no edges: every node is isolated.`, 1);
  }

  // ---- 7. per-edge tensors ------------------------------------------------------------------
  if (isIndex) {
    for (const w of [...edgeWeights, ...edgeFeatures]) {
      if (w.tensor === sp.tensor) continue;
      const rows = w.tensor.shape[0];
      const kind = w.guess.role === 'edge-weight' ? 'edge weight' : 'edge feature';
      if (rows !== e) {
        report(w, 'edge-features-rows-mismatch',
          `${w.tensor.name} has ${rows ?? 0} ${kind} row${rows === 1 ? '' : 's'} but ${sp.tensor.name} has ${e} edge entries. ` +
          `Each edge entry needs exactly one ${kind} row, in the same order.`, Math.abs((rows ?? 0) - e));
      }
      checkNonFinite(w, report, kind);
    }
  }

  const figures: GraphFigures = {
    nodes, edges: f.edges, directed: f.directed, selfLoops: f.selfLoops,
    duplicateEdges: f.duplicateEdges, asymmetricPairs: f.asymmetricPairs,
    isolatedNodes, components, indexBase,
  };
  return {
    structureFile: sp.file, structureTensor: sp.tensor.name, figures, problems,
    structure: { ...structure, src: gSrc, dst: gDst, ...(nodeIds ? { ids: nodeIds } : {}) }, parts, options: opts,
  };
}

// ---------------------------------------------------------------------------------------------
// Edge extraction

type Reporter = (part: GraphPart, code: ProblemCode, message: string, count: number,
  locations?: ProblemLocation[], severity?: Severity) => void;

function edgesFromIndex(part: GraphPart, report: Reporter): EdgeSource | undefined {
  const t = part.tensor;
  if (t.kind !== 'dense') return undefined;
  if (t.strings) {
    report(part, 'edge-shape', `${t.name} holds text, not node ids.`, 1);
    return undefined;
  }
  const s = t.shape;
  let transposed = false;
  if (s.length === 2 && s[0] === 2) transposed = false;
  else if (s.length === 2 && s[1] === 2) transposed = true;
  else {
    report(part, 'edge-shape',
      `${t.name} has shape [${s.join(', ')}]; an edge index must be 2 x E (row 0 = sources, row 1 = targets) or E x 2.`, 1);
    return undefined;
  }
  const e = transposed ? s[0]! : s[1]!;
  if (transposed) {
    report(part, 'transposed-edge-index',
      `${t.name} is stored E x 2 ([${s.join(', ')}]); message-passing layers expect 2 x E. Transpose it (edge_index.T, then make it contiguous).`, 1);
  }
  const d = t.data;
  let src: Int32Array, dst: Int32Array;
  let flags: Uint8Array | null = null;
  let nonInteger = 0;
  if (d instanceof Int32Array && !transposed) {
    src = d.subarray(0, e); dst = d.subarray(e, 2 * e);
  } else {
    src = new Int32Array(e); dst = new Int32Array(e);
    for (let k = 0; k < e; k++) {
      const a = transposed ? d[2 * k]! : d[k]!;
      const b = transposed ? d[2 * k + 1]! : d[e + k]!;
      let fl = 0;
      if (!Number.isInteger(a)) fl |= 1; else if (a > 2147483647 || a < -2147483648) fl |= 4;
      if (!Number.isInteger(b)) fl |= 2; else if (b > 2147483647 || b < -2147483648) fl |= 8;
      src[k] = fl & 5 ? -1 : a; dst[k] = fl & 10 ? -1 : b;
      if (fl) {
        if (!flags) flags = new Uint8Array(e);
        flags[k] = fl;
        if (fl & 3) nonInteger++;
      }
    }
  }
  const flat = (k: number, side: 0 | 1) => (transposed ? 2 * k + side : side * e + k);
  const source: EdgeSource = {
    part, src, dst, flags, nonInteger,
    raw: (k, side) => d[flat(k, side)]!,
    locate: (k, side) => {
      if (side === 'edge') {
        const a = spanOf(t, flat(k, 0)), b = spanOf(t, flat(k, 1));
        if (a && b && a.line === b.line) {
          return { tensor: t.name, index: flat(k, 0), line: a.line, column: a.column, length: b.column + b.length - a.column };
        }
        return { tensor: t.name, index: flat(k, 0), ...(a ? { line: a.line, column: a.column, length: a.length } : {}),
          detail: transposed ? `${t.name}[${k}, :]` : `${t.name}[:, ${k}]` };
      }
      const i = flat(k, side);
      const sp = spanOf(t, i);
      // In a text file the line says where; name the column's meaning instead of a tensor index.
      if (sp) return { tensor: t.name, index: i, line: sp.line, column: sp.column, length: sp.length, detail: side === 0 ? 'source' : 'target' };
      return { tensor: t.name, index: i, detail: transposed ? `${t.name}[${k}, ${side}]` : `${t.name}[${side}, ${k}]` };
    },
  };
  if (nonInteger > 0) {
    const locs: ProblemLocation[] = [];
    for (let k = 0; k < e && locs.length < MAX_LOCATIONS; k++) {
      const fl = flags![k]!;
      for (const side of [0, 1] as const) {
        if (fl & (side === 0 ? 1 : 2)) {
          const loc = source.locate(k, side);
          loc.detail = `${loc.detail ?? ''} = ${d[flat(k, side)]}`.trim();
          locs.push(loc);
        }
      }
    }
    report(part, 'non-integer-index',
      `${nonInteger} edge entr${nonInteger === 1 ? 'y has' : 'ies have'} ids that are not whole numbers (${locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')}). ` +
      `Node ids must be integers; these entries are left out.`, nonInteger, locs);
  }
  if (isFloatDType(t.dtype)) {
    report(part, 'non-integer-index',
      `${t.name} is stored as ${t.dtype}; indexing layers need an integer tensor (int64). Convert it with .long() / astype(np.int64).`,
      e - nonInteger);
  } else if (t.dtype === 'bool') {
    report(part, 'non-integer-index', `${t.name} is boolean; an edge index holds integer node ids.`, e);
  }
  return source;
}

function edgesFromAdjacency(part: GraphPart, report: Reporter): EdgeSource | undefined {
  const t = part.tensor;
  if (t.kind === 'dense' && t.strings) return undefined;
  const s = t.shape;
  if (s.length !== 2) {
    report(part, 'not-square', `${t.name} has shape [${s.join(', ')}]; an adjacency matrix must be N x N.`, 1);
    return undefined;
  }
  const [rows, cols] = s as [number, number];
  if (rows !== cols) {
    report(part, 'not-square',
      `${t.name} is ${rows} x ${cols}; an adjacency matrix must be square (N x N, entry [i, j] ≠ 0 means an edge i → j).`, 1);
  }
  const n = Math.max(rows, cols);
  if (t.kind === 'sparse') return sparseEdges(part, t, n);
  return denseEdges(part, t, rows, cols, n);
}

function sparseEdges(part: GraphPart, t: SparseTensor, n: number): EdgeSource {
  // Explicitly stored zeros are not edges.
  const vals = t.values;
  let m = t.row.length;
  let keep: Int32Array | null = null;
  if (vals) {
    let zeros = 0;
    for (let k = 0; k < vals.length; k++) if (vals[k] === 0) zeros++;
    if (zeros > 0) {
      keep = new Int32Array(m - zeros);
      let j = 0;
      for (let k = 0; k < m; k++) if (vals[k] !== 0) keep[j++] = k;
      m -= zeros;
    }
  }
  const src = keep ? new Int32Array(m) : t.row;
  const dst = keep ? new Int32Array(m) : t.col;
  if (keep) for (let j = 0; j < m; j++) { src[j] = t.row[keep[j]!]!; dst[j] = t.col[keep[j]!]!; }
  const entry = (k: number) => (keep ? keep[k]! : k);
  return {
    part, src, dst, flags: null, nonInteger: 0, naturalN: n,
    raw: (k, side) => (side === 0 ? src[k]! : dst[k]!),
    locate: (k) => {
      const i = entry(k);
      const sp = t.locator?.locate(i);
      return { tensor: t.name, index: i, ...(sp ? { line: sp.line, column: sp.column, length: sp.length } : {}),
        detail: `${t.name}[${src[k]}, ${dst[k]}]` };
    },
  };
}

function denseEdges(part: GraphPart, t: DenseTensor, rows: number, cols: number, n: number): EdgeSource {
  const d = t.data;
  let m = 0;
  for (let i = 0; i < d.length; i++) if (d[i] !== 0) m++;
  const src = new Int32Array(m), dst = new Int32Array(m);
  let j = 0;
  for (let r = 0; r < rows; r++) {
    const base = r * cols;
    for (let c = 0; c < cols; c++) if (d[base + c] !== 0) { src[j] = r; dst[j] = c; j++; }
  }
  return {
    part, src, dst, flags: null, nonInteger: 0, naturalN: n,
    raw: (k, side) => (side === 0 ? src[k]! : dst[k]!),
    locate: (k) => {
      const i = src[k]! * cols + dst[k]!;
      const sp = t.locator?.locate(i);
      return { tensor: t.name, index: i, ...(sp ? { line: sp.line, column: sp.column, length: sp.length } : {}),
        detail: `${t.name}[${src[k]}, ${dst[k]}]` };
    },
  };
}

// ---------------------------------------------------------------------------------------------
// Per-node and per-edge tensors

/** Roles whose checks need only a tensor's shape and figures (see TensorSummary). */
const SUMMARY_SUFFICES: ReadonlySet<string> = new Set(['features', 'edge-features', 'unknown']);

function checkNonFinite(part: GraphPart, report: Reporter, what: string): void {
  const t = part.tensor;
  if (t.kind !== 'dense' || !isFloatDType(t.dtype)) return;
  let count = 0;
  const locs: ProblemLocation[] = [];
  const cols = t.shape.length >= 2 ? t.shape.slice(1).reduce((a, b) => a * b, 1) : 1;
  let nan = 0;
  const note = (i: number, v: number) => {
    const sp = spanOf(t, i);
    const at = t.shape.length >= 2 ? `${t.name}[${Math.floor(i / cols)}, ${i % cols}]` : `${t.name}[${i}]`;
    locs.push({ tensor: t.name, index: i, ...(sp ? { line: sp.line, column: sp.column, length: sp.length } : {}), detail: `${at} = ${v}` });
  };
  if (t.summary) {
    count = t.summary.nonFinite;
    nan = t.summary.nan;
    for (const { index, value } of t.summary.nonFiniteAt) note(index, value);
  } else {
    const d = t.data;
    for (let i = 0; i < d.length; i++) {
      const v = d[i]!;
      if (v - v !== 0) {
        count++;
        if (v !== v) nan++;
        if (locs.length < MAX_LOCATIONS) note(i, v);
      }
    }
  }
  if (count === 0) return;
  const kinds = [nan ? `${nan} NaN` : '', count - nan ? `${count - nan} infinite` : ''].filter(Boolean).join(' and ');
  report(part, 'non-finite-features',
    `${t.name} has ${kinds} ${what} value${count === 1 ? '' : 's'} (${locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')}). ` +
    `One NaN spreads to every node within reach after message passing; impute or drop them before training.`, count, locs);
}

function checkLabels(part: GraphPart, n: number, report: Reporter): void {
  const t = part.tensor;
  if (t.kind !== 'dense' || t.strings) return;
  const len = t.shape[0] ?? 1;
  if (n >= 0 && len !== n) {
    report(part, 'label-length-mismatch',
      `${t.name} has ${len} entr${len === 1 ? 'y' : 'ies'} but the graph has ${n} nodes; every node needs one label (use -1 for unlabelled nodes).`,
      Math.abs(len - n));
  }
  if (t.shape.length !== 1) return; // multi-label / one-hot: no class-id checks
  const d = t.data;
  if (isFloatDType(t.dtype)) {
    for (let i = 0; i < d.length; i++) if (Number.isFinite(d[i]!) && !Number.isInteger(d[i]!)) return; // regression targets
  } else if (!isIntegerDType(t.dtype)) return;
  let negatives = 0, minusOne = 0, max = -1;
  const negLocs: ProblemLocation[] = [];
  for (let i = 0; i < d.length; i++) {
    const v = d[i]!;
    if (!Number.isFinite(v)) continue;
    if (v < 0) {
      negatives++;
      if (v === -1) minusOne++;
      if (negLocs.length < MAX_LOCATIONS) {
        const sp = spanOf(t, i);
        negLocs.push({ tensor: t.name, index: i, ...(sp ? { line: sp.line, column: sp.column, length: sp.length } : {}), detail: `${t.name}[${i}] = ${v}` });
      }
    } else if (v > max) max = v;
  }
  const parts: string[] = [];
  if (negatives > 0) {
    parts.push(negatives === minusOne
      ? `${negatives} node${negatives === 1 ? ' is' : 's are'} labelled -1 (usually "unlabelled"): make sure the loss ignores them and no split mask selects them`
      : `${negatives} negative label${negatives === 1 ? '' : 's'} (${negLocs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')}): class ids must be 0..C-1`);
  }
  let unused: number[] = [];
  let unusedCount = 0;
  if (max >= 0 && max < 1 << 24) {
    const seen = new Uint8Array(max + 1);
    for (let i = 0; i < d.length; i++) { const v = d[i]!; if (v >= 0 && Number.isInteger(v)) seen[v] = 1; }
    for (let c = 0; c <= max; c++) if (!seen[c]) { unusedCount++; if (unused.length < 5) unused.push(c); }
    if (unusedCount > 0) {
      parts.push(`class id${unusedCount === 1 ? '' : 's'} ${unused.join(', ')}${unusedCount > unused.length ? ', …' : ''} never appear${unusedCount === 1 ? 's' : ''} although ids go up to ${max}` +
        (unused[0] === 0 && unusedCount === 1 ? ' (labels look 1-based: cross-entropy expects 0..C-1)' : ': a C-way classifier will keep outputs for classes that do not exist'));
    }
  }
  if (parts.length) report(part, 'label-range', `${t.name}: ${parts.join('; ')}.`, negatives + unusedCount, negLocs);
}

function checkMask(part: GraphPart, n: number, report: Reporter): void {
  const t = part.tensor;
  if (t.kind !== 'dense' || t.strings) return;
  if (part.guess.indexList) {
    const d = t.data;
    const locs: ProblemLocation[] = [];
    let bad = 0;
    for (let i = 0; i < d.length; i++) {
      const v = d[i]!;
      if (v < 0 || (n >= 0 && v >= n) || !Number.isInteger(v)) {
        bad++;
        if (locs.length < MAX_LOCATIONS) {
          const sp = spanOf(t, i);
          locs.push({ tensor: t.name, index: i, ...(sp ? { line: sp.line, column: sp.column, length: sp.length } : {}), detail: `${t.name}[${i}] = ${v}` });
        }
      }
    }
    if (bad) {
      report(part, 'index-out-of-range',
        `${t.name} lists ${bad} node id${bad === 1 ? '' : 's'} outside ${n >= 0 ? `0..${n - 1}` : 'the valid range'} (${locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')}).`, bad, locs);
    }
    return;
  }
  const len = t.shape.length === 1 ? t.shape[0]! : t.data.length;
  if (n >= 0 && len !== n) {
    report(part, 'mask-length-mismatch',
      `${t.name} has ${len} entr${len === 1 ? 'y' : 'ies'} but the graph has ${n} nodes; a boolean split mask needs one entry per node.`,
      Math.abs(len - n));
  }
}

function checkMaskOverlap(masks: GraphPart[], report: Reporter): void {
  const bySplit = new Map<Split, GraphPart>();
  for (const m of masks) if (m.guess.split && !bySplit.has(m.guess.split) && m.tensor.kind === 'dense') bySplit.set(m.guess.split, m);
  if (bySplit.size < 2) return;
  // Only ids the masks mention can overlap: the member array covers those, not the whole graph.
  let size = 0;
  for (const m of bySplit.values()) {
    const d = (m.tensor as DenseTensor).data;
    if (!m.guess.indexList) size = Math.max(size, d.length);
    else for (let i = 0; i < d.length; i++) if (Number.isInteger(d[i]!) && d[i]! >= size && d[i]! < 1 << 28) size = d[i]! + 1;
  }
  const member = new Uint8Array(size);
  const bit: Record<Split, number> = { train: 1, val: 2, test: 4 };
  for (const [split, m] of bySplit) {
    const d = (m.tensor as DenseTensor).data;
    if (m.guess.indexList) {
      for (let i = 0; i < d.length; i++) { const v = d[i]!; if (v >= 0 && v < size && Number.isInteger(v)) member[v]! |= bit[split]; }
    } else {
      for (let i = 0; i < d.length && i < size; i++) if (d[i]) member[i]! |= bit[split];
    }
  }
  let overlap = 0;
  const examples: number[] = [];
  for (let i = 0; i < size; i++) {
    const b = member[i]!;
    if (b & (b - 1)) { overlap++; if (examples.length < MAX_LOCATIONS) examples.push(i); }
  }
  if (overlap === 0) return;
  const names = (b: number) => (['train', 'val', 'test'] as Split[]).filter((s) => b & bit[s]).join('+');
  const pairs = new Map<string, number>();
  for (let i = 0; i < size; i++) { const b = member[i]!; if (b & (b - 1)) pairs.set(names(b), (pairs.get(names(b)) ?? 0) + 1); }
  // Report on the later split (val or test): that is the one leaking into evaluation.
  const blamed = bySplit.get('test') ?? bySplit.get('val')!;
  const locs = examples.map((i) => ({ tensor: blamed.tensor.name, index: i, detail: `node ${i} in ${names(member[i]!)}` }));
  report(blamed, 'mask-overlap',
    `${overlap} node${overlap === 1 ? ' is' : 's are'} in more than one split (${[...pairs].map(([k, v]) => `${v} in ${k}`).join(', ')}; e.g. node${examples.length > 1 ? 's' : ''} ${examples.slice(0, 5).join(', ')}). ` +
    'Evaluation on nodes the model trained on overstates accuracy; make the splits disjoint.', overlap, locs);
}

// ---------------------------------------------------------------------------------------------

/** [min, max] of a non-empty array ([Infinity, -1] when empty), in a loop that only sees Int32Array. */
function int32Range(a: Int32Array): [number, number] {
  if (a.length === 0) return [Infinity, -1];
  let lo = a[0]!, hi = a[0]!;
  for (let k = 1; k < a.length; k++) {
    const v = a[k]!;
    if (v < lo) lo = v;
    else if (v > hi) hi = v;
  }
  return [lo, hi];
}

/** Bytes of values the graph's tensors hold (what its files hold), for denseNodeLimit. */
function graphDataBytes(parts: GraphPart[]): number {
  let b = 0;
  for (const { tensor: t } of parts) {
    if (t.kind === 'sparse') b += t.row.byteLength + t.col.byteLength + (t.values?.byteLength ?? 0);
    else b += t.summary ? t.summary.dataBytes : t.data.byteLength;
  }
  return b;
}

/** Whether node u has no edge other than self-loops. */
function isolatedNode(s: Structure, u: number): boolean {
  const { fwd, rev } = s;
  for (let p = fwd.indptr[u]!; p < fwd.indptr[u + 1]!; p++) if (fwd.indices[p] !== u) return false;
  for (let p = rev.indptr[u]!; p < rev.indptr[u + 1]!; p++) if (rev.indices[p] !== u) return false;
  return true;
}

function shift(a: Int32Array): Int32Array {
  const out = new Int32Array(a.length);
  for (let i = 0; i < a.length; i++) out[i] = a[i]! - 1;
  return out;
}

function firstWith(edges: EdgeSource, id: number): number {
  for (let k = 0; k < edges.src.length; k++) if (edges.src[k] === id || edges.dst[k] === id) return k;
  return 0;
}

function spanOf(t: Tensor, flat: number): TextSpan | undefined {
  return t.locator?.locate(flat);
}

/** A location as a short phrase: "line 12, col 3 (id 40 …)" or "edge_index[1, 17] (…)". */
export function describe(l: ProblemLocation): string {
  const where = l.line !== undefined ? `line ${l.line}` : '';
  if (where && l.detail) return `${where}: ${l.detail}`;
  return where || l.detail || (l.index !== undefined ? `${l.tensor}[${l.index}]` : l.tensor ?? '');
}

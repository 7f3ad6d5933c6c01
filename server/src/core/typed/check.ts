/**
 * Checks a typed graph (model.ts) and builds its types-forgotten graph:
 *
 * - node counts per type: the declared count (TYPE__num_nodes, the manifest), else the rows of the
 *   type's feature matrix, else the length of its labels or boolean masks, else 1 + the largest id
 *   seen in that type's position across relations (row 0 of the relations it sends, row 1 of those
 *   it receives);
 * - each relation's edge index read as the homogeneous checks read one (rules/edge-source.ts: shape,
 *   transposed, non-integer ids), row 0 bounded by its source type's count and row 1 by its target
 *   type's (index-out-of-range per row, naming the relation, with how many of the offending ids
 *   would be valid ids of the other type: the classic id-of-the-wrong-type bug), duplicate entries,
 *   self-loops where source and target types are equal, per-edge tensors (rules/edge-tensors.ts);
 * - per type: feature, label and mask lengths against the type's count (rules/features.ts,
 *   labels.ts, masks.ts), isolated nodes (no edge in any relation);
 * - the typed codes: one-way-relation, type-never-receives (a warning when the type has labels),
 *   type-never-sends.
 * Every problem carries `relation` (SRC__REL__DST) or `nodeType`. The types-forgotten graph numbers
 * type t's nodes from offsets[t] (types in the graph's order) and holds every relation's in-range
 * edges; its figures are the file's `graph`.
 */
import { MAX_LOCATIONS, type ProblemLocation, type Tensor } from '../formats/types';
import { CODES } from '../../../../common/problem-codes';
import type { GraphFigures, TypedSummary } from '../../../../common/report';
import type { CheckLimits, FileProblem, GraphOptions, GraphPart } from '../checks/graph-check-types';
import type { GraphCheck } from '../checks/graph-check';
import type { RoleGuess } from '../checks/roles';
import { checkContext, reporterInto, type EdgeContext, type Reporter } from '../checks/rules/context';
import { readEdges, type EdgeSource } from '../checks/rules/edge-source';
import { checkFeatures } from '../checks/rules/features';
import { checkLabels } from '../checks/rules/labels';
import { checkMasks } from '../checks/rules/masks';
import { checkEdgeTensors } from '../checks/rules/edge-tensors';
import { partsWithValues } from '../checks/rules/summarised';
import type { NodeCount } from '../checks/rules/node-count';
import { describe, EXAMPLES_IN_MESSAGE } from '../checks/rules/locations';
import { analyseStructure } from '../graph/structure/figures';
import { duplicateExamples } from '../graph/structure/figures';
import { sortedCsr } from '../graph/structure/csr';
import { compactIds, denseNodeLimit } from '../graph/structure/compact';
import type { NodeType, Relation, TypedGraph, TypedPart } from './model';
import { allParts } from './model';

/** How a typed graph's types share the types-forgotten id space. */
export interface TypeSpace {
  names: string[];
  counts: number[];
  /** names.length + 1 offsets: type t owns ids offsets[t] .. offsets[t + 1] - 1. */
  offsets: number[];
}

export interface TypedGraphCheck extends GraphCheck {
  typed: { summary: TypedSummary; space: TypeSpace; graph: TypedGraph };
}

type CountFrom = 'declared' | 'features' | 'labels' | 'ids';

const asPart = (p: TypedPart): GraphPart => ({ file: p.file, tensor: p.tensor, guess: p.guess, ...(p.hints ? { hints: p.hints } : {}) });

/** A reporter whose problems carry the relation or node type they are about. */
function stamped(problems: FileProblem[], about: { relation?: string; nodeType?: string }): Reporter {
  const base = reporterInto(problems);
  return (part, code, message, count, locations, severity) => {
    // The per-node rules speak of "the graph"; here the count is the node type's.
    const text = about.nodeType !== undefined ? message.replace('the graph has', `node type ${about.nodeType} has`) : message;
    base(part, code, text, count, locations, severity);
    Object.assign(problems[problems.length - 1]!.problem, about);
  };
}

/** The roles the tensor table shows for the graph's tensors. */
export function typedRoles(g: TypedGraph): Map<Tensor, RoleGuess> {
  const out = new Map<Tensor, RoleGuess>();
  for (const p of allParts(g)) out.set(p.tensor, p.guess);
  return out;
}

export function checkTypedGraph(g: TypedGraph, opts: GraphOptions = {}, limits: CheckLimits = {}): TypedGraphCheck {
  const problems: FileProblem[] = [];
  const typeIndex = new Map(g.nodeTypes.map((t, i) => [t.name, i]));
  const T = g.nodeTypes.length;

  // 1. Each relation's edges, read as any edge index is (shape, transposed, whole numbers).
  const edges: Array<EdgeSource | undefined> = g.relations.map((r) => {
    const report = stamped(problems, { relation: r.key });
    const parts = partsWithValues([asPart(r.edges)], report);
    return parts.length ? readEdges(checkContext(parts, opts, limits, report)) : undefined;
  });

  // 2. Node counts per type.
  const maxId = new Float64Array(T).fill(-1);
  g.relations.forEach((r, i) => {
    const e = edges[i];
    if (!e) return;
    const s = typeIndex.get(r.source)!, d = typeIndex.get(r.target)!;
    for (let k = 0; k < e.src.length; k++) {
      const fl = e.flags ? e.flags[k]! : 0;
      if (!(fl & 1)) { const a = fl & 4 ? e.raw(k, 0) : e.src[k]!; if (a > maxId[s]!) maxId[s] = a; }
      if (!(fl & 2)) { const b = fl & 8 ? e.raw(k, 1) : e.dst[k]!; if (b > maxId[d]!) maxId[d] = b; }
    }
  });
  const counts: number[] = [];
  const countFrom: CountFrom[] = [];
  const countText: string[] = [];
  g.nodeTypes.forEach((t, i) => {
    const c = countOf(t, maxId[i]!);
    counts.push(c.n); countFrom.push(c.from); countText.push(c.text);
  });

  // 3. Per-type tensors against the type's count.
  g.nodeTypes.forEach((t, i) => {
    if (t.parts.length === 0) return;
    const report = stamped(problems, { nodeType: t.name });
    const parts = partsWithValues(t.parts.map(asPart), report);
    const ctx = checkContext(parts, opts, limits, report);
    const features = ctx.features;
    const featureRows = features && features.tensor.shape.length >= 1 ? features.tensor.shape[0]! : undefined;
    const count: NodeCount = {
      n: counts[i]!, nSource: countText[i]!, blameFeatures: false,
      declaredN: t.declared?.count, declaredSource: t.declared ? `${t.declared.source}` : '',
      featureRows, minId: 0, maxId: maxId[i]!, nodeCountFromIds: countFrom[i] === 'ids', denseLimit: Infinity,
      idsLookSparse: false, nKnown: true,
    };
    checkFeatures(ctx, count);
    checkLabels(ctx, count);
    checkMasks(ctx, count);
  });

  // 4. Per relation: ids in range per row, duplicates, self-loops, edge tensors; the kept edges.
  const offsets = [0];
  for (let i = 0; i < T; i++) offsets.push(offsets[i]! + counts[i]!);
  const total = offsets[T]!;
  const kept: Array<{ src: Int32Array; dst: Int32Array }> = [];
  g.relations.forEach((r, i) => {
    const e = edges[i];
    const s = typeIndex.get(r.source)!, d = typeIndex.get(r.target)!;
    const report = stamped(problems, { relation: r.key });
    if (!e) { kept.push({ src: new Int32Array(0), dst: new Int32Array(0) }); return; }
    const k = keepRelation(r, e, counts[s]!, counts[d]!, countText[s]!, countText[d]!, report);
    kept.push(k);
    relationPairs(r, e, k, counts[s]!, report, opts);
    if (r.edgeParts.length) {
      const parts = partsWithValues([asPart(r.edges), ...r.edgeParts.map(asPart)], report);
      const ctx = checkContext(parts, opts, limits, report);
      checkEdgeTensors({ ...ctx, edges: e } as EdgeContext);
    }
  });

  // 5. The typed codes.
  const sends = new Uint8Array(T), receives = new Uint8Array(T);
  for (const r of g.relations) { sends[typeIndex.get(r.source)!] = 1; receives[typeIndex.get(r.target)!] = 1; }
  for (const r of g.relations) {
    if (r.source === r.target) continue;
    if (g.relations.some((q) => q.source === r.target && q.target === r.source)) continue;
    stamped(problems, { relation: r.key })(asPart(r.edges), 'one-way-relation',
      `${r.key}: no relation goes back from ${r.target} to ${r.source}, so ${r.source} nodes never hear from ${r.target} nodes ` +
      `(messages flow ${r.source} → ${r.target} only). Most pipelines add the reverse relation: the same edge index with its rows swapped, as a relation from ${r.target} to ${r.source}.`,
      1);
  }
  g.nodeTypes.forEach((t, i) => {
    const labels = t.parts.find((p) => p.guess.role === 'labels');
    const at = asPart(labels ?? anchorOf(g, t));
    const report = stamped(problems, { nodeType: t.name });
    if (!receives[i]) {
      report(at, 'type-never-receives',
        `Node type ${t.name} (${counts[i]} nodes) is the target of no relation: its nodes never receive a message, so a model sees only their own features` +
        (labels ? `, yet ${labels.tensor.name} labels them: predictions for ${t.name} come from its own features alone. Add a relation into ${t.name}${sends[i] ? ' (e.g. the reverse of one it sends)' : ''}.` : '.'),
        counts[i]!, [], labels ? 'warning' : CODES['type-never-receives'].severity);
    }
    if (!sends[i]) {
      report(at, 'type-never-sends',
        `Node type ${t.name} (${counts[i]} nodes) is the source of no relation: its nodes never send a message, so no other node's output depends on them` +
        (t.parts.some((p) => p.guess.role === 'features') ? ' or on their features.' : '.'),
        counts[i]!, []);
    }
  });

  // 6. The types-forgotten graph: every relation's kept edges, each type's ids shifted by its offset.
  let m = 0;
  for (const k of kept) m += k.src.length;
  const src = new Int32Array(m), dst = new Int32Array(m);
  let j = 0;
  g.relations.forEach((r, i) => {
    const so = offsets[typeIndex.get(r.source)!]!, doff = offsets[typeIndex.get(r.target)!]!;
    const k = kept[i]!;
    for (let q = 0; q < k.src.length; q++) { src[j] = k.src[q]! + so; dst[j] = k.dst[q]! + doff; j++; }
  });
  if (m === 0 || total === 0) {
    const first = g.relations[0]!;
    stamped(problems, { relation: first.key })(asPart(first.edges), 'empty-graph',
      total === 0 ? 'The typed graph has no nodes in any type.' : `None of the ${g.relations.length} relation${g.relations.length === 1 ? '' : 's'} has an edge entry in range: every node is isolated.`, 1);
  }
  const dataBytes = allParts(g).reduce((b, p) => b + (p.tensor.kind === 'dense' ? p.tensor.data.byteLength : p.tensor.row.byteLength * 2), 0);
  const fits = total <= denseNodeLimit(dataBytes, limits.maxFileBytes);
  let figures: GraphFigures | null = null;
  let structure: GraphCheck['structure'];
  if (fits) {
    const st = analyseStructure(total, src, dst);
    const f = st.figures;
    figures = {
      nodes: total, edges: f.edges, directed: f.directed, selfLoops: f.selfLoops, duplicateEdges: f.duplicateEdges,
      asymmetricPairs: f.asymmetricPairs, isolatedNodes: f.isolatedNodes, components: f.components, indexBase: 0,
    };
    structure = { ...st, src, dst };
    isolatedPerType(g, st.fwd, st.rev, offsets, problems);
  } else {
    const first = g.relations[0]!;
    stamped(problems, { relation: first.key })(asPart(first.edges), 'unreadable',
      `The node types declare ${total} nodes in all, more than Hopscope keeps per-node arrays for beside ${Math.round(dataBytes / 1024 ** 2)} MiB of data; ` +
      'the per-relation checks ran, the whole-graph figures were skipped. Check the declared counts.', 1, [], 'info');
  }

  const summary: TypedSummary = {
    nodeTypes: Object.fromEntries(g.nodeTypes.map((t, i) => [t.name, counts[i]!])),
    relations: g.relations.map((r, i) => ({
      source: r.source, name: r.name, target: r.target, edges: edges[i]?.src.length ?? 0,
      sources: distinct(kept[i]!.src, counts[typeIndex.get(r.source)!]!), targets: distinct(kept[i]!.dst, counts[typeIndex.get(r.target)!]!),
    })),
    nodeCountFrom: Object.fromEntries(g.nodeTypes.map((t, i) => [t.name, countFrom[i]!])),
    offsets: Object.fromEntries(g.nodeTypes.map((t, i) => [t.name, offsets[i]!])),
  };
  const sp = g.relations[0]!.edges;
  return {
    structureFile: sp.file, structureTensor: sp.tensor.name, figures, problems,
    ...(structure ? { structure } : {}),
    parts: g.relations.map((r) => asPart(r.edges)), options: opts,
    typed: { summary, space: { names: g.nodeTypes.map((t) => t.name), counts, offsets }, graph: g },
  };
}

/** The tensor a node type's problems are shown on: its first tensor, its declaration, else a relation touching it. */
function anchorOf(g: TypedGraph, t: NodeType): TypedPart {
  return t.parts[0] ?? t.declared?.part ?? (g.relations.find((r) => r.source === t.name || r.target === t.name) ?? g.relations[0]!).edges;
}

/** Every tensor of the graph as a graph part (which files the graph is made of). */
export function typedGraphParts(g: TypedGraph): GraphPart[] {
  return allParts(g).map(asPart);
}

/** Whether a graph check is of a typed graph. */
export function isTypedCheck(c: GraphCheck): c is TypedGraphCheck {
  return (c as Partial<TypedGraphCheck>).typed !== undefined;
}

function countOf(t: NodeType, maxId: number): { n: number; from: CountFrom; text: string } {
  if (t.declared) return { n: t.declared.count, from: 'declared', text: t.declared.source };
  const features = t.parts.find((p) => p.guess.role === 'features' && p.tensor.shape.length >= 1);
  if (features) return { n: features.tensor.shape[0]!, from: 'features', text: `the rows of ${features.tensor.name}` };
  const perNode = t.parts.find((p) => (p.guess.role === 'labels' || (p.guess.role === 'mask' && !p.guess.indexList)) && p.tensor.shape.length >= 1);
  if (perNode && perNode.tensor.shape[0]! > maxId) return { n: perNode.tensor.shape[0]!, from: 'labels', text: `the length of ${perNode.tensor.name}` };
  return { n: Math.max(0, maxId + 1), from: 'ids', text: `1 + the largest ${t.name} id in the relations` };
}

/**
 * Row 0 against the source type's count, row 1 against the target type's; returns the kept edges
 * (whole-number ids in range), in type-local ids.
 */
function keepRelation(r: Relation, e: EdgeSource, nSrc: number, nDst: number, srcText: string, dstText: string, report: Reporter): { src: Int32Array; dst: Int32Array; orig: Int32Array | null } {
  const E = e.src.length;
  const bad = new Uint8Array(E);
  let dropped = 0;
  for (const side of [0, 1] as const) {
    const n = side === 0 ? nSrc : nDst;
    const otherN = side === 0 ? nDst : nSrc;
    const type = side === 0 ? r.source : r.target;
    const other = side === 0 ? r.target : r.source;
    const ids = side === 0 ? e.src : e.dst;
    let count = 0, otherValid = 0;
    const locs: ProblemLocation[] = [];
    for (let k = 0; k < E; k++) {
      const fl = e.flags ? e.flags[k]! : 0;
      if (fl & (side === 0 ? 1 : 2)) { bad[k] = 1; continue; } // not a whole number: reported already
      const v = fl & (side === 0 ? 4 : 8) ? e.raw(k, side) : ids[k]!;
      if (v >= 0 && v < n) continue;
      bad[k] = 1;
      count++;
      if (v >= 0 && v < otherN && type !== other) otherValid++;
      if (locs.length < MAX_LOCATIONS) {
        const loc = e.locate(k, side);
        loc.detail = `${loc.detail ?? ''} = ${e.raw(k, side)}`.trim();
        locs.push(loc);
      }
    }
    if (count === 0) continue;
    const ex = locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ');
    const row = side === 0 ? `row 0 (the ${type} sources)` : `row 1 (the ${type} targets)`;
    const one = otherValid === 1;
    const hint = otherValid > 0
      ? ` ${otherValid === count ? (count === 1 ? 'It is' : 'All of them are') : `${otherValid} of them ${one ? 'is' : 'are'}`} ${one ? `${an(`valid ${other}`)} id` : `valid ${other} ids`} (0..${otherN - 1}): ` +
        `${one ? `${an(other)} id written where ${an(type)} id belongs` : `${other} ids written where ${type} ids belong`}? A bound over all nodes at once would pass ${one ? 'it' : 'them'}.`
      : '';
    report(asPartOf(r), 'index-out-of-range',
      `${r.key}: ${count} entr${count === 1 ? 'y' : 'ies'} of ${row} ${count === 1 ? `is not ${an(type)} id` : `are not ${type} ids`}: ${ex}. ` +
      `${type} ids must lie in 0..${n - 1} (${n} ${type} nodes from ${side === 0 ? srcText : dstText}).${hint} ` +
      'Those entries are left out of the graph figures; gather/scatter on them fails or reads another node\'s row.',
      count, locs);
  }
  // Ids beyond int32 that are in range (only under a declared count that large) are not kept either:
  // the whole-graph figures are skipped for such a graph, and the pair checks work on int32 ids.
  if (e.flags) for (let k = 0; k < E; k++) if (e.flags[k]! & 12) bad[k] = 1;
  for (let k = 0; k < E; k++) if (bad[k]) dropped++;
  if (dropped === 0) return { src: e.src, dst: e.dst, orig: null };
  const m = E - dropped;
  const src = new Int32Array(m), dst = new Int32Array(m), orig = new Int32Array(m);
  let j = 0;
  for (let k = 0; k < E; k++) if (!bad[k]) { src[j] = e.src[k]!; dst[j] = e.dst[k]!; orig[j] = k; j++; }
  return { src, dst, orig };
}

const asPartOf = (r: Relation): GraphPart => asPart(r.edges);

/** Distinct values among ids in 0..n-1 (a bitmap over n when n is near the ids' count, else a sorted copy). */
function distinct(ids: Int32Array, n: number): number {
  let count = 0;
  if (n <= 8 * ids.length + 1024) {
    const seen = new Uint8Array(n);
    for (let k = 0; k < ids.length; k++) { const v = ids[k]!; if (!seen[v]) { seen[v] = 1; count++; } }
    return count;
  }
  const sorted = Int32Array.from(ids).sort();
  for (let k = 0; k < sorted.length; k++) if (k === 0 || sorted[k] !== sorted[k - 1]) count++;
  return count;
}

/** "a dock", "an author". */
const an = (word: string): string => `${/^[aeiou]/i.test(word) ? 'an' : 'a'} ${word}`;

/** Duplicate entries of one relation, and self-loops when its source and target types are equal. */
function relationPairs(r: Relation, e: EdgeSource, k: { src: Int32Array; dst: Int32Array; orig: Int32Array | null }, nSrc: number, report: Reporter, opts: GraphOptions): void {
  const { orig } = k;
  let { src, dst } = k;
  const E = src.length;
  if (E === 0) return;
  // A source type far larger than the relation's entries (a large declared count): pairs are compared
  // over the ids the entries touch (renumbered in order, so equal pairs stay equal).
  let rows = nSrc;
  if (nSrc > 4 * E + 1024) {
    const c = compactIds(src, dst);
    src = c.src; dst = c.dst; rows = c.ids.length;
  }
  const fwd = sortedCsr(rows, src, dst);
  let duplicates = 0;
  for (let u = 0; u < rows; u++) {
    const end = fwd.indptr[u + 1]!;
    for (let p = fwd.indptr[u]! + 1; p < end; p++) if (fwd.indices[p] === fwd.indices[p - 1]) duplicates++;
  }
  const at = (j: number) => (orig ? orig[j]! : j);
  const arrow = (q: number) => `${e.raw(q, 0)} → ${e.raw(q, 1)}`;
  if (duplicates > 0) {
    const locs = duplicateExamples(fwd, src, dst, MAX_LOCATIONS).map((j) => {
      const q = at(j);
      const loc = e.locate(q, 'edge');
      loc.detail = loc.detail ? `repeat of ${arrow(q)} at ${loc.detail}` : `repeat of ${arrow(q)}`;
      return loc;
    });
    report(asPartOf(r), 'duplicate-edges',
      `${r.key}: ${duplicates} duplicate edge entr${duplicates === 1 ? 'y' : 'ies'} (${locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')}). ` +
      'Sum aggregation counts such a neighbour several times; coalesce the relation\'s edges.', duplicates, locs);
  }
  if (r.source !== r.target) return;
  let loops = 0;
  const locs: ProblemLocation[] = [];
  for (let j = 0; j < E; j++) {
    if (src[j] !== dst[j]) continue;
    loops++;
    if (locs.length < MAX_LOCATIONS) {
      const q = at(j);
      const loc = e.locate(q, 'edge');
      loc.detail = loc.detail ? `self-loop ${arrow(q)} at ${loc.detail}` : `self-loop ${arrow(q)}`;
      locs.push(loc);
    }
  }
  if (loops === 0) return;
  const forbidden = opts.selfLoops === 'forbidden';
  report(asPartOf(r), 'self-loops',
    `${r.key}: ${loops} self-loop${loops === 1 ? '' : 's'} (${locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')}). ` +
    (forbidden ? 'This graph declares self-loops forbidden: remove them.' : 'Layers that add self-loops themselves will count these twice.'),
    loops, locs, forbidden ? 'warning' : CODES['self-loops'].severity);
}

/** Per type: nodes with no edge in any relation (self-loops aside). */
function isolatedPerType(g: TypedGraph, fwd: { indptr: Int32Array; indices: Int32Array }, rev: { indptr: Int32Array; indices: Int32Array }, offsets: number[], problems: FileProblem[]): void {
  g.nodeTypes.forEach((t, i) => {
    const lo = offsets[i]!, hi = offsets[i + 1]!;
    let count = 0;
    const examples: number[] = [];
    for (let u = lo; u < hi; u++) {
      let incident = false;
      for (let p = fwd.indptr[u]!; p < fwd.indptr[u + 1]! && !incident; p++) if (fwd.indices[p] !== u) incident = true;
      for (let p = rev.indptr[u]!; p < rev.indptr[u + 1]! && !incident; p++) if (rev.indices[p] !== u) incident = true;
      if (!incident) { count++; if (examples.length < MAX_LOCATIONS) examples.push(u - lo); }
    }
    if (count === 0 || hi === lo) return;
    const at = anchorOf(g, t);
    const locs: ProblemLocation[] = examples.map((u) => ({ tensor: at.tensor.name, detail: `${t.name} ${u}` }));
    stamped(problems, { nodeType: t.name })(asPart(at), 'isolated-nodes',
      `${count} of ${hi - lo} ${t.name} nodes have no edge in any relation (e.g. ${t.name} ${examples.slice(0, 5).join(', ')}). ` +
      'A message-passing layer gives them only their own features.', count, locs);
  });
}

/**
 * The analyses behind the receptive-field panel, over graphs loaded with `loadGraph` and kept
 * while their files are unchanged (path + mtime + size of every file of the graph and of the
 * manifests above it). Plain Node, no LSP types: GraphService hosts it in the worker thread.
 *
 * Answers are the JSON payloads of protocol.ts, or `{ error }` with a sentence for the user when
 * the file or the node cannot be used (the LSP layer turns that into a request error).
 *
 * In the worker, the graph store (graph-store.ts) gives it a loader that reads through the store's
 * cache, size limit and exclusions; every analysis takes the request's `Cancel` and throws
 * `AnalysisCancelled` when it is set.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import type { CheckSetOptions } from '../core/checks/check-set';
import type { DenseTensor } from '../core/formats/types';
import { DEFAULT_MAX_EDGES, FieldAnalyzer, smoothingSummary, type FieldView } from '../core/graph/field-view';
import { FieldWalker } from '../core/graph/propagation/field';
import type { TypeSpace } from '../core/typed/check';
import { perHopByType, typedNodeId, typeOfId } from '../core/typed/field';
import { PairFieldWalker } from '../core/graph/propagation/pair-field';
import { StructureAnalyzer } from '../core/graph/structure-view';
import { labelVector } from '../core/graph/propagation/homophily';
import type { Cancel } from '../core/cancel';
import { GraphLoadError, loadGraph, type LoadedGraph } from './graph-input';
import { manifestsAbove } from './load';
import { datasetGraphOf } from './dataset-views';
import type {
  BottlenecksPayload, FieldNodeTypes, FieldOptions, FieldViewPayload, FieldViewRequest, PairFieldPayload, PairFieldRequest, SmoothingPayload, WlClassesPayload,
} from '../../../common/protocol';
import type { SendingRow } from '../../../common/report';
import type { AnalysisError } from './worker-methods';
import { SETTINGS } from '../../../common/settings';

export type { AnalysisError } from './worker-methods';

/** Reads one graph for the analyses (graph-input.ts `loadGraph`, or the store's cached reading). */
export type GraphLoader = (file: string, options: CheckSetOptions, cancel: Cancel | undefined) => LoadedGraph;
const uncached: GraphLoader = (file, options, cancel) => loadGraph(file, options, cancel ? { cancel } : {});

const DRAWN = SETTINGS['panel.maxDrawnNodes'];
/** Limits on what a request may ask for; the drawn-node range and default are the setting's. */
export const PANEL_LIMITS = { minDrawn: DRAWN.minimum!, maxDrawn: DRAWN.maximum!, defaultDrawn: DRAWN.default, maxLayers: 64, maxSteps: 64 } as const;

interface Entry {
  stamp: string;
  graph: LoadedGraph;
  field: FieldAnalyzer;
  /** A typed graph's walker for the per-type counts (made on first use). */
  typeWalker?: FieldWalker;
  /** The pair view's walker (made on first use, sharing `field`). */
  pair?: PairFieldWalker;
  structure: StructureAnalyzer;
  /** Coverage curves per (sendingRow, symmetrise, selfLoops). */
  coverage: Map<string, FieldViewPayload['coverageCurve']>;
  smoothing: Map<number, SmoothingPayload | AnalysisError>;
  lastUse: number;
}

export class AnalysisService {
  private readonly cache = new Map<string, Entry>();
  private clock = 0;

  constructor(private options: CheckSetOptions = {}, private readonly keep = 2, private readonly load: GraphLoader = uncached) {}

  configure(options: CheckSetOptions): void {
    this.options = options;
    this.cache.clear();
  }

  /** Drops every graph that was read from `file` (as its structure file, a sibling or a manifest part). */
  forget(file: string): void {
    const abs = path.resolve(file);
    for (const [key, e] of [...this.cache]) {
      if (key === abs || e.graph.files.includes(abs)) this.cache.delete(key);
    }
  }

  /** Graphs kept (at most `keep`) and the bytes of their arrays (edges, CSR pair). */
  usage(): { graphs: number; bytes: number } {
    let bytes = 0;
    for (const { graph: g } of this.cache.values()) {
      bytes += g.src.byteLength + g.dst.byteLength + g.fwd.indptr.byteLength + g.fwd.indices.byteLength + g.rev.indptr.byteLength + g.rev.indices.byteLength;
    }
    return { graphs: this.cache.size, bytes };
  }

  field(file: string, p: Omit<FieldViewRequest.Params, 'uri'>, cancel?: Cancel): FieldViewPayload | AnalysisError {
    const e = this.entry(file, cancel);
    if ('error' in e) return e;
    const g = e.graph;
    const base = g.figures.indexBase;
    const v = p.nodeType !== undefined ? typedNode(g, p.nodeType, p.node) : this.node(g, p.node);
    if (typeof v !== 'number') return v;
    const o = fieldOptions(g, p);
    if ('error' in o) return o;
    const { sendingRow, symmetrise, selfLoops, maxNodes } = o;
    const view = e.field.view(v, p.layers, { sendingRow, symmetrise, selfLoops, maxNodes, ...(cancel ? { cancel } : {}) });
    const nodeTypes = g.types ? fieldNodeTypes(g.types, e, v, view, { sendingRow, symmetrise, selfLoops }, cancel) : undefined;
    const key = `${sendingRow}|${symmetrise}|${selfLoops}`;
    let coverageCurve = e.coverage.get(key);
    if (!coverageCurve) {
      coverageCurve = e.field.coverage({ sendingRow, symmetrise, selfLoops, maxLayers: 8, ...(cancel ? { cancel } : {}) });
      e.coverage.set(key, coverageCurve);
    }
    const ids = Array.from(view.ids, (u) => u + base);
    const labels = g.labels ? labelTexts(g.labels, view.ids, g.n) : g.types && g.typeLabels?.some((t) => t) ? typedLabelTexts(g, view.ids) : undefined;
    return {
      file: g.file, node: p.node, layers: p.layers, sendingRow, symmetrised: symmetrise, selfLoops,
      graphNodes: g.n, indexBase: base,
      perHop: view.perHop, total: view.total, coverage: view.coverage, centreInField: view.centreInField,
      ids, hops: Array.from(view.hops), weights: Array.from(view.weights),
      ...(labels ? { labels } : {}),
      shown: view.shown, shownPerHop: view.shownPerHop, sampled: view.sampled,
      edges: Array.from(view.edgeEnds), edgeDirs: Array.from(view.edgeDirs), edgesTotal: view.edgesTotal,
      coverageCurve, hasFeatures: g.features !== undefined,
      fileErrors: g.problems.filter((x) => x.severity === 'error').length,
      ...(nodeTypes ? { nodeTypes } : {}),
      ...(datasetGraphOf(g) ? { graph: datasetGraphOf(g)! } : {}),
    };
  }

  /** What a model sees of the pair (u, v): see core/graph/propagation/pair-field.ts. */
  pairField(file: string, p: Omit<PairFieldRequest.Params, 'uri'>, cancel?: Cancel): PairFieldPayload | AnalysisError {
    const e = this.entry(file, cancel);
    if ('error' in e) return e;
    const g = e.graph;
    const base = g.figures.indexBase;
    const u = this.node(g, p.u);
    if (typeof u !== 'number') return u;
    const v = this.node(g, p.v);
    if (typeof v !== 'number') return v;
    if (u === v) return { error: `A pair needs two different nodes; both ends are ${p.u}.` };
    const o = fieldOptions(g, p);
    if ('error' in o) return o;
    const { sendingRow, symmetrise, selfLoops, maxNodes } = o;
    e.pair ??= new PairFieldWalker(g, e.field);
    const r = e.pair.field(u, v, p.layers, { sendingRow, symmetrise, selfLoops, ...(cancel ? { cancel } : {}) });
    // The nearest members: r.ids is ordered u, v, then by the nearer end's distance, then id.
    const m = Math.min(r.ids.length, maxNodes);
    const drawn = r.ids.slice(0, m);
    const near = new Int32Array(m);
    for (let i = 0; i < m; i++) {
      const a = r.hopsU[i]!, b = r.hopsV[i]!;
      near[i] = a < 0 ? b : b < 0 ? a : Math.min(a, b);
    }
    const edges = e.field.inducedEdges(drawn, near, sendingRow, symmetrise, DEFAULT_MAX_EDGES);
    return {
      file: g.file, u: p.u, v: p.v, layers: p.layers, sendingRow, symmetrised: symmetrise, selfLoops,
      graphNodes: g.n, indexBase: base,
      perHop: r.perHop, total: r.total, coverage: g.n ? r.total.union / g.n : 0,
      pairEdge: { uToV: r.storedEdge.uToV, vToU: r.storedEdge.vToU, vHearsU: r.carries.uToV, uHearsV: r.carries.vToU },
      distanceWithoutPairEdge: r.distanceWithoutPairEdge,
      ids: Array.from(drawn, (x) => x + base), hopsU: Array.from(r.hopsU.subarray(0, m)), hopsV: Array.from(r.hopsV.subarray(0, m)),
      shown: m, sampled: m < r.ids.length,
      edges: Array.from(edges.edgeEnds), edgeDirs: Array.from(edges.edgeDirs), edgesTotal: edges.edgesTotal,
      fileErrors: g.problems.filter((x) => x.severity === 'error').length,
    };
  }

  wlClasses(file: string, nodes: number[], cancel?: Cancel): WlClassesPayload | AnalysisError {
    const e = this.entry(file, cancel);
    if ('error' in e) return e;
    const base = e.graph.figures.indexBase;
    const r = e.structure.wlFor(nodes.map((u) => u - base), cancel);
    return {
      classesPerRound: r.classesPerRound, stableAfter: r.stableAfter,
      colours: Array.from(r.colours), classSizes: Array.from(r.classSizes),
      groups: r.groups.map((gr) => ({ colour: gr.colour, nodes: gr.nodes.map((u) => u + base), inGraph: gr.inGraph })),
      sharedInGraph: r.sharedInGraph, graphNodes: e.graph.n,
    };
  }

  bottlenecks(file: string, edges: number[], cancel?: Cancel): BottlenecksPayload | AnalysisError {
    const e = this.entry(file, cancel);
    if ('error' in e) return e;
    const base = e.graph.figures.indexBase;
    const c = e.structure.curvatureFor(edges.map((u) => u - base), cancel);
    const num = (a: Float64Array) => Array.from(a, (x) => (Number.isFinite(x) ? x : null));
    const und = e.structure.undirected();
    return {
      forman: num(c.forman), formanTriangles: num(c.formanTriangles), balancedForman: num(c.balancedForman),
      triangles: Array.from(c.triangles), bridge: Array.from(c.bridge, (b) => b === 1),
      balancedComputed: c.balancedComputed,
      bridgesInGraph: e.structure.bridges(cancel).count,
      undirectedEdges: und.indptr[und.n]! / 2,
    };
  }

  smoothing(file: string, steps = 8, cancel?: Cancel): SmoothingPayload | AnalysisError | null {
    const e = this.entry(file, cancel);
    if ('error' in e) return e;
    const g = e.graph;
    if (!g.features) return null;
    const k = clamp(Math.floor(steps), 0, PANEL_LIMITS.maxSteps);
    let out = e.smoothing.get(k);
    if (!out) {
      const features = g.features;
      const s = smoothingSummary(e.field.symmetrised(cancel), features, k, cancel);
      out = 'error' in s ? s : {
        caiWang: Array.from(s.caiWang), unnormalised: Array.from(s.unnormalised), steps: s.steps,
        featureTensor: features.name, cols: s.cols, colsUsed: s.colsUsed, nonFinite: s.nonFinite,
      };
      e.smoothing.set(k, out);
    }
    return out;
  }

  /** Internal id of a node given as written in the file, or a message. */
  private node(g: LoadedGraph, node: number): number | AnalysisError {
    const base = g.figures.indexBase;
    if (g.n === 0) return { error: `${path.basename(g.file)} has no nodes.` };
    const v = node - base;
    if (!Number.isInteger(node) || v < 0 || v >= g.n) {
      return { error: `Node ${node} is not in ${path.basename(g.file)}: its ids run from ${base} to ${g.n - 1 + base}.` };
    }
    return v;
  }

  private entry(file: string, cancel?: Cancel): Entry | AnalysisError {
    const abs = path.resolve(file);
    const old = this.cache.get(abs);
    if (old && old.stamp === stampOf(old.graph.files, abs)) {
      old.lastUse = ++this.clock;
      return old;
    }
    this.cache.delete(abs);
    let graph: LoadedGraph;
    try {
      graph = this.load(abs, this.options, cancel);
    } catch (e) {
      if (e instanceof GraphLoadError) return { error: e.message };
      throw e;
    }
    const entry: Entry = {
      stamp: stampOf(graph.files, abs), graph,
      field: new FieldAnalyzer(graph), structure: new StructureAnalyzer(graph),
      coverage: new Map(), smoothing: new Map(), lastUse: ++this.clock,
    };
    this.cache.set(abs, entry);
    if (this.cache.size > this.keep) {
      const oldest = [...this.cache.entries()].sort((a, b) => a[1].lastUse - b[1].lastUse)[0]!;
      this.cache.delete(oldest[0]);
    }
    return entry;
  }
}

/** `nodeType` + id within it → the types-forgotten graph's id, or a message. */
function typedNode(g: LoadedGraph, nodeType: string, node: number): number | AnalysisError {
  if (!g.types) return { error: `${path.basename(g.file)} is not a typed graph: give the node without a type.` };
  const u = typedNodeId(g.types, nodeType, node);
  return typeof u === 'number' ? u : { error: `${u.error[0]!.toUpperCase()}${u.error.slice(1)}.` };
}

/**
 * The node types of a field answer (common/protocol.ts FieldNodeTypes): each drawn node's type and
 * id within it, and the members per hop and per type. With self-loops the members are the ball the
 * walker gives; without, the walk frontier of exactly `layers` steps, each at its shortest distance.
 */
function fieldNodeTypes(space: TypeSpace, e: Entry, v: number, view: FieldView,
  o: { sendingRow: SendingRow; symmetrise: boolean; selfLoops: boolean }, cancel?: Cancel): FieldNodeTypes {
  const walker = (e.typeWalker ??= new FieldWalker(e.graph));
  const ball = walker.field(v, view.layers, { sendingRow: o.sendingRow, symmetrise: o.symmetrise, ...(cancel ? { cancel } : {}) });
  let nodes: ArrayLike<number> = ball.nodes, hops: ArrayLike<number> = ball.hops;
  if (!o.selfLoops) {
    const frontier = Int32Array.from(e.field.walkFrontier(v, view.layers, o.sendingRow, o.symmetrise, undefined, cancel));
    nodes = frontier;
    hops = Int32Array.from(frontier, (u) => walker.hopOf(u));
  }
  const typeOf: number[] = [], localIds: number[] = [];
  for (const u of view.ids) {
    const t = typeOfId(space.offsets, u);
    typeOf.push(t);
    localIds.push(u - space.offsets[t]!);
  }
  const c = typeOfId(space.offsets, v);
  return {
    names: space.names, counts: space.counts, offsets: space.offsets, typeOf, localIds,
    perHop: perHopByType(space, nodes, hops, view.layers), centre: { type: space.names[c]!, id: v - space.offsets[c]! },
  };
}

/** mtime and size of every file of the graph and of the manifests above it. */
function stampOf(files: string[], abs: string): string {
  const all = new Set([abs, ...files, ...manifestsAbove(path.dirname(abs))]);
  return [...all].sort().map((f) => {
    try {
      const st = fs.statSync(f);
      return `${f}:${st.mtimeMs}:${st.size}`;
    } catch {
      return `${f}:-`;
    }
  }).join('|');
}

/** The request's field options with their defaults (the graph's sending row), or a message for a bad layer count. */
function fieldOptions(g: LoadedGraph, p: FieldOptions):
  { sendingRow: SendingRow; symmetrise: boolean; selfLoops: boolean; maxNodes: number } | AnalysisError {
  if (!Number.isInteger(p.layers) || p.layers < 0 || p.layers > PANEL_LIMITS.maxLayers) {
    return { error: `The layer count must be a whole number from 0 to ${PANEL_LIMITS.maxLayers}, got ${p.layers}.` };
  }
  return {
    sendingRow: p.sendingRow ?? g.options.sendingRow ?? 0,
    symmetrise: p.symmetrise === true,
    selfLoops: p.selfLoops !== false,
    maxNodes: clamp(p.maxNodes ?? PANEL_LIMITS.defaultDrawn, PANEL_LIMITS.minDrawn, PANEL_LIMITS.maxDrawn),
  };
}

function clamp(x: number, lo: number, hi: number): number {
  return Number.isFinite(x) ? Math.min(hi, Math.max(lo, Math.round(x))) : lo;
}

/** The label of each node: the string or number stored (one-hot rows give the class), null when absent. */
/** In a typed graph: each drawn node's label from its own type's label tensor (null where its type has none). */
function typedLabelTexts(g: LoadedGraph, ids: Int32Array): Array<string | number | null> {
  const space = g.types!;
  const out = new Array<string | number | null>(ids.length).fill(null);
  space.names.forEach((_, t) => {
    const tensor = g.typeLabels![t];
    if (!tensor) return;
    const at: number[] = [];
    for (let i = 0; i < ids.length; i++) if (typeOfId(space.offsets, ids[i]!) === t) at.push(i);
    const local = Int32Array.from(at, (i) => ids[i]! - space.offsets[t]!);
    labelTexts(tensor, local, space.counts[t]!).forEach((y, j) => { out[at[j]!] = y; });
  });
  return out;
}

function labelTexts(t: DenseTensor, ids: Int32Array, n: number): Array<string | number | null> {
  const rows = t.shape[0] ?? 0;
  if (t.strings && t.shape.length === 1) return Array.from(ids, (u) => (u < rows ? t.strings![u] ?? null : null));
  if (t.strings) return Array.from(ids, () => null);
  if (t.shape.length === 1 || (t.shape.length === 2 && t.shape[1] === 1)) {
    return Array.from(ids, (u) => {
      if (u >= rows) return null;
      const y = t.data[u]!;
      return Number.isFinite(y) ? y : null;
    });
  }
  const classes = labelVector(t, n);
  if ('error' in classes) return Array.from(ids, () => null);
  return Array.from(ids, (u) => (classes[u]! >= 0 ? classes[u]! : null));
}

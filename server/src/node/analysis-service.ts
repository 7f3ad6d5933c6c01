/**
 * The analyses behind the receptive-field panel, over graphs loaded with `loadGraph` and kept
 * while their files are unchanged (path + mtime + size of every file of the graph and of the
 * manifests above it). Plain Node, no LSP types: GraphService hosts it in the worker thread.
 *
 * Answers are the JSON payloads of protocol.ts, or `{ error }` with a sentence for the user when
 * the file or the node cannot be used (the LSP layer turns that into a request error).
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import type { CheckSetOptions } from '../core/checks/check-set';
import type { DenseTensor } from '../core/formats/types';
import { FieldAnalyzer, smoothingSummary } from '../core/graph/field-view';
import { StructureAnalyzer } from '../core/graph/structure-view';
import { labelVector } from '../core/graph/propagation/homophily';
import { GraphLoadError, loadGraph, type LoadedGraph } from './graph-input';
import { manifestsAbove } from './load';
import type {
  BottlenecksPayload, FieldViewPayload, FieldViewRequest, SmoothingPayload, WlClassesPayload,
} from '../../../common/protocol';

export interface AnalysisError { error: string }

/** Limits on what a request may ask for. */
export const PANEL_LIMITS = { minDrawn: 10, maxDrawn: 20_000, defaultDrawn: 2000, maxLayers: 64, maxSteps: 64 } as const;

interface Entry {
  stamp: string;
  graph: LoadedGraph;
  field: FieldAnalyzer;
  structure: StructureAnalyzer;
  /** Coverage curves per (flow, symmetrise, selfLoops). */
  coverage: Map<string, FieldViewPayload['coverageCurve']>;
  smoothing: Map<number, SmoothingPayload | AnalysisError>;
  lastUse: number;
}

export class AnalysisService {
  private readonly cache = new Map<string, Entry>();
  private clock = 0;

  constructor(private options: CheckSetOptions = {}, private readonly keep = 2) {}

  configure(options: CheckSetOptions): void {
    this.options = options;
    this.cache.clear();
  }

  forget(file: string): void {
    this.cache.delete(path.resolve(file));
  }

  field(file: string, p: Omit<FieldViewRequest.Params, 'uri'>): FieldViewPayload | AnalysisError {
    const e = this.entry(file);
    if ('error' in e) return e;
    const g = e.graph;
    const base = g.figures.indexBase;
    const v = this.node(g, p.node);
    if (typeof v !== 'number') return v;
    if (!Number.isInteger(p.layers) || p.layers < 0 || p.layers > PANEL_LIMITS.maxLayers) {
      return { error: `The layer count must be a whole number from 0 to ${PANEL_LIMITS.maxLayers}, got ${p.layers}.` };
    }
    const flow = p.flow ?? g.options.flow ?? 'source-to-target';
    const symmetrise = p.symmetrise === true;
    const selfLoops = p.selfLoops !== false;
    const maxNodes = clamp(p.maxNodes ?? PANEL_LIMITS.defaultDrawn, PANEL_LIMITS.minDrawn, PANEL_LIMITS.maxDrawn);
    const view = e.field.view(v, p.layers, { flow, symmetrise, selfLoops, maxNodes });
    const key = `${flow}|${symmetrise}|${selfLoops}`;
    let coverageCurve = e.coverage.get(key);
    if (!coverageCurve) {
      coverageCurve = e.field.coverage({ flow, symmetrise, selfLoops, maxLayers: 8 });
      e.coverage.set(key, coverageCurve);
    }
    const ids = Array.from(view.ids, (u) => u + base);
    const labels = g.labels ? labelTexts(g.labels, view.ids, g.n) : undefined;
    return {
      file: g.file, node: p.node, layers: p.layers, flow, symmetrised: symmetrise, selfLoops,
      graphNodes: g.n, indexBase: base,
      perHop: view.perHop, total: view.total, coverage: view.coverage, centreInField: view.centreInField,
      ids, hops: Array.from(view.hops), weights: Array.from(view.weights),
      ...(labels ? { labels } : {}),
      shown: view.shown, shownPerHop: view.shownPerHop, sampled: view.sampled,
      edges: Array.from(view.edgeEnds), edgeDirs: Array.from(view.edgeDirs), edgesTotal: view.edgesTotal,
      coverageCurve, hasFeatures: g.features !== undefined,
      fileErrors: g.problems.filter((x) => x.severity === 'error').length,
    };
  }

  wlClasses(file: string, nodes: number[]): WlClassesPayload | AnalysisError {
    const e = this.entry(file);
    if ('error' in e) return e;
    const base = e.graph.figures.indexBase;
    const r = e.structure.wlFor(nodes.map((u) => u - base));
    return {
      classesPerRound: r.classesPerRound, stableAfter: r.stableAfter,
      colours: Array.from(r.colours), classSizes: Array.from(r.classSizes),
      groups: r.groups.map((gr) => ({ colour: gr.colour, nodes: gr.nodes.map((u) => u + base), inGraph: gr.inGraph })),
      sharedInGraph: r.sharedInGraph, graphNodes: e.graph.n,
    };
  }

  bottlenecks(file: string, edges: number[]): BottlenecksPayload | AnalysisError {
    const e = this.entry(file);
    if ('error' in e) return e;
    const base = e.graph.figures.indexBase;
    const c = e.structure.curvatureFor(edges.map((u) => u - base));
    const num = (a: Float64Array) => Array.from(a, (x) => (Number.isFinite(x) ? x : null));
    const und = e.structure.undirected();
    return {
      forman: num(c.forman), formanTriangles: num(c.formanTriangles), balancedForman: num(c.balancedForman),
      triangles: Array.from(c.triangles), bridge: Array.from(c.bridge, (b) => b === 1),
      balancedComputed: c.balancedComputed,
      bridgesInGraph: e.structure.bridges().count,
      undirectedEdges: und.indptr[und.n]! / 2,
    };
  }

  smoothing(file: string, steps = 8): SmoothingPayload | AnalysisError | null {
    const e = this.entry(file);
    if ('error' in e) return e;
    const g = e.graph;
    if (!g.features) return null;
    const k = clamp(Math.floor(steps), 0, PANEL_LIMITS.maxSteps);
    let out = e.smoothing.get(k);
    if (!out) {
      const features = g.features;
      const s = smoothingSummary(e.field.symmetrised(), features, k);
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

  private entry(file: string): Entry | AnalysisError {
    const abs = path.resolve(file);
    const old = this.cache.get(abs);
    if (old && old.stamp === stampOf(old.graph.files, abs)) {
      old.lastUse = ++this.clock;
      return old;
    }
    this.cache.delete(abs);
    let graph: LoadedGraph;
    try {
      graph = loadGraph(abs, this.options);
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

function clamp(x: number, lo: number, hi: number): number {
  return Number.isFinite(x) ? Math.min(hi, Math.max(lo, Math.round(x))) : lo;
}

/** The label of each node: the string or number stored (one-hot rows give the class), null when absent. */
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

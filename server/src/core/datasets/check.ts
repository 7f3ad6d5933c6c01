/**
 * The checks of a dataset of many graphs: every one-graph check run per graph with local ids (an id
 * at or beyond its graph's node count is out of range even when it is inside the batch), in tight
 * loops over the shared arrays, then aggregated: one problem per code, with how many graphs it
 * affects, the first graph and the first examples (locations carry `graph`). Dataset-level checks:
 * edges joining two graphs, graph labels of the wrong length, empty graphs, and isomorphic graphs
 * (features included) with different labels or on both sides of a split (isomorphism.ts).
 *
 * `inRange` gives the dataset the analyses use: edges out of range or across graphs dropped.
 */
import { CODES } from '../../../../common/problem-codes';
import type { DatasetSummary } from '../../../../common/report';
import type { Problem, ProblemCode, ProblemLocation, Severity, TensorData } from '../formats/types';
import type { Dataset } from './model';
import type { FiledProblem } from './read-common';
import { isomorphismProblems, type IsomorphismOptions } from './isomorphism';

export interface DatasetCheckOptions extends IsomorphismOptions {
  /** Declared direction: true = no symmetry check; false = every missing reverse is reported. */
  directed?: boolean;
  selfLoops?: 'allowed' | 'forbidden';
}

/** Examples kept per problem (locations), and quoted in its message. */
const KEPT = 20;
const QUOTED = 3;

/** One code's tally over the graphs. */
class Tally {
  graphs = 0;
  count = 0;
  first = -1;
  private last = -1;
  readonly locs: ProblemLocation[] = [];
  hit(g: number, n: number): void {
    if (g !== this.last) { this.graphs++; this.last = g; if (this.first < 0) this.first = g; }
    this.count += n;
  }
  wantsExample(): boolean {
    return this.locs.length < KEPT;
  }
}

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

/** Where edge entry j (a position in ds.src/dst) is: tensor and flat index, or line. */
export function edgeLocation(ds: Dataset, j: number, g: number, detail: string): ProblemLocation {
  const loc: ProblemLocation = { graph: g, detail };
  const et = ds.edgeTensor;
  if (!et) return loc;
  const col = ds.edgeColumn ? ds.edgeColumn[j]! : j;
  const flat = et.layout === 'columns' ? col : 2 * col;
  loc.tensor = et.tensor;
  loc.index = flat;
  const span = et.locator?.locate(flat);
  if (span) { loc.line = span.line; loc.column = span.column; loc.length = span.length; }
  return loc;
}

export function checkDataset(ds: Dataset, opts: DatasetCheckOptions = {}): FiledProblem[] {
  const out: FiledProblem[] = [];
  const G = ds.graphs;
  const file = ds.structureFile;
  const tensor = ds.edgeTensor?.tensor;
  const { nodeOffsets: no, edgeOffsets: eo, src, dst } = ds;
  const N = no[G] ?? 0;
  let maxN = 0, maxE = 0;
  for (let g = 0; g < G; g++) {
    const n = no[g + 1]! - no[g]!, e = eo[g + 1]! - eo[g]!;
    if (n > maxN) maxN = n;
    if (e > maxE) maxE = e;
  }
  const crossFlag = new Uint8Array(src.length);
  if (ds.crossGraph) for (const j of ds.crossGraph) crossFlag[j] = 1;

  const oor = new Tally(), cross = new Tally(), loops = new Tally(), dups = new Tally(), asym = new Tally(), iso = new Tally();
  const noNodes = new Tally(), noEdges = new Tally();
  /** Graphs with edges whose pairs all have their reverse (the dataset looks undirected when most do). */
  let symmetricGraphs = 0, graphsWithPairs = 0;
  /** Whether any in-graph endpoint is 0, and whether every out-of-range id equals its graph's node count (ids that look 1-based). */
  let zeroSeen = false, oorAtN = true;
  const asymByGraph: number[] = [];
  const keys = new Float64Array(Math.max(1, maxE));
  const touched = new Int32Array(Math.max(1, maxN));
  let stamp = 0;

  for (let g = 0; g < G; g++) {
    const base = no[g]!, n = no[g + 1]! - base;
    const e0 = eo[g]!, e1 = eo[g + 1]!;
    if (n === 0) {
      noNodes.hit(g, 1);
      if (noNodes.wantsExample()) noNodes.locs.push({ graph: g, detail: `graph ${g}: no nodes` });
    } else if (e1 === e0) {
      noEdges.hit(g, 1);
      if (noEdges.wantsExample()) noEdges.locs.push({ graph: g, detail: `graph ${g}: ${plural(n, 'node')}, no edges` });
    }
    stamp++;
    let m = 0, loopCount = 0, bad = 0, crossHere = 0;
    for (let j = e0; j < e1; j++) {
      const u = src[j]!, v = dst[j]!;
      if (crossFlag[j]) {
        crossHere++;
        if (cross.wantsExample()) cross.locs.push(edgeLocation(ds, j, g, `graph ${g}: edge ${j - e0} leaves the graph`));
        continue;
      }
      if (u === 0 || v === 0) zeroSeen = true;
      if (u < 0 || u >= n || v < 0 || v >= n) {
        bad++;
        if ((u !== n && (u < 0 || u >= n)) || (v !== n && (v < 0 || v >= n))) oorAtN = false;
        if (oor.wantsExample()) {
          const id = u < 0 || u >= n ? u : v;
          const written = ds.globalIds && id !== -2147483648 ? ` (written ${id + base + ds.globalIds.base})` : '';
          oor.locs.push(edgeLocation(ds, j, g, `graph ${g} (${plural(n, 'node')}): edge ${j - e0} uses id ${id === -2147483648 ? '(not a whole number in int32)' : id}${written}`));
        }
        continue;
      }
      if (u === v) {
        loopCount++;
        if (loops.wantsExample()) loops.locs.push(edgeLocation(ds, j, g, `graph ${g}: self-loop ${u} → ${u}`));
      } else { touched[u] = stamp; touched[v] = stamp; }
      keys[m++] = u * n + v;
    }
    if (bad) oor.hit(g, bad);
    if (crossHere) cross.hit(g, crossHere);
    if (loopCount) loops.hit(g, loopCount);
    // Isolated: nodes with no edge other than self-loops (reported for graphs that have edges).
    let lonely = 0;
    for (let u = 0; u < n; u++) {
      if (touched[u] !== stamp) {
        lonely++;
        if (e1 > e0 && iso.wantsExample() && lonely <= 3) iso.locs.push({ graph: g, detail: `graph ${g}: node ${u}`, ...(tensor ? { tensor } : {}) });
      }
    }
    if (lonely && e1 > e0) iso.hit(g, lonely);
    if (m > 1) {
      const k = keys.subarray(0, m).sort();
      let distinct = 1;
      for (let i = 1; i < m; i++) if (k[i] !== k[i - 1]) k[distinct++] = k[i]!;
      if (distinct < m) {
        dups.hit(g, m - distinct);
        if (dups.wantsExample()) dups.locs.push(...duplicateExamples(ds, g, n, crossFlag));
      }
      let pairs = 0, missing = 0;
      for (let i = 0; i < distinct; i++) {
        const key = k[i]!;
        const u = Math.floor(key / n), v = key - u * n;
        if (u === v) continue;
        pairs++;
        if (!has(k, distinct, v * n + u)) missing++;
      }
      if (pairs) { graphsWithPairs++; if (!missing) symmetricGraphs++; }
      if (missing) { asymByGraph.push(g, missing); }
    } else if (m === 1 && src[e0] !== dst[e0] && !crossFlag[e0] && src[e0]! >= 0 && src[e0]! < n && dst[e0]! >= 0 && dst[e0]! < n) {
      graphsWithPairs++;
      asymByGraph.push(g, 1);
    }
  }

  const report = (code: ProblemCode, t: Tally, message: string, severity?: Severity, problemTensor = tensor, f = file) => {
    const p: Problem = {
      code, severity: severity ?? CODES[code].severity, message, count: t.count, graph: t.first, graphs: t.graphs,
      ...(problemTensor ? { tensor: problemTensor } : {}), ...(t.locs.length ? { locations: t.locs } : {}),
    };
    const l0 = t.locs[0];
    if (l0?.line !== undefined) { p.line = l0.line; p.column = l0.column ?? 1; }
    out.push({ file: f, problem: p });
  };
  const quoted = (t: Tally) => t.locs.slice(0, QUOTED).map((l) => l.detail).join('; ');
  const inGraphs = (t: Tally) => t.graphs === 1 ? `in graph ${t.first}` : `in ${t.graphs} of ${G} graphs (first: graph ${t.first})`;

  if (oor.count) {
    report('index-out-of-range', oor,
      `${plural(oor.count, 'edge entry', 'edge entries')} ${inGraphs(oor)} ${oor.count === 1 ? 'uses' : 'use'} a node id outside ${oor.count === 1 ? 'its' : 'their'} own graph (${quoted(oor)}). ` +
      'In a dataset each graph numbers its nodes from 0 to its node count − 1; an id that is valid for the whole batch is still wrong here. ' +
      'These edges are left out of the analyses; fix the ids (or the node offsets) of those graphs.' +
      (!zeroSeen && oorAtN ? ' No graph uses id 0 and every such id equals its graph\'s node count: the ids look 1-based; subtract 1 from them.' : ''));
  }
  if (cross.count) {
    report('cross-graph-edges', cross,
      `${plural(cross.count, 'edge entry', 'edge entries')} ${cross.count === 1 ? 'joins' : 'join'} nodes of two different graphs (${quoted(cross)}), ${inGraphs(cross)}. ` +
      'Messages would leak between graphs that should be independent; the batch vector or the edge ids are wrong. These edges are left out of the analyses.');
  }
  if (loops.count) {
    const forbidden = opts.selfLoops === 'forbidden';
    report('self-loops', loops,
      `${plural(loops.count, 'self-loop')} ${inGraphs(loops)} (${quoted(loops)}). ` +
      (forbidden ? 'The dataset declares self-loops forbidden: remove them.'
        : 'Layers that add self-loops themselves (GCN normalisation) will count these twice; remove them or skip that step.'),
      forbidden ? 'warning' : undefined);
  }
  if (dups.count) {
    report('duplicate-edges', dups,
      `${plural(dups.count, 'duplicate edge entry', 'duplicate edge entries')} ${inGraphs(dups)} (${quoted(dups)}). ` +
      'Sum aggregation counts such a neighbour several times; coalesce each graph\'s edges.');
  }
  // Symmetry, as for one graph: reported when declared undirected, or when most graphs are symmetric.
  if (asymByGraph.length && opts.directed !== true) {
    const declared = opts.directed === false;
    const share = graphsWithPairs ? symmetricGraphs / graphsWithPairs : 0;
    if (declared || share >= 0.5) {
      for (let i = 0; i < asymByGraph.length; i += 2) {
        const g = asymByGraph[i]!;
        asym.hit(g, asymByGraph[i + 1]!);
        if (asym.wantsExample()) asym.locs.push(...asymmetricExamples(ds, g, crossFlag, 2));
      }
      report('asymmetric-adjacency', asym,
        `${plural(asym.count, 'edge')} without a reverse edge ${inGraphs(asym)} (${quoted(asym)}). ` +
        (declared ? 'The dataset is declared undirected' : `${Math.round(share * 100)}% of the graphs store every edge both ways, so the dataset looks undirected`) +
        ': messages travel one way only along these. Add the missing reverse edges, or declare the dataset directed.',
        declared ? 'error' : undefined);
    }
  }
  if (iso.count) {
    report('isolated-nodes', iso,
      `${plural(iso.count, 'node')} ${inGraphs(iso)} ${iso.count === 1 ? 'has' : 'have'} no edges (${quoted(iso)}). A message-passing layer gives them only their own features.`);
  }
  if (noNodes.count || noEdges.count) {
    const t = new Tally();
    const firstOf = [noNodes.first, noEdges.first].filter((x) => x >= 0);
    t.count = noNodes.count + noEdges.count;
    t.graphs = t.count;
    t.first = Math.min(...firstOf);
    t.locs.push(...[...noNodes.locs, ...noEdges.locs].sort((a, b) => a.graph! - b.graph!).slice(0, KEPT));
    const parts = [noNodes.count ? `${plural(noNodes.count, 'graph')} with no nodes` : '', noEdges.count ? `${plural(noEdges.count, 'graph')} with nodes but no edges` : '']
      .filter(Boolean).join(' and ');
    report('empty-graphs', t, `${parts} (${quoted(t)}). A message-passing model sees nothing but features there; pooling over no nodes gives zeros or NaN. Drop them or check how they were built.`);
  }

  // Per-node and per-graph columns.
  if (ds.nodeFeatures && ds.nodeFeatures.rows !== N) {
    out.push({ file: ds.nodeFeatures.file, problem: { code: 'feature-rows-mismatch', severity: 'error', count: 1, tensor: ds.nodeFeatures.tensor,
      message: `${ds.nodeFeatures.tensor} has ${ds.nodeFeatures.rows} rows but the dataset's ${G} graphs have ${N} nodes in all; every node needs exactly one feature row.` } });
  } else if (ds.nodeFeatures) {
    nonFinite(ds, ds.nodeFeatures, no, 'node', out);
  }
  if (ds.nodeLabels && ds.nodeLabels.rows !== N) {
    out.push({ file: ds.nodeLabels.file, problem: { code: 'label-length-mismatch', severity: 'error', count: 1, tensor: ds.nodeLabels.tensor,
      message: `${ds.nodeLabels.tensor} has ${ds.nodeLabels.rows} node labels but the dataset's ${G} graphs have ${N} nodes in all; every node needs one.` } });
  }
  if (ds.edgeFeatures && ds.edgeFeatures.rows !== src.length) {
    out.push({ file: ds.edgeFeatures.file, problem: { code: 'edge-features-rows-mismatch', severity: 'error', count: 1, tensor: ds.edgeFeatures.tensor,
      message: `${ds.edgeFeatures.tensor} has ${ds.edgeFeatures.rows} rows but the dataset has ${src.length} edge entries; every edge entry needs exactly one row.` } });
  } else if (ds.edgeFeatures) {
    nonFinite(ds, ds.edgeFeatures, eo, 'edge', out);
  }
  const labelsOk = !ds.graphLabels || ds.graphLabels.rows === G;
  if (!labelsOk) {
    const gl = ds.graphLabels!;
    out.push({ file: gl.file, problem: { code: 'graph-labels-mismatch', severity: CODES['graph-labels-mismatch'].severity, count: Math.abs(gl.rows - G), tensor: gl.tensor,
      message: `${gl.tensor} has ${gl.rows} graph labels but the dataset has ${G} graphs; every graph needs exactly one label row (${gl.rows > G ? `${gl.rows - G} too many` : `${G - gl.rows} missing`}). ` +
        'Labels cannot be matched to their graphs, so the label checks were skipped.' } });
  }
  for (const p of isomorphismProblems(inRange(ds), labelsOk ? ds.graphLabels : undefined, opts)) out.push(p);
  return out;
}

/** Binary search of a sorted prefix. */
function has(k: Float64Array, len: number, key: number): boolean {
  let lo = 0, hi = len - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const x = k[mid]!;
    if (x === key) return true;
    if (x < key) lo = mid + 1; else hi = mid - 1;
  }
  return false;
}

function validIn(ds: Dataset, j: number, n: number, crossFlag: Uint8Array): boolean {
  const u = ds.src[j]!, v = ds.dst[j]!;
  return !crossFlag[j] && u >= 0 && u < n && v >= 0 && v < n;
}

/** The first repeated entries of graph g (small: examples only). */
function duplicateExamples(ds: Dataset, g: number, n: number, crossFlag: Uint8Array): ProblemLocation[] {
  const seen = new Set<number>();
  const out: ProblemLocation[] = [];
  for (let j = ds.edgeOffsets[g]!; j < ds.edgeOffsets[g + 1]! && out.length < 2; j++) {
    if (!validIn(ds, j, n, crossFlag)) continue;
    const key = ds.src[j]! * n + ds.dst[j]!;
    if (seen.has(key)) out.push(edgeLocation(ds, j, g, `graph ${g}: repeat of ${ds.src[j]} → ${ds.dst[j]}`));
    seen.add(key);
  }
  return out;
}

function asymmetricExamples(ds: Dataset, g: number, crossFlag: Uint8Array, max: number): ProblemLocation[] {
  const n = ds.nodeOffsets[g + 1]! - ds.nodeOffsets[g]!;
  const pairs = new Set<number>();
  const e0 = ds.edgeOffsets[g]!, e1 = ds.edgeOffsets[g + 1]!;
  for (let j = e0; j < e1; j++) if (validIn(ds, j, n, crossFlag)) pairs.add(ds.src[j]! * n + ds.dst[j]!);
  const out: ProblemLocation[] = [];
  for (let j = e0; j < e1 && out.length < max; j++) {
    if (!validIn(ds, j, n, crossFlag)) continue;
    const u = ds.src[j]!, v = ds.dst[j]!;
    if (u !== v && !pairs.has(v * n + u)) out.push(edgeLocation(ds, j, g, `graph ${g}: ${u} → ${v} has no ${v} → ${u}`));
  }
  return out;
}

/** NaN / ±Infinity in a per-node or per-edge column, by graph. */
function nonFinite(ds: Dataset, col: NonNullable<Dataset['nodeFeatures']>, offsets: Float64Array, what: 'node' | 'edge', out: FiledProblem[]): void {
  const d = col.data;
  if (d instanceof Int32Array || d instanceof Uint8Array || d instanceof Int8Array || d instanceof Int16Array || d instanceof Uint16Array || d instanceof Uint32Array) return;
  const t = new Tally();
  const c = col.columns;
  let g = 0;
  for (let i = 0; i < d.length; i++) {
    const x = d[i]!;
    if (x - x === 0) continue; // finite
    const row = Math.floor(i / c);
    while (g < ds.graphs && offsets[g + 1]! <= row) g++;
    t.hit(g, 1);
    if (t.wantsExample()) t.locs.push({ graph: g, tensor: col.tensor, index: i, detail: `graph ${g}: ${what} ${row - offsets[g]!}, column ${i % c}: ${x}` });
  }
  if (!t.count) return;
  out.push({ file: col.file, problem: {
    code: 'non-finite-features', severity: CODES['non-finite-features'].severity, count: t.count, tensor: col.tensor, graph: t.first, graphs: t.graphs, locations: t.locs,
    message: `${plural(t.count, 'NaN or infinite value')} in ${col.tensor} ${t.graphs === 1 ? `in graph ${t.first}` : `in ${t.graphs} graphs (first: graph ${t.first})`} ` +
      `(${t.locs.slice(0, QUOTED).map((l) => l.detail).join('; ')}). One such value spreads to every node a message reaches; replace or drop them.`,
  } });
}

/**
 * The dataset the analyses take: every edge entry out of its graph's range or joining two graphs
 * dropped (offsets recomputed, `edgeColumn` kept pointing at the file's entries). The dataset
 * itself when nothing is dropped.
 */
export function inRange(ds: Dataset): Dataset {
  const { src, dst, nodeOffsets: no, edgeOffsets: eo } = ds;
  const crossFlag = new Uint8Array(src.length);
  if (ds.crossGraph) for (const j of ds.crossGraph) crossFlag[j] = 1;
  let dropped = 0;
  for (let g = 0; g < ds.graphs; g++) {
    const n = no[g + 1]! - no[g]!;
    for (let j = eo[g]!; j < eo[g + 1]!; j++) if (!validIn(ds, j, n, crossFlag)) dropped++;
  }
  if (!dropped) return ds;
  const E = src.length - dropped;
  const s = new Int32Array(E), d = new Int32Array(E), col = new Int32Array(E);
  const off = new Float64Array(ds.graphs + 1);
  let m = 0;
  for (let g = 0; g < ds.graphs; g++) {
    const n = no[g + 1]! - no[g]!;
    for (let j = eo[g]!; j < eo[g + 1]!; j++) {
      if (!validIn(ds, j, n, crossFlag)) continue;
      s[m] = src[j]!; d[m] = dst[j]!; col[m] = ds.edgeColumn ? ds.edgeColumn[j]! : j; m++;
    }
    off[g + 1] = m;
  }
  const clean: Dataset = { ...ds, src: s, dst: d, edgeOffsets: off, edgeColumn: col };
  delete clean.crossGraph;
  const ef = ds.edgeFeatures;
  if (ef && ef.rows === src.length) {
    const c = ef.columns;
    const Ctor = ef.data.constructor as new (n: number) => TensorData;
    const out = new Ctor(E * c);
    let r = 0;
    for (let g = 0; g < ds.graphs; g++) {
      const n = no[g + 1]! - no[g]!;
      for (let j = eo[g]!; j < eo[g + 1]!; j++) {
        if (!validIn(ds, j, n, crossFlag)) continue;
        for (let q = 0; q < c; q++) out[r * c + q] = ef.data[j * c + q]!;
        r++;
      }
    }
    clean.edgeFeatures = { ...ef, data: out, rows: E };
  }
  return clean;
}

/** `files[].dataset` of the report. */
export function summarise(ds: Dataset): DatasetSummary {
  const spread = (off: Float64Array) => {
    const G = ds.graphs;
    if (G === 0) return { min: 0, max: 0, mean: 0, total: 0 };
    let min = Infinity, max = -Infinity;
    for (let g = 0; g < G; g++) { const c = off[g + 1]! - off[g]!; if (c < min) min = c; if (c > max) max = c; }
    const total = off[G]! - off[0]!;
    return { min, max, mean: Math.round((total / G) * 1000) / 1000, total };
  };
  return {
    graphs: ds.graphs,
    nodes: spread(ds.nodeOffsets),
    edges: spread(ds.edgeOffsets),
    graphLabels: labelClasses(ds),
    splits: ds.splits ? { train: ds.splits.train?.length ?? 0, val: ds.splits.val?.length ?? 0, test: ds.splits.test?.length ?? 0 } : null,
  };
}

/** Class values and counts of one-column whole-number graph labels (or strings); null otherwise. */
export function labelClasses(ds: Dataset): DatasetSummary['graphLabels'] {
  const gl = ds.graphLabels;
  if (!gl || gl.columns !== 1) return null;
  const counts = new Map<number, number>();
  for (let i = 0; i < gl.rows && i < gl.data.length; i++) {
    const v = gl.data[i]!;
    if (!Number.isInteger(v)) return null; // a regression target, not classes
    counts.set(v, (counts.get(v) ?? 0) + 1);
  }
  if (counts.size > 1000) return null;
  const values = [...counts.keys()].sort((a, b) => a - b);
  return { classes: values.map((v) => (gl.strings ? gl.strings[v] ?? String(v) : String(v))), counts: values.map((v) => counts.get(v)!) };
}

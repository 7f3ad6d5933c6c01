/**
 * Processed datasets saved as a tuple `(data, slices)` or `(data_dict, slices, data_class)`: the
 * batched tensors of every graph concatenated, and for each attribute G + 1 offsets cutting them.
 * The .pt reader names the tuple's tensors `[0].edge_index`, `[1].edge_index`, …: the data is
 * position 0 (a dict or an object saved whole), the slices position 1. Edge ids are local to
 * their graph (each graph's ids start at 0), as such datasets store them.
 */
import type { DenseTensor } from '../formats/types';
import type { Dataset, DatasetColumn } from './model';
import {
  columnOf, denseOf, endpoints, escapeRe, intVector, offsetsFault, problem, tableShape, toFloat64,
  type DatasetInputFile, type FiledProblem,
} from './read-common';

export interface FoundDataset {
  /** Undefined when the layout was recognised but its offsets cannot be used (problems say why). */
  dataset?: Dataset;
  /** Every file that takes part: the one-graph checks leave them alone. */
  files: string[];
  /** Problems of the layout itself (offsets, lengths), on the file they are in. */
  problems: FiledProblem[];
}

/** Attributes whose rows are nodes when their slices match the node offsets. */
const NODE_ATTRS = ['x', 'pos', 'z'];

export function readSlices(file: DatasetInputFile): FoundDataset[] {
  const tensors = file.result?.tensors ?? [];
  const prefixes = new Set<string>();
  for (const t of tensors) {
    const m = /^(.*)\[1\]\.([^.[\]]+)$/.exec(t.name);
    if (m && intVector(t)) prefixes.add(m[1]!);
  }
  const out: FoundDataset[] = [];
  for (const p of prefixes) {
    const found = readOne(file, p);
    if (found) out.push(found);
  }
  return out;
}

function readOne(file: DatasetInputFile, prefix: string): FoundDataset | undefined {
  const path = file.path;
  const tensors = file.result?.tensors ?? [];
  const sliceRe = new RegExp(`^${escapeRe(prefix)}\\[1\\]\\.([^.[\\]]+)$`);
  const dataRe = new RegExp(`^${escapeRe(prefix)}\\[0\\]\\.([^.[\\]]+)$`);
  const slices = new Map<string, DenseTensor>();
  const data = new Map<string, DenseTensor>();
  for (const t of tensors) {
    let m = sliceRe.exec(t.name);
    const v = intVector(t);
    if (m && v) slices.set(m[1]!, v);
    m = dataRe.exec(t.name);
    const d = denseOf(t);
    if (m && d) data.set(m[1]!, d);
  }
  const eiSlices = slices.get('edge_index');
  const ei = data.get('edge_index');
  if (!eiSlices || !ei) return undefined;
  const problems: FiledProblem[] = [];
  const fail = (tensor: string, message: string) =>
    problems.push({ file: path, problem: problem('bad-graph-offsets', message, { tensor }) });
  const result: FoundDataset = { files: [path], problems };
  const G = eiSlices.data.length - 1;
  // Every slice vector cuts the same graphs: G + 1 entries each.
  for (const [attr, s] of slices) {
    if (s.data.length !== G + 1) {
      fail(s.name, `${s.name} has ${s.data.length} offsets but ${eiSlices.name} has ${G + 1}: each attribute needs one offset per graph plus one (G + 1), so the graphs cannot be told apart. Save the slices the dataset was collated with.`);
      slices.delete(attr);
    }
  }
  const ends = endpoints(ei);
  if (!ends || ends.layout !== 'columns') {
    fail(ei.name, `${ei.name} has shape [${ei.shape.join(', ')}]; a dataset's edge index is 2 × E (one column per edge entry), so its slices cannot cut it.`);
    return result;
  }
  const edgeOffsets = toFloat64(eiSlices.data);
  const eFault = offsetsFault(edgeOffsets, ends.src.length);
  if (eFault) {
    fail(eiSlices.name, `The edge offsets ${eiSlices.name} do not cut ${ei.name} (${ends.src.length} edge entries) into graphs: ${eFault}. The graphs' edges cannot be told apart; re-collate the dataset.`);
    return result;
  }

  // Node offsets: from a node attribute's slices, else per-graph node counts, else the edge ids.
  let nodeOffsets: Float64Array | undefined;
  for (const a of NODE_ATTRS) {
    const s = slices.get(a), d = data.get(a);
    if (!s || !d) continue;
    const off = toFloat64(s.data);
    const fault = offsetsFault(off, tableShape(d)[0]);
    if (fault) {
      fail(s.name, `The node offsets ${s.name} do not cut ${d.name} (${tableShape(d)[0]} rows) into graphs: ${fault}. The graphs' nodes cannot be told apart; re-collate the dataset.`);
      return result;
    }
    nodeOffsets = off;
    break;
  }
  const counts = intVector(data.get('num_nodes'));
  if (!nodeOffsets && counts && counts.data.length === G) {
    nodeOffsets = new Float64Array(G + 1);
    for (let g = 0; g < G; g++) {
      const c = counts.data[g]!;
      if (!(c >= 0)) {
        fail(counts.name, `${counts.name} gives graph ${g} ${c} nodes; node counts cannot be negative.`);
        return result;
      }
      nodeOffsets[g + 1] = nodeOffsets[g]! + c;
    }
  }
  if (!nodeOffsets) {
    // As graph-learning libraries infer it: one more than the largest id each graph's edges use.
    nodeOffsets = new Float64Array(G + 1);
    for (let g = 0; g < G; g++) {
      let max = -1;
      for (let k = edgeOffsets[g]!; k < edgeOffsets[g + 1]!; k++) {
        if (ends.src[k]! > max) max = ends.src[k]!;
        if (ends.dst[k]! > max) max = ends.dst[k]!;
      }
      nodeOffsets[g + 1] = nodeOffsets[g]! + max + 1;
    }
  }
  const N = nodeOffsets[G]!;
  const ds: Dataset = {
    structureFile: path, files: [path], layout: 'slices', graphs: G,
    nodeOffsets, edgeOffsets, src: ends.src, dst: ends.dst,
    edgeTensor: { file: path, tensor: ei.name, layout: 'columns' },
  };
  const x = data.get('x');
  if (x && tableShape(x)[0] === N) ds.nodeFeatures = columnOf(path, x);

  // The other attributes: graph-level (one row per graph), node-level or edge-level by their slices.
  const sameAs = (s: DenseTensor, off: Float64Array) => {
    if (s.data.length !== off.length) return false;
    for (let i = 0; i < off.length; i++) if (s.data[i] !== off[i]) return false;
    return true;
  };
  for (const [attr, s] of slices) {
    if (attr === 'edge_index' || NODE_ATTRS.includes(attr) || attr === 'num_nodes') continue;
    const d = data.get(attr);
    if (!d) continue;
    const rows = tableShape(d)[0];
    const fault = offsetsFault(toFloat64(s.data), rows);
    if (fault) {
      fail(s.name, `The offsets ${s.name} do not cut ${d.name} (${rows} rows) into graphs: ${fault}. Its values cannot be matched to their graphs.`);
      continue;
    }
    let graphLevel = true;
    for (let g = 0; g <= G; g++) if (s.data[g] !== g) { graphLevel = false; break; }
    const col: DatasetColumn = columnOf(path, d);
    if (sameAs(s, edgeOffsets) && /^edge_?(attr|feat|features?|weight)s?$/.test(attr)) {
      ds.edgeFeatures = col;
    } else if (graphLevel && (attr === 'y' || /label|target/.test(attr))) {
      if (!ds.graphLabels) ds.graphLabels = col;
    } else if (sameAs(s, nodeOffsets) && (attr === 'y' || /label|target/.test(attr))) {
      if (!ds.nodeLabels) ds.nodeLabels = col;
    } else if (sameAs(s, edgeOffsets) && !ds.edgeFeatures && /^edge_/.test(attr)) {
      ds.edgeFeatures = col;
    }
  }
  result.dataset = ds;
  return result;
}


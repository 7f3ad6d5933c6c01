/**
 * The feature matrix: one row per node (compared with the node count and who declared it), and no
 * NaN or infinite values. checkNonFinite serves the per-edge tensors as well.
 */
import { MAX_LOCATIONS, type ProblemLocation } from '../../formats/types';
import { isFloatDType } from '../roles';
import type { GraphPart } from '../graph-check-types';
import type { CheckContext, Reporter } from './context';
import type { NodeCount } from './node-count';
import { describe, EXAMPLES_IN_MESSAGE, spanOf } from './locations';

export function checkFeatures(ctx: CheckContext, count: NodeCount): void {
  const { features, report } = ctx;
  const { featureRows, blameFeatures, n, declaredN, declaredSource } = count;
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
}

/** NaN and infinite values of a float tensor (`what` names its values in the message). */
export function checkNonFinite(part: GraphPart, report: Reporter, what: string): void {
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

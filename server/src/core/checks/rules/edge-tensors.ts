/**
 * Per-edge tensors (edge weights, edge features) beside an edge index: one row per edge entry, in
 * the same order, and no NaN or infinite values.
 */
import type { EdgeContext } from './context';
import { checkNonFinite } from './features';

export function checkEdgeTensors(g: EdgeContext): void {
  const { edges, edgeWeights, edgeFeatures, report } = g;
  const sp = edges.part;
  const e = edges.src.length;
  if (sp.guess.role !== 'edge-index') return;
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

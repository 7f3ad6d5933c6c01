/**
 * Node labels: one per node, and class ids that a C-way classifier can use (0..C-1, every class
 * present; -1 named as "unlabelled"). Float labels with fractions are regression targets and
 * multi-column labels are multi-label or one-hot: neither gets the class-id checks.
 */
import { MAX_LOCATIONS, type ProblemLocation } from '../../formats/types';
import { isFloatDType, isIntegerDType } from '../roles';
import type { GraphPart } from '../graph-check-types';
import type { CheckContext, Reporter } from './context';
import type { NodeCount } from './node-count';
import { describe, EXAMPLES_IN_MESSAGE, spanOf } from './locations';

export function checkLabels(ctx: CheckContext, count: NodeCount): void {
  if (ctx.labels) checkLabelTensor(ctx.labels, count.nKnown ? count.n : -1, ctx.report);
}

function checkLabelTensor(part: GraphPart, n: number, report: Reporter): void {
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

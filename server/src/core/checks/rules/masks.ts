/**
 * Split masks: a boolean mask has one entry per node, an index list names only existing nodes,
 * and no node is in two splits (reported on the later split, the one that leaks into evaluation).
 */
import { MAX_LOCATIONS, type DenseTensor, type ProblemLocation } from '../../formats/types';
import type { Split } from '../roles';
import type { GraphPart } from '../graph-check-types';
import type { CheckContext, Reporter } from './context';
import type { NodeCount } from './node-count';
import { describe, EXAMPLES_IN_MESSAGE, spanOf } from './locations';

export function checkMasks(ctx: CheckContext, count: NodeCount): void {
  for (const m of ctx.masks) checkMask(m, count.nKnown ? count.n : -1, ctx.report);
  checkMaskOverlap(ctx.masks, ctx.report);
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

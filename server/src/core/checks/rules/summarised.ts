/**
 * A tensor summarised while it was read (a very large .npz member) has figures, not values: it can
 * be features or an unused tensor, but not a part whose values the checks walk. Such a part is
 * reported as unreadable and left out of the check.
 */
import type { GraphPart } from '../graph-check-types';
import type { Reporter } from './context';

/** Roles whose checks need only a tensor's shape and figures (see TensorSummary). */
const SUMMARY_SUFFICES: ReadonlySet<string> = new Set(['features', 'edge-features', 'unknown']);

/** The parts whose values the checks can walk. */
export function partsWithValues(parts: GraphPart[], report: Reporter): GraphPart[] {
  return parts.filter((p) => {
    const t = p.tensor;
    if (t.kind !== 'dense' || !t.summary || SUMMARY_SUFFICES.has(p.guess.role)) return true;
    report(p, 'unreadable',
      `${t.name} holds ${(t.summary.dataBytes / 1024 ** 2).toFixed(0)} MiB of values, too many to keep, so it was only ` +
      `summarised while it was read; as the ${p.guess.role} its values are needed. Save the archive uncompressed ` +
      '(np.savez) or the array as its own .npy file.', 1);
    return false;
  });
}

/** How problems point at places: a tensor's text span, and a location as a short phrase. */
import type { ProblemLocation, Tensor, TextSpan } from '../../formats/types';

/** Locations quoted in a problem's message (more are kept in its location list). */
export const EXAMPLES_IN_MESSAGE = 3;

export function spanOf(t: Tensor, flat: number): TextSpan | undefined {
  return t.locator?.locate(flat);
}

/** A location as a short phrase: "line 12, col 3 (id 40 …)" or "edge_index[1, 17] (…)". */
export function describe(l: ProblemLocation): string {
  const where = l.line !== undefined ? `line ${l.line}` : '';
  if (where && l.detail) return `${where}: ${l.detail}`;
  return where || l.detail || (l.index !== undefined ? `${l.tensor}[${l.index}]` : l.tensor ?? '');
}

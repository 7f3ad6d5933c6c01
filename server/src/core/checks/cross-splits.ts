/**
 * Link-prediction checks across per-split files. A split saved as one object per file
 * (`train_data.pt`, `val_data.pt`, `test_data.pt` in one folder, each with its own message-passing
 * `edge_index` and labelled pairs) is three graphs to the checks, so each file alone cannot see a
 * pair that is a positive of two splits, or a negative that is another split's positive. This pass
 * compares the sides the per-graph rule kept (rules/edge-splits.ts `SplitSide`) across the files of
 * one folder, with the same sorted pair keys, and reports on the later split's file:
 * `pairs-in-two-splits` (a positive that is an earlier split's positive) and
 * `negative-pairs-are-edges` (a negative that is a positive of another split's file).
 */
import { MAX_LOCATIONS, type Problem, type ProblemLocation } from '../formats/types';
import { CODES } from '../../../../common/problem-codes';
import { flatOf, memberPositions, mergeSorted, pairKeys, sortedKeys, splitOfFile, MAX_KEYED_NODES } from '../splits/edge-splits';
import type { SplitSide } from './rules/edge-splits';
import { describe, EXAMPLES_IN_MESSAGE } from './rules/locations';
import type { Split } from './roles';
import { baseOf, dirOf } from '../paths';

const ORDER: Split[] = ['train', 'val', 'test'];
const NAME: Record<Split, string> = { train: 'train', val: 'validation', test: 'test' };

/** Problems found across the per-split files of each folder, by file. */
export function crossSplitProblems(graphs: Array<{ splitSides?: SplitSide[]; structureFile: string | null }>): Array<{ file: string; problem: Problem }> {
  const byFolder = new Map<string, SplitSide[]>();
  for (const g of graphs) {
    if (!g.splitSides?.length || !g.structureFile || !splitOfFile(g.structureFile)) continue;
    const dir = dirOf(g.structureFile);
    if (!byFolder.has(dir)) byFolder.set(dir, []);
    byFolder.get(dir)!.push(...g.splitSides.filter((s) => s.file === g.structureFile));
  }
  const out: Array<{ file: string; problem: Problem }> = [];
  for (const sides of byFolder.values()) {
    if (new Set(sides.map((s) => s.file)).size < 2) continue;
    let n = 1;
    for (const s of sides) for (let j = 0; j < s.u.length; j++) n = Math.max(n, s.u[j]! + 1, s.v[j]! + 1);
    if (n > MAX_KEYED_NODES) continue;
    const undirected = sides.every((s) => s.undirected);
    const keys = new Map<SplitSide, Float64Array>();
    const sorted = new Map<SplitSide, Float64Array>();
    for (const s of sides) {
      const k = pairKeys(s.u, s.v, n, undirected);
      keys.set(s, k);
      sorted.set(s, sortedKeys(k));
    }
    const either = undirected ? ' (in either direction)' : '';
    const report = (s: SplitSide, code: 'pairs-in-two-splits' | 'negative-pairs-are-edges', c: { count: number; first: number[] }, what: string, text: (ex: string) => string) => {
      if (c.count === 0) return;
      const locs: ProblemLocation[] = c.first.map((j) => ({
        tensor: s.tensor, index: flatOf(s.cols, s.at[j]!, 0),
        detail: `${s.tensor} pair ${s.at[j]!}: ${s.u[j]! + s.shift} – ${s.v[j]! + s.shift} ${what}`,
      }));
      const severity = code === 'negative-pairs-are-edges' && s.split === 'train' ? 'warning' : CODES[code].severity;
      out.push({ file: s.file, problem: {
        code, severity, count: c.count, tensor: s.tensor, locations: locs,
        message: text(locs.slice(0, EXAMPLES_IN_MESSAGE).map(describe).join('; ')),
      } });
    };
    const positives = sides.filter((s) => s.sign === 'pos');
    // A positive that is also a positive of an earlier split saved in another file.
    for (const s of positives) {
      const earlier = positives.filter((o) => o.file !== s.file && ORDER.indexOf(o.split) < ORDER.indexOf(s.split));
      if (!earlier.length) continue;
      const files = [...new Set(earlier.map((o) => baseOf(o.file)))].join(', ');
      const c = memberPositions(keys.get(s)!, mergeSorted(earlier.map((o) => sorted.get(o)!)), MAX_LOCATIONS, sorted.get(s));
      report(s, 'pairs-in-two-splits', c, `is also a positive in ${files}`, (ex) =>
        `${c.count} ${NAME[s.split]} positive pair${c.count === 1 ? '' : 's'} of ${s.tensor} ${c.count === 1 ? 'is' : 'are'} also ` +
        `${c.count === 1 ? 'a positive' : 'positives'} of an earlier split in ${files}${either} (${ex}). Each edge belongs to one split: ` +
        'a pair in two splits is seen in one and scored in the other.');
    }
    // A negative that is a positive of another split's file.
    for (const s of sides) {
      if (s.sign !== 'neg') continue;
      const others = positives.filter((o) => o.file !== s.file);
      if (!others.length) continue;
      const files = [...new Set(others.map((o) => baseOf(o.file)))].join(', ');
      const c = memberPositions(keys.get(s)!, mergeSorted(others.map((o) => sorted.get(o)!)), MAX_LOCATIONS, sorted.get(s));
      report(s, 'negative-pairs-are-edges', c, `is a positive in ${files}`, (ex) =>
        `${c.count} ${NAME[s.split]} negative pair${c.count === 1 ? '' : 's'} of ${s.tensor} ${c.count === 1 ? 'is' : 'are'} ` +
        `${c.count === 1 ? 'a positive' : 'positives'} of another split in ${files}${either} (${ex}). Such a pair is scored as a ` +
        'non-edge although it is one; sample negatives against the edges of every split.');
    }
  }
  return out;
}

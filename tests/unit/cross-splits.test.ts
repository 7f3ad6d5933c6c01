/**
 * Link-prediction splits saved one object per file (train_data.pt, val_data.pt, test_data.pt):
 * the mistakes no file shows alone — a positive of two splits, a negative that is another split's
 * positive — are found by comparing the files of the folder (core/checks/cross-splits.ts).
 * Files: tests/fixtures/splits/perfile_overlap/, written by the real PyTorch 1.13 with a stand-in
 * class at the graph-learning library's data-class path (make_split_fixtures.py says so), from
 * NetworkX's karate club; expected counts by np.isin over encoded pairs (expected.json "crossFiles").
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { checkPaths } from '../../server/src/node/load';
import type { FileReport } from '../../common/report';

const dir = path.join(__dirname, '../fixtures/splits');
const expected = JSON.parse(fs.readFileSync(path.join(dir, 'expected.json'), 'utf8'));

const cross = (f: FileReport, code: string, marker: RegExp) =>
  f.problems.filter((p) => p.code === code && marker.test(p.message)).reduce((s, p) => s + p.count, 0);

describe('splits saved one file per split', () => {
  it('a positive of two splits and a negative that is a positive elsewhere are found across the files', () => {
    const r = checkPaths([path.join(dir, 'perfile_overlap')]);
    expect(r.files).toHaveLength(3);
    for (const f of r.files) {
      const want = expected.crossFiles[`perfile_overlap/${path.basename(f.path)}`];
      expect(want, f.path).toBeDefined();
      expect(cross(f, 'pairs-in-two-splits', /of an earlier split in/)).toBe(want.pairsInTwoSplits);
      expect(cross(f, 'negative-pairs-are-edges', /of another split in/)).toBe(want.negativesArePositivesElsewhere);
    }
    const test = r.files.find((f) => f.path.endsWith('test_data.pt'))!;
    const p = test.problems.find((q) => q.code === 'pairs-in-two-splits')!;
    expect(p.severity).toBe('error');
    expect(p.message).toMatch(/also a positive of an earlier split in (train_data\.pt, )?val_data\.pt/);
    expect(p.locations?.[0]).toMatchObject({ tensor: 'edge_label_index' });
  });

  it('the correct per-split files give no problem across files', () => {
    const r = checkPaths([path.join(dir, 'perfile')]);
    for (const f of r.files) {
      expect(cross(f, 'pairs-in-two-splits', /of an earlier split in/)).toBe(0);
      expect(cross(f, 'negative-pairs-are-edges', /of another split in/)).toBe(0);
    }
  });

  it('one file checked alone is compared with nothing', () => {
    const r = checkPaths([path.join(dir, 'perfile_overlap', 'test_data.pt')]);
    expect(r.files.map((f) => path.basename(f.path))).toEqual(['test_data.pt']);
    expect(cross(r.files[0]!, 'pairs-in-two-splits', /of an earlier split in/)).toBe(0);
  });
});

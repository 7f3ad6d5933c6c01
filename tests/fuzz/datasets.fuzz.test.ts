/**
 * Property tests for datasets of many graphs (core/datasets): random (data, slices) tuples, batch
 * and ptr vectors, per-graph count files and numeric text tables — offsets that decrease, end
 * anywhere, hold negative or fractional values, ids outside every graph — must give problems with
 * known codes (the data is wrong, not the program) and never throw; every dataset that is built has
 * consistent offsets, and inRange keeps only edges inside their graph. The properties are the
 * Dataset model's own definitions (core/datasets/model.ts).
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { checkSet, type LoadedFile } from '../../server/src/core/checks/check-set';
import { findDatasets } from '../../server/src/core/datasets/read';
import { checkDataset, inRange } from '../../server/src/core/datasets/check';
import { readColumnsText } from '../../server/src/core/datasets/text-files';
import { UnreadableError, type DenseTensor, type DType } from '../../server/src/core/formats/types';
import { ALL_CODES } from '../../common/problem-codes';
import type { Dataset } from '../../server/src/core/datasets/model';
import { runs } from './fuzz-helpers';

const KNOWN = new Set<string>(ALL_CODES);

function t(name: string, shape: number[], values: number[], dtype: DType = 'int64'): DenseTensor {
  const data = dtype.startsWith('float') ? Float64Array.from(values) : Int32Array.from(values.map((v) => Math.trunc(v)));
  return { kind: 'dense', name, dtype, shape, data };
}

function wellFormed(ds: Dataset): void {
  const G = ds.graphs;
  expect(ds.nodeOffsets.length).toBe(G + 1);
  expect(ds.edgeOffsets.length).toBe(G + 1);
  expect(ds.edgeOffsets[G]).toBe(ds.src.length);
  for (let g = 0; g < G; g++) {
    expect(ds.nodeOffsets[g + 1]! >= ds.nodeOffsets[g]!).toBe(true);
    expect(ds.edgeOffsets[g + 1]! >= ds.edgeOffsets[g]!).toBe(true);
  }
  const clean = inRange(ds);
  for (let g = 0; g < G; g++) {
    const n = clean.nodeOffsets[g + 1]! - clean.nodeOffsets[g]!;
    for (let j = clean.edgeOffsets[g]!; j < clean.edgeOffsets[g + 1]!; j++) {
      expect(clean.src[j]! >= 0 && clean.src[j]! < n && clean.dst[j]! >= 0 && clean.dst[j]! < n).toBe(true);
    }
  }
}

function checkAll(files: LoadedFile[]): void {
  for (const found of findDatasets(files)) {
    for (const p of found.problems) expect(KNOWN.has(p.problem.code), p.problem.code).toBe(true);
    if (!found.dataset) continue;
    wellFormed(found.dataset);
    for (const p of checkDataset(found.dataset, { isoBudgetMs: 200 })) {
      expect(KNOWN.has(p.problem.code), p.problem.code).toBe(true);
      expect(p.problem.count >= 0).toBe(true);
      if (p.problem.graph !== undefined) expect(p.problem.graph >= 0 && p.problem.graph < found.dataset.graphs).toBe(true);
    }
  }
  // The whole check set over the same files never throws either.
  const r = checkSet(files, []);
  for (const f of r.files) for (const p of f.problems) expect(KNOWN.has(p.code), p.code).toBe(true);
}

const offsets = fc.array(fc.integer({ min: -3, max: 40 }), { minLength: 0, maxLength: 8 });
const ids = fc.array(fc.integer({ min: -3, max: 30 }), { minLength: 0, maxLength: 60 });

describe('datasets: broken offsets give problems, never exceptions', () => {
  it('(data, slices) tuples with random slices', () => {
    fc.assert(fc.property(offsets, offsets, offsets, ids, fc.integer({ min: 0, max: 30 }), fc.boolean(),
      (xs, es, ys, e, rows, sorted) => {
        const sl = (v: number[]) => (sorted ? [...v].sort((a, b) => a - b) : v);
        const E = e.length >> 1;
        const tensors = [
          t('[0].x', [rows, 2], Array.from({ length: rows * 2 }, (_, i) => i % 3), 'float32'),
          t('[0].edge_index', [2, E], e.slice(0, 2 * E)),
          t('[0].y', [ys.length], ys),
          t('[1].x', [xs.length], sl(xs)),
          t('[1].edge_index', [es.length], sl(es)),
          t('[1].y', [ys.length], ys.map((_, i) => i)),
        ];
        checkAll([{ path: '/d/data.pt', format: 'pt', result: { format: 'pt', tensors, problems: [] } }]);
      }), { numRuns: runs(300) });
  });

  it('batch and ptr vectors beside a global edge index', () => {
    fc.assert(fc.property(ids, ids, offsets, fc.boolean(), fc.integer({ min: 0, max: 30 }),
      (batch, e, ptr, usePtr, labels) => {
        const E = e.length >> 1;
        const tensors = [
          t('edge_index', [2, E], e.slice(0, 2 * E)),
          usePtr ? t('ptr', [ptr.length], ptr) : t('batch', [batch.length], batch),
          t('x', [batch.length, 1], batch.map((v) => v * 0.5), 'float64'),
          t('y', [labels], Array.from({ length: labels }, (_, i) => i % 2)),
          t('train_idx', [3], [0, 1, 2]),
          t('test_idx', [2], [1, 5]),
        ];
        checkAll([{ path: '/d/batch.npz', format: 'npz', result: { format: 'npz', tensors, problems: [] } }]);
      }), { numRuns: runs(300) });
  });

  it('per-graph count files of a CSV folder', () => {
    fc.assert(fc.property(ids, offsets, offsets, (e, nn, ne) => {
      const E = e.length >> 1;
      const f = (name: string, tensor: DenseTensor): LoadedFile => ({ path: `/c/${name}`, format: 'edgelist', result: { format: 'edgelist', tensors: [tensor], problems: [] } });
      checkAll([
        f('edge.csv', t('edge', [E, 2], e.slice(0, 2 * E))),
        f('num-node-list.csv', t('num-node-list', [nn.length], nn)),
        f('num-edge-list.csv', t('num-edge-list', [ne.length], ne)),
        f('graph-label.csv', t('graph-label', [nn.length], nn)),
      ]);
    }), { numRuns: runs(300) });
  });

  it('numeric text tables: read, or UnreadableError', () => {
    const chars = fc.constantFrom('0', '1', '7', '-', '.', ',', ' ', '\n', '\r', 'e', 'x', 'n', 'a', '#', '\t');
    fc.assert(fc.property(fc.array(chars, { maxLength: 200 }), fc.boolean(), (cs, gz) => {
      const bytes = new TextEncoder().encode(cs.join(''));
      try {
        const r = readColumnsText(bytes, gz ? 'x_graph_indicator.txt.gz' : 'x_graph_indicator.txt', { maxDecompressedBytes: 1 << 20, maxHeaderBytes: 1 << 20 });
        const tensor = r.tensors[0] as DenseTensor;
        expect(tensor.data.length).toBe(tensor.shape.reduce((a, b) => a * b, 1));
      } catch (e) {
        if (!(e instanceof UnreadableError)) throw e;
      }
    }), { numRuns: runs(500) });
  });
});

/**
 * Dirichlet-energy smoothing curve, checked against:
 * - docs/references.md §8 (values computed there with NumPy): degree-normalised energy of
 *   Cai & Wang, "A Note on Over-Smoothing for Graph Neural Networks" (2020), and the unnormalised
 *   tr(XᵀLX): P4 two-column example 7/3 and 6, P4 e₀ curve, C6 alternating signal (eigenvector of Â
 *   for −1/3, energy × 1/9 per step), C6 e₀ curve, karate degree vector 235.752349, 35.381847, …;
 *   the pitfall that tr(XᵀLX) does not go to 0 on the (irregular) karate graph;
 * - exact SymPy values of tr(Xᵀ(I − Â)X) and tr(XᵀLX) after k = 0..6 steps on the small graphs
 *   (tests/fixtures/make_analysis_fixtures.py → tests/fixtures/analysis/expected.json, "small");
 * - dense NumPy traces on the karate degree vector (float64 [34]) and on float32 [120, 5] features of
 *   a directed multigraph (same file, "graphs.*.energy").
 */
import { describe, expect, it } from 'vitest';
import { dirichletEnergies, featureMatrix, smoothingCurve, type FeatureMatrix } from '../../server/src/core/graph/propagation/smoothing';
import { AnalysisCancelled, simpleUndirected } from '../../server/src/core/graph/structure/simple-undirected';
import type { DenseTensor } from '../../server/src/core/formats/types';
import { analysisExpected, cycle, fixtureGraph, path_, undirected } from './analysis-fixtures';

const symOf = (g: { fwd: any; rev: any }) => simpleUndirected(g.fwd, g.rev);
const matrix = (rows: number[][]): FeatureMatrix => ({
  data: Float64Array.from(rows.flat()), rows: rows.length, cols: rows[0]!.length, nonFinite: 0,
});
const column = (xs: number[]): FeatureMatrix => ({ data: Float64Array.from(xs), rows: xs.length, cols: 1, nonFinite: 0 });

/** |a − b| ≤ tol · max(1, |b|). */
function close(a: number, b: number, tol: number): void {
  expect(Math.abs(a - b)).toBeLessThanOrEqual(tol * Math.max(1, Math.abs(b)));
}

describe('docs/references.md §8 values (Cai & Wang 2020 energy; unnormalised tr(XᵀLX))', () => {
  it('P4, X = [[1,0],[0,1],[1,0],[0,1]]: tr(XᵀLX) = 6, Cai–Wang 7/3', () => {
    const e = dirichletEnergies(symOf(undirected(4, path_(4))), matrix([[1, 0], [0, 1], [1, 0], [0, 1]]).data, 2);
    close(e.unnormalised, 6, 1e-15);
    close(e.caiWang, 7 / 3, 1e-15);
  });

  it('P4, x = e₀: tr = 1; Cai–Wang curve 0.5, 0.069444, … 0.000184 (k = 0..10, 6 digits)', () => {
    const c = smoothingCurve(symOf(undirected(4, path_(4))), column([1, 0, 0, 0]), 10);
    close(c.unnormalised[0]!, 1, 1e-15);
    const want = [0.5, 0.069444, 0.029707, 0.015486, 0.008211, 0.004359, 0.002315, 0.001229, 0.000653, 0.000347, 0.000184];
    for (let k = 0; k <= 10; k++) expect(Math.abs(c.caiWang[k]! - want[k]!)).toBeLessThan(5e-7);
    // asymptotic ratio 0.728714² = 0.531024
    expect(c.caiWang[10]! / c.caiWang[9]!).toBeCloseTo(0.531024, 3);
  });

  it('C6, x = (1,−1,1,−1,1,−1): both energies fall by exactly 1/9 per step (8, 24 at k = 0)', () => {
    const c = smoothingCurve(symOf(undirected(6, cycle(6))), column([1, -1, 1, -1, 1, -1]), 10);
    for (let k = 0; k <= 10; k++) {
      close(c.caiWang[k]!, 8 / 9 ** k, 1e-12);
      close(c.unnormalised[k]!, 24 / 9 ** k, 1e-12);
    }
  });

  it('C6, x = e₀: unnormalised 2, 0.222222, 0.074074, 0.030178, 0.013108; Cai–Wang 0.666667, 0.074074, 0.024691, 0.010059', () => {
    const c = smoothingCurve(symOf(undirected(6, cycle(6))), column([1, 0, 0, 0, 0, 0]), 4);
    [2, 0.222222, 0.074074, 0.030178, 0.013108].forEach((v, k) => expect(Math.abs(c.unnormalised[k]! - v)).toBeLessThan(5e-7));
    [0.666667, 0.074074, 0.024691, 0.010059].forEach((v, k) => expect(Math.abs(c.caiWang[k]! - v)).toBeLessThan(5e-7));
  });

  it('karate club, x = degree vector: Cai–Wang 235.752349, 35.381847, 6.631189, 1.492993, 0.469374, 0.214424 … 0.027357 at k = 10', () => {
    const g = fixtureGraph('karate');
    const fm = featureMatrix(g.x!, g.n);
    if ('error' in fm) throw new Error(fm.error);
    expect(fm.cols).toBe(1);
    const c = smoothingCurve(symOf(g), fm, 10);
    [235.752349, 35.381847, 6.631189, 1.492993, 0.469374, 0.214424].forEach((v, k) => expect(Math.abs(c.caiWang[k]! - v)).toBeLessThan(5e-7));
    expect(Math.abs(c.caiWang[10]! - 0.027357)).toBeLessThan(5e-7);
    // the pitfall: tr(XᵀLX) = 6628, 309.016, 1551.313, …, 998.53 at k = 10 — it does not go to 0
    expect(Math.abs(c.unnormalised[0]! - 6628)).toBeLessThan(1e-9);
    expect(Math.abs(c.unnormalised[1]! - 309.016)).toBeLessThan(5e-4);
    expect(Math.abs(c.unnormalised[2]! - 1551.313)).toBeLessThan(5e-4);
    expect(Math.abs(c.unnormalised[10]! - 998.53)).toBeLessThan(5e-3);
    expect(c.unnormalised[10]!).toBeGreaterThan(c.unnormalised[1]!);
    expect(c.caiWang[10]!).toBeLessThan(c.caiWang[0]! * 1e-3);
  });
});

describe('exact SymPy energies on the small graphs (expected.json "small"), k = 0..6', () => {
  for (const [name, entry] of Object.entries<any>(analysisExpected.small)) {
    for (const [signal, want] of Object.entries<any>(entry.energy)) {
      it(`${name}, ${signal}`, () => {
        const rows: number[][] = (want.signal as any[]).map((r) => (Array.isArray(r) ? r : [r]));
        const c = smoothingCurve(symOf(undirected(entry.n, entry.edges)), matrix(rows), 6);
        for (let k = 0; k <= 6; k++) {
          close(c.caiWang[k]!, want.caiWang[k], 1e-12);
          close(c.unnormalised[k]!, want.unnormalised[k], 1e-12);
        }
      });
    }
  }
});

describe('dense NumPy traces on fixture graphs (expected.json "graphs.*.energy")', () => {
  for (const name of ['karate', 'directed']) {
    it(`${name}: tr(Xᵀ(I − Â)X) and tr(XᵀLX) after every step`, () => {
      const g = fixtureGraph(name);
      const want = g.expected.energy;
      const fm = featureMatrix(g.x!, g.n);
      if ('error' in fm) throw new Error(fm.error);
      const steps = want.caiWang.length - 1;
      const c = smoothingCurve(symOf(g), fm, steps);
      expect(c.caiWang.length).toBe(steps + 1);
      for (let k = 0; k <= steps; k++) {
        close(c.caiWang[k]!, want.caiWang[k], 1e-11);
        close(c.unnormalised[k]!, want.unnormalised[k], 1e-11);
      }
    });
  }

  it('directed fixture: float32 [120, 5] features become 5 columns', () => {
    const g = fixtureGraph('directed');
    expect(g.x!.dtype).toBe('float32');
    const fm = featureMatrix(g.x!, g.n) as FeatureMatrix;
    expect([fm.rows, fm.cols, fm.nonFinite]).toEqual([120, 5, 0]);
  });
});

describe('featureMatrix', () => {
  const t = (shape: number[], data: number[]): DenseTensor => ({ kind: 'dense', name: 'x', dtype: 'float32', shape, data: Float32Array.from(data) });
  it('replaces non-finite entries by 0 and counts them', () => {
    const fm = featureMatrix(t([2, 2], [1, NaN, Infinity, 4]), 2) as FeatureMatrix;
    expect(Array.from(fm.data)).toEqual([1, 0, 0, 4]);
    expect(fm.nonFinite).toBe(2);
  });
  it('flattens trailing dimensions and refuses a row count that differs from the node count', () => {
    expect((featureMatrix(t([2, 2, 3], new Array(12).fill(1)), 2) as FeatureMatrix).cols).toBe(6);
    expect(featureMatrix(t([3, 2], new Array(6).fill(1)), 4)).toHaveProperty('error');
  });
});

it('cancellation: a set token stops the curve', () => {
  const g = undirected(6, cycle(6));
  expect(() => smoothingCurve(symOf(g), column([1, 0, 0, 0, 0, 0]), 3, { isCancellationRequested: true })).toThrow(AnalysisCancelled);
});

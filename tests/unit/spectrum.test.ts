/**
 * Laplacian spectra (server/src/core/graph/spectrum.ts) and the float32 .npy writer, checked
 * against values from outside Hopscope:
 *
 * - closed forms from docs/references.md §3 — Brouwer & Haemers, *Spectra of Graphs* (2012),
 *   §1.4 for L = D − A, and Chung, *Spectral Graph Theory* (1997), Ch. 1 for the normalised
 *   Laplacian: paths, cycles, complete, star, complete bipartite, hypercube, Petersen; the
 *   multiplicity of 0 = number of components; Chung's convention for isolated nodes; the P4
 *   eigenvector v_1(j) ∝ cos(π(j + ½)/4); karate λ2 = 0.468525 (L) and 0.132272 (𝓛);
 * - tests/fixtures/spectrum/expected.json, written by tests/fixtures/make_spectrum_fixtures.py with
 *   SciPy 1.10 (scipy.linalg.eigh on the dense L from networkx.laplacian_matrix, and on
 *   networkx.normalized_laplacian_matrix — NetworkX 2.8, weight=None);
 * - .npy headers and bytes written by NumPy 1.24's numpy.save (same script).
 *
 * The Lanczos path is run on its own (denseComponents: 0) and with the default small-component
 * dense solves, and both are compared with the dense ml-matrix path.
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { buildSortedPair, type Csr } from '../../server/src/core/graph/structure/csr';
import { AnalysisCancelled, simpleUndirected } from '../../server/src/core/graph/structure/simple-undirected';
import {
  denseLaplacian, denseLaplacianSpectrum, laplacianSpectrum, positionalEncoding, type LaplacianKind,
  type SpectrumOptions, type SpectrumResult,
} from '../../server/src/core/graph/spectral/spectrum';
import { encodeNpyFloat32, npyHeader } from '../../server/src/core/formats/npy-write';
import { readNpy } from '../../server/src/core/formats/npy';
import { DEFAULT_LIMITS, type DenseTensor } from '../../server/src/core/formats/types';

const DIR = path.join(__dirname, '../fixtures/spectrum');
const expected = JSON.parse(fs.readFileSync(path.join(DIR, 'expected.json'), 'utf8'));
const KINDS: LaplacianKind[] = ['combinatorial', 'normalized'];
/** Lanczos alone, and the default (small components solved densely). */
const MODES: { name: string; opts: SpectrumOptions }[] = [
  { name: 'Lanczos', opts: { denseComponents: 0 } },
  { name: 'default', opts: {} },
];

function graph(n: number, edges: [number, number][]): Csr {
  const { fwd, rev } = buildSortedPair(n, Int32Array.from(edges, (e) => e[0]), Int32Array.from(edges, (e) => e[1]));
  return simpleUndirected(fwd, rev);
}

function fixture(name: string): Csr {
  const entry = expected.graphs[name];
  const t = readNpy(new Uint8Array(fs.readFileSync(path.join(DIR, entry.file))), entry.file, DEFAULT_LIMITS).tensors[0] as DenseTensor;
  const e = t.shape[1]!;
  const d = t.data as ArrayLike<number | bigint>;
  const src = new Int32Array(e), dst = new Int32Array(e);
  for (let i = 0; i < e; i++) { src[i] = Number(d[i]!); dst[i] = Number(d[e + i]!); }
  const { fwd, rev } = buildSortedPair(entry.n, src, dst);
  return simpleUndirected(fwd, rev);
}

const range = (n: number) => Array.from({ length: n }, (_, i) => i);
const times = (x: number, k: number) => new Array<number>(k).fill(x);
const asc = (a: number[]) => [...a].sort((x, y) => x - y);

function expectClose(got: ArrayLike<number>, want: ArrayLike<number>, tol: number): void {
  expect(got.length).toBe(want.length);
  for (let i = 0; i < want.length; i++) {
    if (Math.abs(got[i]! - want[i]!) > tol) expect.fail(`entry ${i}: got ${got[i]}, want ${want[i]} (±${tol})`);
  }
}

function dot(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i]! * b[i]!;
  return s;
}

/** Checks the invariants every result must satisfy: residuals, orthonormality, eigen-equations. */
function checkResult(g: Csr, r: SpectrumResult): void {
  expect(r.converged).toBe(true);
  expect(r.vectors.length).toBe(r.k);
  for (let i = 0; i < r.k; i++) {
    expect(r.residuals[i]!).toBeLessThanOrEqual(r.tol * r.normBound);
    for (let j = i; j < r.k; j++) {
      expect(Math.abs(dot(r.vectors[i]!, r.vectors[j]!) - (i === j ? 1 : 0))).toBeLessThan(1e-8);
    }
  }
  // Residual recomputed here from the dense matrix (independent of the operator code).
  if (g.n <= 100) {
    const A = denseLaplacian(g, r.laplacian);
    for (let i = 0; i < r.k; i++) {
      const x = r.vectors[i]!;
      let res = 0;
      for (let u = 0; u < g.n; u++) {
        let s = 0;
        for (let v = 0; v < g.n; v++) s += A.get(u, v) * x[v]!;
        res += (s - r.eigenvalues[i]! * x[u]!) ** 2;
      }
      expect(Math.sqrt(res)).toBeLessThan(1e-7);
    }
  }
}

// ---------------------------------------------------------------------------------------------
// Closed forms (docs/references.md §3; Brouwer & Haemers 2012 §1.4, Chung 1997 Ch. 1)

const pathL = (n: number) => asc(range(n).map((k) => 2 - 2 * Math.cos((Math.PI * k) / n)));
const pathN = (n: number) => asc(range(n).map((k) => 1 - Math.cos((Math.PI * k) / (n - 1))));
const cycleL = (n: number) => asc(range(n).map((k) => 2 - 2 * Math.cos((2 * Math.PI * k) / n)));
const cycleN = (n: number) => asc(range(n).map((k) => 1 - Math.cos((2 * Math.PI * k) / n)));
const binom = (d: number, i: number): number => (i === 0 ? 1 : (binom(d, i - 1) * (d - i + 1)) / i);
const cubeL = (d: number) => range(d + 1).flatMap((i) => times(2 * i, binom(d, i)));

const CLOSED: Record<string, { n: number; combinatorial: number[]; normalized: number[] }> = {
  path4: { n: 4, combinatorial: pathL(4), normalized: pathN(4) },
  path5: { n: 5, combinatorial: pathL(5), normalized: pathN(5) },
  cycle5: { n: 5, combinatorial: cycleL(5), normalized: cycleN(5) },
  cycle6: { n: 6, combinatorial: cycleL(6), normalized: cycleN(6) },
  // K_n: 0, n^(n−1) / 0, (n/(n−1))^(n−1)
  complete5: { n: 5, combinatorial: [0, ...times(5, 4)], normalized: [0, ...times(1.25, 4)] },
  // K_{1,n−1}: 0, 1^(n−2), n / 0, 1^(n−2), 2
  star5: { n: 5, combinatorial: [0, 1, 1, 1, 5], normalized: [0, 1, 1, 1, 2] },
  // K_{m,n}: 0, m^(n−1), n^(m−1), m+n / 0, 1^(m+n−2), 2 (m = 2, n = 3)
  k23: { n: 5, combinatorial: [0, 2, 2, 3, 5], normalized: [0, 1, 1, 1, 2] },
  // Q_d: 2i with multiplicity C(d, i) / 2i/d
  cube3: { n: 8, combinatorial: cubeL(3), normalized: cubeL(3).map((x) => x / 3) },
  // Petersen: 0, 2^5, 5^4 / 0, (2/3)^5, (5/3)^4
  petersen: { n: 10, combinatorial: [0, ...times(2, 5), ...times(5, 4)], normalized: [0, ...times(2 / 3, 5), ...times(5 / 3, 4)] },
};

describe('closed-form spectra (Brouwer & Haemers §1.4; Chung Ch. 1; docs/references.md §3)', () => {
  it('the formulas reproduce the numbers listed in docs/references.md §3', () => {
    expectClose(CLOSED.path4!.combinatorial, [0, 0.585786, 2, 3.414214], 1e-6);
    expectClose(CLOSED.path5!.normalized, [0, 0.292893, 1, 1.707107, 2], 1e-6);
    expectClose(CLOSED.cycle5!.combinatorial, [0, 1.381966, 1.381966, 3.618034, 3.618034], 1e-6);
    expectClose(CLOSED.cycle6!.normalized, [0, 0.5, 0.5, 1.5, 1.5, 2], 1e-12);
    expectClose(CLOSED.cube3!.combinatorial, [0, 2, 2, 2, 4, 4, 4, 6], 0);
  });

  for (const [name, cf] of Object.entries(CLOSED)) {
    for (const kind of KINDS) {
      for (const mode of MODES) {
        it(`${name}, ${kind}, ${mode.name}: all ${cf.n} eigenvalues and the 3 smallest`, () => {
          const g = fixture(name);
          expect(g.n).toBe(cf.n);
          const all = laplacianSpectrum(g, cf.n, { ...mode.opts, laplacian: kind });
          expectClose(all.eigenvalues, cf[kind], 1e-9);
          checkResult(g, all);
          const three = laplacianSpectrum(g, 3, { ...mode.opts, laplacian: kind });
          expectClose(three.eigenvalues, cf[kind].slice(0, 3), 1e-9);
          checkResult(g, three);
          // The same values as SciPy's eigh (fixture) and as the dense ml-matrix path.
          expectClose(all.eigenvalues, expected.graphs[name][kind].eigenvalues, 1e-9);
          expectClose(denseLaplacianSpectrum(g, kind).eigenvalues, cf[kind], 1e-9);
        });
      }
    }
  }

  it('hypercube Q8 (256 nodes): 0, 2 (×8), 4 (×28), 6 … by Lanczos alone — multiplicities from restarts', () => {
    const edges: [number, number][] = [];
    for (let u = 0; u < 256; u++) for (let b = 0; b < 8; b++) if (!(u & (1 << b))) edges.push([u, u | (1 << b)]);
    const g = graph(256, edges);
    const want = cubeL(8).slice(0, 40);
    for (const kind of KINDS) {
      const r = laplacianSpectrum(g, 40, { laplacian: kind, denseComponents: 0 });
      expectClose(r.eigenvalues, kind === 'combinatorial' ? want : want.map((x) => x / 8), 1e-8);
      checkResult(g, r);
    }
  });

  it('cycle C100: pairs of equal eigenvalues 2 − 2cos(2πk/100) by Lanczos alone', () => {
    const g = graph(100, range(100).map((i) => [i, (i + 1) % 100] as [number, number]));
    const r = laplacianSpectrum(g, 11, { denseComponents: 0 });
    expectClose(r.eigenvalues, cycleL(100).slice(0, 11), 1e-9);
    checkResult(g, r);
  });
});

describe('components and isolated nodes', () => {
  it('P3 + C4 + K1: three zeros; L = 0,0,0,1,2,2,3,4 (REFERENCES §3); normalised 0,0,0,1,1,1,2,2 (networkx)', () => {
    const g = fixture('p3_c4_k1');
    expect(g.n).toBe(8);
    for (const mode of MODES) {
      const L = laplacianSpectrum(g, 8, { ...mode.opts });
      expectClose(L.eigenvalues, [0, 0, 0, 1, 2, 2, 3, 4], 1e-9);
      expect(L.components).toBe(3);
      checkResult(g, L);
      const N = laplacianSpectrum(g, 8, { ...mode.opts, laplacian: 'normalized' });
      expectClose(N.eigenvalues, [0, 0, 0, 1, 1, 1, 2, 2], 1e-9);
      expectClose(N.eigenvalues, expected.graphs.p3_c4_k1.normalized.eigenvalues, 1e-9);
      checkResult(g, N);
      // Chung's convention: the isolated node 7 carries its own zero eigenvector e_7.
      expectClose(N.vectors[2]!, [0, 0, 0, 0, 0, 0, 0, 1], 1e-12);
    }
    expect(expected.graphs.p3_c4_k1.components).toBe(3); // networkx.number_connected_components
  });

  it('the null vectors are w·1_C / ‖w·1_C‖ with w = 1 (L) or √d (normalised)', () => {
    const g = fixture('p3_c4_k1');
    const L = laplacianSpectrum(g, 3);
    expectClose(L.vectors[0]!, [1, 1, 1, 0, 0, 0, 0, 0].map((x) => x / Math.sqrt(3)), 1e-12);
    const N = laplacianSpectrum(g, 3, { laplacian: 'normalized' });
    const d = [1, 2, 1];
    expectClose(N.vectors[0]!.slice(0, 3), d.map((x) => Math.sqrt(x / 4)), 1e-12);
  });

  it('an isolated node adds a 0 to the normalised spectrum, not a 1 (Chung 1997, Ch. 1; REFERENCES §3 pitfall)', () => {
    // K_{1,3} plus an isolated node 4. Chung: 0, 0, 1, 1, 2. With 1/√0 := 0 and 𝓛(v,v) = 1 it would be 0, 1, 1, 1, 2.
    const g = graph(5, [[0, 1], [0, 2], [0, 3]]);
    const r = laplacianSpectrum(g, 5, { laplacian: 'normalized' });
    expectClose(r.eigenvalues, [0, 0, 1, 1, 2], 1e-9);
    expectClose(denseLaplacianSpectrum(g, 'normalized').eigenvalues, [0, 0, 1, 1, 2], 1e-9);
    expect(denseLaplacian(g, 'normalized').get(4, 4)).toBe(0);
  });

  it('a graph with no edges: every eigenvalue is 0, unit vectors e_v', () => {
    const g = graph(4, []);
    const r = laplacianSpectrum(g, 4, { laplacian: 'normalized' });
    expectClose(r.eigenvalues, [0, 0, 0, 0], 0);
    expectClose(r.vectors[3]!, [0, 0, 0, 1], 0);
    expect(r.normBound).toBe(0);
  });
});

describe('Zachary karate club (docs/references.md §3; SciPy fixture)', () => {
  const g = fixture('karate');
  for (const mode of MODES) {
    it(`λ2 = 0.468525 (L) and 0.132272 (normalised), ${mode.name}`, () => {
      const L = laplacianSpectrum(g, 5, mode.opts);
      expect(L.eigenvalues[1]).toBeCloseTo(0.468525, 6);
      expectClose(L.eigenvalues, expected.graphs.karate.combinatorial.eigenvalues.slice(0, 5), 1e-9);
      checkResult(g, L);
      const N = laplacianSpectrum(g, 5, { ...mode.opts, laplacian: 'normalized' });
      expect(N.eigenvalues[1]).toBeCloseTo(0.132272, 6);
      expectClose(N.eigenvalues, expected.graphs.karate.normalized.eigenvalues.slice(0, 5), 1e-9);
      checkResult(g, N);
    });
  }

  it('the whole spectrum (k = N = 34) equals scipy.linalg.eigh', () => {
    for (const kind of KINDS) {
      const r = laplacianSpectrum(g, 34, { laplacian: kind });
      expectClose(r.eigenvalues, expected.graphs.karate[kind].eigenvalues, 1e-9);
      checkResult(g, r);
    }
  });

  it('the Fiedler vectors equal SciPy\'s up to sign', () => {
    for (const kind of KINDS) {
      const r = laplacianSpectrum(g, 3, { laplacian: kind });
      for (const ref of expected.graphs.karate[kind].vectors) {
        if (!ref.simple) continue;
        expect(Math.abs(dot(r.vectors[ref.index]!, ref.vector))).toBeGreaterThan(1 - 1e-8);
      }
    }
  });
});

describe('eigenvectors', () => {
  it('P4, k = 1: (0.653281, 0.270598, −0.270598, −0.653281) up to sign (REFERENCES §3, v_k(j) ∝ cos(πk(j+½)/n))', () => {
    const want = [0.653281, 0.270598, -0.270598, -0.653281];
    const closed = range(4).map((j) => Math.cos((Math.PI * (j + 0.5)) / 4) / Math.sqrt(2));
    expectClose(closed, want, 1e-6);
    for (const mode of MODES) {
      const x = laplacianSpectrum(fixture('path4'), 2, mode.opts).vectors[1]!;
      const sign = Math.sign(dot(x, closed));
      expectClose(Array.from(x, (v) => v * sign), closed, 1e-9);
      // And the sign convention documented in spectrum.ts: first clearly nonzero entry positive.
      expect(x[0]!).toBeGreaterThan(0);
    }
  });

  it('C6: projectors onto the λ = 1 and λ = 3 eigenspaces equal (1/3)cos(πk(i−j)/3), k = 1, 2', () => {
    // C_n is circulant: the eigenspace of 2 − 2cos(2πk/n) (0 < k < n/2) is spanned by cos(2πkj/n)
    // and sin(2πkj/n), so its projector is (2/n)cos(2πk(i − j)/n) (derived from the DFT basis).
    const g = fixture('cycle6');
    for (const kind of KINDS) {
      for (const mode of MODES) {
        const r = laplacianSpectrum(g, 6, { ...mode.opts, laplacian: kind });
        for (const [k, cols] of [[1, [1, 2]], [2, [3, 4]]] as const) {
          for (let i = 0; i < 6; i++) {
            for (let j = 0; j < 6; j++) {
              const p = cols.reduce((s, c) => s + r.vectors[c]![i]! * r.vectors[c]![j]!, 0);
              expect(p).toBeCloseTo((1 / 3) * Math.cos((Math.PI * k * (i - j)) / 3), 9);
            }
          }
        }
      }
    }
  });

  it('random graph: vectors of simple eigenvalues equal scipy.linalg.eigh\'s up to sign', () => {
    const g = fixture('random_small');
    for (const kind of KINDS) {
      for (const mode of MODES) {
        const r = laplacianSpectrum(g, 6, { ...mode.opts, laplacian: kind });
        let compared = 0;
        for (const ref of expected.graphs.random_small[kind].vectors) {
          if (!ref.simple) continue;
          expect(Math.abs(dot(r.vectors[ref.index]!, ref.vector))).toBeGreaterThan(1 - 1e-7);
          compared++;
        }
        expect(compared).toBeGreaterThanOrEqual(3);
      }
    }
  });
});

describe('random graphs against scipy.linalg.eigh (fixture)', () => {
  for (const name of ['random_small', 'random_large', 'islands']) {
    for (const kind of KINDS) {
      for (const mode of MODES) {
        it(`${name}, ${kind}, ${mode.name}`, () => {
          const g = fixture(name);
          const entry = expected.graphs[name];
          const want: number[] = entry[kind].eigenvalues;
          const r = laplacianSpectrum(g, want.length, { ...mode.opts, laplacian: kind });
          expect(r.components).toBe(entry.components);
          expectClose(r.eigenvalues, want, 1e-8);
          checkResult(g, r);
        });
      }
    }
  }

  it('islands: 12 copies of P5 give 2 − 2cos(π/5) = 0.381966 twelve times (closed form)', () => {
    const g = fixture('islands');
    const entry = expected.graphs.islands;
    const r = laplacianSpectrum(g, entry.components + 13, { denseComponents: 0 });
    const p5 = 2 - 2 * Math.cos(Math.PI / 5);
    const copies = Array.from(r.eigenvalues).filter((x) => Math.abs(x - p5) < 1e-9).length;
    expect(copies).toBe(12);
  });

  it('agrees with the dense ml-matrix path on the first 20 eigenpairs of random_small', () => {
    const g = fixture('random_small');
    for (const kind of KINDS) {
      const d = denseLaplacianSpectrum(g, kind);
      const r = laplacianSpectrum(g, 20, { laplacian: kind, denseComponents: 0 });
      expectClose(r.eigenvalues, d.eigenvalues.slice(0, 20), 1e-9);
    }
  });
});

describe('options and behaviour', () => {
  it('is deterministic: the same seed gives bit-identical results', () => {
    const g = fixture('random_large');
    const k = expected.graphs.random_large.components + 8;
    const a = laplacianSpectrum(g, k, { denseComponents: 0 });
    const b = laplacianSpectrum(g, k, { denseComponents: 0 });
    expect(Array.from(b.eigenvalues)).toEqual(Array.from(a.eigenvalues));
    expect(Array.from(b.vectors[k - 1]!)).toEqual(Array.from(a.vectors[k - 1]!));
  });

  it('rejects k outside 1..N', () => {
    const g = fixture('path4');
    expect(() => laplacianSpectrum(g, 0)).toThrow(/k must be/);
    expect(() => laplacianSpectrum(g, 5)).toThrow(/k must be/);
    expect(() => laplacianSpectrum(g, 1.5)).toThrow(/k must be/);
  });

  it('stops with AnalysisCancelled when the token is set between iterations', () => {
    const g = fixture('random_large');
    let looks = 0;
    const cancel = { get isCancellationRequested() { return ++looks > 20; } };
    expect(() => laplacianSpectrum(g, expected.graphs.random_large.components + 20, { denseComponents: 0, cancel })).toThrow(AnalysisCancelled);
    expect(looks).toBeGreaterThan(20);
  });

  it('reports converged: false (with honest residuals) when the product budget runs out', () => {
    const g = fixture('random_large');
    const k = expected.graphs.random_large.components + 10;
    const r = laplacianSpectrum(g, k, { denseComponents: 0, maxMatvecs: 30 });
    expect(r.converged).toBe(false);
    expect(r.k).toBe(k);
    expect(Math.max(...r.residuals)).toBeGreaterThan(r.tol * r.normBound);
  });

  it('positionalEncoding lays the vectors out as N x K row-major float32', () => {
    const r = laplacianSpectrum(fixture('path4'), 3);
    const pe = positionalEncoding(r);
    expect(pe).toBeInstanceOf(Float32Array);
    expect(pe.length).toBe(12);
    for (let v = 0; v < 4; v++) for (let c = 0; c < 3; c++) expect(pe[v * 3 + c]).toBe(Math.fround(r.vectors[c]![v]!));
  });
});

describe('.npy float32 writer (NumPy 1.24 numpy.save, fixture)', () => {
  const hex = (b: Uint8Array) => Buffer.from(b).toString('hex');

  it('headers equal numpy.save\'s byte for byte (64-byte aligned, growth-axis padding)', () => {
    for (const [shape, want] of Object.entries<string>(expected.npy.headers)) {
      const [rows, cols] = shape.split('x').map(Number) as [number, number];
      const h = npyHeader('<f4', [rows, cols]);
      expect(h.length % 64).toBe(0);
      expect(hex(h)).toBe(want);
    }
  });

  it('a whole file equals numpy.save\'s for the same float32 values', () => {
    const ref = expected.npy.reference;
    const bytes = encodeNpyFloat32(4, 3, Float32Array.from(ref.values));
    expect(hex(bytes)).toBe(hex(new Uint8Array(fs.readFileSync(path.join(DIR, ref.file)))));
  });

  it('eigenvectors written as .npy read back (readNpy) as the same float32 values', () => {
    const g = fixture('karate');
    const r = laplacianSpectrum(g, 4, { laplacian: 'normalized' });
    const pe = positionalEncoding(r);
    const t = readNpy(encodeNpyFloat32(34, 4, pe), 'pe.npy', DEFAULT_LIMITS).tensors[0] as DenseTensor;
    expect(t.dtype).toBe('float32');
    expect(t.shape).toEqual([34, 4]);
    expect(Array.from(t.data as Float32Array)).toEqual(Array.from(pe));
  });

  it('rejects data of the wrong length', () => {
    expect(() => encodeNpyFloat32(2, 2, new Float32Array(3))).toThrow(/needs 4/);
  });
});

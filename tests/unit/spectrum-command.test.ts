/**
 * `hopscope spectrum` through the CLI entry point (main(argv, io)).
 *
 * Expected numbers: karate λ2 = 0.468525 (L) and 0.132272 (normalised), docs/references.md §3, and the
 * SciPy 1.10 / NetworkX 2.8 eigenvalues in tests/fixtures/spectrum/expected.json
 * (tests/fixtures/make_spectrum_fixtures.py); P3 + C4 + K1 normalised 0,0,0,1,1,1,2,2
 * (networkx.normalized_laplacian_matrix, Chung's convention). The written .npy is decoded with
 * Hopscope's reader and checked against the eigen-equation on the dense Laplacian.
 */
import { afterAll, describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { main } from '../../server/src/cli';
import { readNpy } from '../../server/src/core/formats/npy';
import { DEFAULT_LIMITS, type DenseTensor } from '../../server/src/core/formats/types';
import { buildSortedPair } from '../../server/src/core/graph/structure/csr';
import { simpleUndirected } from '../../server/src/core/graph/structure/simple-undirected';
import { denseLaplacian } from '../../server/src/core/graph/spectral/spectrum';

const DIR = path.join(__dirname, '../fixtures/spectrum');
const expected = JSON.parse(fs.readFileSync(path.join(DIR, 'expected.json'), 'utf8'));
const KARATE = path.join(DIR, 'karate.npy');
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-spectrum-'));
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

function run(...argv: string[]): { code: number; out: string; err: string } {
  let out = '', err = '';
  const code = main(argv, { out: (s) => { out += s; }, err: (s) => { err += s; }, color: false });
  return { code, out, err };
}
function json(r: { code: number; out: string; err: string }) {
  expect(r.err).toBe('');
  expect(r.code).toBe(0);
  return JSON.parse(r.out);
}
function closeTo(got: number[], want: number[], tol: number): void {
  expect(got.length).toBe(want.length);
  got.forEach((x, i) => expect(Math.abs(x - want[i]!)).toBeLessThan(tol));
}

describe('hopscope spectrum', () => {
  it('karate --k 5 --json: the SciPy eigenvalues, λ2 = 0.468525', () => {
    const r = json(run('spectrum', KARATE, '--k', '5', '--json'));
    expect(r.laplacian).toBe('combinatorial');
    expect(r.nodes).toBe(34);
    expect(r.edges).toBe(78);
    expect(r.k).toBe(5);
    expect(r.eigenvalues[1]).toBeCloseTo(0.468525, 6);
    closeTo(r.eigenvalues, expected.graphs.karate.combinatorial.eigenvalues.slice(0, 5), 1e-9);
    expect(r.converged).toBe(true);
    expect(r.components).toBe(1);
    expect(r.out).toBeNull();
    for (const res of r.residuals) expect(res).toBeLessThanOrEqual(r.tolerance * r.normBound);
  });

  it('--laplacian normalized: λ2 = 0.132272', () => {
    const r = json(run('spectrum', KARATE, '--k=3', '--laplacian', 'normalized', '--json'));
    expect(r.laplacian).toBe('normalized');
    expect(r.eigenvalues[1]).toBeCloseTo(0.132272, 6);
    closeTo(r.eigenvalues, expected.graphs.karate.normalized.eigenvalues.slice(0, 3), 1e-9);
    expect(r.normBound).toBe(2);
  });

  it('P3 + C4 + K1 with --num-nodes 8: three zeros and Chung\'s convention for the isolated node', () => {
    const file = path.join(DIR, 'p3_c4_k1.npy');
    const r = json(run('spectrum', file, '--k', '8', '--laplacian', 'normalized', '--num-nodes', '8', '--json'));
    expect(r.components).toBe(3);
    closeTo(r.eigenvalues, [0, 0, 0, 1, 1, 1, 2, 2], 1e-9);
  });

  it('--out writes an N x K float32 .npy whose columns are the eigenvectors', () => {
    const out = path.join(tmp, 'pe.npy');
    const r = json(run('spectrum', KARATE, '--k', '4', '--out', out, '--json'));
    expect(r.out).toBe(out);
    const t = readNpy(new Uint8Array(fs.readFileSync(out)), out, DEFAULT_LIMITS).tensors[0] as DenseTensor;
    expect(t.dtype).toBe('float32');
    expect(t.shape).toEqual([34, 4]);
    const pe = t.data as Float32Array;
    // Check L x = λ x on the dense Laplacian of the same graph (float32 precision).
    const e = expected.graphs.karate;
    const raw = readNpy(new Uint8Array(fs.readFileSync(KARATE)), 'karate.npy', DEFAULT_LIMITS).tensors[0] as DenseTensor;
    const d = raw.data as ArrayLike<number | bigint>;
    const m = raw.shape[1]!;
    const src = Int32Array.from({ length: m }, (_, i) => Number(d[i]!));
    const dst = Int32Array.from({ length: m }, (_, i) => Number(d[m + i]!));
    const { fwd, rev } = buildSortedPair(e.n, src, dst);
    const A = denseLaplacian(simpleUndirected(fwd, rev));
    for (let c = 0; c < 4; c++) {
      let nrm = 0, res = 0;
      for (let u = 0; u < 34; u++) {
        nrm += pe[u * 4 + c]! ** 2;
        let s = 0;
        for (let v = 0; v < 34; v++) s += A.get(u, v) * pe[v * 4 + c]!;
        res += (s - r.eigenvalues[c] * pe[u * 4 + c]!) ** 2;
      }
      expect(Math.abs(nrm - 1)).toBeLessThan(1e-6);
      expect(Math.sqrt(res)).toBeLessThan(1e-5);
    }
    // Column 0: the constant vector 1/√34.
    for (let u = 0; u < 34; u++) expect(pe[u * 4]!).toBeCloseTo(1 / Math.sqrt(34), 6);
    // Column 1 is SciPy's Fiedler vector up to sign.
    const fiedler: number[] = e.combinatorial.vectors[1].vector;
    let dotp = 0;
    for (let u = 0; u < 34; u++) dotp += pe[u * 4 + 1]! * fiedler[u]!;
    expect(Math.abs(dotp)).toBeGreaterThan(1 - 1e-6);
  });

  it('never replaces an existing --out file unless --force', () => {
    const out = path.join(tmp, 'existing.npy');
    fs.writeFileSync(out, 'keep me');
    const r = run('spectrum', KARATE, '--k', '2', '--out', out);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/already exists; pass --force/);
    expect(r.out).toBe('');
    expect(fs.readFileSync(out, 'utf8')).toBe('keep me');
    const forced = run('spectrum', KARATE, '--k', '2', '--out', out, '--force');
    expect(forced.code).toBe(0);
    const t = readNpy(new Uint8Array(fs.readFileSync(out)), out, DEFAULT_LIMITS).tensors[0] as DenseTensor;
    expect(t.shape).toEqual([34, 2]);
  });

  it('prints a readable table without --json', () => {
    const r = run('spectrum', KARATE, '--k', '3');
    expect(r.code).toBe(0);
    expect(r.err).toBe('');
    expect(r.out).toContain('Smallest 3 eigenvalues of the combinatorial Laplacian');
    expect(r.out).toContain('0.4685252267');
    expect(r.out).toContain('algebraic connectivity');
    expect(r.out).toMatch(/1 connected component .*multiplicity 1/);
  });

  it('is listed in the overview and has --help', () => {
    const overview = run('--help');
    expect(overview.out).toMatch(/spectrum FILE --k K/);
    const help = run('spectrum', '--help');
    expect(help.code).toBe(0);
    expect(help.out).toMatch(/^Usage: hopscope spectrum FILE --k K/);
    expect(help.out).toContain("Chung's convention");
  });

  describe('exit 2 with a message on usage errors and unreadable files', () => {
    const cases: [string, string[], RegExp][] = [
      ['no --k', [KARATE], /--k is required/],
      ['--k 0', [KARATE, '--k', '0'], /--k must be between 1/],
      ['--k not a number', [KARATE, '--k', 'three'], /--k must be a non-negative whole number/],
      ['--k above N', [KARATE, '--k', '35'], /--k 35 is more than the 34 nodes/],
      ['--k without value', [KARATE, '--k'], /--k needs a value/],
      ['bad --laplacian', [KARATE, '--k', '2', '--laplacian', 'random-walk'], /--laplacian must be combinatorial or normalized/],
      ['bad --tol', [KARATE, '--k', '2', '--tol', '0.5'], /--tol must be a number from 1e-12 to 1e-2/],
      ['--force alone', [KARATE, '--k', '2', '--force'], /--force only applies to --out/],
      ['unknown option', [KARATE, '--k', '2', '--eigs'], /unknown option --eigs/],
      ['no FILE', ['--k', '2'], /no FILE given/],
      ['two files', [KARATE, KARATE, '--k', '2'], /one FILE at a time/],
      ['missing file', [path.join(tmp, 'nope.npy'), '--k', '2'], /no such file/],
    ];
    for (const [name, argv, message] of cases) {
      it(name, () => {
        const r = run('spectrum', ...argv);
        expect(r.code).toBe(2);
        expect(r.out).toBe('');
        expect(r.err).toMatch(message);
      });
    }

    it('a file that is not a graph', () => {
      const bad = path.join(tmp, 'bad.npy');
      fs.writeFileSync(bad, 'not numpy at all');
      const r = run('spectrum', bad, '--k', '2');
      expect(r.code).toBe(2);
      expect(r.err).toMatch(/^hopscope spectrum: /);
    });

    it('an --out path in a missing folder', () => {
      const r = run('spectrum', KARATE, '--k', '2', '--out', path.join(tmp, 'no', 'such', 'dir', 'pe.npy'));
      expect(r.code).toBe(2);
      expect(r.err).toMatch(/cannot write/);
    });
  });
});

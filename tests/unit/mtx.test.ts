import { describe, expect, it } from 'vitest';
import { readMtx } from '../../server/src/core/formats/mtx';
import { DEFAULT_LIMITS, UnreadableError, type ReadResult } from '../../server/src/core/formats/types';
import { expected, fixture, span, sparse, toDense, utf8 } from './text-fixture-helpers';
import { expectUnreadable } from './binary-helpers';

const read = (bytes: Uint8Array, name = 'm.mtx'): ReadResult => readMtx(bytes, name, DEFAULT_LIMITS);
const readText = (text: string): ReadResult => read(utf8(text));

const unreadable = (fn: () => unknown): UnreadableError => expectUnreadable(fn);

/**
 * Files written by scipy 1.10 (scipy.io.mmwrite), see make_text_fixtures.py, and the hand-written
 * examples of docs/references.md §1.5 (which cites NISTIR 5935). Expected dense matrices, nnz and
 * banner words are what scipy.io.mmread / mminfo returned for each file.
 */
const FILES: Array<[string, string]> = [
  ['karate.mtx', 'float64'], // scipy.io.mmwrite: real symmetric, lower triangle
  ['karate.mtx.gz', 'float64'], // gzip of the above
  ['karate_weighted.mtx', 'int64'], // scipy.io.mmwrite: integer symmetric
  ['karate_pattern.mtx', 'bool'], // scipy.io.mmwrite(field='pattern')
  ['directed.mtx', 'float64'], // scipy.io.mmwrite: real general
  ['dense_general.mtx', 'float64'], // scipy.io.mmwrite of a dense array: array real general
  ['dense_symmetric.mtx', 'float64'], // scipy.io.mmwrite: array real symmetric
  ['spec_pattern_cycle.mtx', 'bool'], // docs/references.md §1.5: pattern symmetric 4-cycle, nnz 8
  ['spec_skew.mtx', 'float64'], // §1.5: skew-symmetric `2 1 5.0` → A[1,0]=5, A[0,1]=-5
  ['spec_array_general.mtx', 'float64'], // §1.5: array 2x3 of 1..6 → [[1,3,5],[2,4,6]]
  ['spec_array_symmetric.mtx', 'float64'], // §1.5: array symmetric 3x3 of 1..6 → [[1,2,3],[2,4,5],[3,5,6]]
  ['spec_duplicates.mtx', 'float64'], // §1.5: `1 2 7` and `1 2 3`, scipy sums to 10
  ['upper_case.mtx', 'int64'], // upper-case banner words, CRLF
];

describe('Matrix Market files (scipy.io.mmwrite and docs/references.md §1.5)', () => {
  for (const [name, dtype] of FILES) {
    it(`reads ${name} like scipy.io.mmread`, () => {
      const exp = expected[name];
      const r = read(fixture(name), name);
      expect(r.format).toBe('mtx');
      expect(r.problems).toEqual([]);
      const a = sparse(r);
      expect(a.name).toBe('adjacency');
      expect(a.declaredRole).toBe('adjacency');
      expect(a.dtype).toBe(dtype);
      expect(a.shape).toEqual(exp.shape);
      expect(a.layout).toBe(exp.format);
      if (dtype === 'bool') expect(a.values).toBeUndefined();
      if (dtype === 'int64') expect(a.values).toBeInstanceOf(Int32Array);
      // Coordinate files: stored entries after mirroring, as scipy counts them (duplicates apart).
      // Array files: non-zero values.
      expect(a.row.length).toBe(exp.nnz);
      expect(a.col.length).toBe(exp.nnz);
      if (exp.dense) expect(toDense(a)).toEqual(exp.dense);
      const d = toDense(a);
      expect(d.flat().reduce((s, x) => s + x, 0)).toBeCloseTo(exp.sum, 9);
      expect(r.hints?.indexBase).toBe(1);
      if (exp.shape[0] === exp.shape[1]) expect(r.hints?.nodes).toBe(exp.shape[0]);
      else expect(r.hints?.nodes).toBeUndefined();
    });
  }

  it('gives karate 156 directed entries from 78 stored lines (docs/references.md §2.1)', () => {
    const a = sparse(read(fixture('karate.mtx')));
    expect(a.row.length).toBe(156);
    let degree0 = 0;
    for (let k = 0; k < a.row.length; k++) if (a.row[k] === 0) degree0++;
    expect(degree0).toBe(16); // degree of node 0, §2.1
  });

  it('keeps duplicate coordinates as separate entries (docs/references.md §1.5)', () => {
    const a = sparse(read(fixture('spec_duplicates.mtx')));
    expect(Array.from(a.row)).toEqual([0, 0]);
    expect(Array.from(a.col)).toEqual([1, 1]);
    expect(Array.from(a.values!)).toEqual([7, 3]);
  });

  it('mirrors skew-symmetric entries with the negated value (docs/references.md §1.5)', () => {
    const a = sparse(read(fixture('spec_skew.mtx')));
    expect(Array.from(a.row)).toEqual([1, 0]);
    expect(Array.from(a.col)).toEqual([0, 1]);
    expect(Array.from(a.values!)).toEqual([5, -5]);
  });
});

describe('bare-CR line ends (classic Mac OS text)', () => {
  it('karate.mtx (scipy.io.mmwrite) with every LF turned into CR reads the same, entries at the same lines', () => {
    const lf = read(fixture('karate.mtx'));
    const cr = read(fixture('karate.mtx').map((c) => (c === 10 ? 13 : c)));
    const a = sparse(lf), b = sparse(cr);
    expect(toDense(b)).toEqual(toDense(a));
    expect(span(b.locator!.locate(5))).toEqual(span(a.locator!.locate(5)));
  });
});

describe('locating entries', () => {
  it('maps every entry, mirrored ones included, to its stored line', () => {
    // docs/references.md §1.5 pattern 4-cycle: line 3 holds `2 1`, line 6 holds `4 1`.
    const a = sparse(read(fixture('spec_pattern_cycle.mtx')));
    expect(span(a.locator!.locate(0))).toEqual({ line: 3, column: 1, length: 3 });
    expect(span(a.locator!.locate(1))).toEqual({ line: 3, column: 1, length: 3 });
    expect(span(a.locator!.locate(7))).toEqual({ line: 6, column: 1, length: 3 });
    expect(a.locator!.locate(8)).toBeUndefined();
  });

  it('maps array entries to their value line', () => {
    // §1.5 array symmetric 3x3 with 1..6: value k+1 sits on line 3+k; A[1,0] = 2 is line 4.
    const a = sparse(read(fixture('spec_array_symmetric.mtx')));
    for (let k = 0; k < a.row.length; k++) {
      const v = a.values![k]!;
      expect(span(a.locator!.locate(k))).toEqual({ line: 2 + v, column: 1, length: 1 });
    }
  });

  it('ignores CR in CRLF files when locating', () => {
    const a = sparse(read(fixture('upper_case.mtx')));
    expect(span(a.locator!.locate(2))).toEqual({ line: 6, column: 1, length: 5 });
  });
});

describe('problems', () => {
  it('reports an index of 0 and one beyond N with line and column, leaving them out', () => {
    const exp = expected['index_zero.mtx']; // bad tokens located by Python, see make_text_fixtures.py
    const r = read(fixture('index_zero.mtx'));
    const a = sparse(r);
    const kept = Array.from(a.row, (row, k) => [row, a.col[k], a.values![k]]);
    expect(kept).toEqual(exp.kept);
    const p = r.problems.find((x) => x.code === 'index-out-of-range')!;
    expect(p.severity).toBe('error');
    expect(p.count).toBe(2);
    expect(p.line).toBe(5);
    expect(p.column).toBe(1);
    expect(p.locations!.map((l) => ({ line: l.line, column: l.column, length: l.length }))).toEqual(exp.outOfRange);
    expect(p.locations![0]!.detail).toContain('row index 0');
  });

  it('refuses a truncated file: declares L entries, found K', () => {
    const exp = expected['truncated.mtx'];
    const e = unreadable(() => read(fixture('truncated.mtx')));
    expect(e.message).toContain(`declares ${exp.declared} entries, found ${exp.found}`);
  });

  it('never allocates from a huge declared entry count', () => {
    const e = unreadable(() => readText('%%MatrixMarket matrix coordinate real general\n5 5 2000000000\n1 1 1\n'));
    expect(e.message).toContain('declares 2000000000 entries, found 1');
  });

  it('refuses a file with more entries than declared', () => {
    const e = unreadable(() => readText('%%MatrixMarket matrix coordinate pattern general\n2 2 1\n1 1\n2 2\n'));
    expect(e.message).toContain('declares 1 entry, found 2');
  });

  it('reports non-integer indices and non-numeric values', () => {
    const r = readText('%%MatrixMarket matrix coordinate real general\n3 3 3\n1.5 2 1\n2 3 x\n3 1 2\n');
    const a = sparse(r);
    expect(a.row.length).toBe(2);
    const ni = r.problems.find((p) => p.code === 'non-integer-index')!;
    expect([ni.line, ni.column, ni.count]).toEqual([3, 1, 1]);
    const bad = r.problems.find((p) => p.code === 'edge-shape')!;
    expect([bad.line, bad.column]).toEqual([4, 5]);
    expect(Number.isNaN(a.values![0])).toBe(true);
  });

  it('keeps the diagonal of a skew-symmetric file as scipy.io.mmread does, and reports the non-zero entries', () => {
    // NISTIR 5935 (docs/references.md §1.5): skew-symmetric stores entries strictly below the diagonal.
    // skew_diagonal.mtx stores two diagonal entries (2.5 and an explicit 0); expected.json holds
    // what scipy 1.10's mmread returned: the diagonal kept once, not mirrored, the explicit 0 too.
    const exp = expected['skew_diagonal.mtx'];
    const r = read(fixture('skew_diagonal.mtx'));
    const a = sparse(r);
    expect(toDense(a)).toEqual(exp.dense);
    expect(a.row.length).toBe(exp.nnz);
    expect(r.problems.map((p) => [p.code, p.severity, p.line, p.count])).toEqual([
      ['skew-symmetric-diagonal', 'warning', exp.diagonalLine, exp.nonZeroDiagonal],
    ]);
    expect(r.problems[0]!.message).toMatch(/diagonal must be zero.*kept as stored/);
    const sym = readText('%%MatrixMarket matrix coordinate real symmetric\n2 2 1\n1 2 4\n');
    expect(toDense(sparse(sym))).toEqual([[0, 4], [4, 0]]);
    expect(sym.problems.map((p) => [p.code, p.severity])).toEqual([['edge-shape', 'warning']]);
  });

  it('reports lines with too few fields', () => {
    const r = readText('%%MatrixMarket matrix coordinate real general\n2 2 2\n1 2\n2 1 1\n');
    expect(sparse(r).row.length).toBe(1);
    expect(r.problems.map((p) => [p.code, p.line])).toEqual([['edge-shape', 3]]);
  });
});

describe('banner and size line', () => {
  it('takes banner words in any case ([M] docs/references.md §1.5: reference readers are case-insensitive)', () => {
    const r = readText('%%MATRIXMARKET MATRIX COORDINATE PATTERN GENERAL\n2 2 1\n1 2\n');
    expect(toDense(sparse(r))).toEqual([[0, 1], [0, 0]]);
  });

  it('accepts `double` as a field name and comments before the size line', () => {
    const r = readText('%%MatrixMarket matrix coordinate double general\n% one\n\n% two\n1 1 1\n1 1 2.5\n');
    expect(Array.from(sparse(r).values!)).toEqual([2.5]);
  });

  it('refuses complex and hermitian matrices, and other invalid banners', () => {
    expect(unreadable(() => readText('%%MatrixMarket matrix coordinate complex general\n1 1 1\n1 1 1 0\n')).message)
      .toContain('complex matrices are not graph data');
    expect(unreadable(() => readText('%%MatrixMarket matrix coordinate real hermitian\n1 1 0\n')).message)
      .toContain('complex');
    unreadable(() => readText('%%MatrixMarket vector coordinate real general\n1 1 0\n'));
    unreadable(() => readText('%%MatrixMarket matrix array pattern general\n1 1\n'));
    unreadable(() => readText('%%MatrixMarket matrix coordinate pattern skew-symmetric\n1 1 0\n'));
    unreadable(() => readText('%%MatrixMarket matrix sparse real general\n1 1 0\n'));
    expect(unreadable(() => readText('1 1 1\n1 1 1\n')).message).toContain('%%MatrixMarket');
    unreadable(() => readText(''));
  });

  it('refuses a missing or malformed size line', () => {
    unreadable(() => readText('%%MatrixMarket matrix coordinate real general\n% only comments\n'));
    expect(unreadable(() => readText('%%MatrixMarket matrix coordinate real general\n3 3\n')).message)
      .toContain('rows cols entries');
    unreadable(() => readText('%%MatrixMarket matrix array real general\n3 3 9\n'));
    unreadable(() => readText('%%MatrixMarket matrix coordinate real general\n3 -3 1\n1 1 1\n'));
    unreadable(() => readText('%%MatrixMarket matrix array real symmetric\n2 3\n1\n2\n3\n'));
    // A coordinate file too: mirroring `2 1` of a 3 x 1 skew-symmetric matrix would store (1, 2),
    // outside the matrix (found by the mutation fuzz test; scipy.io.mmread raises ValueError).
    expect(unreadable(() => readText('%%MatrixMarket matrix coordinate real skew-symmetric\n3 1 1\n2 1 7.0\n')).message)
      .toContain('must be square, the size line says 3×1');
  });

  it('refuses a truncated array', () => {
    expect(unreadable(() => readText('%%MatrixMarket matrix array real general\n2 2\n1\n2\n3\n')).message)
      .toContain('declares 4 values, found 3');
  });

  it('keeps a non-square matrix (the checks layer reports it)', () => {
    const r = readText('%%MatrixMarket matrix coordinate integer general\n2 3 1\n2 3 9\n');
    expect(sparse(r).shape).toEqual([2, 3]);
    expect(r.hints?.nodes).toBeUndefined();
  });

  it('says the real limit for a size line with 10^12 entries (a whole number, not a malformed one)', () => {
    // size_1e12.mtx: hand-written, declares 10^12 entries and stores one (expected.json).
    const exp = expected['size_1e12.mtx'];
    const msg = unreadable(() => read(fixture('size_1e12.mtx'))).message;
    expect(msg).not.toContain('non-negative integers');
    expect(msg).toContain(`declares ${exp.declared} entries, found ${exp.found}`);
    expect(unreadable(() => readText('%%MatrixMarket matrix coordinate real general\n3000000000 3 1\n1 1 1\n')).message)
      .toMatch(/3000000000 rows is above the 2147483647/);
    expect(unreadable(() => readText('%%MatrixMarket matrix coordinate real general\n3 3 100000000000000000000\n1 1 1\n')).message)
      .toMatch(/entries is above 9007199254740991/);
    expect(unreadable(() => readText('%%MatrixMarket matrix coordinate real general\n3 3 1.5\n1 1 1\n')).message)
      .toContain('non-negative integers');
  });

  it('stores integer values that do not fit in int32 as Float64Array', () => {
    const a = sparse(readText('%%MatrixMarket matrix coordinate integer general\n1 1 1\n1 1 3000000000\n'));
    expect(a.values).toBeInstanceOf(Float64Array);
    expect(a.values![0]).toBe(3000000000);
  });
});

// The Matrix Market examples of SciPy's own test module (scipy/io/tests/test_mmio.py, copied by
// make_text_fixtures.py with what scipy 1.10's mmread returned or raised for each).
describe("SciPy's test_mmio.py examples", () => {
  const names = Object.keys(expected).filter((k) => k.startsWith('scipy_'));
  it('are all there', () => expect(names.length).toBeGreaterThanOrEqual(14));
  for (const name of names) {
    const exp = expected[name];
    it(`${name}: ${exp.error ? `refused, as mmread raises ${exp.error}` : exp.complex ? 'complex: refused' : 'the matrix mmread returns'}`, () => {
      if (exp.error) {
        // Integers beyond int64: mmread raises OverflowError; never an int64 that cannot hold them.
        expect(exp.error).toBe('OverflowError');
        expect(unreadable(() => read(fixture(name), name)).message).toMatch(/does not fit in int64/);
        return;
      }
      if (exp.complex) {
        expect(unreadable(() => read(fixture(name), name)).message).toContain('complex');
        return;
      }
      const r = read(fixture(name), name);
      const a = sparse(r);
      expect(a.shape).toEqual(exp.shape);
      expect(a.dtype).toBe(exp.dtype === 'int64' ? 'int64' : exp.banner.includes('pattern') ? 'bool' : 'float64');
      // int64 values near 2^63 compare as the doubles JSON.parse makes of them, like the reader's.
      expect(toDense(a)).toEqual(exp.dense);
      for (const p of r.problems) expect(['skew-symmetric-diagonal', 'edge-shape']).toContain(p.code);
    });
  }
});

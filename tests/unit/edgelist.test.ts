import * as fs from 'node:fs';
import * as path from 'node:path';
import { gzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { NotEdgeListError, readEdgeList, wideLimit, type EdgeListReadResult } from '../../server/src/core/formats/edgelist';
import { FieldSplitter } from '../../server/src/core/formats/text/fields';
import { DEFAULT_LIMITS, UnreadableError, type ReadLimits } from '../../server/src/core/formats/types';
import { dense, expected, fixture, pairs, span, tensor, utf8 } from './text-fixture-helpers';
import { expectUnreadable } from './binary-helpers';

const read = (bytes: Uint8Array, name = 'graph.txt', limits: ReadLimits = DEFAULT_LIMITS): EdgeListReadResult =>
  readEdgeList(bytes, name, limits);
const readText = (text: string, name = 'graph.txt'): EdgeListReadResult => read(utf8(text), name);

const unreadable = (fn: () => unknown): UnreadableError => expectUnreadable(fn);

// Files written by networkx 2.8 / scipy 1.10 / numpy 1.24, see make_text_fixtures.py; each
// expected.json entry names the call that wrote it.
const KARATE_FILES = [
  'karate.edges', // networkx.write_edgelist(data=False)
  'karate.edges.gz', // gzip (Python) of the above
  'karate_weighted.txt', // networkx.write_edgelist(data=['weight'])
  'karate_nxdict.el', // networkx.write_edgelist(data=True): `0 1 {'weight': 4}`
  'karate_savetxt.csv', // numpy.savetxt(delimiter=',', header=...) → commented header
  'karate_header.csv', // numpy.savetxt(..., comments='') → header row
  'karate.tsv', // numpy.savetxt(delimiter='\t')
  'karate_crlf.csv', // numpy.savetxt(delimiter=';', newline='\r\n')
  'karate_bom.txt', // UTF-8 BOM + header row (Python utf-8-sig)
];

describe('edge lists written by networkx / numpy', () => {
  for (const name of KARATE_FILES) {
    it(`reads ${name} like the library wrote it`, () => {
      const exp = expected[name];
      const r = read(fixture(name), name);
      expect(r.format).toBe('edgelist');
      expect(r.problems).toEqual([]);
      const ei = dense(r, 'edge_index');
      expect(ei.dtype).toBe('int64');
      expect(ei.data).toBeInstanceOf(Int32Array);
      expect(ei.shape).toEqual([2, exp.count]);
      expect(ei.declaredRole).toBe('edge-index');
      // docs/references.md §2.1: karate has 78 edges.
      expect(exp.count).toBe(78);
      expect(pairs(ei)).toEqual(exp.edges);
      expect(r.delimiter).toBe(exp.delimiter);
      if (exp.columns) expect(r.columns).toEqual(exp.columns);
      else expect(r.columns).toBeUndefined();
      if (exp.weights) {
        const w = dense(r, 'edge_weight');
        expect(w.dtype).toBe('float64');
        expect(w.shape).toEqual([exp.count]);
        expect(Array.from(w.data)).toEqual(exp.weights);
      } else {
        expect(r.tensors.map((t) => t.name)).toEqual(['edge_index']);
      }
    });
  }

  it('reads weight and feature columns (numpy.savetxt, pipe-delimited, header row)', () => {
    const exp = expected['edge_features.txt'];
    const r = read(fixture('edge_features.txt'), 'edge_features.txt');
    expect(r.delimiter).toBe('|');
    expect(r.columns).toEqual(['u', 'v', 'w', 'f1', 'f2']);
    expect(pairs(dense(r, 'edge_index'))).toEqual(exp.edges);
    // Values as numpy.loadtxt read them back from the same file.
    expect(Array.from(dense(r, 'edge_weight').data)).toEqual(exp.weights);
    const attr = dense(r, 'edge_attr');
    expect(attr.shape).toEqual([exp.count, 2]);
    expect(attr.declaredRole).toBe('edge-features');
    const rows: number[][] = [];
    for (let e = 0; e < exp.count; e++) rows.push([attr.data[2 * e]!, attr.data[2 * e + 1]!]);
    expect(rows).toEqual(exp.attr);
  });
});

describe('locating values', () => {
  it('maps edge_index elements to line and column (karate.edges, networkx)', () => {
    const r = read(fixture('karate.edges'));
    const ei = dense(r, 'edge_index');
    const E = ei.shape[1]!;
    // networkx writes `u v` per line: edge k is on line k+1, source at column 1, target after one space.
    for (const k of [0, 1, 10, E - 1]) {
      const [u, v] = [ei.data[k]!, ei.data[E + k]!];
      expect(span(ei.locator!.locate(k))).toEqual({ line: k + 1, column: 1, length: String(u).length });
      expect(span(ei.locator!.locate(E + k))).toEqual({
        line: k + 1, column: String(u).length + 2, length: String(v).length,
      });
    }
    expect(ei.locator!.locate(2 * E)).toBeUndefined();
    expect(ei.locator!.locate(-1)).toBeUndefined();
    expect(ei.locator!.locate(0.5)).toBeUndefined();
  });

  it('does not count the BOM as a column and skips the header row (karate_bom.txt)', () => {
    const r = read(fixture('karate_bom.txt'));
    const ei = dense(r, 'edge_index');
    expect(span(ei.locator!.locate(0))).toEqual({ line: 2, column: 1, length: 1 });
  });

  it('locates weights in CRLF files and in networkx dict data', () => {
    const crlf = read(fixture('karate_crlf.csv'));
    // numpy.savetxt(delimiter=';'): `0;1;4\r\n` → the weight of edge 0 is at line 1, column 5.
    expect(span(dense(crlf, 'edge_weight').locator!.locate(0))).toEqual({ line: 1, column: 5, length: 1 });
    const nxd = read(fixture('karate_nxdict.el'));
    // networkx: `0 1 {'weight': 4}` → the 4 is at column 16.
    expect(span(dense(nxd, 'edge_weight').locator!.locate(0))).toEqual({ line: 1, column: 16, length: 1 });
  });

  it('counts columns in UTF-16 code units after multi-byte characters (multibyte.csv)', () => {
    const exp = expected['multibyte.csv']; // columns computed by Python, see make_text_fixtures.py
    const r = read(fixture('multibyte.csv'));
    const attr = dense(r, 'edge_attr');
    expect(Array.from(attr.data)).toEqual(exp.attr.flat());
    for (let e = 0; e < exp.count; e++) expect(span(attr.locator!.locate(e))).toEqual(exp.attrLocations[e]);
    const w = dense(r, 'edge_weight');
    expect(Number.isNaN(w.data[0])).toBe(true);
    expect(Number.isNaN(w.data[1])).toBe(true);
    expect(w.data[2]).toBe(0.5);
    const bad = r.problems.find((p) => p.code === 'edge-shape' && p.tensor === 'edge_weight')!;
    expect(bad.severity).toBe('error');
    expect(bad.count).toBe(2);
    expect(bad.locations!.map((l) => ({ line: l.line, column: l.column, length: l.length }))).toEqual(exp.badWeights);
  });
});

describe('problems in the ids', () => {
  it('reports non-integer ids with line and column and leaves their edges out (broken.txt)', () => {
    // Ids checked with Python float() on decimal literals (make_text_fixtures.py): whole numbers are
    // ids however written (`1e3` is id 1000, 3000000000 an int64 id), `1.5` and `abc` are not.
    const exp = expected['broken.txt'];
    const r = read(fixture('broken.txt'));
    expect(pairs(dense(r, 'edge_index'))).toEqual(exp.edges);
    const ni = r.problems.find((p) => p.code === 'non-integer-index')!;
    expect(ni.severity).toBe('error');
    expect(ni.tensor).toBe('edge_index');
    expect(ni.count).toBe(exp.nonInteger.length);
    expect(ni.line).toBe(exp.nonInteger[0].line);
    expect(ni.column).toBe(exp.nonInteger[0].column);
    expect(ni.locations!.map((l) => ({ line: l.line, column: l.column, length: l.length }))).toEqual(
      exp.nonInteger.map((x: { line: number; column: number; length: number }) => ({
        line: x.line, column: x.column, length: x.length,
      })),
    );
    expect(ni.locations![0]!.detail).toBe("source '1.5' is not a whole number");
    expect(ni.locations![1]!.detail).toBe("source 'abc' is not a number");
    // 3000000000 is beyond int32: the edge index is a Float64Array, as int64 tensors are.
    expect(dense(r, 'edge_index').data).toBeInstanceOf(Float64Array);
    const fl = r.problems.find((p) => p.code === 'non-integer-index' && p.severity === 'info')!;
    expect(fl.count).toBe(exp.floatIds.length);
    expect(fl.locations!.map((l) => ({ line: l.line, column: l.column, length: l.length }))).toEqual(
      exp.floatIds.map((x: { line: number; column: number; length: number }) => ({ line: x.line, column: x.column, length: x.length })));
    expect(fl.locations![0]!.detail).toBe(`target '${exp.floatIds[0].token}' is read as id ${exp.floatIds[0].value}`);
    const short = r.problems.find((p) => p.code === 'edge-shape')!;
    expect(short.severity).toBe('error');
    expect(short.count).toBe(exp.short.length);
    expect(short.locations!.map((l) => ({ line: l.line, column: l.column, length: l.length }))).toEqual(exp.short);
  });

  it('accepts negative ids and an explicit plus sign (range checks come later)', () => {
    const r = readText('-1 2\n+3 -2147483648\n2147483647 0\n');
    expect(pairs(dense(r, 'edge_index'))).toEqual([[-1, 2], [3, -2147483648], [2147483647, 0]]);
    expect(r.problems).toEqual([]);
  });

  it('reads ids beyond int32 and whole numbers written as floats as ids; refuses the rest with the reason', () => {
    // Values as Python's float()/int() give them (recalled, not computed here): 2147483648 = 2**31,
    // 1e3 = 1000.0, 1.0 = 1.0, -0.0 = 0, 0x1 is not a decimal literal, 2.5 has a fraction,
    // 9007199254740993 = 2**53 + 1 rounds to 2**53 as a double.
    const r = readText('0 2147483648\n1e3 1\n1.0 2\n-0.0 5\n0x1 2\n3 4\n2.5 1\n9007199254740993 1\n4 -2147483649\n');
    expect(pairs(dense(r, 'edge_index'))).toEqual([[0, 2147483648], [1000, 1], [1, 2], [0, 5], [3, 4], [4, -2147483649]]);
    expect(dense(r, 'edge_index').data).toBeInstanceOf(Float64Array);
    const ni = r.problems.find((p) => p.code === 'non-integer-index' && p.severity === 'error')!;
    expect(ni.count).toBe(3);
    expect(ni.locations!.map((l) => [l.line, l.column, l.detail])).toEqual([
      [5, 1, "source '0x1' is not a number"],
      [7, 1, "source '2.5' is not a whole number"],
      [8, 1, "source '9007199254740993' is beyond 2^53, too large to be held exactly"],
    ]);
    const fl = r.problems.find((p) => p.code === 'non-integer-index' && p.severity === 'info')!;
    expect(fl.count).toBe(3); // 1e3, 1.0 and -0.0; 2147483648 and -2147483649 are plain integers
    expect(fl.locations!.map((l) => [l.line, l.column])).toEqual([[2, 1], [3, 1], [4, 1]]);
  });

  it('keeps int32 ids in an Int32Array when none is beyond int32 (the types.ts rule)', () => {
    const r = readText('1.0 2\n2147483647 -2147483648\n');
    expect(dense(r, 'edge_index').data).toBeInstanceOf(Int32Array);
    expect(pairs(dense(r, 'edge_index'))).toEqual([[1, 2], [2147483647, -2147483648]]);
  });

  // numpy.savetxt's default fmt ('%.18e') and fmt='%.1f' write whole-number ids as floats;
  // numpy.loadtxt reads them back as float64 whole numbers (make_text_fixtures.py).
  for (const name of ['karate_savetxt_default.txt', 'karate_savetxt_1f.csv']) {
    it(`reads ${name} (numpy.savetxt floats) as the ids numpy.loadtxt gives, with one info`, () => {
      const exp = expected[name];
      expect(exp.loadtxtDtype).toBe('float64');
      expect(exp.allWhole).toBe(true);
      const r = read(fixture(name), name);
      const ei = dense(r, 'edge_index');
      expect(ei.data).toBeInstanceOf(Int32Array);
      expect(pairs(ei)).toEqual(exp.edges);
      expect(r.problems.map((p) => `${p.code}:${p.severity}`)).toEqual(['non-integer-index:info']);
      const p = r.problems[0]!;
      expect(p.count).toBe(exp.floatIds);
      expect(p.line).toBe(1);
      expect(p.column).toBe(1);
      expect(p.locations![0]!.detail).toBe(`source '${exp.firstToken}' is read as id 0`);
      expect(p.message).toMatch(/written as floats/);
      expect(p.message).toMatch(/astype\(np\.int64\)/);
    });
  }

  it('reads quoted CSV ids', () => {
    const r = readText('"source","target"\n"0","1"\n"1","2"\n', 'g.csv');
    expect(r.columns).toEqual(['source', 'target']);
    expect(pairs(dense(r, 'edge_index'))).toEqual([[0, 1], [1, 2]]);
  });
});

describe('layout sniffing', () => {
  const cases: Array<[string, string, string]> = [
    ['tab', '0\t1\n1\t2\n', 'tab'],
    ['comma with spaces', '0, 1\n1, 2\n', ','],
    ['semicolon', '0;1\n1;2\n', ';'],
    ['pipe', '0|1\n1|2\n', '|'],
    ['runs of spaces', '0    1\n1  \t 2\n', 'whitespace'],
  ];
  for (const [label, text, delim] of cases) {
    it(`detects ${label}`, () => {
      const r = readText(text);
      expect(r.delimiter).toBe(delim);
      expect(pairs(dense(r, 'edge_index'))).toEqual([[0, 1], [1, 2]]);
      expect(r.problems).toEqual([]);
    });
  }

  it('prefers the delimiter with the most consistent occurrences (semicolon CSV with decimal commas)', () => {
    const r = readText('0;1;0,5\n1;2;1,5\n');
    expect(r.delimiter).toBe(';');
    // `0,5` is not a number in our (and NumPy's) grammar: reported, read as NaN.
    expect(r.problems.map((p) => p.code)).toEqual(['edge-shape']);
  });

  it('takes a header row when the first two fields are not numbers, and keeps the names', () => {
    const r = readText('src dst weight\n0 1 0.5\n1 2 2.5\n');
    expect(r.columns).toEqual(['src', 'dst', 'weight']);
    expect(Array.from(dense(r, 'edge_weight').data)).toEqual([0.5, 2.5]);
  });

  it('skips comments (# and %, also indented) and blank lines, CRLF included', () => {
    const r = readText('# a\r\n  % b\r\n\r\n   \r\n0 1\r\n\t# c\r\n1 2\r\n\r\n');
    expect(pairs(dense(r, 'edge_index'))).toEqual([[0, 1], [1, 2]]);
    expect(span(dense(r, 'edge_index').locator!.locate(1))).toEqual({ line: 7, column: 1, length: 1 });
  });

  it('reads lines ended by a bare CR (classic Mac OS text) like the same file with LF', () => {
    // The NetworkX/NumPy-written fixtures with every LF turned into CR: the same tensors, and
    // problems at the same lines and columns (an editor shows a lone CR as a line break too).
    const toCr = (b: Uint8Array) => b.map((c) => (c === 10 ? 13 : c));
    for (const name of ['karate.edges', 'karate_header.csv', 'broken.txt']) {
      const lf = read(fixture(name), name), cr = read(toCr(fixture(name)), name);
      expect(cr.tensors.map((t) => [t.name, t.shape])).toEqual(lf.tensors.map((t) => [t.name, t.shape]));
      expect(Array.from(dense(cr, 'edge_index').data)).toEqual(Array.from(dense(lf, 'edge_index').data));
      expect(cr.problems).toEqual(lf.problems);
      expect(span(dense(cr, 'edge_index').locator!.locate(3))).toEqual(span(dense(lf, 'edge_index').locator!.locate(3)));
    }
    expect(read(toCr(fixture('broken.txt')), 'broken.txt').problems.length).toBeGreaterThan(0);
  });

  it('reads a last line without a newline', () => {
    expect(pairs(dense(readText('0 1\n5 6'), 'edge_index'))).toEqual([[0, 1], [5, 6]]);
    expect(pairs(dense(readText('0 1\n5 6 '), 'edge_index'))).toEqual([[0, 1], [5, 6]]);
  });

  it('ignores a trailing delimiter on every line', () => {
    const r = readText('0,1,\n1,2,\n');
    expect(r.tensors.map((t) => t.name)).toEqual(['edge_index']);
    expect(r.problems).toEqual([]);
    const h = readText('a,b,\n0,1,\n1,2,\n');
    expect(h.columns).toEqual(['a', 'b']);
    expect(h.tensors.map((t) => t.name)).toEqual(['edge_index']);
    expect(h.problems).toEqual([]);
  });

  it('keeps weight columns that the header row does not name', () => {
    const r = readText('source target\n0 1 0.5\n1 2 1.5\n');
    expect(r.columns).toEqual(['source', 'target']);
    expect(Array.from(dense(r, 'edge_weight').data)).toEqual([0.5, 1.5]);
  });

  it('warns about lines with a different field count; missing values become NaN', () => {
    const r = readText('0 1 1.5\n1 2\n2 3 2.5 9\n');
    const w = dense(r, 'edge_weight');
    expect(w.data[0]).toBe(1.5);
    expect(Number.isNaN(w.data[1])).toBe(true);
    expect(w.data[2]).toBe(2.5);
    const p = r.problems.find((x) => x.severity === 'warning')!;
    expect(p.code).toBe('edge-shape');
    expect(p.count).toBe(2);
    expect(p.locations!.map((l) => l.line)).toEqual([2, 3]);
  });

  it('reads NumPy spellings of special floats in weights', () => {
    // numpy.savetxt writes nan, inf and -inf this way (recalled from NumPy's %g/%e output, [M]).
    const w = dense(readText('0 1 nan\n1 2 inf\n2 3 -inf\n3 4 1e-05\n4 5 -2.5E+3\n'), 'edge_weight').data;
    expect(Number.isNaN(w[0])).toBe(true);
    expect(Array.from(w.subarray(1))).toEqual([Infinity, -Infinity, 1e-5, -2500]);
  });

  it('parses long mantissas exactly (numpy.savetxt default %.18e)', () => {
    const vals = [0.1, 1 / 3, 123456.789, 5e-324, 1.7976931348623157e308, 2 ** 60 + 2 ** 10];
    const text = vals.map((v, k) => `${k} ${k + 1} ${v.toExponential(18)}`).join('\n');
    expect(Array.from(dense(readText(text), 'edge_weight').data)).toEqual(vals.map((v) => Number(v.toExponential(18))));
  });
});

describe('empty and unreadable input', () => {
  it('reads an empty .el/.edges file, or one with only comments, as zero edges; a .txt without data lines is not taken for a graph', () => {
    for (const text of ['', '\n\n', '# nothing here\n', '\ufeff']) {
      for (const name of ['closed.el', 'retired.edges']) {
        const r = readText(text, name);
        expect(dense(r, 'edge_index').shape).toEqual([2, 0]);
        expect(r.problems).toEqual([]);
      }
      expect(() => readText(text, 'notes.txt')).toThrow(NotEdgeListError);
      // A manifest names it as an edge list: read as one, with no edges.
      const named = readEdgeList(utf8(text), 'notes.txt', DEFAULT_LIMITS, undefined, { asEdgeList: true });
      expect(dense(named, 'edge_index').shape).toEqual([2, 0]);
    }
    // A delimited header row alone is an edge list with no rows yet; one line of words is not.
    expect(dense(readText('source,target\n', 'lanes.csv'), 'edge_index').shape).toEqual([2, 0]);
    expect(() => readText('Larkhaven dock notes\n', 'notes.txt')).toThrow(/no data lines, only one line of words/);
  });

  it('refuses binary data', () => {
    const e = unreadable(() => read(new Uint8Array([0x30, 0x20, 0x31, 0x0a, 0, 1, 2, 3])));
    expect(e.message).toContain('not a text file');
  });

  it('refuses invalid gzip data', () => {
    expect(unreadable(() => read(utf8('0 1\n'), 'g.txt.gz')).message).toContain('not gzip');
    const good = gzipSync(Buffer.from('0 1\n1 2\n'));
    const cut = new Uint8Array(good.subarray(0, good.length - 5));
    unreadable(() => read(cut, 'g.txt.gz'));
    const flipped = new Uint8Array(good);
    flipped[12] ^= 0xff;
    unreadable(() => read(flipped, 'g.txt.gz'));
  });

  it('refuses several concatenated gzip members with a clear message', () => {
    const two = Buffer.concat([gzipSync(Buffer.from('0 1\n')), gzipSync(Buffer.from('1 2\n2 3\n'))]);
    expect(unreadable(() => read(new Uint8Array(two), 'g.edges.gz')).message).toMatch(/several|members/);
  });

  it('checks the gzip size trailer against the limit and the deflate ratio before allocating', () => {
    const good = new Uint8Array(gzipSync(Buffer.from('0 1\n'.repeat(1000))));
    const small: ReadLimits = { ...DEFAULT_LIMITS, maxDecompressedBytes: 100 };
    expect(unreadable(() => read(good, 'g.txt.gz', small)).message).toContain('limit');
    const lie = new Uint8Array(good);
    lie.set([0xff, 0xff, 0xff, 0x7f], lie.length - 4);
    expect(unreadable(() => read(lie, 'g.txt.gz')).message).toContain('impossible');
    const wrong = new Uint8Array(good);
    wrong[wrong.length - 4] = (wrong[wrong.length - 4]! + 1) & 0xff;
    unreadable(() => read(wrong, 'g.txt.gz'));
  });

  it('matches gzip output of node:zlib byte for byte', () => {
    const text = '0 1\n1 2\n2 0\n';
    const r = read(new Uint8Array(gzipSync(Buffer.from(text))), 'g.tsv.gz');
    expect(pairs(dense(r, 'edge_index'))).toEqual([[0, 1], [1, 2], [2, 0]]);
  });
});

describe('larger files', () => {
  it('agrees with a naive split-based parse on a 20 000-line file with mixed formatting', () => {
    let seed = 12345;
    const rnd = (n: number): number => {
      seed = (seed * 1103515245 + 12345) & 0x7fffffff;
      return seed % n;
    };
    const lines: string[] = [];
    const want: number[][] = [];
    for (let k = 0; k < 20000; k++) {
      const u = rnd(100000) - 50;
      const v = rnd(100000);
      const sep = [' ', '\t', '  ', ' \t '][rnd(4)]!;
      const lead = ['', '', ' ', '\t'][rnd(4)]!;
      const end = ['', '', ' ', '\r'][rnd(4)]!;
      if (rnd(50) === 0) lines.push('# comment ' + k);
      if (rnd(50) === 0) lines.push('');
      lines.push(`${lead}${u}${sep}${v}${end}`);
      want.push([u, v]);
    }
    const r = readText(lines.join('\n') + '\n');
    expect(r.problems).toEqual([]);
    expect(pairs(dense(r, 'edge_index'))).toEqual(want);
    // Locations of a few edges agree with where the text puts them.
    const ei = dense(r, 'edge_index');
    for (const k of [0, 777, 19999]) {
      const sp = ei.locator!.locate(ei.shape[1]! + k)!;
      const line = lines[sp.line - 1]!;
      expect(line.slice(sp.column - 1, sp.column - 1 + sp.length)).toBe(String(want[k]![1]));
    }
  });

  it('grows its arrays past the first size estimate', () => {
    // The first 20 lines are long (comments after the ids would not count; long numbers do).
    const head = Array.from({ length: 20 }, (_, k) => `${1000000000 + k} ${1000000000 + k}`).join('\n');
    const tail = Array.from({ length: 5000 }, (_, k) => `${k} ${k}`).join('\n');
    const r = readText(head + '\n' + tail + '\n');
    expect(tensor(r, 'edge_index').shape).toEqual([2, 5020]);
  });
});

describe('hostile layouts', () => {
  it('reports one very wide line among short ones as one edge-shape error and leaves it out', () => {
    const wide = Array.from({ length: 20000 }, (_, k) => String(k)).join(' ');
    const r = readText(wide + '\n' + '0 1\n'.repeat(20000));
    expect(tensor(r, 'edge_index').shape).toEqual([2, 20000]);
    expect(r.problems.map((p) => [p.code, p.severity, p.count, p.line])).toEqual([['edge-shape', 'error', 1, 1]]);
  });

  it('stops splitting a line with far more fields than the others (soak: one 200 MB line of 100M fields)', () => {
    // The soak file of issue 8, 50 000 pairs instead of 50 million: `0 1`, one line of `0 1 `
    // repeated, `1 2`. The long line is one problem at its line; the edges around it are read.
    const text = '0 1\n' + '0 1 '.repeat(50_000) + '\n1 2\n';
    const r = readText(text);
    expect(pairs(dense(r, 'edge_index'))).toEqual([[0, 1], [1, 2]]);
    expect(r.problems).toHaveLength(1);
    const p = r.problems[0]!;
    expect([p.code, p.severity, p.count, p.line, p.column]).toEqual(['edge-shape', 'error', 1, 2, 1]);
    expect(p.message).toContain('far more fields than the 2');
    expect(p.locations![0]!.detail).toBe(`more than ${wideLimit(2)} fields`);
    // The span covers the fields split, not the whole line.
    expect(p.locations![0]!.length).toBeLessThan(4 * wideLimit(2));
    // Lines a little wider than the rest keep today's warning (extra fields ignored).
    const some = readText('0 1\n1 2 3 4 5\n2 3\n');
    expect(some.problems.map((q) => [q.code, q.severity, q.line])).toEqual([['edge-shape', 'warning', 2]]);
    expect(tensor(some, 'edge_index').shape).toEqual([2, 3]);
    // The splitter itself keeps at most maxFields fields and reports the cut.
    const sp = new FieldSplitter(0);
    sp.maxFields = 8;
    const line = utf8('0 1 '.repeat(1000) + '\n5 6\n');
    sp.split(line, 0, line.length);
    expect([sp.count, sp.cut, sp.lineEnd, sp.starts.length]).toEqual([8, true, 4000, 16]);
  });

  it('refuses wide first lines followed by a flood of short ones instead of allocating for them', () => {
    const wide = Array.from({ length: 5000 }, (_, k) => String(k)).join(' ');
    const text = (wide + '\n').repeat(20) + '0 1\n'.repeat(100000);
    expect(unreadable(() => readText(text)).message).toContain('missing values');
  });
});

describe('networkx dict data', () => {
  it('reads the weight from dicts with several keys (commas inside do not count as delimiters)', () => {
    // Format of networkx.write_edgelist(data=True): `u v {attr dict}` (networkx 2.8, see karate_nxdict.el).
    const r = readText("0 1 {'weight': 4, 'color': 'red'}\n1 2 {'color': 'blue', 'weight': 2.5}\n2 3 {}\n");
    expect(r.delimiter).toBe('whitespace');
    const w = dense(r, 'edge_weight').data;
    expect([w[0], w[1], Number.isNaN(w[2])]).toEqual([4, 2.5, true]);
    expect(r.problems).toEqual([]);
  });

  it('has no weight tensor when no dict holds a weight', () => {
    expect(readText('0 1 {}\n1 2 {}\n').tensors.map((t) => t.name)).toEqual(['edge_index']);
  });
});

// tests/fixtures/textfiles, written by tests/fixtures/make_textfile_fixtures.py (NumPy 1.24,
// NetworkX 2.8, Python's codecs and gzip modules); counts in its expected.json come from Python.
const TF = path.join(__dirname, '../fixtures/textfiles');
const tf = (name: string): Uint8Array => new Uint8Array(fs.readFileSync(path.join(TF, name)));
const tfExpected: Record<string, any> = JSON.parse(fs.readFileSync(path.join(TF, 'expected.json'), 'utf8'));

describe('text that is not an edge list', () => {
  for (const name of ['README.txt', 'requirements.txt', 'metrics.csv']) {
    it(`refuses ${name} with the rule and the counts`, () => {
      const exp = tfExpected[name];
      // Python's count over the same lines: at most half start with two whole numbers.
      expect(2 * exp.idLines).toBeLessThanOrEqual(exp.dataLines);
      const e = unreadable(() => read(tf(name), name));
      expect(e).toBeInstanceOf(NotEdgeListError);
      expect(e.message).toMatch(/^not an edge list: 0 of its first \d+ data lines? starts? with two integer node ids/);
      expect(e.message).toContain('more than half of the first data lines, up to 20');
      expect(e.message).toContain('hopscope.json');
    });
  }

  it('reads such a file anyway when asked (a manifest names it), and says so', () => {
    const r = readEdgeList(tf('metrics.csv'), 'metrics.csv', DEFAULT_LIMITS, undefined, { asEdgeList: true });
    // 20 lines sampled: the header row and 19 data lines.
    expect(r.notEdgeList).toContain('0 of its first 19 data lines');
    expect(r.columns).toEqual(['epoch', 'loss', 'accuracy']);
    // numpy.savetxt wrote 30 rows; the loss column (second) is not a whole number on any of them.
    expect(tfExpected['metrics.csv'].dataLines).toBe(30);
    expect(r.problems.find((p) => p.code === 'non-integer-index')!.count).toBe(30);
  });

  it('still reads an edge list with comments, a header row and a footer (numpy.savetxt)', () => {
    const exp = tfExpected['docks_header_comments.csv'];
    const r = read(tf('docks_header_comments.csv'), 'docks_header_comments.csv');
    expect(r.problems).toEqual([]);
    expect(r.notEdgeList).toBeUndefined();
    expect(r.columns).toEqual(exp.columns);
    expect(pairs(dense(r, 'edge_index'))).toEqual(exp.edges); // numpy.loadtxt's reading
  });

  it('decides from the first data lines: a majority of id lines is an edge list, half is not', () => {
    expect(pairs(dense(readText('0 1\nnote\n1 2\n'), 'edge_index'))).toEqual([[0, 1], [1, 2]]);
    expect(() => readText('0 1\nnote\n')).toThrow(NotEdgeListError);
    // Only the first 20 data lines count: prose after them is reported line by line instead.
    const r = readText('0 1\n'.repeat(20) + 'a b\n'.repeat(30));
    expect(r.problems.map((p) => [p.code, p.count])).toEqual([['non-integer-index', 30]]);
    // Whole numbers written as floats or with a sign are ids for this rule.
    expect(() => readText('0.0 1.0\n-1 2e0\n')).not.toThrow(NotEdgeListError);
  });
});

describe('CSV delimiter sniffing with a short line (soak item of issue 8)', () => {
  it("picks the delimiter most lines agree on and reports the short line: printf '0,1\\n1,2\\n0\\n2,0\\n'", () => {
    const r = readText('0,1\n1,2\n0\n2,0\n', 'a.csv');
    expect(r.delimiter).toBe(',');
    expect(pairs(dense(r, 'edge_index'))).toEqual([[0, 1], [1, 2], [2, 0]]);
    expect(r.problems.map((p) => [p.code, p.severity, p.count, p.line])).toEqual([['edge-shape', 'error', 1, 3]]);
    // The same file space-separated reads the same.
    const s = readText('0 1\n1 2\n0\n2 0\n', 'a.txt');
    expect(Array.from(dense(s, 'edge_index').data)).toEqual(Array.from(dense(r, 'edge_index').data));
    expect(s.problems.map((p) => [p.code, p.line])).toEqual([['edge-shape', 3]]);
  });

  it('is not swayed by a minority delimiter or a short line among the first 20', () => {
    const lines = Array.from({ length: 19 }, (_, k) => `${k};${k + 1};0,5`);
    lines.splice(7, 0, '3');
    const r = readText(lines.join('\n') + '\n', 'g.csv');
    expect(r.delimiter).toBe(';');
    expect(tensor(r, 'edge_index').shape).toEqual([2, 19]);
    expect(r.problems.find((p) => p.code === 'edge-shape' && p.severity === 'error' && p.line === 8)).toBeDefined();
  });
});

describe('text in other encodings and damaged gzip (messages that say what happened)', () => {
  it('names UTF-16 and UTF-32 text (Python codecs, with and without a byte order mark) and how to convert it', () => {
    for (const [name, enc, iconv] of [
      ['karate_utf16.txt', 'UTF-16 (little-endian, with a byte order mark)', 'UTF-16'],
      ['karate_utf16be.txt', 'UTF-16BE (no byte order mark)', 'UTF-16BE'],
      ['karate_utf32.txt', 'UTF-32 (little-endian, with a byte order mark)', 'UTF-32'],
    ] as const) {
      const exp = tfExpected[name];
      // Unicode Standard §23.8: FF FE starts little-endian UTF-16; FF FE 00 00 little-endian UTF-32.
      expect(exp.firstBytes.slice(0, 4)).toBe(name === 'karate_utf16be.txt' ? '0030' : 'fffe');
      const e = unreadable(() => read(tf(name), name));
      expect(e.message).toContain(`is ${enc} text`);
      expect(e.message).toContain(`iconv -f ${iconv} -t UTF-8`);
      expect(e.message).not.toContain('NUL');
    }
    // UTF-16 text that is not an edge list is skipped like any other text, decoded to tell.
    const readme = tfExpected['README_utf16.txt'];
    expect(readme.firstBytes.slice(0, 4)).toBe('fffe');
    expect(2 * readme.idLines).toBeLessThanOrEqual(readme.dataLines);
    const notes = unreadable(() => read(tf('README_utf16.txt'), 'README_utf16.txt'));
    expect(notes).toBeInstanceOf(NotEdgeListError);
    expect(notes.message).toMatch(/^not an edge list: it is UTF-16 \(little-endian, with a byte order mark\) text, and 0 of its first \d+ data lines/);
    expect(() => read(tf('karate_utf16.txt'), 'karate_utf16.txt')).not.toThrow(NotEdgeListError);
    // Converted as the message says, the file is the 78-edge list NetworkX wrote.
    const text = new TextDecoder('utf-16le').decode(tf('karate_utf16.txt')); // drops the BOM
    expect(tensor(readText(text), 'edge_index').shape).toEqual([2, tfExpected['karate_utf16.txt'].count]);
    // Binary data is still "not a text file".
    expect(unreadable(() => read(new Uint8Array([0x30, 0x20, 0x31, 0x0a, 0, 1, 2, 3]))).message).toContain('NUL byte');
  });

  it('says truncated for a gzip file cut short, corrupt for damaged data (Python gzip, RFC 1952)', () => {
    const cut = tfExpected['karate_cut.edges.gz'];
    expect(cut.pythonError).toMatch(/^builtins\.EOFError/); // Python: the stream ended early
    const a = unreadable(() => read(tf('karate_cut.edges.gz'), 'karate_cut.edges.gz'));
    expect(a.message).toMatch(/^gzip data is truncated: the file \(90 bytes\) ends before the end of the compressed stream/);
    expect(a.message).not.toMatch(/corrupt|impossible/);

    expect(tfExpected['karate_cut_trailer.edges.gz'].pythonError).toMatch(/^builtins\.EOFError/);
    const b = unreadable(() => read(tf('karate_cut_trailer.edges.gz'), 'karate_cut_trailer.edges.gz'));
    expect(b.message).toMatch(/^gzip data is truncated: .* inside the 8-byte trailer/);

    expect(tfExpected['karate_flipped.edges.gz'].pythonError).toMatch(/BadGzipFile|zlib\.error/); // damaged
    const c = unreadable(() => read(tf('karate_flipped.edges.gz'), 'karate_flipped.edges.gz'));
    expect(c.message).toMatch(/corrupt/);
    expect(c.message).not.toMatch(/truncated/);

    // A deflate stream cut at every length is always "truncated", never "corrupt".
    const whole = fixture('karate.edges.gz');
    for (let len = 10; len < whole.length; len += 7) {
      expect(unreadable(() => read(whole.subarray(0, len), 'k.edges.gz')).message).toMatch(/truncated/);
    }
  });
});

describe('edge locations kept sparsely (a mark every 64 edges, left-out lines remembered)', () => {
  // The file is built here, so the line of every kept edge is known by construction: comments,
  // blank lines, a header, and left-out lines (too short, a non-integer id, far too wide) fall
  // between the edges, and the locator must step over exactly those when it walks from a mark.
  it('locates every edge on its own line, in any order of asking', () => {
    const lines: string[] = ['source,target,weight'];
    const want: Array<{ line: number; u: string; v: string }> = [];
    for (let k = 0; k < 700; k++) {
      if (k % 13 === 5) lines.push('# a note');
      if (k % 17 === 3) lines.push('');
      if (k % 17 === 4) lines.push('  \r');
      if (k % 19 === 7) lines.push(`${k}`); // short: left out
      if (k % 23 === 9) lines.push(`${k},x${k},1`); // non-integer id: left out
      if (k % 97 === 11) lines.push(Array.from({ length: 100 }, () => String(k)).join(',')); // wide: left out
      const u = String((k * 7) % 101), v = k % 29 === 0 ? `  ${k}.0` : String(k);
      lines.push(k % 31 === 0 ? `  ${u} , ${v},2` : `${u},${v},${k % 5 === 0 ? 'zz' : '0.5'}`);
      want.push({ line: lines.length, u, v: v.trim() });
    }
    const r = readText(lines.join('\n'), 'graph.csv');
    const ei = tensor(r, 'edge_index');
    const E = want.length;
    expect(ei.shape).toEqual([2, E]);
    const text = lines.join('\n').split('\n');
    const check = (k: number): void => {
      const a = ei.locator!.locate(k)!;
      const b = ei.locator!.locate(E + k)!;
      expect(a.line).toBe(want[k]!.line);
      expect(b.line).toBe(want[k]!.line);
      const row = text[a.line - 1]!;
      expect(row.substr(a.column - 1, a.length)).toBe(want[k]!.u);
      expect(row.substr(b.column - 1, b.length)).toBe(want[k]!.v);
      expect(tensor(r, 'edge_weight').locator!.locate(k)!.line).toBe(want[k]!.line);
    };
    for (let k = E - 1; k >= 0; k -= 3) check(k); // backwards
    for (let k = 0; k < E; k++) check(k); // forwards
    for (let s = 1; s < 200; s++) check((s * 389) % E); // jumping about
    expect(ei.locator!.locate(2 * E)).toBeUndefined();
  });
});

/**
 * Large deflated .npz members summarised while they are inflated (npy-summary.ts; readNpz with
 * limits.streamAboveBytes), compared with the whole-member path and with NumPy; and the CRC-32
 * check of every member read.
 *
 * Sources: tests/fixtures/binary/features_compressed.npz was written by numpy 1.24's
 * savez_compressed (make_binary_fixtures.py), and expected.json's `figures` hold what NumPy computes
 * from it (min/max/sum over finite values, NaN and infinite counts, first non-finite positions in C
 * order, per-column mean and std). graph_stored_bitflip.npz / graph_compressed_badcrc.npz are copies
 * of numpy.savez / savez_compressed files with one bit flipped, and expected.json records what
 * NumPy said loading them ("BadZipFile: Bad CRC-32 for file '…'", from Python's zipfile).
 * torch.load, on the other hand, makes no CRC check: PyTorch builds miniz with
 * MINIZ_DISABLE_ZIP_READER_CRC32_CHECKS (its CMake files), and the torch.serialization
 * set_crc32_options docstring says files saved without CRCs still load; .pt files follow torch.
 */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readNpz } from '../../server/src/core/formats/npz';
import { parseNpyHeader } from '../../server/src/core/formats/npy';
import { NpySummariser } from '../../server/src/core/formats/npy-summary';
import { openZip } from '../../server/src/core/formats/zip';
import {
  DEFAULT_LIMITS, type DenseTensor, type ReadLimits, type ReadResult, type TensorSummary,
} from '../../server/src/core/formats/types';
import { columnStats, tensorStats } from '../../server/src/core/checks/stats';
import { checkSet } from '../../server/src/core/checks/check-set';
import { checkGraph } from '../../server/src/core/checks/graph-check';
import { loadFile } from '../../server/src/node/load';
import { readPt } from '../../server/src/core/formats/pt';
import { ptFixture } from './pt-helpers';
import {
  FIXTURE_DIR, buildZip, bytesOf, expectSum, expectUnreadable, expected, fixture, npyBytes, toNum,
  type JsonNum,
} from './binary-helpers';
import { seededRandom } from './random';

const FILE = 'features_compressed.npz';
const SUMMARISE_ALL: ReadLimits = { ...DEFAULT_LIMITS, streamAboveBytes: 0 };
/** Members the checks need only as figures; the rest (edge index, labels, mask, a square and an
 * E x 2 array that the role guess could take for structure) are always read whole. */
const SUMMARISED = ['x', 'edge_attr', 'node_feat', 'emb_fortran', 'volume', 'counts', 'small_counts', 'pixels', 'big_endian_f8', 'scale', 'empty_rows'];
/** Fortran-ordered members: their overall sum is added in file order, so it may differ in the last bits. */
const FORTRAN = new Set(['emb_fortran', 'volume']);

const dense = (r: ReadResult) => new Map(r.tensors.map((t) => [t.name, t as DenseTensor]));

function matrixOf(t: DenseTensor): { rows: number; cols: number } {
  if (t.shape.length === 0) return { rows: 1, cols: 1 };
  return { rows: t.shape[0]!, cols: t.shape.slice(1).reduce((a, b) => a * b, 1) };
}

function close(actual: number | null, want: number | null, rel = 1e-9): void {
  if (want === null || actual === null) { expect(actual).toBe(want); return; }
  expect(Math.abs(actual - want)).toBeLessThanOrEqual(rel * Math.max(1, Math.abs(want)));
}

const num = (v: JsonNum | null) => (v === null ? null : toNum(v));

describe('summarised .npz members equal the whole-member path (numpy 1.24 savez_compressed fixture)', () => {
  const bytes = fixture(FILE);
  const whole = dense(readNpz(bytes, FILE, DEFAULT_LIMITS));
  const summ = dense(readNpz(bytes, FILE, SUMMARISE_ALL));

  it('summarises exactly the members whose values the checks do not need', () => {
    expect([...summ.keys()]).toEqual([...whole.keys()]);
    expect([...summ.values()].filter((t) => t.summary).map((t) => t.name).sort()).toEqual([...SUMMARISED].sort());
    for (const t of whole.values()) expect(t.summary).toBeUndefined(); // small members: read whole by default
    for (const t of summ.values()) {
      const w = whole.get(t.name)!;
      expect(t.dtype).toBe(w.dtype);
      expect(t.shape).toEqual(w.shape);
      if (t.summary) expect(t.data.length).toBe(0); // nothing of the body is kept
      else expect(Array.from(t.data)).toEqual(Array.from(w.data));
    }
  });

  it('gives the tensor-table figures of the whole member (sums bit for bit in C order)', () => {
    for (const name of SUMMARISED) {
      const s = tensorStats(summ.get(name)!);
      const w = tensorStats(whole.get(name)!);
      expect({ ...s, sum: 0 }, name).toEqual({ ...w, sum: 0 });
      if (FORTRAN.has(name)) close(s.sum, w.sum, 1e-12);
      else expect(s.sum, name).toBe(w.sum);
    }
  });

  it('gives the per-column figures of the whole member (min, max, mean exact; std to 1e-9)', () => {
    for (const name of SUMMARISED) {
      const s = summ.get(name)!, w = whole.get(name)!;
      const { rows, cols } = matrixOf(w);
      const a = columnStats(s, rows, cols, cols);
      const b = columnStats(w, rows, cols, cols);
      expect(a.length, name).toBe(b.length);
      a.forEach((c, j) => {
        expect({ ...c, std: 0 }, `${name} column ${j}`).toEqual({ ...b[j]!, std: 0 });
        close(c.std, b[j]!.std);
      });
    }
  });

  it('gives what NumPy computes: min/max, finite sum, NaN/inf counts, first non-finite positions, columns', () => {
    const figures = expected.files[FILE]!.figures!;
    expect(Object.keys(figures).sort()).toEqual([...summ.keys()].sort());
    for (const [name, f] of Object.entries(figures)) {
      const t = summ.get(name)!;
      const s = tensorStats(t);
      expect(s.min, name).toBe(num(f.min));
      expect(s.max, name).toBe(num(f.max));
      expect(s.nonFinite, name).toBe(f.nonfinite);
      expectSum(s.sum ?? 0, f.sum);
      if (t.summary) {
        expect(t.summary.nan, name).toBe(f.nan);
        expect(t.summary.nonFiniteAt.slice(0, 5).map((p) => p.index), name).toEqual(f.first_nonfinite);
      }
      const { rows, cols } = matrixOf(t);
      const c = columnStats(t, rows, cols, Math.min(cols, 8));
      expect(c.length).toBe(f.columns.length);
      f.columns.forEach((e, j) => {
        expect(c[j]!.min, `${name}[:, ${j}] min`).toBe(num(e.min));
        expect(c[j]!.max, `${name}[:, ${j}] max`).toBe(num(e.max));
        expect([c[j]!.nan, c[j]!.inf], `${name}[:, ${j}] nan/inf`).toEqual([e.nan, e.inf]);
        close(c[j]!.mean, num(e.mean));
        close(c[j]!.std, num(e.std));
      });
    }
  });

  it('keeps the first non-finite positions in C order, also for Fortran-ordered members (bounded heap)', () => {
    for (const name of SUMMARISED) {
      const t = summ.get(name)!;
      const w = whole.get(name)!;
      const want: Array<{ index: number; value: number }> = [];
      for (let i = 0; i < w.data.length && want.length < 200; i++) {
        const v = w.data[i]!;
        if (v - v !== 0) want.push({ index: i, value: v });
      }
      expect(t.summary!.nonFiniteAt, name).toEqual(want);
    }
    expect(summ.get('x')!.summary!.nonFinite).toBeGreaterThan(200); // the list is cut at 200
    expect(summ.get('emb_fortran')!.summary!.nonFinite).toBeGreaterThan(200);
  });

  it('a check of the file reports the same problems and tensor table either way', () => {
    const report = (r: ReadResult) => checkSet([{ path: 'docks/features_compressed.npz', format: 'npz', result: r }], []).files[0]!;
    const a = report(readNpz(bytes, FILE, SUMMARISE_ALL));
    const b = report(readNpz(bytes, FILE, DEFAULT_LIMITS));
    expect(a.problems).toEqual(b.problems);
    expect(a.problems.some((p) => p.code === 'non-finite-features' && p.tensor === 'x')).toBe(true);
    expect(a.graph).toEqual(b.graph);
    expect(a.tensors.map((t) => ({ ...t, sum: FORTRAN.has(t.name) ? 0 : t.sum })))
      .toEqual(b.tensors.map((t) => ({ ...t, sum: FORTRAN.has(t.name) ? 0 : t.sum })));
  });
});

describe('NpySummariser over pieces of any size', () => {
  it('gives the same summary whatever the piece boundaries (carried partial elements)', () => {
    const zip = openZip(fixture(FILE), DEFAULT_LIMITS);
    const rnd = seededRandom(8);
    for (const entry of zip.entries) {
      const member = zip.readEntry(entry);
      const layout = parseNpyHeader(member, member.length)!;
      if (layout.descr.dtype === 'bool') continue;
      const body = member.subarray(layout.dataStart);
      const once = new NpySummariser(layout);
      once.push(body);
      const pieces = new NpySummariser(layout);
      for (let p = 0; p < body.length;) {
        const n = 1 + rnd(23);
        pieces.push(body.slice(p, p + n)); // fresh, unaligned copies
        p += n;
      }
      const a: TensorSummary = once.finish(), b: TensorSummary = pieces.finish();
      expect(b, entry.name).toEqual(a);
      expect(Object.is(a.sum, b.sum)).toBe(true);
    }
  });

  it('keeps per-column figures for the first columns only when a matrix is wider', () => {
    const zip = openZip(fixture(FILE), DEFAULT_LIMITS);
    const member = zip.readEntry(zip.entries.find((e) => e.name === 'x.npy')!);
    const layout = parseNpyHeader(member, member.length)!;
    const full = new NpySummariser(layout);
    const cut = new NpySummariser(layout, 2);
    full.push(member.subarray(layout.dataStart));
    cut.push(member.subarray(layout.dataStart));
    const a = full.finish(), b = cut.finish();
    expect(b.columns.count).toBe(2);
    expect({ ...b, columns: null }).toEqual({ ...a, columns: null });
    expect(Array.from(b.columns.sum)).toEqual(Array.from(a.columns.sum.subarray(0, 2)));
  });
});

describe('when members are summarised', () => {
  const f64 = (n: number) => bytesOf(new Float64Array(n).map((_, i) => (i % 7) - 3));
  const member = (key: string, shape: string, n: number, method = 8) => ({
    name: `${key}.npy`, method,
    data: npyBytes(`{'descr': '<f8', 'fortran_order': False, 'shape': ${shape}, }`, f64(n), { align: 64 }),
  });
  const archive = buildZip([member('x', '(100, 5)', 500), member('stored_x', '(100, 5)', 500, 0)]);

  it('only deflated members above the threshold', () => {
    const at = (streamAboveBytes: number) => dense(readNpz(archive, 'a.npz', { ...DEFAULT_LIMITS, streamAboveBytes }));
    expect(at(1000).get('x')!.summary).toBeDefined();
    expect(at(1000).get('stored_x')!.summary).toBeUndefined(); // stored: already in memory, a view
    expect(at(5000).get('x')!.summary).toBeUndefined();
    expect(tensorStats(at(1000).get('x')!)).toEqual(tensorStats(at(5000).get('x')!));
  });

  it('never in scipy.sparse archives (numpy 1.24 / scipy 1.10 save_npz fixture)', () => {
    const b = fixture('sparse3_csr.npz');
    expect(readNpz(b, 'a.npz', SUMMARISE_ALL)).toEqual(readNpz(b, 'a.npz', DEFAULT_LIMITS));
  });

  it('within maxStreamedBytes: a bound on time, since nothing is allocated for them', () => {
    expectUnreadable(() => readNpz(archive, 'a.npz', { ...DEFAULT_LIMITS, streamAboveBytes: 0, maxStreamedBytes: 2000 }),
      /entry 'x.npy' declares \d+ uncompressed bytes, over the limit of 2000 bytes summarised per file/);
    // They do not count against maxDecompressedBytes, which bounds what is allocated.
    const r = readNpz(archive, 'a.npz', { ...DEFAULT_LIMITS, streamAboveBytes: 0, maxDecompressedBytes: 5000 });
    expect(dense(r).get('x')!.summary).toBeDefined();
  });

  it('a summarised tensor that a declaration makes labels is reported, not read as empty', () => {
    const x = dense(readNpz(fixture(FILE), FILE, SUMMARISE_ALL)).get('x')!;
    const ei = dense(readNpz(fixture(FILE), FILE, SUMMARISE_ALL)).get('edge_index')!;
    const c = checkGraph([
      { file: 'a.npz', tensor: ei, guess: { role: 'edge-index', reason: 'name' } },
      { file: 'a.npz', tensor: x, guess: { role: 'labels', reason: 'declared' } },
    ]);
    const p = c.problems.find((q) => q.problem.code === 'unreadable');
    expect(p?.problem.message).toMatch(/^x holds 0 MiB of values, too many to keep.*as the labels its values are needed/);
    expect(c.problems.some((q) => q.problem.code === 'label-length-mismatch')).toBe(false);
  });
});

describe('CRC-32 of every member read (NumPy refuses these files with "Bad CRC-32")', () => {
  const corrupt = Object.entries(expected.files).filter(([, f]) => f.format === 'corrupt-npz');

  it('the fixtures are what NumPy refuses', () => {
    expect(corrupt.length).toBe(2);
    for (const [, f] of corrupt) expect(f.numpy_error).toBe(`BadZipFile: Bad CRC-32 for file '${f.member}'`);
  });

  for (const [file, f] of corrupt) {
    it(`${file} (${f.flipped === 'data' ? 'a bit of the data' : 'the recorded CRC'} of ${f.member} flipped)`, () => {
      const b = fixture(file);
      const message = new RegExp(`member '${f.member!.replace('.', '\\.')}' fails its CRC-32 check \\(the archive records 0x[0-9a-f]{8}, its bytes give 0x[0-9a-f]{8}\\): the file is corrupt`);
      expectUnreadable(() => readNpz(b, file, DEFAULT_LIMITS), message);
      expectUnreadable(() => readNpz(b, file, SUMMARISE_ALL), message); // the summarised path checks it too
      expect(readNpz(fixture(f.source!), f.source!, SUMMARISE_ALL).tensors.length).toBe(4); // the unflipped file reads
      // What the CLI and the editor show: an unreadable file, naming the member.
      const loaded = loadFile(join(FIXTURE_DIR, file));
      expect(loaded.error?.message).toMatch(message);
      const report = checkSet([loaded], []).files[0]!;
      expect(report.problems.map((p) => p.code)).toEqual(['unreadable']);
      expect(report.problems[0]!.message).toContain(`Cannot read ${file}: member '${f.member}'`);
    });
  }
});

describe('torch.save archives: no CRC-32 check, as torch.load makes none', () => {
  it('a torch 1.13 file with every recorded CRC-32 wrong reads as the original does', () => {
    const original = ptFixture('graph_dict.pt');
    const bad = original.slice();
    let flipped = 0;
    for (let p = 0; p + 46 <= bad.length; p++) {
      // central directory records (PK 01 02): CRC-32 at +16 (APPNOTE 4.3.12)
      if (bad[p] === 0x50 && bad[p + 1] === 0x4b && bad[p + 2] === 1 && bad[p + 3] === 2) { bad[p + 16]! ^= 0x01; flipped++; }
    }
    const zip = openZip(bad, DEFAULT_LIMITS);
    expect(flipped).toBe(zip.entries.length);
    expectUnreadable(() => zip.entries.forEach((e) => zip.readEntry(e)), /fails its CRC-32 check/); // as a plain zip: refused
    expect(readPt(bad, 'graph_dict.pt', DEFAULT_LIMITS)).toEqual(readPt(original, 'graph_dict.pt', DEFAULT_LIMITS));
  });
});

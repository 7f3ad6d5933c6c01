// Text edge lists parsed while the helper thread reads them (node/file-stream.ts) must give
// exactly what the whole-file read gives: tensors, problems with their lines and columns, and
// locations. The fixtures in tests/fixtures/text were written by NumPy/NetworkX/pandas-style tools
// (tests/fixtures/make_text_fixtures.py); the large files below are generated here to cross the
// 4 MiB chunk and sniffing boundaries, and only compare the two paths with each other.
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readEdgeList } from '../../server/src/core/formats/edgelist';
import { DEFAULT_LIMITS, UnreadableError, type DenseTensor } from '../../server/src/core/formats/types';
import { readArriving } from '../../server/src/node/file-stream';
import { PROBE_BYTES, loadFile } from '../../server/src/node/load';
import { setHelperScript } from '../../server/src/node/helper-thread';

const dir = path.join(__dirname, '../fixtures/text');
let tmp = '';

beforeAll(() => {
  setHelperScript(path.join(__dirname, '../../dist/helper.js'));
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-stream-'));
});
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

/** Everything a caller can observe of a read, in comparable form. */
function observe(r: ReturnType<typeof readEdgeList>) {
  return {
    delimiter: r.delimiter, columns: r.columns, problems: r.problems,
    tensors: r.tensors.map((t) => {
      const d = t as DenseTensor;
      const n = d.shape[0] === 2 ? d.shape[1]! : d.shape[0]!;
      const picks = [0, 1, 2, Math.floor(n / 2), n - 1].filter((k) => k >= 0 && k < n);
      return {
        name: d.name, dtype: d.dtype, shape: d.shape, data: Array.from(d.data as ArrayLike<number>),
        spans: picks.map((k) => d.locator?.locate(k)),
      };
    }),
  };
}

function both(p: string) {
  const whole = readEdgeList(new Uint8Array(fs.readFileSync(p)), p, DEFAULT_LIMITS);
  const a = readArriving(p, fs.statSync(p).size, 0);
  expect(a).not.toBeNull();
  const streamed = readEdgeList(a!.bytes, p, DEFAULT_LIMITS, a!.arriving);
  return { whole, streamed };
}

describe('edge lists read while they arrive', () => {
  const files = fs.readdirSync(dir).filter((f) => /\.(txt|edges|el|csv|tsv)$/.test(f));
  it('covers the text fixtures', () => expect(files.length).toBeGreaterThan(8));
  for (const f of files) {
    it(f, () => {
      const { whole, streamed } = both(path.join(dir, f));
      expect(observe(streamed)).toEqual(observe(whole));
    });
  }

  it('large files: lines across 4 MiB chunks, odd lines late in the file, 5 MB of comments first', () => {
    const body: string[] = [];
    for (let i = 0; i < 700_000; i++) body.push(`${(i * 7919) % 500_000} ${(i * 104729) % 500_000}`);
    body[400_000] = '12 -3';          // negative id: general path
    body[500_000] = '   7\t8  ';      // blanks around the ids
    body[600_000] = '9 x';            // not an integer: a problem with line and column
    const plain = path.join(tmp, 'big.txt');
    fs.writeFileSync(plain, body.join('\n')); // no final LF
    const a = both(plain);
    expect(fs.statSync(plain).size).toBeGreaterThan(8 * 1024 ** 2);
    expect(observe(a.streamed)).toEqual(observe(a.whole));
    expect(a.whole.problems.length).toBeGreaterThan(0);

    const commented = path.join(tmp, 'commented.csv');
    const comments = '# note about the docks\n'.repeat(230_000); // about 5 MB before the first edge
    fs.writeFileSync(commented, comments + 'src,dst\n' + body.slice(0, 50_000).map((l) => l.trim().replace(/\s+/, ',')).join('\n') + '\n');
    const c = both(commented);
    expect(c.whole.columns).toEqual(['src', 'dst']);
    expect(observe(c.streamed)).toEqual(observe(c.whole));
  });

  it('bare-CR text waits for the whole file and reads like the LF original', () => {
    const lf = path.join(dir, 'broken.txt');
    const p = path.join(tmp, 'broken-cr.txt');
    fs.writeFileSync(p, fs.readFileSync(lf).map((c) => (c === 10 ? 13 : c)));
    const { streamed } = both(p);
    const whole = readEdgeList(new Uint8Array(fs.readFileSync(lf)), lf, DEFAULT_LIMITS);
    expect(observe(streamed)).toEqual(observe(whole));
  });

  it('a file shorter than announced is unreadable, not parsed from zeros', () => {
    const p = path.join(tmp, 'short.txt');
    fs.writeFileSync(p, '0 1\n1 2\n2 0\n');
    const a = readArriving(p, 64 * 1024, 0)!;
    expect(() => readEdgeList(a.bytes, p, DEFAULT_LIMITS, a.arriving)).toThrow(UnreadableError);
  });
});

describe('large files refused from their first bytes (soak item of issue 8)', () => {
  // A sparse file reads as zeros without taking disk space (POSIX ftruncate, here fs.truncateSync).
  const sparse = (name: string, size: number, head = ''): string => {
    const p = path.join(tmp, name);
    fs.writeFileSync(p, head);
    fs.truncateSync(p, size);
    return p;
  };
  const rssMiB = () => process.memoryUsage().rss / 1024 ** 2;

  it('a 1000 MiB sparse file of zeros named .txt is refused at byte 0 without being read into memory', () => {
    const p = sparse('zeros.txt', 1000 * 1024 ** 2);
    const before = rssMiB();
    const f = loadFile(p);
    const grew = rssMiB() - before;
    expect(f.result).toBeUndefined();
    // Binary data under a .txt name is some other program's file: skipped by folder checks, and
    // named as binary (with the offset of the NUL byte) when asked for.
    expect(f.error!.message).toContain('not a text file (NUL byte at offset 0)');
    expect(f.notEdgeList).toMatch(/^it holds binary data, not text/);
    // Reading it whole (or into the helper's buffer) would add about 1000 MiB.
    expect(grew).toBeLessThan(100);
    fs.rmSync(p);
  });

  it('a 1000 MiB file that starts with prose is skipped as not an edge list from its first 64 KiB', () => {
    const prose = Array.from({ length: 40 }, (_, k) => `Larkhaven dock ${k} was moved to the north side of the square.`).join('\n') + '\n';
    const p = sparse('notes.txt', 1000 * 1024 ** 2, prose);
    const before = rssMiB();
    const f = loadFile(p);
    expect(rssMiB() - before).toBeLessThan(100);
    expect(f.notEdgeList).toMatch(/^0 of its first \d+ data lines start with two integer node ids/);
    expect(f.error!.message).toMatch(/^not an edge list: /);
    fs.rmSync(p);
  });

  it('UTF-16 text is named as such from the first bytes of a large file', () => {
    const text = '0 1\n1 2\n'.repeat(5000); // 40 000 characters, 80 000 bytes in UTF-16
    const p = path.join(tmp, 'wide.txt');
    fs.writeFileSync(p, Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(text, 'utf16le')]));
    expect(fs.statSync(p).size).toBeGreaterThan(PROBE_BYTES);
    expect(loadFile(p).error!.message).toMatch(/UTF-16 \(little-endian, with a byte order mark\).*iconv -f UTF-16 -t UTF-8/);
    // UTF-16 prose is not refused as UTF-16 but skipped as text that is not an edge list.
    const prose = 'The Larkhaven docks were renumbered in the spring.\n'.repeat(2000);
    fs.writeFileSync(p, Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(prose, 'utf16le')]));
    expect(loadFile(p).notEdgeList).toMatch(/^it is UTF-16 \(little-endian, with a byte order mark\) text, and 0 of its first/);
  });

  it('the helper stops reading once the parser has refused the file; later reads still work', () => {
    // 48 MiB of prose in lines long enough that the first 64 KiB hold fewer than 20 of them:
    // the decision falls on the 4 MiB the parser waits for, while the helper reads on.
    const line = 'Larkhaven '.repeat(400) + '\n';
    const p = path.join(tmp, 'long-prose.txt');
    fs.writeFileSync(p, line.repeat(Math.ceil((48 * 1024 ** 2) / line.length)));
    const a = readArriving(p, fs.statSync(p).size, 0)!;
    expect(() => readEdgeList(a.bytes, p, DEFAULT_LIMITS, a.arriving)).toThrow(/not an edge list/);
    a.stop();
    // The same through loadFile, which stops the helper itself.
    expect(loadFile(p).notEdgeList).toBeDefined();
    // The helper takes the next job as usual.
    const next = path.join(tmp, 'after-refusal.txt');
    fs.writeFileSync(next, Array.from({ length: 200_000 }, (_, k) => `${k} ${(k * 7) % 200_000}`).join('\n') + '\n');
    const { whole, streamed } = both(next);
    expect(observe(streamed)).toEqual(observe(whole));
    expect(whole.tensors[0]!.shape).toEqual([2, 200_000]);
  });
});

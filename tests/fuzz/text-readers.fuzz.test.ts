/**
 * Property tests: random bytes, random strings, token soups and mutated fixtures go into the edge
 * list, Matrix Market and JSON readers. The only exception a reader may throw is UnreadableError;
 * whatever it returns must hang together (array lengths, locators that answer without throwing).
 */
import { readdirSync, readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { readEdgeList } from '../../server/src/core/formats/edgelist';
import { readJson } from '../../server/src/core/formats/json';
import { readMtx } from '../../server/src/core/formats/mtx';
import {
  DEFAULT_LIMITS, MAX_LOCATIONS, UnreadableError, numel, type ReadLimits, type ReadResult,
} from '../../server/src/core/formats/types';
import { TEXT_DIR } from '../unit/text-fixture-helpers';

/** Small decompression limit so hostile gzip trailers are refused quickly. */
const LIMITS: ReadLimits = { ...DEFAULT_LIMITS, maxDecompressedBytes: 1 << 20 };

type Reader = (bytes: Uint8Array, name: string, limits: ReadLimits) => ReadResult;
const TARGETS: Array<[Reader, string]> = [
  [readEdgeList, 'fuzz.txt'],
  [readEdgeList, 'fuzz.csv'],
  [readMtx, 'fuzz.mtx'],
  [readJson, 'fuzz.json'],
];
const GZ_TARGETS: Array<[Reader, string]> = [
  [readEdgeList, 'fuzz.edges.gz'],
  [readMtx, 'fuzz.mtx.gz'],
];

function checkResult(r: ReadResult): void {
  for (const t of r.tensors) {
    if (t.kind === 'dense') {
      expect(t.data.length).toBe(numel(t.shape));
    } else {
      expect(t.col.length).toBe(t.row.length);
      if (t.values) expect(t.values.length).toBe(t.row.length);
      let bad = 0;
      for (let k = 0; k < t.row.length; k++) {
        const r = t.row[k]!;
        const c = t.col[k]!;
        if (r < 0 || r >= t.shape[0] || c < 0 || c >= t.shape[1]) bad++;
      }
      expect(bad).toBe(0);
    }
    const n = t.kind === 'dense' ? t.data.length : t.row.length;
    for (const i of [0, 1, n >> 1, n - 1, n, -1]) {
      const s = t.locator?.locate(i);
      if (i >= 0 && i < n && t.locator) {
        expect(s).toBeDefined();
        expect(s!.line).toBeGreaterThanOrEqual(1);
        expect(s!.column).toBeGreaterThanOrEqual(1);
        expect(s!.length).toBeGreaterThanOrEqual(0);
      }
    }
  }
  for (const p of r.problems) {
    expect(p.count).toBeGreaterThanOrEqual(p.locations?.length ?? 0);
    expect(p.locations?.length ?? 0).toBeLessThanOrEqual(MAX_LOCATIONS);
  }
}

function feed(bytes: Uint8Array, targets: Array<[Reader, string]>): void {
  for (const [read, name] of targets) {
    let r: ReadResult;
    try {
      r = read(bytes, name, LIMITS);
    } catch (e) {
      if (e instanceof UnreadableError) continue;
      throw e;
    }
    checkResult(r);
  }
}

const enc = new TextEncoder();

const FIXTURES = readdirSync(TEXT_DIR)
  .filter((f) => f !== 'expected.json')
  .sort()
  .map((f) => new Uint8Array(readFileSync(TEXT_DIR + f)));

/** Pieces that steer random text into the readers' interesting branches. */
const TOKENS = [
  '0', '1', '7', '-1', '+2', '12', '2147483647', '2147483648', '00000000001', '1.5', '1e3', '.5', '-', 'nan', 'inf',
  'abc', 'é', '😀', '#', '%', ' ', '  ', '\t', ',', ';', '|', '"', "'", '\n', '\r\n', '\r', '{', '}', "'weight':",
  '"weight": ', '[', ']', ':', 'null', 'true', 'false', '%%MatrixMarket matrix coordinate real general\n',
  '%%MatrixMarket matrix array real symmetric\n', '%%MatrixMarket matrix coordinate pattern skew-symmetric\n',
  '%%matrixmarket matrix coordinate integer symmetric\n', '3 3 2\n', '2 2\n', '1 1 1\n', '2 1 0.5\n',
  '{"x": [', '[[0, 1], [1, 2]]', '\ufeff',
];

describe('text readers under random input', () => {
  it('random bytes (plain and .gz names) → only UnreadableError', () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 600 }), (bytes) => {
        feed(bytes, TARGETS);
        feed(bytes, GZ_TARGETS);
      }),
      { numRuns: 400 },
    );
  });

  it('random strings → only UnreadableError', () => {
    fc.assert(
      fc.property(fc.string({ unit: 'binary', maxLength: 400 }), (s) => feed(enc.encode(s), TARGETS)),
      { numRuns: 400 },
    );
  });

  it('token soups → only UnreadableError', () => {
    fc.assert(
      fc.property(fc.array(fc.constantFrom(...TOKENS), { maxLength: 120 }), (parts) =>
        feed(enc.encode(parts.join('')), TARGETS),
      ),
      { numRuns: 600 },
    );
  });

  it('mutated fixtures → only UnreadableError', () => {
    const mutation = fc.record({
      kind: fc.constantFrom('flip', 'insert', 'delete', 'truncate', 'set'),
      at: fc.nat(),
      byte: fc.constantFrom(0x30, 0x31, 0x20, 0x0a, 0x0d, 0x2c, 0x23, 0x25, 0x2e, 0x2d, 0x5b, 0x5d, 0x22, 0xff, 0x00, 0xc3),
    });
    fc.assert(
      fc.property(fc.nat(FIXTURES.length - 1), fc.array(mutation, { minLength: 1, maxLength: 6 }), (which, muts) => {
        let b = FIXTURES[which]!;
        for (const m of muts) {
          const at = b.length === 0 ? 0 : m.at % b.length;
          if (m.kind === 'flip' && b.length > 0) {
            b = b.slice();
            b[at] = b[at]! ^ (1 << (m.at % 8));
          } else if (m.kind === 'set' && b.length > 0) {
            b = b.slice();
            b[at] = m.byte;
          } else if (m.kind === 'insert') {
            b = new Uint8Array([...b.subarray(0, at), m.byte, ...b.subarray(at)]);
          } else if (m.kind === 'delete') {
            b = new Uint8Array([...b.subarray(0, at), ...b.subarray(at + 1)]);
          } else if (m.kind === 'truncate') {
            b = b.slice(0, at);
          }
        }
        feed(b, TARGETS);
        feed(b, GZ_TARGETS);
      }),
      { numRuns: 600 },
    );
  });
});

describe('node-link JSON under random content', () => {
  it('random ids, attributes and links → tensors of the right sizes, located links, only UnreadableError', () => {
    const id = fc.oneof(fc.integer({ min: -3, max: 20 }), fc.string({ maxLength: 4 }), fc.constant(null), fc.boolean());
    const attrs = fc.dictionary(fc.constantFrom('x', 'y', 'weight', 'train_mask', 'club'), fc.jsonValue({ maxDepth: 2 }), { maxKeys: 3 });
    const doc = fc.record({
      directed: fc.boolean(),
      nodes: fc.array(fc.tuple(id, attrs).map(([i, a]) => ({ ...a, id: i })), { maxLength: 12 }),
      links: fc.array(fc.tuple(id, id, attrs).map(([s, t, a]) => ({ ...a, source: s, target: t })), { minLength: 1, maxLength: 20 }),
    });
    fc.assert(
      fc.property(doc, fc.boolean(), (d, indent) => {
        const bytes = enc.encode(JSON.stringify(d, null, indent ? 1 : 0));
        let r: ReadResult;
        try {
          r = readJson(bytes, 'fuzz.json', LIMITS);
        } catch (e) {
          if (e instanceof UnreadableError) return;
          throw e;
        }
        checkResult(r);
        const ei = r.tensors.find((t) => t.name === 'edge_index');
        expect(ei).toBeDefined();
      }),
      { numRuns: 400 },
    );
  });
});

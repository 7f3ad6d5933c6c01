/**
 * "Inspect as Graph", JavaScript side, without a debugger: the snippet js-debug would evaluate runs
 * here in a fresh `vm` context (another realm, no `Buffer`, like a browser page), its reply is turned
 * into an .npz by the extension's code, and the project's .npz reader must give back exactly the
 * values the script held. The .npy header checks follow the format 1.0 layout of the
 * `numpy.lib.format` docstring (magic, version, little-endian header length, header padded with
 * spaces to a multiple of 64 bytes and ended by a newline). The debugpy counterpart, with a real
 * Python, is tests/debug/.
 */
import * as vm from 'node:vm';
import { createRequire } from 'node:module';
import { fileURLToPath } from 'node:url';
import * as esbuild from 'esbuild';
import { describe, expect, it } from 'vitest';
import {
  jsInspectSnippet, labelFor, languageOfSession, npzFromJsReply, parseReply, pythonChunkSnippet, pythonCleanupSnippet,
  pythonInspectSnippet, replyJson, type JsReply,
} from '../../extension/src/debug/snippets';
import { JS_REPL_CHARS, fetchFromJavaScript, type Evaluate } from '../../extension/src/debug/transfer';
import { encodeNpy } from '../../server/src/core/formats/npy-write';
import { encodeNpz } from '../../server/src/core/formats/write';
import { readNpz } from '../../server/src/core/formats/npz';
import { DEFAULT_LIMITS, type DenseTensor } from '../../server/src/core/formats/types';

const MB = 1024 * 1024;

function run(expression: string, scope: Record<string, unknown>, opts: { maxBytes?: number; maxChars?: number | null } = {}): string {
  const code = jsInspectSnippet(expression, { label: labelFor(expression), maxBytes: opts.maxBytes ?? 16 * MB, maxChars: opts.maxChars ?? null });
  return vm.runInNewContext(code, scope) as string;
}

function head(result: string): JsReply {
  return replyJson<JsReply>(parseReply(result));
}

/** The tensors the .npz reader finds in the file the extension writes from a reply. */
function tensorsOf(result: string): Map<string, DenseTensor> {
  const r = parseReply(result);
  const h = replyJson<JsReply>(r);
  if (h.error || h.more !== undefined) throw new Error(`not a value reply: ${JSON.stringify(h)}`);
  const bytes = npzFromJsReply(h, r.body ?? new Uint8Array(0));
  const read = readNpz(bytes, 'value.npz', DEFAULT_LIMITS);
  expect(read.format).toBe('npz');
  return new Map(read.tensors.map((t) => [t.name, t as DenseTensor]));
}

function only(result: string): DenseTensor {
  const m = tensorsOf(result);
  expect(m.size).toBe(1);
  return [...m.values()][0]!;
}

describe('JavaScript inspect snippet (run in a vm context)', () => {
  it('saves a nested array of whole numbers as int64 with its shape', () => {
    const edges = [[0, 1, 1, 2, 3], [1, 0, 2, 1, 9]];
    const t = only(run('edges', { edges }));
    expect(t.name).toBe('edges');
    expect(t.dtype).toBe('int64');
    expect(t.shape).toEqual([2, 5]);
    expect(Array.from(t.data)).toEqual(edges.flat());
  });

  it('keeps int64 values beyond 32 bits and negative ones exact', () => {
    const ids = [-1, 2 ** 40 + 3, -(2 ** 40), 2 ** 53 - 1, 0];
    const t = only(run('ids', { ids }));
    expect(t.dtype).toBe('int64');
    expect(Array.from(t.data)).toEqual(ids);
  });

  it('saves fractional numbers (with NaN and Infinity) as float64 and booleans as bool', () => {
    const x = [[0.5, NaN], [Infinity, -2]];
    const tx = only(run('x', { x }));
    expect(tx.dtype).toBe('float64');
    expect(tx.shape).toEqual([2, 2]);
    expect(Array.from(tx.data)).toEqual([0.5, NaN, Infinity, -2]);
    const mask = [true, false, false, true];
    const tm = only(run('mask', { mask }));
    expect(tm.dtype).toBe('bool');
    expect(Array.from(tm.data)).toEqual([1, 0, 0, 1]);
  });

  it('keeps the element type of typed arrays, including a view at an offset into a larger buffer', () => {
    const buffer = new ArrayBuffer(64);
    new Float32Array(buffer).set([9, 9, 1.25, -3.5, 7, 9]);
    const view = new Float32Array(buffer, 8, 3);
    const cases: Array<[unknown, string, number[]]> = [
      [view, 'float32', [1.25, -3.5, 7]],
      [new Int32Array([5, -6, 7]), 'int32', [5, -6, 7]],
      [new Uint8Array([0, 255]), 'uint8', [0, 255]],
      [new Uint8ClampedArray([3, 4]), 'uint8', [3, 4]],
      [new Int16Array([-300, 300]), 'int16', [-300, 300]],
      [new Float64Array([1e-300, 2]), 'float64', [1e-300, 2]],
      [new BigInt64Array([-5n, 2n ** 40n]), 'int64', [-5, 2 ** 40]],
    ];
    for (const [value, dtype, values] of cases) {
      const t = only(run('v', { v: value }));
      expect(t.dtype, dtype).toBe(dtype);
      expect(Array.from(t.data), dtype).toEqual(values);
    }
  });

  it('reads rows given as typed arrays (an edge index as two Int32Array rows)', () => {
    const ei = [new Int32Array([0, 1, 2]), new Int32Array([1, 2, 0])];
    const t = only(run('ei', { ei }));
    expect(t.shape).toEqual([2, 3]);
    expect(Array.from(t.data)).toEqual([0, 1, 2, 1, 2, 0]);
  });

  it('collects the arrays of a plain graph object and skips scalars and strings', () => {
    const data = {
      edge_index: [[0, 1, 2], [1, 2, 0]],
      x: new Float32Array([0.25, 0.5, 0.75]),
      train_mask: [true, false, true],
      num_nodes: 3,
      name: 'triangle',
    };
    const m = tensorsOf(run('data', { data }));
    expect([...m.keys()].sort()).toEqual(['edge_index', 'train_mask', 'x']);
    expect(Array.from(m.get('edge_index')!.data)).toEqual([0, 1, 2, 1, 2, 0]);
    expect(Array.from(m.get('x')!.data)).toEqual([0.25, 0.5, 0.75]);
    expect(m.get('train_mask')!.dtype).toBe('bool');
  });

  it('looks up the graph attributes on class instances, plus their own typed-array fields', () => {
    const code = `
      class Graph { constructor() { this.edge_index = [[0, 1], [1, 0]]; this.y = [0, 1]; this.history = [[1, 2, 3]];
                                   this.weights = new Float64Array([0.5, 0.5]); this._cache = new Int8Array(4); }
                    get x() { return [[1, 2], [3, 4]]; } }
      globalThis.g = new Graph();`;
    const scope: Record<string, unknown> = {};
    vm.runInNewContext(code, scope);
    const m = tensorsOf(run('g', scope));
    // `history` is a plain array that is neither a graph attribute nor typed; `_cache` is private.
    expect([...m.keys()].sort()).toEqual(['edge_index', 'weights', 'x', 'y']);
    expect(Array.from(m.get('x')!.data)).toEqual([1, 2, 3, 4]);
  });

  it('reads Maps and {data, shape} objects', () => {
    const m = tensorsOf(run('m', { m: new Map<string, unknown>([['edge_index', [[0], [1]]], ['note', 'x']]) }));
    expect([...m.keys()]).toEqual(['edge_index']);
    const t = only(run('t', { t: { data: new Float32Array([1, 2, 3, 4, 5, 6]), shape: [2, 3] } }));
    expect(t.shape).toEqual([2, 3]);
    expect(Array.from(t.data)).toEqual([1, 2, 3, 4, 5, 6]);
  });

  it('names a single array after the last part of the expression', () => {
    const t = only(run("batch['edge_index']", { batch: { edge_index: [[0], [1]] } }));
    expect(t.name).toBe('edge_index');
    expect(only(run('data.x', { data: { x: [1, 2] } })).name).toBe('x');
    expect(only(run('rows.slice(0, 1)', { rows: [[1, 2]] })).name).toBe('value');
  });

  it('accepts an expression that ends in a line comment', () => {
    const t = only(run('edges // the lanes', { edges: [[0], [1]] }));
    expect(t.shape).toEqual([2, 1]);
  });

  it('refuses values that are not tensor-like, saying why', () => {
    const ragged = head(run('r', { r: [[0, 1], [2]] }));
    expect(ragged.error).toBe('not-tensor');
    expect((ragged as { message: string }).message).toMatch(/rows differ in length/);
    const text = head(run('s', { s: [[1, 'a']] }));
    expect((text as { message: string }).message).toMatch(/r\[0\]\[1\]|s\[0\]\[1\]/);
    expect((text as { message: string }).message).toMatch(/string/);
    expect(head(run('n', { n: 5 })).error).toBe('not-tensor');
    expect(head(run('u', { u: undefined })).error).toBe('not-tensor');
    const empty = head(run('o', { o: { name: 'nothing' } }));
    expect(empty.error).toBe('not-tensor');
    expect((empty as { message: string }).message).toMatch(/no array-valued entries/);
  });

  it('refuses values above the size limit before copying them', () => {
    const big = head(run('big', { big: new Float64Array(1000) }, { maxBytes: 4000 }));
    expect(big.error).toBe('too-large');
    expect(big).toMatchObject({ bytes: 8000, limit: 4000 });
  });

  it('only announces its length when the reply would be longer than the adapter passes back', () => {
    const h = head(run('v', { v: new Float64Array(10_000) }, { maxChars: 1000 }));
    expect(h).toMatchObject({ more: expect.any(Number), bytes: 80_000 });
    expect((h as { more: number }).more).toBeGreaterThan(1000);
  });

  it('leaves the debuggee unchanged: no new globals, the value untouched', () => {
    const scope: Record<string, unknown> = { data: { edge_index: [[0, 1], [1, 0]], x: new Float32Array([1, 2]) } };
    const context = vm.createContext(scope);
    const before = vm.runInContext('Object.getOwnPropertyNames(globalThis).sort().join(",")', context) as string;
    const snapshot = JSON.stringify(scope.data, (_k, v: unknown) => (ArrayBuffer.isView(v) ? Array.from(v as Float32Array) : v));
    const code = jsInspectSnippet('data', { label: 'data', maxBytes: MB, maxChars: null });
    vm.runInContext(code, context);
    expect(vm.runInContext('Object.getOwnPropertyNames(globalThis).sort().join(",")', context)).toBe(before);
    expect(JSON.stringify(scope.data, (_k, v: unknown) => (ArrayBuffer.isView(v) ? Array.from(v as Float32Array) : v))).toBe(snapshot);
  });

  it('gives the same reply with Node’s Buffer as with its own base64 encoder', () => {
    const v = new Uint8Array(Array.from({ length: 1001 }, (_, i) => (i * 37) % 256));
    expect(run('v', { v, Buffer })).toBe(run('v', { v }));
  });
});

describe('the snippets as the production bundle sends them', () => {
  /** snippets.ts bundled and minified the way scripts/build.mjs --production does (.py as text). */
  async function bundled(): Promise<typeof import('../../extension/src/debug/snippets')> {
    const out = await esbuild.build({
      entryPoints: [fileURLToPath(new URL('../../extension/src/debug/snippets.ts', import.meta.url))],
      bundle: true, write: false, minify: true, format: 'cjs', platform: 'node', target: 'node20', loader: { '.py': 'text' },
    });
    const mod = { exports: {} as Record<string, unknown> };
    new Function('module', 'exports', 'require', out.outputFiles[0]!.text)(mod, mod.exports, createRequire(import.meta.url));
    return mod.exports as unknown as typeof import('../../extension/src/debug/snippets');
  }

  it('the minified JavaScript function still runs alone in a fresh realm and replies the same', async () => {
    const b = await bundled();
    const scope = { data: { edge_index: [[0, 1, 2], [1, 2, 0]], x: new Float32Array([0.5, 1.5, 2.5]), name: 'ring' } };
    const opts = { label: 'data', maxBytes: MB, maxChars: null };
    const fromBundle = vm.runInNewContext(b.jsInspectSnippet('data', opts), { ...scope }) as string;
    expect(fromBundle).toBe(vm.runInNewContext(jsInspectSnippet('data', opts), { ...scope }) as string);
    expect(fromBundle).not.toBe(run('data', { data: { edge_index: [[0], [1]] } }));
  });

  it('carries the Python helper files byte for byte', async () => {
    const b = await bundled();
    expect(b.pythonInspectSnippet('g', { label: 'g', maxBytes: 1000 })).toBe(pythonInspectSnippet('g', { label: 'g', maxBytes: 1000 }));
    expect(b.pythonChunkSnippet('/tmp/x.npz', 0, 10)).toBe(pythonChunkSnippet('/tmp/x.npz', 0, 10));
    expect(b.pythonCleanupSnippet('/tmp/x.npz')).toBe(pythonCleanupSnippet('/tmp/x.npz'));
    expect(pythonInspectSnippet('g', { label: 'g', maxBytes: 1000 })).toContain('ns["save_value_npz"](');
  });
});

describe('reply decoding', () => {
  it('finds the reply inside any quoting and notices a reply cut short', () => {
    const raw = run('v', { v: [1, 2] });
    for (const shown of [raw, `'${raw}'`, JSON.stringify(raw)]) expect(Array.from(only(shown).data)).toEqual([1, 2]);
    expect(() => parseReply(`'${raw.slice(0, raw.length - 6)}…'`)).toThrow(/cut the reply short/);
    expect(() => parseReply('undefined')).toThrow(/not a Hopscope reply/);
  });

  it('turns big-endian element bytes into little-endian ones', () => {
    const body = new Uint8Array([0x00, 0x00, 0x01, 0x02, 0xff, 0xff, 0xff, 0xfe]); // int32 258 and -2, big-endian
    const bytes = npzFromJsReply({ le: false, notes: [], tensors: [{ name: 'v', dtype: 'int32', wire: 'int32', shape: [2], offset: 0, length: 8 }] }, body);
    expect(Array.from((readNpz(bytes, 'v.npz', DEFAULT_LIMITS).tensors[0] as DenseTensor).data)).toEqual([258, -2]);
  });

  it('rejects a reply whose byte count does not match the shape', () => {
    expect(() => npzFromJsReply({ le: true, notes: [], tensors: [{ name: 'v', dtype: 'int32', wire: 'int32', shape: [3], offset: 0, length: 8 }] }, new Uint8Array(8)))
      .toThrow(/incomplete/);
  });
});

describe('.npy / .npz encoders', () => {
  it('writes a format 1.0 header padded to 64 bytes and ended by a newline', () => {
    for (const shape of [[], [3], [2, 5], [1, 2, 1, 3, 1, 1, 2, 1, 1, 1, 1, 1, 1, 1, 1, 4]]) {
      const n = shape.reduce((a, b) => a * b, 1);
      const npy = encodeNpy('<f8', shape, new Uint8Array(new Float64Array(n).fill(1.5).buffer));
      expect(Array.from(npy.subarray(0, 8))).toEqual([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0]);
      const headerLen = npy[8]! | (npy[9]! << 8);
      expect((10 + headerLen) % 64).toBe(0);
      const header = new TextDecoder().decode(npy.subarray(10, 10 + headerLen));
      expect(header.endsWith('\n')).toBe(true);
      expect(header).toContain(`'shape': (${shape.length === 1 ? `${shape[0]},` : shape.join(', ')})`);
      expect(npy.length).toBe(10 + headerLen + n * 8);
    }
  });

  it('writes archives the .npz reader opens, with every member', () => {
    const npz = encodeNpz([
      { name: 'a', npy: encodeNpy('|b1', [3], new Uint8Array([1, 0, 1])) },
      { name: 'b', npy: encodeNpy('<f4', [2], new Uint8Array(new Float32Array([0.5, -1]).buffer)) },
    ]);
    const read = readNpz(npz, 'x.npz', DEFAULT_LIMITS);
    expect(read.tensors.map((t) => [t.name, t.dtype])).toEqual([['a', 'bool'], ['b', 'float32']]);
    expect(Array.from((read.tensors[1] as DenseTensor).data)).toEqual([0.5, -1]);
  });
});

describe('the JavaScript conversation (transfer.ts) over an adapter that cuts repl results', () => {
  /** Mimics js-debug: 'repl' results are quoted and cut at 100 000 characters, 'clipboard' ones are whole. */
  function adapter(scope: Record<string, unknown>, calls: string[]): Evaluate {
    const context = vm.createContext(scope);
    return async (expression, ctx) => {
      calls.push(ctx);
      const s = vm.runInContext(expression, context) as string;
      return ctx === 'repl' ? `'${s.slice(0, 100_000)}'` : JSON.stringify(s);
    };
  }

  it('takes a small value from one repl evaluation', async () => {
    const calls: string[] = [];
    const r = await fetchFromJavaScript(adapter({ ei: [[0, 1], [1, 0]] }, calls), 'ei', { label: 'ei', maxInlineBytes: MB });
    expect(calls).toEqual(['repl']);
    expect('bytes' in r && r.bytes).toBeTruthy();
  });

  it('asks again through the clipboard context when the reply is longer than a repl result', async () => {
    const x = new Float64Array(40_000).map((_, i) => i / 3);
    const calls: string[] = [];
    const r = await fetchFromJavaScript(adapter({ x }, calls), 'x', { label: 'x', maxInlineBytes: MB });
    expect(calls).toEqual(['repl', 'clipboard']);
    if (!('bytes' in r) || !r.bytes) throw new Error(JSON.stringify(r));
    expect(4 * (x.byteLength / 3)).toBeGreaterThan(JS_REPL_CHARS);
    const t = readNpz(r.bytes, 'x.npz', DEFAULT_LIMITS).tensors[0] as DenseTensor;
    expect(t.data).toEqual(x);
  });

  it('passes refusals on as a sentence naming the expression', async () => {
    const r = await fetchFromJavaScript(adapter({ n: 3 }, []), 'n', { label: 'n', maxInlineBytes: MB });
    expect(r).toEqual({ refused: expect.stringMatching(/^`n` is not tensor-like/) });
  });
});

describe('labels and session types', () => {
  it('labels dotted and indexed paths by their last part', () => {
    expect(labelFor('data.edge_index')).toBe('edge_index');
    expect(labelFor("batch['train_mask']")).toBe('train_mask');
    expect(labelFor('g . x')).toBe('x');
    expect(labelFor('x[0:5]')).toBe('value');
    expect(labelFor('np.asarray(e)')).toBe('value');
  });

  it('knows which debuggers run which snippet', () => {
    expect(languageOfSession('debugpy')).toBe('python');
    expect(languageOfSession('hopscope-debugpy')).toBe('python');
    expect(languageOfSession('pwa-node')).toBe('javascript');
    expect(languageOfSession('cppdbg')).toBeUndefined();
  });
});

/**
 * "Inspect as Graph" against a real debugpy (Debian python3-debugpy 1.6, /usr/bin/python3 with
 * python3-numpy; python3-torch when installed), driven over the Debug Adapter Protocol from Node
 * as in ../shared/E2E.md §9. A script builds NumPy arrays, a dict and an object carrying graph
 * tensors (and PyTorch tensors when torch imports), stops at a breakpoint inside a function, and
 * the extension's own conversation (extension/src/debug/transfer.ts, snippets.ts) saves values to
 * .npz files. The files are read with the project's .npz reader and compared with the values the
 * script built; the frame's globals and locals are compared before and after every inspection.
 */
import { DebugClient } from '@vscode/debugadapter-testsupport';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { copyThroughEvaluate, fetchFromPython, type Evaluate, type Fetched, type Refused } from '../../extension/src/debug/transfer';
import { labelFor, pythonInspectSnippet } from '../../extension/src/debug/snippets';
import { readNpz } from '../../server/src/core/formats/npz';
import { DEFAULT_LIMITS, type DenseTensor, type ReadResult, type SparseTensor } from '../../server/src/core/formats/types';

const PYTHON = '/usr/bin/python3';
const ADAPTER = '/usr/lib/python3/dist-packages/debugpy/adapter';
const MB = 1024 * 1024;

const probe = (code: string) => spawnSync(PYTHON, ['-c', code], { encoding: 'utf8' });
const prereq = probe('import debugpy, numpy');
const HAVE_TORCH = probe('import torch').status === 0;

const SCRIPT = `
import numpy as np

edge_index = np.array([[0, 1, 1, 2, 3], [1, 0, 2, 1, 9]], dtype=np.int64)
x = (np.arange(12, dtype=np.float32) / 7).reshape(4, 3)
x_t = x.T
y = np.array([0, 1, 1, 0], dtype=np.int64)
nested = [[0, 1, 2], [1, 2, 0]]
ragged = [[0, 1], [2]]
label_text = 'docks'
wide = np.arange(20000, dtype=np.float64) * 0.5
data = {'edge_index': edge_index, 'x': x, 'y': y, 'train_mask': np.array([True, False, True, False]),
        'name': 'lanes', 'num_nodes': 4}


class GraphData:
    def __init__(self, **arrays):
        self.__dict__.update(arrays)


graph = GraphData(edge_index=edge_index, x=x, val_mask=np.array([False, True, False, False]), title='lanes')

try:
    import torch
    t_edge = torch.tensor([[0, 1, 2], [1, 2, 0]])
    t_x = torch.arange(6, dtype=torch.float32).reshape(2, 3).t()
    t_half = torch.tensor([1.5, -2.25, 3.0], dtype=torch.bfloat16)
    t_grad = torch.ones(2, 2, requires_grad=True) * 3
    t_sparse = torch.sparse_coo_tensor([[0, 1, 2], [1, 2, 0]], [1.0, 2.0, 3.0], (4, 4))
    t_data = {'edge_index': t_edge, 'x': t_x}
except ImportError:
    torch = None


def inspect_here(local_edges):
    doubled = local_edges * 2
    return doubled  # breakpoint


inspect_here(edge_index)
`;

const dir = mkdtempSync(join(tmpdir(), 'hopscope-dap-'));
/** The debuggee's TMPDIR: whatever the snippets leave behind shows up here. */
const debuggeeTmp = join(dir, 'tmp');
const program = join(dir, 'graph_script.py');
const BP_LINE = SCRIPT.split('\n').findIndex((l) => l.includes('# breakpoint')) + 1;

let dc: DebugClient;
let frameId = 0;
let threadId = 0;

const evaluate: Evaluate = async (expression, context) => (await dc.evaluateRequest({ expression, frameId, context })).body.result;

/**
 * What a frame can see of itself: its globals and locals (names only) and the arrays' contents.
 * As one string: debugpy shows only the first items of a long list, but strings up to 64 K whole.
 */
async function frameState(): Promise<string> {
  const state = await evaluate('repr((sorted(globals().keys()), sorted(locals().keys()), edge_index.tolist(), x.tolist(), sorted(data.keys()), sorted(vars(graph).keys())))', 'repl');
  expect(state).toContain("'inspect_here'");
  expect(state).toContain("'local_edges'");
  return state;
}

const reachable = (p: string, size: number) => existsSync(p) && statSync(p).size === size;

async function inspect(expression: string, over: Partial<Parameters<typeof fetchFromPython>[2]> = {}): Promise<Fetched | Refused> {
  const before = await frameState();
  const r = await fetchFromPython(evaluate, expression, {
    label: labelFor(expression), maxFileBytes: 64 * MB, maxInlineBytes: 64 * MB, reachable, ...over,
  });
  expect(await frameState(), `the frame changed while inspecting ${expression}`).toBe(before);
  return r;
}

/** The .npz the inspection produced, read by the project's reader; the debuggee's file is removed. */
function read(r: Fetched | Refused): ReadResult {
  if ('refused' in r) throw new Error(r.refused);
  let bytes: Uint8Array;
  if (r.path !== undefined) {
    expect(r.path.startsWith(debuggeeTmp)).toBe(true);
    bytes = new Uint8Array(readFileSync(r.path));
    rmSync(join(r.path, '..'), { recursive: true });
  } else {
    bytes = r.bytes;
  }
  return readNpz(bytes, 'inspected.npz', DEFAULT_LIMITS);
}

function byName(res: ReadResult): Map<string, DenseTensor> {
  return new Map(res.tensors.map((t) => [t.name, t as DenseTensor]));
}

const f32 = (v: number) => Math.fround(v);
/** x = (arange(12, float32) / 7).reshape(4, 3): float32 division of small integers is correctly rounded. */
const X = Array.from({ length: 12 }, (_, i) => f32(i / 7));
const EDGE_INDEX = [0, 1, 1, 2, 3, 1, 0, 2, 1, 9];

describe.skipIf(prereq.status !== 0)('inspecting values in a paused debugpy session', () => {
  beforeAll(async () => {
    writeFileSync(program, SCRIPT);
    mkdirSync(debuggeeTmp);
    dc = new DebugClient(PYTHON, ADAPTER, 'python', {}, true);
    dc.defaultTimeout = 60_000;
    await dc.start();
    await dc.hitBreakpoint(
      { type: 'python', request: 'launch', name: 'graph script', program, cwd: dir, console: 'internalConsole', justMyCode: true, python: PYTHON, env: { TMPDIR: debuggeeTmp } } as never,
      { path: program, line: BP_LINE },
    );
    threadId = (await dc.threadsRequest()).body.threads[0]!.id;
    frameId = (await dc.stackTraceRequest({ threadId })).body.stackFrames[0]!.id;
  }, 120_000);

  afterAll(async () => {
    try {
      await dc.setBreakpointsRequest({ source: { path: program }, breakpoints: [] });
      await dc.continueRequest({ threadId });
      await dc.waitForEvent('terminated');
    } finally {
      await dc.stop();
      rmSync(dir, { recursive: true, force: true });
    }
  }, 60_000);

  it('stopped inside the function, where both module and local names are visible', async () => {
    expect(await evaluate('len(local_edges[0]) * 10 + len(doubled)', 'repl')).toBe('52');
  });

  it('saves a NumPy edge index with numpy.savez to a file the reader opens with the same values', async () => {
    const r = await inspect('edge_index');
    expect(r).toMatchObject({ tensors: [{ name: 'edge_index', dtype: 'int64', shape: [2, 5] }], path: expect.stringMatching(/hopscope-dbg-.*edge_index\.npz$/) });
    const t = byName(read(r)).get('edge_index')!;
    expect(t.dtype).toBe('int64');
    expect(t.shape).toEqual([2, 5]);
    expect(Array.from(t.data)).toEqual(EDGE_INDEX);
  });

  it('saves a local variable of the paused function', async () => {
    const t = byName(read(await inspect('doubled'))).get('doubled')!;
    expect(Array.from(t.data)).toEqual(EDGE_INDEX.map((v) => 2 * v));
  });

  it('saves float32 features and a transposed view in C order', async () => {
    const tx = byName(read(await inspect('x'))).get('x')!;
    expect(tx.dtype).toBe('float32');
    expect(tx.shape).toEqual([4, 3]);
    expect(Array.from(tx.data)).toEqual(X);
    const tt = byName(read(await inspect('x_t'))).get('x_t')!;
    expect(tt.shape).toEqual([3, 4]);
    expect(Array.from(tt.data)).toEqual(Array.from({ length: 12 }, (_, k) => X[(k % 4) * 3 + Math.floor(k / 4)]));
  });

  it('saves a nested list as int64', async () => {
    const t = byName(read(await inspect('nested'))).get('nested')!;
    expect(t.dtype).toBe('int64');
    expect(t.shape).toEqual([2, 3]);
    expect(Array.from(t.data)).toEqual([0, 1, 2, 1, 2, 0]);
  });

  it('saves every array of a dict-like data object under its key, and skips the scalars', async () => {
    const r = await inspect('data');
    const m = byName(read(r));
    expect([...m.keys()].sort()).toEqual(['edge_index', 'train_mask', 'x', 'y']);
    expect(Array.from(m.get('edge_index')!.data)).toEqual(EDGE_INDEX);
    expect(Array.from(m.get('x')!.data)).toEqual(X);
    expect(Array.from(m.get('y')!.data)).toEqual([0, 1, 1, 0]);
    expect(m.get('train_mask')!.dtype).toBe('bool');
    expect(Array.from(m.get('train_mask')!.data)).toEqual([1, 0, 1, 0]);
  });

  it('saves the graph attributes of an object, found by name', async () => {
    const m = byName(read(await inspect('graph')));
    expect([...m.keys()].sort()).toEqual(['edge_index', 'val_mask', 'x']);
    expect(Array.from(m.get('val_mask')!.data)).toEqual([0, 1, 0, 0]);
    expect(Array.from(m.get('edge_index')!.data)).toEqual(EDGE_INDEX);
  });

  it('refuses text, ragged lists and values over the size limit, with a reason', async () => {
    const text = await inspect('label_text');
    expect(text).toEqual({ refused: expect.stringMatching(/`label_text` is not tensor-like: .*single value \(str\)/) });
    const ragged = await inspect('ragged');
    expect(ragged).toEqual({ refused: expect.stringMatching(/rows differ in length/) });
    const big = await inspect('wide', { maxFileBytes: 1000 });
    expect(big).toEqual({ refused: expect.stringMatching(/`wide` is too large to inspect: more than 1 KB \(at least 156 KB\)/) });
  });

  it('reports an expression that fails in the frame as an evaluate error', async () => {
    await expect(inspect('no_such_name')).rejects.toThrow(/NameError/);
  });

  it('cuts long repl results, which is why files are copied in chunks', async () => {
    const shown = await evaluate("'a' * 70000", 'repl');
    expect(shown.length).toBeLessThan(70000);
    const whole = await evaluate("'a' * 70000", 'clipboard');
    expect(whole.length).toBeGreaterThanOrEqual(70000);
  });

  it('copies the file through evaluate when the debuggee’s folder is not reachable, then removes it there', async () => {
    const r = await inspect('wide', { reachable: () => false });
    if ('refused' in r) throw new Error(r.refused);
    expect(r.path).toBeUndefined();
    const t = byName(read(r)).get('wide')!;
    expect(t.shape).toEqual([20000]);
    expect(t.data[19999]).toBe(9999.5);
    expect(Array.from(t.data.subarray(0, 4))).toEqual([0, 0.5, 1, 1.5]);
    expect(readdirSync(debuggeeTmp).filter((n) => n.startsWith('hopscope-dbg-'))).toEqual([]);
  });

  it('falls back to small repl chunks when the adapter refuses the clipboard context', async () => {
    const reply = await evaluate(pythonInspectSnippet('wide', { label: 'wide', maxBytes: 64 * MB }), 'repl');
    const { path, size } = JSON.parse(Buffer.from(/HOPSCOPE1:([A-Za-z0-9+/=]*):END/.exec(reply)![1]!, 'base64').toString()) as { path: string; size: number };
    const contexts: string[] = [];
    const noClipboard: Evaluate = async (e, c) => {
      contexts.push(c);
      if (c === 'clipboard') throw new Error('clipboard context not supported');
      return evaluate(e, c);
    };
    const bytes = await copyThroughEvaluate(noClipboard, path, size);
    expect(Buffer.from(bytes).equals(readFileSync(path))).toBe(true);
    expect(size).toBeGreaterThan(4 * 32 * 1024);
    expect(contexts.filter((c) => c === 'repl').length).toBe(Math.ceil(size / (32 * 1024)));
    rmSync(join(path, '..'), { recursive: true });
  });

  describe('PyTorch tensors', () => {
    it('saves CPU tensors: int64 edge index, a non-contiguous transpose, bfloat16 as float32, a tensor that requires grad', async (ctx) => {
      if (!HAVE_TORCH) ctx.skip('python3-torch is not installed for /usr/bin/python3');
      const e = byName(read(await inspect('t_edge'))).get('t_edge')!;
      expect([e.dtype, e.shape, Array.from(e.data)]).toEqual(['int64', [2, 3], [0, 1, 2, 1, 2, 0]]);
      const tx = byName(read(await inspect('t_x'))).get('t_x')!;
      expect([tx.dtype, tx.shape, Array.from(tx.data)]).toEqual(['float32', [3, 2], [0, 3, 1, 4, 2, 5]]);
      const h = byName(read(await inspect('t_half'))).get('t_half')!;
      expect([h.dtype, Array.from(h.data)]).toEqual(['float32', [1.5, -2.25, 3]]);
      const g = byName(read(await inspect('t_grad'))).get('t_grad')!;
      expect(Array.from(g.data)).toEqual([3, 3, 3, 3]);
    });

    it('saves a dict of tensors, and a sparse tensor as a scipy-style COO adjacency', async (ctx) => {
      if (!HAVE_TORCH) ctx.skip('python3-torch is not installed for /usr/bin/python3');
      const m = byName(read(await inspect('t_data')));
      expect([...m.keys()].sort()).toEqual(['edge_index', 'x']);
      expect(Array.from(m.get('x')!.data)).toEqual([0, 3, 1, 4, 2, 5]);
      const sparse = read(await inspect('t_sparse'));
      expect(sparse.format).toBe('sparse-npz');
      const a = sparse.tensors[0] as SparseTensor;
      expect(a.shape).toEqual([4, 4]);
      expect([Array.from(a.row), Array.from(a.col), Array.from(a.values!)]).toEqual([[0, 1, 2], [1, 2, 0], [1, 2, 3]]);
    });
  });

  it('left no temporary files in the debuggee’s temp folder', () => {
    expect(readdirSync(debuggeeTmp).filter((n) => n.startsWith('hopscope-dbg-'))).toEqual([]);
  });
});

describe('prerequisites', () => {
  it('has Debian python3-debugpy and python3-numpy for /usr/bin/python3', () => {
    expect(prereq.status, `these tests need /usr/bin/python3 with python3-debugpy and python3-numpy:\n${prereq.stderr ?? prereq.error}`).toBe(0);
  });
});

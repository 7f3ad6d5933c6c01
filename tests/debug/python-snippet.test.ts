/**
 * The Python inspect snippet evaluated by Debian's /usr/bin/python3 directly (no debugger), for the
 * cases a debug session makes awkward: NumPy missing (`python3 -S` leaves dist-packages off
 * sys.path), scipy sparse matrices, SimpleNamespace objects, lists of arrays, awkward names.
 * And the other direction: .npz files the extension writes for JavaScript values must load in
 * numpy.load with the same dtypes and values.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import {
  parseReply, pythonInspectSnippet, replyJson, type PythonReply,
} from '../../extension/src/debug/snippets';
import { deflateSync } from 'fflate';
import { encodeNpy, encodeNpyInt64 } from '../../server/src/core/formats/npy-write';
import { encodeNpz, encodeZip } from '../../server/src/core/formats/write';
import { crc32 } from '../../server/src/core/formats/crc32';
import { readNpz } from '../../server/src/core/formats/npz';
import { DEFAULT_LIMITS, type DenseTensor, type SparseTensor } from '../../server/src/core/formats/types';

const PYTHON = '/usr/bin/python3';
const probe = (code: string) => spawnSync(PYTHON, ['-c', code], { encoding: 'utf8' }).status === 0;
const HAVE_NUMPY = probe('import numpy');
const HAVE_SCIPY = probe('import scipy.sparse');

const tmp = mkdtempSync(join(tmpdir(), 'hopscope-pysnippet-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

/**
 * Runs `setup`, then evaluates the snippet for `expression` in the module's globals, like a
 * debugger's evaluate would, and checks the globals' names did not change.
 */
function evaluate(setup: string, expression: string, opts: { label?: string; maxBytes?: number; args?: string[] } = {}): PythonReply {
  const snippet = pythonInspectSnippet(expression, { label: opts.label ?? 'value', maxBytes: opts.maxBytes ?? 1 << 26 });
  const code = `${setup}
__names = sorted(globals().keys())
__reply = eval(${JSON.stringify(snippet)})
assert sorted(globals().keys()) == sorted(__names + ['__names', '__reply']), 'globals changed'
print(__reply)
`;
  const r = spawnSync(PYTHON, [...(opts.args ?? []), '-c', code], { encoding: 'utf8', env: { ...process.env, TMPDIR: tmp } });
  if (r.status !== 0) throw new Error(`python failed:\n${r.stderr}`);
  return replyJson<PythonReply>(parseReply(r.stdout));
}

function readSaved(r: PythonReply) {
  if (r.error) throw new Error(JSON.stringify(r));
  const bytes = new Uint8Array(readFileSync(r.path));
  rmSync(join(r.path, '..'), { recursive: true });
  return readNpz(bytes, 'saved.npz', DEFAULT_LIMITS);
}

describe.skipIf(!HAVE_NUMPY)('Python inspect snippet under /usr/bin/python3', () => {
  it('says NumPy is missing, naming the interpreter, when it cannot be imported', () => {
    const r = evaluate('v = [[0, 1], [1, 0]]', 'v', { args: ['-S'] });
    expect(r).toEqual({ error: 'no-numpy', python: PYTHON });
  });

  it('stacks a list of arrays and reads SimpleNamespace objects by attribute', () => {
    const stacked = readSaved(evaluate('import numpy as np\nrows = [np.array([0, 1, 2]), np.array([1, 2, 0])]', 'rows', { label: 'rows' }));
    expect((stacked.tensors[0] as DenseTensor).shape).toEqual([2, 3]);
    expect(Array.from((stacked.tensors[0] as DenseTensor).data)).toEqual([0, 1, 2, 1, 2, 0]);
    const ns = readSaved(evaluate(
      'import numpy as np, types\ng = types.SimpleNamespace(edge_index=np.array([[0], [1]]), test_mask=np.array([True, False]), extra=np.zeros(2), note="x")',
      'g',
    ));
    expect(ns.tensors.map((t) => t.name).sort()).toEqual(['edge_index', 'extra', 'test_mask']);
  });

  it('renames keys that are not file-name safe and keeps them apart', () => {
    const r = evaluate("import numpy as np\nd = {'a/b': np.ones(1), 'a b': np.zeros(1), 'file': np.arange(2)}", 'd');
    if (r.error) throw new Error(JSON.stringify(r));
    expect(r.tensors.map((t) => t.name).sort()).toEqual(['a_b', 'a_b_2', 'file_']);
    expect(readSaved(r).tensors).toHaveLength(3);
  });

  it('refuses complex and object arrays, and numbers', () => {
    expect(evaluate('import numpy as np\nz = np.array([1j])', 'z')).toMatchObject({ error: 'not-tensor', message: expect.stringMatching(/complex128/) });
    expect(evaluate('import numpy as np\no = np.array([{}, None])', 'o')).toMatchObject({ error: 'not-tensor', message: expect.stringMatching(/dtype object/) });
    expect(evaluate('n = 3.5', 'n')).toMatchObject({ error: 'not-tensor', message: expect.stringMatching(/single value \(float\)/) });
  });

  it('evaluates an expression that ends in a comment', () => {
    const r = evaluate('import numpy as np\nx = np.eye(2)', 'x  # features');
    expect(r).toMatchObject({ tensors: [{ dtype: 'float64', shape: [2, 2] }] });
    readSaved(r);
  });

  it.skipIf(!HAVE_SCIPY)('saves a scipy sparse matrix as a COO adjacency the reader opens', () => {
    const saved = readSaved(evaluate(
      'import scipy.sparse as sp\nA = sp.csr_matrix(([1.0, 2.0, 3.0], ([0, 1, 2], [1, 2, 0])), shape=(5, 5))', 'A', { label: 'A' }));
    expect(saved.format).toBe('sparse-npz');
    const a = saved.tensors[0] as SparseTensor;
    expect(a.shape).toEqual([5, 5]);
    expect([Array.from(a.row), Array.from(a.col), Array.from(a.values!)]).toEqual([[0, 1, 2], [1, 2, 0], [1, 2, 3]]);
  });

  it('writes .npz files (for JavaScript values) that numpy.load reads with the same dtypes and values', () => {
    const file = join(tmp, 'from-js.npz');
    writeFileSync(file, encodeNpz([
      { name: 'edge_index', npy: encodeNpy('<i8', [2, 3], new Uint8Array(new BigInt64Array([0n, 1n, 2n, 1n, 2n, -(2n ** 40n)]).buffer)) },
      { name: 'x', npy: encodeNpy('<f4', [3], new Uint8Array(new Float32Array([0.5, -1.25, 3]).buffer)) },
      { name: 'train_mask', npy: encodeNpy('|b1', [3], new Uint8Array([1, 0, 1])) },
      { name: 'w', npy: encodeNpy('<f2', [2], new Uint8Array(new Uint16Array([0x3c00, 0xc000]).buffer)) },
    ]));
    const r = spawnSync(PYTHON, ['-c', `import numpy as np, json
z = np.load(${JSON.stringify(file)}, allow_pickle=False)
print(json.dumps({k: [str(z[k].dtype), list(z[k].shape), z[k].ravel().tolist()] for k in sorted(z.files)}))`], { encoding: 'utf8' });
    expect(r.stderr).toBe('');
    expect(JSON.parse(r.stdout)).toEqual({
      edge_index: ['int64', [2, 3], [0, 1, 2, 1, 2, -(2 ** 40)]],
      train_mask: ['bool', [3], [true, false, true]],
      w: ['float16', [2], [1, -2]],
      x: ['float32', [3], [0.5, -1.25, 3]],
    });
  });
});

describe.skipIf(!HAVE_NUMPY)('archives Hopscope writes, read by numpy.load', () => {
  it('a corrected-copy archive: a deflated member passed through with a data descriptor, a stored one rewritten', () => {
    const file = join(tmp, 'copy.npz');
    const ei = encodeNpyInt64([2, 3], [0, 1, 2, 1, 2, 0]);
    const x = encodeNpy('<f8', [3], new Uint8Array(new Float64Array([0.5, 1.5, -2]).buffer));
    const deflated = deflateSync(x);
    writeFileSync(file, encodeZip([
      { name: 'edge_index.npy', method: 0, data: ei, crc32: crc32(ei), uncompressedSize: ei.length },
      { name: 'x.npy', method: 8, data: deflated, crc32: crc32(x), uncompressedSize: x.length },
    ]));
    const r = spawnSync(PYTHON, ['-c', `import numpy as np, json, zipfile
z = np.load(${JSON.stringify(file)}, allow_pickle=False)
print(json.dumps({'test': zipfile.ZipFile(${JSON.stringify(file)}).testzip(),
                  'arrays': {k: [str(z[k].dtype), list(z[k].shape), z[k].ravel().tolist()] for k in sorted(z.files)}}))`], { encoding: 'utf8' });
    expect(r.stderr).toBe('');
    expect(JSON.parse(r.stdout)).toEqual({
      test: null, // zipfile.testzip(): every member's CRC-32 checks out
      arrays: { edge_index: ['int64', [2, 3], [0, 1, 2, 1, 2, 0]], x: ['float64', [3], [0.5, 1.5, -2]] },
    });
  });
});

describe('the helper files run by themselves (no debugger, no extension)', () => {
  const DEBUG_DIR = fileURLToPath(new URL('../../extension/src/debug/', import.meta.url));
  const run = (code: string) => spawnSync(PYTHON, ['-c', code], { encoding: 'utf8', env: { ...process.env, TMPDIR: tmp, PYTHONDONTWRITEBYTECODE: '1' } });

  it('compile, and define only their functions (every import inside them, nothing else left behind)', () => {
    const r = run(`import runpy, json
out = {}
for f, names in (('save_value_npz.py', ['save_value_npz']), ('saved_npz_file.py', ['read_chunk', 'remove_saved'])):
    ns = runpy.run_path(${JSON.stringify(DEBUG_DIR)} + f)
    out[f] = sorted(k for k in ns if not k.startswith('__'))
print(json.dumps(out))`);
    expect(r.stderr).toBe('');
    expect(JSON.parse(r.stdout)).toEqual({ 'save_value_npz.py': ['save_value_npz'], 'saved_npz_file.py': ['read_chunk', 'remove_saved'] });
  });

  it.skipIf(!HAVE_NUMPY)('save, read back in chunks, remove: numpy.load reads the bytes read_chunk returns', () => {
    const r = run(`import runpy, base64, json, os, io
import numpy as np
save = runpy.run_path(${JSON.stringify(DEBUG_DIR + 'save_value_npz.py')})['save_value_npz']
io_ = runpy.run_path(${JSON.stringify(DEBUG_DIR + 'saved_npz_file.py')})
unwrap = lambda s: json.loads(base64.b64decode(s[len('HOPSCOPE1:'):-len(':END')]))
reply = unwrap(save({'edge_index': np.array([[0, 1], [1, 0]]), 'x': np.ones((2, 3), np.float32)}, 'g', ['edge_index', 'x'], 1 << 20))
data = b''
while True:
    part = base64.b64decode(io_['read_chunk'](reply['path'], len(data), 100)[len('HOPSCOPE1:'):-len(':END')])
    if not part: break
    data += part
z = np.load(io.BytesIO(data))
gone = io_['remove_saved'](reply['path']) == 'HOPSCOPE1::END' and not os.path.exists(os.path.dirname(reply['path']))
print(json.dumps({'size': reply['size'] == len(data), 'tensors': reply['tensors'], 'x': z['x'].tolist(), 'gone': gone}))`);
    expect(r.stderr).toBe('');
    expect(JSON.parse(r.stdout)).toEqual({
      size: true, gone: true, x: [[1, 1, 1], [1, 1, 1]],
      tensors: [{ name: 'edge_index', dtype: 'int64', shape: [2, 2] }, { name: 'x', dtype: 'float32', shape: [2, 3] }],
    });
  });
});

describe('prerequisites', () => {
  it('has python3-numpy for /usr/bin/python3', () => {
    expect(HAVE_NUMPY, 'these tests need /usr/bin/python3 with python3-numpy').toBe(true);
  });
});

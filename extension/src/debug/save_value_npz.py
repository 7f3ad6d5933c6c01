"""Hopscope "Inspect as Graph": save a value of a paused Python program as a temporary .npz.

The extension sends this file's text in one debugger `evaluate` (extension/src/debug/snippets.ts):
it is exec'd into a fresh dict and save_value_npz is called there, so nothing is left behind in
the program being debugged. Hence the rules of this file: only the one function at module level,
every import inside it, and no dependency beyond the standard library and NumPy (PyTorch and
SciPy values are recognised by their type's module, never imported).

save_value_npz(value, label, keys, limit) writes the arrays of `value` (a NumPy array, a PyTorch
tensor, a SciPy sparse matrix, a nested list, a mapping, or an object with graph attributes named
in `keys`) to <tempdir>/hopscope-dbg-*/<label>.npz with numpy.savez, at most `limit` bytes of
arrays, and returns 'HOPSCOPE1:<base64 of a JSON reply>:END' (path, size, tensors, notes; or an
error: no-numpy, not-tensor, too-large, failed).
"""


def save_value_npz(value, label, keys, limit):
    import base64, json, os, sys, tempfile, warnings

    def reply(obj):
        return 'HOPSCOPE1:' + base64.b64encode(json.dumps(obj).encode('utf-8')).decode('ascii') + ':END'

    try:
        import numpy as np
    except ImportError:
        return reply({'error': 'no-numpy', 'python': sys.executable})

    class NotTensor(Exception):
        pass

    class TooLarge(Exception):
        pass

    used = [0]
    DENSE_CELLS = 16 * 1024 * 1024

    def take(n):
        used[0] += int(n)
        if used[0] > limit:
            raise TooLarge()

    def top_module(v):
        return (getattr(type(v), '__module__', '') or '').split('.')[0]

    def is_torch(v):
        return top_module(v) == 'torch' and hasattr(v, 'detach') and hasattr(v, 'numel')

    def is_scipy_sparse(v):
        return top_module(v) == 'scipy' and hasattr(v, 'tocoo') and hasattr(v, 'nnz')

    def is_mapping(v):
        import collections.abc
        return isinstance(v, collections.abc.Mapping)

    def describe(v):
        return type(v).__module__ + '.' + type(v).__qualname__ if type(v).__module__ != 'builtins' else type(v).__name__

    def checked(a, what):
        if a.dtype.kind not in 'biuf':
            raise NotTensor(what + ' has dtype ' + str(a.dtype) + '; numbers or booleans are needed')
        if a.dtype.kind == 'f' and a.dtype.itemsize > 8:
            a = a.astype(np.float64)
        return a

    def from_torch(t, what):
        t = t.detach()
        if str(getattr(t, 'layout', 'torch.strided')) != 'torch.strided':
            if len(t.shape) != 2 or int(t.shape[0]) * int(t.shape[1]) > DENSE_CELLS:
                raise NotTensor(what + ' is a sparse tensor of shape ' + 'x'.join(str(int(d)) for d in t.shape) + ', too big to store densely next to other arrays')
            t = t.to_dense()
        if getattr(t, 'is_quantized', False):
            t = t.dequantize()
        dt = str(t.dtype)
        if 'complex' in dt:
            raise NotTensor(what + ' is a complex tensor')
        take(t.numel() * t.element_size())
        if dt == 'torch.bfloat16':
            t = t.float()
        return t.cpu().numpy()

    def dense_of_sparse(m, what):
        n = int(m.shape[0]) * int(m.shape[1])
        if n > DENSE_CELLS:
            raise NotTensor(what + ' is a sparse ' + 'x'.join(str(int(d)) for d in m.shape) + ' matrix, too big to store densely next to other arrays')
        take(n * m.dtype.itemsize)
        return checked(np.asarray(m.toarray()), what)

    def as_array(v, what):
        if isinstance(v, np.ndarray):
            take(v.nbytes)
            return checked(v, what)
        if is_torch(v):
            return checked(from_torch(v, what), what)
        if is_scipy_sparse(v):
            return dense_of_sparse(v, what)
        if isinstance(v, (list, tuple)):
            if any(isinstance(e, np.ndarray) or is_torch(e) for e in v):
                parts = [as_array(e, what + '[' + str(i) + ']') for i, e in enumerate(v)]
                if len(set(p.shape for p in parts)) > 1:
                    raise NotTensor(what + ' holds arrays of different shapes')
                return np.stack(parts)
            try:
                with warnings.catch_warnings():
                    warnings.simplefilter('ignore')
                    a = np.asarray(v)
            except (ValueError, TypeError, OverflowError):
                raise NotTensor(what + ' is a nested list whose rows differ in length or hold non-numbers')
            if a.dtype == object:
                raise NotTensor(what + ' is a nested list whose rows differ in length or hold non-numbers')
            take(a.nbytes)
            return checked(a, what)
        if hasattr(v, '__array__') and not isinstance(v, (str, bytes)):
            a = np.asarray(v)
            take(a.nbytes)
            return checked(a, what)
        raise NotTensor(what + ' is a ' + describe(v))

    def scalar(v):
        return v is None or isinstance(v, (bool, int, float, complex, str, bytes, np.generic))

    def coo_members(m, what):
        if is_torch(m):
            m = m.detach()
            if len(m.shape) != 2:
                raise NotTensor(what + ' is a sparse tensor with ' + str(len(m.shape)) + ' dimensions; 2 are needed')
            if str(m.layout) != 'torch.sparse_coo':
                m = m.to_sparse()
            m = m.coalesce()
            take(m.indices().numel() * 8 + m.values().numel() * m.values().element_size())
            idx = m.indices().cpu().numpy()
            vals = m.values()
            if str(vals.dtype) == 'torch.bfloat16':
                vals = vals.float()
            row, col, data, shape = idx[0], idx[1], vals.cpu().numpy(), tuple(int(d) for d in m.shape)
        else:
            c = m.tocoo()
            take(c.nnz * (16 + c.data.dtype.itemsize))
            row, col, data, shape = c.row, c.col, c.data, tuple(int(d) for d in c.shape)
        return {'format': np.array(b'coo'), 'shape': np.array(shape, dtype=np.int64),
                'row': np.asarray(row, dtype=np.int64), 'col': np.asarray(col, dtype=np.int64),
                'data': checked(np.asarray(data), what)}

    def safe_name(k, taken):
        import re
        n = re.sub(r'[^A-Za-z0-9_.-]', '_', str(k))[:80] or 'array'
        if n == 'file':
            n = 'file_'
        base, i = n, 2
        while n in taken:
            n = base + '_' + str(i)
            i += 1
        return n

    notes = []
    try:
        arrays = {}
        sparse_top = (is_torch(value) and str(getattr(value, 'layout', 'torch.strided')) != 'torch.strided') or is_scipy_sparse(value)
        if sparse_top:
            arrays = coo_members(value, label)
        elif isinstance(value, (np.ndarray, list, tuple)) or is_torch(value) or (hasattr(value, '__array__') and not is_mapping(value)):
            arrays[label] = as_array(value, label)
        elif scalar(value):
            raise NotTensor(label + ' is a single value (' + describe(value) + '), not an array')
        else:
            if is_mapping(value):
                items = [(k, value[k]) for k in list(value.keys())]
            else:
                items = []
                for k in keys:
                    try:
                        v = getattr(value, k, None)
                    except Exception:
                        v = None
                    if v is not None:
                        items.append((k, v))
                try:
                    extra = vars(value)
                except TypeError:
                    extra = {}
                for k, v in list(extra.items()):
                    if k not in keys and not str(k).startswith('_') and (isinstance(v, np.ndarray) or is_torch(v)):
                        items.append((k, v))
            for k, v in items:
                if scalar(v) or callable(v) and not is_torch(v):
                    continue
                name = safe_name(k, arrays)
                try:
                    arrays[name] = as_array(v, name)
                except NotTensor as e:
                    notes.append(str(e))
            if not arrays:
                where = ', '.join(keys)
                raise NotTensor(label + ' (' + describe(value) + ') has no array-valued ' + ('entries' if is_mapping(value) else 'attributes among ' + where))
        folder = tempfile.mkdtemp(prefix='hopscope-dbg-')
        path = os.path.join(folder, label + '.npz')
        np.savez(path, **arrays)
        return reply({'path': path, 'size': os.path.getsize(path), 'notes': notes,
                      'tensors': [{'name': k, 'dtype': str(a.dtype), 'shape': [int(d) for d in a.shape]} for k, a in arrays.items()]})
    except NotTensor as e:
        return reply({'error': 'not-tensor', 'message': str(e), 'notes': notes})
    except TooLarge:
        return reply({'error': 'too-large', 'bytes': used[0], 'limit': limit})
    except Exception as e:
        return reply({'error': 'failed', 'message': type(e).__name__ + ': ' + str(e)})

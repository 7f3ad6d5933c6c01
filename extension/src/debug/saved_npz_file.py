"""Hopscope "Inspect as Graph": read back, then remove, the .npz that save_value_npz.py wrote.

Sent by the extension in one debugger `evaluate` per call (extension/src/debug/snippets.ts): exec'd
into a fresh dict, then one function is called, so nothing is left behind in the program being
debugged. Standard library only.

read_chunk(path, offset, size) returns 'HOPSCOPE1:<base64 of up to `size` bytes from `offset`>:END'.
remove_saved(path) deletes the file and its hopscope-dbg-* folder (nothing else) and returns
'HOPSCOPE1::END'.
"""


def read_chunk(path, offset, size):
    import base64
    with open(path, 'rb') as f:
        f.seek(offset)
        data = f.read(size)
    return 'HOPSCOPE1:' + base64.b64encode(data).decode('ascii') + ':END'


def remove_saved(path):
    import os
    folder = os.path.dirname(path)
    if not (os.path.basename(folder).startswith('hopscope-dbg-') and path.endswith('.npz')):
        return 'HOPSCOPE1::END'
    for step in (lambda: os.remove(path), lambda: os.rmdir(folder)):
        try:
            step()
        except OSError:
            pass
    return 'HOPSCOPE1::END'

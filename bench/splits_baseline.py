"""Link-prediction split checks the NumPy way, for `npm run bench` (bench/splits.mjs).

    python3 bench/splits_baseline.py --make FILE.npz --nodes N --edges E --pairs K [--seed S]
        writes a random directed message graph (edge_index, 2 x E) and, per split (train, val,
        test), K positive and K negative pairs ({split}_pos_edge_index, {split}_neg_edge_index),
        int64, with numpy.savez (stored members). A tenth of the val/test positives and of the
        negatives are drawn from the message edges, so the leak and false-negative counts are
        not zero.
    python3 bench/splits_baseline.py FILE.npz --nodes N
        computes the same counts Hopscope reports, with NumPy set operations over encoded pairs
        (key = u * N + v, np.isin), and prints one JSON line with the counts and the seconds.

Directed reading throughout (the bench runs `hopscope check --directed`). Figures only.
"""
import argparse
import json
import sys
import time

import numpy as np

SPLITS = ("train", "val", "test")


def make(path, n, e, k, seed):
    rng = np.random.default_rng(seed)
    edges = rng.integers(0, n, size=(2, e), dtype=np.int64)
    out = {"edge_index": edges}
    for s in SPLITS:
        pos = rng.integers(0, n, size=(2, k), dtype=np.int64)
        neg = rng.integers(0, n, size=(2, k), dtype=np.int64)
        take = k // 10
        if s != "train":
            pos[:, :take] = edges[:, rng.integers(0, e, size=take)]
        neg[:, :take] = edges[:, rng.integers(0, e, size=take)]
        out[f"{s}_pos_edge_index"] = pos
        out[f"{s}_neg_edge_index"] = neg
    np.savez(path, **out)


def keys(a, n):
    return a[0] * n + a[1]


def count(path, n):
    t0 = time.perf_counter()
    z = np.load(path)
    msg = keys(z["edge_index"], n)
    pos = {s: keys(z[f"{s}_pos_edge_index"], n) for s in SPLITS}
    neg = {s: keys(z[f"{s}_neg_edge_index"], n) for s in SPLITS}
    t1 = time.perf_counter()
    msg_u = np.unique(msg)
    known = np.unique(np.concatenate([msg_u, *pos.values()]))
    res = {"leaked": {}, "negativesAreEdges": {}}
    for s in ("val", "test"):
        res["leaked"][s] = int(np.isin(pos[s], msg_u, assume_unique=False).sum())
    for s in SPLITS:
        res["negativesAreEdges"][s] = int(np.isin(neg[s], known).sum())
    t2 = time.perf_counter()
    res["seconds"] = {"load": round(t1 - t0, 3), "sets": round(t2 - t1, 3), "total": round(t2 - t0, 3)}
    return res


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("file")
    ap.add_argument("--make", action="store_true")
    ap.add_argument("--nodes", type=int, required=True)
    ap.add_argument("--edges", type=int, default=10_000_000)
    ap.add_argument("--pairs", type=int, default=1_000_000)
    ap.add_argument("--seed", type=int, default=2026)
    a = ap.parse_args()
    if a.make:
        make(a.file, a.nodes, a.edges, a.pairs, a.seed)
    else:
        print(json.dumps(count(a.file, a.nodes)))


if __name__ == "__main__":
    sys.exit(main())

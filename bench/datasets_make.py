#!/usr/bin/python3
"""Writes the dataset benchmark of `npm run bench:datasets` (bench/datasets.mjs), seeded:

    /usr/bin/python3 bench/datasets_make.py OUT_DIR [--graphs 100000] [--nodes 25]

G graphs of n nodes each: a random tree (each node i > 0 joined to a random earlier node) plus one
random extra edge, both directions stored (2n edge entries per graph), 4 binary node features, a
binary graph label; saved by torch.save as a (data, slices) tuple with a stand-in data class at the
graph-learning library's data-class import path (the library is not used), and an 80/10/10 split of
graph indices in OUT_DIR/bench_split.pt. Needs Debian's python3-torch and python3-numpy.
"""
import argparse
import os
import sys

import numpy as np
import torch

# The stand-in data class of the fixture scripts (tests/fixtures/stand_in.py; the library is not used).
sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), '..', 'tests', 'fixtures'))
from stand_in import data_class  # noqa: E402

Data = data_class()


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument('out')
    ap.add_argument('--graphs', type=int, default=100_000)
    ap.add_argument('--nodes', type=int, default=25)
    a = ap.parse_args()
    rng = np.random.default_rng(20261203)
    G, n = a.graphs, a.nodes
    child = np.arange(1, n)
    parent = (rng.random((G, n - 1)) * child).astype(np.int64)          # random earlier node
    u = np.concatenate([np.broadcast_to(child, (G, n - 1)), rng.integers(0, n, (G, 1))], axis=1)
    v = np.concatenate([parent, (u[:, -1:] + rng.integers(1, n, (G, 1))) % n], axis=1)
    src = np.concatenate([u, v], axis=1).reshape(-1)
    dst = np.concatenate([v, u], axis=1).reshape(-1)
    ei = torch.from_numpy(np.stack([src, dst]).astype(np.int64))
    x = torch.from_numpy(rng.integers(0, 2, (G * n, 4)).astype(np.float32))
    y = torch.from_numpy(rng.integers(0, 2, G).astype(np.int64))
    slices = {'x': torch.arange(0, G * n + 1, n), 'edge_index': torch.arange(0, G * 2 * n + 1, 2 * n), 'y': torch.arange(G + 1)}
    os.makedirs(a.out, exist_ok=True)
    torch.save((Data(x=x, edge_index=ei, y=y), slices), os.path.join(a.out, 'bench.pt'))
    perm = torch.from_numpy(rng.permutation(G))
    k1, k2 = int(G * 0.8), int(G * 0.9)
    torch.save({'train': perm[:k1], 'valid': perm[k1:k2], 'test': perm[k2:]}, os.path.join(a.out, 'bench_split.pt'))


if __name__ == '__main__':
    main()

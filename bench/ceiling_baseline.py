#!/usr/bin/python3
"""The NetworkX side of the ceiling row of bench/datasets.mjs: the graph-level accuracy ceiling of
a saved (data, slices) dataset computed the per-graph way, one networkx.weisfeiler_lehman_graph_hash
per graph, graphs with equal hashes grouped, ceiling = sum over groups of the largest label count / G.

    /usr/bin/python3 bench/ceiling_baseline.py FILE.pt --iterations H

Prints one JSON line: {"graphs", "groups", "conflictingGroups", "ceiling", "seconds"} (seconds:
the hashing and grouping, after torch.load). The data class of the file is a stand-in registered at
the graph-learning library's import path, as bench/datasets_make.py writes it (that library is not used).
"""
import argparse
import json
import os
import sys
import time
from collections import Counter, defaultdict

import networkx as nx
import torch

# The stand-in data class of the fixture scripts (tests/fixtures/stand_in.py; the library is not used).
sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), '..', 'tests', 'fixtures'))
from stand_in import data_class  # noqa: E402

Data = data_class()


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument('file')
    ap.add_argument('--iterations', type=int, default=3)
    a = ap.parse_args()
    data, slices = torch.load(a.file)
    ei = data.edge_index.numpy()
    y = data.y.numpy()
    node_off = slices['x'].numpy()
    edge_off = slices['edge_index'].numpy()
    G = len(node_off) - 1
    t = time.perf_counter()
    groups = defaultdict(list)
    for g in range(G):
        h = nx.Graph()
        h.add_nodes_from(range(int(node_off[g + 1] - node_off[g])))
        lo, hi = int(edge_off[g]), int(edge_off[g + 1])
        h.add_edges_from(zip(ei[0, lo:hi].tolist(), ei[1, lo:hi].tolist()))
        h.remove_edges_from(nx.selfloop_edges(h))
        groups[nx.weisfeiler_lehman_graph_hash(h, iterations=a.iterations)].append(int(y[g]))
    right = sum(max(Counter(v).values()) for v in groups.values())
    conflicting = sum(1 for v in groups.values() if len(set(v)) > 1)
    secs = time.perf_counter() - t
    print(json.dumps({'graphs': G, 'groups': len(groups), 'conflictingGroups': conflicting, 'ceiling': right / G, 'seconds': secs}))


if __name__ == '__main__':
    main()

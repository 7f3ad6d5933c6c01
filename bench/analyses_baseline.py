#!/usr/bin/python3
"""The NetworkX side of bench/analyses.mjs: the usual way of computing what `hopscope field` and
`hopscope wl` print, as one fresh process each (np.load included, like the hopscope process).

    /usr/bin/python3 bench/analyses_baseline.py field FILE.npy --num-nodes N --layers L --nodes 0,17,42
    /usr/bin/python3 bench/analyses_baseline.py wl FILE.npy --num-nodes N --rounds R

field: a networkx.DiGraph of the (2, E) edge index is the build; per node, the nodes at each hop
distance from single_source_shortest_path_length on the reversed view (row 0 sends: a node hears
from the nodes with edges into it) with cutoff L, and row v of the GCN propagation
(D~^-1/2 (A + I) D~^-1/2)^L from the unit vector e_v over the undirected view
(G.to_undirected(as_view=True), self-loops left out; neighbour lists kept once looked up).
wl: networkx.weisfeiler_lehman_subgraph_hashes on the simple undirected graph with R - 1
iterations (its start labels are the degrees, which is round 1 of a refinement from one colour, so
R - 1 iterations give the classes of rounds 1..R); classes per round = distinct hashes.

Prints one JSON line with the figures and the phase seconds (load, build, query).
"""
import argparse
import json
import math
import time
from collections import defaultdict

import networkx as nx
import numpy as np


def main():
    t0 = time.perf_counter()
    ap = argparse.ArgumentParser()
    ap.add_argument('what', choices=['field', 'wl'])
    ap.add_argument('file')
    ap.add_argument('--num-nodes', type=int, required=True)
    ap.add_argument('--layers', type=int, default=3)
    ap.add_argument('--nodes', default='0')
    ap.add_argument('--rounds', type=int, default=3)
    ap.add_argument('--top', type=int, default=50)
    a = ap.parse_args()
    ei = np.load(a.file)
    src, dst = ei[0].tolist(), ei[1].tolist()
    t1 = time.perf_counter()
    out = {}
    if a.what == 'field':
        g = nx.DiGraph()
        g.add_nodes_from(range(a.num_nodes))
        g.add_edges_from(zip(src, dst))
        t2 = time.perf_counter()
        rg = g.reverse(copy=False)
        uv = g.to_undirected(as_view=True)
        nbrs = {}

        def adj(j):
            a = nbrs.get(j)
            if a is None:
                a = nbrs[j] = [i for i in uv.adj[j] if i != j]
            return a
        fields = []
        for v in [int(x) for x in a.nodes.split(',')]:
            dist = nx.single_source_shortest_path_length(rg, v, cutoff=a.layers)
            per_hop = [0] * (a.layers + 1)
            for d in dist.values():
                per_hop[d] += 1
            inv = {}
            x = {v: 1.0}
            for _ in range(a.layers):
                y = defaultdict(float)
                for j, xj in x.items():
                    sj = inv.get(j)
                    if sj is None:
                        sj = inv[j] = 1.0 / math.sqrt(1 + len(adj(j)))
                    c = xj * sj
                    y[j] += c * sj
                    for i in adj(j):
                        si = inv.get(i)
                        if si is None:
                            si = inv[i] = 1.0 / math.sqrt(1 + len(adj(i)))
                        y[i] += c * si
                x = y
            top = sorted(x.items(), key=lambda kv: (-kv[1], kv[0]))[:a.top]
            fields.append({'node': v, 'perHop': per_hop, 'total': sum(per_hop),
                           'influence': [{'node': n, 'weight': w} for n, w in top]})
        out['fields'] = fields
    else:
        h = nx.Graph()
        h.add_nodes_from(range(a.num_nodes))
        h.add_edges_from(zip(src, dst))
        h.remove_edges_from(list(nx.selfloop_edges(h)))
        t2 = time.perf_counter()
        hashes = nx.weisfeiler_lehman_subgraph_hashes(h, iterations=a.rounds - 1)
        per_round = [1, len(set(d for _, d in h.degree()))]
        for r in range(a.rounds - 1):
            per_round.append(len(set(hs[r] for hs in hashes.values())))
        out['classesPerRound'] = per_round
    t3 = time.perf_counter()
    out['seconds'] = {'load': t1 - t0, 'build': t2 - t1, 'query': t3 - t2}
    print(json.dumps(out))


if __name__ == '__main__':
    main()

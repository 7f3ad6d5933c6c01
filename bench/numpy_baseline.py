#!/usr/bin/python3
"""The usual NumPy/SciPy way of checking an edge index, as a baseline for `npm run bench`.

    /usr/bin/python3 bench/numpy_baseline.py EDGES.npy [--num-nodes N] [--verify]

EDGES.npy holds an integer array of shape (2, E) (row 0 = sources, row 1 = targets, 0-based).
Prints one JSON object on stdout:
  figures:  edges, nodes, selfLoops, duplicateEdges, asymmetricPairs, isolatedNodes, components,
            outOfRange, minIndex, maxIndex
  timings:  milliseconds per step (import, load, bounds, selfLoops, duplicates, csr, asymmetry,
            isolated, components, total = everything after the imports), and peakRssMiB
  versions: numpy, scipy, python

Definitions (the same ones Hopscope's JSON report is compared with):
  edges            E, the number of edge entries (columns), repeats included
  selfLoops        entries with u == v
  duplicateEdges   E - number of distinct (u, v) pairs
  asymmetricPairs  distinct (u, v), u != v, whose reverse (v, u) is absent
  isolatedNodes    nodes in [0, N) with no entry at all, in or out (a self-loop counts)
  components       weakly connected components over all N nodes (isolated nodes count)

--verify recomputes selfLoops/duplicates/asymmetry/isolated in a second, independent way and
adds `verify` to the output (used to check this script, not timed as part of the baseline).
"""
import json
import resource
import sys
import time

T_START = time.perf_counter()
import numpy as np  # noqa: E402
import scipy  # noqa: E402
import scipy.sparse as sp  # noqa: E402
from scipy.sparse.csgraph import connected_components  # noqa: E402

T_IMPORTED = time.perf_counter()


def main(argv):
    args = list(argv)
    verify = "--verify" in args
    if verify:
        args.remove("--verify")
    num_nodes = None
    if "--num-nodes" in args:
        i = args.index("--num-nodes")
        num_nodes = int(args[i + 1])
        del args[i : i + 2]
    if len(args) != 1:
        print(__doc__, file=sys.stderr)
        return 2
    path = args[0]

    timings = {"import": (T_IMPORTED - T_START) * 1000.0}
    t = time.perf_counter()
    t0 = t

    def lap(name):
        nonlocal t
        now = time.perf_counter()
        timings[name] = (now - t) * 1000.0
        t = now

    ei = np.load(path)
    lap("load")
    if ei.ndim != 2 or ei.shape[0] != 2:
        print(f"expected shape (2, E), got {ei.shape}", file=sys.stderr)
        return 2
    ei = ei.astype(np.int64, copy=False)
    u, v = ei[0], ei[1]
    E = int(ei.shape[1])

    # Bounds: min/max against N.
    lo = int(ei.min()) if E else 0
    hi = int(ei.max()) if E else -1
    N = num_nodes if num_nodes is not None else hi + 1
    out_of_range = int(np.count_nonzero((ei < 0) | (ei >= N))) if (lo < 0 or hi >= N) else 0
    lap("bounds")
    if out_of_range:
        # The rest needs valid ids; report what we have.
        print(json.dumps({"error": "ids out of range", "figures": {"outOfRange": out_of_range}}))
        return 1

    self_loops = int(np.count_nonzero(u == v))
    lap("selfLoops")

    keys = u * N + v
    uniq = np.unique(keys)
    duplicates = E - int(uniq.size)
    lap("duplicates")

    A = sp.csr_matrix((np.ones(E, dtype=np.int32), (u, v)), shape=(N, N))
    A.sum_duplicates()
    A.data[:] = 1  # adjacency pattern: repeats do not make an edge "more present"
    lap("csr")

    # Positions where A and A^T differ: each one-way edge (u, v) gives (u, v) and (v, u).
    # The diagonal never differs, so self-loops never count.
    diff = A != A.T
    asymmetric = int(diff.nnz) // 2
    lap("asymmetry")

    deg = np.bincount(u, minlength=N) + np.bincount(v, minlength=N)
    isolated = int(np.count_nonzero(deg == 0))
    lap("isolated")

    n_components, _labels = connected_components(A, directed=True, connection="weak")
    lap("components")
    timings["total"] = (time.perf_counter() - t0) * 1000.0
    timings["peakRssMiB"] = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0

    out = {
        "figures": {
            "edges": E,
            "nodes": N,
            "selfLoops": self_loops,
            "duplicateEdges": duplicates,
            "asymmetricPairs": asymmetric,
            "isolatedNodes": isolated,
            "components": int(n_components),
            "outOfRange": out_of_range,
            "minIndex": lo,
            "maxIndex": hi,
        },
        "timings": timings,
        "versions": {
            "numpy": np.__version__,
            "scipy": scipy.__version__,
            "python": sys.version.split()[0],
        },
    }

    if verify:
        # Second derivations, sharing nothing with the ones above but np.load.
        d = uniq // N, uniq % N  # distinct pairs, sorted by key
        du, dv = d
        rev = dv * N + du
        pos = np.searchsorted(uniq, rev)
        pos[pos >= uniq.size] = 0
        has_rev = uniq[pos] == rev
        one_way = int(np.count_nonzero((du != dv) & ~has_rev))
        touched = np.zeros(N, dtype=bool)
        touched[u] = True
        touched[v] = True
        sym = A + A.T
        n_comp_undirected, _ = connected_components(sym, directed=False)
        out["verify"] = {
            "selfLoops": int(sum(1 for a, b in zip(u[:1_000_000].tolist(), v[:1_000_000].tolist()) if a == b))
            if E <= 1_000_000
            else None,
            "duplicateEdges": E - len(set(zip(u.tolist(), v.tolist()))) if E <= 2_000_000 else None,
            "asymmetricPairs": one_way,
            "isolatedNodes": int(N - np.count_nonzero(touched)),
            "components": int(n_comp_undirected),
            "distinctSelfLoopNodes": int(np.unique(u[u == v]).size),
            "distinctEdges": int(uniq.size),
        }

    print(json.dumps(out))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))

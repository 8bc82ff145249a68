#!/usr/bin/python3
"""Curvature benchmark: what node and edge curvature on the density grid cost over the
exact clique counts alone (our own factor, issue 6: at most a small factor), and our node
curvature against a direct computation from networkx.enumerate_all_cliques (Debian
python3-networkx) on the same matrix at the same densities. Up to N = 200 the earlier
route (per-node, per-size clique counts, then curvature) is timed in the same run too
(old_factor_node), for comparison.

    tests/bench/curvature.py BUILD_DIR [N ...]

Prints times, peak memory (/usr/bin/time -v) and ratios. Not run by ctest."""
import os
import re
import subprocess
import sys
import tempfile
import time

import networkx as nx
import numpy as np


def peak_kb(cmd):
    r = subprocess.run(["/usr/bin/time", "-v"] + cmd, capture_output=True, text=True, check=True)
    kb = int(re.search(r"Maximum resident set size \(kbytes\): (\d+)", r.stderr).group(1))
    return r.stdout.strip(), kb


def networkx_curvature(m, max_density, step):
    """kappa_i at every grid density from networkx's clique list (positive weights,
    decreasing, ties by (i, j))."""
    n = m.shape[0]
    pairs = [(i, j) for i in range(n) for j in range(i + 1, n) if m[i, j] > 0]
    pairs.sort(key=lambda e: (-m[e], e))
    total = n * (n - 1) // 2
    out = []
    for point in range(1, int(np.floor(max_density / step + 1e-9)) + 1):
        g = nx.Graph()
        g.add_nodes_from(range(n))
        g.add_edges_from(pairs[: int(np.floor(point * step * total + 1e-9))])
        kappa = np.zeros(n)
        for c in nx.enumerate_all_cliques(g):
            k = len(c) - 1
            kappa[c] += (-1) ** k / (k + 1)
        out.append(kappa)
    return out


def main():
    build = sys.argv[1] if len(sys.argv) > 1 else "build"
    sizes = [int(x) for x in sys.argv[2:]] or [40, 60, 120, 200, 300]
    exe = os.path.join(build, "tests", "bench", "bench_curvature")
    for n in sizes:
        # networkx lists every clique, so it gets the small networks on a coarser grid only
        max_density, step = (0.3, 0.05) if n <= 60 else (0.3, 0.01)
        with tempfile.TemporaryDirectory() as tmp:
            path = os.path.join(tmp, "m.npy")
            extra = ["--old-route"] if n <= 200 else []
            line, kb = peak_kb([exe, str(n), str(max_density), str(step), "1", path] + extra)
            fields = dict(kv.split("=") for kv in line.split())
            print(f"critplex  {line} peak_rss_kb={kb}")
            if n <= 60:
                m = np.load(path)
                t = time.perf_counter()
                networkx_curvature(m, max_density, step)
                nx_s = time.perf_counter() - t
                ours = float(fields["counts_with_curvature_s"]) + float(fields["node_curvature_s"])
                print(f"networkx  N={n} node_curvature_on_grid_s={nx_s:.3f} ratio_networkx_over_critplex={nx_s / ours:.1f}")


if __name__ == "__main__":
    main()

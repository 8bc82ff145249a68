#!/usr/bin/python3
"""Clique engine benchmark: ours against igraph and gudhi on the same inputs, same run.

    tests/bench/cliques.py BUILD_DIR [--quick]

Inputs come from the latent-factor model of brain-like data (core/simulate: 7 modules,
AR(1) factors, 1200 frames). bench_cliques writes the correlation matrix it times, and
the peers get that very matrix, thresholded at the same density (the same first m edges
in decreasing order). Each program runs under /usr/bin/time -v for its peak memory.
Prints one line per run and the ratios. Not run by ctest; no timing is asserted.
--quick: the peers only at 200 regions, density 0.05, and no 1000-region chi case
to density 1.
"""
import json
import os
import re
import subprocess
import sys
import tempfile
import time

PEER = r'''
import sys, time, json, numpy as np
kind, path, density = sys.argv[1], sys.argv[2], float(sys.argv[3])
m = np.loadtxt(path, delimiter="\t", skiprows=1, usecols=range(1, 1 + int(sys.argv[4])))
n = m.shape[0]
pairs = sorted((-m[i, j], i, j) for i in range(n) for j in range(i + 1, n) if m[i, j] > 0)
edges = [(i, j) for _, i, j in pairs[: int(np.floor(density * n * (n - 1) / 2 + 1e-9))]]
t = time.perf_counter()
c0 = time.process_time()
counts = {}
if kind == "igraph":
    import igraph
    g = igraph.Graph(n=n, edges=edges)
    for c in g.cliques():
        counts[len(c) - 1] = counts.get(len(c) - 1, 0) + 1
    counts[0] = n
else:
    import gudhi
    st = gudhi.SimplexTree()
    for i in range(n):
        st.insert([i])
    for i, j in edges:
        st.insert([i, j])
    st.expansion(n)
    for s, _ in st.get_simplices():
        counts[len(s) - 1] = counts.get(len(s) - 1, 0) + 1
seconds = time.perf_counter() - t
cpu = time.process_time() - c0
chi = sum((-1) ** k * c for k, c in counts.items())
print(json.dumps({"seconds": seconds, "cpu_seconds": cpu, "chi": str(chi), "total": str(sum(counts.values()) - n),
                  "largest_clique": max(counts) + 1}))
'''


def timed(cmd):
    """Runs cmd under /usr/bin/time -v; returns (stdout, wall seconds, peak MB)."""
    start = time.perf_counter()
    p = subprocess.run(["/usr/bin/time", "-v", *cmd], capture_output=True, text=True)
    wall = time.perf_counter() - start
    if p.returncode != 0:
        raise SystemExit(f"failed: {' '.join(cmd)}\n{p.stderr[-2000:]}")
    peak = re.search(r"Maximum resident set size \(kbytes\): (\d+)", p.stderr)
    return p.stdout, wall, int(peak.group(1)) / 1024 if peak else float("nan")


def ours(bench, regions, density, chi_only=False, matrix=None):
    cmd = [bench, "--regions", str(regions), "--max-density", str(density), "--threads", "1"]
    if chi_only:
        cmd.append("--chi-only")
    if matrix:
        cmd += ["--write-matrix", matrix]
    out, _, peak = timed(cmd)
    r = json.loads(out)
    r["peak_mb"] = peak
    print(f"critplex  {regions:5d} regions  density {density:<5}  {'chi only' if chi_only else 'all counts':10s}"
          f"  {r['seconds']:9.3f} s (cpu {r['cpu_seconds']:.3f} s)  {peak:8.1f} MB  edges {r['edges']}  largest clique {r['largest_clique']}"
          f"  nonempty-above-nodes {r['cliques_nonempty_edges_up']}  chi {r['chi']}", flush=True)
    return r


def peer(kind, matrix, regions, density):
    out, _, peak = timed([sys.executable, "-c", PEER, kind, matrix, str(density), str(regions)])
    r = json.loads(out)
    r["peak_mb"] = peak
    print(f"{kind:8s}  {regions:5d} regions  density {density:<5}  {'all counts':10s}  {r['seconds']:9.3f} s (cpu {r['cpu_seconds']:.3f} s)"
          f"  {peak:8.1f} MB  largest clique {r['largest_clique']}  nonempty-above-nodes {r['total']}  chi {r['chi']}",
          flush=True)
    return r


def main():
    if len(sys.argv) < 2:
        raise SystemExit(__doc__)
    bench = os.path.join(sys.argv[1], "tests", "bench", "bench_cliques")
    quick = "--quick" in sys.argv
    with tempfile.TemporaryDirectory() as tmp:
        matrix = os.path.join(tmp, "latent200.tsv")
        density = 0.05 if quick else 0.1
        mine = ours(bench, 200, density, matrix=matrix)
        for kind in ("igraph", "gudhi"):
            theirs = peer(kind, matrix, 200, density)
            same = theirs["chi"] == mine["chi"] and theirs["total"] == mine["cliques_nonempty_edges_up"]
            print(f"  ratio {kind}/critplex: time {theirs['seconds'] / mine['seconds']:.0f}x "
                  f"(cpu {theirs['cpu_seconds'] / max(mine['cpu_seconds'], 1e-6):.0f}x), "
                  f"memory {theirs['peak_mb'] / mine['peak_mb']:.1f}x, same counts and chi: {same}", flush=True)
        ours(bench, 200, 0.2)
        ours(bench, 400, 0.3)
        ours(bench, 400, 1.0, chi_only=True)
        ours(bench, 1000, 0.3, chi_only=True)
        if not quick:
            # The target case; several minutes on this model (DEVELOPERS.md).
            ours(bench, 1000, 1.0, chi_only=True)


if __name__ == "__main__":
    main()

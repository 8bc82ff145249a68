#!/usr/bin/python3
"""Speed of the homology engine against the `ripser` command (Debian package ripser)
and gudhi (Debian python3-gudhi) on the same brain-like matrices, in one run.

    /usr/bin/python3 tests/bench/homology.py BUILD_DIR [--quick] [--threads T] [--no-gudhi]

Ours runs twice: on one thread (the ratio the acceptance asks for; ripser is
single-threaded) and on T threads (default 2).

Brain-like matrices: a latent factor model (7 modules, AR(1) module factors plus one
global factor and noise; our invented demo model, the same description as
core/simulate's generator), Pearson correlation of the simulated series. Both tools
get the filtration as edge ranks (ripser: a lower-distance matrix of ranks with
--threshold at the last rank, so both compute the same thing). Bars are compared as
multisets in every run. Prints wall time and peak memory (/usr/bin/time -v) and the
ratios ours / ripser and gudhi / ours.
"""
import os
import re
import subprocess
import sys
import tempfile
import time

import numpy as np

# Edge order, the peers' inputs and ripser's output parsing are shared with the
# homology reference test (the gudhi run below imports them in its own process).
REFERENCE_DIR = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "reference")
sys.path.insert(0, REFERENCE_DIR)
from rank_filtration import edge_order, parse_intervals, write_rank_matrix  # noqa: E402


def brain_like(n, frames=600, modules=7, seed=1):
    rng = np.random.default_rng(seed)
    module = rng.integers(0, modules, size=n)
    factors = np.zeros((frames, modules + 1))
    phi = 0.8  # AR(1) coefficient of the latent factors
    noise = rng.standard_normal((frames, modules + 1))
    for t in range(1, frames):
        factors[t] = phi * factors[t - 1] + noise[t]
    loading = rng.uniform(0.4, 1.0, size=n)
    series = (loading[:, None] * factors[:, module].T).T
    series += 0.3 * factors[:, [modules]]
    series += rng.standard_normal((frames, n)) * 1.0
    return np.corrcoef(series.T)


def timed(command):
    """Runs under /usr/bin/time -v; returns (stdout, wall seconds, peak MiB)."""
    start = time.monotonic()
    p = subprocess.run(["/usr/bin/time", "-v"] + command, capture_output=True, text=True)
    wall = time.monotonic() - start
    if p.returncode != 0:
        raise RuntimeError(f"{command[0]} failed: {p.stderr[-2000:]}")
    peak = int(re.search(r"Maximum resident set size \(kbytes\): (\d+)", p.stderr).group(1)) / 1024
    elapsed = re.search(r"Elapsed \(wall clock\) time \(h:mm:ss or m:ss\): (\S+)", p.stderr).group(1)
    parts = [float(x) for x in elapsed.split(":")]
    wall = parts[-1] + 60 * parts[-2] + (3600 * parts[-3] if len(parts) > 2 else 0)
    return p.stdout, wall, peak


GUDHI_SCRIPT = r"""
import sys, numpy as np
path, dim, reference_dir = sys.argv[1], int(sys.argv[2]), sys.argv[3]
sys.path.insert(0, reference_dir)
from rank_filtration import gudhi_tree
data = np.load(path)
st = gudhi_tree(int(data["n"]), data["iu"], data["ju"], dim)
st.persistence(homology_coeff_field=2, persistence_dim_max=True)
print(sum(1 for _ in st.persistence_intervals_in_dimension(1)))
"""


def main():
    build = sys.argv[1] if len(sys.argv) > 1 and not sys.argv[1].startswith("--") else "."
    quick = "--quick" in sys.argv
    gudhi = "--no-gudhi" not in sys.argv
    threads = "2"  # the second timing of ours; the first is always on one thread
    if "--threads" in sys.argv:
        threads = sys.argv[sys.argv.index("--threads") + 1]
    ours = os.path.join(build, "tests", "bench", "bench_homology")
    cases = [(200, 0.1, 2), (200, 0.2, 2), (200, 0.3, 2), (200, 0.1, 3), (200, 0.2, 3), (200, 0.3, 3),
             (400, 0.1, 2), (400, 0.2, 2), (400, 0.3, 2), (400, 0.1, 3), (400, 0.2, 3)]
    if quick:
        cases = [(200, 0.1, 2), (200, 0.2, 2), (200, 0.1, 3)]
    print(f"{'N':>4} {'rho':>4} {'K':>2} {'edges':>6} | {'ours s':>7} {'ripser s':>8} {'ratio':>5} "
          f"{'ours ' + threads + 'T s':>9} {'ratio':>5} | "
          f"{'ours MiB':>8} {'ripser MiB':>10} {'ratio':>5} | {'gudhi s':>7} {'gudhi/ours':>10} | bars equal")
    with tempfile.TemporaryDirectory() as tmp:
        for n, rho, k in cases:
            matrix = brain_like(n, seed=n)
            mpath = os.path.join(tmp, f"m{n}.tsv")
            np.savetxt(mpath, matrix, delimiter="\t", fmt="%.17g")
            iu, ju, _ = edge_order(matrix, rho)
            rpath = os.path.join(tmp, "ranks.txt")
            m = write_rank_matrix(n, iu, ju, rpath)
            bars_path = os.path.join(tmp, "bars.txt")
            _, t_ours, mem_ours = timed([ours, "--ranks", rpath, "--threshold", str(m), "--dim", str(k),
                                         "--threads", "1", "--bars", bars_path])
            _, t_more, _ = timed([ours, "--ranks", rpath, "--threshold", str(m), "--dim", str(k),
                                  "--threads", threads])
            out, t_rip, mem_rip = timed(["ripser", "--format", "lower-distance", "--threshold", str(m),
                                         "--dim", str(k), rpath])
            mine = []
            for line in open(bars_path):
                d, b, e = line.split()
                mine.append((int(d), int(b), None if e == "inf" else int(e)))
            equal = sorted(mine, key=repr) == parse_intervals(out)
            g_text, g_ratio = "-", "-"
            if gudhi and (n, rho, k) in [(200, 0.1, 2), (200, 0.2, 2), (400, 0.1, 2)]:
                gpath = os.path.join(tmp, "edges.npz")
                np.savez(gpath, n=n, iu=iu, ju=ju)
                _, t_g, _ = timed(["/usr/bin/python3", "-c", GUDHI_SCRIPT, gpath, str(k), REFERENCE_DIR])
                g_text, g_ratio = f"{t_g:7.2f}", f"{t_g / max(t_ours, 1e-3):10.1f}"
            print(f"{n:>4} {rho:>4} {k:>2} {m:>6} | {t_ours:7.2f} {t_rip:8.2f} {t_ours / max(t_rip, 1e-3):5.2f} "
                  f"{t_more:9.2f} {t_more / max(t_rip, 1e-3):5.2f} | "
                  f"{mem_ours:8.1f} {mem_rip:10.1f} {mem_ours / mem_rip:5.2f} | {g_text:>7} {g_ratio:>10} | {equal}",
                  flush=True)
            if not equal:
                print("  bars differ from ripser's", file=sys.stderr)


if __name__ == "__main__":
    main()

"""Counts above 2^64 through `critplex sweep`, checked against an independent exact count.

A 1000-region matrix holds two planted cliques (70 and 66 nodes, entering first) and a
sparse random part on the other nodes. The flag complex is then a disjoint union, so
the exact counts are binomials (Python integers, math.comb) plus the cliques of the
sparse part, which networkx.enumerate_all_cliques (Debian python3-networkx) lists.
C(70, 35) = 112186277816662845432 > 2^64. Also: the command's matrix formats and its
refusals (not square, not symmetric, not finite) with no output left behind.
"""
import csv
import json
import math
import os
import subprocess
import tempfile
import unittest

import numpy as np

CLI = os.environ["CRITPLEX_CLI"]


def run_cli(*args):
    return subprocess.run([CLI, *args], capture_output=True, text=True, timeout=600)


def planted_matrix(n=1000, cliques=(70, 66), sparse_edges=21000, seed=3):
    rng = np.random.default_rng(seed)
    order = rng.permutation(n)
    m = -0.5 * np.ones((n, n))
    np.fill_diagonal(m, 1.0)
    groups, start = [], 0
    for size, (lo, hi) in zip(cliques, [(0.9, 1.0), (0.8, 0.9)]):
        nodes = sorted(order[start:start + size].tolist())
        start += size
        groups.append(nodes)
        for a in range(size):
            for b in range(a + 1, size):
                m[nodes[a], nodes[b]] = m[nodes[b], nodes[a]] = rng.uniform(lo, hi)
    rest = sorted(order[start:].tolist())
    chosen = set()
    while len(chosen) < sparse_edges:
        a, b = rng.choice(rest, 2, replace=False)
        chosen.add((min(a, b), max(a, b)))
    for a, b in chosen:
        m[a, b] = m[b, a] = rng.uniform(0.1, 0.7)
    return m, groups, rest


class AboveTwoToThe64(unittest.TestCase):
    def test_planted_cliques_at_1000_regions(self):
        import networkx as nx
        n = 1000
        m, groups, rest = planted_matrix(n)
        pairs = n * (n - 1) // 2
        clique_edges = sum(math.comb(len(g), 2) for g in groups)
        densities = [math.comb(70, 2) / pairs, clique_edges / pairs, 0.02, 0.035, 0.05]
        with tempfile.TemporaryDirectory() as tmp:
            path = os.path.join(tmp, "planted.npy")
            np.save(path, m)
            out = os.path.join(tmp, "curves.json")
            r = run_cli("sweep", path, "--max-density", "0.05", "--out", out, "--format", "json",
                        "--options", json.dumps({"grid": {"densities": densities}}))
            self.assertEqual(r.returncode, 0, r.stderr)
            with open(out) as f:
                result = json.load(f)
        points = result["cliques"]["points"]
        self.assertEqual(result["cliques"]["stopped_by"], None)
        self.assertEqual(len(points), len(densities))
        # The sparse edges in entry order (decreasing value; values are distinct).
        sparse = sorted(((m[a, b], a, b) for a in rest for b in rest if a < b and m[a, b] > 0), reverse=True)
        for rho, point in zip(densities, points):
            edges = math.floor(rho * pairs + 1e-9)
            self.assertEqual(point["edges"], edges)
            expect = [n]
            # Planted cliques present in full once their edges are in (they enter first).
            done = [g for i, g in enumerate(groups) if edges >= sum(math.comb(len(h), 2) for h in groups[:i + 1])]
            self.assertTrue(done)
            for g in done:
                for k in range(1, len(g)):
                    while len(expect) <= k:
                        expect.append(0)
                    expect[k] += math.comb(len(g), k + 1)  # reference: binomial count, exact integers
            g = nx.Graph()
            g.add_edges_from((a, b) for _, a, b in sparse[:max(0, edges - clique_edges)])
            for c in nx.enumerate_all_cliques(g):  # reference: networkx.enumerate_all_cliques
                if len(c) >= 2:
                    while len(expect) <= len(c) - 1:
                        expect.append(0)
                    expect[len(c) - 1] += 1
            ours = [int(c) for c in point["counts"]]
            self.assertEqual(ours, expect, f"density {rho}")
            self.assertEqual(int(point["chi"]), sum((-1) ** k * c for k, c in enumerate(expect)))
        self.assertGreater(int(points[-1]["counts"][34]), 2 ** 64)
        self.assertEqual(points[-1]["counts"][34], str(math.comb(70, 35) + math.comb(66, 35)))


class CommandLine(unittest.TestCase):
    def setUp(self):
        self.tmp = tempfile.TemporaryDirectory()
        self.addCleanup(self.tmp.cleanup)
        rng = np.random.default_rng(9)
        x = rng.standard_normal((200, 12))
        x[:, :6] += rng.standard_normal((200, 1))
        self.m = np.corrcoef(x, rowvar=False)

    def path(self, name):
        return os.path.join(self.tmp.name, name)

    def write_text(self, name, matrix, delimiter, header):
        with open(self.path(name), "w", newline="") as f:
            w = csv.writer(f, delimiter=delimiter)
            if header:
                w.writerow([f"r{i}" for i in range(matrix.shape[0])])
            for row in matrix:
                w.writerow([repr(float(v)) for v in row])
        return self.path(name)

    def sweep_tsv(self, matrix_path, *extra):
        out = self.path("out.tsv")
        r = run_cli("sweep", matrix_path, "--max-density", "0.5", "--grid", "0.1", "--out", out, *extra)
        self.assertEqual(r.returncode, 0, r.stderr)
        with open(out) as f:
            rows = list(csv.reader(f, delimiter="\t"))
        # Keep the grid columns and the clique engine's own (other engines add theirs).
        keep = [i for i, c in enumerate(rows[0]) if c in ("density", "threshold", "edges", "chi") or c.startswith("cliques_")]
        return [rows[0][i] for i in keep], [[r[i] for i in keep] for r in rows[1:]]

    def test_formats_agree_and_columns(self):
        np.save(self.path("m.npy"), self.m)
        header, rows = self.sweep_tsv(self.path("m.npy"))
        self.assertEqual(header[:4], ["density", "threshold", "edges", "chi"])
        self.assertEqual(header[4], "cliques_0")
        for name, delimiter, has_header in [("m.tsv", "\t", True), ("m.csv", ",", False), ("h.csv", ",", True)]:
            _, other = self.sweep_tsv(self.write_text(name, self.m, delimiter, has_header))
            self.assertEqual([r[2:] for r in other], [r[2:] for r in rows], name)
        # chi = sum_k (-1)^k Cl_k on every row (Euler-Poincare by counts, docs/methods.md)
        for r in rows:
            counts = [int(c) for c in r[4:]]
            self.assertEqual(int(r[3]), sum((-1) ** k * c for k, c in enumerate(counts)))
        _, chi_rows = self.sweep_tsv(self.path("m.npy"), "--chi-only", "--threads", "2")
        self.assertEqual([r[3] for r in chi_rows], [r[3] for r in rows])

    def test_budget_is_reported(self):
        np.save(self.path("m.npy"), self.m)
        out = self.path("cut.json")
        r = run_cli("sweep", self.path("m.npy"), "--max-density", "0.6", "--grid", "0.1", "--max-dimension", "1",
                    "--out", out)
        self.assertEqual(r.returncode, 0, r.stderr)
        with open(out) as f:
            c = json.load(f)["cliques"]
        self.assertEqual(c["stopped_by"], "max_dimension")
        self.assertLess(c["complete_points"], 7)

    def test_refusals_leave_nothing(self):
        cases = {
            "symmetric": self.m + np.triu(np.full(self.m.shape, 0.1), 1),
            "finite": np.where(np.eye(12, k=3) > 0, np.nan, self.m),
            "square": self.m[:, :11],
        }
        for what, bad in cases.items():
            path = self.write_text("bad.tsv", bad, "\t", True)
            out = self.path("never.tsv")
            r = run_cli("sweep", path, "--max-density", "1", "--out", out)
            self.assertNotEqual(r.returncode, 0, what)
            self.assertIn(what, r.stderr.lower(), r.stderr)
            self.assertFalse(os.path.exists(out), what)
            self.assertEqual([f for f in os.listdir(self.tmp.name) if f != "bad.tsv"], [], what)


class PastTwoToThe127(unittest.TestCase):
    """A nested growing clique whose counts pass the signed 128-bit range.

    Edges enter in the order of (max(i, j), min(i, j)), so after e = C(m, 2) + r edges
    (0 <= r < m) the graph is the complete graph on nodes 0..m-1 plus node m joined to
    nodes 0..r-1; its k-node cliques are C(m, k) + C(r, k - 1) (k >= 2), computed here with
    Python's unbounded integers (math.comb). C(132, 66) > 2^127 - 1, so the sweep over 140
    regions must stop with "count_overflow" exactly at the first grid point whose counts
    (or the alternating sums that give chi) leave the 128-bit range, with every earlier
    point exact."""

    def test_count_overflow_is_reported_not_wrapped(self):
        n = 140
        limit = 2**127 - 1
        with tempfile.TemporaryDirectory() as tmp:
            m = np.eye(n)
            for i in range(n):
                for j in range(n):
                    if i != j:
                        m[i, j] = 1.0 - (max(i, j) * n + min(i, j)) / n**2
            path = os.path.join(tmp, "nested.tsv")
            np.savetxt(path, m, delimiter="\t")
            out = os.path.join(tmp, "nested.json")
            r = run_cli("sweep", path, "--max-density", "1", "--out", out)
            self.assertEqual(r.returncode, 0, r.stderr)
            with open(out) as f:
                doc = json.load(f)
        cliques = doc["cliques"]
        self.assertEqual(cliques["stopped_by"], "count_overflow")

        def exact_counts(edges):
            k_nodes = int((1 + math.isqrt(1 + 8 * edges)) // 2)
            while math.comb(k_nodes, 2) > edges:
                k_nodes -= 1
            r = edges - math.comb(k_nodes, 2)
            counts = [n] + [math.comb(k_nodes, k) + math.comb(r, k - 1) for k in range(2, k_nodes + 2)]
            while counts and counts[-1] == 0:
                counts.pop()
            return counts

        def fits(counts):
            s = 0
            for k, c in enumerate(counts):
                s = s + c if k % 2 == 0 else s - c
                if c > limit or not (-limit - 1 <= s <= limit):
                    return False
            return True

        first_bad = None
        for g, point in enumerate(cliques["points"]):
            edges = doc["grid"][g]["edges"]
            expected = exact_counts(edges)
            if first_bad is None and not fits(expected):
                first_bad = g
            if point["complete"]:
                self.assertIsNone(first_bad, f"point {g} reported although counts overflow")
                self.assertEqual([int(c) for c in point["counts"]], expected, f"point {g}")
                chi = sum((-1) ** k * c for k, c in enumerate(expected))
                self.assertEqual(int(point["chi"]), chi)
            else:
                self.assertIsNone(point["chi"])
        self.assertEqual(first_bad, cliques["complete_points"], "the stop is at the first point out of range")


if __name__ == "__main__":
    unittest.main()

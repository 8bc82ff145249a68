"""Node curvature (Gauss-Bonnet), Forman-Ricci edge curvature and their distributions
from `sweep` with a "curvature" section, against outside references:

- worked values for the octahedron and icosahedron graphs (docs/methods.md: node curvature
  1/3 and 1/6, chi = 2; Knill 2011, arXiv:1111.5395);
- cliques listed by networkx.enumerate_all_cliques (Debian python3-networkx), from which
  kappa_i = sum_k (-1)^k Cl_{i,k} / (k+1) is computed here directly, on random graphs and
  on real resting-state fMRI correlations (nitime's data/fmri_timeseries.csv, Debian
  python3-nitime; the three nuisance columns dropped);
- Forman-Ricci F(uv) = 4 - deg u - deg v + 3 t(uv) computed here with networkx degrees and
  common neighbours; moments checked with numpy and scipy.stats (skew, kurtosis), and
  quantiles with numpy.quantile (linear).
"""
import csv
import ctypes
import json
import os
import subprocess
import tempfile
import unittest
from fractions import Fraction

import networkx as nx
import nitime
import numpy as np
import scipy.stats

import critplex

NITIME_CSV = os.path.join(os.path.dirname(nitime.__file__), "data", "fmri_timeseries.csv")


def graph_matrix(n, edges):
    """A matrix whose positive entries are exactly the edges (weight 1), so that the
    positive-weight filtration ends with the graph itself."""
    m = -np.ones((n, n))
    for u, v in edges:
        m[u, v] = m[v, u] = 1.0
    np.fill_diagonal(m, 1.0)
    return m


def random_symmetric(rng, n):
    """A symmetric matrix of normal draws with a unit diagonal (invented test data)."""
    a = rng.standard_normal((n, n))
    m = (a + a.T) / 2
    np.fill_diagonal(m, 1.0)
    return m


def kappa_networkx(g):
    """Exact node curvature as Fractions from networkx's list of every clique."""
    kappa = {v: Fraction(0) for v in g.nodes}
    for clique in nx.enumerate_all_cliques(g):
        k = len(clique) - 1
        for v in clique:
            kappa[v] += Fraction((-1) ** k, k + 1)
    return kappa


def forman_networkx(g):
    """Forman-Ricci curvature of every edge, augmented with triangles."""
    return {(u, v): 4 - g.degree(u) - g.degree(v) + 3 * len(list(nx.common_neighbors(g, u, v))) for u, v in g.edges}


def graph_at(sweep_json, matrix, point, mode="positive"):
    """The graph after the first `edges` edges of the filtration (order: decreasing weight,
    ties by (i, j)); rebuilt here from the matrix."""
    n = matrix.shape[0]
    weight = {"positive": matrix, "absolute": np.abs(matrix)}[mode]
    pairs = [(i, j) for i in range(n) for j in range(i + 1, n) if mode != "positive" or matrix[i, j] > 0]
    pairs.sort(key=lambda e: (-weight[e], e))
    g = nx.Graph()
    g.add_nodes_from(range(n))
    g.add_edges_from(pairs[: sweep_json["grid"][point]["edges"]])
    return g


class PlatonicGraphs(unittest.TestCase):
    def run_graph(self, n, edges):
        m = graph_matrix(n, edges)
        s = critplex.sweep(m, grid="every", curvature={}).json()
        last = len(s["grid"]) - 1
        self.assertEqual(s["grid"][last]["edges"], len(edges))
        return s, last

    def test_octahedron(self):
        # reference: docs/methods.md worked value 1 - 4/2 + 4/3 = 1/3 per node, sum 2 (Knill 2011)
        edges = [(u, v) for u in range(6) for v in range(u + 1, 6) if not (u % 2 == 0 and v == u + 1)]
        s, last = self.run_graph(6, edges)
        kappa = [curve[last] for curve in s["curvature"]["node_kappa"]["values"]]
        for k in kappa:
            self.assertAlmostEqual(k, 1 / 3, delta=1e-15)
        gb = s["curvature"]["points"][last]["gauss_bonnet"]
        self.assertEqual(gb["chi"], "2")
        self.assertTrue(gb["exact"])
        self.assertAlmostEqual(gb["sum_kappa"], 2.0, delta=1e-14)

    def test_icosahedron(self):
        # reference: docs/methods.md worked value 1 - 5/2 + 5/3 = 1/6 per node, sum 2 (Knill 2011)
        edges = []
        for i in range(5):
            up, up_next, low, low_next = 1 + i, 1 + (i + 1) % 5, 6 + i, 6 + (i + 1) % 5
            edges += [(0, up), (min(up, up_next), max(up, up_next)), (up, low), (up, low_next),
                      (min(low, low_next), max(low, low_next)), (low, 11)]
        self.assertEqual(len(set(edges)), 30)
        s, last = self.run_graph(12, edges)
        for curve in s["curvature"]["node_kappa"]["values"]:
            self.assertAlmostEqual(curve[last], 1 / 6, delta=1e-15)
        self.assertEqual(s["curvature"]["points"][last]["gauss_bonnet"]["chi"], "2")


class AgainstNetworkx(unittest.TestCase):
    def check_sweep(self, matrix, mode, step, max_density=1.0):
        s = critplex.sweep(matrix, weights=mode, grid=step, max_density=max_density,
                           curvature={"quantiles": [0.1, 0.5, 0.9]}).json()
        c = s["curvature"]
        self.assertTrue(c["gauss_bonnet"]["all_exact"])
        self.assertEqual(c["gauss_bonnet"]["points_checked"], len(s["grid"]))
        for point in range(len(s["grid"])):
            g = graph_at(s, matrix, point, mode)
            expected = kappa_networkx(g)
            chi = sum(expected.values())
            # reference: networkx.enumerate_all_cliques, kappa summed exactly in Fractions
            got = [curve[point] for curve in c["node_kappa"]["values"]]
            for v in g.nodes:
                self.assertAlmostEqual(got[v], float(expected[v]), delta=1e-12 * max(1, abs(float(expected[v]))))
            self.assertEqual(c["points"][point]["gauss_bonnet"]["chi"], str(chi))
            # reference: numpy / scipy.stats moments of the same kappa values
            values = np.array([float(expected[v]) for v in g.nodes])
            node = c["points"][point]["node"]
            self.assertAlmostEqual(node["mean"], values.mean(), delta=1e-12 * max(1, abs(values.mean())))
            self.assertAlmostEqual(node["sd"], values.std(), delta=1e-9 * max(1, values.std()))
            if values.std() > 1e-9 * max(1, abs(values.mean())):
                self.assertAlmostEqual(node["skewness"], scipy.stats.skew(values), delta=1e-8)
                self.assertAlmostEqual(node["kurtosis"], scipy.stats.kurtosis(values), delta=1e-8)
            np.testing.assert_allclose(node["quantiles"], np.quantile(values, [0.1, 0.5, 0.9]), rtol=1e-12, atol=1e-12)
            # reference: Forman-Ricci computed directly on the networkx graph
            f = forman_networkx(g)
            forman = c["points"][point]["forman"]
            self.assertEqual(forman["count"], g.number_of_edges())
            if f:
                fv = np.array(list(f.values()), dtype=float)
                self.assertAlmostEqual(forman["mean"], fv.mean(), delta=1e-12 * max(1, abs(fv.mean())))
                self.assertAlmostEqual(forman["min"], fv.min())
                self.assertAlmostEqual(forman["max"], fv.max())
                np.testing.assert_allclose(forman["quantiles"], np.quantile(fv, [0.1, 0.5, 0.9]), rtol=1e-12, atol=1e-12)
            node_means = [curve[point] for curve in c["node_forman_mean"]["values"]]
            for v in g.nodes:
                incident = [f[(a, b) if (a, b) in f else (b, a)] for a, b in g.edges(v)]
                if incident:
                    self.assertAlmostEqual(node_means[v], np.mean(incident), delta=1e-12 * max(1, abs(np.mean(incident))))
                else:
                    self.assertIsNone(node_means[v])
        return s

    def test_random_matrices(self):
        rng = np.random.default_rng(20261202)
        for n in (8, 13, 17):
            self.check_sweep(random_symmetric(rng, n), "absolute", 0.1)

    def test_real_fmri_correlations(self):
        data = np.genfromtxt(NITIME_CSV, delimiter=",", skip_header=1)[:, 3:]
        m = np.corrcoef(data, rowvar=False)
        s = self.check_sweep(m, "positive", 0.05, max_density=0.5)
        self.assertEqual(len(s["curvature"]["node_kappa"]["values"]), 28)


class ChosenPoints(unittest.TestCase):
    """curvature.at: node curvature only at chosen grid points, from static counts (or a
    walk to the last chosen point), null elsewhere."""

    def check_points(self, s, matrix, mode, expected_points):
        c = s["curvature"]
        self.assertEqual(c["node_curvature_at"]["points"], expected_points)
        self.assertEqual(c["gauss_bonnet"]["points_checked"], len(expected_points))
        for point in range(len(s["grid"])):
            got = [curve[point] for curve in c["node_kappa"]["values"]]
            if point not in expected_points:
                self.assertTrue(all(x is None for x in got))
                self.assertIsNone(c["points"][point]["node"])
                continue
            # reference: networkx.enumerate_all_cliques, kappa summed exactly in Fractions
            expected = kappa_networkx(graph_at(s, matrix, point, mode))
            for v, x in enumerate(got):
                self.assertAlmostEqual(x, float(expected[v]), delta=1e-12 * max(1, abs(float(expected[v]))))
            # Gauss-Bonnet (Knill 2011): the exact sum is the networkx graph's chi
            self.assertEqual(c["points"][point]["gauss_bonnet"]["chi"], str(sum(expected.values())))

    def test_transitions_on_real_fmri_correlations(self):
        data = np.genfromtxt(NITIME_CSV, delimiter=",", skip_header=1)[:, 3:]
        m = np.corrcoef(data, rowvar=False)
        for count in ("static", "walk"):
            s = critplex.sweep(m, grid=0.02, max_density=0.6,
                               curvature={"at": "transitions", "window": 1, "count": count}).json()
            at = s["curvature"]["node_curvature_at"]
            self.assertGreater(len(at["chi_zeros"]), 0)
            # reference: the sign changes of the exact chi column, read here
            chi = [int(p["chi"]) for p in s["cliques"]["points"]]
            expected = set()
            for zero in at["chi_zeros"]:
                left, right = zero["left"], zero["right"]
                self.assertNotEqual(chi[left], 0)
                self.assertNotEqual(chi[right], 0)
                self.assertTrue(all(x == 0 for x in chi[left + 1:right]))
                expected.update(range(max(0, left - 1), min(len(chi) - 1, right + 1) + 1))
            sign_changes = sum(1 for a, b in zip([x for x in chi if x], [x for x in chi if x][1:]) if (a > 0) != (b > 0))
            self.assertEqual(sum(1 for z in at["chi_zeros"] if not z["touch"]), sign_changes)
            self.check_points(s, m, "positive", sorted(expected))

    def test_listed_densities_on_random_matrices(self):
        rng = np.random.default_rng(20261203)
        for n in (9, 14, 18):
            m = random_symmetric(rng, n)
            s = critplex.sweep(m, weights="absolute", grid=0.1, curvature={"at": [0.35, 0.8]}).json()
            # the last grid point at or below each density: 0.3 (index 3) and 0.8 (index 8)
            self.check_points(s, m, "absolute", [3, 8])
            self.assertEqual([x["index"] for x in s["curvature"]["node_curvature_at"]["snapped"]], [3, 8])


class NodeCurvatureCall(unittest.TestCase):
    def test_node_curvature_matrix_in_both_layouts(self):
        lib = critplex.library()
        f = lib.cpx_sweep_node_curvature
        f.argtypes = [ctypes.c_void_p, ctypes.c_int, ctypes.c_void_p, ctypes.c_size_t,
                      ctypes.POINTER(ctypes.c_size_t), ctypes.POINTER(ctypes.c_size_t)]
        f.restype = ctypes.c_int
        rng = np.random.default_rng(5)
        a = rng.standard_normal((9, 9))
        m = (a + a.T) / 2
        s = critplex.sweep(m, weights="absolute", grid=0.25, curvature={})
        doc = s.json()
        points, nodes = ctypes.c_size_t(), ctypes.c_size_t()
        self.assertEqual(f(s._h, 0, None, 0, ctypes.byref(points), ctypes.byref(nodes)), 0)
        self.assertEqual((points.value, nodes.value), (len(doc["grid"]), 9))
        expected = np.array(doc["curvature"]["node_kappa"]["values"], dtype=float).T
        row = np.empty((points.value, nodes.value))
        self.assertEqual(f(s._h, 0, row.ctypes.data, row.size, None, None), 0)
        np.testing.assert_array_equal(row, expected)
        col = np.empty((points.value, nodes.value), order="F")
        self.assertEqual(f(s._h, 1, col.ctypes.data, col.size, None, None), 0)
        np.testing.assert_array_equal(col, expected)
        self.assertNotEqual(f(s._h, 0, row.ctypes.data, 3, None, None), 0)  # buffer too short
        self.assertIn("buffer_length", lib.cpx_last_error().decode())

    def test_curvature_columns_and_bad_options(self):
        s = critplex.sweep(np.corrcoef(np.random.default_rng(1).standard_normal((40, 7)), rowvar=False),
                           grid=0.2, curvature={"bins": 4, "range": [-2, 2]})
        for name in ("kappa_mean", "kappa_sd", "kappa_skewness", "kappa_kurtosis", "kappa_q50",
                     "gauss_bonnet_error", "forman_mean", "log_abs_chi"):
            self.assertIn(name, s.columns)
        doc = s.json()
        self.assertEqual(doc["curvature"]["node_histogram_edges"], [-2, -1, 0, 1, 2])
        for p in doc["curvature"]["points"]:
            self.assertEqual(sum(p["node"]["histogram"]) + p["node"]["below"] + p["node"]["above"], 7)
        with self.assertRaises(critplex.CritplexError) as e:
            critplex.sweep(np.eye(4) + 0.1, curvature={"bins": "many"})
        self.assertIn("curvature.bins", str(e.exception))


@unittest.skipUnless(os.environ.get("CRITPLEX_CLI"), "CRITPLEX_CLI not set")
class CommandLine(unittest.TestCase):
    def test_sweep_curvature_and_transitions_files(self):
        # reference: docs/methods.md worked value, octahedron node curvature 1/3 and chi = 2
        edges = [(u, v) for u in range(6) for v in range(u + 1, 6) if not (u % 2 == 0 and v == u + 1)]
        m = graph_matrix(6, edges)
        with tempfile.TemporaryDirectory() as tmp:
            matrix = os.path.join(tmp, "m.tsv")
            np.savetxt(matrix, m, delimiter="\t")
            out, summary = os.path.join(tmp, "c.tsv"), os.path.join(tmp, "t.tsv")
            subprocess.run([os.environ["CRITPLEX_CLI"], "sweep", matrix, "--out", out, "--grid", "every",
                            "--curvature", "--transitions-out", summary], check=True, capture_output=True)
            with open(out) as f:
                rows = list(csv.DictReader(f, delimiter="\t"))
            self.assertEqual(int(rows[-1]["edges"]), 12)
            self.assertAlmostEqual(float(rows[-1]["kappa_mean"]), 1 / 3, delta=1e-15)
            self.assertAlmostEqual(float(rows[-1]["kappa_sd"]), 0.0, delta=1e-15)
            self.assertEqual(rows[-1]["chi"], "2")
            with open(summary) as f:
                header = f.readline().rstrip("\n").split("\t")
            self.assertEqual(header[:4], ["kind", "k", "density", "direction"])
            # A bad option fails with a message naming it and leaves no output behind.
            bad_out = os.path.join(tmp, "bad.tsv")
            r = subprocess.run([os.environ["CRITPLEX_CLI"], "sweep", matrix, "--out", bad_out,
                                "--options", json.dumps({"curvature": {"quantiles": [2]}})], capture_output=True, text=True)
            self.assertNotEqual(r.returncode, 0)
            self.assertIn("curvature.quantiles", r.stderr)
            self.assertFalse(os.path.exists(bad_out))


if __name__ == "__main__":
    unittest.main(verbosity=2)

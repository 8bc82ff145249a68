"""Clique counts and the Euler characteristic against outside references.

Each check names its source: networkx.enumerate_all_cliques (Debian python3-networkx),
igraph Graph.cliques (python3-igraph), gudhi SimplexTree (python3-gudhi), nitime's
real fMRI series (python3-nitime), Euler's polyhedron formula and the Erdos-Renyi
closed form E[chi] = sum_k (-1)^(k-1) C(N,k) p^(k(k-1)/2) (docs/methods.md).
The engine is called through the C interface (ctypes on CRITPLEX_LIBRARY).
"""
import ctypes
import json
import math
import os
import unittest
from fractions import Fraction

import numpy as np

LIB = ctypes.CDLL(os.environ["CRITPLEX_LIBRARY"])
LIB.cpx_matrix_create.argtypes = [ctypes.POINTER(ctypes.c_double), ctypes.c_size_t, ctypes.c_int,
                                  ctypes.c_void_p, ctypes.POINTER(ctypes.c_void_p)]
LIB.cpx_matrix_free.argtypes = [ctypes.c_void_p]
LIB.cpx_sweep_run.argtypes = [ctypes.c_void_p, ctypes.c_char_p, ctypes.c_void_p, ctypes.c_void_p,
                              ctypes.POINTER(ctypes.c_void_p)]
LIB.cpx_sweep_free.argtypes = [ctypes.c_void_p]
LIB.cpx_sweep_json.argtypes = [ctypes.c_void_p, ctypes.POINTER(ctypes.c_void_p)]
LIB.cpx_string_free.argtypes = [ctypes.c_void_p]
LIB.cpx_last_error.restype = ctypes.c_char_p


def sweep(matrix, options):
    """Runs cpx_sweep_run on a square matrix and returns the parsed JSON result."""
    a = np.ascontiguousarray(matrix, dtype=np.float64)
    m = ctypes.c_void_p()
    status = LIB.cpx_matrix_create(a.ctypes.data_as(ctypes.POINTER(ctypes.c_double)), a.shape[0], 0, None,
                                   ctypes.byref(m))
    assert status == 0, LIB.cpx_last_error().decode()
    s = ctypes.c_void_p()
    try:
        status = LIB.cpx_sweep_run(m, json.dumps(options).encode(), None, None, ctypes.byref(s))
        assert status == 0, LIB.cpx_last_error().decode()
        text = ctypes.c_void_p()
        assert LIB.cpx_sweep_json(s, ctypes.byref(text)) == 0, LIB.cpx_last_error().decode()
        result = json.loads(ctypes.string_at(text.value).decode())
        LIB.cpx_string_free(text)
        return result
    finally:
        LIB.cpx_sweep_free(s)
        LIB.cpx_matrix_free(m)


def counts_of(point):
    return [int(c) for c in point["counts"]]


def edges_in_order(matrix):
    """Pairs by decreasing value, ties by (i, j): the order docs/methods.md prescribes."""
    n = matrix.shape[0]
    pairs = [(-matrix[i, j], i, j) for i in range(n) for j in range(i + 1, n) if matrix[i, j] > 0]
    pairs.sort()
    return [(i, j) for _, i, j in pairs]


def graph_after(matrix, m):
    import networkx as nx
    g = nx.Graph()
    g.add_nodes_from(range(matrix.shape[0]))
    g.add_edges_from(edges_in_order(matrix)[:m])
    return g


def counts_by_dimension(cliques):
    """Cl_k from a list of cliques (each a list of nodes): k = size - 1."""
    counts = []
    for c in cliques:
        k = len(c) - 1
        while len(counts) <= k:
            counts.append(0)
        counts[k] += 1
    return counts


def networkx_counts(g):
    import networkx as nx
    return counts_by_dimension(nx.enumerate_all_cliques(g))


def igraph_counts(g):
    import igraph
    h = igraph.Graph(n=g.number_of_nodes(), edges=list(g.edges()))
    return counts_by_dimension(h.cliques())


def chi_of(counts):
    return sum((-1) ** k * c for k, c in enumerate(counts))


def nitime_correlation():
    import nitime
    path = os.path.join(os.path.dirname(nitime.__file__), "data", "fmri_timeseries.csv")
    data = np.genfromtxt(path, delimiter=",", names=True)
    # The first three columns are nuisance signals (white matter, ventricles, whole brain).
    columns = data.dtype.names[3:]
    series = np.column_stack([data[c] for c in columns])
    return np.corrcoef(series, rowvar=False)


def modular_matrix(n, modules, seed):
    """Invented correlation-like matrix with modules (input data only; the references judge)."""
    rng = np.random.default_rng(seed)
    module = np.arange(n) % modules
    loading = rng.uniform(0.3, 0.9, n)
    x = rng.standard_normal((400, modules))[:, module] * loading + rng.standard_normal((400, n))
    return np.corrcoef(x, rowvar=False)


def graph_matrix(n, edges):
    """1 on the given edges, -1 elsewhere: in positive mode exactly these edges enter."""
    m = -np.ones((n, n))
    np.fill_diagonal(m, 1.0)
    for i, j in edges:
        m[i, j] = m[j, i] = 1.0
    return m


class AgainstNetworkxAndIgraph(unittest.TestCase):
    def check_matrix(self, matrix, densities):
        result = sweep(matrix, {"grid": {"densities": densities}})
        pairs = result["pairs"]
        for point in result["cliques"]["points"]:
            self.assertTrue(point["complete"])
            m = point["edges"]
            self.assertEqual(m, math.floor(point["density"] * pairs + 1e-9))
            g = graph_after(matrix, m)
            ours = counts_of(point)
            # reference: networkx.enumerate_all_cliques (Debian python3-networkx)
            expect = networkx_counts(g)
            self.assertEqual(ours, expect, f"density {point['density']}")
            # reference: igraph Graph.cliques (Debian python3-igraph)
            self.assertEqual(ours, igraph_counts(g), f"density {point['density']}")
            self.assertEqual(int(point["chi"]), chi_of(expect))

    def test_nitime_fmri(self):
        # reference data: nitime's data/fmri_timeseries.csv (real resting-state fMRI, 28 regions)
        r = nitime_correlation()
        self.assertEqual(r.shape, (28, 28))
        self.check_matrix(r, [0.05, 0.1, 0.2, 0.3, 0.4, 0.45])

    def test_modular_matrices(self):
        for seed in (1, 2):
            self.check_matrix(modular_matrix(36, 4, seed), [0.05, 0.1, 0.15, 0.2, 0.25, 0.3])

    def test_chi_only_and_threads_agree(self):
        r = nitime_correlation()
        full = sweep(r, {"grid": "every", "max_density": 0.4, "cliques": {"threads": 1}})
        chi = sweep(r, {"grid": "every", "max_density": 0.4, "cliques": {"chi_only": True, "threads": 2}})
        self.assertEqual([p["chi"] for p in full["cliques"]["points"]], [p["chi"] for p in chi["cliques"]["points"]])


class AgainstGudhi(unittest.TestCase):
    def test_chi_at_every_filtration_value_with_ties(self):
        import gudhi
        rng = np.random.default_rng(5)
        for n in (9, 11, 12):
            # One decimal: many tied values, so tie groups matter.
            a = np.round(rng.uniform(0.1, 1.0, (n, n)), 1)
            m = np.triu(a, 1) + np.triu(a, 1).T
            np.fill_diagonal(m, 1.0)
            result = sweep(m, {"grid": "every"})
            # reference: gudhi SimplexTree (Debian python3-gudhi): the flag complex with
            # filtration value -r on each edge, simplices counted by filtration value.
            st = gudhi.SimplexTree()
            for i in range(n):
                st.insert([i], filtration=-2.0)
            for i in range(n):
                for j in range(i + 1, n):
                    st.insert([i, j], filtration=-m[i, j])
            st.expansion(n)
            simplices = [(len(s) - 1, f) for s, f in st.get_filtration()]
            values = sorted({-m[i, j] for i in range(n) for j in range(i + 1, n)})
            points = result["cliques"]["points"]
            self.assertEqual(len(points), len(values) + 1)  # one point per tie group, plus the empty graph
            self.assertEqual(int(points[0]["chi"]), n)
            for point, t in zip(points[1:], values):
                chi = sum((-1) ** d for d, f in simplices if f <= t)
                self.assertEqual(int(point["chi"]), chi, f"n={n}, filtration value {t}")
                self.assertAlmostEqual(result["grid"][points.index(point)]["threshold"], -t)


class WorkedValues(unittest.TestCase):
    # reference: Euler's polyhedron formula V - E + F = 2 (docs/methods.md)
    def test_octahedron(self):
        edges = [(a, b) for a in range(6) for b in range(a + 1, 6) if not (a % 2 == 0 and b == a + 1)]
        end = sweep(graph_matrix(6, edges), {"grid": "every"})["cliques"]["points"][-1]
        self.assertEqual(counts_of(end), [6, 12, 8])
        self.assertEqual(int(end["chi"]), 2)

    def test_icosahedron(self):
        edges = []
        for i in range(5):
            up, up_next, low, low_next = 1 + i, 1 + (i + 1) % 5, 6 + i, 6 + (i + 1) % 5
            edges += [(0, up), (up, up_next), (up, low), (up, low_next), (low, low_next), (low, 11)]
        end = sweep(graph_matrix(12, edges), {"grid": "every"})["cliques"]["points"][-1]
        self.assertEqual(counts_of(end), [12, 30, 20])
        self.assertEqual(int(end["chi"]), 2)

    # reference: a complete graph's flag complex is a simplex, chi = 1; an empty graph
    # has chi = N; chi adds over disjoint unions (common practice).
    def test_complete_empty_union(self):
        n = 10
        complete = [(a, b) for a in range(n) for b in range(a + 1, n)]
        end = sweep(graph_matrix(n, complete), {"grid": "every"})["cliques"]["points"][-1]
        self.assertEqual(counts_of(end), [math.comb(n, k + 1) for k in range(n)])
        self.assertEqual(int(end["chi"]), 1)
        empty = sweep(graph_matrix(n, []), {"grid": "every"})["cliques"]["points"][-1]
        self.assertEqual(int(empty["chi"]), n)
        octa = [(a, b) for a in range(6) for b in range(a + 1, 6) if not (a % 2 == 0 and b == a + 1)]
        union = octa + [(a + 6, b + 6) for a, b in complete] + [(16, 17)]
        end = sweep(graph_matrix(20, union), {"grid": "every"})["cliques"]["points"][-1]
        self.assertEqual(int(end["chi"]), 2 + 1 + 1 + 2)  # octahedron, K10, an edge, two lone nodes


class ErdosRenyi(unittest.TestCase):
    def test_mean_chi_matches_closed_form(self):
        # reference: E[Cl_{k-1}] = C(N,k) p^(k(k-1)/2) in G(N,p) (Erdos & Renyi; docs/methods.md),
        # so E[chi] = sum_{k>=1} (-1)^(k-1) C(N,k) p^(k(k-1)/2), computed exactly here.
        n, samples = 22, 300
        ps = [Fraction(1, 5), Fraction(2, 5), Fraction(1, 2), Fraction(3, 5)]
        rng = np.random.default_rng(11)
        values = {p: [] for p in ps}
        for _ in range(samples):
            u = rng.uniform(0.0, 1.0, (n, n))
            m = np.triu(u, 1) + np.triu(u, 1).T
            np.fill_diagonal(m, 1.0)
            # An edge enters when its value is >= 1 - p: independent, with probability p.
            result = sweep(m, {"grid": {"thresholds": [float(1 - p) for p in ps]}})
            for p, point in zip(ps, result["cliques"]["points"]):
                values[p].append(int(point["chi"]))
        for p in ps:
            expect = sum((-1) ** (k - 1) * math.comb(n, k) * p ** (k * (k - 1) // 2) for k in range(1, n + 1))
            x = np.array(values[p], dtype=float)
            se = x.std(ddof=1) / math.sqrt(samples)
            self.assertLess(abs(x.mean() - float(expect)), 3 * se + 1e-12, f"p={p}: mean {x.mean()}, E {float(expect)}")


if __name__ == "__main__":
    unittest.main()

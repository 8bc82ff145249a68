"""Surrogate series and degree-preserving rewiring against numpy and networkx.

References (Debian packages): numpy.fft.rfft and numpy.corrcoef (python3-numpy);
networkx degree and graph checks (python3-networkx); nitime's fMRI region time series
(python3-nitime, data/fmri_timeseries.csv) as real input. Definitions: Theiler et al.
1992 (phase randomisation), Prichard & Theiler 1994 (multivariate: same phases in every
region keep the cross-spectra), Schreiber & Schmitz 1996 (IAAFT), Maslov & Sneppen 2002.
"""
import ctypes
import json
import os
import unittest

import networkx as nx
import numpy as np

lib = ctypes.CDLL(os.environ["CRITPLEX_LIBRARY"])
dp = ctypes.POINTER(ctypes.c_double)
up = ctypes.POINTER(ctypes.c_uint32)
lib.cpx_last_error.restype = ctypes.c_char_p
lib.cpx_series_create.argtypes = [dp, ctypes.c_size_t, ctypes.c_size_t, ctypes.c_int, ctypes.c_void_p,
                                  ctypes.POINTER(ctypes.c_void_p)]
lib.cpx_series_copy.argtypes = [ctypes.c_void_p, dp, ctypes.c_size_t, ctypes.c_int]
lib.cpx_series_free.argtypes = [ctypes.c_void_p]
lib.cpx_surrogate.argtypes = [ctypes.c_void_p, ctypes.c_char_p, ctypes.POINTER(ctypes.c_void_p)]
lib.cpx_rewire_edges.argtypes = [ctypes.c_size_t, up, ctypes.c_size_t, ctypes.c_char_p, up, ctypes.c_size_t]


def check(status):
    if status != 0:
        raise RuntimeError(lib.cpx_last_error().decode())


def surrogate(values, **options):
    values = np.ascontiguousarray(values, dtype=np.float64)
    t, n = values.shape
    handle, out = ctypes.c_void_p(), ctypes.c_void_p()
    check(lib.cpx_series_create(values.ctypes.data_as(dp), t, n, 0, None, ctypes.byref(handle)))
    try:
        check(lib.cpx_surrogate(handle, json.dumps(options).encode(), ctypes.byref(out)))
        result = np.zeros((t, n))
        check(lib.cpx_series_copy(out, result.ctypes.data_as(dp), t * n, 0))
        return result
    finally:
        lib.cpx_series_free(handle)
        lib.cpx_series_free(out)


def nitime_regions():
    import nitime
    path = os.path.join(os.path.dirname(nitime.__file__), "data", "fmri_timeseries.csv")
    data = np.genfromtxt(path, delimiter=",", names=True)
    # the first three columns are nuisance signals (white matter, ventricles, whole brain)
    return np.column_stack([data[name] for name in data.dtype.names[3:]])


class PhaseSurrogates(unittest.TestCase):
    def setUp(self):
        self.x = nitime_regions()  # 250 frames x 28 regions, real fMRI
        rng = np.random.default_rng(0)
        self.odd = rng.normal(size=(101, 5)).cumsum(axis=0)  # odd length, coupled by nothing

    def test_amplitude_spectrum_kept(self):
        # reference: numpy.fft.rfft; |X_k| of every region at every frequency is unchanged
        for data in [self.x, self.odd]:
            for method in ["phase_multivariate", "phase_independent"]:
                s = surrogate(data, method=method, seed=4)
                np.testing.assert_allclose(np.abs(np.fft.rfft(s, axis=0)), np.abs(np.fft.rfft(data, axis=0)),
                                           rtol=1e-9, atol=1e-9 * np.abs(data).max() * len(data))
                self.assertGreater(np.abs(s - data).max(), 0.1 * data.std())  # really changed

    def test_multivariate_keeps_correlation_matrix(self):
        # reference: numpy.corrcoef; same phase shift at each frequency in every region leaves
        # every cross-spectrum, hence every zero-lag correlation, unchanged
        s = surrogate(self.x, method="phase_multivariate", seed=7)
        np.testing.assert_allclose(np.corrcoef(s, rowvar=False), np.corrcoef(self.x, rowvar=False), atol=1e-10)

    def test_independent_drives_correlations_toward_zero(self):
        # reference: numpy.corrcoef; mean |r| off the diagonal over 20 surrogates vs the data
        r0 = np.corrcoef(self.x, rowvar=False)
        off = ~np.eye(r0.shape[0], dtype=bool)
        mean_r = np.mean([np.corrcoef(surrogate(self.x, method="phase_independent", seed=k), rowvar=False)[off]
                          for k in range(20)], axis=0)
        self.assertLess(np.abs(mean_r).mean(), 0.35 * np.abs(r0[off]).mean())

    def test_seeded(self):
        a = surrogate(self.odd, method="phase_multivariate", seed=3)
        b = surrogate(self.odd, method="phase_multivariate", seed=3)
        c = surrogate(self.odd, method="phase_multivariate", seed=4)
        np.testing.assert_array_equal(a, b)
        self.assertGreater(np.abs(a - c).max(), 0)


class Iaaft(unittest.TestCase):
    def test_sorted_values_exact_and_spectrum_close(self):
        # reference: numpy.sort (the values are a permutation of the original, exactly) and
        # numpy.fft.rfft (amplitudes close: IAAFT matches them only approximately)
        x = nitime_regions()[:, :6]
        s = surrogate(x, method="iaaft", seed=2, iaaft_iterations=200)
        np.testing.assert_array_equal(np.sort(s, axis=0), np.sort(x, axis=0))
        a0 = np.abs(np.fft.rfft(x - x.mean(0), axis=0))[1:]
        a1 = np.abs(np.fft.rfft(s - s.mean(0), axis=0))[1:]
        rel = np.linalg.norm(a1 - a0, axis=0) / np.linalg.norm(a0, axis=0)
        self.assertLess(rel.max(), 0.15)
        # a plain shuffle of the values keeps the sorted values too, but not the spectrum
        shuffled = np.random.default_rng(1).permuted(x, axis=0)
        a2 = np.abs(np.fft.rfft(shuffled - shuffled.mean(0), axis=0))[1:]
        self.assertGreater((np.linalg.norm(a2 - a0, axis=0) / np.linalg.norm(a0, axis=0)).min(), rel.max())

    def test_bad_options_named(self):
        x = np.random.default_rng(0).normal(size=(20, 2))
        with self.assertRaises(RuntimeError) as e:
            surrogate(x, method="shuffle")
        self.assertIn("method", str(e.exception))


class Rewiring(unittest.TestCase):
    def rewire(self, graph, **options):
        nodes = graph.number_of_nodes()
        edges = np.array(sorted(tuple(sorted(e)) for e in graph.edges()), dtype=np.uint32).reshape(-1)
        out = np.zeros_like(edges)
        check(lib.cpx_rewire_edges(nodes, edges.ctypes.data_as(up), len(edges) // 2, json.dumps(options).encode(),
                                   out.ctypes.data_as(up), len(out)))
        g = nx.Graph()
        g.add_nodes_from(range(nodes))
        g.add_edges_from(out.reshape(-1, 2).tolist())
        return g, out.reshape(-1, 2)

    def test_every_degree_kept(self):
        # reference: networkx degrees; Maslov & Sneppen swaps keep each node's degree and
        # make a simple graph (no self-loops, no duplicate edges)
        for graph in [nx.karate_club_graph(), nx.gnm_random_graph(60, 400, seed=3),
                      nx.relaxed_caveman_graph(6, 8, 0.05, seed=2)]:
            g, pairs = self.rewire(graph, seed=5, swaps_per_edge=10)
            self.assertEqual(len(pairs), graph.number_of_edges())
            self.assertEqual(g.number_of_edges(), graph.number_of_edges())  # no duplicates
            self.assertEqual(nx.number_of_selfloops(g), 0)
            self.assertEqual(dict(g.degree()), dict(graph.degree()))
            changed = len(set(map(tuple, pairs.tolist())) - set(tuple(sorted(e)) for e in graph.edges()))
            self.assertGreater(changed, 0.5 * graph.number_of_edges())

    def test_rewiring_lowers_clustering_of_a_modular_graph(self):
        # reference: networkx.transitivity; a clustered caveman graph loses most of its triangles
        graph = nx.relaxed_caveman_graph(8, 10, 0.02, seed=1)
        g, _ = self.rewire(graph, seed=1)
        self.assertLess(nx.transitivity(g), 0.5 * nx.transitivity(graph))

    def test_bad_edges_named(self):
        edges = np.array([0, 1, 1, 1], dtype=np.uint32)
        out = np.zeros_like(edges)
        self.assertNotEqual(lib.cpx_rewire_edges(3, edges.ctypes.data_as(up), 2, None, out.ctypes.data_as(up), 4), 0)
        self.assertIn("edge 2", lib.cpx_last_error().decode())


if __name__ == "__main__":
    unittest.main()

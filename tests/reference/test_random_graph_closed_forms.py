"""Erdos-Renyi closed forms E[chi] and E[kappa] (docs/methods.md, "Random-graph references")
as computed by critplex in paired binary128 arithmetic, against:

- python3-mpmath evaluating the same alternating sums to 50 significant digits, for
  N = 50, 200, 1000 over a grid of p (the working precision is raised by the number of
  digits the cancellation costs, up to 30 more at N = 1000, p = 0.95, so that the
  reference itself keeps 50), a sign change of that 50-digit function across each zero
  we report, and no sign change between consecutive reported zeros (none missed);
- a Monte Carlo mean over G(N, p) samples whose cliques are listed by
  networkx.enumerate_all_cliques (Debian python3-networkx): within 3 standard errors.
"""
import ctypes
import json
import math
import unittest

import mpmath
import networkx as nx
import numpy as np

import critplex


def fifty_digits(terms):
    """Sum of mpmath terms (a function of the working precision) good to 50 digits: the
    working precision is 50 digits plus what the cancellation costs, plus 10 spare."""
    with mpmath.workdps(60):
        t = terms()
        lost = max(0, int(mpmath.log10(mpmath.fsum(abs(x) for x in t) / max(abs(mpmath.fsum(t)), mpmath.mpf(10) ** -300))))
    with mpmath.workdps(60 + lost):
        return +mpmath.fsum(terms())


def expected_chi_mp(n, p):
    # reference: E[chi] = sum_{k>=1} (-1)^(k-1) C(N,k) p^(k(k-1)/2), evaluated by mpmath to 50 digits
    p = mpmath.mpf(p)  # the double p exactly
    return fifty_digits(lambda: [(-1) ** (k - 1) * math.comb(n, k) * p ** (k * (k - 1) // 2)
                                 for k in range(1, n + 1)])


def expected_kappa_mp(n, p):
    # reference: E[kappa_i] = sum_{k>=0} (-1)^k C(N-1,k) p^(k(k+1)/2) / (k+1), mpmath to 50 digits
    p = mpmath.mpf(p)
    return fifty_digits(lambda: [(-1) ** k * math.comb(n - 1, k) * p ** (k * (k + 1) // 2) / (k + 1)
                                 for k in range(n)])


def expectations(n, ps, **options):
    lib = critplex.library()
    f = lib.cpx_random_graph_expectations
    f.argtypes = [ctypes.c_size_t, ctypes.c_void_p, ctypes.c_size_t, ctypes.c_char_p, ctypes.POINTER(ctypes.c_void_p)]
    f.restype = ctypes.c_int
    arr = np.ascontiguousarray(ps, dtype=np.float64)
    out = ctypes.c_void_p()
    status = f(n, arr.ctypes.data, arr.size, json.dumps(options).encode(), ctypes.byref(out))
    if status != 0:
        raise critplex.CritplexError(lib.cpx_status_name(status).decode(), lib.cpx_last_error().decode())
    text = ctypes.string_at(out).decode()
    lib.cpx_string_free(out)
    return json.loads(text)


P_GRID = [0.0005, 0.002, 0.01, 0.03, 0.07, 0.1, 0.15, 0.2, 0.3, 0.45, 0.6, 0.75, 0.85, 0.9, 0.95]


class AgainstMpmath(unittest.TestCase):
    def test_values_at_50_digits(self):
        for n in (50, 200, 1000):
            res = expectations(n, P_GRID, zeros=False)
            self.assertIn("binary128", res["arithmetic"])
            for v in res["values"]:
                p = v["p"]
                for key, exact in (("chi", expected_chi_mp(n, p)), ("kappa", expected_kappa_mp(n, p))):
                    with self.subTest(n=n, p=p, value=key):
                        with mpmath.workdps(60):
                            ours = mpmath.mpf(v[key + "_decimal"])
                            rel = abs(ours - exact) / max(abs(exact), mpmath.mpf(10) ** -40)
                        if v[key + "_reliable"]:
                            # the printed value carries 35 digits (binary128 rounding: 1e-34); the bound must hold too
                            self.assertLess(float(rel), max(1e-32, v[key + "_relative_error_bound"]))
                        else:
                            # an unreliable value must say so honestly: its bound covers the error
                            self.assertLess(float(rel), max(v[key + "_relative_error_bound"], 1e-30) * 10)
            # N = 1000 up to p = 0.9 must be reliable (double precision keeps no digit there)
            if n == 1000:
                self.assertTrue(all(v["chi_reliable"] for v in res["values"] if v["p"] <= 0.9))

    def test_zeros_are_sign_changes_at_50_digits(self):
        for n in (50, 200, 1000):
            res = expectations(n, [], max_p=0.8, scan_points=1500)
            zeros = res["zeros"]
            self.assertGreaterEqual(len(zeros["chi"]), 2)
            self.assertEqual(len(zeros["chi"]), len(zeros["kappa"]))
            for z, direction in zip(zeros["chi"], zeros["chi_directions"]):
                with self.subTest(n=n, zero=z):
                    # reference: the 50-digit E[chi] changes sign within 1e-13 (relative) of our zero
                    left = expected_chi_mp(n, z * (1 - 1e-13))
                    right = expected_chi_mp(n, z * (1 + 1e-13))
                    self.assertTrue((left > 0) != (right > 0), f"no sign change around {z}: {left}, {right}")
                    self.assertEqual(direction, -1 if left > 0 else 1)
            for a, b in zip(zeros["chi"], zeros["kappa"]):
                self.assertAlmostEqual(a, b, delta=1e-13 * a)  # N E[kappa] = E[chi]: same zeros

    def test_no_zero_is_missed_where_they_crowd(self):
        # Near p = 1 the zeros of E[chi] crowd closer than any fixed scan spacing
        # (N = 300: about 50 zeros, 0.002 apart near p = 0.96). Between consecutive
        # reported zeros the 50-digit reference must keep one sign, so none is missing.
        n = 300
        res = expectations(n, [], max_p=1.0, scan_points=200)
        zeros = res["zeros"]
        top = zeros["reliable_up_to"]
        self.assertGreater(top, 0.95)
        self.assertGreater(len(zeros["chi"]), 40)
        edges = [0.01 / n] + zeros["chi"] + [top]
        for a, b in zip(edges, edges[1:]):
            with self.subTest(between=(a, b)):
                signs = set()
                for i in range(1, 8):
                    p = a * (b / a) ** (i / 8)  # log-spaced inside the interval
                    signs.add(expected_chi_mp(n, p) > 0)
                self.assertEqual(len(signs), 1, f"E[chi] changes sign between reported zeros {a} and {b}")

    def test_bad_arguments(self):
        with self.assertRaises(critplex.CritplexError) as e:
            expectations(10, [1.5])
        self.assertIn("'p'", str(e.exception))
        with self.assertRaises(critplex.CritplexError):
            expectations(10, [0.5], colour="red")


class MonteCarlo(unittest.TestCase):
    def test_sample_means_within_three_standard_errors(self):
        # reference: networkx.gnp_random_graph samples, cliques from networkx.enumerate_all_cliques
        rng = np.random.default_rng(20261202)
        for n, p, samples in ((12, 0.35, 600), (16, 0.6, 300)):
            chis, kappas = [], []
            for _ in range(samples):
                g = nx.gnp_random_graph(n, p, seed=int(rng.integers(2**31)))
                chi = 0
                kappa0 = 0.0  # curvature of node 0 (every node has the same law)
                for clique in nx.enumerate_all_cliques(g):
                    k = len(clique) - 1
                    chi += (-1) ** k
                    if 0 in clique:
                        kappa0 += (-1) ** k / (k + 1)
                chis.append(chi)
                kappas.append(kappa0)
            res = expectations(n, [p], zeros=False)["values"][0]
            for name, sample, closed in (("chi", chis, res["chi"]), ("kappa", kappas, res["kappa"])):
                with self.subTest(n=n, p=p, value=name):
                    mean = np.mean(sample)
                    se = np.std(sample, ddof=1) / np.sqrt(len(sample))
                    self.assertLess(abs(mean - closed), 3 * se, f"{name}: mean {mean}, closed form {closed}, se {se}")


if __name__ == "__main__":
    unittest.main(verbosity=2)

"""Group statistics of critplex against scipy.stats and statsmodels.

References (Debian packages): scipy 1.10 (python3-scipy): stats.permutation_test,
stats.bootstrap, stats.t, special.gamma; statsmodels 0.13 (python3-statsmodels):
stats.multitest.multipletests; numpy (python3-numpy): linalg.lstsq, percentile.
The data are drawn from numpy's seeded generator (invented numbers, no people).
"""
import ctypes
import json
import math
import os
import unittest

import numpy as np
from scipy import special, stats
from statsmodels.stats.multitest import multipletests

lib = ctypes.CDLL(os.environ["CRITPLEX_LIBRARY"])
dp = ctypes.POINTER(ctypes.c_double)
lib.cpx_last_error.restype = ctypes.c_char_p
lib.cpx_string_free.argtypes = [ctypes.c_void_p]
lib.cpx_stats_permutation_test.argtypes = [dp, ctypes.c_size_t, dp, ctypes.c_size_t, ctypes.c_char_p,
                                           ctypes.POINTER(ctypes.c_void_p)]
lib.cpx_stats_bootstrap_band.argtypes = [dp, ctypes.c_size_t, ctypes.c_size_t, ctypes.c_int, ctypes.c_char_p,
                                         ctypes.POINTER(ctypes.c_void_p)]
lib.cpx_stats_cluster_test.argtypes = [dp, ctypes.c_size_t, dp, ctypes.c_size_t, ctypes.c_size_t, ctypes.c_int,
                                       ctypes.c_char_p, ctypes.POINTER(ctypes.c_void_p)]
lib.cpx_stats_fdr.argtypes = [dp, ctypes.c_size_t, dp, ctypes.c_size_t]
lib.cpx_stats_residualise.argtypes = [dp, ctypes.c_size_t, dp, ctypes.c_size_t, ctypes.c_int, dp, ctypes.c_size_t]
lib.cpx_stats_compare_summaries.argtypes = [ctypes.c_char_p, ctypes.c_char_p, ctypes.POINTER(ctypes.c_void_p)]
lib.cpx_stats_t_quantile.argtypes = [ctypes.c_double, ctypes.c_double, dp]
ROW_MAJOR = 0


def arr(x):
    x = np.ascontiguousarray(x, dtype=np.float64)
    return x, x.ctypes.data_as(dp)


def check(status):
    if status != 0:
        raise RuntimeError(lib.cpx_last_error().decode())


def take_json(ptr):
    text = ctypes.cast(ptr, ctypes.c_char_p).value.decode()
    lib.cpx_string_free(ptr)
    return json.loads(text)


def permutation(a, b, **options):
    a, pa = arr(a)
    b, pb = arr(b)
    out = ctypes.c_void_p()
    check(lib.cpx_stats_permutation_test(pa, len(a), pb, len(b), json.dumps(options).encode(), ctypes.byref(out)))
    return take_json(out)


def mean_difference(x, y, axis=-1):
    return np.mean(x, axis=axis) - np.mean(y, axis=axis)


def welch(x, y, axis=-1):
    return stats.ttest_ind(x, y, equal_var=False, axis=axis).statistic


class PermutationTest(unittest.TestCase):
    # reference: scipy.stats.permutation_test (scipy 1.10), permutation_type="independent"
    def test_exact_matches_scipy_for_small_groups(self):
        rng = np.random.default_rng(7)
        for n_a, n_b in [(5, 6), (7, 7), (4, 9)]:
            a = rng.normal(0.3, 1.0, n_a)
            b = rng.normal(0.0, 1.3, n_b)
            for name, fn in [("mean_difference", mean_difference), ("welch_t", welch)]:
                for alternative in ["two_sided", "less", "greater"]:
                    ours = permutation(a, b, statistic=name, alternative=alternative)
                    ref = stats.permutation_test((a, b), fn, vectorized=True, n_resamples=10**9,
                                                 alternative=alternative.replace("_", "-"))
                    self.assertTrue(ours["exact"])
                    self.assertEqual(ours["null_size"], math.comb(n_a + n_b, n_a))
                    self.assertAlmostEqual(ours["statistic"], float(ref.statistic), places=12)
                    # exact enumeration: same null, same counting rule, so the same p exactly
                    self.assertAlmostEqual(ours["p_value"], float(ref.pvalue), places=14,
                                           msg=f"{name} {alternative} {n_a}x{n_b}")

    def test_exact_with_ties_integer_data(self):
        # reference: scipy.stats.permutation_test; integer data make many relabellings tie
        a = np.array([3, 4, 4, 5, 6], dtype=float)
        b = np.array([1, 2, 2, 3, 4, 4], dtype=float)
        ours = permutation(a, b)
        ref = stats.permutation_test((a, b), mean_difference, vectorized=True, n_resamples=10**9)
        self.assertAlmostEqual(ours["p_value"], float(ref.pvalue), places=14)

    def test_monte_carlo_agrees_within_sampling_error(self):
        # reference: scipy.stats.permutation_test with random relabellings; both estimate
        # the same p, with binomial standard error sqrt(p(1-p)/m)
        rng = np.random.default_rng(11)
        a = rng.normal(0.5, 1.0, 20)
        b = rng.normal(0.0, 1.0, 20)
        ours = permutation(a, b, resamples=20000, seed=3)
        self.assertFalse(ours["exact"])
        self.assertEqual(ours["null_size"], 20000)
        ref = stats.permutation_test((a, b), mean_difference, vectorized=True, n_resamples=20000, random_state=5)
        p = float(ref.pvalue)
        se = math.sqrt(2 * p * (1 - p) / 20000) * 2 + 1e-4
        self.assertLess(abs(ours["p_value"] - p), 4 * se)
        # the Monte Carlo estimate (b + 1) / (m + 1) is never zero
        far = permutation(a + 10.0, b, resamples=999, seed=3)
        self.assertAlmostEqual(far["p_value"], 2 * 1 / 1000)

    def test_seed_determinism(self):
        rng = np.random.default_rng(2)
        a, b = rng.normal(size=25), rng.normal(size=25)
        self.assertEqual(permutation(a, b, seed=9), permutation(a, b, seed=9))
        self.assertNotEqual(permutation(a, b, seed=9)["p_value"], permutation(a, b, seed=10)["p_value"])

    def test_hedges_g_formula(self):
        # reference: Hedges (1981), J. Educ. Stat. 6:107, eq. for the unbiased estimator:
        #   s_p = sqrt(((n_a-1) s_a^2 + (n_b-1) s_b^2) / (n_a+n_b-2)),  d = (mean_a-mean_b)/s_p,
        #   g = J(df) d,  J(df) = Gamma(df/2) / (sqrt(df/2) Gamma((df-1)/2)),  df = n_a+n_b-2,
        # and the usual approximation J ~ 1 - 3/(4 df - 1).
        rng = np.random.default_rng(5)
        for n_a, n_b in [(4, 5), (10, 12), (20, 20)]:
            a, b = rng.normal(1, 1, n_a), rng.normal(0, 2, n_b)
            df = n_a + n_b - 2
            sp = math.sqrt(((n_a - 1) * a.var(ddof=1) + (n_b - 1) * b.var(ddof=1)) / df)
            d = (a.mean() - b.mean()) / sp
            j = special.gamma(df / 2) / (math.sqrt(df / 2) * special.gamma((df - 1) / 2))
            ours = permutation(a, b, resamples=10, exact_limit=1)
            self.assertAlmostEqual(ours["cohen_d"], d, places=12)
            self.assertAlmostEqual(ours["hedges_correction"], j, places=12)
            self.assertAlmostEqual(ours["hedges_g"], j * d, places=12)
            self.assertAlmostEqual(ours["hedges_correction"], 1 - 3 / (4 * df - 1), delta=2e-3)

    def test_bad_input_names_argument(self):
        out = ctypes.c_void_p()
        a, pa = arr([1.0, float("nan"), 2.0])
        b, pb = arr([1.0, 2.0])
        self.assertNotEqual(lib.cpx_stats_permutation_test(pa, 3, pb, 2, None, ctypes.byref(out)), 0)
        self.assertIn("subject 2", lib.cpx_last_error().decode())
        self.assertNotEqual(lib.cpx_stats_permutation_test(pb, 2, pb, 2, b'{"seeed": 1}', ctypes.byref(out)), 0)
        self.assertIn("seeed", lib.cpx_last_error().decode())


class Bootstrap(unittest.TestCase):
    def band(self, curves, **options):
        c, pc = arr(curves)
        out = ctypes.c_void_p()
        check(lib.cpx_stats_bootstrap_band(pc, c.shape[0], c.shape[1], ROW_MAJOR, json.dumps(options).encode(),
                                           ctypes.byref(out)))
        return take_json(out)

    def test_percentile_band_against_scipy(self):
        # reference: scipy.stats.bootstrap(method="percentile") resampling subjects; the two
        # random streams differ, so the bounds agree to Monte Carlo error, not exactly
        rng = np.random.default_rng(4)
        curves = rng.normal(size=(24, 5)) * np.array([1, 2, 3, 0.5, 1]) + np.arange(5)
        ours = self.band(curves, resamples=40000, confidence=0.9, seed=2)
        for j in range(5):
            ref = stats.bootstrap((curves[:, j],), np.mean, method="percentile", confidence_level=0.9,
                                  n_resamples=40000, random_state=8)
            se = curves[:, j].std(ddof=1) / math.sqrt(24)
            self.assertAlmostEqual(ours["mean"][j], curves[:, j].mean(), places=12)
            self.assertLess(abs(ours["lower"][j] - ref.confidence_interval.low), 0.05 * se + 0.02 * se)
            self.assertLess(abs(ours["upper"][j] - ref.confidence_interval.high), 0.07 * se)

    def test_percentile_convention_is_numpy_linear(self):
        # reference: numpy.percentile (default linear interpolation), which scipy.stats.bootstrap
        # applies to the resampled statistics. With 2 subjects there are 4 equally likely
        # resamples (means a, (a+b)/2, (a+b)/2, b); many resamples make the empirical quantiles
        # converge to the quantiles of that 3-point law: the 30th and 70th percentiles are 0.5.
        curves = np.array([[0.0], [1.0]])
        ours = self.band(curves, resamples=100001, confidence=0.4, seed=1)
        self.assertEqual(ours["lower"][0], 0.5)
        self.assertEqual(ours["upper"][0], 0.5)


class FalseDiscoveryRate(unittest.TestCase):
    def test_against_statsmodels(self):
        # reference: statsmodels.stats.multitest.multipletests(method="fdr_bh")
        rng = np.random.default_rng(3)
        for m in [1, 2, 7, 40]:
            p = rng.uniform(size=m) ** 3
            p[: m // 3] = p[0]  # ties
            adj = np.zeros(m)
            pp, ptr = arr(p)
            check(lib.cpx_stats_fdr(ptr, m, adj.ctypes.data_as(dp), m))
            ref = multipletests(p, method="fdr_bh")[1]
            np.testing.assert_allclose(adj, ref, rtol=0, atol=1e-15)


class CovariatesAndT(unittest.TestCase):
    def test_residualise_against_lstsq(self):
        # reference: numpy.linalg.lstsq with an intercept column
        rng = np.random.default_rng(6)
        n = 30
        age = rng.uniform(20, 40, n)
        sex = rng.integers(0, 2, n).astype(float)
        y = 0.02 * age + 0.1 * sex + rng.normal(0, 0.05, n)
        x = np.column_stack([age, sex])
        design = np.column_stack([np.ones(n), x])
        ref = y - design @ np.linalg.lstsq(design, y, rcond=None)[0]
        out = np.zeros(n)
        yy, py = arr(y)
        xx, px = arr(x)
        check(lib.cpx_stats_residualise(py, n, px, 2, ROW_MAJOR, out.ctypes.data_as(dp), n))
        np.testing.assert_allclose(out, ref, atol=1e-12)
        # a constant covariate duplicates the intercept: a clear error, not a silent fit
        const = np.ones((n, 1))
        cc, pc = arr(const)
        self.assertNotEqual(lib.cpx_stats_residualise(py, n, pc, 1, ROW_MAJOR, out.ctypes.data_as(dp), n), 0)
        self.assertIn("collinear", lib.cpx_last_error().decode())

    def test_t_quantile_against_scipy(self):
        # reference: scipy.stats.t.ppf
        for p in [0.975, 0.995, 0.5, 0.01]:
            for df in [1, 3.5, 10, 38, 200]:
                q = ctypes.c_double()
                check(lib.cpx_stats_t_quantile(p, df, ctypes.byref(q)))
                # scipy's ppf itself is only good to about 1e-9 relative here (its cdf at
                # its own ppf can miss p by 5e-11), so check the defining property tightly
                self.assertAlmostEqual(stats.t.cdf(q.value, df), p, delta=1e-13)
                self.assertAlmostEqual(q.value, stats.t.ppf(p, df), delta=1e-8 * max(1, abs(q.value)))


class SeveralSummaries(unittest.TestCase):
    def test_summaries_with_covariate_and_missing_values(self):
        # references: numpy.linalg.lstsq (residuals on intercept + age, pooled over groups),
        # scipy.stats.permutation_test on the residuals (exact), statsmodels multipletests
        # (fdr_bh) across the summaries
        rng = np.random.default_rng(21)
        n_a, n_b = 6, 7
        age_a, age_b = rng.uniform(19, 35, n_a), rng.uniform(19, 35, n_b)
        summaries = []
        for k in range(3):
            a = 0.01 * age_a + rng.normal(0.2 + 0.05 * k, 0.02, n_a)
            b = 0.01 * age_b + rng.normal(0.2, 0.02, n_b)
            summaries.append((f"s{k}", a, b))
        a_missing = summaries[2][1].copy()
        a_missing[1] = np.nan  # that subject has no value for summary s2
        summaries[2] = ("s2", a_missing, summaries[2][2])
        payload = {"summaries": [{"name": n, "a": [None if np.isnan(v) else v for v in a], "b": list(b)}
                                 for n, a, b in summaries],
                   "covariates": [{"name": "age", "a": list(age_a), "b": list(age_b)}]}
        out = ctypes.c_void_p()
        check(lib.cpx_stats_compare_summaries(json.dumps(payload).encode(), b'{"statistic": "welch_t"}',
                                              ctypes.byref(out)))
        rows = take_json(out)["tests"]
        p_ref = []
        for row, (name, a, b) in zip(rows, summaries):
            keep = ~np.isnan(a)
            y = np.concatenate([a[keep], b])
            design = np.column_stack([np.ones(len(y)), np.concatenate([age_a[keep], age_b])])
            r = y - design @ np.linalg.lstsq(design, y, rcond=None)[0]
            ra, rb = r[: keep.sum()], r[keep.sum():]
            ref = stats.permutation_test((ra, rb), welch, vectorized=True, n_resamples=10**9)
            self.assertEqual(row["summary"], name)
            self.assertTrue(row["exact"])
            self.assertEqual(row["missing_a"], int((~keep).sum()))
            self.assertAlmostEqual(row["statistic"], float(ref.statistic), places=9)
            self.assertAlmostEqual(row["p_value"], float(ref.pvalue), places=14)
            p_ref.append(float(ref.pvalue))
        bh = multipletests(p_ref, method="fdr_bh")[1]
        np.testing.assert_allclose([row["p_adjusted"] for row in rows], bh, atol=1e-15)

    def test_error_names_the_summary(self):
        payload = {"summaries": [{"name": "first zero", "a": [0.1], "b": [0.2, 0.3]}]}
        out = ctypes.c_void_p()
        self.assertNotEqual(lib.cpx_stats_compare_summaries(json.dumps(payload).encode(), None, ctypes.byref(out)), 0)
        self.assertIn("first zero", lib.cpx_last_error().decode())


class ClusterTest(unittest.TestCase):
    def test_largest_cluster_against_scipy_permutation_test(self):
        # reference: scipy.stats.permutation_test with the statistic "largest |cluster mass|"
        # (Maris & Oostenveld 2007, J. Neurosci. Methods 164:177): the p-value of the largest
        # observed cluster is P(null max mass >= observed max mass), alternative "greater".
        rng = np.random.default_rng(12)
        points = 30
        a = rng.normal(size=(6, points))
        b = rng.normal(size=(6, points))
        a[:, 10:18] += 1.5
        threshold = 2.0

        pooled = np.vstack([a, b])

        def max_mass(ia, ib):
            # scipy permutes subject indices; the statistic looks the curves up
            t = stats.ttest_ind(pooled[ia.astype(int)], pooled[ib.astype(int)], axis=0).statistic
            best, run, sign = 0.0, 0.0, 0
            for v in t:
                s = 1 if v > threshold else (-1 if v < -threshold else 0)
                run = run + v if (s != 0 and s == sign) else (v if s != 0 else 0.0)
                sign = s
                best = max(best, abs(run))
            return best

        ref = stats.permutation_test((np.arange(6.0), np.arange(6.0, 12.0)), max_mass, vectorized=False, n_resamples=10**9, alternative="greater")
        aa, pa = arr(a)
        bb, pb = arr(b)
        out = ctypes.c_void_p()
        check(lib.cpx_stats_cluster_test(pa, 6, pb, 6, points, ROW_MAJOR, b'{"threshold": 2.0}', ctypes.byref(out)))
        ours = take_json(out)
        self.assertTrue(ours["exact"])
        self.assertEqual(ours["null_size"], math.comb(12, 6))
        np.testing.assert_allclose(ours["t"], stats.ttest_ind(a, b, axis=0).statistic, atol=1e-12)
        largest = max(ours["clusters"], key=lambda c: abs(c["mass"]))
        self.assertAlmostEqual(abs(largest["mass"]), float(ref.statistic), places=10)
        self.assertAlmostEqual(largest["p_value"], float(ref.pvalue), places=14)
        self.assertLessEqual(largest["first"], 17)  # overlaps the shifted stretch 10..17
        self.assertGreaterEqual(largest["last"], 10)

    def test_default_threshold_is_student_quantile(self):
        # reference: scipy.stats.t.ppf(0.975, n_a + n_b - 2)
        rng = np.random.default_rng(1)
        a, b = rng.normal(size=(5, 4)), rng.normal(size=(7, 4))
        aa, pa = arr(a)
        bb, pb = arr(b)
        out = ctypes.c_void_p()
        check(lib.cpx_stats_cluster_test(pa, 5, pb, 7, 4, ROW_MAJOR, None, ctypes.byref(out)))
        self.assertAlmostEqual(take_json(out)["threshold"], stats.t.ppf(0.975, 10), places=9)


if __name__ == "__main__":
    unittest.main()

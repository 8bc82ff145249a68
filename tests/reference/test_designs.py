"""Study designs of critplex (cpx_stats_design_test) against scipy.stats, statsmodels and
independent Python implementations written here from the published algorithms.

References (Debian packages): scipy 1.10 (python3-scipy): stats.permutation_test,
stats.ttest_rel, stats.f_oneway, stats.pearsonr, stats.spearmanr; statsmodels 0.13
(python3-statsmodels): OLS, RegressionResults.compare_f_test; numpy (python3-numpy).
Freedman-Lane: Freedman & Lane (1983), J Bus Econ Stat 1:292-298, as stated by Winkler et
al. (2014), NeuroImage 92:381-397, Table 2 ("Freedman-Lane": permute the residuals of the
reduced model, add the reduced fit back, refit the full model).
The data are drawn from numpy's seeded generator (invented numbers, no people).
"""
import ctypes
import itertools
import json
import math
import os
import unittest

import numpy as np
import statsmodels.api as sm
from scipy import stats

lib = ctypes.CDLL(os.environ["CRITPLEX_LIBRARY"])
lib.cpx_last_error.restype = ctypes.c_char_p
lib.cpx_string_free.argtypes = [ctypes.c_void_p]
lib.cpx_stats_design_test.argtypes = [ctypes.c_char_p, ctypes.c_char_p, ctypes.POINTER(ctypes.c_void_p)]


def design_test(data, design):
    out = ctypes.c_void_p()
    status = lib.cpx_stats_design_test(json.dumps(data).encode(), json.dumps(design).encode(), ctypes.byref(out))
    if status != 0:
        raise RuntimeError(lib.cpx_last_error().decode())
    text = ctypes.cast(out, ctypes.c_char_p).value.decode()
    lib.cpx_string_free(out)
    return json.loads(text)


def paired_data(first, second):
    n = len(first)
    return {"subject": [f"v{i:02d}" for i in range(n)] * 2, "session": ["rested"] * n + ["deprived"] * n,
            "measures": [{"name": "first_chi_zero", "values": list(map(float, first)) + list(map(float, second))}]}


def rows_data(y, group=None, columns=None):
    data = {"subject": [f"v{i:02d}" for i in range(len(y))], "measures": [{"name": "m", "values": list(map(float, y))}]}
    if group is not None:
        data["group"] = list(group)
    if columns:
        data["columns"] = {k: list(map(float, v)) for k, v in columns.items()}
    return data


def t_of_first_column(y, design):
    """OLS t of the first column of `design` for each column of y (n x m), numpy only."""
    pinv = np.linalg.pinv(design)
    beta = pinv @ y
    resid = y - design @ beta
    df = design.shape[0] - design.shape[1]
    cov = np.linalg.inv(design.T @ design)
    return beta[0] / np.sqrt((resid ** 2).sum(axis=0) / df * cov[0, 0])


def freedman_lane_t(y, x, z, permutations):
    """Independent Freedman-Lane (Winkler et al. 2014, Table 2): the residuals of y ~ Z are
    permuted (rows of `permutations`), the fit of y ~ Z added back, then t of x in y ~ [x Z]."""
    hz = z @ np.linalg.pinv(z)
    fitted = hz @ y
    resid = y - fitted
    ystar = fitted[:, None] + resid[permutations].T  # n x m
    return t_of_first_column(ystar, np.column_stack([x, z]))


def two_sided(null, observed, exact):
    gamma = 1e-10 * max(1.0, abs(observed))
    add = 0 if exact else 1
    ge = (np.sum(null >= observed - gamma) + add) / (len(null) + add)
    le = (np.sum(null <= observed + gamma) + add) / (len(null) + add)
    return min(1.0, 2 * min(ge, le))


class Paired(unittest.TestCase):
    # reference: scipy.stats.permutation_test(permutation_type="samples"), exact; scipy.stats.ttest_rel
    def test_exact_sign_flips_match_scipy(self):
        rng = np.random.default_rng(11)
        for n in (6, 9, 11):
            rested = rng.normal(0.30, 0.05, n)
            deprived = rested + rng.normal(0.02, 0.03, n)
            ours = design_test(paired_data(rested, deprived), {"design": "paired", "permutations": 4096})["tests"][0]
            ref = stats.permutation_test((deprived, rested), lambda a, b, axis=-1: np.mean(a - b, axis=axis),
                                         permutation_type="samples", vectorized=True, n_resamples=10 ** 9)
            self.assertTrue(ours["exact"])
            self.assertEqual(ours["null_size"], 2 ** n)
            self.assertAlmostEqual(ours["p_value"], ref.pvalue, places=12)
            tt = stats.ttest_rel(deprived, rested)
            self.assertAlmostEqual(ours["value"], tt.statistic, places=10)
            self.assertAlmostEqual(ours["p_parametric"], tt.pvalue, places=10)
            self.assertAlmostEqual(ours["estimate"], np.mean(deprived - rested), places=12)
            d = deprived - rested
            self.assertAlmostEqual(ours["effect_value"], d.mean() / d.std(ddof=1), places=10)  # Cohen's d_z
            lo, hi = stats.t.interval(0.95, n - 1, loc=d.mean(), scale=stats.sem(d))
            self.assertAlmostEqual(ours["estimate_interval"][0], lo, places=9)
            self.assertAlmostEqual(ours["estimate_interval"][1], hi, places=9)

    def test_monte_carlo_within_its_error_of_the_exact_p(self):
        # reference: scipy.stats.permutation_test exact (2^15 flips); ours draws 2000 random flips
        rng = np.random.default_rng(5)
        rested = rng.normal(0.3, 0.05, 15)
        deprived = rested + rng.normal(0.01, 0.03, 15)
        ref = stats.permutation_test((deprived, rested), lambda a, b, axis=-1: np.mean(a - b, axis=axis),
                                     permutation_type="samples", vectorized=True, n_resamples=10 ** 9).pvalue
        ours = design_test(paired_data(rested, deprived), {"design": "paired", "permutations": 2000, "seed": 3})
        t = ours["tests"][0]
        self.assertFalse(t["exact"])
        self.assertEqual(t["null_size"], 2000)
        self.assertLess(abs(t["p_value"] - ref), 4 * math.sqrt(ref * (1 - ref) / 2000) + 1e-3)
        again = design_test(paired_data(rested, deprived), {"design": "paired", "permutations": 2000, "seed": 3})
        self.assertEqual(again, ours)  # deterministic for a seed

    def test_subject_without_second_session_is_left_out(self):
        rng = np.random.default_rng(2)
        a, b = rng.normal(size=7), rng.normal(size=7)
        data = paired_data(a, b)
        data["measures"][0]["values"][13] = None
        t = design_test(data, {"design": "paired"})["tests"][0]
        self.assertEqual((t["n"], t["missing"]), (6, 1))
        self.assertAlmostEqual(t["value"], stats.ttest_rel(b[:6], a[:6]).statistic, places=10)


class SeveralGroups(unittest.TestCase):
    # reference: scipy.stats.f_oneway (F and its p); direct enumeration of every assignment
    def test_f_matches_f_oneway_and_direct_enumeration(self):
        rng = np.random.default_rng(21)
        sizes = (2, 2, 3)
        y = rng.normal(size=sum(sizes)) + np.repeat([0.0, 0.8, -0.5], sizes)
        labels = np.repeat(["rested", "nap", "deprived"], sizes)
        ours = design_test(rows_data(y, labels), {"design": "groups", "permutations": 10000})["tests"][0]
        ref = stats.f_oneway(*[y[labels == g] for g in ("rested", "nap", "deprived")])
        self.assertEqual(ours["statistic"], "F")
        self.assertAlmostEqual(ours["value"], ref.statistic, places=10)
        self.assertAlmostEqual(ours["p_parametric"], ref.pvalue, places=10)
        self.assertTrue(ours["exact"])
        # Every distinct split of the 7 rows into groups of 2, 2 and 3 (210 of them).
        null = []
        for first in itertools.combinations(range(7), 2):
            rest = [i for i in range(7) if i not in first]
            for second in itertools.combinations(rest, 2):
                third = [i for i in rest if i not in second]
                null.append(stats.f_oneway(y[list(first)], y[list(second)], y[third]).statistic)
        null = np.array(null)
        self.assertEqual(len(null), 210)
        expected = np.mean(null >= ref.statistic - 1e-10 * ref.statistic)
        self.assertAlmostEqual(ours["p_value"], expected, places=12)
        eta2 = ours["effect_value"]
        grand = y.mean()
        ss_between = sum(len(y[labels == g]) * (y[labels == g].mean() - grand) ** 2 for g in set(labels))
        self.assertAlmostEqual(eta2, ss_between / ((y - grand) ** 2).sum(), places=10)

    def test_f_with_a_covariate_matches_statsmodels(self):
        # reference: statsmodels OLS, compare_f_test of the model with and without the groups
        rng = np.random.default_rng(8)
        n = 24
        labels = np.repeat(["a", "b", "c"], 8)
        age = rng.uniform(20, 40, n)
        y = 0.01 * age + rng.normal(size=n) + np.repeat([0, 0.5, 1.0], 8)
        ours = design_test(rows_data(y, labels, {"age": age}),
                           {"design": "groups", "covariates": ["age"], "permutations": 999})["tests"][0]
        dummies = np.column_stack([labels == "b", labels == "c"]).astype(float)
        full = sm.OLS(y, np.column_stack([np.ones(n), age, dummies])).fit()
        reduced = sm.OLS(y, np.column_stack([np.ones(n), age])).fit()
        f, p, df = full.compare_f_test(reduced)
        self.assertAlmostEqual(ours["value"], f, places=9)
        self.assertAlmostEqual(ours["p_parametric"], p, places=9)
        self.assertEqual((ours["df1"], ours["df2"]), (2, n - 4))


class Regression(unittest.TestCase):
    # reference: statsmodels OLS (slope, standard error, t, p, interval); scipy pearsonr, spearmanr
    def test_slope_and_t_match_statsmodels(self):
        rng = np.random.default_rng(31)
        n = 20
        sleepiness = rng.integers(1, 10, n).astype(float)
        age = rng.uniform(20, 40, n)
        y = 0.3 + 0.01 * sleepiness + 0.002 * age + rng.normal(0, 0.03, n)
        for covariates in ([], ["age"]):
            ours = design_test(rows_data(y, columns={"sleepiness": sleepiness, "age": age}),
                               {"design": "regression", "score": "sleepiness", "covariates": covariates,
                                "permutations": 499})["tests"][0]
            x = np.column_stack([sleepiness, np.ones(n)] + ([age] if covariates else []))
            fit = sm.OLS(y, x).fit()
            self.assertAlmostEqual(ours["estimate"], fit.params[0], places=10)
            self.assertAlmostEqual(ours["value"], fit.tvalues[0], places=8)
            self.assertAlmostEqual(ours["p_parametric"], fit.pvalues[0], places=8)
            lo, hi = fit.conf_int(0.05)[0]
            self.assertAlmostEqual(ours["estimate_interval"][0], lo, places=9)
            self.assertAlmostEqual(ours["estimate_interval"][1], hi, places=9)
            if not covariates:
                self.assertAlmostEqual(ours["effect_value"], stats.pearsonr(sleepiness, y)[0], places=10)
                self.assertAlmostEqual(ours["spearman_rho"], stats.spearmanr(sleepiness, y)[0], places=10)

    def test_exact_pearson_and_spearman_p_match_scipy(self):
        # reference: scipy.stats.permutation_test(permutation_type="pairings"), exact (7! pairings)
        rng = np.random.default_rng(4)
        score = rng.normal(size=7)
        y = 0.7 * score + rng.normal(size=7)
        ours = design_test(rows_data(y, columns={"score": score}),
                           {"design": "regression", "score": "score", "permutations": 5040})["tests"][0]
        self.assertTrue(ours["exact"])
        self.assertEqual(ours["null_size"], 5040)
        # One sample permuted (as scipy's documentation does for correlations): 7! pairings.
        pear = stats.permutation_test((y,), lambda b: stats.pearsonr(score, b)[0],
                                      permutation_type="pairings", n_resamples=10 ** 9)
        spear = stats.permutation_test((y,), lambda b: stats.spearmanr(score, b)[0],
                                       permutation_type="pairings", n_resamples=10 ** 9)
        self.assertAlmostEqual(ours["p_value"], pear.pvalue, places=12)
        self.assertAlmostEqual(ours["spearman_p"], spear.pvalue, places=12)


class FreedmanLane(unittest.TestCase):
    # reference: an independent implementation of Freedman & Lane (1983) written above
    def test_exact_enumeration_equals_the_independent_implementation(self):
        rng = np.random.default_rng(13)
        n = 8
        score = rng.normal(size=n)
        age = rng.normal(size=n)
        y = 0.5 * age + 0.4 * score + rng.normal(size=n)
        ours = design_test(rows_data(y, columns={"score": score, "age": age}),
                           {"design": "regression", "score": "score", "covariates": ["age"],
                            "permutations": 40320})["tests"][0]
        self.assertTrue(ours["exact"])
        perms = np.array(list(itertools.permutations(range(n))))
        z = np.column_stack([np.ones(n), age])
        null = freedman_lane_t(y, score, z, perms)
        observed = t_of_first_column(y[:, None], np.column_stack([score, z]))[0]
        self.assertAlmostEqual(ours["value"], observed, places=10)
        self.assertAlmostEqual(ours["p_value"], two_sided(null, observed, True), places=12)

    def test_monte_carlo_agrees_within_its_error(self):
        # The two programs draw different permutations: compare with the Monte Carlo error.
        rng = np.random.default_rng(17)
        n = 30
        group = np.repeat(["rested", "deprived"], 15)
        age = rng.uniform(20, 40, n)
        y = 0.02 * age + 0.35 * (group == "deprived") + rng.normal(0, 0.5, n)
        ours = design_test(rows_data(y, group, {"age": age}),
                           {"design": "two_groups", "covariates": ["age"], "permutations": 4000, "seed": 9})
        t = ours["tests"][0]
        x = (group == "deprived").astype(float)
        z = np.column_stack([np.ones(n), age])
        gen = np.random.default_rng(100)
        perms = np.array([gen.permutation(n) for _ in range(40000)])
        null = freedman_lane_t(y, x, z, perms)
        observed = t_of_first_column(y[:, None], np.column_stack([x, z]))[0]
        ref = two_sided(null, observed, False)
        self.assertAlmostEqual(t["value"], observed, places=9)
        fit = sm.OLS(y, np.column_stack([x, z])).fit()
        self.assertAlmostEqual(t["estimate"], fit.params[0], places=10)
        self.assertLess(abs(t["p_value"] - ref), 4 * math.sqrt(ref * (1 - ref) * (1 / 4000 + 1 / 40000)) + 1e-3)


class Blocks(unittest.TestCase):
    # property (test hook record_permutations): every rearrangement keeps rows in their block
    def check_blocks(self, permutations, expect_exact):
        rng = np.random.default_rng(3)
        site = np.array([1, 1, 2, 2, 2, 3, 3, 1, 3, 2], dtype=float)
        group = np.array(["rested", "deprived"] * 5)
        y = rng.normal(size=10)
        out = design_test(rows_data(y, group, {"site": site}),
                          {"design": "two_groups", "blocks": "site", "permutations": permutations,
                           "record_permutations": True})
        used = np.array(out["permutations_used"])
        t = out["tests"][0]
        self.assertEqual(t["exact"], expect_exact)
        self.assertEqual(len(used), t["null_size"])
        for perm in used:
            self.assertEqual(sorted(perm), list(range(10)))
            np.testing.assert_array_equal(site[perm], site)
        return used

    def test_exact_enumerates_every_within_block_permutation(self):
        used = self.check_blocks(1000, True)
        self.assertEqual(len(used), math.factorial(3) * math.factorial(4) * math.factorial(3))  # 864
        self.assertEqual(len({tuple(p) for p in used}), 864)

    def test_monte_carlo_stays_within_blocks(self):
        used = self.check_blocks(300, False)
        self.assertGreater(len({tuple(p) for p in used}), 250)


def clusters_of(stat, threshold, signed):
    """Runs of points beyond the threshold with one sign; mass = sum (Maris & Oostenveld 2007)."""
    out, p = [], 0
    sign_of = (lambda v: 1 if v > threshold else (-1 if signed and v < -threshold else 0))
    while p < len(stat):
        s = sign_of(stat[p])
        if s == 0:
            p += 1
            continue
        first, mass = p, 0.0
        while p < len(stat) and sign_of(stat[p]) == s:
            mass += stat[p]
            p += 1
        out.append((first, p - 1, s, mass))
    return out


def cluster_p(observed_stat, null_stats, threshold, signed):
    """Each observed cluster's p: share of rearrangements (identity included, exact) whose
    largest |mass| reaches its |mass|."""
    largest = np.array([max([abs(c[3]) for c in clusters_of(s, threshold, signed)], default=0.0) for s in null_stats])
    return [(c[0], c[1], c[2], c[3], np.mean(largest >= abs(c[3]) - 1e-10 * max(1, abs(c[3]))))
            for c in clusters_of(observed_stat, threshold, signed)]


class CurvesAlongDensity(unittest.TestCase):
    # reference: an independent cluster-mass implementation (Maris & Oostenveld 2007) written
    # above, with every rearrangement enumerated; t and F per point from numpy / scipy.stats.f_oneway
    def compare(self, ours, expected):
        self.assertTrue(ours["exact"])
        got = [(c["first"], c["last"], c["sign"], c["mass"], c["p_value"]) for c in ours["clusters"]]
        self.assertEqual(len(got), len(expected))
        self.assertGreater(len(got), 0)
        for g, e in zip(got, expected):
            self.assertEqual(g[:3], e[:3])
            self.assertAlmostEqual(g[3], e[3], places=9)
            self.assertAlmostEqual(g[4], e[4], places=12)

    def test_paired_curves_by_sign_flips(self):
        rng = np.random.default_rng(41)
        n, points = 8, 12
        density = np.linspace(0.02, 0.24, points)
        rested = rng.normal(size=(n, points)).cumsum(axis=1)
        bump = np.where((density > 0.08) & (density < 0.18), 1.5, 0.0)
        deprived = rested + bump + rng.normal(0, 0.8, (n, points))
        data = {"subject": [f"v{i}" for i in range(n)] * 2, "session": ["rested"] * n + ["deprived"] * n,
                "measures": [{"name": "m", "values": [0.0] * (2 * n)}], "density": list(density),
                "curves": {"chi": rested.tolist() + deprived.tolist()}}
        out = design_test(data, {"design": "paired", "curves": ["chi"], "permutations": 256})
        ours = out["curve_tests"][0]
        d = deprived - rested
        def t_of(x):
            return x.mean(axis=0) / (x.std(axis=0, ddof=1) / np.sqrt(n))
        flips = np.array(list(itertools.product([1, -1], repeat=n)))
        null = [t_of(f[:, None] * d) for f in flips]
        threshold = stats.t.ppf(0.975, n - 1)
        self.assertAlmostEqual(ours["threshold"], threshold, places=8)
        np.testing.assert_allclose(ours["values"], t_of(d), rtol=1e-10)
        self.compare(ours, cluster_p(t_of(d), null, threshold, True))

    def test_several_groups_curves_by_permutation(self):
        rng = np.random.default_rng(43)
        sizes, points = (2, 2, 3), 10
        n = sum(sizes)
        labels = np.repeat(["rested", "nap", "deprived"], sizes)
        shift = np.repeat([0.0, 2.0, 4.0], sizes)[:, None] * np.r_[np.zeros(3), np.ones(4), np.zeros(3)]
        curves = rng.normal(size=(n, points)) + shift
        data = {"subject": [f"v{i}" for i in range(n)], "group": list(labels),
                "measures": [{"name": "m", "values": [0.0] * n}], "density": list(np.linspace(0.01, 0.1, points)),
                "curves": {"betti_1": curves.tolist()}}
        ours = design_test(data, {"design": "groups", "curves": ["betti_1"], "permutations": 5040})["curve_tests"][0]
        def f_of(c):
            return stats.f_oneway(*[c[labels == g] for g in ("rested", "nap", "deprived")], axis=0).statistic
        null = [f_of(curves[list(p)]) for p in itertools.permutations(range(n))]
        threshold = stats.f.ppf(0.95, 2, n - 3)
        self.assertAlmostEqual(ours["threshold"], threshold, places=8)
        self.compare(ours, cluster_p(f_of(curves), null, threshold, False))

    def test_regression_curves_with_a_covariate(self):
        rng = np.random.default_rng(47)
        n, points = 7, 9
        score, age = rng.normal(size=n), rng.normal(size=n)
        curves = rng.normal(size=(n, points)) + np.outer(score, np.r_[0, 0, 3, 3, 3, 3, 0, 0, 0]) + np.outer(age, np.ones(points))
        data = {"subject": [f"v{i}" for i in range(n)], "columns": {"score": list(score), "age": list(age)},
                "measures": [{"name": "m", "values": [0.0] * n}], "density": list(np.linspace(0.01, 0.09, points)),
                "curves": {"chi": curves.tolist()}}
        ours = design_test(data, {"design": "regression", "score": "score", "covariates": ["age"], "curves": ["chi"],
                                  "permutations": 5040})["curve_tests"][0]
        z = np.column_stack([np.ones(n), age])
        perms = np.array(list(itertools.permutations(range(n))))
        per_point = np.array([freedman_lane_t(curves[:, p], score, z, perms) for p in range(points)]).T  # perms x points
        observed = t_of_first_column(curves, np.column_stack([score, z]))
        threshold = stats.t.ppf(0.975, n - 3)
        self.compare(ours, cluster_p(observed, per_point, threshold, True))


def tfce_along(stat, signed, dh=0.1, e_power=0.5, h_power=2.0):
    """Threshold-free cluster enhancement in one dimension (Smith & Nichols 2009, NeuroImage
    44:83-98): sum over heights h = dh, 2dh, ... of extent(h)^E h^H dh."""
    out = np.zeros(len(stat))
    for sign in ((1, -1) if signed else (1,)):
        v = sign * np.asarray(stat)
        k = 1
        while k * dh <= v.max():
            h = k * dh
            above = v >= h
            p = 0
            while p < len(v):
                if not above[p]:
                    p += 1
                    continue
                end = p
                while end < len(v) and above[end]:
                    end += 1
                out[p:end] += sign * (end - p) ** e_power * h ** h_power * dh
                p = end
            k += 1
    return out


class ThresholdFree(unittest.TestCase):
    # reference: an independent 1-D TFCE (Smith & Nichols 2009) written above, all 2^7 flips
    def test_paired_tfce_matches_the_independent_implementation(self):
        rng = np.random.default_rng(61)
        n, points = 7, 11
        density = np.linspace(0.02, 0.22, points)
        rested = rng.normal(size=(n, points))
        deprived = rested + np.where((density > 0.06) & (density < 0.16), 1.2, 0.0) + rng.normal(0, 0.7, (n, points))
        data = {"subject": [f"v{i}" for i in range(n)] * 2, "session": ["rested"] * n + ["deprived"] * n,
                "measures": [{"name": "m", "values": [0.0] * (2 * n)}], "density": list(density),
                "curves": {"chi": rested.tolist() + deprived.tolist()}}
        ours = design_test(data, {"design": "paired", "curves": ["chi"], "curve_statistic": "tfce",
                                  "permutations": 128})["curve_tests"][0]
        d = deprived - rested
        def t_of(x):
            return x.mean(axis=0) / (x.std(axis=0, ddof=1) / np.sqrt(n))
        observed = tfce_along(t_of(d), True)
        np.testing.assert_allclose(ours["tfce"], observed, rtol=1e-9, atol=1e-12)
        flips = np.array(list(itertools.product([1, -1], repeat=n)))
        largest = np.array([np.abs(tfce_along(t_of(f[:, None] * d), True)).max() for f in flips])
        expected_p = [np.mean(largest >= abs(v) - 1e-10 * max(1, abs(v))) for v in observed]
        np.testing.assert_allclose(ours["tfce_p"], expected_p, rtol=0, atol=1e-12)
        self.assertLess(min(ours["tfce_p"]), 0.1)


class Mixed(unittest.TestCase):
    # reference: scipy.stats.ttest_ind and permutation_test(permutation_type="independent",
    # exact) on the per-subject differences (interaction) and means (between);
    # statsmodels OLS and scipy permutation_test("samples") for the within effect
    def test_split_plot_terms(self):
        rng = np.random.default_rng(53)
        n_per = 4
        groups = np.repeat(["rested_first", "deprived_first"], n_per)
        n = 2 * n_per
        before = rng.normal(0.3, 0.05, n)
        after = before + 0.03 + 0.04 * (groups == "deprived_first") + rng.normal(0, 0.02, n)
        data = {"subject": [f"v{i}" for i in range(n)] * 2, "session": ["one"] * n + ["two"] * n,
                "group": list(groups) * 2, "measures": [{"name": "m", "values": list(before) + list(after)}]}
        out = design_test(data, {"design": "mixed", "permutations": 40320})
        terms = {t["term"]: t for t in out["tests"]}
        self.assertEqual(set(terms), {"within", "between", "interaction"})
        d, mean2 = after - before, (after + before) / 2
        a, b = groups == "rested_first", groups == "deprived_first"
        for term, values in (("interaction", d), ("between", mean2)):
            t = terms[term]
            ref = stats.ttest_ind(values[b], values[a])
            self.assertAlmostEqual(t["value"], ref.statistic, places=9)
            self.assertAlmostEqual(t["p_parametric"], ref.pvalue, places=9)
            perm = stats.permutation_test((values[b], values[a]), lambda x, y, axis=-1: np.mean(x, axis=axis) - np.mean(y, axis=axis),
                                          permutation_type="independent", vectorized=True, n_resamples=10 ** 9)
            self.assertTrue(t["exact"])
            self.assertAlmostEqual(t["p_value"], perm.pvalue, places=12)
        # within: intercept of d ~ 1 + centred group indicator (statsmodels OLS); its
        # permutation p against an independent sign-flip Freedman-Lane over all 2^8 flips.
        zc = b.astype(float) - b.mean()
        fit = sm.OLS(d, np.column_stack([np.ones(n), zc])).fit()
        w = terms["within"]
        self.assertAlmostEqual(w["value"], fit.tvalues[0], places=9)
        self.assertAlmostEqual(w["estimate"], fit.params[0], places=12)
        fitted = zc * (zc @ d) / (zc @ zc)
        resid = d - fitted
        flips = np.array(list(itertools.product([1, -1], repeat=n)))
        ystar = fitted[:, None] + (flips * resid).T
        null = t_of_first_column(ystar, np.column_stack([np.ones(n), zc]))
        self.assertTrue(w["exact"])
        self.assertAlmostEqual(w["p_value"], two_sided(null, fit.tvalues[0], True), places=12)


class Errors(unittest.TestCase):
    def test_messages_name_the_key_or_column(self):
        data = rows_data([1.0, 2.0, 3.0, 4.0], ["a", "a", "b", "b"])
        cases = [({"design": "regression"}, "score"),
                 ({"design": "regression", "score": "sleepiness"}, "sleepiness"),
                 ({"design": "two_groups", "covariates": ["age"]}, "age"),
                 ({"design": "two_groups", "blockz": "site"}, "blockz"),
                 ({"design": "three_groups"}, "design"),
                 ({"design": "paired"}, "levels")]
        for design, word in cases:
            with self.assertRaises(RuntimeError) as caught:
                design_test(data, design)
            self.assertIn(word, str(caught.exception))


if __name__ == "__main__":
    unittest.main()

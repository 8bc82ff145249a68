"""Group tables of `critplex compare` on a simulated cohort with a covariate, checked
against outside references:
  - raw means and SDs: numpy (python3-numpy), mean and sample SD (ddof = 1);
  - adjusted means: statsmodels OLS (python3-statsmodels) of summary ~ 1 + group + age,
    predicted at the mean age for each group ("estimated marginal means", common practice);
  - Hedges g: residuals of statsmodels OLS summary ~ 1 + age, pooled SD and the exact
    correction J(df) = Gamma(df/2) / (sqrt(df/2) Gamma((df-1)/2)) (Hedges 1981), with
    scipy.special.gamma;
  - the g interval: hand computation of the Hedges & Olkin (1985, Statistical Methods
    for Meta-Analysis, ch. 5) normal approximation var(g) = (n1+n2)/(n1 n2) +
    g^2/(2(n1+n2)), with scipy.stats.norm.ppf for the quantile;
  - resamples reported == resamples used: a seeded reproduction through the C library
    (the same seed and the reported count give the same band and p-value; one
    relabelling fewer gives a different p-value), and the reported counts equal the
    asked ones.
The cohort is invented demo data (the simulated sleep laboratory)."""
import csv
import ctypes
import hashlib
import json
import math
import os
import subprocess
import tempfile
import unittest

import numpy as np
import statsmodels.api as sm
from scipy import special, stats

CLI = os.environ["CRITPLEX_CLI"]
lib = ctypes.CDLL(os.environ["CRITPLEX_LIBRARY"])
dp = ctypes.POINTER(ctypes.c_double)
lib.cpx_last_error.restype = ctypes.c_char_p
lib.cpx_string_free.argtypes = [ctypes.c_void_p]
lib.cpx_stats_bootstrap_band.argtypes = [dp, ctypes.c_size_t, ctypes.c_size_t, ctypes.c_int, ctypes.c_char_p,
                                         ctypes.POINTER(ctypes.c_void_p)]
lib.cpx_stats_permutation_test.argtypes = [dp, ctypes.c_size_t, dp, ctypes.c_size_t, ctypes.c_char_p,
                                           ctypes.POINTER(ctypes.c_void_p)]

CONFIG = {
    "connect": {"method": "pearson", "sampling_interval": 0.8,
                "filter": {"design": "butterworth", "order": 2, "low_hz": 0.01, "high_hz": 0.2}},
    "sweep": {"max_density": 0.6, "grid": 0.025, "curvature": {}},
}
RESAMPLES = 499  # Monte Carlo everywhere: exact_limit 100 < C(9, 4) = 126 relabellings


def run(*args):
    p = subprocess.run([CLI, *args], capture_output=True, text=True)
    if p.returncode != 0:
        raise AssertionError(f"critplex {' '.join(args)} failed ({p.returncode}):\n{p.stdout}\n{p.stderr}")
    return p


def take_json(ptr):
    text = ctypes.cast(ptr, ctypes.c_char_p).value.decode()
    lib.cpx_string_free(ptr)
    return json.loads(text)


def band(curves, **options):
    c = np.ascontiguousarray(curves, dtype=np.float64)
    out = ctypes.c_void_p()
    if lib.cpx_stats_bootstrap_band(c.ctypes.data_as(dp), c.shape[0], c.shape[1], 0, json.dumps(options).encode(),
                                    ctypes.byref(out)) != 0:
        raise RuntimeError(lib.cpx_last_error().decode())
    return take_json(out)


def permutation(a, b, **options):
    a = np.ascontiguousarray(a, dtype=np.float64)
    b = np.ascontiguousarray(b, dtype=np.float64)
    out = ctypes.c_void_p()
    if lib.cpx_stats_permutation_test(a.ctypes.data_as(dp), len(a), b.ctypes.data_as(dp), len(b),
                                      json.dumps(options).encode(), ctypes.byref(out)) != 0:
        raise RuntimeError(lib.cpx_last_error().decode())
    return take_json(out)


class GroupTables(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.tmp = tempfile.TemporaryDirectory()
        study = os.path.join(cls.tmp.name, "study")
        run("simulate", "--out", study, "--subjects", "5", "--regions", "20", "--frames", "200", "--seed", "5",
            "--effect", "0.8")
        config = os.path.join(cls.tmp.name, "config.json")
        with open(config, "w") as f:
            json.dump(CONFIG, f)
        cls.out = os.path.join(cls.tmp.name, "results")
        run("cohort", os.path.join(study, "manifest.tsv"), "--config", config, "--out", cls.out)
        cls.options = {"covariates": ["age"], "resamples": RESAMPLES, "exact_limit": 100, "seed": 4,
                       "primary": ["kappa_sd_at_first_chi_zero", "first_chi_zero"]}
        run("compare", cls.out, "--options", json.dumps(cls.options))
        with open(os.path.join(study, "manifest.tsv")) as f:
            cls.age = {r["subject"]: float(r["age"]) for r in csv.DictReader(f, delimiter="\t")}
        with open(os.path.join(cls.out, "group_comparison.json")) as f:
            cls.doc = json.load(f)
        with open(os.path.join(cls.out, "group_tests.tsv")) as f:
            cls.rows = list(csv.DictReader(f, delimiter="\t"))

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def group_values(self, summary):
        """(values, ages) of group a (the later group) and group b (the first), subjects with a value."""
        b, a = self.doc["groups"]
        out = []
        for g in (a, b):
            v = np.array([np.nan if x is None else x for x in g["summaries"][summary]])
            ages = np.array([self.age[s] for s in g["subjects"]])
            keep = ~np.isnan(v)
            out.append((v[keep], ages[keep]))
        return out

    def rows_tested(self):
        rows = [r for r in self.rows if r["p_value"] != "n/a"]
        self.assertGreaterEqual(len(rows), 3)
        return rows

    def test_raw_and_adjusted_means_against_statsmodels(self):
        for row in self.rows_tested():
            (ya, aa), (yb, ab) = self.group_values(row["summary"])
            self.assertEqual((int(row["n_a"]), int(row["n_b"])), (len(ya), len(yb)))
            # raw means and SDs: numpy
            self.assertAlmostEqual(float(row["mean_a"]), ya.mean(), delta=1e-12 * max(1, abs(ya.mean())))
            self.assertAlmostEqual(float(row["mean_b"]), yb.mean(), delta=1e-12 * max(1, abs(yb.mean())))
            self.assertAlmostEqual(float(row["sd_a"]), ya.std(ddof=1), delta=1e-12 * max(1, ya.std()))
            self.assertAlmostEqual(float(row["sd_b"]), yb.std(ddof=1), delta=1e-12 * max(1, yb.std()))
            # adjusted means: statsmodels OLS summary ~ 1 + group + age at the mean age
            y = np.concatenate([ya, yb])
            group = np.concatenate([np.ones(len(ya)), np.zeros(len(yb))])
            age = np.concatenate([aa, ab])
            fit = sm.OLS(y, sm.add_constant(np.column_stack([group, age]))).fit()
            at_a, at_b = fit.predict(np.array([[1.0, 1.0, age.mean()], [1.0, 0.0, age.mean()]]))
            scale = max(1e-12, abs(y).max())
            self.assertAlmostEqual(float(row["adjusted_mean_a"]), at_a, delta=1e-10 * scale, msg=row["summary"])
            self.assertAlmostEqual(float(row["adjusted_mean_b"]), at_b, delta=1e-10 * scale, msg=row["summary"])
            self.assertEqual(row["covariates"], "age")
            self.assertEqual(row["tested_on"], "covariate residuals")
            # Hedges g of the residuals of summary ~ 1 + age (statsmodels), Hedges (1981) correction
            r = sm.OLS(y, sm.add_constant(age)).fit().resid
            ra, rb = r[: len(ya)], r[len(ya):]
            df = len(ra) + len(rb) - 2
            pooled = math.sqrt(((len(ra) - 1) * ra.var(ddof=1) + (len(rb) - 1) * rb.var(ddof=1)) / df)
            j = special.gamma(df / 2) / (math.sqrt(df / 2) * special.gamma((df - 1) / 2))
            g = j * (ra.mean() - rb.mean()) / pooled
            self.assertAlmostEqual(float(row["hedges_g"]), g, delta=1e-9 * max(1, abs(g)), msg=row["summary"])
        self.assertIn("summary ~ 1 + group + age", self.doc["covariate_model"])

    def test_g_interval_by_hand(self):
        # Hedges & Olkin (1985): g -/+ z_{0.975} sqrt((n1+n2)/(n1 n2) + g^2 / (2 (n1+n2)))
        z = stats.norm.ppf(0.975)
        for row in self.rows_tested():
            g, n1, n2 = float(row["hedges_g"]), int(row["n_a"]), int(row["n_b"])
            se = math.sqrt((n1 + n2) / (n1 * n2) + g * g / (2 * (n1 + n2)))
            self.assertAlmostEqual(float(row["hedges_g_lower"]), g - z * se, delta=1e-12)
            self.assertAlmostEqual(float(row["hedges_g_upper"]), g + z * se, delta=1e-12)
        self.assertIn("Hedges & Olkin (1985)", self.doc["effect_size"])

    def test_resamples_reported_are_resamples_used(self):
        self.assertEqual(self.doc["bootstrap"]["resamples"], RESAMPLES)
        for row in self.rows_tested():
            self.assertEqual(row["exact"], "false")
            self.assertEqual(int(row["null_size"]), RESAMPLES)
        for cl in self.doc["clusters"]:
            if "note" not in cl:
                self.assertEqual(cl["null_size"], RESAMPLES)
        # Seeded reproduction of the bands: the reported count and seed give the same band,
        # one resample fewer gives another (so the count is the one the band was drawn with).
        # A curve with continuous values (chi is an integer count, so its quantiles often tie).
        group = self.doc["groups"][0]
        self.assertIn("kappa_mean", group["curves"])
        curves = []
        for s in group["subjects"]:
            with open(os.path.join(self.out, f"sub-{s}_topology.json")) as f:
                curves.append(json.load(f)["bands"][0]["curves"]["kappa_mean"])
        curves = np.array(curves, dtype=float)
        stored = group["curves"]["kappa_mean"]
        self.assertEqual(stored["resamples"], RESAMPLES)
        same = band(curves, resamples=RESAMPLES, seed=4, confidence=0.95)
        self.assertEqual(same["lower"], stored["lower"])
        self.assertEqual(same["upper"], stored["upper"])
        # Seeded reproduction of a summary test's Monte Carlo p-value from its residuals.
        row = self.rows_tested()[0]
        (ya, aa), (yb, ab) = self.group_values(row["summary"])
        y, age = np.concatenate([ya, yb]), np.concatenate([aa, ab])
        r = sm.OLS(y, sm.add_constant(age)).fit().resid
        ours = permutation(r[: len(ya)], r[len(ya):], resamples=RESAMPLES, exact_limit=100, seed=4)
        self.assertEqual(ours["null_size"], RESAMPLES)
        self.assertAlmostEqual(float(row["p_value"]), ours["p_value"], delta=1e-15)
        # ... and one relabelling fewer gives another p-value (its denominator is m + 1).
        fewer = permutation(r[: len(ya)], r[len(ya):], resamples=RESAMPLES - 1, exact_limit=100, seed=4)
        self.assertNotEqual(float(row["p_value"]), fewer["p_value"])

    def test_order_family_and_headline_null(self):
        summaries = [r["summary"] for r in self.rows]
        self.assertEqual(summaries[:2], self.options["primary"])
        self.assertEqual([r["headline"] for r in self.rows[:2]], ["true", "true"])
        self.assertTrue(all(r["headline"] == "false" for r in self.rows[2:]))
        tested = len(self.rows_tested())
        self.assertIn(f"all {tested} tested rows", self.doc["multiple_comparisons"])
        head = [t for t in self.doc["tests"] if t["headline"] and "p_value" in t]
        self.assertTrue(head)
        for t in head:
            self.assertEqual(sum(t["null_histogram"]["counts"]), RESAMPLES)
            self.assertLessEqual(t["null_histogram"]["edges"][0], t["value"])
            self.assertGreaterEqual(t["null_histogram"]["edges"][-1], t["value"])

    def test_provenance_and_quality(self):
        # references: Python hashlib (SHA-256 of each input), the subject documents' own
        # connectivity records, and the config file as written
        prov = self.doc["provenance"]
        with open(os.path.join(self.out, "cohort_config.json")) as f:
            self.assertEqual(prov["config_given"]["cohort_config"], json.load(f))
        self.assertEqual(prov["config_given"]["compare"], self.options)
        resolved = prov["config_resolved"]
        self.assertEqual(resolved["connect"]["method"], "pearson")
        self.assertIn("clean", resolved["connect"])  # defaults shown even when not given
        self.assertEqual(resolved["null"]["min_draws_for_z"], 100)
        self.assertEqual(resolved["compare"]["resamples"], RESAMPLES)
        self.assertIn("max_density", resolved["sweep"])
        self.assertTrue(prov["versions"]["critplex"])
        subjects = [s for g in self.doc["groups"] for s in g["subjects"]]
        self.assertEqual(sorted(q["subject"] for q in prov["quality"]), sorted(subjects))
        for q in prov["quality"]:
            with open(os.path.join(self.out, f"sub-{q['subject']}_topology.json")) as f:
                info = json.load(f)["bands"][0]["connectivity"]
            self.assertEqual(q["status"], "done")
            self.assertEqual((q["frames"], q["frames_used"]), (info["frames"], info["frames_used"]))
            self.assertEqual(q["frames_censored"], info["frames"] - info["frames_used"])
        for entry in prov["inputs"]:
            ts = entry["inputs"]["timeseries"]
            with open(ts["path"], "rb") as f:
                self.assertEqual(ts["sha256"], hashlib.sha256(f.read()).hexdigest())

    def test_failed_subject_in_quality_table(self):
        manifest = os.path.join(self.tmp.name, "study", "manifest.tsv")
        with open(manifest) as f:
            lines = f.read().splitlines()
        broken = os.path.join(self.tmp.name, "broken.tsv")
        with open(broken, "w") as f:
            f.write("a\tb\n1\t2\n3\n")
        cells = lines[1].split("\t")
        cells[2] = broken
        bad_manifest = os.path.join(self.tmp.name, "manifest-broken.tsv")
        with open(bad_manifest, "w") as f:
            f.write("\n".join([lines[0], "\t".join(cells)] + [
                "\t".join(c if i != 2 or os.path.isabs(c) else os.path.join(self.tmp.name, "study", c)
                          for i, c in enumerate(l.split("\t"))) for l in lines[2:]]) + "\n")
        config = os.path.join(self.tmp.name, "config.json")
        out = os.path.join(self.tmp.name, "broken-results")
        subprocess.run([CLI, "cohort", bad_manifest, "--config", config, "--out", out], capture_output=True)
        run("compare", out, "--resamples", "99")
        with open(os.path.join(out, "group_comparison.json")) as f:
            quality = json.load(f)["provenance"]["quality"]
        failed = [q for q in quality if q["status"] == "failed"]
        self.assertEqual([q["subject"] for q in failed], [cells[0]])
        self.assertIn("broken.tsv", failed[0]["message"])
        run("report", out)
        with open(os.path.join(out, "report.html")) as f:
            html = f.read()
        self.assertTrue('id="quality-table"' in html and "broken.tsv" in html, "the failure is in the report")

    def test_methods_paragraph_follows_the_config(self):
        # The paragraph is generated from the resolved config: every setting named here
        # comes from CONFIG / the compare options above; every citation in the text has
        # its entry in the reference list and no unused method is cited.
        target = os.path.join(self.tmp.name, "elsewhere", "report.html")
        os.makedirs(os.path.dirname(target), exist_ok=True)
        run("report", self.out, "--out", target)
        with open(os.path.join(os.path.dirname(target), "methods.md")) as f:
            md = f.read()
        text, refs = md.split("## References")
        for phrase in ["0.01-0.2 Hz", "order 2", "Pearson correlation", "from 0 to 0.6 in steps of 0.025",
                       f"drawing {RESAMPLES} random relabellings", "age was regressed out", "Hedges & Olkin 1985",
                       "Knill 2011", "not a medical device"]:
            self.assertIn(phrase, text)
        for cited, first_author in [("Butterworth 1930", "Butterworth S"), ("Hedges 1981", "Hedges LV (1981)"),
                                    ("Benjamini & Hochberg 1995", "Benjamini Y"), ("Knill 2011", "Knill O"),
                                    ("Maris & Oostenveld 2007", "Maris E"), ("Phipson & Smyth 2010", "Phipson B")]:
            self.assertIn(cited, text)
            self.assertIn(first_author, refs)
        for unused in ["Ledoit", "Lachaux", "Maslov", "Theiler", "Edelsbrunner"]:  # no such method in this run
            self.assertNotIn(unused, md)
        with open(target) as f:
            html = f.read()
        self.assertTrue('id="methods"' in html and "Butterworth S (1930)" in html, "the report holds the paragraph")

    def test_unknown_primary_is_named(self):
        p = subprocess.run([CLI, "compare", self.out, "--options", json.dumps({"primary": ["no_such_summary"]})],
                           capture_output=True, text=True)
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("no_such_summary", p.stderr)


if __name__ == "__main__":
    unittest.main(verbosity=2)

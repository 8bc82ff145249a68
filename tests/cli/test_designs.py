"""Study designs end to end, on the invented sleep laboratory: `critplex simulate --design
crossover` (the same volunteers rested and after a night without sleep), `critplex
cohort`, then `critplex compare --design ...` from the command line and
`critplex.compare(..., design=...)` from Python (both through cpx_cohort_compare).

Each design's numbers are checked against outside references on the per-subject
summaries the comparison itself reports: scipy.stats.permutation_test
(permutation_type="samples", exact) and scipy.stats.ttest_rel for the paired design,
statsmodels OLS for the regression and two-group designs, statsmodels compare_f_test for
several groups with a covariate (scipy 1.10, statsmodels 0.13, Debian packages).
Invented data; no people.
"""
import csv
import json
import os
import subprocess
import tempfile
import unittest

import numpy as np
import statsmodels.api as sm
from scipy import stats

import critplex

CLI = os.environ["CRITPLEX_CLI"]


def cli(*args, check=True):
    p = subprocess.run([CLI, *args], capture_output=True, text=True)
    if check and p.returncode != 0:
        raise AssertionError("critplex %s failed (%d): %s" % (" ".join(args), p.returncode, p.stderr))
    return p


def read_tsv(path):
    with open(path, newline="") as f:
        return list(csv.DictReader(f, delimiter="\t"))


def as_float(x):
    return np.nan if x is None else float(x)


class Designs(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.tmp = tempfile.TemporaryDirectory()
        root = cls.tmp.name
        # The crossover: 10 volunteers, two sessions each.
        cls.xo_study, cls.xo = os.path.join(root, "xo_study"), os.path.join(root, "xo")
        cli("simulate", "--out", cls.xo_study, "--design", "crossover", "--subjects", "10", "--effect", "0.4",
            "--regions", "30", "--frames", "300", "--seed", "5")
        cli("cohort", os.path.join(cls.xo_study, "manifest.tsv"), "--config",
            os.path.join(cls.xo_study, "cohort_config.json"), "--out", cls.xo, "--workers", "1")
        # Three groups of 6 (two-group form of the simulator with a third group).
        cls.g3_study, cls.g3 = os.path.join(root, "g3_study"), os.path.join(root, "g3")
        groups = [{"name": "rested", "subjects": 6, "global_mean": 0.25, "global_sd": 0.08},
                  {"name": "nap", "subjects": 6, "global_mean": 0.4, "global_sd": 0.08},
                  {"name": "deprived", "subjects": 6, "global_mean": 0.65, "global_sd": 0.08}]
        cli("simulate", "--out", cls.g3_study, "--regions", "30", "--frames", "300", "--seed", "6",
            "--options", json.dumps({"groups": groups}))
        cli("cohort", os.path.join(cls.g3_study, "manifest.tsv"), "--config",
            os.path.join(cls.g3_study, "cohort_config.json"), "--out", cls.g3, "--workers", "1")

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def rows(self, results):
        """(subject, session, group, manifest row, {summary: value}) per compared subject, in order."""
        with open(os.path.join(results, "group_comparison.json")) as f:
            doc = json.load(f)
        manifest = read_tsv(os.path.join(results, "manifest.tsv"))
        out, k = [], {}
        for g in doc["groups"]:
            for i, subject in enumerate(g["subjects"]):
                # Manifest rows of this group and subject, in order (sessions in manifest order).
                candidates = [m for m in manifest if m["subject"] == subject and m["group"] == g["name"]]
                j = k.get((g["name"], subject), 0)
                k[(g["name"], subject)] = j + 1
                m = candidates[j]
                values = {name: as_float(v[i]) for name, v in g["summaries"].items()}
                out.append((subject, m.get("session", ""), g["name"], m, values))
        return out

    def test_crossover_layout(self):
        # property (invented data): every volunteer has a rested and a deprived session with
        # a 1-9 sleepiness rating; the model shifts the global signal up after the lost night.
        manifest = read_tsv(os.path.join(self.xo_study, "manifest.tsv"))
        self.assertEqual(len(manifest), 20)
        by_subject = {}
        for row in manifest:
            by_subject.setdefault(row["subject"], []).append(row["session"])
            self.assertIn(float(row["sleepiness"]), set(range(1, 10)))
            self.assertTrue(os.path.exists(os.path.join(self.xo_study, row["timeseries"])))
        self.assertTrue(all(v == ["rested", "deprived"] for v in by_subject.values()))
        with open(os.path.join(self.xo_study, "model.json")) as f:
            model = json.load(f)
        strength = {(r["subject"], r["session"]): r["global_strength"] for r in model["sessions"]}
        shift = np.mean([strength[(s, "deprived")] - strength[(s, "rested")] for s in by_subject])
        self.assertGreater(shift, 0.2)
        rating = {(r["subject"], r["session"]): r["sleepiness"] for r in model["sessions"]}
        self.assertGreater(np.mean([rating[(s, "deprived")] - rating[(s, "rested")] for s in by_subject]), 2)
        # The same request writes the same study (deterministic for a seed).
        again = os.path.join(self.tmp.name, "xo_again")
        cli("simulate", "--out", again, "--design", "crossover", "--subjects", "10", "--effect", "0.4",
            "--regions", "30", "--frames", "300", "--seed", "5")
        for name in ("manifest.tsv", "timeseries/sub-v03_ses-deprived_timeseries.tsv"):
            with open(os.path.join(again, name)) as a, open(os.path.join(self.xo_study, name)) as b:
                self.assertEqual(a.read(), b.read())

    def test_paired_from_the_command_line(self):
        p = cli("compare", self.xo, "--design", "paired", "--resamples", "4096")
        self.assertIn("design: paired", p.stdout)
        table = read_tsv(os.path.join(self.xo, "design_tests.tsv"))
        with open(os.path.join(self.xo, "design_tests.json")) as f:
            doc = json.load(f)
        self.assertEqual(doc["levels"], ["rested", "deprived"])
        # The cluster test along density runs with the design (compare's cluster_curves: chi).
        self.assertEqual([c["curve"] for c in doc["curve_tests"]], ["chi"])
        self.assertIn("threshold", doc["curve_tests"][0])
        rows = self.rows(self.xo)
        checked = 0
        for row in table:
            if row["note"] != "n/a":
                continue
            name = row["measure"]
            rested = {s: v[name] for s, ses, g, m, v in rows if ses == "rested"}
            deprived = {s: v[name] for s, ses, g, m, v in rows if ses == "deprived"}
            both = [s for s in rested if s in deprived and np.isfinite(rested[s]) and np.isfinite(deprived[s])]
            a = np.array([rested[s] for s in both])
            b = np.array([deprived[s] for s in both])
            self.assertEqual(int(row["n"]), len(both))
            if np.ptp(b - a) == 0:
                continue
            # reference: scipy.stats.permutation_test, permutation_type="samples", exact
            ref = stats.permutation_test((b, a), lambda x, y, axis=-1: np.mean(x - y, axis=axis),
                                         permutation_type="samples", vectorized=True, n_resamples=10 ** 9)
            self.assertEqual(row["exact"], "true")
            self.assertAlmostEqual(float(row["p_value"]), ref.pvalue, places=12, msg=name)
            # reference: scipy.stats.ttest_rel
            tt = stats.ttest_rel(b, a)
            self.assertAlmostEqual(float(row["value"]), tt.statistic, places=8, msg=name)
            self.assertAlmostEqual(float(row["p_parametric"]), tt.pvalue, places=8, msg=name)
            checked += 1
        self.assertGreaterEqual(checked, 3)
        # The report shows the paired test: its table has the first transition's row with the
        # same p as design_tests.tsv.
        cli("report", self.xo, "--out", os.path.join(self.tmp.name, "paired_report.html"))
        with open(os.path.join(self.tmp.name, "paired_report.html")) as f:
            html = f.read()
        self.assertIn("Study design: paired", html)
        # ... and the paired figure: each volunteer's two sessions joined by a line
        self.assertRegex(html, r"Thin lines: each of \d+ people with both sessions; paired test t = ")
        first = next(r for r in table if r["measure"] == "first_chi_zero")
        if first["note"] == "n/a":
            self.assertIn(">%.4g<" % float(first["p_value"]), html)

    def test_paired_python_equals_command_line(self):
        cli("compare", self.xo, "--design", "paired", "--resamples", "4096")
        from_cli = read_tsv(os.path.join(self.xo, "design_tests.tsv"))
        c = critplex.compare(self.xo, design={"design": "paired", "permutations": 4096})
        self.assertEqual(c.design["design"]["design"], "paired")
        table = c.design_tests
        self.assertEqual(list(table["measure"]), [r["measure"] for r in from_cli])
        for i, r in enumerate(from_cli):
            if r["p_value"] != "n/a":
                self.assertEqual(float(r["p_value"]), table["p_value"][i])

    def test_regression_on_sleepiness_within_volunteers(self):
        # Both sessions of a volunteer form a block: the score is permuted within volunteers.
        c = critplex.compare(self.xo, design={"design": "regression", "score": "sleepiness", "blocks": "subject",
                                              "permutations": 2000})
        rows = self.rows(self.xo)
        self.assertEqual(c.design["notes"], [])
        tests = {t["measure"]: t for t in c.design["tests"] if t["tested"]}
        self.assertIn("beta_1_peak", tests)
        for name, t in tests.items():
            pairs = [(float(m["sleepiness"]), v[name]) for s, ses, g, m, v in rows if np.isfinite(v[name])]
            x, y = np.array(pairs).T
            # reference: statsmodels OLS
            fit = sm.OLS(y, np.column_stack([x, np.ones(len(x))])).fit()
            self.assertAlmostEqual(t["estimate"], fit.params[0], places=10, msg=name)
            self.assertAlmostEqual(t["value"], fit.tvalues[0], places=7, msg=name)

    def test_several_groups_with_a_covariate(self):
        design = os.path.join(self.tmp.name, "groups.json")
        with open(design, "w") as f:
            json.dump({"design": "groups", "covariates": ["age"], "permutations": 999, "seed": 4}, f)
        cli("compare", self.g3, "--design", design)
        table = read_tsv(os.path.join(self.g3, "design_tests.tsv"))
        rows = self.rows(self.g3)
        row = next(r for r in table if r["measure"] == "beta_1_peak")
        use = [(g, float(m["age"]), v["beta_1_peak"]) for s, ses, g, m, v in rows if np.isfinite(v["beta_1_peak"])]
        g = np.array([u[0] for u in use])
        age = np.array([u[1] for u in use])
        y = np.array([u[2] for u in use])
        # reference: statsmodels OLS, F of the group indicators given the covariate
        full = sm.OLS(y, np.column_stack([np.ones(len(y)), age, g == "nap", g == "deprived"]).astype(float)).fit()
        reduced = sm.OLS(y, np.column_stack([np.ones(len(y)), age])).fit()
        f, p, _ = full.compare_f_test(reduced)
        self.assertEqual(row["statistic"], "F")
        self.assertAlmostEqual(float(row["value"]), f, places=8)
        self.assertAlmostEqual(float(row["p_parametric"]), p, places=8)

    def test_two_groups_named_levels(self):
        c = critplex.compare(self.g3, design={"design": "two_groups", "levels": ["rested", "deprived"],
                                              "permutations": 999})
        t = next(t for t in c.design["tests"] if t["measure"] == "beta_1_peak")
        rows = self.rows(self.g3)
        a = np.array([v["beta_1_peak"] for s, ses, g, m, v in rows if g == "rested"])
        b = np.array([v["beta_1_peak"] for s, ses, g, m, v in rows if g == "deprived"])
        a, b = a[np.isfinite(a)], b[np.isfinite(b)]
        # reference: scipy.stats.ttest_ind (Student, pooled variance) and the mean difference
        ref = stats.ttest_ind(b, a)
        self.assertAlmostEqual(t["value"], ref.statistic, places=8)
        self.assertAlmostEqual(t["estimate"], b.mean() - a.mean(), places=12)

    def test_bad_design_writes_nothing_and_names_the_key(self):
        cli("compare", self.g3)  # no design: no design tables
        self.assertFalse(os.path.exists(os.path.join(self.g3, "design_tests.tsv")))
        p = cli("compare", self.g3, "--design", "regression", check=False)
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("score", p.stderr)
        self.assertFalse(os.path.exists(os.path.join(self.g3, "design_tests.tsv")))
        p = cli("compare", self.g3, "--design", "regression", "--score", "sleepiness", check=False)
        self.assertIn("sleepiness", p.stderr)

    def test_python_design_test_equals_the_comparison(self):
        # The same paired test from values given directly (critplex.design_test).
        c = critplex.compare(self.xo, design={"design": "paired", "permutations": 4096, "curves": []})
        rows = self.rows(self.xo)
        data = {"subject": [r[0] for r in rows], "session": [r[1] for r in rows],
                "measures": [{"name": "beta_1_peak",
                              "values": [None if not np.isfinite(r[4]["beta_1_peak"]) else r[4]["beta_1_peak"]
                                         for r in rows]}]}
        direct = critplex.design_test(data, {"design": "paired", "permutations": 4096})["tests"][0]
        from_compare = next(t for t in c.design["tests"] if t["measure"] == "beta_1_peak")
        for key in ("value", "p_value", "estimate", "n"):
            self.assertEqual(direct[key], from_compare[key])

    def test_repeated_rows_without_blocks_get_a_note(self):
        p = cli("compare", self.xo, "--design", "regression", "--score", "sleepiness", "--resamples", "199")
        self.assertIn("note: some subjects have several rows", p.stdout)


if __name__ == "__main__":
    unittest.main()

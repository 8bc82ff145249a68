"""Outputs of a small demo study against those critplex 0.1.0 wrote for the same study
(tests/data/outputs-0.1.0, made with the 0.1.0 command line: `simulate --subjects 4
--effect 0.8 --seed 2026 --regions 40 --frames 300`, `cohort --workers 1`, `compare
--covariates age`). The typed rework of 0.2 must not change a result. What changed by
design, and only that, is allowed (docs/changelog.md):
  - missing values are written `n/a` (0.1.0: NaN or NA); infinities `inf`/`-inf`;
  - node curvature quantiles (kappa_q*) interpolate as numpy does, from the nearer order
    statistic, which can move the last bits (by less than 2^-50 for values in [-1, 1]);
  - group_tests.tsv names summaries by machine name and reports raw group means (0.1.0:
    residual means under the label "mean_a"); the tests themselves are unchanged;
  - a z-score against the null needs null.min_draws_for_z (default 100) draws: with the
    few draws of this study the z row is not tested, a percentile-rank row is added, and
    the Benjamini-Hochberg family changes with them, so p_adjusted is checked against
    statsmodels' multipletests(fdr_bh) of the (unchanged) p-values instead."""
import os
import subprocess
import tempfile
import unittest

from statsmodels.stats.multitest import multipletests

CLI = os.environ["CRITPLEX_CLI"]
BEFORE = os.path.join(os.environ["CRITPLEX_TEST_DATA"], "outputs-0.1.0")
OLD_MISSING = {"NaN": "n/a", "NA": "n/a", "-Infinity": "-inf", "Infinity": "inf"}
# The 0.1.0 display labels and the 0.2 machine names of the summaries.
SUMMARY_NAMES = {
    "first chi zero (density)": "first_chi_zero", "chi zero 2 (density)": "chi_zero_2",
    "chi zero 3 (density)": "chi_zero_3", "beta_1 peak (density)": "beta_1_peak",
    "beta_2 peak (density)": "beta_2_peak", "kappa sd at first chi zero": "kappa_sd_at_first_chi_zero",
    "kappa skewness at first chi zero": "kappa_skewness_at_first_chi_zero",
    "kappa kurtosis at first chi zero": "kappa_kurtosis_at_first_chi_zero",
    "Forman mean at first chi zero": "forman_mean_at_first_chi_zero",
    "first chi zero, z against the null": "first_chi_zero_null_z"}


def read_tsv(path):
    with open(path) as f:
        rows = [line.rstrip("\n").split("\t") for line in f if line.strip()]
    return rows[0], rows[1:]


class OutputsUnchanged(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.tmp = tempfile.TemporaryDirectory()
        study, results = os.path.join(cls.tmp.name, "study"), os.path.join(cls.tmp.name, "results")
        for args in (["simulate", "--out", study, "--subjects", "4", "--effect", "0.8", "--seed", "2026",
                      "--regions", "40", "--frames", "300"],
                     ["cohort", os.path.join(study, "manifest.tsv"), "--config",
                      os.path.join(study, "cohort_config.json"), "--out", results, "--workers", "1"],
                     ["compare", results, "--covariates", "age"]):
            p = subprocess.run([CLI, *args], capture_output=True, text=True)
            if p.returncode != 0:
                raise AssertionError(f"critplex {' '.join(args)}: {p.stderr}")
        cls.results = results

    def test_subject_tables(self):
        names = sorted(n for n in os.listdir(BEFORE) if n.startswith("sub-"))
        self.assertEqual(len(names), 16)
        for name in names:
            old_header, old_rows = read_tsv(os.path.join(BEFORE, name))
            header, rows = read_tsv(os.path.join(self.results, name))
            self.assertEqual(header, old_header, name)
            self.assertEqual(len(rows), len(old_rows), name)
            for r, (old, new) in enumerate(zip(old_rows, rows)):
                for column, a, b in zip(header, old, new):
                    a = OLD_MISSING.get(a, a)
                    if a == b:
                        continue
                    where = f"{name}, row {r + 2}, column {column}: 0.1.0 wrote {a}, now {b}"
                    self.assertTrue(column.startswith("kappa_q"), where)
                    # The rounding error of interpolating between two order statistics of
                    # size at most 1 (node curvatures here lie in [-1, 1]).
                    self.assertLessEqual(abs(float(a) - float(b)), 2.0 ** -50, where)

    def test_group_tests(self):
        old_header, old_rows = read_tsv(os.path.join(BEFORE, "group_tests.tsv"))
        header, rows = read_tsv(os.path.join(self.results, "group_tests.tsv"))
        new_by_name = {row[header.index("summary")]: dict(zip(header, row)) for row in rows}
        added = {"first_chi_zero_null_percentile"}
        self.assertEqual(set(new_by_name) - {SUMMARY_NAMES[dict(zip(old_header, r))["summary"]] for r in old_rows}, added)
        for row in old_rows:
            old = dict(zip(old_header, row))
            new = new_by_name[SUMMARY_NAMES[old["summary"]]]
            if SUMMARY_NAMES[old["summary"]] == "first_chi_zero_null_z":
                self.assertEqual(new["p_value"], "n/a")  # too few null draws for a z-score
                continue
            for column in ("group_a", "group_b", "n_a", "n_b", "statistic", "value", "hedges_g", "p_value",
                           "exact", "null_size"):
                self.assertEqual(new[column], OLD_MISSING.get(old[column], old[column]), f"{old['summary']}: {column}")
        tested = [r for r in new_by_name.values() if r["p_value"] != "n/a"]
        bh = multipletests([float(r["p_value"]) for r in tested], method="fdr_bh")[1]
        for r, expected in zip(tested, bh):
            self.assertAlmostEqual(float(r["p_adjusted"]), expected, delta=1e-15, msg=r["summary"])


if __name__ == "__main__":
    unittest.main(verbosity=2)

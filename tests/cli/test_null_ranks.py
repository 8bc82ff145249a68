"""A subject's first transition read against its null model: a z-score only from enough
null draws (null.min_draws_for_z), else the empirical percentile rank with its
resolution 1/(draws+1) and a warning, in the subject document, the group comparison and
the report. References:
  - percentile rank: scipy.stats.percentileofscore(kind="mean") of the observed value
    among the draws and itself (python3-scipy); a draw without a transition in the swept
    range counts as +inf (above every density);
  - z-score: (observed - mean) / sample SD of the draws with a transition (numpy, ddof=1).
The cohort is invented demo data (the simulated sleep laboratory)."""
import json
import os
import subprocess
import tempfile
import unittest

import numpy as np
from scipy import stats

CLI = os.environ["CRITPLEX_CLI"]


def run(*args):
    p = subprocess.run([CLI, *args], capture_output=True, text=True)
    if p.returncode != 0:
        raise AssertionError(f"critplex {' '.join(args)} failed ({p.returncode}):\n{p.stdout}\n{p.stderr}")
    return p


def config(null):
    return {"connect": {"method": "pearson", "sampling_interval": 0.8,
                        "filter": {"design": "butterworth", "order": 2, "low_hz": 0.01, "high_hz": 0.2}},
            "sweep": {"max_density": 0.6, "grid": 0.025}, "null": null}


class NullRanks(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.tmp = tempfile.TemporaryDirectory()
        cls.study = os.path.join(cls.tmp.name, "study")
        run("simulate", "--out", cls.study, "--subjects", "3", "--regions", "20", "--frames", "200", "--seed", "5")

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def cohort(self, name, null):
        path = os.path.join(self.tmp.name, name + ".json")
        with open(path, "w") as f:
            json.dump(config(null), f)
        out = os.path.join(self.tmp.name, name)
        run("cohort", os.path.join(self.study, "manifest.tsv"), "--config", path, "--out", out)
        docs = []
        for entry in sorted(os.listdir(out)):
            if entry.endswith("_topology.json"):
                with open(os.path.join(out, entry)) as f:
                    docs.append(json.load(f))
        return out, docs

    def test_few_draws_give_a_percentile_and_a_warning(self):
        out, docs = self.cohort("few", {"model": "rewire", "count": 9, "seed": 2})
        for doc in docs:
            first = doc["bands"][0]["null"]["first_chi_zero"]
            self.assertIsNone(first["z"])
            self.assertEqual(first["min_draws_for_z"], 100)
            self.assertAlmostEqual(first["percentile_resolution"], 1 / 10, places=15)
            if first["observed"] is None:
                continue
            draws = [np.inf if v is None else v for v in first["values"]]
            ref = stats.percentileofscore(draws + [first["observed"]], first["observed"], kind="mean") / 100
            self.assertAlmostEqual(first["percentile"], ref, places=14)
            self.assertIn("fewer than min_draws_for_z = 100", first["warning"])
        run("compare", out, "--resamples", "99")
        with open(os.path.join(out, "group_comparison.json")) as f:
            comparison = json.load(f)
        self.assertTrue(any("too few null draws" in w for w in comparison["warnings"]))
        run("report", out)
        with open(os.path.join(out, "report.html")) as f:
            html = f.read()
        self.assertTrue("too few null draws" in html, "the report states the warning")
        self.assertTrue("percentile rank" in html, "the report shows percentile ranks")

    def test_documents_of_an_earlier_version_lose_a_z_from_few_draws(self):
        out, docs = self.cohort("older", {"model": "rewire", "count": 9, "seed": 2})
        for entry in sorted(os.listdir(out)):
            if not entry.endswith("_topology.json"):
                continue
            path = os.path.join(out, entry)
            with open(path) as f:
                doc = json.load(f)
            first = doc["bands"][0]["null"]["first_chi_zero"]
            for key in ("min_draws_for_z", "percentile", "percentile_resolution", "warning"):
                first.pop(key)
            first["z"] = 42.0  # what an earlier version wrote from 9 draws
            with open(path, "w") as f:
                json.dump(doc, f)
        run("compare", out, "--resamples", "99")
        with open(os.path.join(out, "group_comparison.json")) as f:
            comparison = json.load(f)
        for g in comparison["groups"]:
            self.assertTrue(all(v is None for v in g["summaries"]["first_chi_zero_null_z"]))
        self.assertTrue(any("earlier version" in w for w in comparison["warnings"]))

    def test_enough_draws_give_a_z_score(self):
        _, docs = self.cohort("enough", {"model": "rewire", "count": 6, "seed": 2, "min_draws_for_z": 5})
        checked = 0
        for doc in docs:
            first = doc["bands"][0]["null"]["first_chi_zero"]
            finite = np.array([v for v in first["values"] if v is not None])
            if first["observed"] is None or len(finite) < 5:
                self.assertIsNone(first["z"])
                continue
            z = (first["observed"] - finite.mean()) / finite.std(ddof=1)
            self.assertAlmostEqual(first["z"], z, delta=1e-12 * max(1, abs(z)))
            self.assertIsNone(first["warning"])
            checked += 1
        self.assertGreater(checked, 0)

    def test_nested_rewiring_over_its_own_range(self):
        # property (invented data): the null's own range leaves its mean chi n/a past it; the
        # draws are seeded (same config, same values); each draw is a graph with a zero or not.
        _, docs = self.cohort("nested", {"model": "rewire_nested", "count": 12, "seed": 3, "max_density": 0.3})
        _, again = self.cohort("nested_again", {"model": "rewire_nested", "count": 12, "seed": 3, "max_density": 0.3})
        for doc, doc2 in zip(docs, again):
            null = doc["bands"][0]["null"]
            mean_chi = null["mean_chi"]
            self.assertEqual(len(null["first_chi_zero"]["values"]), 12)
            self.assertEqual(null["first_chi_zero"]["values"], doc2["bands"][0]["null"]["first_chi_zero"]["values"])
            # grid 0.025: points 0..12 lie within 0.3, the rest of the 0.6 sweep does not
            self.assertTrue(all(v is not None for v in mean_chi[:12]))
            self.assertTrue(all(v is None for v in mean_chi[13:]))


if __name__ == "__main__":
    unittest.main(verbosity=2)

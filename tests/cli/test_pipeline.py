"""The main job end to end through the command line: simulate -> cohort -> compare ->
report, resumability, a broken subject among good ones, and provenance checksums.
(Invented data from the demo model; the statistics themselves are checked against
scipy/statsmodels in tests/reference.)"""
import hashlib
import json
import os
import subprocess
import tempfile
import unittest

CLI = os.environ["CRITPLEX_CLI"]

SMALL_CONFIG = {
    "connect": {"method": "pearson", "sampling_interval": 0.8,
                "filter": {"design": "butterworth", "order": 2, "low_hz": 0.01, "high_hz": 0.2}},
    "sweep": {"max_density": 0.5, "grid": 0.05, "homology": {"max_dimension": 1}, "curvature": {}},
    "null": {"model": "rewire", "count": 3, "seed": 3},
}


def run(*args, check=True):
    p = subprocess.run([CLI, *args], capture_output=True, text=True)
    if check and p.returncode != 0:
        raise AssertionError(f"critplex {' '.join(args)} failed ({p.returncode}):\n{p.stdout}\n{p.stderr}")
    return p


class Pipeline(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.tmp = tempfile.TemporaryDirectory()
        cls.study = os.path.join(cls.tmp.name, "study")
        run("simulate", "--out", cls.study, "--subjects", "4", "--regions", "20", "--frames", "200", "--seed", "5",
            "--effect", "0.8")
        cls.config = os.path.join(cls.tmp.name, "config.json")
        with open(cls.config, "w") as f:
            json.dump(SMALL_CONFIG, f)

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def manifest_rows(self):
        with open(os.path.join(self.study, "manifest.tsv")) as f:
            lines = f.read().splitlines()
        return lines[0].split("\t"), [l.split("\t") for l in lines[1:]]

    def test_simulated_study_files(self):
        header, rows = self.manifest_rows()
        self.assertEqual(header, ["subject", "group", "timeseries", "age"])
        self.assertEqual(len(rows), 8)
        self.assertEqual(sorted({r[1] for r in rows}), ["deprived", "rested"])

    def test_cohort_compare_report_and_resume(self):
        out = os.path.join(self.tmp.name, "results")
        p = run("cohort", os.path.join(self.study, "manifest.tsv"), "--config", self.config, "--out", out)
        self.assertIn("8 done, 0 skipped", p.stdout)
        # Unchanged inputs and options: everything is skipped.
        p = run("cohort", os.path.join(self.study, "manifest.tsv"), "--config", self.config, "--out", out)
        self.assertIn("0 done, 8 skipped", p.stdout)
        doc = json.load(open(os.path.join(out, "sub-rested01_topology.json")))
        band = doc["bands"][0]
        self.assertEqual(doc["group"], "rested")
        self.assertIn("age", doc["covariates"])
        self.assertEqual(len(band["curves"]["chi"]), 11)
        self.assertEqual(band["null"]["model"], "rewire")
        # Provenance: the input checksum is the file's SHA-256 (reference: Python hashlib).
        ts = doc["provenance"]["inputs"]["timeseries"]
        with open(ts["path"], "rb") as f:
            self.assertEqual(ts["sha256"], hashlib.sha256(f.read()).hexdigest())
        # The TSV twins exist and match the JSON curves.
        with open(os.path.join(out, "sub-rested01_curves.tsv")) as f:
            lines = f.read().splitlines()
        cols = lines[0].split("\t")
        chi = [float(l.split("\t")[cols.index("chi")]) for l in lines[1:]]
        self.assertEqual(chi, band["curves"]["chi"])
        # Compare and report.
        p = run("compare", out, "--covariates", "age", "--resamples", "999")
        self.assertIn("first chi zero (density)", p.stdout)
        comparison = json.load(open(os.path.join(out, "group_comparison.json")))
        self.assertEqual([g["name"] for g in comparison["groups"]], ["rested", "deprived"])
        tests = [t for t in comparison["tests"] if "p_value" in t]
        self.assertTrue(all(0 < t["p_value"] <= 1 for t in tests))
        self.assertTrue(all(t["exact"] for t in tests))  # C(8,4) = 70 relabellings: enumerated
        p = run("report", out)
        html = open(os.path.join(out, "report.html")).read()
        self.assertIn("<svg", html)
        self.assertIn("not a medical device", html)
        self.assertNotIn("http://", html.replace("http://www.w3.org/2000/svg", ""))  # self-contained

    def test_broken_subject_does_not_stop_the_others(self):
        out = os.path.join(self.tmp.name, "broken-results")
        header, rows = self.manifest_rows()
        broken = os.path.join(self.tmp.name, "broken.tsv")
        with open(broken, "w") as f:
            f.write("a\tb\tc\n1\t2\t3\n4\t5\n6\t7\t8\n")
        rows[2][2] = broken
        manifest = os.path.join(self.tmp.name, "manifest-broken.tsv")
        with open(manifest, "w") as f:
            f.write("\t".join(header) + "\n")
            for r in rows:
                r[2] = r[2] if os.path.isabs(r[2]) else os.path.join(self.study, r[2])
                f.write("\t".join(r) + "\n")
        p = run("cohort", manifest, "--config", self.config, "--out", out, check=False)
        self.assertEqual(p.returncode, 1)
        self.assertIn("7 done, 0 skipped (unchanged), 1 failed", p.stdout)
        self.assertIn(f"failed: subject {rows[2][0]}", p.stderr)
        self.assertIn("broken.tsv', line 3", p.stderr)
        summary = json.load(open(os.path.join(out, "cohort_summary.json")))
        failed = [s for s in summary["subjects"] if s["status"] == "failed"]
        self.assertEqual([s["subject"] for s in failed], [rows[2][0]])
        self.assertFalse(os.path.exists(os.path.join(out, f"sub-{rows[2][0]}_topology.json")))
        self.assertEqual([f for f in os.listdir(out) if ".tmp-" in f], [])

    def test_bad_manifest_and_config(self):
        bad = os.path.join(self.tmp.name, "bad-manifest.tsv")
        with open(bad, "w") as f:
            f.write("subject\ttimeseries\nx\ty.tsv\n")
        p = run("cohort", bad, "--config", self.config, "--out", os.path.join(self.tmp.name, "never"), check=False)
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("\"subject\" and \"group\"", p.stderr)
        self.assertFalse(os.path.exists(os.path.join(self.tmp.name, "never")))
        cfg = os.path.join(self.tmp.name, "typo.json")
        with open(cfg, "w") as f:
            json.dump({"sweep": {"max_densty": 0.3}}, f)
        p = run("cohort", os.path.join(self.study, "manifest.tsv"), "--config", cfg, "--out",
                os.path.join(self.tmp.name, "never2"), check=False)
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("unknown option \"max_densty\"", p.stderr)
        self.assertFalse(os.path.exists(os.path.join(self.tmp.name, "never2")))


if __name__ == "__main__":
    unittest.main(verbosity=2)

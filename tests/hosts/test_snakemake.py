#!/usr/bin/python3
"""The Snakemake workflow (plugins/snakemake/Snakefile) run by Snakemake itself (Debian
snakemake) on a small invented study: one job per subject, then compare and report.
Its subject files and group tests must equal what `critplex cohort` + `critplex compare`
give on the same manifest and config (the workflow only splits the same work into jobs).

    test_snakemake.py WORK_DIR      (critplex on PATH: the installed command)
"""
import csv
import json
import os
import shutil
import subprocess
import sys
import unittest

WORK = os.path.abspath(sys.argv.pop(1))
SNAKEFILE = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "plugins", "snakemake", "Snakefile")


def read(path):
    with open(path) as f:
        return f.read()


class SnakemakeWorkflow(unittest.TestCase):
    def test_workflow_equals_cohort(self):
        shutil.rmtree(WORK, ignore_errors=True)
        os.makedirs(WORK)
        study = os.path.join(WORK, "study")
        subprocess.run(["critplex", "simulate", "--out", study, "--subjects", "3", "--regions", "24",
                        "--frames", "200", "--seed", "12"], check=True, capture_output=True)
        # A lighter analysis than the demo's, so the test stays quick.
        analysis = os.path.join(study, "cohort_config.json")
        with open(analysis) as f:
            cfg = json.load(f)
        cfg["sweep"] = {"max_density": 0.3, "grid": 0.02, "curvature": {}}
        cfg["null"] = {"model": "rewire", "count": 3, "seed": 5}
        with open(analysis, "w") as f:
            json.dump(cfg, f)
        manifest = os.path.join(study, "manifest.tsv")
        flow = os.path.join(WORK, "flow")
        run = subprocess.run(["snakemake", "-s", SNAKEFILE, "--cores", "2", "--directory", WORK, "--config",
                              f"manifest={manifest}", f"analysis={analysis}", f"out={flow}",
                              f"critplex={shutil.which('critplex')}"], capture_output=True, text=True)
        self.assertEqual(run.returncode, 0, run.stderr[-3000:])
        self.assertTrue(os.path.isfile(os.path.join(flow, "report.html")))

        cohort = os.path.join(WORK, "cohort")
        subprocess.run(["critplex", "cohort", manifest, "--config", analysis, "--out", cohort], check=True, capture_output=True)
        subprocess.run(["critplex", "compare", cohort], check=True, capture_output=True)
        with open(manifest) as f:
            subjects = [row["subject"] for row in csv.DictReader(f, delimiter="\t")]
        self.assertEqual(len(subjects), 6)
        for sid in subjects:
            self.assertEqual(read(os.path.join(flow, f"sub-{sid}_curves.tsv")), read(os.path.join(cohort, f"sub-{sid}_curves.tsv")), sid)
            self.assertEqual(read(os.path.join(flow, f"sub-{sid}_transitions.tsv")), read(os.path.join(cohort, f"sub-{sid}_transitions.tsv")), sid)
        self.assertEqual(read(os.path.join(flow, "group_tests.tsv")), read(os.path.join(cohort, "group_tests.tsv")))


if __name__ == "__main__":
    unittest.main()
